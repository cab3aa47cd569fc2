/*
 * codec.c - the wire codec (see codec.h): cJSON for parsing, a small writer
 * of its own for printing.
 *
 * Decoding reads the cJSON tree once, field by field in a fixed order, so
 * the first faulty field is the one reported. Keys are matched case
 * sensitively; unknown keys are ignored (forward compatible); a known key
 * given twice is an error (cJSON would silently use the first). Scan and
 * points messages in plain form take a one-pass fast path first
 * (codec_fast.c) that decodes exactly as this path would or declines.
 *
 * Encoding writes straight into an lc_wire_text: the output grows to a
 * high-water mark and is reused, and the number format is ours (exact
 * round trip where replay matters, fixed decimals for view geometry, null
 * for anything non-finite).
 */
#include "codec.h"
#include "codec_fast.h"

#include <float.h>
#include <inttypes.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "lc_config.h"

#define MAG LC_WIRE_MAGNITUDE_MAX
#define TWO_PI (2.0 * LC_PI)

/* ---------------------------------------------------------------- names */

static const char *const code_names[LC_WIRE_CODE_COUNT] = {
    [LC_WIRE_OK] = "ok",
    [LC_WIRE_BAD_JSON] = "bad_json",
    [LC_WIRE_BAD_MESSAGE] = "bad_message",
    [LC_WIRE_BAD_FIELD] = "bad_field",
    [LC_WIRE_UNKNOWN_TYPE] = "unknown_type",
    [LC_WIRE_UNAUTHORIZED] = "unauthorized",
    [LC_WIRE_FORBIDDEN] = "forbidden",
    [LC_WIRE_NAME_TAKEN] = "name_taken",
    [LC_WIRE_TOO_LARGE] = "too_large",
    [LC_WIRE_BINARY] = "binary",
    [LC_WIRE_RATE_LIMITED] = "rate_limited",
    [LC_WIRE_INTERNAL] = "internal",
    [LC_WIRE_TOO_MANY_CONNECTIONS] = "too_many_connections",
    [LC_WIRE_RECORDING_FAILED] = "recording_failed",
};

static const char *const msg_names[LC_MSG_COUNT] = {
    [LC_MSG_NONE] = NULL,
    [LC_MSG_HELLO] = "hello",
    [LC_MSG_ROBOT] = "robot",
    [LC_MSG_ROUTE] = "route",
    [LC_MSG_SCAN] = "scan",
    [LC_MSG_POINTS] = "points",
    [LC_MSG_WELCOME] = "welcome",
    [LC_MSG_SETPOINT] = "setpoint",
    [LC_MSG_EVENT] = "event",
    [LC_MSG_ERROR] = "error",
    [LC_MSG_VIEW] = "view",
    [LC_MSG_SCENARIO] = "scenario",
};

static const char *const role_names[] = {"robot", "viewer"};
static const char *const model_names[] = {"point", "unicycle"};
static const char *const policy_names[] = {"wait", "skip"};

const char *lc_wire_code_name(lc_wire_code code)
{
    if ((int)code < 0 || code >= LC_WIRE_CODE_COUNT)
        return "internal";
    return code_names[code];
}

bool lc_wire_code_from_name(const char *name, lc_wire_code *out)
{
    for (int i = 0; i < LC_WIRE_CODE_COUNT; i++) {
        if (strcmp(name, code_names[i]) == 0) {
            *out = (lc_wire_code)i;
            return true;
        }
    }
    return false;
}

const char *lc_wire_role_name(lc_wire_role role)
{
    return role == LC_ROLE_VIEWER ? role_names[1] : role_names[0];
}

const char *lc_msg_type_name(lc_msg_type type)
{
    if ((int)type < 0 || type >= LC_MSG_COUNT)
        return NULL;
    return msg_names[type];
}

/* Index of s in names[0..n), or -1. */
static int find_name(const char *s, const char *const *names, int n)
{
    for (int i = 0; i < n; i++)
        if (names[i] && strcmp(s, names[i]) == 0)
            return i;
    return -1;
}

/* The core's name functions, looked up the other way. */
static int find_state(const char *s)
{
    for (int i = 0; i < LC_STATE_COUNT; i++) {
        const char *n = lc_state_name((lc_state)i);
        if (n && strcmp(s, n) == 0)
            return i;
    }
    return -1;
}

static int find_limit(const char *s)
{
    for (int i = 0; i < LC_LIMIT_COUNT; i++) {
        const char *n = lc_limit_name((lc_limit)i);
        if (n && strcmp(s, n) == 0)
            return i;
    }
    return -1;
}

static int find_event(const char *s)
{
    for (int i = 0; i < LC_EVENT_COUNT; i++) {
        const char *n = lc_event_name((lc_event_kind)i);
        if (n && strcmp(s, n) == 0)
            return i;
    }
    return -1;
}

/* --------------------------------------------------------------- errors */

void lc_wire_error_set(lc_wire_error *err, lc_wire_code code, const char *fmt, ...)
{
    err->code = code;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(err->message, sizeof err->message, fmt, ap);
    va_end(ap);
}

static void error_clear(lc_wire_error *err)
{
    err->code = LC_WIRE_OK;
    err->has_seq = false;
    err->seq = 0;
    err->message[0] = '\0';
    err->ignored = 0;
    err->ignored_named = 0;
    err->ignored_keys[0] = '\0';
}

/* c as a message shows it between quote characters: printable ASCII, else '?'. */
static char shown_char(char c, char quote)
{
    return c >= 0x20 && c < 0x7f && c != quote && c != '\\' ? c : '?';
}

/* "path.key", or "key" without a path, or "path" without a key. */
static void join_name(char *buf, size_t n, const char *path, const char *key)
{
    if (!key || !*key)
        snprintf(buf, n, "%s", path && *path ? path : "message");
    else if (path && *path)
        snprintf(buf, n, "%s.%s", path, key);
    else
        snprintf(buf, n, "%s", key);
}

/* Sets err to "path.key: reason" and returns -1. */
__attribute__((format(printf, 5, 6)))
static int fail(lc_wire_error *err, lc_wire_code code, const char *path, const char *key,
                const char *fmt, ...)
{
    char name[96], reason[128];
    join_name(name, sizeof name, path, key);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(reason, sizeof reason, fmt, ap);
    va_end(ap);
    lc_wire_error_set(err, code, "%s: %s", name, reason);
    return -1;
}

/* --------------------------------------------------------------- limits */

void lc_wire_limits_default(lc_wire_limits *lim)
{
    lim->max_message = 1u << 20;
    lim->max_beams = 100000;
    lim->max_points = 100000;
    lim->dt_max = 1.0;
}

static const lc_wire_limits *limits_or_default(const lc_wire_limits *lim,
                                               lc_wire_limits *storage)
{
    if (lim)
        return lim;
    lc_wire_limits_default(storage);
    return storage;
}

void lc_wire_buffers_init(lc_wire_buffers *b, const lc_alloc *alloc)
{
    memset(b, 0, sizeof *b);
    b->alloc = alloc ? alloc : lc_alloc_default();
}

void lc_wire_buffers_free(lc_wire_buffers *b)
{
    LC_RELEASE(b->alloc, b->ranges, b->cap_ranges);
    LC_RELEASE(b->alloc, b->xy, b->cap_xy);
    LC_RELEASE(b->alloc, b->z, b->cap_z);
}

/* -------------------------------------------------------- field readers */

static const lc_wire_bounds B_ANY = {-MAG, MAG, false, false};
static const lc_wire_bounds B_POS = {0.0, MAG, true, false};
static const lc_wire_bounds B_NONNEG = {0.0, MAG, false, false};
static const lc_wire_bounds B_FINITE = {-DBL_MAX, DBL_MAX, false, false};
static const lc_wire_bounds B_INDEX = {0.0, 2147483647.0, false, false};

static int check_bounds(double x, const lc_wire_bounds *b, const char *path, const char *key,
                        lc_wire_error *err)
{
    char lim[LC_WIRE_NUMBER_MAX];
    if (b->lo_open ? !(x > b->lo) : !(x >= b->lo)) {
        lc_wire_format_number(lim, b->lo, -1);
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "must be %s %s",
                    b->lo_open ? ">" : ">=", lim);
    }
    if (b->hi_open ? !(x < b->hi) : !(x <= b->hi)) {
        lc_wire_format_number(lim, b->hi, -1);
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "must be %s %s",
                    b->hi_open ? "<" : "<=", lim);
    }
    return 0;
}

