/*
 * geos_oracle.h - GEOS (libgeos, Debian's libgeos-dev) as the outside
 * reference for lacuna's hulls, distances and projections. Only tests use it.
 */
#ifndef LC_GEOS_ORACLE_H
#define LC_GEOS_ORACLE_H

#include "geom.h"

void oracle_init(void);
void oracle_finish(void);

/* Convex hull of pts: writes up to cap vertices of its exterior ring (no
 * closing repeat, orientation as GEOS gives it) and returns the count;
 * 1 for a point, 2 for a segment. *area receives the hull's area. */
int oracle_convex_hull(const lc_vec2 *pts, int n, lc_vec2 *out, int cap, double *area);

/* Area of the polygon v[0..n) (n >= 3). */
double oracle_polygon_area(const lc_vec2 *v, int n);

/* Distance from p to the geometry v[0..n) (point, segment or polygon);
 * 0 inside a polygon. */
double oracle_point_distance(const lc_vec2 *v, int n, lc_vec2 p);

/* Distance between two geometries (each a point, segment or polygon). */
double oracle_distance(const lc_vec2 *a, int na, const lc_vec2 *b, int nb);

/* Nearest point of geometry v[0..n) to p. */
lc_vec2 oracle_nearest(const lc_vec2 *v, int n, lc_vec2 p);

/* True when polygon v covers point p (boundary included). */
int oracle_covers(const lc_vec2 *v, int n, lc_vec2 p);

/* Area of the intersection of two polygons. */
double oracle_intersection_area(const lc_vec2 *a, int na, const lc_vec2 *b, int nb);

/* Hausdorff distance between two geometries (GEOS's discrete variant,
 * densified by frac of each segment, e.g. 0.01). */
double oracle_hausdorff(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, double frac);

#endif
