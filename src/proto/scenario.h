/*
 * scenario.h - scenario files (JSON Lines, docs/INTERFACES.md): a header line, then
 * one wire message a line, in order.
 *
 * Header: {"type":"scenario","version":1,"description":s,"robot":{...},
 * "route":{...},"start":[x,y,yaw],"world":{"polygons":[[[x,y],...],...]},
 * "sensor":{"beams","fov","near","far","rate","noise","mount"},
 * "sensors":[{"name","kind":"scan"|"points","mount","beams","fov","near",
 * "far","rate","noise"},...],
 * "expect":"done"|"blocked","max_time":s,"family":name,"shortest_path":m,
 * "control":{...}} (control.h).
 * "sensor" is the one simulated scanner of a robot that names no sensors;
 * "sensors" (instead of it) lists 1..LC_SENSORS_MAX simulated sensors of
 * unique names (1..LC_SENSOR_NAME_MAX of [A-Za-z0-9_.-]), each at its own
 * rate (near and far, m, being the band of distances its beams return in,
 * as in a scan frame): `lacuna sim` gives the robot
 * description these sensors and each frame its sensor's name.
 * Every field but type and version is optional; `expect` (default "done")
 * is what `lacuna sim` takes for success, `max_time` (s) bounds a sim run.
 * `family` names the kind of world a generated suite drew it from
 * (scripts/worlds.py) and `shortest_path` is the length of the shortest path
 * through the route for the robot's size: `lacuna sim` groups and scores a
 * batch by them. Unknown header keys are ignored (and warned of, below).
 *
 * Reading is strict: a line that is not one valid wire message is an error
 * that names its line number (1-based) and the reason. One exception: a
 * last line without its newline that is not complete JSON is a truncated
 * recording (a crash mid-write); it is reported through `warning` and
 * skipped. Blank lines are skipped. Unknown keys are ignored, and warned of
 * through `warning`: in the header every time, in messages once per
 * message type and file (a typo such as "margn" would otherwise leave a
 * default in force without a word).
 *
 * Ownership: the caller owns the reader and the header; the header's
 * polygons live in its own polyset (lc_scenario_header_free). Frames
 * returned by lc_scenario_next point into the reader's buffers and stay
 * valid until the next call. The reader does not copy the text: it must
 * outlive the reader. Units SI, angles radians; the world frame is the
 * route's frame.
 */
#ifndef LC_SCENARIO_H
#define LC_SCENARIO_H

#include <stdbool.h>
#include <stddef.h>

#include "codec.h"
#include "polyset.h"

#define LC_SCENARIO_VERSION 1
#define LC_SCENARIO_TEXT_MAX 512 /* bytes of description kept (longer: cut) */
#define LC_SCENARIO_FAMILY_MAX 64 /* bytes of a family name, with its NUL */

typedef enum lc_scenario_expect {
    LC_EXPECT_DONE = 0, /* "done": the route is finished without a collision */
    LC_EXPECT_BLOCKED,  /* "blocked": a waypoint cannot be reached; ends blocked */
} lc_scenario_expect;

const char *lc_scenario_expect_name(lc_scenario_expect e);

/* A simulated sensor: the header's "sensor", or one of its "sensors". A
 * points sensor is simulated as `beams` rays over fov whose returns are 2-D
 * points in the sensor frame. */
typedef struct lc_scenario_sensor {
    char name[LC_SENSOR_NAME_MAX + 1]; /* "" for "sensor" */
    lc_frame_kind kind;                /* scan ("sensor" always) or points */
    int beams;
    double fov;       /* rad, centred on the mount's x axis */
    double range_min; /* m, "near" */
    double range_max; /* m, "far" */
    double rate;      /* Hz, frames per second */
    double noise;     /* m, standard deviation of the range noise */
    lc_pose mount;    /* sensor in the robot frame */
} lc_scenario_sensor;

/* A scan of 541 beams over 270 degrees, 0.05..12 m, 20 Hz, 0.01 m noise,
 * mount at zero, no name (also the defaults of each of "sensors"). */