/* A finite number within b. */
static int number_value(const cJSON *it, const char *path, const char *key,
                        const lc_wire_bounds *b, double *out, lc_wire_error *err)
{
    if (!cJSON_IsNumber(it))
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "not a number");
    double x = it->valuedouble;
    if (!isfinite(x))
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "not finite");
    if (check_bounds(x, b ? b : &B_ANY, path, key, err) != 0)
        return -1;
    *out = x;
    return 0;
}

/* The member, or NULL; fails on a required one that is missing. */
static const cJSON *member(const cJSON *obj, const char *path, const char *key, bool required,
                           int *rc, lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
    *rc = 0;
    if (!it && required)
        *rc = fail(err, LC_WIRE_BAD_FIELD, path, key, "missing");
    return it;
}

int lc_wire_number_field(const cJSON *obj, const char *path, const char *key, bool required,
                         const lc_wire_bounds *b, double *out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    return number_value(it, path, key, b, out, err) == 0 ? 1 : -1;
}

static int integer_value(const cJSON *it, const char *path, const char *key,
                         const lc_wire_bounds *b, double *out, lc_wire_error *err)
{
    double x;
    if (number_value(it, path, key, &B_FINITE, &x, err) != 0)
        return -1;
    if (x != floor(x))
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "not an integer");
    if (check_bounds(x, b, path, key, err) != 0)
        return -1;
    *out = x;
    return 0;
}

int lc_wire_int_field(const cJSON *obj, const char *path, const char *key, bool required,
                      const lc_wire_bounds *b, int *out, lc_wire_error *err)
{
    static const lc_wire_bounds b_int = {-2147483647.0, 2147483647.0, false, false};
    int rc;
    const cJSON *it = member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    double x;
    if (integer_value(it, path, key, &b_int, &x, err) != 0)
        return -1;
    if (b && check_bounds(x, b, path, key, err) != 0)
        return -1;
    *out = (int)x;
    return 1;
}

int lc_wire_bool_field(const cJSON *obj, const char *path, const char *key, bool required,
                       bool *out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    if (!cJSON_IsBool(it))
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "not true or false");
    *out = cJSON_IsTrue(it);
    return 1;
}

/* A string member (NULL value means JSON null when allow_null). */
static int string_field(const cJSON *obj, const char *path, const char *key, bool required,
                        bool allow_null, const char **out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    if (allow_null && cJSON_IsNull(it)) {
        *out = NULL;
        return 1;
    }
    if (!cJSON_IsString(it) || !it->valuestring)
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "not a string");
    *out = it->valuestring;
    return 1;
}

/* A string member that must be one of names[0..n); its index in *out. */
static int choice_field(const cJSON *obj, const char *path, const char *key, bool required,
                        const char *const *names, int n, int *out, lc_wire_error *err)
{
    const char *s;
    int rc = string_field(obj, path, key, required, false, &s, err);
    if (rc <= 0)
        return rc;
    int i = find_name(s, names, n);
    if (i < 0) {
        char list[128] = "";
        for (int k = 0; k < n; k++) {
            size_t used = strlen(list);
            snprintf(list + used, sizeof list - used, "%s\"%s\"",
                     k == 0 ? "" : (k == n - 1 ? " or " : ", "), names[k]);
        }
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "must be %s", list);
    }
    *out = i;
    return 1;
}

static bool seq_ok(const cJSON *it)
{
    if (!cJSON_IsNumber(it))
        return false;
    double x = it->valuedouble;
    return isfinite(x) && x == floor(x) && x >= 0.0 && x <= LC_WIRE_SEQ_MAX;
}

static int seq_field(const cJSON *obj, const char *path, bool required, int64_t *out,
                     lc_wire_error *err)
{
    static const lc_wire_bounds b_seq = {0.0, LC_WIRE_SEQ_MAX, false, false};
    int rc;
    const cJSON *it = member(obj, path, "seq", required, &rc, err);
    if (!it)
        return rc;
    double x;
    if (integer_value(it, path, "seq", &b_seq, &x, err) != 0)
        return -1;
    *out = (int64_t)x;
    return 1;
}

/* A waypoint index: an integer >= 0, or null for none (-1). */
static int index_field(const cJSON *obj, const char *path, const char *key, int *out,
                       lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, false, &rc, err);
    *out = -1;
    if (!it || cJSON_IsNull(it))
        return 0;
    double x;
    if (integer_value(it, path, key, &B_INDEX, &x, err) != 0)
        return -1;
    *out = (int)x;
    return 0;
}

/* An unknown key: counted, and named in order while the list has room (the
 * first one always, cut to fit). */
static void note_ignored(lc_wire_error *err, const char *path, const char *key)
{
    if (err->ignored++ > err->ignored_named)
        return; /* an earlier one did not fit: keep the list in order */
    char name[LC_WIRE_KEY_SHOWN];
    join_name(name, sizeof name, path, key[0] ? key : "\"\"");
    for (char *c = name; *c; c++)
        *c = shown_char(*c, '\'');
    size_t used = strlen(err->ignored_keys), room = sizeof err->ignored_keys - used;
    /* ", 'name'" and the NUL */
    if (strlen(name) + 5 > room) {
        if (used > 0)
            return;
        name[room - 5] = '\0'; /* the first: cut, never left out */
    }
    snprintf(err->ignored_keys + used, room, "%s'%s'", used ? ", " : "", name);
    err->ignored_named++;
}

void lc_wire_ignored_text(const lc_wire_error *e, char *buf, size_t n)
{
    if (n == 0)
        return;
    buf[0] = '\0';
    if (e->ignored <= 0)
        return;
    char more[40] = "";
    if (e->ignored > e->ignored_named)
        snprintf(more, sizeof more, "%s%d more", e->ignored_named ? " and " : "",
                 e->ignored - e->ignored_named);
    snprintf(buf, n, "unknown key%s %s%s ignored", e->ignored > 1 ? "s" : "", e->ignored_keys,
             more);
}

int lc_wire_check_duplicates(const cJSON *obj, const char *path, const char *const *keys,
                             lc_wire_error *err)
{
    unsigned long seen = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, obj) {
        if (!it->string)
            continue;
        int k = 0;
        while (k < 64 && keys[k] && strcmp(it->string, keys[k]) != 0)
            k++;
        if (k == 64 || !keys[k]) {
            /* a message's seq is read whatever its type (peek_seq echoes it
             * in errors), so it is known at the top level of every message */
            if (!(path == NULL && strcmp(it->string, "seq") == 0))
                note_ignored(err, path, it->string);
            continue;
        }
        if (seen & (1ul << k))
            return fail(err, LC_WIRE_BAD_MESSAGE, path, keys[k], "given more than once");
        seen |= 1ul << k;
    }
    return 0;
}

/* An object's optional "type" must name what it is. */
static int check_type(const cJSON *obj, const char *path, const char *expect,
                      lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, "type");
    if (!it)
        return 0;
    if (!cJSON_IsString(it) || !it->valuestring || strcmp(it->valuestring, expect) != 0)
        return fail(err, LC_WIRE_BAD_FIELD, path, "type", "must be \"%s\"", expect);
    return 0;
}

static int need_object(const cJSON *it, const char *path, const char *key, lc_wire_error *err)
{
    if (!cJSON_IsObject(it))
        return fail(err, LC_WIRE_BAD_FIELD, path, key, "not an object");
    return 0;
}

/* item as exactly n finite numbers within b; name is the full field name. */
static int fixed_numbers(const cJSON *item, const char *name, int n, const lc_wire_bounds *b,
                         double *out, lc_wire_error *err)
{
    if (!cJSON_IsArray(item))
        return fail(err, LC_WIRE_BAD_FIELD, NULL, name, "not an array of %d numbers", n);
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, item) {
        if (i >= n)
            return fail(err, LC_WIRE_BAD_FIELD, NULL, name, "more than %d numbers", n);
        char key[112];
        snprintf(key, sizeof key, "%s[%d]", name, i);
        if (number_value(it, NULL, key, b, &out[i], err) != 0)
            return -1;
        i++;
    }
    if (i != n)
        return fail(err, LC_WIRE_BAD_FIELD, NULL, name, "%d numbers instead of %d", i, n);
    return 0;
}

int lc_wire_vec2_from_json(const cJSON *item, const char *name, lc_vec2 *out,
                           lc_wire_error *err)
{
    double v[2];
    if (fixed_numbers(item, name, 2, &B_ANY, v, err) != 0)
        return -1;
    *out = lc_v2(v[0], v[1]);
    return 0;
}

int lc_wire_pose_from_json(const cJSON *item, const char *name, lc_pose *out,
                           lc_wire_error *err)
{
    double v[3];
    if (fixed_numbers(item, name, 3, &B_ANY, v, err) != 0)
        return -1;
    *out = (lc_pose){v[0], v[1], v[2]};
    return 0;
}

