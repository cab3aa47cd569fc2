/*
 * test_sym2.c - symmetric 2x2 matrices (src/core/sym2.h) against the
 * definitions: the square root squared, the inverse times the matrix, the
 * sandwich against plain matrix products, the action on a vector, on
 * random positive definite matrices (fixed seed) from 1e-6 to 1e6. Then
 * degenerate input: singular, indefinite and NaN matrices, a thin ellipse
 * whose determinant cancels (the root from a given determinant).
 */
#include "testutil.h"

#include "sym2.h"

/* Plain 2x2 product of full matrices, row major. */
static void mul(const double p[4], const double q[4], double r[4])
{
    r[0] = p[0] * q[0] + p[1] * q[2];
    r[1] = p[0] * q[1] + p[1] * q[3];
    r[2] = p[2] * q[0] + p[3] * q[2];
    r[3] = p[2] * q[1] + p[3] * q[3];
}

static void full(lc_sym2 m, double f[4])
{
    f[0] = m.a;
    f[1] = f[2] = m.b;
    f[3] = m.c;
}

/* R diag(s1, s2) R^T: positive definite for s1, s2 > 0. */
static lc_sym2 random_pd(lc_rng *g)
{
    double s1 = pow(10.0, lc_rng_uniform(g, -6, 6)), s2 = pow(10.0, lc_rng_uniform(g, -6, 6));
    double t = lc_rng_uniform(g, -LC_PI, LC_PI), c = cos(t), s = sin(t);
    return (lc_sym2){s1 * c * c + s2 * s * s, (s1 - s2) * c * s, s1 * s * s + s2 * c * c};
}

static void test_against_definitions(void **state)
{
    lc_rng g;
    lc_rng_seed(&g, 2718);
    for (int t = 0; t < 1000; t++) {
        lc_sym2 m = random_pd(&g), q = random_pd(&g);
        double scale = fmax(fabs(m.a), fmax(fabs(m.b), fabs(m.c)));
        lc_sym2 r = lc_sym2_sqrt(m);
        double rf[4], r2[4];
        full(r, rf);
        mul(rf, rf, r2);
        assert_near(r2[0], m.a, 1e-9 * scale);
        assert_near(r2[1], m.b, 1e-9 * scale);
        assert_near(r2[3], m.c, 1e-9 * scale);
        assert_true(lc_sym2_pd(r) || !lc_sym2_pd(m));
        /* the inverse, checked where m is not too ill-conditioned */
        if (lc_sym2_det(m) > 1e-12 * scale * scale) {
            lc_sym2 inv = lc_sym2_inverse(m);
            double mf[4], vf[4], id[4];
            full(m, mf);
            full(inv, vf);
            mul(mf, vf, id);
            double cond = scale * scale / lc_sym2_det(m);
            assert_near(id[0], 1.0, 1e-12 * cond);
            assert_near(id[1], 0.0, 1e-12 * cond);
            assert_near(id[3], 1.0, 1e-12 * cond);
        }
        /* p q p */
        double pf[4], qf[4], t1[4], t2[4];
        full(m, pf);
        full(q, qf);
        mul(pf, qf, t1);
        mul(t1, pf, t2);
        lc_sym2 s = lc_sym2_sandwich(m, q);
        double big = fabs(t2[0]) + fabs(t2[1]) + fabs(t2[3]);
        assert_near(s.a, t2[0], 1e-12 * big);
        assert_near(s.b, t2[1], 1e-12 * big);
        assert_near(s.c, t2[3], 1e-12 * big);
        lc_vec2 v = lc_v2(lc_rng_uniform(&g, -1, 1), lc_rng_uniform(&g, -1, 1));
        lc_vec2 mv = lc_sym2_apply(m, v);
        assert_near(mv.x, m.a * v.x + m.b * v.y, 0.0);
        assert_near(mv.y, m.b * v.x + m.c * v.y, 0.0);
        lc_sym2 k = lc_sym2_scale(m, 3.0);
        assert_true(k.a == 3.0 * m.a && k.b == 3.0 * m.b && k.c == 3.0 * m.c);
    }
}

static void test_degenerate(void **state)
{
    /* singular: the root of diag(4, 0) is diag(2, 0), not positive definite */
    lc_sym2 r = lc_sym2_sqrt((lc_sym2){4, 0, 0});
    assert_near(r.a, 2.0, 1e-15);
    assert_near(r.b, 0.0, 0.0);
    assert_near(r.c, 0.0, 0.0);
    assert_false(lc_sym2_pd(r));
    assert_false(lc_sym2_pd((lc_sym2){1, 2, 1}));   /* indefinite */
    assert_false(lc_sym2_pd((lc_sym2){-1, 0, -1})); /* negative definite */
    assert_false(lc_sym2_pd((lc_sym2){NAN, 0, 1}));
    assert_false(lc_sym2_pd((lc_sym2){0, 0, 0}));
    /* a thin matrix: its determinant from the entries is all rounding, the
     * root from the true determinant (the factors) keeps its shape */
    double s1 = 1.0, s2 = 1e-10, t = 0.3, c = cos(t), s = sin(t);
    lc_sym2 m = {s1 * c * c + s2 * s * s, (s1 - s2) * c * s, s1 * s * s + s2 * c * c};
    lc_sym2 root = lc_sym2_sqrt_det(m, sqrt(s1 * s2));
    assert_near(lc_sym2_det(root), sqrt(s1 * s2), 1e-12);
    /* singular inverse: no check, infinities (callers hold PD matrices) */
    lc_sym2 inv = lc_sym2_inverse((lc_sym2){1, 1, 1});
    assert_false(isfinite(inv.a));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_against_definitions),
        cmocka_unit_test(test_degenerate),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