void lc_scenario_sensor_default(lc_scenario_sensor *s);

typedef struct lc_scenario_header {
    int version;
    /* How the recording server chose each frame's control period (lacuna
     * serve writes it; control.h). Absent in simulator files: the frames
     * are then stepped by lc_control_stamps with lc_scenario_first_dt. */
    lc_control control;
    bool has_control;
    char description[LC_SCENARIO_TEXT_MAX];
    lc_robot robot;   /* defaults when absent */
    bool has_robot;
    lc_route route;   /* empty route when absent */
    bool has_route;
    lc_pose start;
    bool has_start;
    lc_polyset world; /* polygons (2+ vertices each), world frame */
    bool has_world;
    lc_scenario_sensor sensor;
    bool has_sensor;
    lc_scenario_sensor sensors[LC_SENSORS_MAX]; /* "sensors" */
    int n_sensors;    /* 0 when absent (then never with has_sensor) */
    lc_scenario_expect expect;
    double max_time;  /* s, 0 when absent */
    char family[LC_SCENARIO_FAMILY_MAX]; /* [A-Za-z0-9_.-], "" when absent */
    double shortest_path; /* m, 0 when absent */
} lc_scenario_header;

/* An empty header (defaults, no polygons). */
void lc_scenario_header_init(lc_scenario_header *h);
void lc_scenario_header_free(lc_scenario_header *h);

/* The sensors a simulation runs, into *out: the "sensors" list, else the
 * "sensor" (its default when absent). Their count (1..LC_SENSORS_MAX). */
int lc_scenario_sim_sensors(const lc_scenario_header *h, const lc_scenario_sensor **out);

/* The control period the first frame of a run uses: 1 / the fastest
 * sensor's rate ("sensors", else "sensor"), else 0.05 s. */
double lc_scenario_first_dt(const lc_scenario_header *h);

/* The control settings the file's frames are stepped with: its "control"
 * object, else the simulator's rule (lc_control_stamps, first_dt above). */
lc_control lc_scenario_control(const lc_scenario_header *h);

/* Where a read failed: line 0 means the file as a whole. */
typedef struct lc_scenario_error {
    int line;
    char message[LC_WIRE_MESSAGE_MAX + 64];
    /* On success of lc_scenario_parse_header: the header's unknown keys
     * (ignored), "" when none; so that a typo can be warned of. */
    char ignored[LC_WIRE_KEY_SHOWN + 64];
} lc_scenario_error;

/* Decode a header line of len bytes. 0, or -1 with err->message filled. */
int lc_scenario_parse_header(const char *text, size_t len, lc_scenario_header *h,
                             lc_scenario_error *err);

typedef struct lc_scenario_reader {
    const char *text;
    size_t len, pos;
    int line;          /* number of the line last read */
    lc_wire_limits lim;
    lc_wire_buffers buf;
    void (*warning)(void *data, int line, const char *message); /* NULL: none */
    void *warning_data;
    unsigned warned; /* message types already warned of for unknown keys */
} lc_scenario_reader;

/* text stays the caller's; NULL alloc: lc_alloc_default(). */
void lc_scenario_reader_init(lc_scenario_reader *r, const char *text, size_t len,
                             const lc_alloc *alloc);
void lc_scenario_reader_free(lc_scenario_reader *r);

/* The first line: 0, or -1 with *err (line 1 when the line is bad). */
int lc_scenario_read_header(lc_scenario_reader *r, lc_scenario_header *h,
                            lc_scenario_error *err);

/*
 * The next message: 1 with *msg filled (msg->type never LC_MSG_NONE), 0 at
 * the end (a truncated last line is warned about and ends the file), -1 on a
 * bad line with *err. A second "scenario" line is an error.
 */
int lc_scenario_next(lc_scenario_reader *r, lc_wire_msg *msg, lc_scenario_error *err);

/* The header as one JSON object (no newline), numbers round-trippable. 0 or -1. */
int lc_scenario_encode_header(lc_wire_text *t, const lc_scenario_header *h);

#endif
