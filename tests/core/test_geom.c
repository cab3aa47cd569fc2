/*
 * test_geom.c - the small planar geometry every stage builds on (geom.h):
 * angle wrapping, distance to a segment, polygon area, convex containment
 * and distance, rigid poses.
 *
 * Outside checks: closed forms of plane geometry worked out by hand in the
 * comments (common practice), and GEOS (libgeos C API through
 * geos_oracle.h: GEOSDistance_r, GEOSNearestPoints_r, GEOSArea_r,
 * GEOSCovers_r) on random convex polygons at fixed seeds. Degenerate input:
 * no vertex, one, two, repeated and collinear vertices, NaN and infinite
 * values.
 */
#include "testutil.h"

#include <float.h>

#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif

#define MAXV 64

/* ---- helpers ---------------------------------------------------------------- */

static void assert_vec_near(lc_vec2 a, lc_vec2 b, double tol)
{
    assert_near(a.x, b.x, tol);
    assert_near(a.y, b.y, tol);
}

/* ---- lc_wrap_angle ------------------------------------------------------------ */

/* Closed forms: the result lies in (-pi, pi] and differs from the input by
 * a whole number of turns. */
static void test_wrap_angle_values(void **state)
{
    static const struct { double in, want; } cases[] = {
        {0.0, 0.0},
        {1.0, 1.0},
        {-1.0, -1.0},
        {LC_PI, LC_PI},           /* the upper end is in */
        {-LC_PI, LC_PI},          /* the lower end is not: it maps to +pi */
        {2 * LC_PI, 0.0},
        {-2 * LC_PI, 0.0},
        {LC_PI / 2 + 2 * LC_PI, LC_PI / 2},
        {-LC_PI / 2 - 4 * LC_PI, -LC_PI / 2},
        {3 * LC_PI / 2, -LC_PI / 2},
        {-3 * LC_PI / 2, LC_PI / 2},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++)
        assert_near(lc_wrap_angle(cases[i].in), cases[i].want, 1e-14);
    /* exactly representable ends: no roundoff allowed */
    assert_true(lc_wrap_angle(LC_PI) == LC_PI);
    assert_true(lc_wrap_angle(-LC_PI) == LC_PI);
    assert_true(lc_wrap_angle(2 * LC_PI) == 0.0);
}

static void test_wrap_angle_property(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 11);
    for (int k = 0; k < 20000; k++) {
        double scale = k % 3 == 0 ? 10.0 : (k % 3 == 1 ? 1e3 : 1e6);
        double a = lc_rng_uniform(&rng, -scale, scale), w = lc_wrap_angle(a);
        assert_true(w > -LC_PI && w <= LC_PI);
        /* the same direction: cos and sin agree up to the roundoff of a */
        double tol = 8 * DBL_EPSILON * fmax(1.0, fabs(a));
        assert_near(cos(w), cos(a), tol);
        assert_near(sin(w), sin(a), tol);
        /* a whole number of turns apart */
        double turns = (a - w) / (2 * LC_PI);
        assert_near(turns, round(turns), tol);
    }
}

static void test_wrap_angle_not_finite(void **state)
{
    assert_true(isnan(lc_wrap_angle(NAN)));
    assert_true(isnan(lc_wrap_angle(INFINITY)));
    assert_true(isnan(lc_wrap_angle(-INFINITY)));
}

/* ---- lc_segment_distance -------------------------------------------------------- */

