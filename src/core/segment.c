/*
 * segment.c - clusters and thin pieces (see segment.h).
 *
 * Pieces are ranges of ws->order. For scans order is the beam order and two
 * neighbouring pieces of one cluster share their split point, so a wall
 * split at a corner stays closed; for unordered points each cluster is
 * partitioned in place and every point lands in exactly one piece.
 * Thinness: every point of a piece lies within split_width of the segment
 * between the piece's end points, so its hull lies in that band too.
 */
#include "segment.h"

#include <stdint.h>
#include <string.h>

void lc_segment_config_default(lc_segment_config *cfg)
{
    cfg->lambda = 10.0 * LC_PI / 180.0;
    cfg->sigma_r = 0.01;
    cfg->cluster_dist = 0.15;
    cfg->split_width = 0.04;
    cfg->max_piece = 64;
}

double lc_breakpoint_threshold(double r_prev, double dphi, double lambda, double sigma_r)
{
    dphi = fabs(dphi);
    if (!(dphi < lambda))
        return 0.0;
    return r_prev * sin(dphi) / sin(lambda - dphi) + 3.0 * sigma_r;
}

static int push_piece(lc_segment_ws *ws, int start, int count)
{
    int c2 = ws->cap_pieces;
    if (LC_GROW(ws->alloc, ws->piece_start, ws->cap_pieces, ws->n_pieces + 1) < 0 ||
        LC_GROW(ws->alloc, ws->piece_count, c2, ws->n_pieces + 1) < 0)
        return LC_ERR_NO_MEMORY;
    ws->piece_start[ws->n_pieces] = start;
    ws->piece_count[ws->n_pieces] = count;
    ws->n_pieces++;
    return 0;
}

/* Index (into order[s..e]) of the point farthest from the chord, and its distance. */
static int farthest_from_chord(const lc_vec2 *p, const int *order, int s, int e, double *dist)
{
    lc_vec2 a = p[order[s]], b = p[order[e]];
    int best = s;
    double bd = -1;
    for (int i = s + 1; i < e; i++) {
        double d2 = lc_segment_distance2(p[order[i]], a, b);
        if (d2 > bd) {
            bd = d2;
            best = i;
        }
    }
    *dist = bd > 0 ? sqrt(bd) : bd;
    return best;
}

static int stack_push(lc_segment_ws *ws, int *top, int s, int e)
{
    if (LC_GROW(ws->alloc, ws->stack, ws->cap_stack, *top + 2) < 0)
        return LC_ERR_NO_MEMORY;
    ws->stack[(*top)++] = s;
    ws->stack[(*top)++] = e;
    return 0;
}

/* Iterative end-point fit over order[s..e] in order; neighbours share the split point. */
static int split_ordered(const lc_vec2 *p, lc_segment_ws *ws, const lc_segment_config *cfg,
                         int s0, int e0)
{
    int top = 0;
    if (stack_push(ws, &top, s0, e0) < 0)
        return LC_ERR_NO_MEMORY;
    while (top > 0) {
        int e = ws->stack[--top], s = ws->stack[--top];
        double d = 0;
        int k = e - s >= 2 ? farthest_from_chord(p, ws->order, s, e, &d) : s;
        if (e - s + 1 > cfg->max_piece && !(d > cfg->split_width))
            k = s + (e - s) / 2;
        else if (!(d > cfg->split_width)) {
            if (push_piece(ws, s, e - s + 1) < 0)
                return LC_ERR_NO_MEMORY;
            continue;
        }
        /* Right half first on the stack so pieces come out in beam order. */
        if (stack_push(ws, &top, k, e) < 0 || stack_push(ws, &top, s, k) < 0)
            return LC_ERR_NO_MEMORY;
    }
    return 0;
}

/*
 * Borges and Aldon's threshold between neighbours i-1 and i. For the scan's
 * own step (neighbours one beam apart, their bearings equal to the step up
 * to rounding) the ratio of sines is the frame's constant `step_ratio`
 * (negative: none): two sines per beam were a twelfth of a 1081-beam frame
 * (60k of 720k instructions, callgrind).
 */
static double neighbour_threshold(const lc_cloud *c, const lc_segment_config *cfg,
                                  double step_ratio, int i, double dphi)
{
    double step = fabs(c->angle_step);
    if (step_ratio >= 0 && fabs(dphi - step) <= 1e-9 * step)
        return c->range[i - 1] * step_ratio + 3.0 * cfg->sigma_r;
    return lc_breakpoint_threshold(c->range[i - 1], dphi, cfg->lambda, cfg->sigma_r);
}

