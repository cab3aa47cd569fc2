/*
 * frame.h - one sensor frame as the core sees it.
 *
 * The frame does not own its arrays: the codec (or a simulator) keeps them
 * alive for the duration of the call. `pose` is the robot in the world
 * frame; `mount` is the sensor in the robot frame when has_mount, else the
 * sensor's mount from the robot description (robot.h) is used. `sensor`
 * names the sensor the frame comes from ("" : the robot's first, or only).
 *
 * scan:   beam i has bearing angle_start + i * angle_step in the sensor
 *         frame; ranges[i] is NAN for "no return" (the codec maps null and
 *         out-of-limit numbers to NAN).
 * points: xy[2i], xy[2i+1] in the sensor frame; z[i] height, or z == NULL.
 */
#ifndef LC_FRAME_H
#define LC_FRAME_H

#include <stdbool.h>
#include <stdint.h>
#include "geom.h"

typedef enum lc_frame_kind {
    LC_FRAME_SCAN = 0,
    LC_FRAME_POINTS = 1,
} lc_frame_kind;

#define LC_FRAME_SENSOR_MAX 32 /* = LC_SENSOR_NAME_MAX */

typedef struct lc_frame {
    lc_frame_kind kind;
    char sensor[LC_FRAME_SENSOR_MAX + 1];
    bool has_mount;
    int64_t seq;
    double stamp;   /* s */
    lc_pose pose;   /* robot in world */
    lc_pose mount;  /* sensor in robot */

    /* scan */
    double angle_start, angle_step; /* rad */
    double range_min, range_max;    /* m */
    const double *ranges;
    int n_ranges;

    /* points */
    const double *xy;
    const double *z; /* NULL when the frame has no heights */
    int n_points;
} lc_frame;

#endif
