/*
 * steer.h - the motion policy: from the region and the target to one
 * setpoint. Which region the motion law brakes in (the region, kept a
 * standoff off the grown obstacles), the point it heads for, sliding along
 * lines the robot sits on, and turning in place when the robot may not
 * translate. The laws themselves (braking promise, rate limits) are
 * motion.h's; this module decides what they are asked.
 *
 * Frames: pose, region, obstacles and points are in the world frame; the
 * setpoints (last, out) in the robot frame. Units SI.
 *
 * Ownership: lc_steer_ws holds the braking region's halfspaces, grown
 * through the allocator it was given (lc_steer_ws_init; a zeroed one uses
 * the default) and reused (no allocation once warm).
 */
#ifndef LC_STEER_H
#define LC_STEER_H

#include "alloc.h"
#include "motion.h"
#include "polyset.h"
#include "region.h"
#include "robot.h"

typedef struct lc_steer_ws {
    const lc_alloc *alloc;
    lc_halfspace *h; /* the braking region's lines */
    int cap_h;
    lc_halfspace *hw; /* a footprint's workspace lines */
    int cap_hw;
    double *near;     /* the point model's distance to each grown obstacle held off */
    int cap_near;
} lc_steer_ws;

void lc_steer_ws_init(lc_steer_ws *ws, const lc_alloc *alloc);
void lc_steer_ws_free(lc_steer_ws *ws);

typedef struct lc_steer_input {
    const lc_robot *robot;
    const lc_motion_params *params;
    double standoff;           /* m, how far off the grown obstacles it keeps (plan config) */
    const lc_region *region;   /* the free region of this frame */
    const lc_polyset *grown;   /* the obstacles grown by radius + margin (a polygon
                                  footprint: by it, reflected, at the pose's heading,
                                  and the margin), the frontier among them */
    const lc_polyset *obstacles; /* as seen and remembered, not grown (a footprint's
                                    turn in place is checked against them) */
    const lc_polyset *frontier;  /* the frontier of unknown space, hulls of cell centres
                                    (NULL: none), checked like obstacles, each piece
                                    frontier_pad (m: half a cell's diagonal) larger */
    double frontier_pad;
    lc_pose pose;              /* robot in the world */
    lc_vec2 target;            /* the waypoint or its closest point in the region */
    lc_vec2 waypoint;
    const lc_setpoint *last;   /* the previous setpoint (rate limits start there) */
    double dt;                 /* s, the control period */
    bool on_way;               /* the target lies on the way on (the path goes on past
                                  it): the point model heads for it at LC_STEER_WAY_GAIN,
                                  a unicycle asks for `heading` there
                                  (lc_motion_params.heading) */
    double heading;            /* rad, world frame: the path's direction past the target */
    bool at_mouth;             /* the region's target was at the robot and `target` is a
                                  step along the path instead (a gap's mouth, or in the
                                  gap): a unicycle keeps the standoff as it does near its
                                  aim (steer.c motion_region) */
} lc_steer_input;

/*
 * The setpoint toward the target. Returns 0, or -1 when out of memory or
 * the motion law refused its arguments (then *out is a stop, limit none).
 *
 * A unicycle with a polygon footprint is checked as a body
 * (lc_motion_unicycle_body) in a workspace region: the motion region's
 * lines (for the centre, at the pose's heading) each moved out by the
 * footprint's reach along its normal, which keeps outside every grown
 * obstacle the line kept from the centre; and, for each grown obstacle
 * within the braking reach that no single line keeps out (by a corner of
 * the region), the line that separates it from the region
 * (lc_convex_separate), moved out the same way. The region's centres
 * with the footprint at the heading then lie in the workspace, whose
 * lines keep every obstacle the body can reach at least the margin away,
 * whatever its heading: a body inside it at every pose of the braking
 * path touches nothing.
 */
int lc_steer_drive(const lc_steer_input *in, lc_steer_ws *ws, lc_setpoint *out);

/*
 * That workspace region, built from in->region itself (lc_steer_drive
 * builds it from the region it brakes in, the standoff taken off), into
 * *out (its lines in ws, valid until ws is used again; no vertices). 0, or
 * -1 for a robot without a polygon footprint, no region, or out of memory.
 */
int lc_steer_workspace(const lc_steer_input *in, lc_steer_ws *ws, lc_region *out);

/*
 * too_close when only the margin is breached: the centre inside grown
 * obstacles by less than robot->margin each. Then the setpoint moves away
 * from them (never deeper into any), at most LC_STEER_EASE_SPEED, straight
 * out of them (the target may lie past them); in->region is the region inflated
 * without them. Returns 1 with *out filled, 0 when the robot is deeper in
 * (no translation: the caller stops it; always for a unicycle with a
 * polygon footprint, whose corners swing as it turns), -1 when out of
 * memory.
 */
#define LC_STEER_EASE_SPEED 0.25 /* m/s */
int lc_steer_ease_out(const lc_steer_input *in, lc_steer_ws *ws, lc_setpoint *out);

/*
 * too_close for a unicycle: no translation, but it may turn toward the
 * target, rate limited from last->w: writes out->w and leaves the rest of
 * *out. Turning in place moves no part of a disc footprint. A polygon
 * footprint turns only where its turn, braked as lc_motion_body_margin
 * takes it, comes no nearer to any obstacle (in->obstacles and the
 * frontier, within its circumscribed radius and the margin) than the
 * margin or, when nearer already, than it is; else its w brakes toward 0.
 * Nothing for the point model, a target at the robot, or dt <= 0. Uses
 * in->robot, params, pose, target, last, dt, obstacles, frontier; -1 when
 * out of memory (out->w untouched), 0 otherwise.
 *
 * Also the turn of a polygon footprint that the workspace region stops
 * (lc_steer_drive brakes it to a stand, limit braking, while the target
 * wants a turn in place): that region is the free region for the centre at
 * the present heading, whose lines moved out by the body hold little more
 * than the body itself where the body stands across a narrow aisle, and a
 * turn that clears every obstacle by the margin need not stay in it.
 */
int lc_steer_turn_in_place(const lc_steer_input *in, lc_steer_ws *ws, lc_setpoint *out);

#endif
