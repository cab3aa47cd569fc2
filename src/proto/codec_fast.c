/*
 * codec_fast.c - see codec_fast.h. One pass over the text, no tree, the
 * arrays written straight into the caller's lc_wire_buffers.
 *
 * Equivalence with the cJSON path, case by case:
 * - White space: the cJSON path refuses control bytes other than tab, LF
 *   and CR before parsing, so white space there is what it is here: space,
 *   tab, LF, CR. Anything else outside a token declines.
 * - Strings (keys, the type and a sensor's name) are taken only without
 *   escapes and control bytes, a sensor's name only of the characters the
 *   cJSON path allows; keys only from the scan and points key lists, each at most once
 *   (an unknown key, ignored there, and a repeated one, an error there,
 *   decline here).
 * - Numbers: strict JSON grammar (cJSON also takes "01", "1." and "+1",
 *   which decline here) of at most 63 characters (cJSON 1.7.15 as first
 *   released read no more; Debian's patched build reads any length, so
 *   longer tokens merely decline).
 *   cJSON's value is the C library's strtod of the token, correctly rounded
 *   (glibc). Here a token whose digits fit an exact integer w < 2^53 with a
 *   decimal exponent |e| <= 22 is w * 10^e or w / 10^-e: both operands
 *   exact doubles, one correctly rounded operation, so the same double
 *   (Clinger's fast path: W. D. Clinger, "How to read floating point
 *   numbers accurately", PLDI 1990). A scanner's millimetre ranges all go
 *   this way; any other token goes to strtod as cJSON does (with its
 *   decimal-point substitution for the current locale).
 * - Every field check of the cJSON path is repeated here; a field it would
 *   refuse declines, so errors are always worded by the cJSON path.
 */
#include "codec_fast.h"
#include "codec_names.h"

#include <float.h>
#include <locale.h>
#include <math.h>
#include <stdbool.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#define MAG LC_WIRE_MAGNITUDE_MAX
#define TWO_PI (2.0 * LC_PI)
#define TOKEN_MAX 63 /* longer numbers decline (see the top of this file) */

enum key {
    K_TYPE, K_SEQ, K_STAMP, K_POSE, K_SENSOR, K_MOUNT,                    /* both */
    K_BEARING_FIRST, K_BEARING_STEP, K_NEAR, K_FAR, K_DIST,               /* scan */
    K_XY, K_Z,                                                            /* points */
    K_COUNT
};

static const char *const key_names[K_COUNT] = {
    "type", "seq", "stamp", "pose", "sensor", "mount", "bearing_first", "bearing_step",
    "near", "far", "dist", "xy", "z",
};

#define BIT(k) (1u << (k))
#define SCAN_ONLY (BIT(K_BEARING_FIRST) | BIT(K_BEARING_STEP) | BIT(K_NEAR) | BIT(K_FAR) | \
                   BIT(K_DIST))
#define POINTS_ONLY (BIT(K_XY) | BIT(K_Z))
#define HEADER (BIT(K_TYPE) | BIT(K_SEQ) | BIT(K_STAMP) | BIT(K_POSE))

typedef struct cursor {
    const char *p, *end;
    char point; /* the locale's decimal point (one byte) */
} cursor;

static void skip_ws(cursor *c)
{
    while (c->p < c->end && (*c->p == ' ' || *c->p == '\n' || *c->p == '\r' || *c->p == '\t'))
        c->p++;
}

/* White space, then ch. */
static bool expect(cursor *c, char ch)
{
    skip_ws(c);
    if (c->p < c->end && *c->p == ch) {
        c->p++;
        return true;
    }
    return false;
}

/* White space, then "null". */
static bool null_literal(cursor *c)
{
    skip_ws(c);
    if (c->end - c->p >= 4 && memcmp(c->p, "null", 4) == 0) {
        c->p += 4;
        return true;
    }
    return false;
}

/* A string without escapes or control bytes: its bytes [*s, *s + *n). */
static bool plain_string(cursor *c, const char **s, size_t *n)
{
    if (!expect(c, '"'))
        return false;
    const char *p = c->p;
    while (p < c->end && *p != '"') {
        if (*p == '\\' || (unsigned char)*p < 0x20)
            return false;
        p++;
    }
    if (p >= c->end)
        return false;
    *s = c->p;
    *n = (size_t)(p - c->p);
    c->p = p + 1;
    return true;
}