/* A member read by one of the two functions above. */
static int vec2_member(const cJSON *obj, const char *path, const char *key, bool required,
                       lc_vec2 *out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    char name[96];
    join_name(name, sizeof name, path, key);
    return lc_wire_vec2_from_json(it, name, out, err) == 0 ? 1 : -1;
}

static int pose_member(const cJSON *obj, const char *path, const char *key, bool required,
                       lc_pose *out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    char name[96];
    join_name(name, sizeof name, path, key);
    return lc_wire_pose_from_json(it, name, out, err) == 0 ? 1 : -1;
}

/* The array member and its length, checked against [lo, hi] elements. */
static const cJSON *array_member(const cJSON *obj, const char *path, const char *key,
                                 int lo, int hi, const char *what, int *count,
                                 lc_wire_error *err)
{
    int rc;
    const cJSON *it = member(obj, path, key, true, &rc, err);
    if (!it)
        return NULL;
    if (!cJSON_IsArray(it)) {
        fail(err, LC_WIRE_BAD_FIELD, path, key, "not an array");
        return NULL;
    }
    int n = cJSON_GetArraySize(it);
    if (n < lo) {
        fail(err, LC_WIRE_BAD_FIELD, path, key, "fewer than %d %s", lo, what);
        return NULL;
    }
    if (n > hi) {
        fail(err, LC_WIRE_BAD_FIELD, path, key, "more than %d %s", hi, what);
        return NULL;
    }
    *count = n;
    return it;
}

/* arr's n elements as finite numbers within MAG into out. */
static int number_array(const cJSON *arr, const char *path, const char *key, double *out,
                        lc_wire_error *err)
{
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        if (!cJSON_IsNumber(it) || !isfinite(it->valuedouble) ||
            fabs(it->valuedouble) > MAG) {
            char k[64];
            snprintf(k, sizeof k, "%s[%d]", key, i);
            return number_value(it, path, k, &B_ANY, &out[i], err);
        }
        out[i++] = it->valuedouble;
    }
    return 0;
}

static int grow_or_fail(const lc_alloc *alloc, double **p, int *cap, int need,
                        const char *path, const char *key, lc_wire_error *err)
{
    if (lc_grow(alloc, (void **)p, cap, need < 1 ? 1 : need, sizeof **p) != 0)
        return fail(err, LC_WIRE_INTERNAL, path, key, "out of memory");
    return 0;
}

/* ------------------------------------------------------ object decoders */

static const char *const robot_keys[] = {"type", "model", "radius", "margin", "v_max",
                                         "a_max", "w_max", "dw_max", "reverse", "z_min", "z_max",
                                         NULL};

int lc_wire_robot_from_json(const cJSON *obj, const char *path, lc_robot *out,
                            lc_wire_error *err)
{
    lc_robot_default(out);
    if (lc_wire_check_duplicates(obj, path, robot_keys, err) ||
        check_type(obj, path, "robot", err))
        return -1;
    int model = out->model;
    if (choice_field(obj, path, "model", false, model_names, 2, &model, err) < 0)
        return -1;
    out->model = (lc_model)model;
    if (lc_wire_number_field(obj, path, "radius", false, &B_POS, &out->radius, err) < 0 ||
        lc_wire_number_field(obj, path, "margin", false, &B_NONNEG, &out->margin, err) < 0 ||
        lc_wire_number_field(obj, path, "v_max", false, &B_POS, &out->v_max, err) < 0 ||
        lc_wire_number_field(obj, path, "a_max", false, &B_POS, &out->a_max, err) < 0 ||
        lc_wire_number_field(obj, path, "w_max", false, &B_POS, &out->w_max, err) < 0 ||
        lc_wire_number_field(obj, path, "dw_max", false, &B_POS, &out->dw_max, err) < 0 ||
        lc_wire_bool_field(obj, path, "reverse", false, &out->reverse, err) < 0 ||
        lc_wire_number_field(obj, path, "z_min", false, NULL, &out->z_min, err) < 0 ||
        lc_wire_number_field(obj, path, "z_max", false, NULL, &out->z_max, err) < 0)
        return -1;
    if (!(out->z_min < out->z_max)) {
        char name[96];
        join_name(name, sizeof name, path, "z_max");
        lc_wire_error_set(err, LC_WIRE_BAD_FIELD, "%s: must be greater than z_min", name);
        return -1;
    }
    return 0;
}

static const char *const route_keys[] = {"type", "waypoints", "loop", "tolerance",
                                         "on_blocked", "blocked_time", "progress", NULL};

static int waypoints_field(const cJSON *obj, const char *path, lc_route *out,
                           lc_wire_error *err)
{
    int n;
    const cJSON *arr = array_member(obj, path, "waypoints", 0, LC_ROUTE_MAX, "waypoints", &n, err);
    if (!arr)
        return -1;
    char base[96];
    join_name(base, sizeof base, path, "waypoints");
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        char name[112];
        snprintf(name, sizeof name, "%s[%d]", base, i);
        if (lc_wire_vec2_from_json(it, name, &out->waypoints[i], err) != 0)
            return -1;
        i++;
    }
    out->count = n;
    return 0;
}

int lc_wire_route_from_json(const cJSON *obj, const char *path, lc_route *out,
                            lc_wire_error *err)
{
    lc_route_default(out);
    if (lc_wire_check_duplicates(obj, path, route_keys, err) ||
        check_type(obj, path, "route", err) || waypoints_field(obj, path, out, err))
        return -1;
    int policy = out->on_blocked;
    if (lc_wire_bool_field(obj, path, "loop", false, &out->loop, err) < 0 ||
        lc_wire_number_field(obj, path, "tolerance", false, &B_POS, &out->tolerance, err) < 0 ||
        choice_field(obj, path, "on_blocked", false, policy_names, 2, &policy, err) < 0 ||
        lc_wire_number_field(obj, path, "blocked_time", false, &B_POS, &out->blocked_time,
                             err) < 0 ||
        lc_wire_number_field(obj, path, "progress", false, &B_NONNEG, &out->progress, err) < 0)
        return -1;
    out->on_blocked = (lc_blocked_policy)policy;
    return 0;
}

/* seq, stamp, pose, mount: what scans and points share. */
static int frame_header(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    f->mount = (lc_pose){0.0, 0.0, 0.0};
    if (seq_field(obj, path, true, &f->seq, err) < 0 ||
        lc_wire_number_field(obj, path, "stamp", true, &B_FINITE, &f->stamp, err) < 0 ||
        pose_member(obj, path, "pose", true, &f->pose, err) < 0 ||
        pose_member(obj, path, "mount", false, &f->mount, err) < 0)
        return -1;
    return 0;
}

static const char *const scan_keys[] = {"type", "seq", "stamp", "pose", "mount",
                                        "angle_start", "angle_step", "range_min",
                                        "range_max", "ranges", NULL};

static int scan_angles(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    static const lc_wire_bounds b_step = {-TWO_PI, TWO_PI, false, false};
    if (lc_wire_number_field(obj, path, "angle_start", true, &B_ANY, &f->angle_start, err) < 0 ||
        lc_wire_number_field(obj, path, "angle_step", true, &b_step, &f->angle_step, err) < 0)
        return -1;
    if (f->angle_step == 0.0)
        return fail(err, LC_WIRE_BAD_FIELD, path, "angle_step", "must not be 0");
    return 0;
}

static int scan_limits(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    if (lc_wire_number_field(obj, path, "range_min", true, &B_POS, &f->range_min, err) < 0 ||
        lc_wire_number_field(obj, path, "range_max", true, &B_POS, &f->range_max, err) < 0)
        return -1;
    if (!(f->range_min < f->range_max))
        return fail(err, LC_WIRE_BAD_FIELD, path, "range_max", "must be > range_min");
    return 0;
}

/* Beams: null or a number outside [range_min, range_max] is "no return". */
static int scan_ranges(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                       lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    int n;
    const cJSON *arr = array_member(obj, path, "ranges", 1, lim->max_beams, "beams", &n, err);
    if (!arr)
        return -1;
    /* A scan wider than one turn would make the field of view meaningless. */
    if (fabs(f->angle_step) * (n - 1) > TWO_PI * (1.0 + 1e-9))
        return fail(err, LC_WIRE_BAD_FIELD, path, "angle_step",
                    "%d beams span more than a full turn", n);
    if (grow_or_fail(buf->alloc, &buf->ranges, &buf->cap_ranges, n, path, "ranges", err))
        return -1;
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        double r = NAN;
        if (cJSON_IsNumber(it)) {
            r = it->valuedouble;
            if (!isfinite(r)) {
                char k[64];
                snprintf(k, sizeof k, "ranges[%d]", i);
                return fail(err, LC_WIRE_BAD_FIELD, path, k, "not finite");
            }
            if (!(r >= f->range_min && r <= f->range_max))
                r = NAN;
        } else if (!cJSON_IsNull(it)) {
            char k[64];
            snprintf(k, sizeof k, "ranges[%d]", i);
            return fail(err, LC_WIRE_BAD_FIELD, path, k, "not a number or null");
        }
        buf->ranges[i++] = r;
    }
    f->ranges = buf->ranges;
    f->n_ranges = n;
    return 0;
}

