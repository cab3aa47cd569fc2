/*
 * grow.h - obstacles into configuration space.
 *
 * The Minkowski sum of a convex polygon (or a point, or a segment) with a
 * disc of radius r is represented by a polygon that contains it: every
 * rounded corner is replaced by the polygon circumscribed about its arc, with
 * no arc step wider than max_step radians (outer arc approximation).
 *
 * Bound: every point of the grown polygon lies within r / cos(max_step / 2)
 * of the input, so it exceeds the exact sum by at most
 * r * (1 / cos(max_step / 2) - 1) (lc_grow_excess_bound); at the default
 * step of pi/8 that is 1.96 % of r, about 7 mm for r = 0.35 m.
 */
#ifndef LC_GROW_H
#define LC_GROW_H

#include "geom.h"
#include "status.h"

#define LC_GROW_DEFAULT_STEP (LC_PI / 8.0)

/* Most vertices lc_grow_polygon can write for an n-vertex input (0 when n < 1
 * or max_step is invalid). */
int lc_grow_max_vertices(int n, double max_step);

/* r * (1 / cos(max_step / 2) - 1): how far the grown polygon may exceed the sum. */
double lc_grow_excess_bound(double r, double max_step);

/*
 * What lc_grow_polygon derives from max_step (one sincos): kept by a caller
 * that grows many polygons with one step, for lc_grow_polygon_rule.
 */
typedef struct lc_grow_rule {
    double step;     /* max_step, rad */
    int extra;       /* ceil(2 pi / step): lc_grow_max_vertices(n, step) - n */
    double sec_half; /* 1 / cos(step / 2) */
    lc_vec2 rot, half, two; /* (cos, sin) of step, step / 2 and 2 step */
} lc_grow_rule;

/* Fills rule for max_step; LC_OK, or LC_ERR_BAD_INPUT when max_step is not
 * in (0, pi/2] (or so small that the vertex bound overflows). */
int lc_grow_rule_init(lc_grow_rule *rule, double max_step);

/*
 * poly[0..n) is CCW convex (n >= 3), a segment (n == 2) or a point (n == 1).
 * Writes the grown CCW convex polygon to out (capacity cap) and returns its
 * vertex count, or LC_ERR_BAD_INPUT when n < 1, r <= 0, max_step is not in
 * (0, pi/2], cap is too small, a value is not finite, or poly is visibly not convex
 * counter-clockwise (a vertex dented inward by more than 1e-9 of its extent,
 * or turning more than once). Repeated and collinear vertices are fine.
 */
int lc_grow_polygon(const lc_vec2 *poly, int n, double r, double max_step,
                    lc_vec2 *out, int cap);

/* lc_grow_polygon with the step's rule computed beforehand. */
int lc_grow_polygon_rule(const lc_vec2 *poly, int n, double r, const lc_grow_rule *rule,
                         lc_vec2 *out, int cap);

#endif
