/*
 * json_read.h - the codec's field readers over a cJSON tree (inside
 * src/proto; codec.h publishes the few that scenario headers use too).
 *
 * Every reader names the field at fault in err ("path.key: reason", with
 * "message" for an empty path) and returns -1 on a fault; readers of one
 * member return 1 when read and 0 when absent and not required (*out then
 * untouched). Numbers are finite and, unless bounds say otherwise, of
 * magnitude at most LC_WIRE_MAGNITUDE_MAX. Strings handed out point into
 * the cJSON tree and live as long as it does. Nothing here asserts on input.
 */
#ifndef LC_JSON_READ_H
#define LC_JSON_READ_H

#include "codec.h"

#include <cjson/cJSON.h>

/* |x| <= LC_WIRE_MAGNITUDE_MAX; 0 < x, 0 <= x (both up to that); any finite
 * x; 0 <= x <= INT_MAX (a count or an index). */
extern const lc_wire_bounds lc_jr_any, lc_jr_pos, lc_jr_nonneg, lc_jr_finite, lc_jr_count;

/* An error with nothing in it, no seq and no ignored keys. */
void lc_jr_error_clear(lc_wire_error *err);

/* c as a message shows it between quote characters: printable ASCII, else '?'. */
char lc_jr_shown_char(char c, char quote);

/* "path.key", or "key" without a path, or "path" (else "message") without a key. */
void lc_jr_join_name(char *buf, size_t n, const char *path, const char *key);

/* Sets err to "path.key: reason" and returns -1. */
int lc_jr_fail(lc_wire_error *err, lc_wire_code code, const char *path, const char *key,
               const char *fmt, ...) __attribute__((format(printf, 5, 6)));

/* A bad_json error for text[0..len) that cJSON failed to parse at end
 * (NULL: unknown): "what: not valid JSON (near offset N)", or, when a word
 * for a number JSON has not stands there (NaN, Infinity, -Infinity, nan,
 * inf), that word named. */
void lc_jr_bad_json(lc_wire_error *err, const char *what, const char *text, size_t len,
                    const char *end);

/* The member, or NULL; *rc is -1 (err filled) for a required one that is missing. */
const cJSON *lc_jr_member(const cJSON *obj, const char *path, const char *key, bool required,
                          int *rc, lc_wire_error *err);

/* A string member (*out NULL for JSON null when allow_null). */
int lc_jr_string(const cJSON *obj, const char *path, const char *key, bool required,
                 bool allow_null, const char **out, lc_wire_error *err);

/* A string member that must be one of names[0..n); its index in *out. */
int lc_jr_choice(const cJSON *obj, const char *path, const char *key, bool required,
                 const char *const *names, int n, int *out, lc_wire_error *err);

/* "seq": an integer in [0, LC_WIRE_SEQ_MAX]. */
int lc_jr_seq(const cJSON *obj, const char *path, bool required, int64_t *out,
              lc_wire_error *err);

/* A waypoint index: an integer >= 0, or null or absent for none (-1). 0 or -1. */
int lc_jr_index(const cJSON *obj, const char *path, const char *key, int *out,
                lc_wire_error *err);

/* A robot name member (1..LC_WIRE_NAME_MAX of [A-Za-z0-9_.-], no leading
 * '.') copied into out; empty, null or absent only when allow_empty. 0 or -1. */
int lc_jr_robot_name(const cJSON *obj, const char *path, const char *key, bool allow_empty,
                     char *out, lc_wire_error *err);

/* A sensor name member (1..LC_SENSOR_NAME_MAX of [A-Za-z0-9_.-], no
 * null) copied into out (room for LC_SENSOR_NAME_MAX + 1); "" when absent. */
int lc_jr_sensor_name(const cJSON *obj, const char *path, const char *key, bool required,
                      char *out, lc_wire_error *err);

/*
 * lc_wire_check_duplicates with the top level said outright: top is true
 * for a message's own object (path is then its type, "robot"), whose "seq"
 * is known whatever its type (every decode reads it for the error reply).
 * lc_wire_check_duplicates takes a NULL path for the top level.
 */
int lc_jr_check_keys(const cJSON *obj, const char *path, const char *const *keys, bool top,
                     lc_wire_error *err);

/* An object's optional "type" must be expect. 0 or -1. */
int lc_jr_check_type(const cJSON *obj, const char *path, const char *expect,
                     lc_wire_error *err);

/* it must be an object. 0 or -1. */
int lc_jr_need_object(const cJSON *it, const char *path, const char *key, lc_wire_error *err);

/* [x, y] and [x, y, yaw] members (lc_wire_vec2_from_json, lc_wire_pose_from_json). */
int lc_jr_vec2_member(const cJSON *obj, const char *path, const char *key, bool required,
                      lc_vec2 *out, lc_wire_error *err);
int lc_jr_pose_member(const cJSON *obj, const char *path, const char *key, bool required,
                      lc_pose *out, lc_wire_error *err);

/* The required array member, its length in [lo, hi] ("what" names the
 * elements in errors) into *count; NULL on a fault. */
const cJSON *lc_jr_array(const cJSON *obj, const char *path, const char *key, int lo, int hi,
                         const char *what, int *count, lc_wire_error *err);

/* What lc_jr_each does with element i, named "path.key[i]": 0, or -1 with
 * err filled. */
typedef int (*lc_jr_item_fn)(const cJSON *item, const char *name, int i, void *ctx,
                             lc_wire_error *err);

/* fn on each element of the required array member (length in [lo, hi],
 * into *count), in order, until one fails. 0 or -1. */
int lc_jr_each(const cJSON *obj, const char *path, const char *key, int lo, int hi,
               const char *what, lc_jr_item_fn fn, void *ctx, int *count, lc_wire_error *err);

/* arr's elements, numbers of magnitude at most LC_WIRE_MAGNITUDE_MAX, into
 * out (room for all of them); key names the array in errors. 0 or -1. */
int lc_jr_numbers(const cJSON *arr, const char *path, const char *key, double *out,
                  lc_wire_error *err);

#endif
