/*
 * region.c - iterative region inflation (Deits and Tedrake, "Computing Large
 * Convex Regions of Obstacle-Free Space through Semidefinite Programming",
 * WAFR 2014) in the plane, with lacuna's additions (see region.h).
 *
 * Invariants:
 * - every halfspace has |a| = 1 and keeps every seed (the robot centre, and
 *   the goal seed when there is one) inside;
 * - every grown obstacle that does not hold the centre lies outside or on
 *   the boundary of the region, so every obstacle point is at least
 *   radius + margin from it;
 * - a round's lines keep the previous round's ellipse inside, so the
 *   ellipse area does not decrease; a round that would shrink it (possible
 *   only when a line had to be moved to keep a seed) is discarded and the
 *   previous round's region returned.
 */
#include "region.h"

#include <string.h>

#include "clip.h"
#include "polygon.h"
#include "sym2.h"

enum {
    FLAG_SKIP = 1, /* obstacle holds the centre or lies off the window */
    FLAG_BASE = 2, /* beyond a blind line: cut off in every round (see mark_obstacles) */
};
#define SEED_EPS 1e-9            /* m, a seed must be this far inside each line */
#define FALLBACK_DIRS 180        /* directions tried when a line must keep a seed */

void lc_region_config_default(lc_region_config *cfg)
{
    cfg->window = 0.0;
    cfg->window_max = 10.0;
    cfg->max_rounds = 6;
    cfg->area_tol = 0.02;
    cfg->seed_radius = 1.0;
    cfg->goal_step = 1.0;
    cfg->blind_line = true;
    cfg->points_fov = 0.0;
}

static bool inside_all(const lc_halfspace *h, int n, lc_vec2 p, double eps)
{
    for (int i = 0; i < n; i++)
        if (lc_dot(h[i].a, p) > h[i].b - eps)
            return false;
    return true;
}

/* All vertices on or beyond the line (the test of excluded()). */
static bool beyond(lc_halfspace h, const lc_vec2 *v, int n)
{
    int i = 0;
    while (i < n && lc_dot(h.a, v[i]) >= h.b - 1e-12)
        i++;
    return i == n;
}

/* The obstacle lies outside (or on) line h. Its bounding circle (centre,
 * radius) decides most cases without the vertices. */
static bool cut_off_by(lc_halfspace h, const lc_vec2 *v, int n, const double *circle)
{
    double s = lc_dot(h.a, lc_v2(circle[0], circle[1])) - h.b;
    if (s >= circle[2])
        return true;
    return s > -circle[2] && beyond(h, v, n);
}

/*
 * The obstacle lies outside (or on) one of the lines hs[k0..nh). The window's
 * four lines and the blind lines (hs[0..nbase)) are left to mark_obstacles,
 * which flags every obstacle beyond one of them once per frame by the same
 * test: callers pass k0 = nbase.
 */
static bool excluded(const lc_halfspace *h, int k0, int nh, const lc_vec2 *v, int n,
                     const double *circle)
{
    for (int k = k0; k < nh; k++)
        if (cut_off_by(h[k], v, n, circle))
            return true;
    return false;
}

/* Smallest (support of obstacle) - (support of keep set) along n, i.e. the
 * separation margin of direction n; the line is n . p <= min over obstacle. */
static double margin_along(lc_vec2 n, const lc_vec2 *obs, int no, const lc_vec2 *keep, int nk,
                           double *b)
{
    double lo = INFINITY, hi = -INFINITY;
    for (int i = 0; i < no; i++)
        lo = lc_min(lo, lc_dot(n, obs[i]));
    for (int i = 0; i < nk; i++)
        hi = lc_max(hi, lc_dot(n, keep[i]));
    *b = lo;
    return lo - hi;
}

/*
 * A line that keeps every point of keep[] strictly inside and touches the
 * obstacle from outside, chosen among sampled directions (then refined) for
 * the largest margin. Returns false when no sampled direction separates.
 */
