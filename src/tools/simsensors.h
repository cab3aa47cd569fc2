/*
 * simsensors.h - the sensors `lacuna sim` simulates (scenario.h): the
 * header's one "sensor", or each of its "sensors" at its own rate, and the
 * frames they send.
 *
 * Time: sensor k's frame j is at stamp j / rate_k (the same division for
 * every run, so stamps repeat bit for bit); the frames of all sensors go
 * out in time order, ties in list order, numbered 0, 1, 2, ... in that
 * order (seq). A scan sensor's frame is a scan of its beams; a points
 * sensor casts the same rays and sends their returns as 2-D points in the
 * sensor frame (no z). Frames of the header's single "sensor" carry its
 * mount and no name, as before there were several; frames of listed
 * sensors carry their name and no mount: the robot description lists the
 * sensors (lc_simsensors_describe) and the session takes the mount from
 * there, as a robot that describes its sensors would send them.
 *
 * Ownership: lc_simsensors_init allocates each sensor's buffers once;
 * a frame's arrays point into them until that sensor's next frame.
 */
#ifndef LC_SIMSENSORS_H
#define LC_SIMSENSORS_H

#include <stdint.h>

#include "frame.h"
#include "robot.h"
#include "scenario.h"
#include "world.h"

typedef struct lc_simsensor {
    char name[LC_SENSOR_NAME_MAX + 1]; /* "" for the header's "sensor" */
    lc_frame_kind kind;
    lc_sensor rays;  /* beams over fov, ranges, rate, noise, mount */
    long next;       /* this sensor's frames sent so far */
    double *ranges;  /* beams */
    double *xy;      /* 2 * beams, points sensors */
} lc_simsensor;

typedef struct lc_simsensors {
    lc_simsensor s[LC_SENSORS_MAX];
    int n;
    int64_t seq; /* of the next frame */
} lc_simsensors;

/* The header's sensors (lc_scenario_sim_sensors). 0, or -1 out of memory. */
int lc_simsensors_init(lc_simsensors *ss, const lc_scenario_header *h);
void lc_simsensors_free(lc_simsensors *ss);

/* The sensor whose frame comes next, and that frame's stamp (s). */
int lc_simsensors_next(const lc_simsensors *ss, double *stamp);

/* The next frame, seen by its sensor from the robot at pose (rng: range
 * noise, may be NULL); counts it sent. */
lc_frame lc_simsensors_frame(lc_simsensors *ss, const lc_world *w, lc_pose pose,
                             lc_sim_rng *rng);

/* The robot description's sensors for a header that lists "sensors": each
 * one's name, kind and mount, a points sensor's fov (replacing any the
 * description had). Nothing for the single "sensor". */
void lc_simsensors_describe(const lc_scenario_header *h, lc_robot *robot);

#endif
