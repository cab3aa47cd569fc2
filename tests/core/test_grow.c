/*
 * test_grow.c - outer arc approximation of the Minkowski sum with a disc.
 *
 * Outside checks:
 * - GEOS (libgeos C API through geos_oracle.h): point-to-polygon distance
 *   (GEOSDistance_r), containment (GEOSCovers_r), polygon area (GEOSArea_r).
 * - Steiner's formula for the area of a convex body's parallel body:
 *   area(P + rD) = area(P) + perimeter(P) r + pi r^2.
 * - The regular n-gon circumscribed about a circle of radius r has area
 *   n r^2 tan(pi / n) and circumradius r / cos(pi / n) (handbook closed
 *   forms), and cos(pi/16) = sqrt(2 + sqrt(2 + sqrt 2)) / 2 (half-angle
 *   formula).
 * Property used: the distance to a convex set is a convex function, so over a
 * convex polygon it is largest at a vertex; the vertices' distances bound the
 * Hausdorff excess of the whole grown polygon over the exact sum.
 */
#include "testutil.h"

#include <float.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "grow.h"
#include "lc_config.h"
#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif

#define MAXV 4096

#if LC_HAVE_GEOS

static double perimeter(const lc_vec2 *v, int n)
{
    if (n == 1)
        return 0;
    double s = 0;
    for (int i = 0; i < n; i++)
        s += lc_dist(v[i], v[(i + 1) % n]);
    return s; /* a segment counts both sides: 2 L, as Steiner's formula wants */
}

/* Twice the signed area about v[0]. */
static double area2_local(const lc_vec2 *v, int n)
{
    double s = 0;
    for (int i = 1; i + 1 < n; i++)
        s += lc_cross(lc_sub(v[i], v[0]), lc_sub(v[i + 1], v[0]));
    return s;
}

/* Steiner's formula. */
static double exact_sum_area(const lc_vec2 *v, int n, double r)
{
    double a = n >= 3 ? 0.5 * area2_local(v, n) : 0.0;
    return a + perimeter(v, n) * r + LC_PI * r * r;
}

static void scales(const lc_vec2 *v, int n, double *diag, double *mag)
{
    lc_vec2 lo = v[0], hi = v[0];
    *mag = 0;
    for (int i = 0; i < n; i++) {
        lo = lc_v2(fmin(lo.x, v[i].x), fmin(lo.y, v[i].y));
        hi = lc_v2(fmax(hi.x, v[i].x), fmax(hi.y, v[i].y));
        *mag = fmax(*mag, fmax(fabs(v[i].x), fabs(v[i].y)));
    }
    *diag = lc_dist(lo, hi);
}

static void assert_ccw_convex(const lc_vec2 *h, int k, double tol)
{
    assert_true(k >= 3);
    assert_true(area2_local(h, k) > 0);
    for (int i = 0; i < k; i++) {
        lc_vec2 a = h[i], b = h[(i + 1) % k], c = h[(i + 2) % k];
        double e1 = lc_dist(a, b), e2 = lc_dist(b, c);
        assert_true(lc_cross(lc_sub(b, a), lc_sub(c, b)) >= -tol * (e1 + e2));
    }
}

static int grow(const lc_vec2 *p, int n, double r, double step, lc_vec2 *out)
{
    int cap = lc_grow_max_vertices(n, step);
    assert_true(cap > 0 && cap <= MAXV);
    int m = lc_grow_polygon(p, n, r, step, out, cap);
    assert_true(m >= 3 && m <= cap);
    return m;
}

/* Points within r of p (GEOS distance) must be covered by g (GEOS covers). */
static void assert_covers_within_r(const lc_vec2 *p, int n, double r, const lc_vec2 *g, int m,
                                   lc_rng *rng, int samples)
{
    double diag, mag;
    scales(p, n, &diag, &mag);
    lc_vec2 lo = p[0], hi = p[0];
    for (int i = 0; i < n; i++) {
        lo = lc_v2(fmin(lo.x, p[i].x), fmin(lo.y, p[i].y));
        hi = lc_v2(fmax(hi.x, p[i].x), fmax(hi.y, p[i].y));
    }
    /* closer than this to the exact boundary, roundoff of the coordinates
     * themselves decides (1e6 m from the origin one ulp is 1e-10 m) */
    double margin = 1e-9 * r + 64 * DBL_EPSILON * mag;
    int inside = 0;
    for (int s = 0; s < samples; s++) {
        lc_vec2 q = lc_v2(lc_rng_uniform(rng, lo.x - 1.2 * r, hi.x + 1.2 * r),
                          lc_rng_uniform(rng, lo.y - 1.2 * r, hi.y + 1.2 * r));
        double d = oracle_point_distance(p, n, q);
        if (d > r - margin)
            continue;
        inside++;
        assert_true(oracle_covers(g, m, q));
    }
    assert_true(inside > 0);
    /* Right at the boundary, where the approximation touches the exact sum:
     * at distance r - margin from every vertex in 24 directions, and from
     * every edge midpoint along its outward normal. */
    for (int i = 0; i < n; i++) {
        for (int j = 0; j < 24; j++) {
            lc_vec2 q = lc_add(p[i], lc_scale(lc_unit_angle(2 * LC_PI * j / 24), r - margin));
            assert_true(oracle_covers(g, m, q));
        }
        if (n >= 2) {
            lc_vec2 a = p[i], b = p[(i + 1) % n], e = lc_sub(b, a);
            if (lc_len(e) == 0)
                continue;
            lc_vec2 nrm = lc_scale(lc_v2(e.y, -e.x), 1 / lc_len(e));
            lc_vec2 q = lc_add(lc_lerp(a, b, 0.5), lc_scale(nrm, r - margin));
            assert_true(oracle_covers(g, m, q));
        }
    }
}