static bool separate(const lc_vec2 *obs, int no, const lc_vec2 *keep, int nk, lc_halfspace *out)
{
    double best = -INFINITY, best_ang = 0, b;
    for (int k = 0; k < FALLBACK_DIRS; k++) {
        double ang = 2.0 * LC_PI * k / FALLBACK_DIRS;
        double m = margin_along(lc_unit_angle(ang), obs, no, keep, nk, &b);
        if (m > best) {
            best = m;
            best_ang = ang;
        }
    }
    for (double step = LC_PI / FALLBACK_DIRS; step > 1e-7; step *= 0.5) {
        for (int s = -1; s <= 1; s += 2) {
            double m = margin_along(lc_unit_angle(best_ang + s * step), obs, no, keep, nk, &b);
            if (m > best) {
                best = m;
                best_ang += s * step;
            }
        }
    }
    if (!(best > SEED_EPS))
        return false;
    lc_vec2 n = lc_unit_angle(best_ang);
    margin_along(n, obs, no, keep, nk, &b);
    *out = (lc_halfspace){n, b};
    return true;
}

/* Points of the polygon circumscribed about ellipse e (32 sides), plus seeds. */
static int keep_set(const lc_ellipse *e, const lc_vec2 *seeds, int ns, lc_vec2 *out, bool with_e)
{
    int n = 0;
    if (with_e) {
        double grow = 1.0 / cos(LC_PI / 32.0);
        for (int k = 0; k < 32; k++) {
            lc_vec2 u = lc_scale(lc_unit_angle(2.0 * LC_PI * (k + 0.5) / 32.0), grow);
            out[n++] = lc_add(e->d, lc_sym2_apply(lc_ellipse_shape(e), u));
        }
    }
    for (int i = 0; i < ns; i++)
        out[n++] = seeds[i];
    return n;
}

/*
 * The separating line for one obstacle: tangent to the ellipse's level set
 * through the obstacle's nearest point in the ellipse metric (the method's
 * line); when that would cut a seed off, the widest line that keeps the
 * ellipse (circumscribed) and the seeds, or at least the seeds.
 */
static bool obstacle_line(const lc_ellipse *e, lc_sym2 inv, const lc_vec2 *v, int n,
                          lc_vec2 xstar, const lc_vec2 *seeds, int ns, lc_halfspace *out,
                          int *fallback)
{
    double r = lc_len(xstar);
    if (r > 0) {
        lc_vec2 a = lc_sym2_apply(inv, lc_scale(xstar, 1.0 / r));
        double la = lc_len(a);
        lc_halfspace h = {lc_scale(a, 1.0 / la), (r + lc_dot(a, e->d)) / la};
        /* Touch the obstacle exactly: its support along a. */
        double lo = INFINITY;
        for (int i = 0; i < n; i++)
            lo = lc_min(lo, lc_dot(h.a, v[i]));
        h.b = lc_min(h.b, lo);
        if (inside_all(&h, 1, seeds[0], SEED_EPS) && (ns < 2 || inside_all(&h, 1, seeds[1], SEED_EPS))) {
            *out = h;
            return true;
        }
    }
    lc_vec2 keep[34];
    (*fallback)++;
    int nk = keep_set(e, seeds, ns, keep, true);
    if (separate(v, n, keep, nk, out))
        return true;
    nk = keep_set(e, seeds, ns, keep, false);
    return separate(v, n, keep, nk, out);
}

