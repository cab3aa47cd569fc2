/*
 * codec.h - the wire format: JSON text <-> core structs (protocol lacuna.v2).
 *
 * Decoding is strict and total: every input either yields a fully checked
 * struct or an lc_wire_error whose code is one of lc_wire_code and whose
 * message names the field at fault by its full path ("scan.dist[12]: not a
 * number or null", "robot.radius: must be > 0").
 * No input crashes the decoder or leaks; nothing is asserted on input.
 * Keys it does not know are ignored but counted and named with the same
 * paths (lc_wire_error.ignored), on success too: the server tells the robot
 * in a warning message (lc_wire_warning), the file readers warn.
 *
 * Ownership: the caller owns every struct. A decoded frame's arrays (dist,
 * xy, z) point into the caller's lc_wire_buffers and stay valid until the
 * next decode with the same buffers; the buffers grow through lc_alloc to a
 * high-water mark and are reused, so a warm decoder allocates nothing for
 * them (cJSON allocates its own tree per message and frees it before the
 * call returns; scan and points messages in plain form skip cJSON, see
 * codec_fast.h, and then allocate nothing once the buffers are warm).
 * Encoders write into a caller-owned lc_wire_text, also grown through
 * lc_alloc and reused.
 *
 * Units SI, angles in radians (docs/INTERFACES.md). Numbers: frames, robot, route,
 * setpoints, stamps and the plan result are printed so that they parse back
 * to the same double bit for bit (%.15g when that round-trips, else
 * %.17g); view geometry is rounded to LC_WIRE_VIEW_DECIMALS decimals
 * to keep view messages small. NaN and infinities are never printed: they
 * become null. Printing assumes the C locale (the decimal point is '.').
 *
 * Not thread safe: cJSON keeps its error pointer and hooks in globals.
 *
 * The files behind this header, one job each: codec_names.c (wire names),
 * json_read.c (the cJSON field readers and errors), codec_decode.c (text to
 * message; robot -> server objects, plan requests), codec_client.c (server
 * -> client messages), codec_fast.c (the one-pass scan and points reader),
 * json_write.c (the JSON writer and number format), codec_encode.c
 * (message encoders), codec_view.c (views and plan results).
 */
#ifndef LC_CODEC_H
#define LC_CODEC_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "alloc.h"
#include "frame.h"
#include "motion.h"
#include "patrol.h"
#include "robot.h"
#include "session.h"

struct cJSON;

#define LC_WIRE_PROTOCOL "lacuna.v2"

/* Robot names: 1..LC_WIRE_NAME_MAX of [A-Za-z0-9_.-], not starting with '.'. */
#define LC_WIRE_NAME_MAX 64
/* Tokens: 0..LC_WIRE_TOKEN_MAX printable ASCII characters (0x20..0x7e). */
#define LC_WIRE_TOKEN_MAX 256
/* Every number but stamp and seq must have a magnitude of at most this. */
#define LC_WIRE_MAGNITUDE_MAX 1e9
/* seq is an integer in [0, 2^53]. */
#define LC_WIRE_SEQ_MAX 9007199254740992.0
/* Decimals of the geometry in view messages (0.1 mm for metres). */
#define LC_WIRE_VIEW_DECIMALS 4
/* Decimals of timing_us in the plan result (1 ns). */
#define LC_WIRE_TIMING_DECIMALS 3

/* Error codes; lc_wire_code_name gives the wire string. */
typedef enum lc_wire_code {
    LC_WIRE_OK = 0,        /* "ok" (never sent) */
    LC_WIRE_BAD_JSON,      /* "bad_json": not one JSON value, trailing bytes, too deep */
    LC_WIRE_BAD_MESSAGE,   /* "bad_message": not an object, no type, duplicate key */
    LC_WIRE_BAD_FIELD,     /* "bad_field": a field missing, of the wrong type or out of range */
    LC_WIRE_UNKNOWN_TYPE,  /* "unknown_type" */
    LC_WIRE_UNAUTHORIZED,  /* "unauthorized": no hello yet, or a wrong token */
    LC_WIRE_FORBIDDEN,     /* "forbidden": the role may not send this */
    LC_WIRE_NAME_TAKEN,    /* "name_taken" */
    LC_WIRE_TOO_LARGE,     /* "too_large": longer than the maximum message size */
    LC_WIRE_BINARY,        /* "binary": a binary websocket message */
    LC_WIRE_RATE_LIMITED,  /* "rate_limited": flooding beyond the configured rate */
    LC_WIRE_INTERNAL,      /* "internal": the server failed (out of memory) */
    LC_WIRE_TOO_MANY_CONNECTIONS, /* "too_many_connections": from one address (max_per_address) */
    LC_WIRE_RECORDING_FAILED,     /* "recording_failed": recording stopped, control goes on */
    LC_WIRE_CODE_COUNT
} lc_wire_code;

