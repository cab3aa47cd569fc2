/*
 * test_segment.c - breakpoints, clustering and thin pieces.
 *
 * Outside check: the adaptive breakpoint detector's threshold (Borges and
 * Aldon, J. Intell. Robot. Syst. 40 (2004) 267-297):
 * D_max = r sin(dphi) / sin(lambda - dphi) + 3 sigma_r, values computed by
 * hand with a calculator (python's math module) and written out below.
 */
#include "testutil.h"

#include <stdlib.h>
#include <string.h>

#include "segment.h"

static const double DEG = LC_PI / 180.0;

static void test_breakpoint_check_values(void **state)
{
    static const struct { double r, dphi_deg, lambda_deg, sigma, want; } cases[] = {
        {5, 0.25, 10, 0.01, 0.15882557036117653},
        {2, 0.5, 10, 0.02, 0.1657456780771519},
        {20, 0.25, 10, 0.03, 0.6053022814447061},
        {1, 1, 10, 0.01, 0.14156369175293443},
        {10, 0.5, 15, 0.01, 0.3785316461803587},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++)
        assert_near(lc_breakpoint_threshold(cases[i].r, cases[i].dphi_deg * DEG,
                                            cases[i].lambda_deg * DEG, cases[i].sigma),
                    cases[i].want, 1e-12);
    /* A step as wide as lambda always breaks. */
    assert_near(lc_breakpoint_threshold(5, 10 * DEG, 10 * DEG, 0.01), 0.0, 0);
}

/* A cloud from a polyline seen from the origin: beam by beam. */
static int polyline_scan(lc_cloud *c, const lc_vec2 *pl, int np, double a0, double a1, int beams)
{
    int n = 0;
    for (int i = 0; i < beams; i++) {
        double a = a0 + (a1 - a0) * i / (beams - 1);
        lc_vec2 d = lc_unit_angle(a);
        double best = INFINITY;
        for (int k = 0; k + 1 < np; k++) {
            lc_vec2 e = lc_sub(pl[k + 1], pl[k]);
            double den = lc_cross(d, e);
            if (den == 0)
                continue;
            double t = lc_cross(pl[k], e) / den, u = lc_cross(pl[k], d) / den;
            if (t > 0 && u >= 0 && u <= 1 && t < best)
                best = t;
        }
        if (!isfinite(best))
            continue;
        c->world[n] = lc_scale(d, best);
        c->range[n] = best;
        c->bearing[n] = a;
        n++;
    }
    c->n = n;
    c->ordered = true;
    c->angle_step = (a1 - a0) / (beams - 1);
    return n;
}

static void alloc_cloud(lc_cloud *c, int n)
{
    memset(c, 0, sizeof *c);
    c->world = calloc((size_t)n, sizeof *c->world);
    c->range = calloc((size_t)n, sizeof *c->range);
    c->bearing = calloc((size_t)n, sizeof *c->bearing);
    c->cap = n;
}

/* Every piece is thin: all its points within split_width of its chord. */
static void assert_thin(const lc_cloud *c, const lc_segment_ws *ws, double w)
{
    for (int k = 0; k < ws->n_pieces; k++) {
        int s = ws->piece_start[k], n = ws->piece_count[k];
        lc_vec2 a = c->world[ws->order[s]], b = c->world[ws->order[s + n - 1]];
        for (int i = 0; i < n; i++)
            assert_true(lc_segment_distance(c->world[ws->order[s + i]], a, b, NULL) <= w + 1e-12);
    }
}

/* Every point lies in at least one piece. */
static void assert_covered(const lc_cloud *c, const lc_segment_ws *ws)
{
    char *seen = calloc((size_t)c->n + 1, 1);
    for (int k = 0; k < ws->n_pieces; k++)
        for (int i = 0; i < ws->piece_count[k]; i++)
            seen[ws->order[ws->piece_start[k] + i]] = 1;
    for (int i = 0; i < c->n; i++)
        assert_true(seen[i]);
    free(seen);
}