/* Closed forms on the segment (0, 0)-(4, 0) and a slanted one. */
static void test_segment_distance_values(void **state)
{
    lc_vec2 a = lc_v2(0, 0), b = lc_v2(4, 0), c;
    /* above the middle: the foot of the perpendicular */
    assert_near(lc_segment_distance(lc_v2(1, 3), a, b, &c), 3.0, 1e-15);
    assert_vec_near(c, lc_v2(1, 0), 1e-15);
    /* beyond an end: the end, 3-4-5 triangle */
    assert_near(lc_segment_distance(lc_v2(7, 4), a, b, &c), 5.0, 1e-15);
    assert_vec_near(c, b, 0);
    assert_near(lc_segment_distance(lc_v2(-3, -4), a, b, &c), 5.0, 1e-15);
    assert_vec_near(c, a, 0);
    /* on the segment */
    assert_near(lc_segment_distance(lc_v2(2.5, 0), a, b, &c), 0.0, 0);
    assert_vec_near(c, lc_v2(2.5, 0), 1e-15);
    /* the slanted segment (1, 1)-(3, 3): (3, 1) is sqrt 2 from its middle */
    assert_near(lc_segment_distance(lc_v2(3, 1), lc_v2(1, 1), lc_v2(3, 3), &c), sqrt(2.0), 1e-15);
    assert_vec_near(c, lc_v2(2, 2), 1e-15);
    /* the same segment either way round, and no closest point wanted */
    assert_near(lc_segment_distance(lc_v2(3, 1), lc_v2(3, 3), lc_v2(1, 1), NULL), sqrt(2.0), 1e-15);
    /* the squared form agrees */
    assert_near(lc_segment_distance2(lc_v2(7, 4), a, b), 25.0, 1e-13);
    assert_near(lc_segment_distance2(lc_v2(1, 3), a, b), 9.0, 1e-13);
}

/* A segment of zero length is its point; NaN gives NaN, never a distance. */
static void test_segment_distance_degenerate(void **state)
{
    lc_vec2 p = lc_v2(2, 3), c;
    assert_near(lc_segment_distance(lc_v2(5, 7), p, p, &c), 5.0, 1e-15);
    assert_vec_near(c, p, 0);
    assert_near(lc_segment_distance2(lc_v2(5, 7), p, p), 25.0, 1e-13);
    assert_true(isnan(lc_segment_distance(lc_v2(NAN, 0), lc_v2(0, 0), lc_v2(1, 0), NULL)));
    assert_true(isnan(lc_segment_distance(lc_v2(0, 0), lc_v2(0, NAN), lc_v2(1, 0), NULL)));
    assert_true(isnan(lc_segment_distance2(lc_v2(NAN, 0), lc_v2(0, 0), lc_v2(1, 0))));
    /* an infinite coordinate never gives a finite distance (inf * 0 in the
     * projection makes it NaN) */
    assert_false(isfinite(lc_segment_distance(lc_v2(INFINITY, 0), lc_v2(0, 0), lc_v2(0, 1), NULL)));
}

/* ---- lc_polygon_area2 ------------------------------------------------------------- */

static void test_polygon_area_values(void **state)
{
    const lc_vec2 sq[4] = {{0, 0}, {1, 0}, {1, 1}, {0, 1}};
    const lc_vec2 sq_cw[4] = {{0, 0}, {0, 1}, {1, 1}, {1, 0}};
    const lc_vec2 tri[3] = {{0, 0}, {4, 0}, {0, 3}}; /* legs 4 and 3: area 6 */
    assert_near(lc_polygon_area2(sq, 4), 2.0, 0);
    assert_near(lc_polygon_area2(sq_cw, 4), -2.0, 0);
    assert_near(lc_polygon_area2(tri, 3), 12.0, 0);
    /* a regular n-gon of circumradius r: (n / 2) r^2 sin(2 pi / n) */
    for (int n = 3; n <= 40; n++) {
        lc_vec2 v[40];
        double r = 1.7;
        for (int i = 0; i < n; i++)
            v[i] = lc_add(lc_v2(-3, 5), lc_scale(lc_unit_angle(2 * LC_PI * i / n), r));
        assert_near(0.5 * lc_polygon_area2(v, n), 0.5 * n * r * r * sin(2 * LC_PI / n), 1e-13);
    }
    /* a non-convex (L-shaped) polygon: 2 x 2 less 1 x 1 */
    const lc_vec2 ell[6] = {{0, 0}, {2, 0}, {2, 1}, {1, 1}, {1, 2}, {0, 2}};
    assert_near(lc_polygon_area2(ell, 6), 6.0, 0);
}