static int scan_from_json(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                          lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    memset(f, 0, sizeof *f);
    f->kind = LC_FRAME_SCAN;
    if (lc_wire_check_duplicates(obj, path, scan_keys, err) || frame_header(obj, path, f, err) ||
        scan_angles(obj, path, f, err) || scan_limits(obj, path, f, err) ||
        scan_ranges(obj, path, lim, buf, f, err))
        return -1;
    return 0;
}

static const char *const points_keys[] = {"type", "seq", "stamp", "pose", "mount",
                                          "xy", "z", NULL};

static int points_z(const cJSON *obj, const char *path, lc_wire_buffers *buf, lc_frame *f,
                    lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, "z");
    f->z = NULL;
    if (!it || cJSON_IsNull(it))
        return 0;
    if (!cJSON_IsArray(it))
        return fail(err, LC_WIRE_BAD_FIELD, path, "z", "not an array");
    int n = cJSON_GetArraySize(it);
    if (n != f->n_points)
        return fail(err, LC_WIRE_BAD_FIELD, path, "z", "%d heights for %d points", n,
                    f->n_points);
    if (grow_or_fail(buf->alloc, &buf->z, &buf->cap_z, n, path, "z", err) ||
        number_array(it, path, "z", buf->z, err))
        return -1;
    f->z = buf->z;
    return 0;
}

static int points_from_json(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                            lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    memset(f, 0, sizeof *f);
    f->kind = LC_FRAME_POINTS;
    if (lc_wire_check_duplicates(obj, path, points_keys, err) || frame_header(obj, path, f, err))
        return -1;
    int n;
    long most = 2L * lim->max_points;
    const cJSON *arr = array_member(obj, path, "xy", 0, most > 2147483646L ? 2147483646 : (int)most,
                                    "numbers", &n, err);
    if (!arr)
        return -1;
    if (n % 2 != 0)
        return fail(err, LC_WIRE_BAD_FIELD, path, "xy", "odd length %d", n);
    if (grow_or_fail(buf->alloc, &buf->xy, &buf->cap_xy, n, path, "xy", err) ||
        number_array(arr, path, "xy", buf->xy, err))
        return -1;
    f->xy = buf->xy;
    f->n_points = n / 2;
    return points_z(obj, path, buf, f, err);
}

int lc_wire_frame_from_json(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                            lc_wire_buffers *buf, lc_frame *out, lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    if (!cJSON_IsObject(obj))
        return fail(err, LC_WIRE_BAD_FIELD, path, "", "not an object");
    const cJSON *type = cJSON_GetObjectItemCaseSensitive(obj, "type");
    bool scan;
    if (!type) {
        scan = cJSON_GetObjectItemCaseSensitive(obj, "ranges") != NULL;
        if (!scan && !cJSON_GetObjectItemCaseSensitive(obj, "xy"))
            return fail(err, LC_WIRE_BAD_FIELD, path, "type", "missing (and no ranges or xy)");
    } else if (cJSON_IsString(type) && type->valuestring &&
               (strcmp(type->valuestring, "scan") == 0 ||
                strcmp(type->valuestring, "points") == 0)) {
        scan = strcmp(type->valuestring, "scan") == 0;
    } else {
        return fail(err, LC_WIRE_BAD_FIELD, path, "type", "must be \"scan\" or \"points\"");
    }
    return scan ? scan_from_json(obj, path, lim, buf, out, err)
                : points_from_json(obj, path, lim, buf, out, err);
}

/* 1..LC_WIRE_NAME_MAX of [A-Za-z0-9_.-], not starting with '.' (used in file names). */
static bool name_ok(const char *s)
{
    size_t n = strlen(s);
    if (n == 0 || n > LC_WIRE_NAME_MAX || s[0] == '.')
        return false;
    for (size_t i = 0; i < n; i++) {
        char c = s[i];
        bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                  c == '_' || c == '-' || c == '.';
        if (!ok)
            return false;
    }
    return true;
}

/* A robot name member into out; empty (or null, absent) only when allow_empty. */
static int robot_name_field(const cJSON *obj, const char *key, bool allow_empty, char *out,
                            lc_wire_error *err)
{
    const char *s = NULL;
    out[0] = '\0';
    int rc = string_field(obj, NULL, key, !allow_empty, allow_empty, &s, err);
    if (rc < 0)
        return -1;
    if (!s || (allow_empty && *s == '\0'))
        return 0;
    if (!name_ok(s))
        return fail(err, LC_WIRE_BAD_FIELD, NULL, key,
                    "must be 1 to %d of A-Z a-z 0-9 _ - . (not starting with .)",
                    LC_WIRE_NAME_MAX);
    memcpy(out, s, strlen(s) + 1);
    return 0;
}

static const char *const hello_keys[] = {"type", "role", "robot", "token", NULL};

static int token_field(const cJSON *obj, lc_wire_hello *out, lc_wire_error *err)
{
    const char *s = NULL;
    out->has_token = false;
    out->token[0] = '\0';
    if (string_field(obj, NULL, "token", false, true, &s, err) < 0)
        return -1;
    if (!s)
        return 0;
    size_t n = strlen(s);
    if (n > LC_WIRE_TOKEN_MAX)
        return fail(err, LC_WIRE_BAD_FIELD, NULL, "token", "longer than %d characters",
                    LC_WIRE_TOKEN_MAX);
    for (size_t i = 0; i < n; i++)
        if ((unsigned char)s[i] < 0x20 || (unsigned char)s[i] > 0x7e)
            return fail(err, LC_WIRE_BAD_FIELD, NULL, "token", "not printable ASCII");
    memcpy(out->token, s, n + 1);
    out->has_token = true;
    return 0;
}

static int hello_from_json(const cJSON *obj, lc_wire_hello *out, lc_wire_error *err)
{
    int role = 0;
    if (lc_wire_check_duplicates(obj, NULL, hello_keys, err) ||
        choice_field(obj, NULL, "role", true, role_names, 2, &role, err) < 0)
        return -1;
    out->role = (lc_wire_role)role;
    if (robot_name_field(obj, "robot", out->role == LC_ROLE_VIEWER, out->robot, err) ||
        token_field(obj, out, err))
        return -1;
    return 0;
}

/* A string member copied into out[n]; too long is an error. */
static int copy_string_field(const cJSON *obj, const char *key, bool required, char *out,
                             size_t n, lc_wire_error *err)
{
    const char *s = NULL;
    out[0] = '\0';
    int rc = string_field(obj, NULL, key, required, false, &s, err);
    if (rc <= 0)
        return rc;
    size_t len = strlen(s);
    if (len >= n)
        return fail(err, LC_WIRE_BAD_FIELD, NULL, key, "longer than %zu characters", n - 1);
    memcpy(out, s, len + 1);
    return 1;
}

static const char *const welcome_keys[] = {"type", "role", "robot", "server", "protocol",
                                           "watchdog_ms", "max_message", "max_beams",
                                           "max_points", "view_hz", "max_waypoints", NULL};

static int welcome_from_json(const cJSON *obj, lc_wire_welcome *out, lc_wire_error *err)
{
    static const lc_wire_bounds b_count = {0.0, 2147483647.0, false, false};
    memset(out, 0, sizeof *out);
    int role = 0, max_message = 0;
    if (lc_wire_check_duplicates(obj, NULL, welcome_keys, err) ||
        choice_field(obj, NULL, "role", true, role_names, 2, &role, err) < 0 ||
        robot_name_field(obj, "robot", true, out->robot, err) ||
        copy_string_field(obj, "server", false, out->server, sizeof out->server, err) < 0 ||
        copy_string_field(obj, "protocol", true, out->protocol, sizeof out->protocol, err) < 0 ||
        lc_wire_int_field(obj, NULL, "watchdog_ms", false, &b_count, &out->watchdog_ms, err) < 0 ||
        lc_wire_int_field(obj, NULL, "max_message", false, &b_count, &max_message, err) < 0 ||
        lc_wire_int_field(obj, NULL, "max_beams", false, &b_count, &out->max_beams, err) < 0 ||
        lc_wire_int_field(obj, NULL, "max_points", false, &b_count, &out->max_points, err) < 0 ||
        lc_wire_number_field(obj, NULL, "view_hz", false, &B_NONNEG, &out->view_hz, err) < 0 ||
        lc_wire_int_field(obj, NULL, "max_waypoints", false, &b_count, &out->max_waypoints,
                          err) < 0)
        return -1;
    out->role = (lc_wire_role)role;
    out->max_message = max_message;
    return 0;
}

