/*
 * clip.h - the convex polygon of a set of halfspaces, by clipping.
 *
 * Two clippers live here, one for each caller, because they cannot be one
 * without changing what either caller computes, bit for bit:
 *
 * - lc_clip_owned: Sutherland-Hodgman (one halfspace at a time, every edge
 *   tested) on a vertex list with an owner per edge (lc_clip_poly). A crossing is placed
 *   by interpolating along the edge it cuts. Region inflation builds its
 *   polygon with it (region.c): vertices and owners are the region's output.
 * - lc_clip (lc_clip_all, lc_clip_fast): a cyclic edge list in the
 *   caller's scratch of doubles (the ellipse solver allocates nothing),
 *   where a vertex is the meet of its two edges' lines (interpolated only
 *   when they are nearly parallel), side values carry a rounding tolerance,
 *   and only the outside run around the farthest vertex is cut (a second
 *   run can only be rounding noise). It decides EMPTY and UNBOUNDED for the
 *   ellipse solver's cold start, starting from a huge box, and has an O(n)
 *   path for plainly well-formed input.
 *
 * Meeting lines and interpolating along an edge round differently, so
 * either clipper in the other's place moves the last bits of its caller's
 * vertices: the region's vertices (part of the planner's output) or the
 * ellipse solver's start (and so its iterates). Both stay behind this one
 * header.
 *
 * Invariants: polygons are counter-clockwise; lengths in the caller's unit.
 * No allocation: the caller owns every array.
 */
#ifndef LC_CLIP_H
#define LC_CLIP_H

#include <stdbool.h>

#include "geom.h"
#include "status.h"

/* A polygon with an owner per edge: edge i runs from v[i] to v[i+1]. */
typedef struct lc_clip_poly {
    lc_vec2 *v;
    int *own;
    int n;
} lc_clip_poly;

/*
 * Clips the CCW polygon p by h[k0..nh), one Sutherland-Hodgman step each
 * (the edges halfspace k adds get owner k; a vertex exactly on a line is
 * kept), stopping when nothing is left (p->n == 0). The steps alternate
 * between p's buffers and spare's, swapping them, so that p holds the
 * result; both need room for p->n + nh - k0 vertices.
 */
void lc_clip_owned(lc_clip_poly *p, lc_clip_poly *spare, const lc_halfspace *h, int k0, int nh);

/* The box lc_clip_all starts from: its edges are rows [n, n + 4) of h. */
enum { LC_CLIP_BOX_EDGES = 4 };

/* Below this |sin| between two unit normals the lines count as parallel. */
#define LC_CLIP_MIN_SIN 1e-9

/*
 * A convex polygon as a cyclic edge list: vertex k is where edge k meets
 * edge k+1; edge[k] is the row of h the edge lies on (stored as a double:
 * the arrays are the caller's scratch of doubles). sd, te, tx and ty are
 * work arrays. Every array holds h.n + LC_CLIP_BOX_EDGES entries; h's rows
 * need room for h.n + LC_CLIP_BOX_EDGES too. No two arrays overlap, the
 * rows' included.
 */
typedef struct lc_clip {
    lc_hrows h;
    double *edge, *vx, *vy, *sd, *te, *tx, *ty;
    int m;
} lc_clip;

/* Doubles lc_clip_bind takes from work for n rows. */
#define LC_CLIP_WORK(n) (7 * ((n) + LC_CLIP_BOX_EDGES))

/* Binds c's arrays to work (LC_CLIP_WORK(h.n) doubles), c empty. */
void lc_clip_bind(lc_clip *c, lc_hrows h, double *work);

/*
 * Clips a box far larger than any sensible polygon (1e9 times bmax, the
 * largest |b|, or 1e9 when that is 0) by every row of c->h: O(n^2). Returns
 * LC_OK with the polygon in c, LC_ERR_DEGENERATE (nothing is left) or
 * LC_ERR_UNBOUNDED (an edge of the box is left).
 */
int lc_clip_all(lc_clip *c, double bmax);

/*
 * The same polygon in O(n) when it is plainly well formed (see clip.c);
 * false sends the caller to lc_clip_all, which decides every other case.
 * bmax is the largest |b| of the rows.
 */
bool lc_clip_fast(lc_clip *c, double bmax);

#endif