static int ordered_clusters(const lc_cloud *c, const lc_segment_config *cfg, lc_segment_ws *ws)
{
    double step = fabs(c->angle_step);
    double step_ratio = step > 0 && step < cfg->lambda ? sin(step) / sin(cfg->lambda - step) : -1;
    int start = 0;
    for (int i = 1; i <= c->n; i++) {
        bool brk = i == c->n;
        if (!brk) {
            double gap2 = lc_len2(lc_sub(c->world[i], c->world[i - 1]));
            double dphi = fabs(c->bearing[i] - c->bearing[i - 1]);
            /* A beam between them that returned nothing (or was dropped as
             * out of range) looked through the gap: never one surface. */
            brk = (c->angle_step != 0 && dphi > 1.5 * step);
            if (!brk) { /* gap > threshold, without the square root */
                double t = neighbour_threshold(c, cfg, step_ratio, i, dphi);
                brk = t < 0 || gap2 > t * t;
            }
        }
        if (brk) {
            if (split_ordered(c->world, ws, cfg, start, i - 1) < 0)
                return LC_ERR_NO_MEMORY;
            start = i;
        }
    }
    return 0;
}

/* Unordered points: chord ends are the two extremes of the cluster's spread. */
static void chord_ends(const lc_vec2 *p, int *order, int s, int e)
{
    int a = s, b = s;
    double best = -1;
    for (int i = s; i <= e; i++) {
        double d = lc_len2(lc_sub(p[order[i]], p[order[s]]));
        if (d > best) {
            best = d;
            a = i;
        }
    }
    best = -1;
    for (int i = s; i <= e; i++) {
        double d = lc_len2(lc_sub(p[order[i]], p[order[a]]));
        if (d > best) {
            best = d;
            b = i;
        }
    }
    int t = order[s];
    order[s] = order[a];
    order[a] = t;
    if (b == s)
        b = a;
    t = order[e];
    order[e] = order[b];
    order[b] = t;
}

/*
 * Which side of a split q goes to: nearer the sub-chord [a, k] than [k, b]
 * (a thick cluster split at its farthest point k), or, for a thin cluster
 * that is only too long, the half of the chord [a, b] its projection is in.
 * a is always on the near side and b on the far side, so both are non-empty.
 */
static bool near_side(lc_vec2 q, lc_vec2 a, lc_vec2 b, lc_vec2 k, bool thin)
{
    if (thin)
        return lc_dot(lc_sub(q, a), lc_sub(b, a)) <= 0.5 * lc_len2(lc_sub(b, a));
    return lc_segment_distance(q, a, k, NULL) <= lc_segment_distance(q, k, b, NULL);
}

/*
 * Split order[s..e] in place: by the projection on the chord at the farthest
 * point, so each side is a cluster of its own with fresh chord ends.
 */
static int split_unordered(const lc_vec2 *p, lc_segment_ws *ws, const lc_segment_config *cfg,
                           int s0, int e0)
{
    int top = 0;
    if (stack_push(ws, &top, s0, e0) < 0)
        return LC_ERR_NO_MEMORY;
    while (top > 0) {
        int e = ws->stack[--top], s = ws->stack[--top];
        if (e - s >= 1)
            chord_ends(p, ws->order, s, e);
        double d = 0;
        int k = e - s >= 2 ? farthest_from_chord(p, ws->order, s, e, &d) : s;
        bool too_long = e - s + 1 > cfg->max_piece;
        if (!(d > cfg->split_width) && !too_long) {
            if (push_piece(ws, s, e - s + 1) < 0)
                return LC_ERR_NO_MEMORY;
            continue;
        }
        lc_vec2 a = p[ws->order[s]], b = p[ws->order[e]], kp = p[ws->order[k]];
        bool thin = !(d > cfg->split_width);
        int lo = s, hi = e;
        while (lo <= hi) {
            if (near_side(p[ws->order[lo]], a, b, kp, thin))
                lo++;
            else {
                int t = ws->order[lo];
                ws->order[lo] = ws->order[hi];
                ws->order[hi--] = t;
            }
        }
        /* lo is the first index of the far side; both sides hold a chord end. */
        if (lo <= s || lo > e) {
            if (push_piece(ws, s, e - s + 1) < 0)
                return LC_ERR_NO_MEMORY;
            continue;
        }
        if (stack_push(ws, &top, lo, e) < 0 || stack_push(ws, &top, s, lo - 1) < 0)
            return LC_ERR_NO_MEMORY;
    }
    return 0;
}