/* A name member looked up with find(); the index in *out. */
static int core_name_field(const cJSON *obj, const char *key, int (*find)(const char *),
                           int *out, lc_wire_error *err)
{
    const char *s;
    if (string_field(obj, NULL, key, true, false, &s, err) < 0)
        return -1;
    int i = find(s);
    if (i < 0)
        return fail(err, LC_WIRE_BAD_FIELD, NULL, key, "unknown name");
    *out = i;
    return 0;
}

static const char *const setpoint_keys[] = {"type", "seq", "stamp", "vx", "vy", "v", "w",
                                            "state", "limit", "waypoint", NULL};

/* vx, vy (point) or v, w (unicycle), never both pairs. */
static int velocity_pair(const cJSON *obj, lc_wire_setpoint *out, lc_wire_error *err)
{
    bool point = cJSON_GetObjectItemCaseSensitive(obj, "vx") ||
                 cJSON_GetObjectItemCaseSensitive(obj, "vy");
    bool uni = cJSON_GetObjectItemCaseSensitive(obj, "v") ||
               cJSON_GetObjectItemCaseSensitive(obj, "w");
    if (point && uni)
        return fail(err, LC_WIRE_BAD_FIELD, NULL, "v", "not allowed together with vx, vy");
    out->model = uni ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
    if (uni)
        return (lc_wire_number_field(obj, NULL, "v", true, &B_ANY, &out->sp.v, err) < 0 ||
                lc_wire_number_field(obj, NULL, "w", true, &B_ANY, &out->sp.w, err) < 0) ? -1 : 0;
    return (lc_wire_number_field(obj, NULL, "vx", true, &B_ANY, &out->sp.vx, err) < 0 ||
            lc_wire_number_field(obj, NULL, "vy", true, &B_ANY, &out->sp.vy, err) < 0) ? -1 : 0;
}

static int setpoint_from_json(const cJSON *obj, lc_wire_setpoint *out, lc_wire_error *err)
{
    memset(out, 0, sizeof *out);
    int state = 0, limit = 0;
    if (lc_wire_check_duplicates(obj, NULL, setpoint_keys, err) ||
        seq_field(obj, NULL, true, &out->seq, err) < 0 ||
        lc_wire_number_field(obj, NULL, "stamp", true, &B_FINITE, &out->stamp, err) < 0 ||
        velocity_pair(obj, out, err) || core_name_field(obj, "state", find_state, &state, err) ||
        core_name_field(obj, "limit", find_limit, &limit, err) ||
        index_field(obj, NULL, "waypoint", &out->waypoint, err))
        return -1;
    out->state = (lc_state)state;
    out->sp.limit = (lc_limit)limit;
    return 0;
}

static const char *const event_keys[] = {"type", "event", "waypoint", "stamp", "seq", NULL};

static int event_from_json(const cJSON *obj, lc_wire_event *out, lc_wire_error *err)
{
    memset(out, 0, sizeof *out);
    out->seq = -1;
    int kind = 0;
    if (lc_wire_check_duplicates(obj, NULL, event_keys, err) ||
        core_name_field(obj, "event", find_event, &kind, err) ||
        index_field(obj, NULL, "waypoint", &out->ev.waypoint, err) ||
        lc_wire_number_field(obj, NULL, "stamp", true, &B_FINITE, &out->ev.stamp, err) < 0 ||
        seq_field(obj, NULL, false, &out->seq, err) < 0)
        return -1;
    out->ev.kind = (lc_event_kind)kind;
    return 0;
}

static const char *const error_keys[] = {"type", "code", "message", "seq", NULL};

static int error_from_json(const cJSON *obj, lc_wire_error *out, lc_wire_error *err)
{
    const char *code;
    error_clear(out);
    if (lc_wire_check_duplicates(obj, NULL, error_keys, err) ||
        string_field(obj, NULL, "code", true, false, &code, err) < 0)
        return -1;
    if (!lc_wire_code_from_name(code, &out->code) || out->code == LC_WIRE_OK)
        return fail(err, LC_WIRE_BAD_FIELD, NULL, "code", "unknown code");
    const char *msg;
    if (string_field(obj, NULL, "message", true, false, &msg, err) < 0)
        return -1;
    snprintf(out->message, sizeof out->message, "%s", msg);
    int rc = seq_field(obj, NULL, false, &out->seq, err);
    if (rc < 0)
        return -1;
    out->has_seq = rc == 1;
    return 0;
}

/* --------------------------------------------------------- text parsing */

/*
 * One JSON value and nothing but white space around it. cJSON takes any
 * byte <= 0x20 for white space and raw control bytes inside strings; JSON
 * allows neither, so those are refused before parsing.
 */
static cJSON *parse_text(const char *text, size_t len, const lc_wire_limits *lim,
                         lc_wire_error *err)
{
    if (len > lim->max_message) {
        lc_wire_error_set(err, LC_WIRE_TOO_LARGE, "message: %zu bytes, more than %zu", len,
                          lim->max_message);
        return NULL;
    }
    if (!text || len == 0) {
        lc_wire_error_set(err, LC_WIRE_BAD_JSON, "message: empty");
        return NULL;
    }
    for (size_t i = 0; i < len; i++) {
        unsigned char c = (unsigned char)text[i];
        if (c < 0x20 && c != '\t' && c != '\n' && c != '\r') {
            lc_wire_error_set(err, LC_WIRE_BAD_JSON, "message: control byte at offset %zu", i);
            return NULL;
        }
    }
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root) {
        long at = end ? (long)(end - text) : 0;
        lc_wire_error_set(err, LC_WIRE_BAD_JSON, "message: not valid JSON (near offset %ld)", at);
        return NULL;
    }
    for (const char *p = end; p < text + len; p++) {
        if (*p != ' ' && *p != '\t' && *p != '\n' && *p != '\r') {
            lc_wire_error_set(err, LC_WIRE_BAD_JSON,
                              "message: bytes after the JSON value (offset %ld)", (long)(p - text));
            cJSON_Delete(root);
            return NULL;
        }
    }
    return root;
}

/* A readable seq goes into the error reply even when the message is refused. */
static void peek_seq(const cJSON *obj, lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, "seq");
    if (it && seq_ok(it)) {
        err->has_seq = true;
        err->seq = (int64_t)it->valuedouble;
    }
}

static int message_type(const cJSON *root, lc_msg_type *type, lc_wire_error *err)
{
    if (!cJSON_IsObject(root)) {
        lc_wire_error_set(err, LC_WIRE_BAD_MESSAGE, "message: not a JSON object");
        return -1;
    }
    peek_seq(root, err);
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(root, "type");
    if (!it)
        return fail(err, LC_WIRE_BAD_MESSAGE, NULL, "type", "missing");
    if (!cJSON_IsString(it) || !it->valuestring)
        return fail(err, LC_WIRE_BAD_MESSAGE, NULL, "type", "not a string");
    int i = find_name(it->valuestring, msg_names, LC_MSG_COUNT);
    if (i <= 0) {
        /* Echo at most a short, printable prefix of what was sent. */
        char shown[33];
        size_t k = 0;
        for (const char *s = it->valuestring; *s && k < sizeof shown - 1; s++)
            shown[k++] = shown_char(*s, '"');
        shown[k] = '\0';
        return fail(err, LC_WIRE_UNKNOWN_TYPE, NULL, "type", "unknown type \"%s\"", shown);
    }
    *type = (lc_msg_type)i;
    return 0;
}

static int decode_body(const cJSON *root, lc_msg_type type, const lc_wire_limits *lim,
                       lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    switch (type) {
    case LC_MSG_HELLO:
        return hello_from_json(root, &out->u.hello, err);
    case LC_MSG_ROBOT:
        return lc_wire_robot_from_json(root, NULL, &out->u.robot, err);
    case LC_MSG_ROUTE:
        return lc_wire_route_from_json(root, NULL, &out->u.route, err);
    case LC_MSG_SCAN:
        return scan_from_json(root, NULL, lim, buf, &out->u.frame, err);
    case LC_MSG_POINTS:
        return points_from_json(root, NULL, lim, buf, &out->u.frame, err);
    case LC_MSG_WELCOME:
        return welcome_from_json(root, &out->u.welcome, err);
    case LC_MSG_SETPOINT:
        return setpoint_from_json(root, &out->u.setpoint, err);
    case LC_MSG_EVENT:
        return event_from_json(root, &out->u.event, err);
    case LC_MSG_ERROR:
        return error_from_json(root, &out->u.error, err);
    case LC_MSG_VIEW:
    case LC_MSG_SCENARIO:
        return 0;
    default:
        lc_wire_error_set(err, LC_WIRE_INTERNAL, "type: not handled");
        return -1;
    }
}

