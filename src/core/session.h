/*
 * session.h - one robot's planning session and the per-frame step.
 *
 * Everything that lasts between frames lives here: the robot description,
 * the route and progress along it, the last setpoint, the warm start of the
 * ellipse solver, and the workspace whose buffers grow to a high-water mark
 * and are then reused (no allocation per frame once warm). Replay, sim, bench,
 * `lacuna plan` and the server all call lc_session_step, so what is replayed
 * is what ran. The core reads no clock: per-stage timing uses the caller's
 * clock hook and never changes a result.
 */
#ifndef LC_SESSION_H
#define LC_SESSION_H

#include <stdbool.h>
#include "alloc.h"
#include "ellipse.h"
#include "guide.h"
#include "frame.h"
#include "ingest.h"
#include "memory.h"
#include "motion.h"
#include "patrol.h"
#include "polyset.h"
#include "region.h"
#include "robot.h"
#include "segment.h"
#include "clock.h"
#include "control.h"


typedef struct lc_plan_config {
    lc_ingest_config ingest;
    lc_segment_config segment;
    int hull_small_max;   /* pieces up to this size skip qhull */
    double grow_step;     /* rad, outer arc approximation step */
    lc_region_config region;
    lc_ellipse_opts ellipse;
    lc_motion_params motion;
    lc_memory_config memory; /* what the robot remembers (memory.h); on by default */
    lc_guide_config guide;   /* guidance through the memory (guide.h); on by default */
    double recall;        /* m, with memory: half side of the box about the robot whose
                             remembered obstacles the region avoids, and the region's
                             window (default 4) */
    double standoff;      /* m, how far inside the region the robot aims when the
                             waypoint lies outside it (target stays the closest
                             point); keeps a robot parked at a blocked waypoint off
                             the grown obstacles' edge, so range noise does not make
                             it too_close (default 0.04: four times a common 10 mm range noise) */
} lc_plan_config;

void lc_plan_config_default(lc_plan_config *cfg);

typedef enum lc_stage {
    LC_STAGE_INGEST = 0,
    LC_STAGE_MEMORY,  /* the memory's update and what it adds to this plan */
    LC_STAGE_GUIDE,   /* guidance: the check of the path ahead, and its searches */
    LC_STAGE_SEGMENT,
    LC_STAGE_HULL,
    LC_STAGE_GROW,
    LC_STAGE_REGION,
    LC_STAGE_ELLIPSE, /* part of REGION: the solver's share */
    LC_STAGE_TARGET,
    LC_STAGE_SETPOINT,
    LC_STAGE_COUNT
} lc_stage;

const char *lc_stage_name(lc_stage stage);


/* What one step produced. Pointers stay valid until the next step. */
typedef struct lc_plan_result {
    const lc_cloud *cloud;       /* kept points, world frame */
    const lc_polyset *obstacles; /* convex pieces, world frame, CCW: [0, n_seen) from this
                                    frame, the rest remembered (recall.h) */
    int n_seen;
    const lc_polyset *grown;     /* the obstacles grown by radius + margin, then the
                                    frontier of the unknown grown by half a memory cell's
                                    diagonal more (src -1 - index: not an obstacle) */
    const lc_memory *memory;     /* NULL when the session remembers nothing */
    const lc_guide_path *path;   /* guidance's way to the waypoint; NULL without guidance or
                                    waypoint (status LC_GUIDE_NO_PATH: there is none) */
    lc_guide_info guide;         /* what guidance did this frame */
    double view_fov, view_mid;   /* rad, the view the region was given: the frame's,
                                    widened by the memory (world direction of its middle) */
    const lc_region *region;     /* NULL when there is none (see state) */
    bool has_target;
    lc_vec2 target;              /* world frame */
    bool has_waypoint;
    lc_vec2 waypoint;            /* world frame */
    int waypoint_index;
    lc_setpoint setpoint;        /* robot frame */
    lc_state state;
    lc_event events[LC_PATROL_MAX_EVENTS];
    int n_events;
    double clearance;            /* m, robot centre to the nearest point, minus radius */
    double stage_us[LC_STAGE_COUNT];
    double total_us;
    int ellipse_iterations;
} lc_plan_result;

typedef struct lc_session lc_session;

/* NULL alloc: lc_alloc_default(); NULL cfg: defaults. NULL when out of memory. */
lc_session *lc_session_new(const lc_robot *robot, const lc_plan_config *cfg,
                           const lc_alloc *alloc);
void lc_session_free(lc_session *s);

void lc_session_set_robot(lc_session *s, const lc_robot *robot);
const lc_robot *lc_session_robot(const lc_session *s);
void lc_session_set_route(lc_session *s, const lc_route *route);
const lc_route *lc_session_route(const lc_session *s);
const lc_plan_config *lc_session_config(const lc_session *s);
void lc_session_set_clock(lc_session *s, const lc_clock *clock);

/* The last setpoint (the rate limits start from it); zero at rest. */
void lc_session_set_velocity(lc_session *s, const lc_setpoint *last);

/* A single goal instead of a route (what `lacuna plan` does). */
void lc_session_set_goal(lc_session *s, lc_vec2 goal_world);

/*
 * One frame: plan and produce the setpoint for control period dt (s).
 * Returns 0, or -1 when out of memory (then the result holds a stop).
 * `lacuna plan` and the bench call it with their own dt; a stream of frames
 * goes through lc_session_drive.
 */
int lc_session_step(lc_session *s, const lc_frame *frame, double dt, lc_plan_result *out);

/*
 * The frame driver: the one way a stream of frames is stepped (lacuna
 * serve, replay, sim), so that what is replayed is what ran. It takes the
 * step's period from the control settings (control.h), starts from rest
 * after lc_session_stop, steps the session and fills the reply that answers
 * the frame. A frame stamped exactly like the previous one (several sensors
 * sampled at one instant) revises the previous reply: it starts from the
 * velocity and with the period that frame had, so the rate limits hold per
 * instant, not per frame. Returns what lc_session_step returns; the reply is filled
 * either way (a stop when out of memory).
 */
int lc_session_drive(lc_session *s, const lc_frame *frame, lc_plan_result *out,
                     lc_reply *reply);

/* The settings lc_session_drive uses (default: lc_control_default). */
void lc_session_set_control(lc_session *s, const lc_control *control);
const lc_control *lc_session_control(const lc_session *s);

/*
 * The robot was told to stop outside a frame (the server's watchdog, or
 * shutdown): out (may be NULL) gets the stop reply with `state` and
 * `limit`, echoing the last driven frame's seq and stamp and its waypoint;
 * the next driven frame starts from rest.
 */
void lc_session_stop(lc_session *s, lc_state state, lc_limit limit, lc_reply *out);

#endif
