/*
 * guide_buckets.c - the remembered returns of one search bucketed by
 * search cell, and the nearest-return queries the search's classification,
 * its shortcuts and its path centring ask of them (guide.c).
 *
 * A bucket is filled from the memory the first time a query of the search
 * reaches it: a search that expands a few hundred cells reads the memory
 * round those cells, not the whole window (measured on the bench's
 * cluttered hall: reading the window first was half the search).
 */
#include "guide_int.h"

#include <math.h>
#include <string.h>

static int bucket_of(const lc_guide *g, lc_vec2 p)
{
    double w = BUCKET * g->cfg.cell;
    double u = floor((p.x - g->x0) / w), v = floor((p.y - g->y0) / w);
    if (!(u >= 0 && u < g->bn && v >= 0 && v < g->bn))
        return -1;
    return (int)v * g->bn + (int)u;
}

void lc_guide_bucket_obstacles(lc_guide *g, const lc_memory *m)
{
    g->mem = m;
    g->n_pts = 0;
    g->bucket_failed = false;
    memset(g->b_done, 0, (size_t)g->bn * (size_t)g->bn);
}

typedef struct fill_ctx {
    lc_guide *g;
    int k;
} fill_ctx;

static int keep_one(void *data, lc_vec2 p)
{
    fill_ctx *fc = data;
    lc_guide *g = fc->g;
    if (bucket_of(g, p) != fc->k) /* a cell on the edge: its return is the next bucket's */
        return 0;
    if (LC_GROW(&g->alloc, g->pts, g->cap_pts, g->n_pts + 1) < 0)
        return 1;
    g->pts[g->n_pts++] = p;
    return 0;
}

/* Bucket k's returns read from the memory, once a search. Out of memory
 * leaves what was read and says so in bucket_failed (the search then
 * fails). */
static void fill(lc_guide *g, int k)
{
    double w = BUCKET * g->cfg.cell;
    lc_vec2 lo = lc_v2(g->x0 + (k % g->bn) * w, g->y0 + (k / g->bn) * w);
    fill_ctx fc = {g, k};
    g->b_first[k] = g->n_pts;
    if (lc_memory_each_occupied_in(g->mem, lo, lc_v2(lo.x + w, lo.y + w), keep_one, &fc))
        g->bucket_failed = true;
    g->b_count[k] = g->n_pts - g->b_first[k];
    g->b_done[k] = 1;
}

/* The distance from p to the nearest bucketed return within radius;
 * INFINITY when there is none; with first, the distance to the first one
 * found within radius instead. */
static double bucket_scan(lc_guide *g, lc_vec2 p, double radius, lc_vec2 *at, bool first)
{
    double w = BUCKET * g->cfg.cell;
    double fu0 = floor((p.x - radius - g->x0) / w), fu1 = floor((p.x + radius - g->x0) / w);
    double fv0 = floor((p.y - radius - g->y0) / w), fv1 = floor((p.y + radius - g->y0) / w);
    if (!(fu1 >= 0 && fu0 < g->bn && fv1 >= 0 && fv0 < g->bn))
        return INFINITY; /* off the grid (or not finite) */
    int u0 = fu0 < 0 ? 0 : (int)fu0, u1 = fu1 >= g->bn ? g->bn - 1 : (int)fu1;
    int v0 = fv0 < 0 ? 0 : (int)fv0, v1 = fv1 >= g->bn ? g->bn - 1 : (int)fv1;
    double best = radius * radius;
    bool found = false;
    for (int v = v0; v <= v1; v++) {
        for (int u = u0; u <= u1; u++) {
            int k = v * g->bn + u;
            if (!g->b_done[k])
                fill(g, k);
            const lc_vec2 *q = g->pts + g->b_first[k];
            for (int i = 0; i < g->b_count[k]; i++) {
                double d2 = lc_len2(lc_sub(q[i], p));
                if (d2 < best) {
                    best = d2;
                    found = true;
                    if (at)
                        *at = q[i];
                    if (first)
                        return sqrt(best);
                }
            }
        }
    }
    return found ? sqrt(best) : INFINITY;
}

double lc_guide_nearest_at(lc_guide *g, lc_vec2 p, double radius, lc_vec2 *at)
{
    return bucket_scan(g, p, radius, at, false);
}

double lc_guide_nearest(lc_guide *g, lc_vec2 p, double radius)
{
    return bucket_scan(g, p, radius, NULL, false);
}

/* Some bucketed return lies nearer p than radius (the first found ends the
 * scan). */
bool lc_guide_any_within(lc_guide *g, lc_vec2 p, double radius)
{
    return isfinite(bucket_scan(g, p, radius, NULL, true));
}