const char *lc_wire_code_name(lc_wire_code code);
/* The code of a wire string; false when there is none of that name. */
bool lc_wire_code_from_name(const char *name, lc_wire_code *out);

/* Warning codes (the warning message: something accepted that the robot
 * should hear about); lc_wire_warn_name gives the wire string. */
typedef enum lc_wire_warn {
    LC_WARN_UNKNOWN_KEY = 0, /* "unknown_key": a key lacuna does not know, ignored */
    LC_WARN_NO_ROUTE,        /* "no_route": a frame before any route (the robot stays idle) */
    LC_WARN_STAMP_BACKWARDS, /* "stamp_backwards": a frame stamped before the previous one */
    LC_WARN_SEQ_BACKWARDS,   /* "seq_backwards": a frame's seq below the previous one's */
    LC_WARN_UNLISTED_SENSOR, /* "unlisted_sensor": a frame of a sensor its description lacks */
    LC_WARN_COUNT
} lc_wire_warn;

const char *lc_wire_warn_name(lc_wire_warn code);
/* The warning code of a wire string; false when there is none of that name. */
bool lc_wire_warn_from_name(const char *name, lc_wire_warn *out);

#define LC_WIRE_MESSAGE_MAX 200

#define LC_WIRE_KEY_SHOWN 128

typedef struct lc_wire_error {
    lc_wire_code code;
    bool has_seq;  /* the message had a readable seq */
    int64_t seq;
    char message[LC_WIRE_MESSAGE_MAX]; /* "field: reason" */
    /* Not an error: keys the decoder does not know and ignored (PROTOCOL.md),
     * counted on success too, so that callers can warn about typos; the
     * first ignored_named of them listed as 'path.key', 'key2' (printable
     * ASCII) in ignored_keys, as many as fit. */
    int ignored, ignored_named;
    char ignored_keys[LC_WIRE_KEY_SHOWN];
} lc_wire_error;

/* "unknown key 'robot.margn' ignored" or "unknown keys 'a', 'b' and 2 more
 * ignored" into buf[n]; "" when e->ignored is 0. */
void lc_wire_ignored_text(const lc_wire_error *e, char *buf, size_t n);

