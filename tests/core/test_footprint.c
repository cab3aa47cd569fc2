/*
 * test_footprint.c - the polygon footprint: what makes one valid, its
 * radii, the Minkowski sum of convex polygons, the line that separates two.
 *
 * Outside checks:
 * - GEOS (libgeos C API through geos_oracle.h): the convex hull of every
 *   pairwise vertex sum a_i + b_j is the Minkowski sum of two convex
 *   polygons (de Berg et al., Computational Geometry, 3rd ed., 13.3: the
 *   sum of convex polygons is the convex hull of the sums of vertices), so
 *   GEOSConvexHull_r of those sums is the reference for lc_minkowski_sum's
 *   area and vertices; GEOSDistance_r and GEOSCovers_r for the margin rule
 *   and for the separating line's gap.
 * - Closed forms: a w x l rectangle about its centre has circumscribed
 *   radius sqrt(w^2 + l^2) / 2 and inscribed radius min(w, l) / 2; the sum
 *   of two non-parallel segments u and v is a parallelogram of area
 *   |u x v|; the sum of a convex polygon P and a disc of radius r has area
 *   area(P) + perimeter(P) r + pi r^2 (Steiner's formula).
 */
#include "testutil.h"

#include <float.h>
#include <stdio.h>
#include <string.h>

#include "footprint.h"
#include "grow.h"
#include "lc_config.h"
#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif

#define MAXV 1024 /* every pairwise sum of two 32-vertex inputs */

/* ------------------------------------------------------------ validity */

typedef struct fp_case {
    const char *what;
    lc_vec2 v[20];
    int n;
    lc_footprint_fault want;
    int at;
} fp_case;

static void test_check_table(void **state)
{
    (void)state;
    const fp_case cases[] = {
        {"rectangle", {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}}, 4,
         LC_FOOTPRINT_OK, 0},
        {"triangle", {{1, 0}, {-0.5, 1}, {-0.5, -1}}, 3, LC_FOOTPRINT_OK, 0},
        {"two vertices", {{1, 0}, {-1, 0}}, 2, LC_FOOTPRINT_COUNT, 0},
        {"none", {{0, 0}}, 0, LC_FOOTPRINT_COUNT, 0},
        {"NaN", {{1, 0}, {-0.5, NAN}, {-0.5, -1}}, 3, LC_FOOTPRINT_FAR, 1},
        {"infinite", {{1, 0}, {-0.5, 1}, {-INFINITY, -1}}, 3, LC_FOOTPRINT_FAR, 2},
        {"too far", {{101, 0}, {-0.5, 1}, {-0.5, -1}}, 3, LC_FOOTPRINT_FAR, 0},
        {"repeated", {{0.5, -0.25}, {0.5, 0.25}, {0.5, 0.2505}, {-0.5, 0.25}, {-0.5, -0.25}},
         5, LC_FOOTPRINT_REPEATED, 2},
        {"repeated across the end", {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {0.5, -0.2502}},
         4, LC_FOOTPRINT_REPEATED, 0},
        {"clockwise", {{0.5, -0.25}, {-0.5, -0.25}, {-0.5, 0.25}, {0.5, 0.25}}, 4,
         LC_FOOTPRINT_CLOCKWISE, 0},
        {"dent", {{0.5, -0.25}, {0.5, 0.25}, {0.0, 0.1}, {-0.5, 0.25}, {-0.5, -0.25}}, 5,
         LC_FOOTPRINT_NOT_CONVEX, 2},
        {"collinear", {{0.5, -0.25}, {0.5, 0.25}, {0.0, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}}, 5,
         LC_FOOTPRINT_COLLINEAR, 2},
        {"spike", {{0.5, -0.25}, {1.5, 0.0}, {0.5, 0.0}, {0.5, 0.25}, {-0.5, 0.0}}, 5,
         LC_FOOTPRINT_NOT_CONVEX, 2},
        {"all on a line", {{-1, 0}, {1, 0}, {2, 0}}, 3, LC_FOOTPRINT_NOT_CONVEX, 0},
        /* a pentagram: every turn left, twice round */
        {"pentagram",
         {{1, 0}, {-0.809017, 0.587785}, {0.309017, -0.951057}, {0.309017, 0.951057},
          {-0.809017, -0.587785}},
         5, LC_FOOTPRINT_SELF_CROSSING, 0},
        {"centre outside", {{1.5, -0.25}, {1.5, 0.25}, {0.5, 0.25}, {0.5, -0.25}}, 4,
         LC_FOOTPRINT_CENTRE_OUTSIDE, 0},
        {"centre on an edge", {{1.0, 0.0}, {1.0, 0.25}, {0.0, 0.25}, {0.0, 0.0}}, 4,
         LC_FOOTPRINT_CENTRE_OUTSIDE, 0},
    };
    for (size_t k = 0; k < sizeof cases / sizeof cases[0]; k++) {
        int at = -1;
        lc_footprint_fault f = lc_footprint_check(cases[k].v, cases[k].n, &at);
        if (f != cases[k].want || (f != LC_FOOTPRINT_OK && at != cases[k].at))
            fail_msg("%s: fault %d at %d, want %d at %d", cases[k].what, f, at, cases[k].want,
                     cases[k].at);
    }
    /* 16 vertices are fine, 17 are too many */
    lc_vec2 v[17];
    for (int i = 0; i < 17; i++)
        v[i] = lc_unit_angle(2 * LC_PI * i / 17);
    int at;
    assert_int_equal(lc_footprint_check(v, 16, &at), LC_FOOTPRINT_OK);
    assert_int_equal(lc_footprint_check(v, 17, &at), LC_FOOTPRINT_COUNT);
}

