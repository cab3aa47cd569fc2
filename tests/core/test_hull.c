/*
 * test_hull.c - convex hulls: lacuna's qhull path, small path and dispatcher
 * against GEOS (libgeos C API, GEOSConvexHull_r, through geos_oracle.h).
 *
 * What GEOS does, checked in test_geos_collinear_behaviour: it drops
 * collinear points from the hull, returns the ring clockwise, a point for one
 * distinct point and a 2-point line string for collinear input. lacuna drops
 * collinear points too, but qhull's merging and the small path's certain-sign
 * test may also drop a vertex that is off the chord by roundoff only, so the
 * vertex sets are compared modulo such near-collinear points: every lacuna
 * vertex is a GEOS vertex, and every GEOS vertex lies on lacuna's hull
 * within a tolerance.
 */
#include "testutil.h"

#include <float.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "hull.h"
#include "lc_config.h"
#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif

#define MAXN 200

/* ---- helpers ---------------------------------------------------------------- */

/* Twice the signed area about v[0]: stays accurate far from the origin. */
static double area2_local(const lc_vec2 *v, int n)
{
    double s = 0;
    for (int i = 1; i + 1 < n; i++)
        s += lc_cross(lc_sub(v[i], v[0]), lc_sub(v[i + 1], v[0]));
    return s;
}

/* CCW, strictly convex, no repeated vertex (k >= 3). */
static void assert_ccw_convex(const lc_vec2 *h, int k)
{
    assert_true(area2_local(h, k) > 0);
    for (int i = 0; i < k; i++) {
        lc_vec2 a = h[i], b = h[(i + 1) % k], c = h[(i + 2) % k];
        assert_false(a.x == b.x && a.y == b.y);
        assert_true(lc_cross(lc_sub(b, a), lc_sub(c, b)) > 0);
    }
}

/* ---- point set generators (fixed seeds) ------------------------------------ */

enum { K_BOX, K_CIRCLE, K_CLUSTER, K_GRID, K_DUPS, K_SLIVER, K_HUGE, K_TINY, K_KINDS };

static int gen_set(lc_rng *g, int kind, lc_vec2 *p)
{
    int n = 1 + (int)(lc_rng_next(g) % MAXN);
    lc_vec2 off = lc_v2(lc_rng_uniform(g, -50, 50), lc_rng_uniform(g, -50, 50));
    double s = lc_rng_uniform(g, 0.05, 5);
    switch (kind) {
    case K_BOX:
        for (int i = 0; i < n; i++)
            p[i] = lc_add(off, lc_v2(lc_rng_uniform(g, 0, s), lc_rng_uniform(g, 0, 0.3 * s)));
        break;
    case K_CIRCLE:
        for (int i = 0; i < n; i++)
            p[i] = lc_add(off, lc_scale(lc_unit_angle(lc_rng_uniform(g, 0, 2 * LC_PI)), s));
        break;
    case K_CLUSTER: {
        lc_vec2 c[3];
        for (int j = 0; j < 3; j++)
            c[j] = lc_add(off, lc_v2(lc_rng_uniform(g, 0, s), lc_rng_uniform(g, 0, s)));
        for (int i = 0; i < n; i++)
            p[i] = lc_add(c[i % 3], lc_scale(lc_v2(lc_rng_normal(g), lc_rng_normal(g)), 0.02 * s));
        break;
    }
    case K_GRID: { /* small integer grids: many duplicates and collinear points */
        int w = 1 + (int)(lc_rng_next(g) % 6), h = (int)(lc_rng_next(g) % 4);
        for (int i = 0; i < n; i++)
            p[i] = lc_v2(floor(off.x) + (double)(lc_rng_next(g) % (unsigned)w),
                         floor(off.y) + (double)(lc_rng_next(g) % (unsigned)(h + 1)));
        break;
    }
    case K_DUPS: {
        int m = 1 + (int)(lc_rng_next(g) % 5);
        lc_vec2 b[5];
        for (int j = 0; j < m; j++)
            b[j] = lc_add(off, lc_v2(lc_rng_uniform(g, 0, s), lc_rng_uniform(g, 0, s)));
        for (int i = 0; i < n; i++)
            p[i] = b[lc_rng_next(g) % (unsigned)m];
        break;
    }
    case K_SLIVER: { /* relative widths 0 (exactly collinear) and 1e-9 .. 1e-3 */
        double w = (lc_rng_next(g) % 4 == 0) ? 0 : pow(10, lc_rng_uniform(g, -9, -3));
        double a = lc_rng_uniform(g, 0, 2 * LC_PI);
        for (int i = 0; i < n; i++) {
            double t = lc_rng_uniform(g, 0, s), u = lc_rng_uniform(g, -0.5, 0.5) * w * s;
            p[i] = lc_add(off, lc_rotate(lc_v2(t, u), a));
        }
        if (w == 0) /* an axis-parallel line has exactly collinear doubles */
            for (int i = 0; i < n; i++)
                p[i] = lc_v2(off.x + lc_rng_uniform(g, 0, s), off.y);
        break;
    }
    case K_HUGE: { /* 1e6 m from the origin; every other set a sliver 1e-9 .. 1e-6 wide */
        double w = (lc_rng_next(g) % 2) ? 1.0 : pow(10, lc_rng_uniform(g, -9, -6));
        for (int i = 0; i < n; i++)
            p[i] = lc_add(lc_v2(1e6, -1e6),
                          lc_v2(lc_rng_uniform(g, 0, s), lc_rng_uniform(g, 0, w * s)));
        break;
    }
    case K_TINY:
        for (int i = 0; i < n; i++)
            p[i] = lc_add(off, lc_v2(lc_rng_uniform(g, 0, 1e-6), lc_rng_uniform(g, 0, 1e-6)));
        break;
    }
    return n;
}