static int key(cursor *c)
{
    const char *s;
    size_t n;
    if (!plain_string(c, &s, &n))
        return -1;
    for (int k = 0; k < K_COUNT; k++)
        if (strlen(key_names[k]) == n && memcmp(key_names[k], s, n) == 0)
            return k;
    return -1;
}

static bool type_value(cursor *c, lc_msg_type *type)
{
    const char *s;
    size_t n;
    if (!plain_string(c, &s, &n))
        return false;
    if (n == 4 && memcmp(s, "scan", 4) == 0)
        *type = LC_MSG_SCAN;
    else if (n == 6 && memcmp(s, "points", 6) == 0)
        *type = LC_MSG_POINTS;
    else
        return false;
    return true;
}

/* A sensor name (lc_jr_sensor_name): a plain string of the name's characters. */
static bool sensor_value(cursor *c, char *out)
{
    const char *s;
    size_t n;
    if (!plain_string(c, &s, &n) || !lc_wire_sensor_name_ok(s, n))
        return false;
    memcpy(out, s, n);
    out[n] = '\0';
    return true;
}

/* The token [s, e) through strtod, as cJSON reads it. */
static bool strtod_token(const cursor *c, const char *s, const char *e, double *out)
{
    char tmp[TOKEN_MAX + 1];
    size_t n = (size_t)(e - s);
    for (size_t i = 0; i < n; i++)
        tmp[i] = s[i] == '.' ? c->point : s[i];
    tmp[n] = '\0';
    char *end = NULL;
    *out = strtod(tmp, &end);
    return end == tmp + n;
}

static bool is_digit(const char *p, const char *end) { return p < end && *p >= '0' && *p <= '9'; }

/*
 * One more decimal digit d of the significand (frac: after the point).
 * Digits past the 19th are dropped: w is then >= 10^18 > 2^53, which the
 * exact path never takes, so w need not hold them.
 */
static void digit(uint64_t *w, int *digits, int *e10, int d, bool frac)
{
    if (*w == 0 && d == 0) {
        *e10 -= frac; /* a leading zero of the fraction */
    } else if (*digits < 19) {
        *w = *w * 10 + (uint64_t)d;
        (*digits)++;
        *e10 -= frac;
    } else {
        *e10 += !frac;
    }
}

/* A number in strict JSON grammar, after white space. */
static bool number(cursor *c, double *out)
{
    static const double pow10[23] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,
                                     1e8,  1e9,  1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
                                     1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
    skip_ws(c);
    const char *s = c->p, *p = s, *e = c->end;
    bool neg = p < e && *p == '-';
    p += neg;
    if (!is_digit(p, e))
        return false;
    uint64_t w = 0;
    int digits = 0, e10 = 0;
    if (*p == '0')
        p++;
    else
        for (; is_digit(p, e); p++)
            digit(&w, &digits, &e10, *p - '0', false);
    if (p < e && *p == '.') {
        if (!is_digit(++p, e))
            return false;
        for (; is_digit(p, e); p++)
            digit(&w, &digits, &e10, *p - '0', true);
    }
    if (p < e && (*p == 'e' || *p == 'E')) {
        p++;
        bool eneg = p < e && *p == '-';
        p += p < e && (*p == '-' || *p == '+');
        if (!is_digit(p, e))
            return false;
        int x = 0;
        for (; is_digit(p, e); p++)
            if (x < 100000)
                x = x * 10 + (*p - '0');
        e10 += eneg ? -x : x;
    }
    if (p - s > TOKEN_MAX)
        return false;
    c->p = p;
    if (w == 0) {
        *out = neg ? -0.0 : 0.0;
        return true;
    }
    if (w < (UINT64_C(1) << 53) && e10 >= -22 && e10 <= 22) {
        double v = e10 < 0 ? (double)w / pow10[-e10] : (double)w * pow10[e10];
        *out = neg ? -v : v;
        return true;
    }
    return strtod_token(c, s, p, out);
}