static void test_radii(void **state)
{
    (void)state;
    /* 1.0 x 0.5 about its centre: closed forms */
    const lc_vec2 r[] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
    assert_near(lc_footprint_circumradius(r, 4), sqrt(1.0 + 0.25) / 2, 1e-15);
    assert_near(lc_footprint_inradius(r, 4), 0.25, 1e-15);
    assert_near(lc_footprint_support(r, 4, lc_v2(1, 0)), 0.5, 1e-15);
    /* the same 0.2 m forward of its centre: the rear is 0.7 m away */
    lc_vec2 s[4];
    for (int i = 0; i < 4; i++)
        s[i] = lc_add(r[i], lc_v2(0.2, 0));
    assert_near(lc_footprint_circumradius(s, 4), sqrt(0.7 * 0.7 + 0.25 * 0.25), 1e-15);
    assert_near(lc_footprint_inradius(s, 4), 0.25, 1e-15);
    s[0].y = -0.1; /* a tapering front corner: the edge line nears the centre */
    int at;
    assert_int_equal(lc_footprint_check(s, 4, &at), LC_FOOTPRINT_OK);
    /* the edge s[3] -> s[0], (-0.3, -0.25) to (0.7, -0.1): its distance
     * from the centre */
    lc_vec2 e = lc_sub(s[0], s[3]);
    double want = fabs(lc_cross(e, lc_sub(lc_v2(0, 0), s[3]))) / lc_len(e);
    assert_near(lc_footprint_inradius(s, 4), fmin(want, 0.25), 1e-15);
    /* placing: turned a quarter and reflected, still counter-clockwise */
    lc_vec2 out[4];
    lc_footprint_place(r, 4, 0.5 * LC_PI, true, out);
    assert_near(out[0].x, -0.25, 1e-15);
    assert_near(out[0].y, -0.5, 1e-15);
    assert_true(lc_polygon_area2(out, 4) > 0);
}

/* ------------------------------------------------------ Minkowski sum */

static int sum(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_vec2 *out)
{
    int m = lc_minkowski_sum(a, na, b, nb, out, lc_minkowski_max_vertices(na, nb));
    assert_true(m >= 1 && m <= na + nb);
    return m;
}

