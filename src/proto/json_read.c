/*
 * json_read.c - the codec's field readers over a cJSON tree (see
 * json_read.h), and the error helpers they report through.
 *
 * A decoder reads its object once, field by field in a fixed order, so the
 * first faulty field is the one reported. Keys are matched case sensitively;
 * unknown keys are ignored (forward compatible) but counted and named in the
 * error (lc_wire_check_duplicates); a known key given twice is an error
 * (cJSON would silently use the first).
 */
#include "json_read.h"
#include "codec_names.h"

#include <float.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#define MAG LC_WIRE_MAGNITUDE_MAX

/* --------------------------------------------------------------- errors */

void lc_wire_error_set(lc_wire_error *err, lc_wire_code code, const char *fmt, ...)
{
    err->code = code;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(err->message, sizeof err->message, fmt, ap);
    va_end(ap);
}

void lc_jr_error_clear(lc_wire_error *err)
{
    err->code = LC_WIRE_OK;
    err->has_seq = false;
    err->seq = 0;
    err->message[0] = '\0';
    err->ignored = 0;
    err->ignored_named = 0;
    err->ignored_keys[0] = '\0';
}

char lc_jr_shown_char(char c, char quote)
{
    return c >= 0x20 && c < 0x7f && c != quote && c != '\\' ? c : '?';
}

void lc_jr_join_name(char *buf, size_t n, const char *path, const char *key)
{
    if (!key || !*key)
        snprintf(buf, n, "%s", path && *path ? path : "message");
    else if (path && *path)
        snprintf(buf, n, "%s.%s", path, key);
    else
        snprintf(buf, n, "%s", key);
}

int lc_jr_fail(lc_wire_error *err, lc_wire_code code, const char *path, const char *key,
               const char *fmt, ...)
{
    char name[96], reason[128];
    lc_jr_join_name(name, sizeof name, path, key);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(reason, sizeof reason, fmt, ap);
    va_end(ap);
    lc_wire_error_set(err, code, "%s: %s", name, reason);
    return -1;
}

/*
 * The word for a number JSON cannot hold that the text has at p, as it is
 * written there, or NULL: Python's json.dumps writes NaN, Infinity and
 * -Infinity by default, C's printf nan and inf. Longer words first.
 */
static const char *nonfinite_word(const char *p, const char *end)
{
    static const char *const words[] = {"-Infinity", "+Infinity", "-infinity", "Infinity",
                                        "infinity", "-NaN", "-nan", "-inf", "+inf", "NaN",
                                        "nan", "inf"};
    for (size_t i = 0; i < sizeof words / sizeof words[0]; i++) {
        size_t n = strlen(words[i]);
        if ((size_t)(end - p) >= n && memcmp(p, words[i], n) == 0)
            return words[i];
    }
    return NULL;
}

void lc_jr_bad_json(lc_wire_error *err, const char *what, const char *text, size_t len,
                    const char *end)
{
    long at = end ? (long)(end - text) : 0;
    const char *word = end && end >= text && end < text + len ? nonfinite_word(end, text + len)
                                                                : NULL;
    if (word)
        lc_wire_error_set(err, LC_WIRE_BAD_JSON,
                          "%s: %s at offset %ld is not JSON (JSON has no NaN or Infinity): "
                          "send null for no value, or a finite number", what, word, at);
    else
        lc_wire_error_set(err, LC_WIRE_BAD_JSON, "%s: not valid JSON (near offset %ld)", what, at);
}

/* -------------------------------------------------------- field readers */

const lc_wire_bounds lc_jr_any = {-MAG, MAG, false, false};
const lc_wire_bounds lc_jr_pos = {0.0, MAG, true, false};
const lc_wire_bounds lc_jr_nonneg = {0.0, MAG, false, false};
const lc_wire_bounds lc_jr_finite = {-DBL_MAX, DBL_MAX, false, false};
const lc_wire_bounds lc_jr_count = {0.0, 2147483647.0, false, false};