int lc_wire_decode(const char *text, size_t len, const lc_wire_limits *lim,
                   lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    if (len <= lim->max_message && lc_wire_decode_frame_fast(text, len, lim, buf, out)) {
        error_clear(err);
        err->has_seq = true; /* as peek_seq leaves it on the cJSON path */
        err->seq = out->u.frame.seq;
        return 0;
    }
    return lc_wire_decode_slow(text, len, lim, buf, out, err);
}

int lc_wire_decode_slow(const char *text, size_t len, const lc_wire_limits *lim,
                        lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    error_clear(err);
    out->type = LC_MSG_NONE;
    cJSON *root = parse_text(text, len, lim, err);
    if (!root)
        return -1;
    lc_msg_type type = LC_MSG_NONE;
    int rc = message_type(root, &type, err);
    if (rc == 0)
        rc = decode_body(root, type, lim, buf, out, err);
    cJSON_Delete(root);
    out->type = rc == 0 ? type : LC_MSG_NONE;
    return rc;
}

static const char *const plan_keys[] = {"type", "robot", "goal", "velocity", "dt", "frame",
                                        NULL};

static int plan_fields(const cJSON *root, const lc_wire_limits *lim, lc_wire_buffers *buf,
                       lc_wire_plan_request *out, lc_wire_error *err)
{
    const lc_wire_bounds b_dt = {0.0, lim->dt_max, true, false};
    int rc;
    const cJSON *robot = member(root, NULL, "robot", false, &rc, err);
    if (robot) {
        if (need_object(robot, NULL, "robot", err) ||
            lc_wire_robot_from_json(robot, "robot", &out->robot, err))
            return -1;
    } else {
        lc_robot_default(&out->robot);
    }
    lc_vec2 vel = {0.0, 0.0};
    out->dt = 0.05;
    if (vec2_member(root, NULL, "goal", true, &out->goal, err) < 0 ||
        (rc = vec2_member(root, NULL, "velocity", false, &vel, err)) < 0 ||
        lc_wire_number_field(root, NULL, "dt", false, &b_dt, &out->dt, err) < 0)
        return -1;
    out->has_velocity = rc == 1;
    memset(&out->velocity, 0, sizeof out->velocity);
    if (out->robot.model == LC_MODEL_UNICYCLE) {
        out->velocity.v = vel.x;
        out->velocity.w = vel.y;
    } else {
        out->velocity.vx = vel.x;
        out->velocity.vy = vel.y;
    }
    const cJSON *frame = member(root, NULL, "frame", true, &rc, err);
    if (!frame)
        return -1;
    if (need_object(frame, NULL, "frame", err))
        return -1;
    peek_seq(frame, err);
    return lc_wire_frame_from_json(frame, "frame", lim, buf, &out->frame, err);
}

int lc_wire_decode_plan_request(const char *text, size_t len, const lc_wire_limits *lim,
                                lc_wire_buffers *buf, lc_wire_plan_request *out,
                                lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    error_clear(err);
    cJSON *root = parse_text(text, len, lim, err);
    if (!root)
        return -1;
    int rc = -1;
    if (!cJSON_IsObject(root))
        lc_wire_error_set(err, LC_WIRE_BAD_MESSAGE, "request: not a JSON object");
    else if (lc_wire_check_duplicates(root, NULL, plan_keys, err) == 0 &&
             check_type(root, NULL, "plan_request", err) == 0)
        rc = plan_fields(root, lim, buf, out, err);
    cJSON_Delete(root);
    return rc;
}

/* --------------------------------------------------------------- writer */

void lc_wire_text_init(lc_wire_text *t, const lc_alloc *alloc)
{
    memset(t, 0, sizeof *t);
    t->alloc = alloc ? alloc : lc_alloc_default();
}

void lc_wire_text_free(lc_wire_text *t)
{
    LC_RELEASE(t->alloc, t->s, t->cap);
    t->len = 0;
}

int lc_wire_format_number(char *buf, double x, int decimals)
{
    if (!isfinite(x)) {
        memcpy(buf, "null", 5);
        return 4;
    }
    if (decimals >= 0 && fabs(x) < 1e15) {
        int n = snprintf(buf, LC_WIRE_NUMBER_MAX, "%.*f", decimals > 17 ? 17 : decimals, x);
        if (strchr(buf, '.')) {
            while (buf[n - 1] == '0')
                buf[--n] = '\0';
            if (buf[n - 1] == '.')
                buf[--n] = '\0';
        }
        if (strcmp(buf, "-0") == 0) {
            memcpy(buf, "0", 2);
            n = 1;
        }
        return n;
    }
    /* 15 digits when they round-trip (short text for short values), else
     * 17, which always do; trying 16 as well costs more than it saves. */
    int n = snprintf(buf, LC_WIRE_NUMBER_MAX, "%.15g", x);
    if (strtod(buf, NULL) != x)
        n = snprintf(buf, LC_WIRE_NUMBER_MAX, "%.17g", x);
    return n;
}

static void w_raw(lc_wire_text *t, const char *s, size_t n)
{
    if (t->failed)
        return;
    if ((size_t)t->len + n + 1 > (size_t)INT32_MAX ||
        LC_GROW(t->alloc, t->s, t->cap, t->len + (int)n + 1) != 0) {
        t->failed = true;
        return;
    }
    memcpy(t->s + t->len, s, n);
    t->len += (int)n;
    t->s[t->len] = '\0';
}

/* Every value and key separates itself from what came before. */
static void w_sep(lc_wire_text *t)
{
    if (t->failed || t->len == 0)
        return;
    char c = t->s[t->len - 1];
    if (c != '{' && c != '[' && c != ':')
        w_raw(t, ",", 1);
}

static void w_open(lc_wire_text *t, char c)
{
    w_sep(t);
    w_raw(t, &c, 1);
}

static void w_close(lc_wire_text *t, char c) { w_raw(t, &c, 1); }

/* Keys are the codec's own literals: no escaping needed. */
static void w_key(lc_wire_text *t, const char *k)
{
    w_sep(t);
    w_raw(t, "\"", 1);
    w_raw(t, k, strlen(k));
    w_raw(t, "\":", 2);
}

static void w_null(lc_wire_text *t)
{
    w_sep(t);
    w_raw(t, "null", 4);
}

static void w_str(lc_wire_text *t, const char *s)
{
    if (!s) {
        w_null(t);
        return;
    }
    w_sep(t);
    w_raw(t, "\"", 1);
    const char *run = s;
    for (; *s; s++) {
        unsigned char c = (unsigned char)*s;
        if (c >= 0x20 && c != '"' && c != '\\')
            continue;
        w_raw(t, run, (size_t)(s - run));
        char esc[8];
        int n = (c == '"' || c == '\\') ? snprintf(esc, sizeof esc, "\\%c", c)
                                        : snprintf(esc, sizeof esc, "\\u%04x", c);
        w_raw(t, esc, (size_t)n);
        run = s + 1;
    }
    w_raw(t, run, (size_t)(s - run));
    w_raw(t, "\"", 1);
}

static void w_num(lc_wire_text *t, double x, int decimals)
{
    char buf[LC_WIRE_NUMBER_MAX];
    int n = lc_wire_format_number(buf, x, decimals);
    w_sep(t);
    w_raw(t, buf, (size_t)n);
}

static void w_int(lc_wire_text *t, int64_t x)
{
    char buf[24];
    int n = snprintf(buf, sizeof buf, "%" PRId64, x);
    w_sep(t);
    w_raw(t, buf, (size_t)n);
}

static void w_bool(lc_wire_text *t, bool b)
{
    w_sep(t);
    w_raw(t, b ? "true" : "false", b ? 4 : 5);
}

/* Key and value in one call, for the common flat fields. */
static void kv_num(lc_wire_text *t, const char *k, double x, int decimals)
{
    w_key(t, k);
    w_num(t, x, decimals);
}

static void kv_int(lc_wire_text *t, const char *k, int64_t x)
{
    w_key(t, k);
    w_int(t, x);
}

static void kv_str(lc_wire_text *t, const char *k, const char *s)
{
    w_key(t, k);
    w_str(t, s);
}

