/*
 * json_write.c - the proto layer's JSON writer (see json_write.h) and the
 * number format of the wire (lc_wire_format_number, codec.h): exact round
 * trip where replay matters, fixed decimals for view geometry, null for
 * anything non-finite. Printing assumes the C locale.
 */
#include "json_write.h"

#include <inttypes.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

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

void lc_jw_open(lc_wire_text *t, char c)
{
    w_sep(t);
    w_raw(t, &c, 1);
}

void lc_jw_close(lc_wire_text *t, char c) { w_raw(t, &c, 1); }

/* Keys are the codec's own literals: no escaping needed. */
void lc_jw_key(lc_wire_text *t, const char *k)
{
    w_sep(t);
    w_raw(t, "\"", 1);
    w_raw(t, k, strlen(k));
    w_raw(t, "\":", 2);
}

void lc_jw_null(lc_wire_text *t)
{
    w_sep(t);
    w_raw(t, "null", 4);
}

void lc_jw_str(lc_wire_text *t, const char *s)
{
    if (!s) {
        lc_jw_null(t);
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

void lc_jw_num(lc_wire_text *t, double x, int decimals)
{
    char buf[LC_WIRE_NUMBER_MAX];
    int n = lc_wire_format_number(buf, x, decimals);
    w_sep(t);
    w_raw(t, buf, (size_t)n);
}

void lc_jw_int(lc_wire_text *t, int64_t x)
{
    char buf[24];
    int n = snprintf(buf, sizeof buf, "%" PRId64, x);
    w_sep(t);
    w_raw(t, buf, (size_t)n);
}

void lc_jw_bool(lc_wire_text *t, bool b)
{
    w_sep(t);
    w_raw(t, b ? "true" : "false", b ? 4 : 5);
}

/* Key and value in one call, for the common flat fields. */
void lc_jw_kv_num(lc_wire_text *t, const char *k, double x, int decimals)
{
    lc_jw_key(t, k);
    lc_jw_num(t, x, decimals);
}

void lc_jw_kv_int(lc_wire_text *t, const char *k, int64_t x)
{
    lc_jw_key(t, k);
    lc_jw_int(t, x);
}

void lc_jw_kv_str(lc_wire_text *t, const char *k, const char *s)
{
    lc_jw_key(t, k);
    lc_jw_str(t, s);
}

void lc_jw_kv_bool(lc_wire_text *t, const char *k, bool b)
{
    lc_jw_key(t, k);
    lc_jw_bool(t, b);
}

/* An index >= 0, or null. */
void lc_jw_kv_index(lc_wire_text *t, const char *k, int i)
{
    lc_jw_key(t, k);
    if (i >= 0)
        lc_jw_int(t, i);
    else
        lc_jw_null(t);
}

void lc_jw_begin(lc_wire_text *t)
{
    t->len = 0;
    t->failed = false;
    w_raw(t, "{", 1);
}

int lc_jw_end(lc_wire_text *t)
{
    lc_jw_close(t, '}');
    if (t->failed) {
        t->len = 0;
        if (t->s)
            t->s[0] = '\0';
        return -1;
    }
    return 0;
}

void lc_jw_doubles(lc_wire_text *t, const double *v, int n, int decimals)
{
    lc_jw_open(t, '[');
    for (int i = 0; i < n; i++)
        lc_jw_num(t, v[i], decimals);
    lc_jw_close(t, ']');
}

void lc_jw_vec2(lc_wire_text *t, lc_vec2 v, int decimals)
{
    double a[2] = {v.x, v.y};
    lc_jw_doubles(t, a, 2, decimals);
}

void lc_jw_pose(lc_wire_text *t, lc_pose p, int decimals)
{
    double a[3] = {p.x, p.y, p.yaw};
    lc_jw_doubles(t, a, 3, decimals);
}

void lc_jw_vec2_list(lc_wire_text *t, const lc_vec2 *v, int n, int decimals)
{
    lc_jw_open(t, '[');
    for (int i = 0; i < n; i++)
        lc_jw_vec2(t, v[i], decimals);
    lc_jw_close(t, ']');
}

/* [[[x,y],...],...]; an absent set is empty. */
void lc_jw_polyset(lc_wire_text *t, const lc_polyset *ps, int decimals)
{
    lc_jw_open(t, '[');
    for (int i = 0; ps && i < ps->np; i++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(ps, i, &n);
        lc_jw_vec2_list(t, v, n, decimals);
    }
    lc_jw_close(t, ']');
}

