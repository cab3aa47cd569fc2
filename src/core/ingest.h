/*
 * ingest.h - a sensor frame into obstacle points in the world frame.
 *
 * Scan beams -> sensor frame -> robot frame (mount) -> world frame (pose).
 * Dropped: non-finite values, beams outside [range_min, range_max], points
 * inside the robot's own footprint (self hits), and 3-D points outside the
 * height band [z_min, z_max]. For scans the kept points stay in beam order
 * (`ordered`), with each one's range and bearing for the breakpoint test.
 */
#ifndef LC_INGEST_H
#define LC_INGEST_H

#include <stdbool.h>
#include "alloc.h"
#include "frame.h"
#include "geom.h"

typedef struct lc_ingest_config {
    double self_radius; /* m, points this close to the robot centre are self hits */
    double z_min, z_max; /* m, height band for points with z */
    double range_cap;    /* m, points frames: farther points dropped (0: none) */
} lc_ingest_config;

void lc_ingest_config_default(lc_ingest_config *cfg);

typedef struct lc_cloud {
    lc_vec2 *world;   /* kept points, world frame */
    double *range;    /* scans: the beam's range; points: distance from sensor */
    double *bearing;  /* sensor-frame bearing, rad */
    int n, cap;
    bool ordered;     /* true for scans: consecutive kept points are neighbours */
    double angle_step; /* rad, scans: the step between beams */
    lc_vec2 sensor_world; /* sensor origin in the world frame */
    double fov;       /* rad covered by the frame, 2 pi when unknown or full;
                       * points frames: judged from the points' bearings */
    double fov_mid;   /* rad, robot frame direction of the middle of the view */
    int dropped_invalid, dropped_range, dropped_self, dropped_height;
    const lc_alloc *alloc; /* the buffers grow through it (alloc.h) */
} lc_cloud;

/* Init and free as alloc.h says. */
void lc_cloud_init(lc_cloud *cloud, const lc_alloc *alloc);
void lc_cloud_free(lc_cloud *cloud);

/* Returns the number of kept points, LC_ERR_NO_MEMORY, or LC_ERR_BAD_INPUT
 * when the frame claims a negative count. */
int lc_ingest(const lc_frame *frame, const lc_ingest_config *cfg, lc_cloud *cloud);

#endif