static void kv_bool(lc_wire_text *t, const char *k, bool b)
{
    w_key(t, k);
    w_bool(t, b);
}

/* An index >= 0, or null. */
static void kv_index(lc_wire_text *t, const char *k, int i)
{
    w_key(t, k);
    if (i >= 0)
        w_int(t, i);
    else
        w_null(t);
}

static void w_begin(lc_wire_text *t)
{
    t->len = 0;
    t->failed = false;
    w_raw(t, "{", 1);
}

static int w_end(lc_wire_text *t)
{
    w_close(t, '}');
    if (t->failed) {
        t->len = 0;
        if (t->s)
            t->s[0] = '\0';
        return -1;
    }
    return 0;
}

static void w_doubles(lc_wire_text *t, const double *v, int n, int decimals)
{
    w_open(t, '[');
    for (int i = 0; i < n; i++)
        w_num(t, v[i], decimals);
    w_close(t, ']');
}

static void w_vec2(lc_wire_text *t, lc_vec2 v, int decimals)
{
    double a[2] = {v.x, v.y};
    w_doubles(t, a, 2, decimals);
}

static void w_pose(lc_wire_text *t, lc_pose p, int decimals)
{
    double a[3] = {p.x, p.y, p.yaw};
    w_doubles(t, a, 3, decimals);
}

static void w_vec2_list(lc_wire_text *t, const lc_vec2 *v, int n, int decimals)
{
    w_open(t, '[');
    for (int i = 0; i < n; i++)
        w_vec2(t, v[i], decimals);
    w_close(t, ']');
}

/* [[[x,y],...],...]; an absent set is empty. */
static void w_polyset(lc_wire_text *t, const lc_polyset *ps, int decimals)
{
    w_open(t, '[');
    for (int i = 0; ps && i < ps->np; i++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(ps, i, &n);
        w_vec2_list(t, v, n, decimals);
    }
    w_close(t, ']');
}

/* The kept points, flat [x0, y0, x1, y1, ...]. */
static void w_cloud(lc_wire_text *t, const lc_cloud *c, int decimals)
{
    w_open(t, '[');
    for (int i = 0; c && i < c->n; i++) {
        w_num(t, c->world[i].x, decimals);
        w_num(t, c->world[i].y, decimals);
    }
    w_close(t, ']');
}

static void w_region(lc_wire_text *t, const lc_region *r, int decimals)
{
    w_open(t, '{');
    w_key(t, "halfspaces");
    w_open(t, '[');
    for (int i = 0; i < r->nh; i++) {
        double h[3] = {r->h[i].a.x, r->h[i].a.y, r->h[i].b};
        w_doubles(t, h, 3, decimals);
    }
    w_close(t, ']');
    w_key(t, "vertices");
    w_vec2_list(t, r->v, r->nv, decimals);
    w_close(t, '}');
}

/* E = {L u + d : |u| <= 1}; L is symmetric. */
static void w_ellipse(lc_wire_text *t, const lc_ellipse *e, int decimals)
{
    double row0[2] = {e->l11, e->l12}, row1[2] = {e->l12, e->l22};
    w_open(t, '{');
    w_key(t, "center");
    w_vec2(t, e->d, decimals);
    w_key(t, "matrix");
    w_open(t, '[');
    w_doubles(t, row0, 2, decimals);
    w_doubles(t, row1, 2, decimals);
    w_close(t, ']');
    w_close(t, '}');
}

static void kv_region_ellipse(lc_wire_text *t, const lc_region *r, int decimals)
{
    w_key(t, "region");
    if (r)
        w_region(t, r, decimals);
    else
        w_null(t);
    w_key(t, "ellipse");
    if (r)
        w_ellipse(t, &r->ellipse, decimals);
    else
        w_null(t);
}

static void kv_point_or_null(lc_wire_text *t, const char *k, bool has, lc_vec2 p, int decimals)
{
    w_key(t, k);
    if (has)
        w_vec2(t, p, decimals);
    else
        w_null(t);
}

/* Setpoints are always exact: replay compares them. */
static void kv_velocity(lc_wire_text *t, const lc_setpoint *sp, lc_model model)
{
    if (model == LC_MODEL_UNICYCLE) {
        kv_num(t, "v", sp->v, -1);
        kv_num(t, "w", sp->w, -1);
    } else {
        kv_num(t, "vx", sp->vx, -1);
        kv_num(t, "vy", sp->vy, -1);
    }
}

static void w_setpoint_object(lc_wire_text *t, const lc_setpoint *sp, lc_model model)
{
    w_open(t, '{');
    kv_velocity(t, sp, model);
    w_close(t, '}');
}

static void kv_state(lc_wire_text *t, lc_state s)
{
    w_key(t, "state");
    w_str(t, (int)s >= 0 && s < LC_STATE_COUNT ? lc_state_name(s) : NULL);
}

static void kv_limit(lc_wire_text *t, lc_limit l)
{
    w_key(t, "limit");
    w_str(t, (int)l >= 0 && l < LC_LIMIT_COUNT ? lc_limit_name(l) : NULL);
}

static void kv_event_name(lc_wire_text *t, lc_event_kind k)
{
    w_key(t, "event");
    w_str(t, (int)k >= 0 && k < LC_EVENT_COUNT ? lc_event_name(k) : NULL);
}

static void kv_model(lc_wire_text *t, lc_model m)
{
    kv_str(t, "model", m == LC_MODEL_UNICYCLE ? model_names[1] : model_names[0]);
}

/* ------------------------------------------------------------- encoders */

int lc_wire_encode_hello(lc_wire_text *t, const lc_wire_hello *m)
{
    w_begin(t);
    kv_str(t, "type", "hello");
    kv_str(t, "role", lc_wire_role_name(m->role));
    kv_str(t, "robot", m->robot);
    if (m->has_token)
        kv_str(t, "token", m->token);
    return w_end(t);
}

int lc_wire_encode_welcome(lc_wire_text *t, const lc_wire_welcome *m)
{
    w_begin(t);
    kv_str(t, "type", "welcome");
    kv_str(t, "role", lc_wire_role_name(m->role));
    kv_str(t, "robot", m->robot);
    kv_str(t, "server", "lacuna " LC_VERSION);
    kv_str(t, "protocol", LC_WIRE_PROTOCOL);
    kv_int(t, "watchdog_ms", m->watchdog_ms);
    kv_int(t, "max_message", m->max_message);
    kv_int(t, "max_beams", m->max_beams);
    kv_int(t, "max_points", m->max_points);
    kv_int(t, "max_waypoints", LC_ROUTE_MAX);
    kv_num(t, "view_hz", m->view_hz, -1);
    return w_end(t);
}

int lc_wire_encode_robot(lc_wire_text *t, const lc_robot *m)
{
    w_begin(t);
    kv_str(t, "type", "robot");
    kv_model(t, m->model);
    kv_num(t, "radius", m->radius, -1);
    kv_num(t, "margin", m->margin, -1);
    kv_num(t, "v_max", m->v_max, -1);
    kv_num(t, "a_max", m->a_max, -1);
    kv_num(t, "w_max", m->w_max, -1);
    kv_num(t, "dw_max", m->dw_max, -1);
    kv_bool(t, "reverse", m->reverse);
    if (isfinite(m->z_min))
        kv_num(t, "z_min", m->z_min, -1);
    if (isfinite(m->z_max))
        kv_num(t, "z_max", m->z_max, -1);
    return w_end(t);
}

int lc_wire_encode_route(lc_wire_text *t, const lc_route *m)
{
    int n = m->count < 0 ? 0 : (m->count > LC_ROUTE_MAX ? LC_ROUTE_MAX : m->count);
    w_begin(t);
    kv_str(t, "type", "route");
    w_key(t, "waypoints");
    w_vec2_list(t, m->waypoints, n, -1);
    kv_bool(t, "loop", m->loop);
    kv_num(t, "tolerance", m->tolerance, -1);
    kv_str(t, "on_blocked", m->on_blocked == LC_BLOCKED_SKIP ? policy_names[1] : policy_names[0]);
    kv_num(t, "blocked_time", m->blocked_time, -1);
    kv_num(t, "progress", m->progress, -1);
    return w_end(t);
}

static void frame_header_out(lc_wire_text *t, const lc_frame *m)
{
    kv_int(t, "seq", m->seq);
    kv_num(t, "stamp", m->stamp, -1);
    w_key(t, "pose");
    w_pose(t, m->pose, -1);
    w_key(t, "mount");
    w_pose(t, m->mount, -1);
}

