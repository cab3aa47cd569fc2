/*
 * test_codec_fast.c - the codec's fast path for scan and points messages
 * (codec_fast.c) against the cJSON path, whose numbers are cJSON 1.7.15's
 * (Debian) reading through glibc's strtod, correctly rounded.
 *
 * - Random frames in many number formats, white space and key orders, with
 *   and without a sensor's name and a mount: the fast path accepts every one (a sensor's plain messages do take it) and
 *   each decodes bit for bit as the cJSON path decodes it.
 * - Numbers at the edges of the exact path (2^53, 10^22, subnormals, more
 *   than 19 digits, long zeros): the same double as strtod.
 * - A table of messages it must decline; lc_wire_decode then answers
 *   exactly as the cJSON path does (result, code, wording).
 * - Seeded byte mutations of valid frames: whatever the fast path accepts
 *   the cJSON path decodes to the same frame.
 * - A warm decoder allocates nothing for a plain scan (cJSON's allocations
 *   counted through its hooks; the cJSON path's are seen, so the count works).
 */
#include "testutil.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "codec.h"
#include "codec_fast.h"

#define TEXT_MAX (1 << 20)

typedef struct text {
    char *s;
    size_t len;
} text;

static void put(text *t, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void put(text *t, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(t->s + t->len, TEXT_MAX - t->len, fmt, ap);
    va_end(ap);
    assert_true(n >= 0 && t->len + (size_t)n < TEXT_MAX);
    t->len += (size_t)n;
}

static bool same_bits(double a, double b) { return memcmp(&a, &b, sizeof a) == 0; }

static void same_array(const double *a, const double *b, int n, const char *what)
{
    for (int i = 0; i < n; i++)
        if (!same_bits(a[i], b[i]))
            fail_msg("%s[%d]: %.17g against %.17g", what, i, a[i], b[i]);
}

/* Everything a decoded frame carries, bit for bit. */
static void same_frame(const lc_wire_msg *a, const lc_wire_msg *b)
{
    assert_int_equal(a->type, b->type);
    const lc_frame *x = &a->u.frame, *y = &b->u.frame;
    assert_int_equal(x->kind, y->kind);
    assert_true(x->seq == y->seq);
    assert_string_equal(x->sensor, y->sensor);
    assert_int_equal(x->has_mount, y->has_mount);
    double hx[] = {x->stamp, x->pose.x, x->pose.y, x->pose.yaw, x->mount.x, x->mount.y,
                   x->mount.yaw, x->angle_start, x->angle_step, x->range_min, x->range_max};
    double hy[] = {y->stamp, y->pose.x, y->pose.y, y->pose.yaw, y->mount.x, y->mount.y,
                   y->mount.yaw, y->angle_start, y->angle_step, y->range_min, y->range_max};
    same_array(hx, hy, 11, "header");
    assert_int_equal(x->n_ranges, y->n_ranges);
    assert_int_equal(x->n_points, y->n_points);
    assert_true((x->ranges == NULL) == (y->ranges == NULL));
    assert_true((x->xy == NULL) == (y->xy == NULL));
    assert_true((x->z == NULL) == (y->z == NULL));
    if (x->ranges)
        same_array(x->ranges, y->ranges, x->n_ranges, "dist");
    if (x->xy)
        same_array(x->xy, y->xy, 2 * x->n_points, "xy");
    if (x->z)
        same_array(x->z, y->z, x->n_points, "z");
}

typedef struct pair {
    lc_wire_buffers fast, slow;
    lc_wire_msg mf, ms;
    lc_wire_error err;
} pair;

static void pair_init(pair *p)
{
    lc_wire_buffers_init(&p->fast, NULL);
    lc_wire_buffers_init(&p->slow, NULL);
}

static void pair_free(pair *p)
{
    lc_wire_buffers_free(&p->fast);
    lc_wire_buffers_free(&p->slow);
}

/* Both paths on one text; 1 when the fast path accepted (and agreed). */
static int compare(pair *p, const char *s, size_t len, const lc_wire_limits *lim)
{
    int fast = lc_wire_decode_frame_fast(s, len, lim, &p->fast, &p->mf);
    int slow = lc_wire_decode_slow(s, len, lim, &p->slow, &p->ms, &p->err);
    if (fast) {
        if (slow != 0)
            fail_msg("fast path accepted what cJSON refuses (%s: %s):\n%.*s",
                     lc_wire_code_name(p->err.code), p->err.message, (int)len, s);
        same_frame(&p->mf, &p->ms);
    }
    return fast;
}

/* ---------------------------------------------------- random frames */

/* JSON white space, often none. */
static void ws(text *t, lc_rng *r)
{
    static const char *const pick[] = {"", "", "", " ", "\n", "\t", "\r\n  ", "  "};
    put(t, "%s", pick[lc_rng_next(r) % 8]);
}

/* x in one of the formats senders use (all strict JSON numbers). */
static void num(text *t, lc_rng *r, double x)
{
    switch (lc_rng_next(r) % 8) {
    case 0: put(t, "%.17g", x); break;
    case 1: put(t, "%.3f", x); break;
    case 2: put(t, "%.6e", x); break;
    case 3: put(t, "%g", x); break;
    case 4: put(t, "%.15g", x); break;
    case 5: put(t, "%.1f", x); break;
    case 6: put(t, "%.9E", x); break;
    default: put(t, "%.0f", round(x)); break;
    }
}

static void triple(text *t, lc_rng *r, double lo, double hi)
{
    put(t, "[");
    for (int i = 0; i < 3; i++) {
        ws(t, r);
        num(t, r, lc_rng_uniform(r, lo, hi));
        ws(t, r);
        put(t, i < 2 ? "," : "]");
    }
}

static void number_list(text *t, lc_rng *r, int n, double lo, double hi, bool nulls)
{
    put(t, "[");
    for (int i = 0; i < n; i++) {
        ws(t, r);
        if (nulls && lc_rng_next(r) % 10 == 0)
            put(t, "null");
        else
            num(t, r, lc_rng_uniform(r, lo, hi));
        ws(t, r);
        if (i + 1 < n)
            put(t, ",");
    }
    put(t, "]");
}

enum { F_TYPE, F_SEQ, F_STAMP, F_POSE, F_MOUNT, F_A0, F_DA, F_RMIN, F_RMAX, F_RANGES, F_XY,
       F_Z, F_SENSOR, F_COUNT };

/* A valid scan or points message with its keys in random order. */
static void random_frame(text *t, lc_rng *r, bool scan)
{
    int keys[F_COUNT], n = 0;
    int fixed[] = {F_TYPE, F_SEQ, F_STAMP, F_POSE};
    for (int i = 0; i < 4; i++)
        keys[n++] = fixed[i];
    if (lc_rng_next(r) % 2)
        keys[n++] = F_MOUNT;
    if (lc_rng_next(r) % 2)
        keys[n++] = F_SENSOR;
    if (scan) {
        int s[] = {F_A0, F_DA, F_RMIN, F_RMAX, F_RANGES};
        for (int i = 0; i < 5; i++)
            keys[n++] = s[i];
    } else {
        keys[n++] = F_XY;
        if (lc_rng_next(r) % 3)
            keys[n++] = F_Z;
    }
    for (int i = n - 1; i > 0; i--) {
        int j = (int)(lc_rng_next(r) % (uint64_t)(i + 1)), k = keys[i];
        keys[i] = keys[j];
        keys[j] = k;
    }
    int beams = lc_rng_next(r) % 20 == 0 ? 1081 : 1 + (int)(lc_rng_next(r) % 200);
    int points = (int)(lc_rng_next(r) % 120);
    double step = 2.0 * LC_PI / (beams + 1);
    t->len = 0;
    ws(t, r);
    put(t, "{");
    for (int i = 0; i < n; i++) {
        ws(t, r);
        static const char *const names[] = {"type", "seq", "stamp", "pose", "mount",
                                            "bearing_first", "bearing_step", "near",
                                            "far", "dist", "xy", "z", "sensor"};
        put(t, "\"%s\"", names[keys[i]]);
        ws(t, r);
        put(t, ":");
        ws(t, r);
        switch (keys[i]) {
        case F_TYPE: put(t, scan ? "\"scan\"" : "\"points\""); break;
        case F_SEQ: put(t, "%llu", (unsigned long long)(lc_rng_next(r) % 100000000)); break;
        case F_STAMP: num(t, r, lc_rng_uniform(r, 0, 1e5)); break;
        case F_POSE: triple(t, r, -200, 200); break;
        case F_MOUNT: triple(t, r, -1, 1); break;
        case F_A0: num(t, r, lc_rng_uniform(r, -LC_PI, 0)); break;
        case F_DA: put(t, "%.17g", lc_rng_next(r) % 2 ? step : -step); break;
        case F_RMIN: put(t, "0.05"); break;
        case F_RMAX: num(t, r, lc_rng_uniform(r, 5, 40)); break;
        case F_RANGES: number_list(t, r, beams, -1, 45, true); break;
        case F_XY: number_list(t, r, 2 * points, -30, 30, false); break;
        case F_SENSOR: {
            static const char *const sensors[] = {"front", "rear", "cam.1", "A-z_0.9", "x",
                                                  "abcdefghijklmnopqrstuvwxyz012345"};
            put(t, "\"%s\"", sensors[lc_rng_next(r) % 6]);
            break;
        }
        default:
            if (lc_rng_next(r) % 4 == 0)
                put(t, "null");
            else
                number_list(t, r, points, -1, 3, false);
            break;
        }
        ws(t, r);
        if (i + 1 < n)
            put(t, ",");
    }
    put(t, "}");
    ws(t, r);
}

static void test_random_frames_agree(void **state)
{
    (void)state;
    lc_rng r;
    lc_rng_seed(&r, 20261202);
    text t = {malloc(TEXT_MAX), 0};
    pair p;
    pair_init(&p);
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    for (int i = 0; i < 3000; i++) {
        random_frame(&t, &r, i % 2 == 0);
        if (!compare(&p, t.s, t.len, &lim))
            fail_msg("frame %d declined (a plain sensor message):\n%.*s", i, (int)t.len, t.s);
        /* the entry point leaves err as the cJSON path does (seq kept, nothing ignored) */
        lc_wire_error e;
        assert_int_equal(lc_wire_decode(t.s, t.len, &lim, &p.fast, &p.mf, &e), 0);
        assert_true(e.code == p.err.code && e.has_seq == p.err.has_seq && e.seq == p.err.seq &&
                    e.ignored == 0 && p.err.ignored == 0);
    }
    pair_free(&p);
    free(t.s);
}

/* ----------------------------------------------------- edge numbers */

/* Tokens at the edges of the exact path; each read as the stamp of a scan. */
static void test_edge_numbers(void **state)
{
    (void)state;
    static const char *const tokens[] = {
        "0", "-0", "0.0", "-0.0e7", "0e400", "1", "-1", "0.1", "0.3", "4.35", "-4.35",
        "9007199254740991", "9007199254740992", "9007199254740993", "18446744073709551615",
        "18446744073709551616", "1e22", "1e23", "1e-22", "1e-23", "123456e17", "8.5e-8",
        "1.7976931348623157e308", "2.2250738585072014e-308", "4.9406564584124654e-324",
        "5e-324", "2e-324", "1.0000000000000000000000001", "1.00000000000000000000000",
        "0.000000000000000000000000001234", "1234567890123456789", "12345678901234567890",
        "0.1234567890123456789", "3.141592653589793", "2.718281828459045235360287",
        "1E2", "1e+2", "1e-0", "1e0000000000000000000000002", "100000000000000000000000",
        "9.999999999999999e22", "7.2057594037927933e16", "123.456e-5", "1e300"};
    pair p;
    pair_init(&p);
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    for (size_t i = 0; i < sizeof tokens / sizeof *tokens; i++) {
        char s[512];
        int n = snprintf(s, sizeof s,
                         "{\"type\":\"scan\",\"seq\":1,\"stamp\":%s,\"pose\":[0,0,0],"
                         "\"bearing_first\":0,\"bearing_step\":0.01,\"near\":0.1,"
                         "\"far\":10,\"dist\":[1]}",
                         tokens[i]);
        if (!compare(&p, s, (size_t)n, &lim))
            fail_msg("%s declined", tokens[i]);
        double want = strtod(tokens[i], NULL); /* glibc, correctly rounded */
        if (!same_bits(p.mf.u.frame.stamp, want))
            fail_msg("%s: %a, strtod %a", tokens[i], p.mf.u.frame.stamp, want);
    }
    pair_free(&p);
}

/* ------------------------------------------------- declined messages */

#define SCAN_HEAD "'type':'scan','seq':3,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
#define SCAN_TAIL "'near':0.1,'far':10"
#define SCAN(extra, ranges) "{" SCAN_HEAD "'bearing_step':0.01," SCAN_TAIL extra ",'dist':" ranges "}"
#define POINTS(extra) "{'type':'points','seq':3,'stamp':1.5,'pose':[0,0,0],'xy':[1,2]" extra "}"

static void test_declined_like_cjson(void **state)
{
    (void)state;
    static const char *const table[] = {
        SCAN(",'extra':{'a':[1,2]}", "[1]"),   /* unknown key: ignored by the cJSON path */
        SCAN(",'seq':4", "[1]"),               /* repeated key: an error there */
        SCAN("", "[01]"),                      /* numbers outside strict JSON */
        SCAN("", "[1.]"), SCAN("", "[.5]"), SCAN("", "[+1]"), SCAN("", "[-]"),
        SCAN("", "[1e]"), SCAN("", "[1e+]"), SCAN("", "[--1]"), SCAN("", "[1.5.3]"),
        SCAN("", "[1,]"), SCAN("", "[,1]"), SCAN("", "[1 2]"), SCAN("", "[]"),
        SCAN("", "[nul]"), SCAN("", "[true]"), SCAN("", "['1']"), SCAN("", "[1e999]"),
        SCAN("", "[0.1234567890123456789012345678901234567890123456789012345678901234]"),
        "{'type':'sc\\u0061n','seq':3,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}", /* an escape */
        "{'typ\\u0065':'scan','seq':3,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        "{" SCAN_HEAD "'bearing_step':0," SCAN_TAIL ",'dist':[1]}",   /* field checks */
        "{" SCAN_HEAD "'bearing_step':7," SCAN_TAIL ",'dist':[1]}",
        "{" SCAN_HEAD "'bearing_step':0.01,'near':0,'far':10,'dist':[1]}",
        "{" SCAN_HEAD "'bearing_step':0.01,'near':10,'far':10,'dist':[1]}",
        "{" SCAN_HEAD "'bearing_step':0.01,'near':0.1,'far':2e9,'dist':[1]}",
        "{" SCAN_HEAD "'bearing_step':3.2," SCAN_TAIL ",'dist':[1,2,3]}", /* over a turn */
        "{" SCAN_HEAD "'bearing_step':0.01," SCAN_TAIL "}",                 /* no ranges */
        "{'type':'scan','seq':3.5,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        "{'type':'scan','seq':-1,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        "{'type':'scan','seq':1e16,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        "{'type':'scan','seq':3,'stamp':1.5,'pose':[0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        "{'type':'scan','seq':3,'stamp':1.5,'pose':[0,0,0,0],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        "{'type':'scan','seq':3,'stamp':1.5,'pose':[0,0,2e9],'bearing_first':0,"
        "'bearing_step':0.01," SCAN_TAIL ",'dist':[1]}",
        SCAN(",'mount':null", "[1]"), SCAN(",'xy':[1,2]", "[1]"),
        SCAN(",'sensor':''", "[1]"), SCAN(",'sensor':null", "[1]"),     /* a sensor's name */
        SCAN(",'sensor':3", "[1]"), SCAN(",'sensor':'rear left'", "[1]"),
        SCAN(",'sensor':'r\\u0065ar'", "[1]"), SCAN(",'sensor':'r\\/ear'", "[1]"),
        SCAN(",'sensor':'abcdefghijklmnopqrstuvwxyz0123456'", "[1]"),
        SCAN(",'sensor':'rear','sensor':'rear'", "[1]"), POINTS(",'sensor':'cam\\u0007'"),
        POINTS(",'sensor':'caf\xc3\xa9'"),
        SCAN("", "[1]") " x", "\xef\xbb\xbf" SCAN("", "[1]"), SCAN("", "[1]") "}",
        "{'type':'view'}", "{'type':'hello','role':'viewer'}", "[1,2]", "{}", "",
        "{'seq':3,'stamp':1.5,'pose':[0,0,0],'xy':[1,2]}",                /* no type */
        POINTS(",'z':[1,2]"), POINTS(",'z':[1e10]"), POINTS(",'dist':[1]"),
        "{'type':'points','seq':3,'stamp':1.5,'pose':[0,0,0],'xy':[1,2,3]}",
        "{'type':'points','seq':3,'stamp':1.5,'pose':[0,0,0],'xy':[1,null]}",
        "{'type':'points','seq':3,'stamp':1.5,'pose':[0,0,0],'xy':[1,2e9]}",
        "{'type':'points','seq':3,'stamp':1.5,'pose':[0,0,0]}",
    };
    pair p;
    pair_init(&p);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    for (size_t i = 0; i < sizeof table / sizeof *table; i++) {
        char s[1024];
        size_t n = strlen(table[i]);
        assert_true(n < sizeof s);
        for (size_t k = 0; k <= n; k++)
            s[k] = table[i][k] == '\'' ? '"' : table[i][k];
        if (compare(&p, s, n, &lim))
            fail_msg("accepted: %s", s);
        /* the entry point answers as the cJSON path alone */
        lc_wire_msg m;
        lc_wire_error e;
        int rc = lc_wire_decode(s, n, &lim, &buf, &m, &e);
        int slow = lc_wire_decode_slow(s, n, &lim, &p.slow, &p.ms, &p.err);
        assert_int_equal(rc, slow);
        if (rc == 0) {
            same_frame(&m, &p.ms);
        } else {
            assert_int_equal(e.code, p.err.code);
            assert_string_equal(e.message, p.err.message);
        }
    }
    /* beams and points beyond the limits */
    lc_wire_limits tight = lim;
    tight.max_beams = 2;
    tight.max_points = 1;
    const char *over[] = {"{'type':'scan','seq':3,'stamp':1.5,'pose':[0,0,0],'bearing_first':0,"
                          "'bearing_step':0.01," SCAN_TAIL ",'dist':[1,2,3]}",
                          POINTS(",'z':[1]") "", "{'type':'points','seq':3,'stamp':1.5,"
                                                 "'pose':[0,0,0],'xy':[1,2,3,4]}"};
    int accepted[] = {0, 1, 0};
    for (int i = 0; i < 3; i++) {
        char s[512];
        size_t n = strlen(over[i]);
        for (size_t k = 0; k <= n; k++)
            s[k] = over[i][k] == '\'' ? '"' : over[i][k];
        assert_int_equal(compare(&p, s, n, &tight), accepted[i]);
    }
    /* limits below zero (only through the API): an empty list is over them too */
    tight.max_points = -1;
    const char *empty = "{\"type\":\"points\",\"seq\":3,\"stamp\":1.5,\"pose\":[0,0,0],\"xy\":[]}";
    assert_int_equal(compare(&p, empty, strlen(empty), &tight), 0);
    assert_int_equal(lc_wire_decode_slow(empty, strlen(empty), &tight, &p.slow, &p.ms, &p.err), -1);
    lc_wire_buffers_free(&buf);
    pair_free(&p);
}

/* ------------------------------------------------------- mutations */

static void test_mutations_agree(void **state)
{
    (void)state;
    lc_rng r;
    lc_rng_seed(&r, 77);
    text t = {malloc(TEXT_MAX), 0};
    char *m = malloc(TEXT_MAX);
    pair p;
    pair_init(&p);
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    static const char alphabet[] = "0123456789-+.eE,[]{}\": ntul\\";
    long accepted = 0, tried = 0;
    for (int i = 0; i < 4000; i++) {
        random_frame(&t, &r, i % 2 == 0);
        if (t.len > 4000)
            continue;
        for (int k = 0; k < 8; k++) {
            memcpy(m, t.s, t.len);
            size_t len = t.len;
            int edits = 1 + (int)(lc_rng_next(&r) % 3);
            for (int e = 0; e < edits && len > 1; e++) {
                size_t at = lc_rng_next(&r) % len;
                switch (lc_rng_next(&r) % 3) {
                case 0: m[at] = alphabet[lc_rng_next(&r) % (sizeof alphabet - 1)]; break;
                case 1: memmove(m + at, m + at + 1, len - at - 1); len--; break;
                default:
                    memmove(m + at + 1, m + at, len - at);
                    m[at] = alphabet[lc_rng_next(&r) % (sizeof alphabet - 1)];
                    len++;
                    break;
                }
            }
            accepted += compare(&p, m, len, &lim);
            tried++;
        }
    }
    /* both outcomes happen: the mutations reach the checks, not only the parser */
    assert_true(accepted > tried / 20 && accepted < tried);
    pair_free(&p);
    free(m);
    free(t.s);
}

/* ------------------------------------------------- no allocation */

static long cjson_allocs;

static void *counting_malloc(size_t n)
{
    cjson_allocs++;
    return malloc(n);
}

static void test_warm_allocates_nothing(void **state)
{
    (void)state;
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, &ca.alloc);
    cJSON_Hooks hooks = {counting_malloc, free};
    cJSON_InitHooks(&hooks);
    lc_rng r;
    lc_rng_seed(&r, 5);
    text t = {malloc(TEXT_MAX), 0};
    t.len = 0;
    put(&t, "{\"type\":\"scan\",\"seq\":1,\"stamp\":2.5,\"pose\":[0,0,0],\"bearing_first\":-2,"
            "\"bearing_step\":0.004,\"near\":0.05,\"far\":30,\"dist\":");
    number_list(&t, &r, 1081, 0.1, 20, true);
    put(&t, "}");
    lc_wire_msg m;
    lc_wire_error err;
    assert_int_equal(lc_wire_decode(t.s, t.len, NULL, &buf, &m, &err), 0);
    long warm = ca.calls;
    cjson_allocs = 0;
    for (int i = 0; i < 5; i++)
        assert_int_equal(lc_wire_decode(t.s, t.len, NULL, &buf, &m, &err), 0);
    assert_int_equal(m.u.frame.n_ranges, 1081);
    assert_int_equal(ca.calls, warm);
    assert_int_equal(cjson_allocs, 0);
    /* an unknown key sends it down the cJSON path: now cJSON allocates */
    t.len--;
    put(&t, ",\"note\":1}");
    assert_int_equal(lc_wire_decode(t.s, t.len, NULL, &buf, &m, &err), 0);
    assert_true(cjson_allocs > 1000);
    cJSON_InitHooks(NULL);
    free(t.s);
    lc_wire_buffers_free(&buf);
    assert_int_equal(ca.live, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_random_frames_agree),
        cmocka_unit_test(test_edge_numbers),
        cmocka_unit_test(test_declined_like_cjson),
        cmocka_unit_test(test_mutations_agree),
        cmocka_unit_test(test_warm_allocates_nothing),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