/* ---- comparison with GEOS -------------------------------------------------- */

#if LC_HAVE_GEOS

static const char *const kind_names[K_KINDS] = {"box",  "circle", "cluster", "grid",
                                                "dups", "sliver", "huge",    "tiny"};

static void extent_of(const lc_vec2 *p, int n, double *diag, double *mag)
{
    lc_vec2 lo = p[0], hi = p[0];
    *mag = 0;
    for (int i = 0; i < n; i++) {
        lo = lc_v2(fmin(lo.x, p[i].x), fmin(lo.y, p[i].y));
        hi = lc_v2(fmax(hi.x, p[i].x), fmax(hi.y, p[i].y));
        *mag = fmax(*mag, fmax(fabs(p[i].x), fabs(p[i].y)));
    }
    *diag = lc_dist(lo, hi);
}

typedef struct geos_hull {
    lc_vec2 v[MAXN];
    int k;
    double area;
} geos_hull;

/*
 * Checks lacuna's hull h[0..k) of p[0..n) against GEOS's (GEOSConvexHull_r).
 * flat_ok: k == 2 may stand for a GEOS polygon thinner than the dispatcher's
 * collinearity filter (relative 1e-10).
 */
static void check_hull(const lc_vec2 *p, int n, const lc_vec2 *h, int k, const geos_hull *g,
                       bool flat_ok)
{
    double diag, mag;
    extent_of(p, n, &diag, &mag);
    double tol = 1e-9 * diag + 64 * DBL_EPSILON * mag;
    assert_true(k >= 1 && k <= n);
    if (g->k <= 2) /* GEOS: a point or a segment; lacuna the same count */
        assert_int_equal(k, g->k);
    if (k >= 3)
        assert_ccw_convex(h, k);
    /* every lacuna vertex is one of GEOS's (GEOS's are input points too) */
    for (int i = 0; i < k; i++) {
        double best = INFINITY;
        for (int j = 0; j < g->k; j++)
            best = fmin(best, lc_dist(h[i], g->v[j]));
        assert_true(best <= tol);
    }
    /* every GEOS vertex on lacuna's hull: GEOSDistance_r, 0 inside */
    for (int j = 0; j < g->k; j++)
        assert_true(oracle_point_distance(h, k, g->v[j]) <= tol);
    /* the same area: GEOSArea_r of GEOS's hull */
    double area = k >= 3 ? 0.5 * area2_local(h, k) : 0.0;
    if (k == 2 && g->k >= 3) {
        assert_true(flat_ok);
        assert_true(g->area <= 1e-9 * diag * diag);
    } else {
        assert_near(area, g->area, 1e-9 * g->area + 1e-12 * diag * diag);
    }
    /* every input point inside (GEOSDistance_r) */
    for (int i = 0; i < n; i++)
        assert_true(oracle_point_distance(h, k, p[i]) <= tol);
}

static void geos_of(const lc_vec2 *p, int n, geos_hull *g)
{
    g->k = oracle_convex_hull(p, n, g->v, MAXN, &g->area);
}