static int check_bounds(double x, const lc_wire_bounds *b, const char *path, const char *key,
                        lc_wire_error *err)
{
    char lim[LC_WIRE_NUMBER_MAX];
    if (b->lo_open ? !(x > b->lo) : !(x >= b->lo)) {
        lc_wire_format_number(lim, b->lo, -1);
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "must be %s %s",
                          b->lo_open ? ">" : ">=", lim);
    }
    if (b->hi_open ? !(x < b->hi) : !(x <= b->hi)) {
        lc_wire_format_number(lim, b->hi, -1);
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "must be %s %s",
                          b->hi_open ? "<" : "<=", lim);
    }
    return 0;
}

/* A finite number within b. */
static int number_value(const cJSON *it, const char *path, const char *key,
                        const lc_wire_bounds *b, double *out, lc_wire_error *err)
{
    if (!cJSON_IsNumber(it))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not a number");
    double x = it->valuedouble;
    if (!isfinite(x))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not finite");
    if (check_bounds(x, b ? b : &lc_jr_any, path, key, err) != 0)
        return -1;
    *out = x;
    return 0;
}

const cJSON *lc_jr_member(const cJSON *obj, const char *path, const char *key, bool required,
                          int *rc, lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
    *rc = 0;
    if (!it && required)
        *rc = lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "missing");
    return it;
}

int lc_wire_number_field(const cJSON *obj, const char *path, const char *key, bool required,
                         const lc_wire_bounds *b, double *out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = lc_jr_member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    return number_value(it, path, key, b, out, err) == 0 ? 1 : -1;
}

static int integer_value(const cJSON *it, const char *path, const char *key,
                         const lc_wire_bounds *b, double *out, lc_wire_error *err)
{
    double x;
    if (number_value(it, path, key, &lc_jr_finite, &x, err) != 0)
        return -1;
    if (x != floor(x))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not an integer");
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
    const cJSON *it = lc_jr_member(obj, path, key, required, &rc, err);
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
    const cJSON *it = lc_jr_member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    if (!cJSON_IsBool(it))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not true or false");
    *out = cJSON_IsTrue(it);
    return 1;
}

/* A string member (NULL value means JSON null when allow_null). */
int lc_jr_string(const cJSON *obj, const char *path, const char *key, bool required,
                 bool allow_null, const char **out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = lc_jr_member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    if (allow_null && cJSON_IsNull(it)) {
        *out = NULL;
        return 1;
    }
    if (!cJSON_IsString(it) || !it->valuestring)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not a string");
    *out = it->valuestring;
    return 1;
}

/* A string member that must be one of names[0..n); its index in *out. */
int lc_jr_choice(const cJSON *obj, const char *path, const char *key, bool required,
                 const char *const *names, int n, int *out, lc_wire_error *err)
{
    const char *s;
    int rc = lc_jr_string(obj, path, key, required, false, &s, err);
    if (rc <= 0)
        return rc;
    int i = lc_wire_name_index(s, names, n);
    if (i < 0) {
        char list[128] = "";
        for (int k = 0; k < n; k++) {
            size_t used = strlen(list);
            snprintf(list + used, sizeof list - used, "%s\"%s\"",
                     k == 0 ? "" : (k == n - 1 ? " or " : ", "), names[k]);
        }
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "must be %s", list);
    }
    *out = i;
    return 1;
}

int lc_jr_seq(const cJSON *obj, const char *path, bool required, int64_t *out,
              lc_wire_error *err)
{
    static const lc_wire_bounds b_seq = {0.0, LC_WIRE_SEQ_MAX, false, false};
    int rc;
    const cJSON *it = lc_jr_member(obj, path, "seq", required, &rc, err);
    if (!it)
        return rc;
    double x;
    if (integer_value(it, path, "seq", &b_seq, &x, err) != 0)
        return -1;
    *out = (int64_t)x;
    return 1;
}