/* No vertex, one, two, collinear and repeated ones span no area; NaN spreads. */
static void test_polygon_area_degenerate(void **state)
{
    const lc_vec2 v[4] = {{1, 1}, {2, 2}, {3, 3}, {1, 1}};
    assert_true(lc_polygon_area2(v, 0) == 0.0);
    assert_true(lc_polygon_area2(v, 1) == 0.0);
    assert_true(lc_polygon_area2(v, 2) == 0.0);
    assert_true(lc_polygon_area2(v, 3) == 0.0);
    assert_true(lc_polygon_area2(v, 4) == 0.0);
    const lc_vec2 rep[5] = {{0, 0}, {1, 0}, {1, 0}, {1, 1}, {0, 1}};
    assert_near(lc_polygon_area2(rep, 5), 2.0, 0);
    const lc_vec2 bad[3] = {{0, 0}, {NAN, 0}, {0, 1}};
    assert_true(isnan(lc_polygon_area2(bad, 3)));
}

/* ---- lc_convex_contains, lc_convex_distance ------------------------------------- */

/* The square [0, 2]^2: inside, on edges and corners, outside, with eps. */
static void test_convex_contains_values(void **state)
{
    const lc_vec2 sq[4] = {{0, 0}, {2, 0}, {2, 2}, {0, 2}};
    assert_true(lc_convex_contains(sq, 4, lc_v2(1, 1), 0));
    assert_true(lc_convex_contains(sq, 4, lc_v2(2, 1), 0));  /* on an edge */
    assert_true(lc_convex_contains(sq, 4, lc_v2(2, 2), 0));  /* a corner */
    assert_false(lc_convex_contains(sq, 4, lc_v2(2.001, 1), 0));
    assert_false(lc_convex_contains(sq, 4, lc_v2(-1, -1), 0));
    /* eps widens every edge by eps metres */
    assert_true(lc_convex_contains(sq, 4, lc_v2(2.001, 1), 0.002));
    assert_false(lc_convex_contains(sq, 4, lc_v2(2.003, 1), 0.002));
    assert_true(lc_convex_contains(sq, 4, lc_v2(1, -0.0015), 0.002));
    /* repeated and collinear vertices change nothing */
    const lc_vec2 messy[7] = {{0, 0}, {1, 0}, {2, 0}, {2, 0}, {2, 2}, {0, 2}, {0, 1}};
    assert_true(lc_convex_contains(messy, 7, lc_v2(1.5, 0.5), 0));
    assert_true(lc_convex_contains(messy, 7, lc_v2(1, 0), 0));
    assert_false(lc_convex_contains(messy, 7, lc_v2(1, -0.01), 0));
    assert_false(lc_convex_contains(messy, 7, lc_v2(2.5, 1), 0));
}

/* n = 0 holds nothing, n = 1 is a point, n = 2 a segment (geom.h). */
static void test_convex_contains_degenerate(void **state)
{
    const lc_vec2 p[2] = {{1, 1}, {3, 1}};
    assert_false(lc_convex_contains(p, 0, lc_v2(1, 1), 1.0));
    assert_true(lc_convex_contains(p, 1, lc_v2(1, 1), 0));
    assert_false(lc_convex_contains(p, 1, lc_v2(1, 1.2), 0.1));
    assert_true(lc_convex_contains(p, 1, lc_v2(1, 1.05), 0.1));
    assert_true(lc_convex_contains(p, 2, lc_v2(2, 1), 0));
    assert_true(lc_convex_contains(p, 2, lc_v2(2, 1.05), 0.1));
    assert_false(lc_convex_contains(p, 2, lc_v2(3.2, 1), 0.1));
    /* collinear vertices: a polygon of no area holds no point off its line */
    const lc_vec2 line[3] = {{0, 0}, {1, 0}, {2, 0}};
    assert_true(lc_convex_contains(line, 3, lc_v2(1.5, 0), 0));
    assert_false(lc_convex_contains(line, 3, lc_v2(1, 0.1), 0));
    assert_false(lc_convex_contains(line, 3, lc_v2(1, -0.1), 0));
    /* NaN points are in neither a point nor a segment */
    assert_false(lc_convex_contains(p, 1, lc_v2(NAN, 1), 0.1));
    assert_false(lc_convex_contains(p, 2, lc_v2(2, NAN), 0.1));
}

