/*
 * codec_names.h - the wire names the codec's files share (inside src/proto;
 * codec.h has the public name functions).
 *
 * The tables are indexed by the core's enums (lc_wire_role, lc_model,
 * lc_blocked_policy, lc_frame_kind); the lookups go the other way, from a decoded string
 * to an index, case sensitively, and give -1 (LC_MSG_NONE for a message
 * type) for a name they do not know. The core's own name functions
 * (lc_state_name, lc_limit_name, lc_event_name) are the one source of those
 * names: nothing here copies them.
 */
#ifndef LC_CODEC_NAMES_H
#define LC_CODEC_NAMES_H

#include "codec.h"

extern const char *const lc_wire_role_names[2];   /* "robot", "viewer" */
extern const char *const lc_wire_model_names[2];  /* "point", "unicycle" */
extern const char *const lc_wire_policy_names[2]; /* "wait", "skip" */
extern const char *const lc_wire_kind_names[2];   /* "scan", "points" (lc_frame_kind) */

/* s[0..n) is 1..max of [A-Za-z0-9_.-] (robot, sensor and family names). */
bool lc_wire_name_chars_ok(const char *s, size_t n, size_t max);

/* A sensor name (robot description, frames): 1..LC_SENSOR_NAME_MAX of
 * [A-Za-z0-9_.-]. */
bool lc_wire_sensor_name_ok(const char *s, size_t n);

/* Index of s in names[0..n) (NULL entries match nothing), or -1. */
int lc_wire_name_index(const char *s, const char *const *names, int n);

/* The message type whose wire "type" is s; LC_MSG_NONE for none. */
lc_msg_type lc_wire_msg_type_from_name(const char *s);

/* The lc_state, lc_limit or lc_event_kind named s, or -1. */
int lc_wire_state_index(const char *s);
int lc_wire_limit_index(const char *s);
int lc_wire_event_index(const char *s);
int lc_wire_reason_index(const char *s);

#endif