/* A waypoint index: an integer >= 0, or null for none (-1). */
int lc_jr_index(const cJSON *obj, const char *path, const char *key, int *out,
                lc_wire_error *err)
{
    int rc;
    const cJSON *it = lc_jr_member(obj, path, key, false, &rc, err);
    *out = -1;
    if (!it || cJSON_IsNull(it))
        return 0;
    double x;
    if (integer_value(it, path, key, &lc_jr_count, &x, err) != 0)
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
    lc_jr_join_name(name, sizeof name, path, key[0] ? key : "\"\"");
    for (char *c = name; *c; c++)
        *c = lc_jr_shown_char(*c, '\'');
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
    return lc_jr_check_keys(obj, path, keys, path == NULL, err);
}

int lc_jr_check_keys(const cJSON *obj, const char *path, const char *const *keys, bool top,
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
            if (!(top && strcmp(it->string, "seq") == 0))
                note_ignored(err, path, it->string);
            continue;
        }
        if (seen & (1ul << k))
            return lc_jr_fail(err, LC_WIRE_BAD_MESSAGE, path, keys[k], "given more than once");
        seen |= 1ul << k;
    }
    return 0;
}

/* An object's optional "type" must name what it is. */
int lc_jr_check_type(const cJSON *obj, const char *path, const char *expect,
                     lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, "type");
    if (!it)
        return 0;
    if (!cJSON_IsString(it) || !it->valuestring || strcmp(it->valuestring, expect) != 0)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "type", "must be \"%s\"", expect);
    return 0;
}

int lc_jr_need_object(const cJSON *it, const char *path, const char *key, lc_wire_error *err)
{
    if (!cJSON_IsObject(it))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not an object");
    return 0;
}

/* item as exactly n finite numbers within b; name is the full field name. */
static int fixed_numbers(const cJSON *item, const char *name, int n, const lc_wire_bounds *b,
                         double *out, lc_wire_error *err)
{
    if (!cJSON_IsArray(item))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, NULL, name, "not an array of %d numbers", n);
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, item) {
        if (i >= n)
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, NULL, name, "more than %d numbers", n);
        char key[112];
        snprintf(key, sizeof key, "%s[%d]", name, i);
        if (number_value(it, NULL, key, b, &out[i], err) != 0)
            return -1;
        i++;
    }
    if (i != n)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, NULL, name, "%d numbers instead of %d", i, n);
    return 0;
}

int lc_wire_vec2_from_json(const cJSON *item, const char *name, lc_vec2 *out,
                           lc_wire_error *err)
{
    double v[2];
    if (fixed_numbers(item, name, 2, &lc_jr_any, v, err) != 0)
        return -1;
    *out = lc_v2(v[0], v[1]);
    return 0;
}

int lc_wire_pose_from_json(const cJSON *item, const char *name, lc_pose *out,
                           lc_wire_error *err)
{
    double v[3];
    if (fixed_numbers(item, name, 3, &lc_jr_any, v, err) != 0)
        return -1;
    *out = (lc_pose){v[0], v[1], v[2]};
    return 0;
}

/* obj[key] as exactly n numbers (fixed_numbers): 1 read, 0 absent, -1 error. */
static int numbers_member(const cJSON *obj, const char *path, const char *key, bool required,
                          int n, double *out, lc_wire_error *err)
{
    int rc;
    const cJSON *it = lc_jr_member(obj, path, key, required, &rc, err);
    if (!it)
        return rc;
    char name[96];
    lc_jr_join_name(name, sizeof name, path, key);
    return fixed_numbers(it, name, n, &lc_jr_any, out, err) == 0 ? 1 : -1;
}

int lc_jr_vec2_member(const cJSON *obj, const char *path, const char *key, bool required,
                      lc_vec2 *out, lc_wire_error *err)
{
    double v[2];
    int rc = numbers_member(obj, path, key, required, 2, v, err);
    if (rc == 1)
        *out = lc_v2(v[0], v[1]);
    return rc;
}

