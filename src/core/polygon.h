/*
 * polygon.h - primitives on convex polygons that region inflation asks of
 * every obstacle: how far a segment lies from a polygon, the point of a
 * polygon nearest the origin. (Area, containment and the distance of a
 * point are in geom.h.)
 *
 * Invariants: polygons are convex and counter-clockwise, v[0..n); n == 1 is
 * a point and n == 2 a segment where a function says so. Lengths in the
 * caller's unit (metres). Pure functions: no allocation, no state.
 */
#ifndef LC_POLYGON_H
#define LC_POLYGON_H

#include <stdbool.h>

#include "geom.h"

/*
 * Distance between the segment [a, b] and the convex polygon v[0..n), n >= 1
 * (a point or a segment for n < 3): 0 when they meet, else the least of the
 * distances from a and b to the edges and from the vertices to [a, b].
 */
double lc_segment_polygon_distance(lc_vec2 a, lc_vec2 b, const lc_vec2 *v, int n);

/* The point of the convex CCW polygon v[0..n) (n >= 3) nearest the origin;
 * the origin itself when it lies inside or on the boundary. */
lc_vec2 lc_polygon_nearest_origin(const lc_vec2 *v, int n);

#endif