static int grow_ws(lc_region_ws *ws, int n_obs, int max_hs, int max_v)
{
    const lc_alloc *alloc = ws->alloc;
    if (LC_GROW(alloc, ws->order, ws->cap_order, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->dist, ws->cap_dist, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->flags, ws->cap_flags, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->box, ws->cap_box, 4 * n_obs + 4) < 0 ||
        LC_GROW(alloc, ws->xstar, ws->cap_xstar, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->circle, ws->cap_circle, 3 * n_obs + 3) < 0 ||
        LC_GROW(alloc, ws->lower, ws->cap_lower, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->heap, ws->cap_heap, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->hs, ws->cap_hs, max_hs) < 0 ||
        LC_GROW(alloc, ws->hs_src, ws->cap_hs_src, max_hs) < 0 ||
        LC_GROW(alloc, ws->clip_a, ws->cap_ca, max_v) < 0 ||
        LC_GROW(alloc, ws->clip_b, ws->cap_cb, max_v) < 0 ||
        LC_GROW(alloc, ws->own_a, ws->cap_oa, max_v) < 0 ||
        LC_GROW(alloc, ws->own_b, ws->cap_ob, max_v) < 0 ||
        LC_GROW(alloc, ws->scratch, ws->cap_scratch, LC_ELLIPSE_SCRATCH(max_hs)) < 0 ||
        LC_GROW(alloc, ws->lambda, ws->cap_lambda, max_hs) < 0)
        return LC_ERR_NO_MEMORY;
    return LC_OK;
}

/* Insertion sort of order[0..n) by dist[]: linear on the nearly sorted
 * order a later round inherits from the one before. */
static void insertion_sort_by_dist(int *order, const double *dist, int n)
{
    for (int i = 1; i < n; i++) {
        int t = order[i], j = i;
        double dt = dist[t];
        for (; j > 0 && dist[order[j - 1]] > dt; j--)
            order[j] = order[j - 1];
        order[j] = t;
    }
}

/* Shell sort of order[0..n) by dist[] (no allocation, unlike some qsorts). */
static void sort_by_dist(int *order, const double *dist, int n)
{
    for (int gap = n / 2; gap > 0; gap /= 2)
        for (int i = gap; i < n; i++) {
            int t = order[i], j = i;
            for (; j >= gap && dist[order[j - gap]] > dist[t]; j -= gap)
                order[j] = order[j - gap];
            order[j] = t;
        }
}

/* The window clipped by hs[0..nh): vertices into r (non-redundant lines kept). */
static int build_polygon(lc_region_ws *ws, int nh, lc_region *r)
{
    /* hs[0..4) are the window box, E N W S, so its corners are known. */
    double xe = ws->hs[0].b, yn = ws->hs[1].b, xw = -ws->hs[2].b, ys = -ws->hs[3].b;
    lc_vec2 box[4] = {{xe, ys}, {xe, yn}, {xw, yn}, {xw, ys}};
    int bown[4] = {0, 1, 2, 3};
    lc_clip_poly p = {ws->clip_a, ws->own_a, 4}, spare = {ws->clip_b, ws->own_b, 0};
    memcpy(p.v, box, sizeof box);
    memcpy(p.own, bown, sizeof bown);
    lc_clip_owned(&p, &spare, ws->hs, 4, nh);
    lc_vec2 *va = p.v;
    int *oa = p.own, n = p.n;
    /* Drop repeated vertices and the zero-length edges they make. */
    int m = 0;
    for (int i = 0; i < n; i++) {
        lc_vec2 nxt = va[(i + 1) % n];
        if (n - (i - m) > 3 && lc_dist(va[i], nxt) < 1e-12)
            continue;
        va[m] = va[i];
        oa[m++] = oa[i];
    }
    if (m < 3)
        return LC_ERR_DEGENERATE;
    int cv = r->cap_v, ch = r->cap_h, cs = r->cap_src;
    if (LC_GROW(r->alloc, r->v, cv, m) < 0 || LC_GROW(r->alloc, r->h, ch, m) < 0 ||
        LC_GROW(r->alloc, r->h_src, cs, m) < 0)
        return LC_ERR_NO_MEMORY;
    r->cap_v = cv;
    r->cap_h = ch;
    r->cap_src = cs;
    /* Each edge's line once, in the order the edges go round. */
    r->nh = 0;
    for (int i = 0; i < m; i++) {
        int k = oa[i], dup = 0;
        for (int j = 0; j < r->nh && !dup; j++)
            dup = r->h_src[j] == ws->hs_src[k] && r->h[j].b == ws->hs[k].b &&
                  r->h[j].a.x == ws->hs[k].a.x && r->h[j].a.y == ws->hs[k].a.y;
        if (!dup) {
            r->h[r->nh] = ws->hs[k];
            r->h_src[r->nh++] = ws->hs_src[k];
        }
    }
    memcpy(r->v, va, sizeof *va * (size_t)m);
    r->nv = m;
    return LC_OK;
}

