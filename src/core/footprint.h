/*
 * footprint.h - the robot's polygon footprint and the convex geometry it
 * needs: what makes a footprint valid, its radii, the Minkowski sum of two
 * convex polygons (obstacles into configuration space), and a line that
 * separates two convex polygons.
 *
 * A footprint is a convex polygon in the robot frame (x forward, y left,
 * metres) about the rotation centre (0, 0), counter-clockwise, of
 * LC_FOOTPRINT_MIN to LC_FOOTPRINT_MAX vertices, every edge at least
 * LC_FOOTPRINT_EDGE_MIN long, turning left at every vertex, winding once,
 * with the rotation centre strictly inside (docs/INTERFACES.md, "Robot
 * description").
 *
 * Polygons elsewhere in this header are convex and counter-clockwise,
 * v[0..n); n == 1 is a point and n == 2 a segment; repeated and collinear
 * vertices are allowed. Pure computation: no allocation, no state; the
 * caller sizes every output.
 */
#ifndef LC_FOOTPRINT_H
#define LC_FOOTPRINT_H

#include "geom.h"
#include "status.h"

#define LC_FOOTPRINT_MIN 3
#define LC_FOOTPRINT_MAX 16
#define LC_FOOTPRINT_EDGE_MIN 1e-3 /* m: a shorter edge repeats its vertex */
#define LC_FOOTPRINT_REACH 100.0   /* m: no vertex farther from the centre */
#define LC_FOOTPRINT_TURN_MIN 1e-6 /* sine of the least turn at a vertex */

/* What is wrong with a footprint (lc_footprint_check). */
typedef enum lc_footprint_fault {
    LC_FOOTPRINT_OK = 0,
    LC_FOOTPRINT_COUNT,          /* fewer than MIN or more than MAX vertices */
    LC_FOOTPRINT_FAR,            /* vertex [at] not finite, or beyond REACH */
    LC_FOOTPRINT_REPEATED,       /* vertex [at] within EDGE_MIN of the one before */
    LC_FOOTPRINT_CLOCKWISE,      /* every turn is to the right */
    LC_FOOTPRINT_NOT_CONVEX,     /* turns right, or back, at vertex [at] */
    LC_FOOTPRINT_COLLINEAR,      /* vertex [at] on the line of its neighbours */
    LC_FOOTPRINT_SELF_CROSSING,  /* turns left throughout but winds more than once */
    LC_FOOTPRINT_CENTRE_OUTSIDE, /* (0, 0) not strictly inside */
} lc_footprint_fault;

/* The first fault of v[0..n) in the order above, with the vertex it is
 * at in *at (0 where no vertex is named); LC_FOOTPRINT_OK when valid. */
lc_footprint_fault lc_footprint_check(const lc_vec2 *v, int n, int *at);

/* Farthest vertex from (0, 0): the radius of the disc the footprint sweeps
 * turning in place. */
double lc_footprint_circumradius(const lc_vec2 *v, int n);

/* Distance from (0, 0) to the nearest edge of a valid footprint: the
 * largest disc about the centre inside it. */
double lc_footprint_inradius(const lc_vec2 *v, int n);

/* The polygon turned by yaw about the origin, and reflected through it
 * (p -> -p, still counter-clockwise) when reflect is set, into out[0..n). */
void lc_footprint_place(const lc_vec2 *v, int n, double yaw, bool reflect, lc_vec2 *out);

/* max over v[0..n) of a . v_i: how far the polygon reaches along the unit
 * direction a (its support function), metres; -INFINITY for n < 1. */
double lc_footprint_support(const lc_vec2 *v, int n, lc_vec2 a);

/* Most vertices lc_minkowski_sum writes: na + nb. */
static inline int lc_minkowski_max_vertices(int na, int nb) { return na + nb; }

/*
 * The Minkowski sum A + B = {a + b} of two convex CCW polygons (points and
 * segments too), exact up to rounding: both boundaries walked once from
 * their lowest vertices, edges merged by angle (de Berg, Cheong, van
 * Kreveld, Overmars, Computational Geometry, 3rd ed., section 13.3), so
 * O(na + nb). Parallel edges merge into one; edges shorter than a rounding
 * scale of the input are skipped. Writes the sum, CCW, to out (capacity
 * cap) and returns its vertex count (1 for two points, 2 for parallel
 * segments or a point and a segment), or LC_ERR_BAD_INPUT when na or nb <
 * 1, cap is too small, a value is not finite, or either input is visibly
 * not convex counter-clockwise (its edges out of angle order by more than
 * rounding: clockwise, dented or winding more than once).
 */
int lc_minkowski_sum(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_vec2 *out, int cap);

/*
 * A line h that separates convex polygon a from convex polygon b: every
 * vertex of a satisfies h.a . p <= h.b and every vertex of b h.a . p >= h.b,
 * |h.a| = 1, placed against b. Returns the gap between them (their
 * distance when apart; the line is then perpendicular to the shortest
 * segment between them, the separator of widest gap), 0 when they only
 * touch, or -1 (h untouched) when they overlap or an input is empty.
 */
double lc_convex_separate(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_halfspace *h);

#endif
