/*
 * guide_buckets.c - the remembered returns of one search bucketed by
 * search cell, and the nearest-return queries the search's classification,
 * its shortcuts and its path centring ask of them (guide.c).
 */
#include "guide_int.h"

#include <math.h>
#include <string.h>

typedef struct collect_ctx {
    lc_guide *g;
    int failed;
} collect_ctx;

static int bucket_of(const lc_guide *g, lc_vec2 p)
{
    double w = BUCKET * g->cfg.cell;
    double u = floor((p.x - g->x0) / w), v = floor((p.y - g->y0) / w);
    if (!(u >= 0 && u < g->bn && v >= 0 && v < g->bn))
        return -1;
    return (int)v * g->bn + (int)u;
}

static int collect_one(void *data, lc_vec2 p)
{
    collect_ctx *cc = data;
    lc_guide *g = cc->g;
    int k = bucket_of(g, p);
    if (k < 0)
        return 0;
    if (LC_GROW(&g->alloc, g->tmp, g->cap_tmp, g->n_pts + 1) < 0 ||
        LC_GROW(&g->alloc, g->tmp_cell, g->cap_tmp_cell, g->n_pts + 1) < 0) {
        cc->failed = 1;
        return 1;
    }
    g->tmp[g->n_pts] = p;
    g->tmp_cell[g->n_pts++] = k;
    return 0;
}

/*
 * The memory's occupied cells (their returns) bucketed by search cell, for
 * the nearest-obstacle queries of one search: built once, then each query
 * reads the few search cells around it. -1 when out of memory.
 */
int lc_guide_bucket_obstacles(lc_guide *g, const lc_memory *m)
{
    int total = g->bn * g->bn;
    g->n_pts = 0;
    collect_ctx cc = {g, 0};
    lc_memory_each_occupied(m, collect_one, &cc);
    if (cc.failed || LC_GROW(&g->alloc, g->pts, g->cap_pts, g->n_pts + 1) < 0)
        return -1;
    memset(g->start, 0, (size_t)(total + 1) * sizeof *g->start);
    for (int i = 0; i < g->n_pts; i++)
        g->start[g->tmp_cell[i] + 1]++;
    for (int k = 0; k < total; k++) {
        g->occ[k] = g->start[k + 1] > 0;
        g->start[k + 1] += g->start[k];
    }
    for (int i = 0; i < g->n_pts; i++) /* start[k] runs to the end of bucket k */
        g->pts[g->start[g->tmp_cell[i]]++] = g->tmp[i];
    for (int k = total; k > 0; k--)
        g->start[k] = g->start[k - 1];
    g->start[0] = 0;
    return 0;
}

/* The buckets [u0, u1] x [v0, v1] that hold the points within radius of p
 * (cut to the grid). */
static void bucket_box(const lc_guide *g, lc_vec2 p, double radius, int *u0, int *u1, int *v0,
                       int *v1)
{
    double cs = BUCKET * g->cfg.cell;
    *u0 = (int)floor((p.x - radius - g->x0) / cs);
    *u1 = (int)floor((p.x + radius - g->x0) / cs);
    *v0 = (int)floor((p.y - radius - g->y0) / cs);
    *v1 = (int)floor((p.y + radius - g->y0) / cs);
    *u0 = *u0 < 0 ? 0 : *u0;
    *v0 = *v0 < 0 ? 0 : *v0;
    *u1 = *u1 >= g->bn ? g->bn - 1 : *u1;
    *v1 = *v1 >= g->bn ? g->bn - 1 : *v1;
}

/* The distance from p to the nearest bucketed return within radius;
 * INFINITY when there is none; with first, the distance to the first one
 * found within radius instead. */
static double bucket_scan(const lc_guide *g, lc_vec2 p, double radius, lc_vec2 *at, bool first)
{
    int u0, u1, v0, v1;
    bucket_box(g, p, radius, &u0, &u1, &v0, &v1);
    double best = radius * radius;
    bool found = false;
    for (int v = v0; v <= v1; v++) {
        const uint8_t *occ = g->occ + (size_t)v * (size_t)g->bn;
        for (int u = u0; u <= u1; u++) {
            if (!occ[u])
                continue;
            int k = v * g->bn + u;
            for (int i = g->start[k]; i < g->start[k + 1]; i++) {
                double d2 = lc_len2(lc_sub(g->pts[i], p));
                if (d2 < best) {
                    best = d2;
                    found = true;
                    if (at)
                        *at = g->pts[i];
                    if (first)
                        return sqrt(best);
                }
            }
        }
    }
    return found ? sqrt(best) : INFINITY;
}

double lc_guide_nearest_at(const lc_guide *g, lc_vec2 p, double radius, lc_vec2 *at)
{
    return bucket_scan(g, p, radius, at, false);
}

double lc_guide_nearest(const lc_guide *g, lc_vec2 p, double radius)
{
    return bucket_scan(g, p, radius, NULL, false);
}

/* Some bucketed return lies nearer p than radius (the first found ends the
 * scan). */
bool lc_guide_any_within(const lc_guide *g, lc_vec2 p, double radius)
{
    return isfinite(bucket_scan(g, p, radius, NULL, true));
}