/* GEOSConvexHull_r: collinear points dropped, clockwise ring. */
static void test_geos_collinear_behaviour(void **state)
{
    (void)state;
    const lc_vec2 p[] = {{0, 0}, {1, 0}, {2, 0}, {2, 1}, {2, 2}, {1, 2}, {0, 2}, {0, 1}, {1, 1}};
    geos_hull g;
    geos_of(p, 9, &g);
    assert_int_equal(g.k, 4);
    assert_true(area2_local(g.v, g.k) < 0);
    const lc_vec2 q[] = {{0, 0}, {1, 1}, {3, 3}, {2, 2}, {1, 1}};
    geos_of(q, 5, &g);
    assert_int_equal(g.k, 2);
}

typedef int (*hull_fn)(lc_hull_ctx *, const lc_vec2 *, int, lc_vec2 *);

/* 1200 random sets (150 per kind), each through the three entry points. */
static void test_random_sets_against_geos(void **state)
{
    (void)state;
    lc_hull_ctx *ctx = lc_hull_new(NULL);
    assert_non_null(ctx);
    static lc_vec2 p[MAXN], h[MAXN];
    geos_hull g;
    int checked[3] = {0, 0, 0};
    for (int kind = 0; kind < K_KINDS; kind++) {
        lc_rng rng;
        lc_rng_seed(&rng, 1000 + (uint64_t)kind);
        for (int rep = 0; rep < 150; rep++) {
            int n = gen_set(&rng, kind, p);
            geos_of(p, n, &g);
            int k = lc_hull_compute(ctx, p, n, h);
            check_hull(p, n, h, k, &g, true);
            checked[0]++;
            bool area_hull = k >= 3;
            k = lc_hull_compute_small(ctx, p, n, h);
            check_hull(p, n, h, k, &g, false);
            checked[1]++;
            if (area_hull) { /* qhull must accept whatever the filter passes */
                k = lc_hull_compute_qhull(ctx, p, n, h);
                if (k < 3)
                    print_error("%s set %d: qhull gave %d\n", kind_names[kind], rep, k);
                check_hull(p, n, h, k, &g, false);
                checked[2]++;
            }
        }
    }
    assert_int_equal(lc_hull_get_stats(ctx)->errors, 0);
    /* most sets span an area; slivers, grids and duplicates supply the rest */
    assert_true(checked[2] > 800);
    lc_hull_free(ctx);
}
#endif

/* A piece larger than small_max goes to qhull, a smaller one does not. */
static void test_dispatch_and_stats(void **state)
{
    (void)state;
    lc_hull_ctx *ctx = lc_hull_new(NULL);
    const lc_hull_stats *st = lc_hull_get_stats(ctx);
    assert_int_equal(lc_hull_small_max(ctx), 64);
    static lc_vec2 p[MAXN], h[MAXN];
    lc_rng rng;
    lc_rng_seed(&rng, 77);
    for (int i = 0; i < MAXN; i++)
        p[i] = lc_v2(lc_rng_uniform(&rng, -1, 1), lc_rng_uniform(&rng, -1, 1));
    assert_true(lc_hull_compute(ctx, p, 64, h) >= 3);
    assert_int_equal(st->small_calls, 1);
    assert_int_equal(st->qhull_calls, 0);
    int k = lc_hull_compute(ctx, p, 65, h);
    assert_int_equal(st->qhull_calls, 1);
#if LC_HAVE_GEOS
    geos_hull g;
    geos_of(p, 65, &g);
    check_hull(p, 65, h, k, &g, false);
#else
    (void)k;
#endif
    lc_hull_set_small_max(ctx, 0);
    assert_true(lc_hull_compute(ctx, p, 3, h) == 3);
    assert_int_equal(st->qhull_calls, 2);
    lc_hull_set_small_max(ctx, -4);
    assert_int_equal(lc_hull_small_max(ctx), 0);
    lc_hull_set_small_max(ctx, 1000);
    assert_true(lc_hull_compute(ctx, p, MAXN, h) >= 3);
    assert_int_equal(st->small_calls, 2);
    lc_hull_free(ctx);
    LC_GEOS_CHECKED();
}

/* ---- degenerate input ------------------------------------------------------ */

/* Closed forms (common practice): the hull of one distinct point is that
 * point, of collinear points the segment between the two extreme ones. */
