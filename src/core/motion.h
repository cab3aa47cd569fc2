/*
 * motion.h - setpoints that can always brake inside the region.
 *
 * Setpoints are in the robot frame (x forward, y left): (vx, vy) for the
 * point-mass model, (v, w) for the unicycle. Every setpoint says which
 * constraint bound it (`limit`), so that "why did it slow down?" has an
 * answer. The braking deceleration assumed is robot->a_max.
 */
#ifndef LC_MOTION_H
#define LC_MOTION_H

#include "geom.h"
#include "region.h"
#include "robot.h"

typedef enum lc_limit {
    LC_LIMIT_NONE = 0,   /* "none": nothing bound it (zero request) */
    LC_LIMIT_GOAL,       /* "goal": the proportional term toward the target */
    LC_LIMIT_TOP_SPEED,  /* "top_speed": v_max */
    LC_LIMIT_BRAKING,    /* "braking": room to stop inside the region */
    LC_LIMIT_ACCEL,      /* "accel": a_max dt from the last setpoint */
    LC_LIMIT_TURNING,    /* "turning": heading error large, turning in place */
    LC_LIMIT_TURN_RATE,  /* "turn_rate": w_max or dw_max dt */
    LC_LIMIT_TOO_CLOSE,  /* "too_close": centre inside a grown obstacle */
    LC_LIMIT_STALE,      /* "stale": no valid frame for the watchdog time */
    LC_LIMIT_BLOCKED,    /* "blocked": no progress toward the waypoint */
    LC_LIMIT_ARRIVED,    /* "arrived": within tolerance of the waypoint */
    LC_LIMIT_IDLE,       /* "idle": no route */
    LC_LIMIT_COUNT
} lc_limit;

const char *lc_limit_name(lc_limit limit);

typedef struct lc_setpoint {
    double vx, vy; /* m/s, point model */
    double v, w;   /* m/s, rad/s, unicycle */
    lc_limit limit;
} lc_setpoint;

typedef struct lc_motion_params {
    double k_p;           /* 1/s, point model proportional gain (default 1.0) */
    double k_rho;         /* polar law gains, textbook (3, 8, -1.5) */
    double k_alpha;
    double k_beta;
    double turn_in_place; /* rad, heading error above which v = 0 (default 1.0) */
    double latency;       /* s the setpoint is held before braking starts: added to
                             the braking distance as in lc_stopping_distance
                             (default 0; dt makes the promise hold for a robot
                             that holds each setpoint for a whole period) */
    bool has_heading;     /* unicycle: a heading wanted at the target (default false:
                             the heading there is free) */
    double heading;       /* rad, world frame, that heading */
} lc_motion_params;

void lc_motion_params_default(lc_motion_params *params);

/* The zero setpoint with the given limit. */
lc_setpoint lc_setpoint_stop(lc_limit why);

/*
 * One control step. pose is the robot in the world frame, target_world the
 * point to head for (inside the region), last the previous setpoint (zero
 * at rest), dt > 0 the control period. Writes *out; returns LC_OK, or
 * LC_ERR_BAD_INPUT when an argument is unusable (then *out is a stop).
 */
int lc_motion_point(const lc_robot *robot, const lc_motion_params *params,
                    const lc_region *region, lc_pose pose, lc_vec2 target_world,
                    const lc_setpoint *last, double dt, lc_setpoint *out);

int lc_motion_unicycle(const lc_robot *robot, const lc_motion_params *params,
                       const lc_region *region, lc_pose pose, lc_vec2 target_world,
                       const lc_setpoint *last, double dt, lc_setpoint *out);

/*
 * The unicycle step for a robot with a polygon footprint (robot->n_footprint
 * > 0; LC_ERR_BAD_INPUT otherwise): the law, limits and promises of
 * lc_motion_unicycle, with "safe" meaning that the whole footprint, not the
 * centre, stays in `workspace` at every pose of the braking path
 * (lc_motion_body_margin >= -1e-9). `workspace` is a convex region of the
 * plane, world frame, whose lines keep every obstacle grown by the margin
 * outside (steer.h builds it from the region for the centre); unlike the
 * centre's region it also bounds turning in place, which moves the body.
 * The one promise that changes: a unicycle that can come to rest within
 * one step has a safe successor only when braking its turn (w falling at
 * dw_max after the latency) keeps the body inside.
 */
int lc_motion_unicycle_body(const lc_robot *robot, const lc_motion_params *params,
                            const lc_region *workspace, lc_pose pose, lc_vec2 target_world,
                            const lc_setpoint *last, double dt, lc_setpoint *out);

/*
 * The least slack (m) of the footprint's vertices in the halfspaces of
 * workspace over the braking path of (v, w) from pose: holding them for
 * params->latency, then braking at a_max (and dw_max) as lc_motion_unicycle
 * assumes. At rest the body turns about its centre; on an arc every vertex
 * turns about the instantaneous centre of rotation (exact per line); when
 * the curvature cannot be held the disc of radius |v / w| tangent at the
 * pose (Tait-Kneser) plus the footprint turned over the heading change is
 * checked. Negative when the body leaves; NaN for unusable arguments.
 */
double lc_motion_body_margin(const lc_robot *robot, const lc_motion_params *params,
                             const lc_region *workspace, lc_pose pose, double v, double w);

/* Braking distance v^2 / (2 a) plus the distance driven during latency t_r. */
double lc_stopping_distance(double v, double t_r, double a);

/*
 * The heading error alpha (wrapped to [-pi, pi]) to steer by, given the last
 * turn rate w0: a target almost straight behind (within LC_MOTION_TURN_KEEP
 * of pi) is turned to the way the robot already turns, so that range noise
 * cannot flip the turn from side to side and leave a unicycle rocking in
 * place (it did, in a doorway facing away from its next waypoint).
 */
#define LC_MOTION_TURN_KEEP 0.5 /* rad */
double lc_motion_keep_turning(double alpha, double w0);

/*
 * The polar point-stabilisation law (Siegwart, Nourbakhsh, Scaramuzza, 3.6):
 * v = k_rho rho, w = k_alpha alpha + k_beta beta, before any limit.
 */
void lc_motion_polar(const lc_motion_params *params, double rho, double alpha,
                     double beta, double *v, double *w);

/*
 * The pose reached after a signed path length s (m, negative backwards) on a
 * circle of curvature kappa (1/m, 0 straight) from pose. Exact, and
 * well conditioned for kappa near 0.
 */
lc_pose lc_motion_arc(lc_pose pose, double kappa, double s);

/*
 * The least region margin (lc_region_margin) along that arc, exact:
 * negative when the arc leaves the region. INFINITY for a region without
 * halfspaces, NaN when an argument is not finite.
 */
double lc_motion_arc_margin(const lc_region *region, lc_pose pose, double kappa,
                            double s);

#endif
