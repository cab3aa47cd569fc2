/*
 * test_ipm.c - the interior-point method of the ellipse solver
 * (src/core/ipm.c) on problems already in its rounded frame (unit normals,
 * the unit disc inside). Outside references, closed forms: the largest
 * ellipse in a square or a regular polygon is its incircle (symmetry and
 * the uniqueness of the maximum-volume inscribed ellipsoid, John 1948); in
 * a triangle it is the Steiner inellipse, centred at the centroid, of area
 * pi / (3 sqrt 3) times the triangle's. The multipliers satisfy the KKT
 * conditions of the convex program (Boyd and Vandenberghe, Convex
 * Optimization, 8.4.2): lambda_i >= 0 and sum lambda_i a_i = 0. Degenerate:
 * no iterations allowed, an odd count (the ghost), repeated rows, an
 * unbounded set started warm.
 */
#include "testutil.h"

#include "ipm.h"

enum { MAXN = 64 };

typedef struct prob {
    double a1[MAXN + 1], a2[MAXN + 1], b[MAXN + 1], work[LC_IPM_WORK(MAXN)];
    int n;
} prob;

static void add(prob *p, lc_vec2 a, double b)
{
    double l = lc_len(a);
    p->a1[p->n] = a.x / l;
    p->a2[p->n] = a.y / l;
    p->b[p->n++] = b / l;
}

static int solve(prob *p, bool warm, int max_iter, lc_ipm_result *r, lc_ellipse_info *info)
{
    lc_ellipse_opts o;
    lc_ellipse_opts_default(&o);
    if (max_iter >= 0)
        o.max_iter = max_iter;
    lc_hrows rows = {p->a1, p->a2, p->b, p->n};
    return lc_ipm_solve(rows, p->work, &o, warm, info, r);
}

static void assert_kkt(const prob *p, const lc_ipm_result *r)
{
    double sx = 0.0, sy = 0.0;
    for (int i = 0; i < p->n; i++) {
        assert_true(r->lam[i] >= 0.0);
        sx += r->lam[i] * p->a1[i];
        sy += r->lam[i] * p->a2[i];
    }
    assert_near(sx, 0.0, 1e-6);
    assert_near(sy, 0.0, 1e-6);
}

static void test_regular_polygons(void **state)
{
    for (int k = 3; k <= 40; k++) {
        prob p = {.n = 0};
        for (int i = 0; i < k; i++)
            add(&p, lc_unit_angle(2.0 * LC_PI * i / k + 0.1), 1.0);
        lc_ipm_result r;
        lc_ellipse_info info;
        assert_int_equal(solve(&p, false, -1, &r, &info), LC_OK);
        assert_true(r.feasible);
        assert_near(r.x[0], 1.0, 1e-6);
        assert_near(r.x[1], 0.0, 1e-6);
        assert_near(r.x[2], 1.0, 1e-6);
        assert_near(r.x[3], 0.0, 1e-6);
        assert_near(r.x[4], 0.0, 1e-6);
        assert_true(info.gap <= 1e-9);
        assert_kkt(&p, &r);
    }
}

/* Random triangles holding the unit disc: the Steiner inellipse. */
static void test_triangles(void **state)
{
    lc_rng g;
    lc_rng_seed(&g, 1848);
    for (int t = 0; t < 200; t++) {
        prob p = {.n = 0};
        lc_vec2 v[3];
        /* three lines tangent to circles of radius >= 1 about the origin,
         * normals less than pi apart all round (gaps 0.55..0.9 pi, the
         * third 0.2..0.9 pi): a bounded triangle holding the unit disc */
        double ang[3];
        ang[0] = lc_rng_uniform(&g, -LC_PI, LC_PI);
        ang[1] = ang[0] + lc_rng_uniform(&g, 0.55, 0.9) * LC_PI;
        ang[2] = ang[1] + lc_rng_uniform(&g, 0.55, 0.9) * LC_PI;
        for (int i = 0; i < 3; i++)
            add(&p, lc_unit_angle(ang[i]), lc_rng_uniform(&g, 1.0, 3.0));
        for (int i = 0; i < 3; i++) { /* vertex i: lines i and i+1 meet */
            int j = (i + 1) % 3;
            double det = p.a1[i] * p.a2[j] - p.a2[i] * p.a1[j];
            v[i] = lc_v2((p.b[i] * p.a2[j] - p.b[j] * p.a2[i]) / det,
                         (p.a1[i] * p.b[j] - p.a1[j] * p.b[i]) / det);
        }
        double area = 0.5 * fabs(lc_cross(lc_sub(v[1], v[0]), lc_sub(v[2], v[0])));
        lc_vec2 centroid = lc_scale(lc_add(v[0], lc_add(v[1], v[2])), 1.0 / 3.0);
        lc_ipm_result r;
        lc_ellipse_info info;
        assert_int_equal(solve(&p, false, -1, &r, &info), LC_OK);
        double det = r.x[0] * r.x[2] - r.x[1] * r.x[1];
        assert_rel_near(LC_PI * det, LC_PI / (3.0 * sqrt(3.0)) * area, 1e-7);
        assert_near(r.x[3], centroid.x, 1e-6 * (1.0 + lc_len(centroid)));
        assert_near(r.x[4], centroid.y, 1e-6 * (1.0 + lc_len(centroid)));
        assert_kkt(&p, &r);
    }
}

static void test_degenerate(void **state)
{
    /* no iterations: the start (0.92 times the unit disc) comes back */
    prob p = {.n = 0};
    for (int i = 0; i < 4; i++)
        add(&p, lc_unit_angle(0.5 * LC_PI * i), 1.0);
    lc_ipm_result r;
    lc_ellipse_info info;
    assert_int_equal(solve(&p, false, 0, &r, &info), LC_ELLIPSE_MAX_ITER);
    assert_true(r.feasible);
    assert_int_equal(info.iterations, 0);
    assert_near(r.x[0], 0.92, 1e-15);
    assert_near(r.x[2], 0.92, 1e-15);
    /* the square with one row repeated (n = 5, odd: the ghost), and twice
     * (n = 6): the incircle, the repeated rows sharing the multiplier */
    add(&p, lc_v2(1, 0), 1.0);
    assert_int_equal(solve(&p, false, -1, &r, &info), LC_OK);
    assert_near(r.x[0], 1.0, 1e-6);
    assert_near(r.x[2], 1.0, 1e-6);
    assert_kkt(&p, &r);
    add(&p, lc_v2(0, 1), 1.0);
    assert_int_equal(solve(&p, true, -1, &r, &info), LC_OK);
    assert_near(r.x[0], 1.0, 1e-6);
    assert_kkt(&p, &r);
    /* a strip open toward -x, started warm: it grows until it gives up */
    prob s = {.n = 0};
    add(&s, lc_v2(0, 1), 1.0);
    add(&s, lc_v2(0, -1), 1.0);
    add(&s, lc_v2(1, 0), 1.0);
    int st = solve(&s, true, -1, &r, &info);
    assert_int_equal(st, LC_ERR_UNBOUNDED);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_regular_polygons),
        cmocka_unit_test(test_triangles),
        cmocka_unit_test(test_degenerate),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