static void test_sum_degenerate(void **state)
{
    (void)state;
    lc_vec2 out[16];
    const lc_vec2 p[] = {{1, 2}}, q[] = {{-3, 0.5}};
    assert_int_equal(sum(p, 1, q, 1, out), 1);
    assert_near(out[0].x, -2, 0);
    assert_near(out[0].y, 2.5, 0);
    const lc_vec2 s[] = {{0, 0}, {2, 1}}, t[] = {{1, 1}, {5, 3}}, u[] = {{0, 0}, {0, 1}};
    /* a point and a segment: the segment moved */
    assert_int_equal(sum(p, 1, s, 2, out), 2);
    /* parallel segments: one segment, as long as both */
    assert_int_equal(sum(s, 2, t, 2, out), 2);
    assert_near(lc_dist(out[0], out[1]), lc_dist(s[0], s[1]) + lc_dist(t[0], t[1]), 1e-14);
    /* crossing directions: a parallelogram of area |u x v| */
    int m = sum(s, 2, u, 2, out);
    assert_int_equal(m, 4);
    assert_near(0.5 * lc_polygon_area2(out, m), fabs(lc_cross(lc_sub(s[1], s[0]), u[1])), 1e-14);
    /* repeated and collinear vertices: the square plus a triangle */
    const lc_vec2 sq[] = {{0, 0}, {1, 0}, {1, 0}, {1, 0.5}, {1, 1}, {0, 1}, {0, 1 + 1e-17}};
    const lc_vec2 tri[] = {{0, 0}, {1, 0}, {0, 1}};
    m = sum(sq, 7, tri, 3, out);
    assert_near(0.5 * lc_polygon_area2(out, m), 1.0 + 0.5 + 2.0, 1e-14); /* mixed area 2 */
    /* what is refused */
    const lc_vec2 cw[] = {{0, 0}, {0, 1}, {1, 1}, {1, 0}};
    const lc_vec2 dent[] = {{0, 0}, {2, 0}, {1, 0.3}, {2, 1}, {0, 1}};
    const lc_vec2 twice[] = {{1, 0},          {0.309, 0.951},   {-0.809, 0.588}, {-0.809, -0.588},
                             {0.309, -0.951}, {1, 0},           {0.309, 0.951},  {-0.809, 0.588},
                             {-0.809, -0.588}, {0.309, -0.951}};
    const lc_vec2 nan[] = {{0, 0}, {1, NAN}, {0, 1}};
    assert_int_equal(lc_minkowski_sum(cw, 4, tri, 3, out, 16), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_minkowski_sum(tri, 3, dent, 5, out, 16), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_minkowski_sum(twice, 10, tri, 3, out, 16), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_minkowski_sum(nan, 3, tri, 3, out, 16), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_minkowski_sum(tri, 0, tri, 3, out, 16), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_minkowski_sum(tri, 3, tri, 3, out, 2), LC_ERR_BAD_INPUT);
}

#if LC_HAVE_GEOS

/* Random convex CCW polygon of up to 24 vertices, or a point, a segment, a
 * triangle; sometimes with a collinear midpoint or a repeated vertex. */
static int random_shape(lc_rng *g, lc_vec2 *v)
{
    lc_vec2 c = lc_v2(lc_rng_uniform(g, -50, 50), lc_rng_uniform(g, -50, 50));
    double r = lc_rng_uniform(g, 0.01, 3.0);
    int kind = (int)(lc_rng_next(g) % 10);
    if (kind == 0) {
        v[0] = c;
        return 1;
    }
    if (kind == 1) {
        v[0] = c;
        v[1] = lc_add(c, lc_scale(lc_unit_angle(lc_rng_uniform(g, 0, 2 * LC_PI)), r));
        return 2;
    }
    int n = kind == 2 ? 3 : 3 + (int)(lc_rng_next(g) % 22);
    lc_test_random_convex(g, c, r, n, v);
    if (kind == 3) { /* axis-aligned box: parallel edges with the other */
        lc_vec2 lo = c, hi = lc_add(c, lc_v2(r, 0.5 * r));
        v[0] = lo;
        v[1] = lc_v2(hi.x, lo.y);
        v[2] = hi;
        v[3] = lc_v2(lo.x, hi.y);
        n = 4;
    }
    if (kind == 4 && n < 24) { /* a collinear midpoint */
        memmove(v + 2, v + 1, sizeof *v * (size_t)(n - 1));
        v[1] = lc_lerp(v[0], v[2], 0.5);
        n++;
    }
    if (kind == 5 && n < 24) { /* a vertex repeated up to rounding */
        memmove(v + 1, v, sizeof *v * (size_t)n);
        v[1] = lc_add(v[0], lc_v2(1e-15, 0));
        n++;
    }
    return n;
}