/* After a value: white space, then ',' (more: true) or close. */
static bool next(cursor *c, char close, bool *more)
{
    skip_ws(c);
    if (c->p >= c->end)
        return false;
    char ch = *c->p++;
    *more = ch == ',';
    return ch == ',' || ch == close;
}

/* Exactly three numbers within MAG (pose, mount). */
static bool triple(cursor *c, double v[3])
{
    if (!expect(c, '['))
        return false;
    for (int i = 0; i < 3; i++) {
        bool more;
        if (!number(c, &v[i]) || !(fabs(v[i]) <= MAG) || !next(c, ']', &more) ||
            more != (i < 2))
            return false;
    }
    return true;
}

/*
 * An array of at most max finite numbers (or null, as NaN, when nulls)
 * into a buffer grown through lc_grow; its length in *count.
 */
static bool number_list(cursor *c, const lc_alloc *alloc, double **arr, int *cap, long max,
                        bool nulls, int *count)
{
    if (!expect(c, '[') || max < 0)
        return false;
    int n = 0;
    skip_ws(c);
    if (c->p < c->end && *c->p == ']') {
        c->p++;
        *count = 0;
        return true;
    }
    for (bool more = true; more;) {
        if (n >= max || (n >= *cap && lc_grow(alloc, (void **)arr, cap, n + 1, sizeof **arr)))
            return false;
        double v;
        if (nulls && null_literal(c))
            v = NAN;
        else if (!number(c, &v) || !isfinite(v))
            return false;
        (*arr)[n++] = v;
        if (!next(c, ']', &more))
            return false;
    }
    *count = n;
    return true;
}

static bool within_mag(const double *v, int n)
{
    for (int i = 0; i < n; i++)
        if (!(fabs(v[i]) <= MAG))
            return false;
    return true;
}

/* A buffer of at least one element (the cJSON path always has one). */
static bool at_least_one(const lc_alloc *alloc, double **arr, int *cap)
{
    return *cap >= 1 || lc_grow(alloc, (void **)arr, cap, 1, sizeof **arr) == 0;
}

typedef struct fields {
    unsigned seen;
    lc_msg_type type;
    double seq, stamp, pose[3], mount[3];
    char sensor[LC_SENSOR_NAME_MAX + 1];
    double bearing_first, bearing_step, near, far;
    int n_ranges, n_xy, n_z;
    bool z_null;
} fields;

static bool value(cursor *c, int k, const lc_wire_limits *lim, lc_wire_buffers *b, fields *f)
{
    long most_xy = 2L * lim->max_points > 2147483646L ? 2147483646L : 2L * lim->max_points;
    switch (k) {
    case K_TYPE: return type_value(c, &f->type);
    case K_SEQ: return number(c, &f->seq);
    case K_STAMP: return number(c, &f->stamp);
    case K_POSE: return triple(c, f->pose);
    case K_SENSOR: return sensor_value(c, f->sensor);
    case K_MOUNT: return triple(c, f->mount);
    case K_BEARING_FIRST: return number(c, &f->bearing_first);
    case K_BEARING_STEP: return number(c, &f->bearing_step);
    case K_NEAR: return number(c, &f->near);
    case K_FAR: return number(c, &f->far);
    case K_DIST:
        return number_list(c, b->alloc, &b->ranges, &b->cap_ranges, lim->max_beams, true,
                           &f->n_ranges);
    case K_XY: return number_list(c, b->alloc, &b->xy, &b->cap_xy, most_xy, false, &f->n_xy);
    case K_Z:
        return (f->z_null = null_literal(c)) ||
               number_list(c, b->alloc, &b->z, &b->cap_z, lim->max_points, false, &f->n_z);
    default: return false;
    }
}

/* seq, stamp, pose, sensor, mount as frame_header in codec_decode.c checks them. */
static bool header_ok(const fields *f)
{
    return (f->seen & HEADER) == HEADER && isfinite(f->seq) && f->seq == floor(f->seq) &&
           f->seq >= 0.0 && f->seq <= LC_WIRE_SEQ_MAX && isfinite(f->stamp);
}