static lc_ellipse seed_ellipse(const lc_vec2 *seeds, int ns, double eps)
{
    if (ns < 2)
        return (lc_ellipse){eps, 0, eps, seeds[0]};
    lc_vec2 d = lc_sub(seeds[1], seeds[0]);
    double h = 0.5 * lc_len(d) + eps, c = d.x / lc_len(d), s = d.y / lc_len(d);
    /* L = R diag(h, eps) R^T */
    return (lc_ellipse){h * c * c + eps * s * s, (h - eps) * c * s, h * s * s + eps * c * c,
                        lc_lerp(seeds[0], seeds[1], 0.5)};
}

static void copy_region(lc_region *dst, const lc_region *src, int *rc)
{
    int cv = dst->cap_v, ch = dst->cap_h, cs = dst->cap_src;
    const lc_alloc *a = dst->alloc;
    if (LC_GROW(a, dst->v, cv, src->nv) < 0 || LC_GROW(a, dst->h, ch, src->nh) < 0 ||
        LC_GROW(a, dst->h_src, cs, src->nh) < 0) {
        *rc = LC_ERR_NO_MEMORY;
        return;
    }
    dst->cap_v = cv;
    dst->cap_h = ch;
    dst->cap_src = cs;
    memcpy(dst->v, src->v, sizeof *src->v * (size_t)src->nv);
    memcpy(dst->h, src->h, sizeof *src->h * (size_t)src->nh);
    memcpy(dst->h_src, src->h_src, sizeof *src->h_src * (size_t)src->nh);
    dst->nv = src->nv;
    dst->nh = src->nh;
    dst->ellipse = src->ellipse;
}

/* A lower bound of the distance from segment [a, b] to obstacle j: the gap
 * between their bounding boxes. */
static double box_gap(const lc_region_ws *ws, int j, lc_vec2 a, lc_vec2 b)
{
    const double *bx = ws->box + 4 * j;
    double dx = lc_max(0.0, lc_max(bx[0] - lc_max(a.x, b.x), lc_min(a.x, b.x) - bx[1]));
    double dy = lc_max(0.0, lc_max(bx[2] - lc_max(a.y, b.y), lc_min(a.y, b.y) - bx[3]));
    return sqrt(dx * dx + dy * dy);
}

/*
 * Marks obstacles to leave out; returns how many hold the centre. Beside
 * FLAG_SKIP (off the window, or holding the centre), FLAG_BASE marks those
 * beyond a blind line (hs[4..nbase)): lines only accumulate, so every round
 * would cut them off again; marked once, they cost no round anything (with
 * the view wedge, most of a scan's obstacles lie beside it: 1081-beam bench
 * frames, region and ellipse stages 248k -> 211k instructions).
 */
