/*
 * hull.h - convex hulls of small planar point sets.
 *
 * Two exact-enough paths behind one call: libqhull_r (one long-lived
 * context, its output silenced, its errors turned into return codes) and a
 * small monotone-chain path for pieces of at most `small_max` points, where
 * qhull's set-up cost (about 12-20 us a call) would dominate. Both return the
 * hull's vertices counter-clockwise, without repeated or collinear vertices.
 *
 * Degenerate input never reaches qhull: no points gives 0 vertices; one
 * distinct point gives 1; all points collinear (or two distinct points) give
 * the 2 extreme points of the segment.
 *
 * qhull is the one part of the core that allocates on its own (inside
 * qh_new_qhull); everything else grows through the context's lc_alloc.
 */
#ifndef LC_HULL_H
#define LC_HULL_H

#include "alloc.h"
#include "geom.h"

typedef struct lc_hull_ctx lc_hull_ctx;

typedef struct lc_hull_stats {
    long qhull_calls;
    long small_calls;
    long errors;
    int last_error; /* qhull's exit code of the last failed call, 0 if none */
    int last_message_code; /* qhull's message number of that failure (e.g. 6154) */
} lc_hull_stats;

/* NULL alloc means lc_alloc_default(). Returns NULL when out of memory. */
lc_hull_ctx *lc_hull_new(const lc_alloc *alloc);
void lc_hull_free(lc_hull_ctx *ctx);

/* Pieces of at most this many points take the small path (0: qhull always). */
void lc_hull_set_small_max(lc_hull_ctx *ctx, int small_max);
int lc_hull_small_max(const lc_hull_ctx *ctx);

/*
 * Hull of pts[0..n). Writes at most n vertices to out (CCW) and returns their
 * count (0..n). Returns a negative lc_status on failure: LC_ERR_NO_MEMORY,
 * LC_ERR_BAD_INPUT (a non-finite point). When qhull fails (counted in the stats, stats.last_error
 * holds its code) the small path answers instead, so a piece never vanishes.
 */
int lc_hull_compute(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out);

/*
 * The same through one path only, for tests and the bench, without the
 * degenerate-input filter: the small path handles degenerate input itself
 * (0, 1 or 2 points); qhull rejects it, and then lc_hull_compute_qhull
 * returns LC_ERR_LIBRARY (stats.last_error holds qhull's code).
 */
int lc_hull_compute_qhull(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out);
int lc_hull_compute_small(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out);

const lc_hull_stats *lc_hull_get_stats(const lc_hull_ctx *ctx);

/* First line of qhull's message for the last failure ("" if none). */
const char *lc_hull_last_message(const lc_hull_ctx *ctx);

#endif
