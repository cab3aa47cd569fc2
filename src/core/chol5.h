/*
 * chol5.h - Cholesky factorisation and solve of a symmetric positive
 * definite 5x5 matrix stored as its packed lower triangle: the Newton
 * system of the ellipse solver's interior-point method (ipm.h).
 *
 * Packed order: entry (r, c), c <= r, at lc_chol5_tri(r, c) = r (r + 1) / 2
 * + c, LC_CHOL5_NT = 15 entries. No allocation; the caller owns every
 * array.
 *
 * Near the optimum of an interior-point method the weights lam/s of active
 * constraints reach 1e10 and more, and a pivot can lose all its digits to
 * rounding; such a pivot is set huge, which freezes that direction instead
 * of failing (the usual safeguard of interior-point LP codes, common
 * practice): the factorisation fails only on a non-finite matrix. The loops are unrolled (fixed size): packed indices become
 * constants. Inline: the solver factors once and solves twice per
 * iteration, and as calls these showed in its instruction counts
 * (callgrind).
 */
#ifndef LC_CHOL5_H
#define LC_CHOL5_H

#include <math.h>
#include <stdbool.h>

enum {
    LC_CHOL5_N = 5,
    LC_CHOL5_NT = LC_CHOL5_N * (LC_CHOL5_N + 1) / 2,
};

static inline int lc_chol5_tri(int r, int c) { return r * (r + 1) / 2 + c; }

/* Cholesky factor with the reciprocals of its diagonal. */
typedef struct lc_chol5 {
    double f[LC_CHOL5_NT], id[LC_CHOL5_N];
} lc_chol5;

/* A pivot below this fraction of its diagonal entry is noise; it is set to
 * LC_CHOL5_HUGE. */
#define LC_CHOL5_LOST 1e-13
#define LC_CHOL5_HUGE 1e150

/* In place on the packed matrix H. */
static inline bool lc_chol5_factor_in_place(double H[LC_CHOL5_NT])
{
#pragma GCC unroll 5
    for (int j = 0; j < LC_CHOL5_N; j++) {
        double d = H[lc_chol5_tri(j, j)], d0 = d;
#pragma GCC unroll 5
        for (int k = 0; k < j; k++)
            d -= H[lc_chol5_tri(j, k)] * H[lc_chol5_tri(j, k)];
        if (!isfinite(d))
            return false;
        if (!(d > LC_CHOL5_LOST * d0))
            d = LC_CHOL5_HUGE;
        d = sqrt(d);
        H[lc_chol5_tri(j, j)] = d;
#pragma GCC unroll 5
        for (int i = j + 1; i < LC_CHOL5_N; i++) {
            double v = H[lc_chol5_tri(i, j)];
#pragma GCC unroll 5
            for (int k = 0; k < j; k++)
                v -= H[lc_chol5_tri(i, k)] * H[lc_chol5_tri(j, k)];
            H[lc_chol5_tri(i, j)] = v / d;
        }
    }
    return true;
}

/* Factors the packed matrix H into c. False on a non-finite matrix. */
static inline bool lc_chol5_factor(lc_chol5 *c, const double H[LC_CHOL5_NT])
{
#pragma GCC unroll 15
    for (int q = 0; q < LC_CHOL5_NT; q++)
        c->f[q] = H[q];
    if (!lc_chol5_factor_in_place(c->f))
        return false;
#pragma GCC unroll 5
    for (int p = 0; p < LC_CHOL5_N; p++)
        c->id[p] = 1.0 / c->f[lc_chol5_tri(p, p)];
    return true;
}

/* Solves (F F^T) x = rhs with the factor c. */
static inline void lc_chol5_solve(const lc_chol5 *c, const double rhs[LC_CHOL5_N],
                                  double x[LC_CHOL5_N])
{
    double y[LC_CHOL5_N];
#pragma GCC unroll 5
    for (int i = 0; i < LC_CHOL5_N; i++) {
        double v = rhs[i];
#pragma GCC unroll 5
        for (int k = 0; k < i; k++)
            v -= c->f[lc_chol5_tri(i, k)] * y[k];
        y[i] = v * c->id[i];
    }
#pragma GCC unroll 5
    for (int i = LC_CHOL5_N - 1; i >= 0; i--) {
        double v = y[i];
#pragma GCC unroll 5
        for (int k = i + 1; k < LC_CHOL5_N; k++)
            v -= c->f[lc_chol5_tri(k, i)] * x[k];
        x[i] = v * c->id[i];
    }
}

#endif