int lc_wire_encode_frame(lc_wire_text *t, const lc_frame *m)
{
    w_begin(t);
    if (m->kind == LC_FRAME_SCAN) {
        kv_str(t, "type", "scan");
        frame_header_out(t, m);
        kv_num(t, "angle_start", m->angle_start, -1);
        kv_num(t, "angle_step", m->angle_step, -1);
        kv_num(t, "range_min", m->range_min, -1);
        kv_num(t, "range_max", m->range_max, -1);
        w_key(t, "ranges");
        w_doubles(t, m->ranges, m->ranges ? m->n_ranges : 0, -1);
    } else {
        int n = m->xy ? m->n_points : 0;
        kv_str(t, "type", "points");
        frame_header_out(t, m);
        w_key(t, "xy");
        w_doubles(t, m->xy, 2 * n, -1);
        if (m->z) {
            w_key(t, "z");
            w_doubles(t, m->z, n, -1);
        }
    }
    return w_end(t);
}

int lc_wire_encode_setpoint(lc_wire_text *t, const lc_wire_setpoint *m)
{
    w_begin(t);
    kv_str(t, "type", "setpoint");
    kv_int(t, "seq", m->seq);
    kv_num(t, "stamp", m->stamp, -1);
    kv_velocity(t, &m->sp, m->model);
    kv_state(t, m->state);
    kv_limit(t, m->sp.limit);
    kv_index(t, "waypoint", m->waypoint);
    return w_end(t);
}

int lc_wire_encode_event(lc_wire_text *t, const lc_wire_event *m)
{
    w_begin(t);
    kv_str(t, "type", "event");
    kv_event_name(t, m->ev.kind);
    kv_index(t, "waypoint", m->ev.waypoint);
    kv_num(t, "stamp", m->ev.stamp, -1);
    if (m->seq >= 0)
        kv_int(t, "seq", m->seq);
    return w_end(t);
}

int lc_wire_encode_error(lc_wire_text *t, const lc_wire_error *m)
{
    w_begin(t);
    kv_str(t, "type", "error");
    kv_str(t, "code", lc_wire_code_name(m->code));
    kv_str(t, "message", m->message);
    if (m->has_seq)
        kv_int(t, "seq", m->seq);
    return w_end(t);
}

static void w_events(lc_wire_text *t, const lc_event *ev, int n)
{
    w_open(t, '[');
    for (int i = 0; i < n && i < LC_PATROL_MAX_EVENTS; i++) {
        w_open(t, '{');
        kv_event_name(t, ev[i].kind);
        kv_index(t, "waypoint", ev[i].waypoint);
        kv_num(t, "stamp", ev[i].stamp, -1);
        w_close(t, '}');
    }
    w_close(t, ']');
}

static void w_timing(lc_wire_text *t, const lc_plan_result *r)
{
    w_open(t, '{');
    kv_num(t, "total", r->total_us, LC_WIRE_TIMING_DECIMALS);
    for (int s = 0; s < LC_STAGE_COUNT; s++) {
        const char *name = lc_stage_name((lc_stage)s);
        if (name)
            kv_num(t, name, r->stage_us[s], LC_WIRE_TIMING_DECIMALS);
    }
    w_close(t, '}');
}

/* What plan results and views share: the geometry of one step. */
static void w_step_geometry(lc_wire_text *t, const lc_plan_result *r, int decimals)
{
    w_key(t, "obstacles");
    w_polyset(t, r->obstacles, decimals);
    w_key(t, "grown");
    w_polyset(t, r->grown, decimals);
    kv_region_ellipse(t, r->region, decimals);
    kv_point_or_null(t, "target", r->has_target, r->target, decimals);
    kv_point_or_null(t, "goal", r->has_waypoint, r->waypoint, decimals);
    w_key(t, "points");
    w_cloud(t, r->cloud, decimals);
    kv_num(t, "clearance", r->clearance, decimals);
}

int lc_wire_encode_plan_result(lc_wire_text *t, const lc_plan_result *r, lc_model model)
{
    w_begin(t);
    w_step_geometry(t, r, -1);
    w_key(t, "setpoint");
    w_setpoint_object(t, &r->setpoint, model);
    kv_state(t, r->state);
    kv_limit(t, r->setpoint.limit);
    kv_index(t, "waypoint", r->has_waypoint ? r->waypoint_index : -1);
    w_key(t, "events");
    w_events(t, r->events, r->n_events);
    kv_int(t, "ellipse_iterations", r->ellipse_iterations);
    w_key(t, "timing_us");
    w_timing(t, r);
    return w_end(t);
}

static void w_view_route(lc_wire_text *t, const lc_route *route, int current)
{
    if (!route) {
        w_null(t);
        return;
    }
    int n = route->count < 0 ? 0 : (route->count > LC_ROUTE_MAX ? LC_ROUTE_MAX : route->count);
    w_open(t, '{');
    w_key(t, "waypoints");
    w_vec2_list(t, route->waypoints, n, LC_WIRE_VIEW_DECIMALS);
    kv_bool(t, "loop", route->loop);
    kv_num(t, "tolerance", route->tolerance, LC_WIRE_VIEW_DECIMALS);
    kv_str(t, "on_blocked", route->on_blocked == LC_BLOCKED_SKIP ? policy_names[1] : policy_names[0]);
    kv_num(t, "blocked_time", route->blocked_time, LC_WIRE_VIEW_DECIMALS);
    kv_index(t, "current", current);
    w_close(t, '}');
}

/* State, limit, setpoint and waypoint: what was sent, else what was planned. */
static void w_view_status(lc_wire_text *t, const lc_wire_view *m, lc_model model)
{
    const lc_wire_setpoint *sp = m->setpoint;
    const lc_plan_result *r = m->result;
    if (sp) {
        kv_state(t, sp->state);
        kv_limit(t, sp->sp.limit);
        w_key(t, "setpoint");
        w_setpoint_object(t, &sp->sp, model);
        kv_index(t, "waypoint", sp->waypoint);
    } else if (r) {
        kv_state(t, r->state);
        kv_limit(t, r->setpoint.limit);
        w_key(t, "setpoint");
        w_setpoint_object(t, &r->setpoint, model);
        kv_index(t, "waypoint", r->has_waypoint ? r->waypoint_index : -1);
    } else {
        kv_state(t, LC_STATE_IDLE);
        kv_limit(t, LC_LIMIT_IDLE);
        w_key(t, "setpoint");
        w_null(t);
        kv_index(t, "waypoint", -1);
    }
}

static void w_view_geometry_null(lc_wire_text *t)
{
    static const char *const keys[] = {"obstacles", "grown", "region", "ellipse", "target",
                                       "goal", "points", "clearance"};
    for (size_t i = 0; i < sizeof keys / sizeof keys[0]; i++) {
        w_key(t, keys[i]);
        w_null(t);
    }
}

int lc_wire_encode_view(lc_wire_text *t, const lc_wire_view *m)
{
    const int dec = LC_WIRE_VIEW_DECIMALS;
    lc_model model = m->desc ? m->desc->model : LC_MODEL_POINT;
    w_begin(t);
    kv_str(t, "type", "view");
    kv_str(t, "robot", m->robot ? m->robot : "");
    w_key(t, "seq");
    if (m->seq >= 0)
        w_int(t, m->seq);
    else
        w_null(t);
    kv_num(t, "stamp", m->result ? m->stamp : NAN, -1);
    kv_model(t, model);
    kv_num(t, "radius", m->desc ? m->desc->radius : NAN, dec);
    kv_num(t, "margin", m->desc ? m->desc->margin : NAN, dec);
    /* the limits the panel's "why this speed" names */
    kv_num(t, "v_max", m->desc ? m->desc->v_max : NAN, dec);
    kv_num(t, "a_max", m->desc ? m->desc->a_max : NAN, dec);
    kv_num(t, "w_max", m->desc ? m->desc->w_max : NAN, dec);
    kv_num(t, "dw_max", m->desc ? m->desc->dw_max : NAN, dec);
    kv_num(t, "plan_us", m->plan_us > 0 ? m->plan_us : NAN, 1);
    kv_num(t, "plan_max_us", m->plan_max_us > 0 ? m->plan_max_us : NAN, 1);
    w_key(t, "pose");
    if (m->result)
        w_pose(t, m->pose, dec);
    else
        w_null(t);
    w_view_status(t, m, model);
    w_key(t, "route");
    int current = -1;
    if (m->setpoint)
        current = m->setpoint->waypoint;
    else if (m->result && m->result->has_waypoint)
        current = m->result->waypoint_index;
    w_view_route(t, m->route, current);
    if (m->result)
        w_step_geometry(t, m->result, dec);
    else
        w_view_geometry_null(t);
    return w_end(t);
}