/* scan_bearings, scan_band and scan_dist in codec_decode.c. */
static bool scan_ok(const fields *f, const lc_wire_limits *lim)
{
    unsigned need = SCAN_ONLY;
    int n = f->n_ranges;
    return (f->seen & need) == need && !(f->seen & POINTS_ONLY) &&
           fabs(f->bearing_first) <= MAG && fabs(f->bearing_step) <= TWO_PI &&
           f->bearing_step != 0.0 && f->near > 0.0 && f->near <= MAG &&
           f->far > 0.0 && f->far <= MAG && f->near < f->far &&
           n >= 1 && n <= lim->max_beams &&
           !(fabs(f->bearing_step) * (n - 1) > TWO_PI * (1.0 + 1e-9));
}

/* points_from_json and points_z in codec_decode.c. */
static bool points_ok(const fields *f, lc_wire_buffers *b)
{
    if (!(f->seen & BIT(K_XY)) || (f->seen & SCAN_ONLY) || f->n_xy % 2 != 0 ||
        !within_mag(b->xy, f->n_xy) || !at_least_one(b->alloc, &b->xy, &b->cap_xy))
        return false;
    if (!(f->seen & BIT(K_Z)) || f->z_null)
        return true;
    return f->n_z == f->n_xy / 2 && within_mag(b->z, f->n_z) &&
           at_least_one(b->alloc, &b->z, &b->cap_z);
}

int lc_wire_decode_frame_fast(const char *text, size_t len, const lc_wire_limits *lim,
                              lc_wire_buffers *buf, lc_wire_msg *out)
{
    if (!text || len == 0)
        return 0;
    /* cJSON puts the first byte of the locale's decimal point where '.' was:
     * with a point of more bytes it refuses "1.5"; so does this path */
    const struct lconv *lc = localeconv();
    const char *point = lc && lc->decimal_point && lc->decimal_point[0] ? lc->decimal_point : ".";
    if (point[1])
        return 0;
    cursor c = {text, text + len, point[0]};
    fields f = {.seen = 0};
    if (!expect(&c, '{'))
        return 0;
    for (bool more = true; more;) {
        int k = key(&c);
        if (k < 0 || (f.seen & BIT(k)) || !expect(&c, ':') || !value(&c, k, lim, buf, &f) ||
            !next(&c, '}', &more))
            return 0;
        f.seen |= BIT(k);
    }
    skip_ws(&c);
    if (c.p != c.end || !header_ok(&f))
        return 0; /* (an absent mount stays 0, 0, 0) */
    lc_frame fr;
    memset(&fr, 0, sizeof fr);
    fr.seq = (int64_t)f.seq;
    fr.stamp = f.stamp;
    fr.pose = (lc_pose){f.pose[0], f.pose[1], f.pose[2]};
    fr.mount = (lc_pose){f.mount[0], f.mount[1], f.mount[2]};
    fr.has_mount = (f.seen & BIT(K_MOUNT)) != 0;
    if (f.seen & BIT(K_SENSOR))
        memcpy(fr.sensor, f.sensor, sizeof fr.sensor);
    if (f.type == LC_MSG_SCAN) {
        if (!scan_ok(&f, lim))
            return 0;
        fr.kind = LC_FRAME_SCAN;
        fr.angle_start = f.bearing_first;
        fr.angle_step = f.bearing_step;
        fr.range_min = f.near;
        fr.range_max = f.far;
        for (int i = 0; i < f.n_ranges; i++) {
            double r = buf->ranges[i];
            if (!(r >= f.near && r <= f.far))
                buf->ranges[i] = NAN; /* no return, as in scan_dist */
        }
        fr.ranges = buf->ranges;
        fr.n_ranges = f.n_ranges;
    } else {
        if (!points_ok(&f, buf))
            return 0;
        fr.kind = LC_FRAME_POINTS;
        fr.xy = buf->xy;
        fr.n_points = f.n_xy / 2;
        fr.z = (f.seen & BIT(K_Z)) && !f.z_null ? buf->z : NULL;
    }
    out->type = f.type;
    out->u.frame = fr;
    return 1;
}