/* The inside of a room corner: two walls meeting at (3, 3). No piece may
 * span the corner, or its hull would cover the free triangle. */
static void test_room_corner_split(void **state)
{
    lc_vec2 pl[3] = {{3, -2}, {3, 3}, {-2, 3}};
    lc_cloud c;
    alloc_cloud(&c, 1081);
    polyline_scan(&c, pl, 3, -0.6, 2.2, 1081);
    lc_segment_config cfg;
    lc_segment_config_default(&cfg);
    lc_segment_ws ws = {0};
    int n = lc_segment(&c, &cfg, &ws);
    assert_true(n >= 2);
    assert_thin(&c, &ws, cfg.split_width);
    assert_covered(&c, &ws);
    for (int k = 0; k < n; k++) {
        int s = ws.piece_start[k], m = ws.piece_count[k];
        lc_vec2 a = c.world[ws.order[s]], b = c.world[ws.order[s + m - 1]];
        /* a piece lies along one wall: x == 3 for all or y == 3 for all (within w) */
        bool on_x = fabs(a.x - 3) < 0.05 && fabs(b.x - 3) < 0.05;
        bool on_y = fabs(a.y - 3) < 0.05 && fabs(b.y - 3) < 0.05;
        assert_true(on_x || on_y);
        assert_true(m <= cfg.max_piece);
    }
    lc_segment_ws_free(&ws);
    lc_cloud_free(&c);
}

/* Two walls at different depths: the breakpoint between them is found. */
static void test_depth_jump_breaks(void **state)
{
    lc_cloud c;
    alloc_cloud(&c, 200);
    for (int i = 0; i < 200; i++) {
        double a = -0.5 + i * 0.005, r = i < 100 ? 2.0 : 4.0;
        c.world[i] = lc_scale(lc_unit_angle(a), r);
        c.range[i] = r;
        c.bearing[i] = a;
    }
    c.n = 200;
    c.ordered = true;
    c.angle_step = 0.005;
    lc_segment_config cfg;
    lc_segment_config_default(&cfg);
    cfg.split_width = 10; /* only the breakpoint can separate them */
    cfg.max_piece = 1000;
    lc_segment_ws ws = {0};
    assert_int_equal(lc_segment(&c, &cfg, &ws), 2);
    assert_int_equal(ws.piece_count[0], 100);
    assert_int_equal(ws.piece_count[1], 100);
    lc_segment_ws_free(&ws);
    lc_cloud_free(&c);
}

/* Two returns 9 degrees apart with the beams between them empty: the
 * Borges-Aldon threshold alone grows without bound as dphi nears lambda and
 * would link them; the empty beams saw through the gap, so they break. */
static void test_empty_beams_break(void **state)
{
    lc_cloud c;
    alloc_cloud(&c, 2);
    double step = 0.25 * LC_PI / 180.0;
    c.world[0] = lc_scale(lc_unit_angle(0), 10.0);
    c.world[1] = lc_scale(lc_unit_angle(36 * step), 12.0);
    c.range[0] = 10.0;
    c.range[1] = 12.0;
    c.bearing[0] = 0;
    c.bearing[1] = 36 * step;
    c.n = 2;
    c.ordered = true;
    c.angle_step = step;
    lc_segment_config cfg;
    lc_segment_config_default(&cfg);
    assert_true(lc_breakpoint_threshold(10.0, 36 * step, cfg.lambda, cfg.sigma_r) >
                lc_dist(c.world[0], c.world[1]));
    lc_segment_ws ws = {0};
    assert_int_equal(lc_segment(&c, &cfg, &ws), 2);
    lc_segment_ws_free(&ws);
    lc_cloud_free(&c);
}

