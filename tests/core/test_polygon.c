/*
 * test_polygon.c - polygon primitives of region inflation
 * (src/core/polygon.c) against GEOS (libgeos) distances and nearest points
 * on random convex polygons (fixed seeds), and degenerate input: a point, a
 * segment, a zero-length segment, touching, crossing without an end inside,
 * the origin on a vertex, on an edge and inside.
 */
#include "testutil.h"

#include "geos_oracle.h"
#include "lc_config.h"
#include "polygon.h"

enum { MAXV = 64 };

static lc_vec2 random_point(lc_rng *g, double r)
{
    double x = lc_rng_uniform(g, -r, r);
    return lc_v2(x, lc_rng_uniform(g, -r, r));
}

static void test_segment_distance_against_geos(void **state)
{
#if !LC_HAVE_GEOS
    skip();
#else
    lc_rng g;
    lc_rng_seed(&g, 9001);
    int met = 0;
    for (int t = 0; t < 2000; t++) {
        lc_vec2 v[MAXV], s[2];
        s[0] = random_point(&g, 4);
        s[1] = random_point(&g, 4);
        int n = 1 + (int)(lc_rng_next(&g) % 12); /* points and segments too */
        lc_vec2 c = random_point(&g, 2);
        lc_test_random_convex(&g, c, lc_rng_uniform(&g, 0.1, 2.0), n, v);
        double d = lc_segment_polygon_distance(s[0], s[1], v, n);
        double want = oracle_distance(s, 2, v, n);
        assert_near(d, want, 1e-12 * (1.0 + want));
        met += want == 0.0;
    }
    assert_true(met > 100); /* meeting pairs were drawn too */
#endif
}

static void test_segment_distance_degenerate(void **state)
{
    lc_vec2 sq[4] = {{0, 0}, {1, 0}, {1, 1}, {0, 1}};
    /* crossing with both ends outside */
    assert_near(lc_segment_polygon_distance(lc_v2(-1, 0.5), lc_v2(2, 0.5), sq, 4), 0.0, 0.0);
    /* touching a vertex, and an edge end on */
    assert_near(lc_segment_polygon_distance(lc_v2(1, 1), lc_v2(2, 2), sq, 4), 0.0, 0.0);
    assert_near(lc_segment_polygon_distance(lc_v2(-1, 1), lc_v2(-1, 2), sq, 4), 1.0, 1e-15);
    /* a segment of zero length is a point */
    assert_near(lc_segment_polygon_distance(lc_v2(3, 0.5), lc_v2(3, 0.5), sq, 4), 2.0, 1e-15);
    assert_near(lc_segment_polygon_distance(lc_v2(0.5, 0.5), lc_v2(0.5, 0.5), sq, 4), 0.0, 0.0);
    /* the polygon a point, a segment */
    lc_vec2 pt[1] = {{2, 0}}, seg[2] = {{0, 1}, {0, 3}};
    assert_near(lc_segment_polygon_distance(lc_v2(0, 0), lc_v2(1, 0), pt, 1), 1.0, 1e-15);
    assert_near(lc_segment_polygon_distance(lc_v2(-1, 2), lc_v2(1, 2), seg, 2), 0.0, 0.0);
    assert_near(lc_segment_polygon_distance(lc_v2(-1, 0), lc_v2(1, 0), seg, 2), 1.0, 1e-15);
    /* parallel to an edge, collinear with it beyond its end */
    assert_near(lc_segment_polygon_distance(lc_v2(2, 0), lc_v2(3, 0), sq, 4), 1.0, 1e-15);
}

static void test_nearest_origin_against_geos(void **state)
{
#if !LC_HAVE_GEOS
    skip();
#else
    lc_rng g;
    lc_rng_seed(&g, 31337);
    int inside = 0;
    for (int t = 0; t < 2000; t++) {
        lc_vec2 v[MAXV];
        int n = 3 + (int)(lc_rng_next(&g) % 20);
        lc_vec2 c = random_point(&g, 3);
        lc_test_random_convex(&g, c, lc_rng_uniform(&g, 0.1, 2.5), n, v);
        lc_vec2 p = lc_polygon_nearest_origin(v, n), want = oracle_nearest(v, n, lc_v2(0, 0));
        assert_near(p.x, want.x, 1e-12);
        assert_near(p.y, want.y, 1e-12);
        inside += p.x == 0.0 && p.y == 0.0;
    }
    assert_true(inside > 50);
#endif
}

static void test_nearest_origin_degenerate(void **state)
{
    /* the origin inside, on a vertex, on an edge */
    lc_vec2 a[3] = {{-1, -1}, {2, -1}, {-1, 2}};
    lc_vec2 p = lc_polygon_nearest_origin(a, 3);
    assert_true(p.x == 0.0 && p.y == 0.0);
    lc_vec2 b[4] = {{0, 0}, {1, 0}, {1, 1}, {0, 1}};
    p = lc_polygon_nearest_origin(b, 4);
    assert_true(p.x == 0.0 && p.y == 0.0);
    lc_vec2 c[4] = {{-1, 0}, {1, 0}, {1, 1}, {-1, 1}};
    p = lc_polygon_nearest_origin(c, 4);
    assert_true(p.x == 0.0 && p.y == 0.0);
    /* a vertex nearest; the foot on an edge nearest */
    lc_vec2 d[3] = {{1, 1}, {2, 1}, {1, 2}};
    p = lc_polygon_nearest_origin(d, 3);
    assert_true(p.x == 1.0 && p.y == 1.0);
    lc_vec2 e[4] = {{2, -1}, {3, -1}, {3, 1}, {2, 1}};
    p = lc_polygon_nearest_origin(e, 4);
    assert_near(p.x, 2.0, 1e-15);
    assert_near(p.y, 0.0, 1e-15);
    /* far from the origin, thin */
    lc_vec2 f[3] = {{1e6, 0}, {1e6 + 1, 0}, {1e6 + 1, 1e-6}};
    p = lc_polygon_nearest_origin(f, 3);
    assert_true(p.x == 1e6 && p.y == 0.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_segment_distance_against_geos),
        cmocka_unit_test(test_segment_distance_degenerate),
        cmocka_unit_test(test_nearest_origin_against_geos),
        cmocka_unit_test(test_nearest_origin_degenerate),
    };
    return cmocka_run_group_tests(tests, lc_test_geos_setup, lc_test_geos_teardown);
}