/*
 * The properties every grown polygon has: convex CCW, within the vertex
 * bound, every vertex between r and r / cos(step / 2) from p (so the excess
 * over the exact sum is at most lc_grow_excess_bound), area between Steiner's
 * exact value and what the step bound allows.
 */
static void check_grown(const lc_vec2 *p, int n, double r, double step, const lc_vec2 *g, int m,
                        lc_rng *rng, int samples)
{
    double diag, mag;
    scales(p, n, &diag, &mag);
    double eps = 1e-11 * (r + diag) + 32 * DBL_EPSILON * mag;
    assert_true(m <= lc_grow_max_vertices(n, step));
    assert_ccw_convex(g, m, 1e-12);
    double bound = lc_grow_excess_bound(r, step);
    for (int i = 0; i < m; i++) {
        double d = oracle_point_distance(p, n, g[i]);
        assert_true(d >= r - eps);
        assert_true(d - r <= bound + eps);
    }
    /* per corner the circumscribed pieces add r^2 (sum m tan(phi/2) - pi);
     * tan(x)/x grows, so with phi <= step that is at most
     * pi r^2 (2 tan(step/2) / step - 1) */
    double exact = exact_sum_area(p, n, r), area = oracle_polygon_area(g, m);
    double atol = 1e-9 * exact + 1e-6 * eps * (diag + r);
    assert_true(area >= exact - atol);
    assert_true(area - exact <= LC_PI * r * r * (2 * tan(step / 2) / step - 1) + atol);
    if (samples > 0)
        assert_covers_within_r(p, n, r, g, m, rng, samples);
}

/* Random convex CCW polygon: GEOS's hull of random points, reversed (GEOS
 * rings are clockwise). */
static int random_convex(lc_rng *rng, lc_vec2 *p, lc_vec2 off, double size)
{
    lc_vec2 pts[40], h[40];
    int np = 3 + (int)(lc_rng_next(rng) % 38);
    for (int i = 0; i < np; i++)
        pts[i] = lc_add(off, lc_v2(lc_rng_uniform(rng, 0, size), lc_rng_uniform(rng, 0, 0.5 * size)));
    double a;
    int k = oracle_convex_hull(pts, np, h, 40, &a);
    for (int i = 0; i < k; i++)
        p[i] = h[k - 1 - i];
    return k;
}

static void test_random_convex_polygons(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 2024);
    static lc_vec2 p[64], g[MAXV];
    const double steps[] = {LC_PI / 2, LC_PI / 4, LC_GROW_DEFAULT_STEP, 0.1, 0.03};
    int polys = 0;
    for (int rep = 0; rep < 250; rep++) {
        lc_vec2 off = lc_v2(lc_rng_uniform(&rng, -100, 100), lc_rng_uniform(&rng, -100, 100));
        int n = random_convex(&rng, p, off, lc_rng_uniform(&rng, 0.01, 3));
        if (n < 3)
            continue;
        double r = lc_rng_uniform(&rng, 0.01, 1.0), step = steps[rep % 5];
        int m = grow(p, n, r, step, g);
        check_grown(p, n, r, step, g, m, &rng, 60);
        polys++;
    }
    assert_true(polys > 200);
}