static uint32_t cell_hash(long ix, long iy, uint32_t mask)
{
    uint64_t h = (uint64_t)ix * 0x9e3779b97f4a7c15ull ^ (uint64_t)iy * 0xc2b2ae3d27d4eb4full;
    return (uint32_t)(h >> 32) & mask;
}

/* Grid-hashed Euclidean clustering: clusters become contiguous runs of order[]. */
static int unordered_clusters(const lc_cloud *c, const lc_segment_config *cfg, lc_segment_ws *ws)
{
    int n = c->n;
    uint32_t cells = 16;
    while (cells < 2u * (uint32_t)n)
        cells *= 2;
    if (LC_GROW(ws->alloc, ws->cell_head, ws->cap_cells, (int)cells) < 0 ||
        LC_GROW(ws->alloc, ws->next, ws->cap_next, 2 * n) < 0)
        return LC_ERR_NO_MEMORY;
    int *next = ws->next, *done = ws->next + n;
    double h = cfg->cluster_dist > 0 ? cfg->cluster_dist : 0.15;
    for (uint32_t i = 0; i < cells; i++)
        ws->cell_head[i] = -1;
    for (int i = 0; i < n; i++) {
        uint32_t b = cell_hash((long)floor(c->world[i].x / h), (long)floor(c->world[i].y / h),
                               cells - 1);
        next[i] = ws->cell_head[b];
        ws->cell_head[b] = i;
        done[i] = 0;
    }
    int filled = 0;
    for (int seed = 0; seed < n; seed++) {
        if (done[seed])
            continue;
        int start = filled;
        ws->order[filled++] = seed;
        done[seed] = 1;
        for (int q = start; q < filled; q++) {
            lc_vec2 pq = c->world[ws->order[q]];
            long cx = (long)floor(pq.x / h), cy = (long)floor(pq.y / h);
            for (long dx = -1; dx <= 1; dx++)
                for (long dy = -1; dy <= 1; dy++)
                    for (int j = ws->cell_head[cell_hash(cx + dx, cy + dy, cells - 1)]; j >= 0;
                         j = next[j])
                        if (!done[j] && lc_dist(c->world[j], pq) <= h) {
                            done[j] = 1;
                            ws->order[filled++] = j;
                        }
        }
        if (split_unordered(c->world, ws, cfg, start, filled - 1) < 0)
            return LC_ERR_NO_MEMORY;
    }
    return 0;
}

void lc_segment_ws_init(lc_segment_ws *ws, const lc_alloc *alloc)
{
    memset(ws, 0, sizeof *ws);
    ws->alloc = alloc;
}

int lc_segment(const lc_cloud *cloud, const lc_segment_config *cfg, lc_segment_ws *ws)
{
    ws->n_pieces = 0;
    if (LC_GROW(ws->alloc, ws->order, ws->cap_order, cloud->n > 0 ? cloud->n : 1) < 0)
        return LC_ERR_NO_MEMORY;
    if (cloud->n == 0)
        return 0;
    for (int i = 0; i < cloud->n; i++)
        ws->order[i] = i;
    int rc = cloud->ordered ? ordered_clusters(cloud, cfg, ws)
                            : unordered_clusters(cloud, cfg, ws);
    return rc < 0 ? LC_ERR_NO_MEMORY : ws->n_pieces;
}

void lc_segment_ws_free(lc_segment_ws *ws)
{
    int c2 = ws->cap_pieces;
    LC_RELEASE(ws->alloc, ws->order, ws->cap_order);
    LC_RELEASE(ws->alloc, ws->piece_start, ws->cap_pieces);
    LC_RELEASE(ws->alloc, ws->piece_count, c2);
    LC_RELEASE(ws->alloc, ws->cell_head, ws->cap_cells);
    LC_RELEASE(ws->alloc, ws->next, ws->cap_next);
    LC_RELEASE(ws->alloc, ws->stack, ws->cap_stack);
    ws->n_pieces = 0;
}