static void test_degenerate_never_reach_qhull(void **state)
{
    (void)state;
    lc_hull_ctx *ctx = lc_hull_new(NULL);
    lc_hull_set_small_max(ctx, 0); /* qhull for every piece that spans an area */
    const lc_hull_stats *st = lc_hull_get_stats(ctx);
    lc_vec2 p[60], h[60];
    assert_int_equal(lc_hull_compute(ctx, p, 0, h), 0);
    p[0] = lc_v2(3, 4);
    assert_int_equal(lc_hull_compute(ctx, p, 1, h), 1);
    assert_true(h[0].x == 3 && h[0].y == 4);
    for (int i = 0; i < 60; i++)
        p[i] = lc_v2(-7.25, 1e6);
    assert_int_equal(lc_hull_compute(ctx, p, 60, h), 1);
    assert_true(h[0].x == -7.25 && h[0].y == 1e6);
    p[17] = lc_v2(-7.25, 1e6 + 0.5); /* two distinct points, one repeated */
    assert_int_equal(lc_hull_compute(ctx, p, 60, h), 2);
    assert_true(h[0].y == 1e6 && h[1].y == 1e6 + 0.5);
    for (int i = 0; i < 60; i++) /* a diagonal line with repeats, shuffled */
        p[i] = lc_v2((i * 37) % 23, (i * 37) % 23 * 0.5 + 2);
    assert_int_equal(lc_hull_compute(ctx, p, 60, h), 2);
    assert_near(h[0].x, 0, 0);
    assert_near(h[1].x, 22, 0);
    for (int i = 0; i < 60; i++) /* a sliver below the 1e-10 relative filter */
        p[i] = lc_v2(i, (i % 2) * 1e-12);
    assert_int_equal(lc_hull_compute(ctx, p, 60, h), 2);
    assert_int_equal(st->qhull_calls, 0);
    assert_int_equal(st->small_calls, 0);
    /* the small path alone handles the same input without the filter */
    assert_int_equal(lc_hull_compute_small(ctx, p, 0, h), 0);
    p[0] = lc_v2(1, 1);
    p[1] = lc_v2(1, 1);
    assert_int_equal(lc_hull_compute_small(ctx, p, 2, h), 1);
    p[1] = lc_v2(2, 1);
    p[2] = lc_v2(3, 1);
    assert_int_equal(lc_hull_compute_small(ctx, p, 3, h), 2);
    assert_int_equal(st->qhull_calls, 0);
    lc_hull_free(ctx);
}

static void test_non_finite(void **state)
{
    (void)state;
    lc_hull_ctx *ctx = lc_hull_new(NULL);
    const lc_hull_stats *st = lc_hull_get_stats(ctx);
    lc_vec2 p[4] = {{0, 0}, {1, 0}, {0, 1}, {1, 1}}, h[4];
    const double bad[] = {NAN, INFINITY, -INFINITY};
    for (int b = 0; b < 3; b++)
        for (int at = 0; at < 4; at++) {
            lc_vec2 q[4];
            memcpy(q, p, sizeof q);
            if (at % 2)
                q[at].y = bad[b];
            else
                q[at].x = bad[b];
            assert_int_equal(lc_hull_compute(ctx, q, 4, h), LC_ERR_BAD_INPUT);
            assert_int_equal(lc_hull_compute_small(ctx, q, 4, h), LC_ERR_BAD_INPUT);
            assert_int_equal(lc_hull_compute_qhull(ctx, q, 4, h), LC_ERR_BAD_INPUT);
        }
    assert_int_equal(st->qhull_calls, 0);
    assert_int_equal(st->small_calls, 0);
    assert_int_equal(lc_hull_compute(ctx, p, 4, h), 4);
    lc_hull_free(ctx);
}

/* ---- qhull's error path ---------------------------------------------------- */

/* Runs fn with stdout and stderr sent to a temporary file; returns how many
 * bytes were written to them. */
static long captured_output(void (*fn)(lc_hull_ctx *), lc_hull_ctx *ctx)
{
    fflush(stdout);
    fflush(stderr);
    FILE *tmp = tmpfile();
    assert_non_null(tmp);
    int out = dup(1), err = dup(2);
    dup2(fileno(tmp), 1);
    dup2(fileno(tmp), 2);
    fn(ctx);
    fflush(stdout);
    fflush(stderr);
    dup2(out, 1);
    dup2(err, 2);
    close(out);
    close(err);
    fseek(tmp, 0, SEEK_END);
    long size = ftell(tmp);
    fclose(tmp);
    return size;
}

static int failing_result[3], failing_code[3];

static void run_failing_inputs(lc_hull_ctx *ctx)
{
    lc_vec2 line[30], h[30];
    for (int i = 0; i < 30; i++)
        line[i] = lc_v2(0.1 * i, 5 - 0.2 * i);
    failing_result[0] = lc_hull_compute_qhull(ctx, line, 30, h);
    failing_code[0] = lc_hull_get_stats(ctx)->last_error;
    failing_result[1] = lc_hull_compute_qhull(ctx, line, 2, h);
    failing_code[1] = lc_hull_get_stats(ctx)->last_error;
    for (int i = 0; i < 30; i++)
        line[i] = lc_v2(1, 2);
    failing_result[2] = lc_hull_compute_qhull(ctx, line, 30, h);
    failing_code[2] = lc_hull_get_stats(ctx)->last_error;
}