/* Random triangles, some very thin, some far from the origin. */
static void test_triangles(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 31);
    lc_vec2 p[3], g[MAXV];
    for (int rep = 0; rep < 150; rep++) {
        lc_vec2 off = rep % 3 == 0 ? lc_v2(1e6, -2e6) : lc_v2(0, 0);
        for (int i = 0; i < 3; i++)
            p[i] = lc_add(off, lc_v2(lc_rng_uniform(&rng, -1, 1), lc_rng_uniform(&rng, -1, 1)));
        if (rep % 5 == 1) /* a sliver: the third vertex 1e-7 off the first edge */
            p[2] = lc_add(lc_lerp(p[0], p[1], 0.3),
                          lc_scale(lc_perp(lc_sub(p[1], p[0])), 1e-7));
        if (area2_local(p, 3) < 0) {
            lc_vec2 t = p[1];
            p[1] = p[2];
            p[2] = t;
        }
        double r = lc_rng_uniform(&rng, 0.05, 0.5);
        int m = grow(p, 3, r, LC_GROW_DEFAULT_STEP, g);
        check_grown(p, 3, r, LC_GROW_DEFAULT_STEP, g, m, &rng, 40);
    }
}

/* A point: the regular 16-gon circumscribed about the circle (default step),
 * area 16 r^2 tan(pi/16), circumradius r / cos(pi/16). */
static void test_point(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 3);
    lc_vec2 p = lc_v2(2.5, -1), g[MAXV];
    double r = 0.35;
    int m = grow(&p, 1, r, LC_GROW_DEFAULT_STEP, g);
    assert_int_equal(m, 16);
    assert_near(oracle_polygon_area(g, m), 16 * r * r * tan(LC_PI / 16), 1e-13);
    for (int i = 0; i < m; i++)
        assert_near(lc_dist(g[i], p), r / cos(LC_PI / 16), 1e-14);
    check_grown(&p, 1, r, LC_GROW_DEFAULT_STEP, g, m, &rng, 300);
    /* step pi/2: the circumscribed square, area 4 r^2 */
    m = grow(&p, 1, r, LC_PI / 2, g);
    assert_int_equal(m, 4);
    assert_near(oracle_polygon_area(g, m), 4 * r * r, 1e-14);
    /* repeated copies of one point are the same point */
    lc_vec2 q[4] = {p, p, p, p};
    m = grow(q, 4, r, LC_GROW_DEFAULT_STEP, g);
    assert_int_equal(m, 16);
    assert_near(oracle_polygon_area(g, m), 16 * r * r * tan(LC_PI / 16), 1e-13);
}

/* A segment of length L: two half 16-gons and two offset edges, area
 * 2 L r + 16 r^2 tan(pi/16) (the circumscribed 16-gon cut in two). */
static void test_segment(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 4);
    lc_vec2 g[MAXV];
    const lc_vec2 s[2] = {{1, 1}, {4, 5}};
    double r = 0.4, L = 5;
    int m = grow(s, 2, r, LC_GROW_DEFAULT_STEP, g);
    assert_int_equal(m, 16);
    assert_near(oracle_polygon_area(g, m), 2 * L * r + 16 * r * r * tan(LC_PI / 16), 1e-12);
    check_grown(s, 2, r, LC_GROW_DEFAULT_STEP, g, m, &rng, 300);
    /* the same segment with repeated and collinear vertices */
    const lc_vec2 t[6] = {{1, 1}, {1, 1}, {2.5, 3}, {4, 5}, {4, 5}, {2.5, 3}};
    int m2 = grow(t, 6, r, LC_GROW_DEFAULT_STEP, g);
    assert_int_equal(m2, 16);
    assert_near(oracle_polygon_area(g, m2), 2 * L * r + 16 * r * r * tan(LC_PI / 16), 1e-12);
    check_grown(t, 6, r, LC_GROW_DEFAULT_STEP, g, m2, &rng, 100);
}

/* A square's corners are quarter arcs: 4 steps of pi/8 each, so the area is
 * exactly a^2 + 4 a r + 16 r^2 tan(pi/16); repeated and collinear vertices
 * change nothing. */
static void test_square_with_repeats(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 5);
    lc_vec2 g[MAXV];
    const lc_vec2 sq[4] = {{0, 0}, {2, 0}, {2, 2}, {0, 2}};
    const lc_vec2 messy[9] = {{0, 0}, {1, 0}, {2, 0}, {2, 0}, {2, 2}, {1, 2}, {0, 2}, {0, 1}, {0, 0}};
    double r = 0.3, want = 4 + 8 * r + 16 * r * r * tan(LC_PI / 16);
    int m = grow(sq, 4, r, LC_GROW_DEFAULT_STEP, g);
    assert_int_equal(m, 16);
    assert_near(oracle_polygon_area(g, m), want, 1e-12);
    int m2 = grow(messy, 9, r, LC_GROW_DEFAULT_STEP, g);
    assert_int_equal(m2, 16);
    assert_near(oracle_polygon_area(g, m2), want, 1e-12);
    check_grown(messy, 9, r, LC_GROW_DEFAULT_STEP, g, m2, &rng, 200);
}