static void test_convex_distance_values(void **state)
{
    const lc_vec2 sq[4] = {{0, 0}, {2, 0}, {2, 2}, {0, 2}};
    lc_vec2 c;
    assert_near(lc_convex_distance(sq, 4, lc_v2(1, 1), &c), 0.0, 0);
    assert_vec_near(c, lc_v2(1, 1), 0); /* inside: the point itself */
    assert_near(lc_convex_distance(sq, 4, lc_v2(5, 1), &c), 3.0, 1e-15);
    assert_vec_near(c, lc_v2(2, 1), 1e-15);
    assert_near(lc_convex_distance(sq, 4, lc_v2(5, 6), &c), 5.0, 1e-15); /* 3-4-5 */
    assert_vec_near(c, lc_v2(2, 2), 1e-15);
    assert_near(lc_convex_distance(sq, 4, lc_v2(1, -0.5), NULL), 0.5, 1e-15);
    /* one vertex: the distance between two points; two: to a segment */
    assert_near(lc_convex_distance(sq, 1, lc_v2(3, 4), &c), 5.0, 1e-15);
    assert_vec_near(c, sq[0], 0);
    assert_near(lc_convex_distance(sq, 2, lc_v2(1, -2), &c), 2.0, 1e-15);
    assert_vec_near(c, lc_v2(1, 0), 1e-15);
    assert_near(lc_convex_distance(sq, 2, lc_v2(1, 0), NULL), 0.0, 0);
}

/* ---- against GEOS ---------------------------------------------------------------- */

#if LC_HAVE_GEOS

/*
 * A random strictly convex CCW polygon of n vertices (3 <= n <= MAXV): points
 * of an ellipse at increasing angles (any such points are in convex
 * position), the ellipse turned by a random angle and moved by off.
 */
static int random_convex(lc_rng *rng, lc_vec2 *v, int n, lc_vec2 off)
{
    double ang[MAXV];
    for (int i = 0; i < n; i++)
        ang[i] = 2 * LC_PI * (i + lc_rng_uniform(rng, 0.05, 0.95)) / n;
    double ax = lc_rng_uniform(rng, 0.2, 4.0), ay = lc_rng_uniform(rng, 0.2, 4.0);
    double turn = lc_rng_uniform(rng, -LC_PI, LC_PI);
    for (int i = 0; i < n; i++)
        v[i] = lc_add(off, lc_rotate(lc_v2(ax * cos(ang[i]), ay * sin(ang[i])), turn));
    return n;
}

/* 300 random convex polygons (3 to 40 vertices, near and far from the
 * origin): area against GEOSArea_r, distance and closest point against
 * GEOSDistance_r and GEOSNearestPoints_r, containment against GEOSCovers_r
 * for points that are not within roundoff of the boundary. */
