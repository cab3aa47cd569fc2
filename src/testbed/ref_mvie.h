/*
 * ref_mvie.h - the maximum-area inscribed ellipse solved by a general-purpose
 * nonlinear solver (Ipopt), as the outside reference for the tests and the
 * benchmark's side-by-side figure.
 *
 * Same problem as lc_ellipse_solve (Boyd and Vandenberghe, Convex
 * Optimization, 8.4.2): maximise log det L subject to |L a_i| + a_i . d <= b_i,
 * L symmetric positive definite, over (l11, l12, l22, d). It shares no code
 * with the core solver: its own start point, its own normalisation.
 *
 * It allocates (Ipopt does) and is for tools and tests only. When lacuna is
 * built without Ipopt (LC_HAVE_IPOPT 0) every solve returns
 * LC_REF_MVIE_UNAVAILABLE.
 */
#ifndef LC_REF_MVIE_H
#define LC_REF_MVIE_H

#include <stdbool.h>

#include "ellipse.h"

typedef enum lc_ref_mvie_status {
    LC_REF_MVIE_OK = 0,
    LC_REF_MVIE_FAILED = -1,      /* the solver did not reach its tolerance */
    LC_REF_MVIE_UNAVAILABLE = -2, /* built without Ipopt */
    LC_REF_MVIE_BAD_INPUT = -3,   /* n < 3, non-finite or zero normal */
} lc_ref_mvie_status;

/* True when a reference solver was compiled in. */
bool lc_ref_mvie_available(void);

/* "Ipopt 3.11.9" (the version found at build time) or "none". */
const char *lc_ref_mvie_name(void);

/*
 * Solves for h[0..n) into out; logdet (may be NULL) gets log det L. usec (may
 * be NULL) gets the wall time of the solve in microseconds (set-up included).
 * Returns an lc_ref_mvie_status.
 */
int lc_ref_mvie_solve(const lc_halfspace *h, int n, lc_ellipse *out, double *logdet,
                      double *usec);

#endif