int lc_jr_pose_member(const cJSON *obj, const char *path, const char *key, bool required,
                      lc_pose *out, lc_wire_error *err)
{
    double v[3];
    int rc = numbers_member(obj, path, key, required, 3, v, err);
    if (rc == 1)
        *out = (lc_pose){v[0], v[1], v[2]};
    return rc;
}

/* The array member and its length, checked against [lo, hi] elements. */
const cJSON *lc_jr_array(const cJSON *obj, const char *path, const char *key,
                         int lo, int hi, const char *what, int *count,
                         lc_wire_error *err)
{
    int rc;
    const cJSON *it = lc_jr_member(obj, path, key, true, &rc, err);
    if (!it)
        return NULL;
    if (!cJSON_IsArray(it)) {
        lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "not an array");
        return NULL;
    }
    int n = cJSON_GetArraySize(it);
    if (n < lo) {
        lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "fewer than %d %s", lo, what);
        return NULL;
    }
    if (n > hi) {
        lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "more than %d %s", hi, what);
        return NULL;
    }
    *count = n;
    return it;
}

int lc_jr_each(const cJSON *obj, const char *path, const char *key, int lo, int hi,
               const char *what, lc_jr_item_fn fn, void *ctx, int *count, lc_wire_error *err)
{
    const cJSON *arr = lc_jr_array(obj, path, key, lo, hi, what, count, err);
    if (!arr)
        return -1;
    char base[96];
    lc_jr_join_name(base, sizeof base, path, key);
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        char name[112];
        snprintf(name, sizeof name, "%s[%d]", base, i);
        if (fn(it, name, i++, ctx, err) < 0)
            return -1;
    }
    return 0;
}

/* arr's n elements as finite numbers within MAG into out. */
int lc_jr_numbers(const cJSON *arr, const char *path, const char *key, double *out,
                  lc_wire_error *err)
{
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        if (!cJSON_IsNumber(it) || !isfinite(it->valuedouble) ||
            fabs(it->valuedouble) > MAG) {
            char k[64];
            snprintf(k, sizeof k, "%s[%d]", key, i);
            return number_value(it, path, k, &lc_jr_any, &out[i], err);
        }
        out[i++] = it->valuedouble;
    }
    return 0;
}

/* 1..LC_WIRE_NAME_MAX of [A-Za-z0-9_.-], not starting with '.' (used in file names). */
static bool name_ok(const char *s)
{
    return s[0] != '.' && lc_wire_name_chars_ok(s, strlen(s), LC_WIRE_NAME_MAX);
}

/* A robot name member into out; empty (or null, absent) only when allow_empty. */
int lc_jr_robot_name(const cJSON *obj, const char *path, const char *key, bool allow_empty,
                     char *out, lc_wire_error *err)
{
    const char *s = NULL;
    out[0] = '\0';
    int rc = lc_jr_string(obj, path, key, !allow_empty, allow_empty, &s, err);
    if (rc < 0)
        return -1;
    if (!s || (allow_empty && *s == '\0'))
        return 0;
    if (!name_ok(s))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key,
                          "must be 1 to %d of A-Z a-z 0-9 _ - . (not starting with .)",
                          LC_WIRE_NAME_MAX);
    memcpy(out, s, strlen(s) + 1);
    return 0;
}


int lc_jr_sensor_name(const cJSON *obj, const char *path, const char *key, bool required,
                      char *out, lc_wire_error *err)
{
    const char *s = NULL;
    out[0] = '\0';
    int rc = lc_jr_string(obj, path, key, required, false, &s, err);
    if (rc <= 0)
        return rc;
    size_t n = strlen(s);
    if (!lc_wire_sensor_name_ok(s, n))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key,
                          "must be 1 to %d of A-Z a-z 0-9 _ - .", LC_SENSOR_NAME_MAX);
    memcpy(out, s, n + 1);
    return 1;
}