/* qhull's exit codes as libqhull_r.h defines them: 1 qh_ERRinput (too few
 * points), 2 qh_ERRsingular (collinear: message QH6154 "initial simplex is
 * flat"), 5 qh_ERRqhull (all points equal: QH6421), observed with the
 * Debian 12 package (qhull 2020.2). */
static void test_qhull_failure_is_silent_and_recoverable(void **state)
{
    (void)state;
    lc_hull_ctx *ctx = lc_hull_new(NULL);
    const lc_hull_stats *st = lc_hull_get_stats(ctx);
    assert_string_equal(lc_hull_last_message(ctx), "");
    assert_int_equal(captured_output(run_failing_inputs, ctx), 0);
    for (int i = 0; i < 3; i++)
        assert_int_equal(failing_result[i], LC_ERR_LIBRARY);
    assert_int_equal(st->errors, 3);
    assert_int_equal(st->qhull_calls, 3);
    assert_int_equal(failing_code[0], 2);
    assert_int_equal(failing_code[1], 1);
    assert_int_equal(failing_code[2], 5);
    assert_true(strncmp(lc_hull_last_message(ctx), "QH6421", 6) == 0);
    /* the first failure: collinear input is singular, "initial simplex is flat" */
    lc_vec2 line[30], h[30];
    for (int i = 0; i < 30; i++)
        line[i] = lc_v2(0.1 * i, 5 - 0.2 * i);
    assert_int_equal(lc_hull_compute_qhull(ctx, line, 30, h), LC_ERR_LIBRARY);
    assert_int_equal(st->last_error, 2);
    assert_int_equal(st->last_message_code, 6154);
    assert_true(strncmp(lc_hull_last_message(ctx), "QH6154", 6) == 0);
    /* still usable: a square, CCW from any start (closed form, common practice) */
    const lc_vec2 sq[] = {{0, 0}, {2, 0}, {1, 1}, {2, 2}, {0, 2}, {1, 0}};
    int k = lc_hull_compute_qhull(ctx, sq, 6, h);
    assert_int_equal(k, 4);
    assert_ccw_convex(h, 4);
    assert_near(0.5 * area2_local(h, 4), 4.0, 1e-15);
    /* the dispatcher filters the same input before qhull */
    long calls = st->qhull_calls;
    assert_int_equal(lc_hull_compute(ctx, line, 30, h), 2);
    assert_int_equal(st->qhull_calls, calls);
    assert_int_equal(st->errors, 4);
    lc_hull_free(ctx);
}

/* ---- allocation ------------------------------------------------------------ */

static void test_no_allocation_once_warm(void **state)
{
    (void)state;
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_hull_ctx *ctx = lc_hull_new(&ca.alloc);
    static lc_vec2 p[MAXN], h[MAXN];
    lc_rng rng;
    lc_rng_seed(&rng, 5);
    for (int i = 0; i < MAXN; i++)
        p[i] = lc_v2(lc_rng_uniform(&rng, 0, 1), lc_rng_uniform(&rng, 0, 1));
    /* warm-up: the largest piece through both paths */
    assert_true(lc_hull_compute_small(ctx, p, MAXN, h) >= 3);
    assert_true(lc_hull_compute_qhull(ctx, p, MAXN, h) >= 3);
    long warm = ca.calls;
    for (int rep = 0; rep < 300; rep++) {
        int n = gen_set(&rng, rep % K_KINDS, p);
        assert_true(lc_hull_compute(ctx, p, n, h) >= 0);
        assert_true(lc_hull_compute_small(ctx, p, n, h) >= 0);
        if (n >= 3)
            lc_hull_compute_qhull(ctx, p, n, h);
    }
    assert_int_equal(ca.calls, warm);
    lc_hull_free(ctx);
    assert_int_equal(ca.live, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        LC_GEOS_TEST(test_geos_collinear_behaviour),
        LC_GEOS_TEST(test_random_sets_against_geos),
        cmocka_unit_test(test_dispatch_and_stats),
        cmocka_unit_test(test_degenerate_never_reach_qhull),
        cmocka_unit_test(test_non_finite),
        cmocka_unit_test(test_qhull_failure_is_silent_and_recoverable),
        cmocka_unit_test(test_no_allocation_once_warm),
    };
    int rc = LC_RUN_TESTS(tests, NULL, NULL);
#if LC_HAVE_GEOS
    oracle_finish();
#endif
    return rc;
}