/* A vertex repeated up to roundoff (1e-13 m apart, below the module's
 * 1e-12-relative repeat length) is skipped; the result must still cover
 * points 1e-14 m inside the exact sum along the edge before it (GEOS covers;
 * the exact sum's boundary there is the line y = -r). */
static void test_near_repeat_stays_conservative(void **state)
{
    (void)state;
    lc_vec2 g[MAXV];
    const lc_vec2 sq[5] = {{0, 0}, {2, 0}, {2, 1e-13}, {2, 2}, {0, 2}};
    double r = 0.5;
    int m = grow(sq, 5, r, LC_GROW_DEFAULT_STEP, g);
    for (int i = 1; i < 20; i++) {
        lc_vec2 q = lc_v2(0.1 * i, -r + 1e-14);
        assert_true(oracle_point_distance(sq, 5, q) < r);
        assert_true(oracle_covers(g, m, q));
    }
}
#endif

/* cos(pi/16) by the half-angle formula: 1/cos - 1 = 0.0195911582... */
static void test_excess_bound_closed_form(void **state)
{
    (void)state;
    double c16 = sqrt(2 + sqrt(2 + sqrt(2.0))) / 2;
    assert_near(lc_grow_excess_bound(0.35, LC_GROW_DEFAULT_STEP), 0.35 * (1 / c16 - 1), 1e-15);
    assert_near(lc_grow_excess_bound(1.0, LC_PI / 2), sqrt(2.0) - 1, 1e-15);
    assert_int_equal(lc_grow_max_vertices(1, LC_GROW_DEFAULT_STEP), 17);
    assert_int_equal(lc_grow_max_vertices(0, LC_GROW_DEFAULT_STEP), 0);
    assert_int_equal(lc_grow_max_vertices(5, 0), 0);
    assert_int_equal(lc_grow_max_vertices(5, 2.0), 0);
    assert_int_equal(lc_grow_max_vertices(5, NAN), 0);
    assert_int_equal(lc_grow_max_vertices(5, 1e-300), 0);
}

static void test_rejects_bad_input(void **state)
{
    (void)state;
    lc_vec2 g[MAXV];
    const lc_vec2 tri[3] = {{0, 0}, {1, 0}, {0, 1}};
    const lc_vec2 cw[3] = {{0, 0}, {0, 1}, {1, 0}};
    const lc_vec2 dent[4] = {{0, 0}, {2, 0}, {1, 0.2}, {1, 2}};
    const lc_vec2 twice[6] = {{1, 0}, {-0.5, 0.866}, {-0.5, -0.866},
                              {1, 0}, {-0.5, 0.866}, {-0.5, -0.866}};
    double s = LC_GROW_DEFAULT_STEP;
    assert_int_equal(lc_grow_polygon(tri, 0, 0.3, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.0, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, -1.0, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, NAN, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, INFINITY, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, 0.0, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, LC_PI / 2 + 1e-9, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, NAN, g, MAXV), LC_ERR_BAD_INPUT);
    lc_vec2 bad[3] = {{0, 0}, {1, NAN}, {0, 1}};
    assert_int_equal(lc_grow_polygon(bad, 3, 0.3, s, g, MAXV), LC_ERR_BAD_INPUT);
    bad[1] = lc_v2(INFINITY, 0);
    assert_int_equal(lc_grow_polygon(bad, 3, 0.3, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(cw, 3, 0.3, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(dent, 4, 0.3, s, g, MAXV), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(twice, 6, 0.3, s, g, MAXV), LC_ERR_BAD_INPUT);
    /* cap: exactly enough works, one less does not (the triangle's exterior
     * arcs: pi/2 at the right angle, 4 steps of pi/8; 3pi/4 twice, 6 steps) */
    int need = lc_grow_polygon(tri, 3, 0.3, s, g, MAXV);
    assert_int_equal(need, 4 + 6 + 6);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, s, g, need), need);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, s, g, need - 1), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, s, g, 0), LC_ERR_BAD_INPUT);
    /* a tiny step needs more room than a small buffer */
    assert_int_equal(lc_grow_polygon(tri, 3, 0.3, 1e-6, g, MAXV), LC_ERR_BAD_INPUT);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        LC_GEOS_TEST(test_random_convex_polygons),
        LC_GEOS_TEST(test_triangles),
        LC_GEOS_TEST(test_point),
        LC_GEOS_TEST(test_segment),
        LC_GEOS_TEST(test_square_with_repeats),
        LC_GEOS_TEST(test_near_repeat_stays_conservative),
        cmocka_unit_test(test_excess_bound_closed_form),
        cmocka_unit_test(test_rejects_bad_input),
    };
    int rc = LC_RUN_TESTS(tests, NULL, NULL);
#if LC_HAVE_GEOS
    oracle_finish();
#endif
    return rc;
}
