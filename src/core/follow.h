/*
 * follow.h - following a guidance path (guide.h): where the robot is along
 * it, and inside a convex region (region.h) where on it the robot should
 * aim this frame.
 *
 * Pure functions of the region's halfspaces and the path's vertices; no
 * state, no allocation. session.c asks them once the region is inflated.
 */
#ifndef LACUNA_FOLLOW_H
#define LACUNA_FOLLOW_H

#include <stdbool.h>

#include "guide.h"
#include "region.h"

/*
 * The point of path p nearest `from`, among segment *seg and those that
 * start within 3 m of its end (however long the segment itself is); *seg
 * moved on to that point's segment.
 */
lc_vec2 lc_follow_nearest(const lc_guide_path *p, lc_vec2 from, int *seg);

/* The length of path p from point q on segment seg to its end. */
double lc_follow_rest(const lc_guide_path *p, int seg, lc_vec2 q);

/*
 * Along path p from the point nearest `from` (among the segments from
 * p->seg on): the point `dist` metres further (the end when the path is
 * shorter), and the length of the rest of the path from `from` (its
 * distance to that nearest point included).
 */
lc_vec2 lc_guide_ahead(const lc_guide_path *p, lc_vec2 from, double dist, double *rest);

/*
 * The first vertex of path p after the point nearest `from` (as
 * lc_guide_ahead finds it) at least `near` from `from`, when it lies
 * within dist along the path and is not the path's end: where the way
 * turns next. False when there is none.
 */
bool lc_guide_bend_ahead(const lc_guide_path *p, lc_vec2 from, double dist, double near,
                         lc_vec2 *bend);

/*
 * The target on the path: the farthest point of it, from where the robot
 * is along it (segment p->seg), that the region holds: the path's first
 * exit from the region, or its end when it stays inside. The walk starts
 * at the robot centre c (inside the region by construction) toward the end
 * of the segment the robot is at. *rest gets the path's length from the
 * target on.
 */
lc_vec2 lc_follow_target(const lc_region *r, const lc_guide_path *p, lc_vec2 c, double *rest);

/*
 * A path may run along the very edge of the region (the search's cells
 * beside a grown obstacle, a cell's width off its true border), and the
 * walk of lc_follow_target then leaves the region at once. The farthest
 * of the path's points up to LC_FOLLOW_HUG_AHEAD along it whose closest
 * point in the region is within LC_FOLLOW_HUG_SLACK of it gives a target:
 * that closest point, the path's line followed just inside the region.
 * True, with *target and *rest (the path's length from there on), when
 * such a point lies farther from c than current; else false.
 */
#define LC_FOLLOW_HUG_AHEAD 2.0 /* m */
#define LC_FOLLOW_HUG_SLACK 0.1 /* m, a search cell */
#define LC_FOLLOW_HUG_SAMPLES 8

bool lc_follow_hug(const lc_region *r, const lc_guide_path *p, lc_vec2 c, lc_vec2 current,
                   lc_vec2 *target, double *rest);

#endif
