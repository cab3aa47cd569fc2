/*
 * robot.c - default robot description and route (see robot.h).
 *
 * The values are the ones docs/INTERFACES.md promises for a field a client
 * leaves out; the codec starts from these and overwrites what the message
 * gives.
 */
#include "robot.h"

#include <math.h>

#include <string.h>

#include "status.h"

void lc_robot_default(lc_robot *robot)
{
    *robot = (lc_robot){
        .model = LC_MODEL_POINT,
        .radius = 0.30,
        .margin = 0.05,
        .v_max = 0.8,
        .a_max = 0.5,
        .w_max = 1.0,
        .dw_max = 2.0,
        .reverse = false,
        .z_min = -INFINITY,
        .z_max = INFINITY,
    };
}

void lc_route_default(lc_route *route)
{
    memset(route, 0, sizeof *route);
    route->count = 0;
    route->loop = false;
    route->tolerance = 0.25;
    route->on_blocked = LC_BLOCKED_WAIT;
    route->blocked_time = 10.0;
    route->progress = 0.10;
}

void lc_sensor_desc_default(lc_sensor_desc *s, lc_frame_kind kind)
{
    *s = (lc_sensor_desc){.kind = kind, .fov = 0.0, .z_min = -INFINITY, .z_max = INFINITY};
}

const lc_sensor_desc *lc_robot_sensor(const lc_robot *robot, const lc_frame *f)
{
    if (robot->n_sensors <= 0)
        return NULL;
    if (!f->sensor[0])
        return &robot->sensors[0];
    for (int i = 0; i < robot->n_sensors && i < LC_SENSORS_MAX; i++)
        if (strcmp(robot->sensors[i].name, f->sensor) == 0)
            return &robot->sensors[i];
    return NULL;
}

int lc_robot_set_footprint(lc_robot *robot, const lc_vec2 *v, int n)
{
    if (n == 0) {
        robot->n_footprint = 0;
        return LC_OK;
    }
    int at;
    if (lc_footprint_check(v, n, &at) != LC_FOOTPRINT_OK)
        return LC_ERR_BAD_INPUT;
    memcpy(robot->footprint, v, sizeof *v * (size_t)n);
    robot->n_footprint = n;
    robot->radius = lc_footprint_circumradius(v, n);
    return LC_OK;
}

double lc_robot_inradius(const lc_robot *robot)
{
    return lc_robot_has_footprint(robot)
               ? lc_footprint_inradius(robot->footprint, robot->n_footprint)
               : robot->radius;
}

double lc_robot_reach_ahead(const lc_robot *robot)
{
    if (!lc_robot_has_footprint(robot))
        return robot->radius;
    return lc_footprint_support(robot->footprint, robot->n_footprint, lc_v2(1, 0));
}

int lc_robot_place_footprint(const lc_robot *robot, lc_pose pose, lc_vec2 *out)
{
    int n = robot->n_footprint;
    lc_footprint_place(robot->footprint, n, pose.yaw, false, out);
    for (int i = 0; i < n; i++)
        out[i] = lc_add(out[i], lc_v2(pose.x, pose.y));
    return n;
}