/* Distance from p to the boundary ring v[0..n) (a point or segment for n < 3). */
static double ring_distance(const lc_vec2 *v, int n, lc_vec2 p)
{
    if (n == 1)
        return lc_dist(p, v[0]);
    double d = INFINITY;
    for (int i = 0; i < (n == 2 ? 1 : n); i++)
        d = fmin(d, lc_segment_distance(p, v[i], v[(i + 1) % n], NULL));
    return d;
}

/* The reference: GEOS's hull of every a_i + b_j. */
static int oracle_sum(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_vec2 *out,
                      double *area)
{
    static lc_vec2 pts[MAXV];
    int k = 0;
    assert_true(na * nb <= MAXV);
    for (int i = 0; i < na; i++)
        for (int j = 0; j < nb; j++)
            pts[k++] = lc_add(a[i], b[j]);
    return oracle_convex_hull(pts, k, out, MAXV, area);
}

static void test_sum_against_geos(void **state)
{
    (void)state;
    lc_rng g;
    lc_rng_seed(&g, 1317);
    static lc_vec2 a[32], b[32], mine[MAXV], ref[MAXV];
    int polygons = 0;
    for (int rep = 0; rep < 1500; rep++) {
        int na = random_shape(&g, a), nb = random_shape(&g, b);
        int m = sum(a, na, b, nb, mine);
        double area;
        int k = oracle_sum(a, na, b, nb, ref, &area);
        double ext = 0;
        for (int i = 0; i < k; i++)
            ext = fmax(ext, lc_dist(ref[i], ref[0]));
        double tol = 1e-12 * (ext + 1.0) + 1e-13 * 100;
        if (k >= 3) {
            polygons++;
            assert_true(m >= 3);
            assert_near(0.5 * lc_polygon_area2(mine, m), area, 1e-10 * (area + ext * ext) + 1e-12);
        }
        /* every vertex of GEOS's hull is one of ours, every one of ours on
         * GEOS's boundary (ours may keep a collinear input vertex) */
        for (int i = 0; i < k; i++) {
            double best = INFINITY;
            for (int j = 0; j < m; j++)
                best = fmin(best, lc_dist(ref[i], mine[j]));
            if (!(best <= tol))
                fail_msg("rep %d: GEOS vertex %d (%g, %g) is %g from ours", rep, i, ref[i].x,
                         ref[i].y, best);
        }
        for (int j = 0; j < m; j++)
            assert_true(ring_distance(ref, k, mine[j]) <= tol);
    }
    assert_true(polygons >= 1000);
}

/*
 * The conservative margin rule of configuration space: an obstacle O
 * summed with the reflected footprint grown by the margin (lc_grow_polygon,
 * outer arcs of step s) holds every point within the margin of the exact
 * O + (-F), and reaches at most margin / cos(s / 2) from it (grow.h).
 */
static void test_margin_rule(void **state)
{
    (void)state;
    lc_rng g;
    lc_rng_seed(&g, 1718);
    static lc_vec2 o[32], f[32], gf[MAXV], c[MAXV], exact[MAXV];
    const double steps[] = {LC_PI / 2, LC_PI / 4, LC_GROW_DEFAULT_STEP, 0.1};
    for (int rep = 0; rep < 300; rep++) {
        int no = random_shape(&g, o);
        int nf = 3 + (int)(lc_rng_next(&g) % 8);
        lc_test_random_convex(&g, lc_v2(0, 0), lc_rng_uniform(&g, 0.1, 1.0), nf, f);
        double yaw = lc_rng_uniform(&g, -LC_PI, LC_PI);
        double margin = lc_rng_uniform(&g, 0.005, 0.3), step = steps[rep % 4];
        int ng = lc_grow_polygon(f, nf, margin, step, gf, MAXV);
        lc_footprint_place(gf, ng, yaw, true, gf);
        int m = sum(o, no, gf, ng, c);
        lc_vec2 rf[32];
        lc_footprint_place(f, nf, yaw, true, rf);
        double area;
        int k = oracle_sum(o, no, rf, nf, exact, &area);
        double bound = margin / cos(step / 2), tol = 1e-9;
        for (int i = 0; i < m; i++)
            assert_true(oracle_point_distance(exact, k, c[i]) <= bound + tol);
        /* points within the margin of the exact sum are inside */
        lc_vec2 lo = exact[0], hi = exact[0];
        for (int i = 0; i < k; i++) {
            lo = lc_v2(fmin(lo.x, exact[i].x), fmin(lo.y, exact[i].y));
            hi = lc_v2(fmax(hi.x, exact[i].x), fmax(hi.y, exact[i].y));
        }
        for (int s = 0; s < 40; s++) {
            lc_vec2 q = lc_v2(lc_rng_uniform(&g, lo.x - 1.2 * margin, hi.x + 1.2 * margin),
                              lc_rng_uniform(&g, lo.y - 1.2 * margin, hi.y + 1.2 * margin));
            if (oracle_point_distance(exact, k, q) > margin - tol)
                continue;
            assert_true(lc_convex_contains(c, m, q, tol));
        }
        for (int i = 0; i < k; i++)
            for (int j = 0; j < 16; j++) {
                lc_vec2 q = lc_add(exact[i], lc_scale(lc_unit_angle(2 * LC_PI * j / 16), margin - tol));
                assert_true(lc_convex_contains(c, m, q, tol));
            }
    }
}

