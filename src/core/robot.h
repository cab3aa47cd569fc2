/*
 * robot.h - what the robot is and where it must go.
 *
 * All values SI. The footprint is a disc of `radius` about the robot centre,
 * or, when n_footprint > 0, the convex polygon footprint[0..n_footprint)
 * (robot frame, about the rotation centre, footprint.h); `radius` is then
 * the polygon's circumscribed radius (lc_robot_set_footprint keeps it so),
 * the bound that code needing a disc takes. `margin` is extra clearance kept
 * on top of either shape. Waypoints are in the frame the pose is given in
 * (the "world" frame of a session).
 */
#ifndef LC_ROBOT_H
#define LC_ROBOT_H

#include <stdbool.h>
#include "footprint.h"
#include "frame.h"
#include "geom.h"

typedef enum lc_model {
    LC_MODEL_POINT = 0,    /* holonomic point mass: setpoint (vx, vy) robot frame */
    LC_MODEL_UNICYCLE = 1, /* differential drive: setpoint (v, w) */
} lc_model;

/*
 * One of the robot's sensors (a front and a rear scanner, a depth camera
 * given as points). A frame names its sensor (lc_frame.sensor); a frame that
 * names none is from the first one, so that a robot with one sensor need
 * not name it. mount is the sensor in the robot frame, used for the frames
 * that carry no mount of their own. For points sensors, fov (rad, 0: judged
 * from the points) and the height band [z_min, z_max] (sensor frame; +-inf:
 * none) say what the sensor sees.
 */
#define LC_SENSORS_MAX 8
#define LC_SENSOR_NAME_MAX 32

typedef struct lc_sensor_desc {
    char name[LC_SENSOR_NAME_MAX + 1]; /* [A-Za-z0-9_.-], unique in the robot */
    lc_frame_kind kind;
    lc_pose mount;
    double fov;
    double z_min, z_max;
} lc_sensor_desc;

typedef struct lc_robot {
    lc_model model;
    double radius;  /* m, footprint disc; with a polygon its circumscribed radius */
    double margin;  /* m, clearance kept beyond the footprint */
    lc_vec2 footprint[LC_FOOTPRINT_MAX]; /* m, robot frame, convex CCW (footprint.h) */
    int n_footprint;                     /* 0: the disc of radius */
    double v_max;   /* m/s */
    double a_max;   /* m/s^2, also the braking deceleration assumed */
    double w_max;   /* rad/s */
    double dw_max;  /* rad/s^2 */
    bool reverse;   /* unicycle may drive backwards */
    double z_min;   /* m, height band of `points` frames: points whose z (sensor */
    double z_max;   /* frame) lies outside [z_min, z_max] are not obstacles; +-inf: all */
    lc_sensor_desc sensors[LC_SENSORS_MAX];
    int n_sensors;  /* 0: frames carry their own mount (one unnamed sensor) */
} lc_robot;

/* The defaults (docs/INTERFACES.md): point, 0.30, 0.05, 0.8, 0.5, 1.0, 2.0,
 * no reversing; no height band; no sensors named. */
void lc_robot_default(lc_robot *robot);

/* A sensor with no name, of the kind given, at the robot's centre, seeing
 * everything (no fov, no height band). */
void lc_sensor_desc_default(lc_sensor_desc *s, lc_frame_kind kind);

/* The sensor a frame comes from: the one it names, else (a frame naming
 * none) the first; NULL when the robot names no sensors or none by that
 * name. */
const lc_sensor_desc *lc_robot_sensor(const lc_robot *robot, const lc_frame *f);

/* Radius the obstacles are grown by: radius + margin (for a polygon, the
 * disc it sweeps turning in place, plus the margin). */
static inline double lc_robot_clearance(const lc_robot *robot)
{
    return robot->radius + robot->margin;
}

static inline bool lc_robot_has_footprint(const lc_robot *robot)
{
    return robot->n_footprint > 0;
}

/*
 * Gives the robot the polygon footprint v[0..n) (copied) and sets radius
 * to its circumscribed radius; n == 0 returns it to the disc of the
 * current radius. LC_OK, or LC_ERR_BAD_INPUT (robot unchanged) when
 * lc_footprint_check finds a fault.
 */
int lc_robot_set_footprint(lc_robot *robot, const lc_vec2 *v, int n);

/* The largest disc about the centre inside the footprint: radius, or the
 * polygon's inscribed radius about (0, 0). */
double lc_robot_inradius(const lc_robot *robot);

/* How far the footprint reaches ahead of the centre (+x): radius, or the
 * polygon's largest x. */
double lc_robot_reach_ahead(const lc_robot *robot);

/* The footprint at pose in the world frame into out (LC_FOOTPRINT_MAX
 * vertices); returns its vertex count, 0 for a disc robot. */
int lc_robot_place_footprint(const lc_robot *robot, lc_pose pose, lc_vec2 *out);

#define LC_ROUTE_MAX 1024

typedef enum lc_blocked_policy {
    LC_BLOCKED_WAIT = 0, /* hold with zero setpoints, keep planning */
    LC_BLOCKED_SKIP = 1, /* give up the waypoint, go on to the next */
} lc_blocked_policy;

typedef struct lc_route {
    lc_vec2 waypoints[LC_ROUTE_MAX];
    int count;
    bool loop;
    double tolerance;        /* m, default 0.25 */
    lc_blocked_policy on_blocked;
    double blocked_time;     /* s without progress before `blocked`, default 10 */
    double progress;         /* m the distance must shrink by, default 0.10 */
} lc_route;

void lc_route_default(lc_route *route);

#endif
