/*
 * session_int.h - the session's state, shared by the files of the
 * per-frame step: session.c (the pipeline and the frame driver) and
 * session_space.c (the frame's obstacles into configuration space). Not
 * part of the core's interface: callers see lc_session through session.h.
 */
#ifndef LACUNA_SESSION_INT_H
#define LACUNA_SESSION_INT_H

#include "session.h"

#include "grow.h"
#include "hull.h"
#include "recall.h"
#include "steer.h"

struct lc_session {
    lc_alloc alloc;
    lc_robot robot;
    lc_plan_config cfg;
    lc_route route;
    lc_patrol patrol;
    lc_setpoint last;
    lc_clock clock;
    lc_hull_ctx *hull;
    lc_grow_rule grow_rule; /* cfg.grow_step's rotations, computed once */
    lc_cloud cloud;
    lc_segment_ws seg;
    lc_memory *mem;           /* NULL: memory off */
    lc_guide *guide;          /* NULL: guidance off */
    lc_recall recall;
    lc_segment_ws seg_recall;
    lc_polyset frontier;      /* convex pieces of the frontier (not obstacles) */
    lc_polyset obstacles, grown;
    lc_vec2 *gather;
    int cap_gather;
    lc_vec2 *body;  /* a polygon footprint grown, turned and reflected (grow_obstacles) */
    int cap_body;
    lc_region region;
    lc_region region_alt; /* a second region of the frame (plan_region's retry) */
    bool has_bend;        /* this frame's first turn of the path within a goal step */
    lc_vec2 bend;
    lc_region_ws rws;
    lc_steer_ws steer; /* the braking region the motion law sees */
    /* the frame driver (lc_session_drive) */
    lc_control control;
    bool driven;     /* a frame has been driven: prev_stamp and last_reply hold */
    double prev_stamp;
    bool resting;    /* stopped outside a frame: the next one starts from rest */
    lc_setpoint before; /* the velocity the last driven frame started from */
    double before_dt;   /* and the period it was given */
    bool easing;        /* the last frame eased out of the margin (lc_steer_ease_out) */
    lc_reply last_reply;
    /* guidance's stall watch: the best way still to go and since when */
    bool stall_on;
    int stall_wp;
    double stall_best, stall_stamp;
    const lc_guide_path *path_ref; /* the path of this frame (watch_stall) */
    /* each sensor's last view, robot frame: what a robot that never turns
     * can look toward (guide_frame's sight) */
    bool view_known[LC_SENSORS_MAX];
    double view_fov[LC_SENSORS_MAX], view_rel[LC_SENSORS_MAX];
};

/* The hull of every piece of seg (over cloud) appended to out, each with
 * src = src0 + its piece index; 0 or -1 (session_space.c). */
int lc_session_hull_pieces(lc_session *s, const lc_cloud *cloud, const lc_segment_ws *seg,
                           lc_polyset *out, int src0);

/* s->obstacles and s->frontier into configuration space at heading yaw,
 * appended to s->grown (session_space.c); 0 or -1. */
int lc_session_grow_obstacles(lc_session *s, double yaw);

#endif