static void test_convex_against_geos(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 2718);
    lc_vec2 v[MAXV];
    int inside = 0, outside = 0;
    for (int rep = 0; rep < 300; rep++) {
        lc_vec2 off = rep % 4 == 3 ? lc_v2(1e4, -3e4)
                                   : lc_v2(lc_rng_uniform(&rng, -50, 50), lc_rng_uniform(&rng, -50, 50));
        int n = random_convex(&rng, v, 3 + (int)(lc_rng_next(&rng) % 38), off);
        double mag = fmax(fabs(off.x), fabs(off.y)) + 5;
        double area = 0.5 * lc_polygon_area2(v, n);
        assert_true(area > 0); /* CCW */
        assert_near(area, oracle_polygon_area(v, n), 1e-12 * mag * mag);
        for (int k = 0; k < 40; k++) {
            lc_vec2 p = lc_add(off, lc_v2(lc_rng_uniform(&rng, -6, 6), lc_rng_uniform(&rng, -6, 6)));
            double tol = 64 * DBL_EPSILON * mag;
            lc_vec2 c;
            double d = lc_convex_distance(v, n, p, &c);
            assert_near(d, oracle_point_distance(v, n, p), tol);
            /* the boundary's distance: GEOS's distance to each edge */
            double edge = INFINITY;
            for (int i = 0; i < n; i++) {
                lc_vec2 e[2] = {v[i], v[(i + 1) % n]};
                edge = fmin(edge, oracle_point_distance(e, 2, p));
            }
            if (edge > 1e-9 * mag) {
                bool in = oracle_covers(v, n, p);
                assert_int_equal(lc_convex_contains(v, n, p, 0), in);
                inside += in;
                outside += !in;
                if (!in) { /* the nearest point is unique outside a convex set */
                    assert_vec_near(c, oracle_nearest(v, n, p), tol);
                    assert_near(lc_dist(c, p), d, tol);
                }
            }
        }
    }
    /* both sides were exercised */
    print_message("%d points inside, %d outside\n", inside, outside);
    assert_true(inside > 500 && outside > 500);
}

/* Segments: lc_segment_distance and its closest point against GEOS on a
 * line string of two points, 5000 random cases at fixed seeds. */
static void test_segment_against_geos(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 1414);
    for (int k = 0; k < 5000; k++) {
        lc_vec2 s[2] = {{lc_rng_uniform(&rng, -5, 5), lc_rng_uniform(&rng, -5, 5)},
                        {lc_rng_uniform(&rng, -5, 5), lc_rng_uniform(&rng, -5, 5)}};
        if (k % 50 == 0)
            s[1] = s[0]; /* zero length: GEOS sees a point */
        lc_vec2 p = lc_v2(lc_rng_uniform(&rng, -8, 8), lc_rng_uniform(&rng, -8, 8)), c;
        int m = k % 50 == 0 ? 1 : 2;
        double d = lc_segment_distance(p, s[0], s[1], &c);
        assert_near(d, oracle_point_distance(s, m, p), 1e-13);
        assert_vec_near(c, oracle_nearest(s, m, p), 1e-12);
        assert_near(lc_segment_distance2(p, s[0], s[1]), d * d, 1e-12);
    }
}

#endif

/* ---- poses --------------------------------------------------------------------- */

/* By hand: a pose at (1, 2) turned by +90 degrees maps its x axis onto the
 * parent's y axis. */
static void test_pose_values(void **state)
{
    lc_pose a = {1, 2, LC_PI / 2}, b = {1, 0, LC_PI / 2};
    assert_vec_near(lc_pose_apply(a, lc_v2(1, 0)), lc_v2(1, 3), 1e-15);
    assert_vec_near(lc_pose_apply(a, lc_v2(0, 1)), lc_v2(0, 2), 1e-15);
    assert_vec_near(lc_pose_inverse_apply(a, lc_v2(1, 3)), lc_v2(1, 0), 1e-15);
    /* b's origin is a's (1, 0), i.e. the parent's (1, 3); its heading pi */
    lc_pose ab = lc_pose_compose(a, b);
    assert_near(ab.x, 1, 1e-15);
    assert_near(ab.y, 3, 1e-15);
    assert_near(ab.yaw, LC_PI, 1e-15);
    /* the identity pose changes nothing */
    lc_pose id = {0, 0, 0};
    assert_vec_near(lc_pose_apply(id, lc_v2(-4, 9)), lc_v2(-4, 9), 0);
    lc_pose ida = lc_pose_compose(id, a);
    assert_true(ida.x == a.x && ida.y == a.y && ida.yaw == a.yaw);
    /* the heading of a composition is the plain sum (not wrapped) */
    lc_pose turned = lc_pose_compose((lc_pose){0, 0, 3}, (lc_pose){0, 0, 3});
    assert_near(turned.yaw, 6, 0);
}