static int mark_obstacles(const lc_region_input *in, lc_region_ws *ws, int nbase)
{
    int held = 0;
    for (int j = 0; j < in->grown->np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        double x0 = INFINITY, x1 = -INFINITY, y0 = INFINITY, y1 = -INFINITY;
        for (int i = 0; i < n; i++) {
            x0 = lc_min(x0, v[i].x); x1 = lc_max(x1, v[i].x);
            y0 = lc_min(y0, v[i].y); y1 = lc_max(y1, v[i].y);
        }
        double *bx = ws->box + 4 * j, *cc = ws->circle + 3 * j;
        bx[0] = x0; bx[1] = x1; bx[2] = y0; bx[3] = y1;
        cc[0] = 0.5 * (x0 + x1);
        cc[1] = 0.5 * (y0 + y1);
        double r2 = 0; /* sqrt is monotone: the root of the largest square */
        for (int i = 0; i < n; i++)
            r2 = lc_max(r2, lc_len2(lc_sub(v[i], lc_v2(cc[0], cc[1]))));
        cc[2] = sqrt(r2) * (1.0 + 1e-12);
        lc_vec2 c = in->centre;
        /* beyond() on a window line, from the box: a . v is x, -x, y or -y */
        const lc_halfspace *h = ws->hs;
        bool off = x0 >= h[0].b - 1e-12 || y0 >= h[1].b - 1e-12 || -x1 >= h[2].b - 1e-12 ||
                   -y1 >= h[3].b - 1e-12;
        bool in_box = c.x >= x0 && c.x <= x1 && c.y >= y0 && c.y <= y1;
        bool holds = !off && in_box && lc_convex_contains(v, n, c, 0.0);
        held += holds;
        ws->flags[j] = (off || holds) ? FLAG_SKIP : 0;
        for (int k = 4; k < nbase && !ws->flags[j]; k++)
            if (cut_off_by(h[k], v, n, cc))
                ws->flags[j] = FLAG_BASE;
    }
    return held;
}

/* The segment from the centre to g clear of every grown obstacle and
 * inside the base lines. */
static bool step_free(const lc_region_input *in, lc_region_ws *ws, int nbase, lc_vec2 g)
{
    bool free = inside_all(ws->hs, nbase, g, SEED_EPS);
    for (int j = 0; free && j < in->grown->np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        free = (ws->flags[j] & FLAG_SKIP) || box_gap(ws, j, in->centre, g) > 2e-6 ||
               lc_segment_polygon_distance(in->centre, g, v, n) > 2e-6;
    }
    return free;
}

/* Goal seed: up to goal_step toward the waypoint; when that step is not
 * free, the bend (the way turns there, short of the waypoint: the seed
 * along the way's first leg), else the step halved until it is free. */
static int goal_seed(const lc_region_input *in, const lc_region_config *cfg, lc_region_ws *ws,
                     int nbase, lc_vec2 *seed)
{
    if (!in->has_waypoint || !(cfg->goal_step > 0))
        return 0;
    lc_vec2 dir = lc_sub(in->waypoint, in->centre);
    double len = lc_len(dir);
    if (!(len > 1e-6))
        return 0;
    double step = lc_min(cfg->goal_step, len);
    for (int tries = 0; tries < 4; tries++, step *= 0.5) {
        lc_vec2 g = lc_add(in->centre, lc_scale(dir, step / len));
        if (step_free(in, ws, nbase, g)) {
            *seed = g;
            return 1;
        }
        if (tries == 0 && in->has_bend && lc_dist(in->bend, in->centre) > 1e-6 &&
            step_free(in, ws, nbase, in->bend)) {
            *seed = in->bend;
            return 1;
        }
    }
    return 0;
}

static double seed_clearance(const lc_region_input *in, const lc_region_ws *ws, const lc_vec2 *s,
                             int ns)
{
    double best = INFINITY;
    for (int j = 0; j < in->grown->np; j++) {
        if ((ws->flags[j] & FLAG_SKIP) || box_gap(ws, j, s[0], s[ns - 1]) >= best)
            continue;
        int n;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        best = lc_min(best, lc_segment_polygon_distance(s[0], s[ns - 1], v, n));
    }
    return best;
}

/* Smallest eigenvalue of the symmetric 2x2 L: |L^-1 w| <= |w| / sigma. */
static double l_sigma_min(const lc_ellipse *e)
{
    double m = 0.5 * (e->l11 + e->l22), d = 0.5 * (e->l11 - e->l22);
    return m - sqrt(d * d + e->l12 * e->l12);
}