static void test_degenerate(void **state)
{
    lc_cloud c;
    alloc_cloud(&c, 50);
    lc_segment_config cfg;
    lc_segment_config_default(&cfg);
    lc_segment_ws ws = {0};
    for (int ordered = 0; ordered < 2; ordered++) {
        c.ordered = ordered;
        c.n = 0;
        assert_int_equal(lc_segment(&c, &cfg, &ws), 0);
        c.n = 1;
        c.world[0] = lc_v2(1, 1);
        c.range[0] = 1.4;
        assert_int_equal(lc_segment(&c, &cfg, &ws), 1);
        /* 50 duplicates: one piece (ordered: pieces of at most max_piece) */
        for (int i = 0; i < 50; i++) {
            c.world[i] = lc_v2(2, 2);
            c.range[i] = 2.8;
            c.bearing[i] = 0.785 + 1e-4 * i;
        }
        c.n = 50;
        int n = lc_segment(&c, &cfg, &ws);
        assert_true(n >= 1);
        assert_covered(&c, &ws);
        /* collinear: a straight wall stays thin */
        for (int i = 0; i < 50; i++)
            c.world[i] = lc_v2(2, -1 + 0.04 * i);
        n = lc_segment(&c, &cfg, &ws);
        assert_true(n >= 1);
        assert_thin(&c, &ws, cfg.split_width);
        assert_covered(&c, &ws);
    }
    lc_segment_ws_free(&ws);
    lc_cloud_free(&c);
}

/* Unordered points: random blobs and arcs, seeded. Clusters never link
 * points farther than cluster_dist apart... and each piece is thin. */
static void test_unordered_random(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 42);
    lc_cloud c;
    alloc_cloud(&c, 2000);
    lc_segment_config cfg;
    lc_segment_config_default(&cfg);
    lc_segment_ws ws = {0};
    for (int trial = 0; trial < 100; trial++) {
        int n = 1 + (int)lc_rng_uniform(&rng, 0, 1999);
        int blobs = 1 + (int)lc_rng_uniform(&rng, 0, 8);
        for (int i = 0; i < n; i++) {
            int b = i % blobs;
            lc_vec2 centre = lc_v2(3.0 * b, 2.0 * (b % 3));
            double a = lc_rng_uniform(&rng, 0, 2 * LC_PI), rr = lc_rng_uniform(&rng, 0.2, 0.6);
            c.world[i] = lc_add(centre, lc_scale(lc_unit_angle(a), rr));
        }
        c.n = n;
        c.ordered = false;
        int np = lc_segment(&c, &cfg, &ws);
        assert_true(np >= 1);
        /* unordered pieces partition the points */
        int total = 0;
        for (int k = 0; k < np; k++)
            total += ws.piece_count[k];
        assert_int_equal(total, n);
        assert_covered(&c, &ws);
        assert_thin(&c, &ws, cfg.split_width);
    }
    lc_segment_ws_free(&ws);
    lc_cloud_free(&c);
}

static void test_no_alloc_when_warm(void **state)
{
    lc_vec2 pl[3] = {{3, -2}, {3, 3}, {-2, 3}};
    lc_cloud c;
    alloc_cloud(&c, 1081);
    polyline_scan(&c, pl, 3, -0.6, 2.2, 1081);
    lc_segment_config cfg;
    lc_segment_config_default(&cfg);
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_segment_ws ws;
    lc_segment_ws_init(&ws, &ca.alloc);
    for (int ordered = 1; ordered >= 0; ordered--) {
        c.ordered = ordered;
        lc_segment(&c, &cfg, &ws);
        long before = ca.calls;
        for (int k = 0; k < 5; k++)
            lc_segment(&c, &cfg, &ws);
        assert_int_equal(ca.calls, before);
    }
    lc_segment_ws_free(&ws);
    assert_int_equal(ca.live, 0);
    lc_cloud_free(&c);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_breakpoint_check_values),
        cmocka_unit_test(test_room_corner_split),
        cmocka_unit_test(test_depth_jump_breaks),
        cmocka_unit_test(test_empty_beams_break),
        cmocka_unit_test(test_degenerate),
        cmocka_unit_test(test_unordered_random),
        cmocka_unit_test(test_no_alloc_when_warm),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
