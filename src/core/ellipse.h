/*
 * ellipse.h - the maximum-area ellipse inscribed in a convex polygon.
 *
 * The polygon is {p : a_i . p <= b_i, i < n}; the ellipse is
 * E = {L u + d : |u| <= 1} with L symmetric positive definite. The solver
 * maximises log det L subject to |L a_i| + a_i . d <= b_i (Boyd and
 * Vandenberghe, Convex Optimization, 8.4.2) with a primal-dual
 * interior-point Newton method on the five unknowns (l11, l12, l22, d),
 * warm-started from a strictly feasible ellipse when one is given, and stops
 * when the duality gap is below gap_tol (in units of log det).
 *
 * lambda[i] are the dual multipliers of the constraints at the optimum:
 * lambda_i >= 0, lambda_i * slack_i ~ 0, and stationarity
 * L^-1 = sum_i lambda_i (L a_i)(a_i^T) / |L a_i| (symmetrised),
 * sum_i lambda_i a_i = 0.
 *
 * No allocation: the caller passes scratch of LC_ELLIPSE_SCRATCH(n) doubles.
 */
#ifndef LC_ELLIPSE_H
#define LC_ELLIPSE_H

#include "geom.h"
#include "status.h"
#include "sym2.h"

typedef struct lc_ellipse {
    double l11, l12, l22; /* L = [[l11, l12], [l12, l22]] */
    lc_vec2 d;            /* centre */
} lc_ellipse;

/* L as a symmetric 2x2 matrix. */
static inline lc_sym2 lc_ellipse_shape(const lc_ellipse *e) { return (lc_sym2){e->l11, e->l12, e->l22}; }

typedef struct lc_ellipse_opts {
    double gap_tol; /* default 1e-9 */
    int max_iter;   /* default 60 */
} lc_ellipse_opts;

/* lc_ellipse_solve's one positive outcome (its errors are lc_status). */
enum {
    LC_ELLIPSE_MAX_ITER = 1, /* best iterate returned, gap above gap_tol */
};

typedef struct lc_ellipse_info {
    int iterations;
    double gap;    /* duality gap at exit */
    int warm_used; /* 1 when the warm start was strictly feasible and used */
} lc_ellipse_info;

#define LC_ELLIPSE_SCRATCH(n) (18 * (n) + 64)

void lc_ellipse_opts_default(lc_ellipse_opts *opts);

/*
 * Solve for h[0..n). warm may be NULL. lambda (n doubles) may be NULL.
 * info may be NULL. Returns LC_OK, LC_ELLIPSE_MAX_ITER, or
 * LC_ERR_BAD_INPUT (n < 3, a non-finite or zero normal, a non-finite
 * offset), LC_ERR_DEGENERATE (the polygon is empty or of zero area),
 * LC_ERR_UNBOUNDED (the polygon is unbounded).
 */
int lc_ellipse_solve(const lc_halfspace *h, int n, const lc_ellipse *warm,
                     const lc_ellipse_opts *opts, lc_ellipse *out, double *lambda,
                     double *scratch, lc_ellipse_info *info);

/* pi * det L. */
double lc_ellipse_area(const lc_ellipse *e);

/* log det L. */
double lc_ellipse_logdet(const lc_ellipse *e);

/* True when E lies in {a . p <= b + eps}. */
bool lc_ellipse_inside_halfspace(const lc_ellipse *e, lc_halfspace h, double eps);

/* |L^-1 (p - d)|: <= 1 exactly when p is in E. */
double lc_ellipse_norm(const lc_ellipse *e, lc_vec2 p);

#endif