/* Random poses and points: composing then applying is applying twice, the
 * inverse undoes, distances are kept (rigid motions). */
static void test_pose_properties(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 31415);
    for (int k = 0; k < 5000; k++) {
        lc_pose a = {lc_rng_uniform(&rng, -20, 20), lc_rng_uniform(&rng, -20, 20),
                     lc_rng_uniform(&rng, -7, 7)};
        lc_pose b = {lc_rng_uniform(&rng, -5, 5), lc_rng_uniform(&rng, -5, 5),
                     lc_rng_uniform(&rng, -7, 7)};
        lc_vec2 p = lc_v2(lc_rng_uniform(&rng, -10, 10), lc_rng_uniform(&rng, -10, 10));
        lc_vec2 q = lc_v2(lc_rng_uniform(&rng, -10, 10), lc_rng_uniform(&rng, -10, 10));
        assert_vec_near(lc_pose_apply(lc_pose_compose(a, b), p),
                        lc_pose_apply(a, lc_pose_apply(b, p)), 1e-12);
        assert_vec_near(lc_pose_inverse_apply(a, lc_pose_apply(a, p)), p, 1e-12);
        assert_vec_near(lc_pose_apply(a, lc_pose_inverse_apply(a, p)), p, 1e-12);
        assert_near(lc_dist(lc_pose_apply(a, p), lc_pose_apply(a, q)), lc_dist(p, q), 1e-12);
        /* the inverse pose, (-R^T t, -yaw), composes to the identity */
        lc_vec2 t = lc_rotate(lc_v2(-a.x, -a.y), -a.yaw);
        lc_pose inv = {t.x, t.y, -a.yaw}, id = lc_pose_compose(a, inv);
        assert_near(id.x, 0, 1e-12);
        assert_near(id.y, 0, 1e-12);
        assert_near(id.yaw, 0, 1e-15);
        /* the closed form p_parent = R(yaw) p + (x, y) */
        lc_vec2 want = lc_v2(cos(a.yaw) * p.x - sin(a.yaw) * p.y + a.x,
                             sin(a.yaw) * p.x + cos(a.yaw) * p.y + a.y);
        assert_vec_near(lc_pose_apply(a, p), want, 1e-12);
    }
}

/* NaN in a pose reaches every coordinate it touches. */
static void test_pose_not_finite(void **state)
{
    lc_vec2 r = lc_pose_apply((lc_pose){0, 0, NAN}, lc_v2(1, 0));
    assert_true(isnan(r.x) && isnan(r.y));
    r = lc_pose_apply((lc_pose){NAN, 0, 0}, lc_v2(1, 0));
    assert_true(isnan(r.x) && r.y == 0);
    assert_false(lc_vec2_finite(lc_pose_inverse_apply((lc_pose){0, INFINITY, 0}, lc_v2(1, 1))));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_wrap_angle_values),
        cmocka_unit_test(test_wrap_angle_property),
        cmocka_unit_test(test_wrap_angle_not_finite),
        cmocka_unit_test(test_segment_distance_values),
        cmocka_unit_test(test_segment_distance_degenerate),
        cmocka_unit_test(test_polygon_area_values),
        cmocka_unit_test(test_polygon_area_degenerate),
        cmocka_unit_test(test_convex_contains_values),
        cmocka_unit_test(test_convex_contains_degenerate),
        cmocka_unit_test(test_convex_distance_values),
        LC_GEOS_TEST(test_convex_against_geos),
        LC_GEOS_TEST(test_segment_against_geos),
        cmocka_unit_test(test_pose_values),
        cmocka_unit_test(test_pose_properties),
        cmocka_unit_test(test_pose_not_finite),
    };
    return LC_RUN_TESTS(tests, NULL, lc_test_geos_teardown);
}