/* The separating line against GEOS's distance, on random pairs. */
static void test_separate_against_geos(void **state)
{
    (void)state;
    lc_rng g;
    lc_rng_seed(&g, 1920);
    static lc_vec2 a[32], b[32];
    int apart = 0, overlap = 0;
    for (int rep = 0; rep < 2000; rep++) {
        int na = random_shape(&g, a), nb = random_shape(&g, b);
        /* bring b near a, so that they overlap about half the time */
        lc_vec2 shift = lc_sub(a[0], b[0]);
        shift = lc_add(shift, lc_v2(lc_rng_uniform(&g, -3, 3), lc_rng_uniform(&g, -3, 3)));
        for (int i = 0; i < nb; i++)
            b[i] = lc_add(b[i], shift);
        double d = oracle_distance(a, na, b, nb);
        lc_halfspace h;
        double gap = lc_convex_separate(a, na, b, nb, &h);
        if (d > 1e-7) {
            apart++;
            assert_near(gap, d, 1e-9);
            assert_near(lc_len(h.a), 1.0, 1e-12);
            for (int i = 0; i < na; i++)
                assert_true(lc_dot(h.a, a[i]) <= h.b - d + 1e-9);
            for (int i = 0; i < nb; i++)
                assert_true(lc_dot(h.a, b[i]) >= h.b - 1e-9);
        } else if (d == 0 && na >= 3 && nb >= 3 && oracle_intersection_area(a, na, b, nb) > 1e-9) {
            overlap++;
            assert_true(gap < 0);
        }
    }
    assert_true(apart > 400 && overlap > 200);
}

#endif /* LC_HAVE_GEOS */

static void test_separate_touching(void **state)
{
    (void)state;
    const lc_vec2 a[] = {{0, 0}, {1, 0}, {1, 1}, {0, 1}};
    const lc_vec2 b[] = {{1, 0.5}, {2, 0.5}, {2, 2}, {1, 2}};  /* shares a stretch of edge */
    const lc_vec2 c[] = {{0.5, 0.5}, {3, 0.5}, {3, 3}};        /* overlaps */
    const lc_vec2 p[] = {{2, 2}}, s[] = {{1, -1}, {1, 3}};
    lc_halfspace h;
    assert_near(lc_convex_separate(a, 4, b, 4, &h), 0.0, 0);
    assert_near(h.a.x, 1.0, 1e-15);
    assert_near(h.b, 1.0, 1e-15);
    assert_true(lc_convex_separate(a, 4, c, 3, &h) < 0);
    assert_near(lc_convex_separate(a, 4, p, 1, &h), sqrt(2.0), 1e-15);
    assert_near(lc_convex_separate(a, 4, s, 2, &h), 0.0, 0); /* touches along an edge */
    assert_true(lc_convex_separate(p, 1, p, 1, &h) < 0);  /* one point: no line */
    assert_true(lc_convex_separate(a, 0, p, 1, &h) < 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_check_table),
        cmocka_unit_test(test_radii),
        cmocka_unit_test(test_sum_degenerate),
        LC_GEOS_TEST(test_sum_against_geos),
        LC_GEOS_TEST(test_margin_rule),
        LC_GEOS_TEST(test_separate_against_geos),
        cmocka_unit_test(test_separate_touching),
    };
    return LC_RUN_TESTS(tests, lc_test_geos_setup, lc_test_geos_teardown);
}