/* Binary min-heap of obstacle indices keyed by ws->dist (exact distances). */
static void heap_push(lc_region_ws *ws, int *n, int j)
{
    int i = (*n)++;
    while (i > 0 && ws->dist[ws->heap[(i - 1) / 2]] > ws->dist[j]) {
        ws->heap[i] = ws->heap[(i - 1) / 2];
        i = (i - 1) / 2;
    }
    ws->heap[i] = j;
}

static int heap_pop(lc_region_ws *ws, int *n)
{
    int top = ws->heap[0], last = ws->heap[--(*n)], i = 0;
    for (;;) {
        int c = 2 * i + 1;
        if (c >= *n)
            break;
        if (c + 1 < *n && ws->dist[ws->heap[c + 1]] < ws->dist[ws->heap[c]])
            c++;
        if (ws->dist[ws->heap[c]] >= ws->dist[last])
            break;
        ws->heap[i] = ws->heap[c];
        i = c;
    }
    if (*n > 0)
        ws->heap[i] = last;
    return top;
}

/* Nearest point of grown obstacle j to the ellipse centre, ellipse frame. */
static int exact_distance(const lc_region_input *in, lc_region_ws *ws, lc_sym2 inv,
                          const lc_ellipse *e, int j)
{
    int n;
    const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
    if (LC_GROW(ws->alloc, ws->tv, ws->cap_tv, n) < 0)
        return LC_ERR_NO_MEMORY;
    for (int i = 0; i < n; i++)
        ws->tv[i] = lc_sym2_apply(inv, lc_sub(v[i], e->d));
    ws->xstar[j] = lc_polygon_nearest_origin(ws->tv, n);
    ws->dist[j] = lc_len(ws->xstar[j]);
    return LC_OK;
}

/*
 * The obstacles taken into account (not FLAG_SKIP) into ws->order by their
 * lower bound of distance. The set is the same in every round of a frame, so
 * a later round starts from the order the one before left (`warm`): the
 * ellipse grows smoothly and that order is nearly right (1081-beam bench
 * frame: the sorting fell from 35k to 16k instructions). Returns the count.
 */
static int order_obstacles(const lc_region_input *in, lc_region_ws *ws, lc_sym2 inv,
                           const lc_ellipse *e, bool warm)
{
    double sigma = l_sigma_min(e);
    int na = 0;
    if (!warm) {
        for (int j = 0; j < in->grown->np; j++)
            if (!ws->flags[j])
                ws->order[na++] = j;
        ws->n_order = na;
    }
    na = ws->n_order;
    for (int q = 0; q < na; q++) {
        int j = ws->order[q];
        const double *cc = ws->circle + 3 * j;
        double centre = lc_len(lc_sym2_apply(inv, lc_sub(lc_v2(cc[0], cc[1]), e->d)));
        ws->lower[j] = lc_max(0.0, centre - cc[2] / sigma) * (1.0 - 1e-12);
    }
    if (warm)
        insertion_sort_by_dist(ws->order, ws->lower, na);
    else
        sort_by_dist(ws->order, ws->lower, na);
    return na;
}

/*
 * One round's lines. Obstacles are taken in increasing distance in the
 * metric of the current ellipse, each skipped when a line already placed
 * has it outside. The exact distance (all vertices transformed) is computed
 * lazily: obstacles are walked in order of a cheap lower bound (bounding
 * circle over the smallest semi-axis), exact ones wait in a heap until no
 * lower bound below them is left, so the order is exactly the sorted one
 * while an obstacle already cut off costs only its circle test.
 * Returns nh (the lines into ws->hs[nbase..nh)), LC_ERR_NO_MEMORY, or
 * LC_ERR_DEGENERATE when no line keeps the seeds inside.
 */
