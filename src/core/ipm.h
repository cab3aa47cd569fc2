/*
 * ipm.h - the interior-point method of the ellipse solver (ellipse.c): the
 * maximum-area inscribed ellipse of {q : a_i . q <= b_i} in the solver's
 * rounded frame, where the start ellipse is the unit disc, every normal is a
 * unit vector and the origin lies strictly inside (b_i >= 1 after
 * to_frame). A primal-dual Newton method on x = (l11, l12, l22, d1, d2) with
 * Mehrotra's predictor-corrector (see ipm.c for the equations).
 *
 * The per-constraint arrays hold np = n rounded up to even entries: the
 * passes take two constraints at a time. An odd n gets a ghost at index n,
 * a copy of constraint 0 with lam = 0 and 1/s = 1/lam = 0 forced after each
 * evaluation, so every sum it enters gains an exact zero, its slack moves
 * exactly as constraint 0's (same numbers, same operations) and its step
 * bounds repeat constraint 0's.
 *
 * No allocation: the arrays live in the caller's scratch.
 */
#ifndef LC_IPM_H
#define LC_IPM_H

#include <stdbool.h>

#include "ellipse.h"
#include "geom.h"

/* What a solve leaves: the rounded-frame ellipse and the multipliers. */
typedef struct lc_ipm_result {
    double x[5];        /* l11, l12, l22, d1, d2 */
    const double *lam;  /* lam[0..n), in the caller's work */
    bool feasible;      /* x was shrunk into every constraint (else x is not set) */
} lc_ipm_result;

/* Doubles lc_ipm_solve takes from work for n constraints. */
#define LC_IPM_WORK(n) (14 * ((n) + 1))

/*
 * Solves for the rows r (|(a1, a2)| = 1, b > 0; they need room for row
 * r.n, which becomes the ghost's) from theta times the unit disc (0.97
 * warm, 0.92 cold), then shrinks the ellipse about its centre until every
 * constraint holds at the last evaluation (out->feasible false when no
 * shrink does). A warm solve gives up early (more than 30 iterations), or
 * when the ellipse grows a millionfold (LC_ERR_UNBOUNDED: the polygon
 * is unbounded or the warm start far too small). Returns LC_OK,
 * LC_ELLIPSE_MAX_ITER (also on a numerical breakdown: the last iterate
 * stays) or LC_ERR_UNBOUNDED; info gets the iterations and the gap.
 * work: LC_IPM_WORK(r.n) doubles.
 */
int lc_ipm_solve(lc_hrows r, double *work, const lc_ellipse_opts *o, bool warm,
                 lc_ellipse_info *info, lc_ipm_result *out);

#endif