/* Sets code and message (printf-formatted, truncated to fit); leaves has_seq, seq. */
void lc_wire_error_set(lc_wire_error *err, lc_wire_code code, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

typedef struct lc_wire_limits {
    size_t max_message; /* bytes of text, default 1 MiB */
    int max_beams;      /* beams (dist) per scan, default 100000 */
    int max_points;     /* points per points frame, default 100000 */
    double dt_max;      /* s, largest plan request dt, default 1.0 */
} lc_wire_limits;

void lc_wire_limits_default(lc_wire_limits *lim);

/* Decode buffers for frame arrays, reused across messages. */
typedef struct lc_wire_buffers {
    const lc_alloc *alloc;
    double *ranges;
    int cap_ranges;
    double *xy;
    int cap_xy;
    double *z;
    int cap_z;
} lc_wire_buffers;

/* NULL alloc: lc_alloc_default(). */
void lc_wire_buffers_init(lc_wire_buffers *b, const lc_alloc *alloc);
void lc_wire_buffers_free(lc_wire_buffers *b);

typedef enum lc_wire_role {
    LC_ROLE_ROBOT = 0, /* "robot" */
    LC_ROLE_VIEWER,    /* "viewer" */
} lc_wire_role;

const char *lc_wire_role_name(lc_wire_role role);

typedef struct lc_wire_hello {
    lc_wire_role role;
    char robot[LC_WIRE_NAME_MAX + 1]; /* "" only for a viewer: every robot */
    bool has_token;
    char token[LC_WIRE_TOKEN_MAX + 1];
} lc_wire_hello;

typedef struct lc_wire_welcome {
    lc_wire_role role;
    char robot[LC_WIRE_NAME_MAX + 1];
    int watchdog_ms;
    long max_message;
    int max_beams;
    int max_points;
    double view_hz;
    bool resumed;        /* a robot's: the hello resumed its session (written for robots only) */
    int grace_ms;        /* how long a dropped robot's session waits for it (0: absent) */
    int link_timeout_ms; /* a silent link is closed after this (0: absent) */
    /* decode only: encoding writes "lacuna <version>", LC_WIRE_PROTOCOL and
     * LC_ROUTE_MAX */
    char server[64];
    char protocol[32];
    int max_waypoints; /* 0 when absent */
} lc_wire_welcome;

/* One setpoint message: the core's reply to a frame (control.h); `model`
 * says which pair is on the wire, sp.limit is "limit", waypoint -1 is null,
 * valid_ms (1..LC_VALID_MS_MAX) is "valid_ms". */
typedef lc_reply lc_wire_setpoint;

/* One warning message: code, "field: what" (or a sentence), the seq of the
 * frame it is about when there is one. */
typedef struct lc_wire_warning {
    lc_wire_warn code;
    bool has_seq;
    int64_t seq;
    char message[LC_WIRE_MESSAGE_MAX];
} lc_wire_warning;

typedef struct lc_wire_event {
    lc_event ev;       /* ev.waypoint -1 (null) when none */
    int64_t seq;       /* the frame that raised it */
} lc_wire_event;

/* Frames one plan request may carry ("frames"). */
#define LC_WIRE_PLAN_FRAMES_MAX 64

/* The `lacuna plan` request: "frame", or "frames" planned in order through
 * one session (each a step of dt); the result is the last frame's plan.
 * The frames' arrays all live in the decode buffers at once. */
typedef struct lc_wire_plan_request {
    lc_robot robot;
    lc_vec2 goal;       /* the pose's frame */
    bool has_velocity;
    lc_setpoint velocity; /* vx, vy (point) or v, w (unicycle); zero when absent */
    double dt;          /* s, default 0.05 */
    lc_frame frames[LC_WIRE_PLAN_FRAMES_MAX];
    int n_frames;       /* 1..LC_WIRE_PLAN_FRAMES_MAX */
    lc_frame frame;     /* = frames[n_frames - 1], the frame whose plan is the result */
} lc_wire_plan_request;

typedef enum lc_msg_type {
    LC_MSG_NONE = 0,
    LC_MSG_HELLO,    /* robot|viewer -> server */
    LC_MSG_ROBOT,    /* robot -> server */
    LC_MSG_ROUTE,
    LC_MSG_SCAN,
    LC_MSG_POINTS,
    LC_MSG_WELCOME,  /* server -> client */
    LC_MSG_SETPOINT,
    LC_MSG_EVENT,
    LC_MSG_ERROR,
    LC_MSG_VIEW,     /* recognised, body not decoded (nothing in lacuna reads it) */
    LC_MSG_SCENARIO, /* recognised, body not decoded (scenario.c reads headers) */
    LC_MSG_WARNING,  /* server -> robot */
    LC_MSG_COUNT
} lc_msg_type;

/* The wire "type" string of a message type (NULL for LC_MSG_NONE). */
const char *lc_msg_type_name(lc_msg_type type);

typedef struct lc_wire_msg {
    lc_msg_type type;
    union {
        lc_wire_hello hello;
        lc_robot robot;
        lc_route route;
        lc_frame frame; /* scan and points */
        lc_wire_welcome welcome;
        lc_wire_setpoint setpoint;
        lc_wire_event event;
        lc_wire_error error;
        lc_wire_warning warning;
    } u;
} lc_wire_msg;

/*
 * Decode one text message of len bytes (need not be NUL-terminated).
 * NULL lim: defaults. Returns 0, or -1 with *err filled (err->has_seq when
 * the message carried a readable seq). On failure *out is unspecified. On
 * success err->ignored counts the unknown keys the message carried (0 for
 * most messages; see lc_wire_error).
 */
int lc_wire_decode(const char *text, size_t len, const lc_wire_limits *lim,
                   lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err);

/* Decode a `lacuna plan` request (docs/INTERFACES.md). Same conventions. */
int lc_wire_decode_plan_request(const char *text, size_t len, const lc_wire_limits *lim,
                                lc_wire_buffers *buf, lc_wire_plan_request *out,
                                lc_wire_error *err);

/*
 * Pieces for readers of documents that embed wire objects (scenario
 * headers). `path` prefixes the field names in error messages ("robot" gives
 * "robot.radius: ..."); "" or NULL for none. Each returns 0 or -1 with *err
 * filled. A "type" member, when present, must name the object's message type.
 */
int lc_wire_robot_from_json(const struct cJSON *obj, const char *path, lc_robot *out,
                            lc_wire_error *err);
int lc_wire_route_from_json(const struct cJSON *obj, const char *path, lc_route *out,
                            lc_wire_error *err);
/* A scan or points object; without "type" it is a scan when it has "dist". */
int lc_wire_frame_from_json(const struct cJSON *obj, const char *path,
                            const lc_wire_limits *lim, lc_wire_buffers *buf, lc_frame *out,
                            lc_wire_error *err);
/* item must be [x, y] / [x, y, yaw] of finite numbers; name is used in errors. */
int lc_wire_vec2_from_json(const struct cJSON *item, const char *name, lc_vec2 *out,
                           lc_wire_error *err);
int lc_wire_pose_from_json(const struct cJSON *item, const char *name, lc_pose *out,
                           lc_wire_error *err);

/* Bounds of a number field: lo < x (lo_open) or lo <= x, likewise hi. */
typedef struct lc_wire_bounds {
    double lo, hi;
    bool lo_open, hi_open;
} lc_wire_bounds;

/*
 * obj[key] as a finite number within b (NULL: |x| <= LC_WIRE_MAGNITUDE_MAX).
 * Returns 1 when read, 0 when absent and not required (*out untouched), -1
 * on error. lc_wire_int_field also wants an integer value (|x| < 2^31).
 */
int lc_wire_number_field(const struct cJSON *obj, const char *path, const char *key,
                         bool required, const lc_wire_bounds *b, double *out,
                         lc_wire_error *err);
int lc_wire_int_field(const struct cJSON *obj, const char *path, const char *key,
                      bool required, const lc_wire_bounds *b, int *out, lc_wire_error *err);
int lc_wire_bool_field(const struct cJSON *obj, const char *path, const char *key,
                       bool required, bool *out, lc_wire_error *err);

/*
 * -1 with a bad_message error when obj has one of keys[] (NULL-terminated)
 * more than once (cJSON keeps duplicates and lookups see only the first).
 * Keys not in keys[] are counted into err->ignored (the first one named).
 */
int lc_wire_check_duplicates(const struct cJSON *obj, const char *path,
                             const char *const *keys, lc_wire_error *err);

/* Growable output text, NUL-terminated after every successful encode. */
typedef struct lc_wire_text {
    const lc_alloc *alloc;
    char *s;
    int len, cap;
    bool failed; /* out of memory during the current encode */
} lc_wire_text;

void lc_wire_text_init(lc_wire_text *t, const lc_alloc *alloc);
void lc_wire_text_free(lc_wire_text *t);

/*
 * Format x into buf: decimals < 0 gives text that parses back to x exactly
 * (%.15g when that does, else %.17g); otherwise x rounded to that many
 * decimals with trailing zeros dropped (|x| >= 1e15 falls back to the
 * exact form). Non-finite x gives "null". Returns the length; buf holds at
 * least LC_WIRE_NUMBER_MAX bytes.
 */
#define LC_WIRE_NUMBER_MAX 40
int lc_wire_format_number(char *buf, double x, int decimals);

/* What a view shows; pointers may be NULL where said. */
typedef struct lc_wire_view {
    const char *robot;              /* session name */
    const lc_robot *desc;           /* model, radius, margin */
    const lc_route *route;          /* NULL: no route */
    const lc_plan_result *result;   /* NULL: no frame yet (geometry is null) */
    lc_pose pose;                   /* of the last accepted frame */
    int64_t seq;                    /* of the last accepted frame, -1 none */
    double stamp;
    const lc_wire_setpoint *setpoint; /* last sent; NULL: none yet */
    /* us the last frame's plan took, and the longest of it and the frames
     * since the previous view; 0 (or less): not measured, written as null */
    double plan_us, plan_max_us;
    bool link_down;            /* the robot's link dropped; its session waits for it */
    lc_block_reason blocked;   /* why the patrol is blocked (its blocked event); NONE: null */
    /* with a result whose session remembers: write "memory", the occupied
     * cells near the robot (a view need not carry it every time) */
    bool with_memory;
} lc_wire_view;

/* What a view's "memory" holds at most: the occupied cells within
 * LC_WIRE_VIEW_MEMORY_REACH metres (a square about the robot), as at most
 * LC_WIRE_VIEW_MEMORY_RUNS runs along rows, the rows nearest the robot first. */
#define LC_WIRE_VIEW_MEMORY_REACH 5.0
#define LC_WIRE_VIEW_MEMORY_RUNS 2000

/*
 * Encoders: clear *t, write one JSON object, return 0 or -1 (out of memory,
 * *t then holds no message). Messages carry their "type"; the plan result
 * does not (it is not a wire message).
 */
int lc_wire_encode_hello(lc_wire_text *t, const lc_wire_hello *m);
int lc_wire_encode_welcome(lc_wire_text *t, const lc_wire_welcome *m);
int lc_wire_encode_robot(lc_wire_text *t, const lc_robot *m);
int lc_wire_encode_route(lc_wire_text *t, const lc_route *m);
int lc_wire_encode_frame(lc_wire_text *t, const lc_frame *m);
int lc_wire_encode_setpoint(lc_wire_text *t, const lc_wire_setpoint *m);
int lc_wire_encode_event(lc_wire_text *t, const lc_wire_event *m);
int lc_wire_encode_error(lc_wire_text *t, const lc_wire_error *m);
int lc_wire_encode_warning(lc_wire_text *t, const lc_wire_warning *m);
int lc_wire_encode_view(lc_wire_text *t, const lc_wire_view *m);
int lc_wire_encode_plan_result(lc_wire_text *t, const lc_plan_result *r, lc_model model);

#endif