static int place_lines(const lc_region_input *in, lc_region_ws *ws, int nbase, const lc_ellipse *e,
                       bool warm, const lc_vec2 *seeds, int ns, lc_region_info *info)
{
    lc_sym2 inv = lc_sym2_inverse(lc_ellipse_shape(e));
    int na = order_obstacles(in, ws, inv, e, warm);
    int nh = nbase, q = 0, nheap = 0;
    while (q < na || nheap > 0) {
        int j;
        bool from_heap = nheap > 0 && (q == na || ws->dist[ws->heap[0]] <= ws->lower[ws->order[q]]);
        int n;
        if (from_heap) {
            j = heap_pop(ws, &nheap);
        } else {
            j = ws->order[q++];
            const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
            /* Lines only accumulate: an obstacle cut off now stays cut off. */
            if (excluded(ws->hs, nbase, nh, v, n, ws->circle + 3 * j))
                continue;
            if (exact_distance(in, ws, inv, e, j) < 0)
                return LC_ERR_NO_MEMORY;
            heap_push(ws, &nheap, j);
            continue;
        }
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        if (excluded(ws->hs, nbase, nh, v, n, ws->circle + 3 * j))
            continue;
        lc_halfspace h;
        if (!obstacle_line(e, inv, v, n, ws->xstar[j], seeds, ns, &h, &info->fallback_lines))
            return LC_ERR_DEGENERATE;
        ws->hs[nh] = h;
        ws->hs_src[nh++] = j;
    }
    return nh;
}

static int solve_ellipse(lc_region *r, const lc_ellipse *warm, const lc_ellipse_opts *eopts,
                         lc_region_ws *ws, lc_region_info *info, const lc_clock *clock)
{
    lc_ellipse_info ei = {0};
    double t0 = lc_clock_now(clock);
    int st = lc_ellipse_solve(r->h, r->nh, warm, eopts, &r->ellipse, ws->lambda, ws->scratch, &ei);
    info->ellipse_us += lc_clock_now(clock) - t0;
    info->ellipse_iterations += ei.iterations;
    return st;
}

int lc_region_inflate(const lc_region_input *in, const lc_region_config *cfg,
                      const lc_ellipse_opts *eopts, lc_region_ws *ws, lc_region *out,
                      lc_region_info *info, const lc_clock *clock)
{
    lc_region_info local;
    if (!info)
        info = &local;
    memset(info, 0, sizeof *info);
    out->nh = out->nv = 0;
    out->rounds = 0;
    out->has_goal_seed = false;
    if (!lc_vec2_finite(in->centre) || !(in->window > 0) || !isfinite(in->window))
        return LC_ERR_BAD_INPUT;
    int n_obs = in->grown->np;
    int max_hs = 4 + in->n_blind + n_obs;
    int max_v = max_hs + 4; /* each clip adds at most one vertex */
    if (grow_ws(ws, n_obs, max_hs, max_v) < 0)
        return LC_ERR_NO_MEMORY;

    lc_vec2 c = in->centre;
    double w = in->window;
    ws->hs[0] = (lc_halfspace){{1, 0}, c.x + w};
    ws->hs[1] = (lc_halfspace){{0, 1}, c.y + w};
    ws->hs[2] = (lc_halfspace){{-1, 0}, -(c.x - w)};
    ws->hs[3] = (lc_halfspace){{0, -1}, -(c.y - w)};
    for (int k = 0; k < 4; k++)
        ws->hs_src[k] = LC_REGION_SRC_WINDOW;
    int nbase = 4;
    for (int k = 0; k < in->n_blind; k++) {
        ws->hs[nbase] = in->blind[k];
        ws->hs_src[nbase++] = LC_REGION_SRC_BLIND;
    }
    info->too_close = mark_obstacles(in, ws, nbase);

    lc_vec2 seeds[2] = {c, c};
    int ns = 1 + goal_seed(in, cfg, ws, nbase, &seeds[1]);
    out->has_goal_seed = ns == 2;
    out->goal_seed = seeds[1];
    double clear = seed_clearance(in, ws, seeds, ns);
    double eps = lc_max(lc_min(cfg->seed_radius, 0.5 * clear), 1e-7);
    lc_ellipse e = seed_ellipse(seeds, ns, eps);

    /* Round 1 builds a region from the seed; later rounds keep the best. */
    lc_region *cand = &ws->cand;
    int rc = LC_OK;
    double best_area = -1;
    for (int round = 1; round <= cfg->max_rounds && round <= LC_REGION_MAX_ROUNDS; round++) {
        int nh = place_lines(in, ws, nbase, &e, round > 1, seeds, ns, info);
        if (nh < 0) {
            rc = nh;
            break;
        }
        int st = build_polygon(ws, nh, round == 1 ? out : cand);
        if (st != LC_OK) {
            rc = st;
            break;
        }
        lc_region *r = round == 1 ? out : cand;
        if (solve_ellipse(r, round == 1 ? NULL : &e, eopts, ws, info, clock) < 0) {
            rc = round == 1 ? LC_ERR_DEGENERATE : LC_OK;
            break;
        }
        double area = lc_ellipse_area(&r->ellipse);
        info->area[round] = area;
        info->rounds = round;
        if (round > 1 && area < best_area)
            break; /* a moved line cost area: keep the previous round */
        if (round > 1)
            copy_region(out, cand, &rc);
        out->rounds = round;
        bool converged = round > 1 && area <= best_area * (1.0 + cfg->area_tol);
        best_area = area;
        e = out->ellipse;
        if (converged || rc != LC_OK)
            break;
    }
    info->area[0] = lc_ellipse_area(&(lc_ellipse){eps, 0, eps, c});
    if (rc == LC_OK && info->too_close)
        rc = LC_REGION_TOO_CLOSE;
    return rc;
}

