/*
 * test_chol5.c - the packed 5x5 Cholesky factorisation and solve
 * (src/core/chol5.h): A x = b with A = B B^T + I and a known x on random
 * matrices (fixed seed), the factor checked by multiplying it out, and the
 * safeguard of interior-point codes (a pivot without digits is set huge,
 * common practice): singular and zero matrices still give a finite
 * solution, a NaN or infinite matrix fails.
 */
#include "testutil.h"

#include "chol5.h"

enum { N = LC_CHOL5_N, NT = LC_CHOL5_NT };

static double at(const double H[NT], int r, int c)
{
    return r >= c ? H[lc_chol5_tri(r, c)] : H[lc_chol5_tri(c, r)];
}

static void matvec(const double H[NT], const double x[N], double y[N])
{
    for (int r = 0; r < N; r++) {
        y[r] = 0.0;
        for (int c = 0; c < N; c++)
            y[r] += at(H, r, c) * x[c];
    }
}

static void test_random_spd(void **state)
{
    lc_rng g;
    lc_rng_seed(&g, 55);
    for (int t = 0; t < 500; t++) {
        double B[N][N], H[NT], x[N], b[N], got[N];
        for (int r = 0; r < N; r++)
            for (int c = 0; c < N; c++)
                B[r][c] = lc_rng_uniform(&g, -2, 2);
        for (int r = 0; r < N; r++)
            for (int c = 0; c <= r; c++) {
                double s = r == c ? 1.0 : 0.0;
                for (int k = 0; k < N; k++)
                    s += B[r][k] * B[c][k];
                H[lc_chol5_tri(r, c)] = s;
            }
        for (int r = 0; r < N; r++)
            x[r] = lc_rng_uniform(&g, -5, 5);
        matvec(H, x, b);
        lc_chol5 f = {{0}, {0}}; /* the analyser cannot see assert_true stop the test */
        assert_true(lc_chol5_factor(&f, H));
        /* F F^T = H */
        for (int r = 0; r < N; r++)
            for (int c = 0; c <= r; c++) {
                double s = 0.0;
                for (int k = 0; k <= c; k++)
                    s += f.f[lc_chol5_tri(r, k)] * f.f[lc_chol5_tri(c, k)];
                assert_near(s, H[lc_chol5_tri(r, c)], 1e-12 * (1.0 + fabs(H[lc_chol5_tri(r, c)])));
            }
        lc_chol5_solve(&f, b, got);
        for (int r = 0; r < N; r++)
            assert_near(got[r], x[r], 1e-9);
    }
}

static void test_degenerate(void **state)
{
    double H[NT] = {0}, b[N] = {1, 2, 3, 4, 5}, x[N];
    lc_chol5 f = {{0}, {0}};
    /* identity: exact */
    for (int p = 0; p < N; p++)
        H[lc_chol5_tri(p, p)] = 1.0;
    assert_true(lc_chol5_factor(&f, H));
    lc_chol5_solve(&f, b, x);
    for (int p = 0; p < N; p++)
        assert_true(x[p] == b[p]);
    /* zero matrix: every pivot huge, the solution finite and tiny */
    double Z[NT] = {0};
    assert_true(lc_chol5_factor(&f, Z));
    lc_chol5_solve(&f, b, x);
    for (int p = 0; p < N; p++)
        assert_true(isfinite(x[p]) && fabs(x[p]) < 1e-100);
    /* rank one (all ones): the first direction solved, the rest frozen */
    double O[NT];
    for (int q = 0; q < NT; q++)
        O[q] = 1.0;
    assert_true(lc_chol5_factor(&f, O));
    lc_chol5_solve(&f, b, x);
    for (int p = 0; p < N; p++)
        assert_true(isfinite(x[p]));
    /* the input is left as it was */
    for (int q = 0; q < NT; q++)
        assert_true(O[q] == 1.0);
    /* NaN and infinity fail */
    O[lc_chol5_tri(3, 1)] = NAN;
    assert_false(lc_chol5_factor(&f, O));
    H[0] = INFINITY;
    assert_false(lc_chol5_factor(&f, H));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_random_spd),
        cmocka_unit_test(test_degenerate),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