void lc_region_init(lc_region *r, const lc_alloc *alloc)
{
    memset(r, 0, sizeof *r);
    r->alloc = alloc;
}

void lc_region_ws_init(lc_region_ws *ws, const lc_alloc *alloc)
{
    memset(ws, 0, sizeof *ws);
    ws->alloc = alloc;
    lc_region_init(&ws->cand, alloc);
}

void lc_region_free(lc_region *r)
{
    LC_RELEASE(r->alloc, r->h, r->cap_h);
    LC_RELEASE(r->alloc, r->h_src, r->cap_src);
    LC_RELEASE(r->alloc, r->v, r->cap_v);
    r->nh = r->nv = 0;
}

void lc_region_ws_free(lc_region_ws *ws)
{
    LC_RELEASE(ws->alloc, ws->order, ws->cap_order);
    LC_RELEASE(ws->alloc, ws->dist, ws->cap_dist);
    LC_RELEASE(ws->alloc, ws->flags, ws->cap_flags);
    LC_RELEASE(ws->alloc, ws->box, ws->cap_box);
    LC_RELEASE(ws->alloc, ws->xstar, ws->cap_xstar);
    LC_RELEASE(ws->alloc, ws->circle, ws->cap_circle);
    LC_RELEASE(ws->alloc, ws->lower, ws->cap_lower);
    LC_RELEASE(ws->alloc, ws->heap, ws->cap_heap);
    LC_RELEASE(ws->alloc, ws->hs, ws->cap_hs);
    LC_RELEASE(ws->alloc, ws->hs_src, ws->cap_hs_src);
    LC_RELEASE(ws->alloc, ws->tv, ws->cap_tv);
    lc_region_free(&ws->cand);
    LC_RELEASE(ws->alloc, ws->clip_a, ws->cap_ca);
    LC_RELEASE(ws->alloc, ws->clip_b, ws->cap_cb);
    LC_RELEASE(ws->alloc, ws->own_a, ws->cap_oa);
    LC_RELEASE(ws->alloc, ws->own_b, ws->cap_ob);
    LC_RELEASE(ws->alloc, ws->scratch, ws->cap_scratch);
    LC_RELEASE(ws->alloc, ws->lambda, ws->cap_lambda);
}
