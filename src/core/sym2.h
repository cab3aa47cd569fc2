/*
 * sym2.h - symmetric 2x2 matrices [[a, b], [b, c]] passed by value: the
 * shape matrix L of an ellipse {L u + d : |u| <= 1}, its inverse, the
 * covariance of a polygon. Inline: the ellipse solver and region inflation
 * call them in their inner loops.
 *
 * Invariants: entries in the caller's units (metres for L, metres^-1 for
 * its inverse). Nothing here checks for singular input: callers hold
 * positive definite matrices (lc_sym2_pd says whether one is).
 */
#ifndef LC_SYM2_H
#define LC_SYM2_H

#include <math.h>
#include <stdbool.h>

#include "geom.h"

typedef struct lc_sym2 {
    double a, b, c;
} lc_sym2;

static inline double lc_sym2_det(lc_sym2 m) { return m.a * m.c - m.b * m.b; }

/*
 * Principal square root of a symmetric positive definite matrix, closed
 * form (m + s I) / sqrt(tr m + 2 s) with s = sqrt(det m) given: for a thin
 * ellipse det m from m's entries cancels badly, while the caller can often
 * get it from factors.
 */
static inline lc_sym2 lc_sym2_sqrt_det(lc_sym2 m, double s)
{
    double t = sqrt(m.a + m.c + 2.0 * s);
    return (lc_sym2){(m.a + s) / t, m.b / t, (m.c + s) / t};
}

static inline lc_sym2 lc_sym2_sqrt(lc_sym2 m)
{
    return lc_sym2_sqrt_det(m, sqrt(fmax(lc_sym2_det(m), 0.0)));
}

/* p q p for symmetric p, q. */
static inline lc_sym2 lc_sym2_sandwich(lc_sym2 p, lc_sym2 q)
{
    double m11 = p.a * q.a + p.b * q.b, m12 = p.a * q.b + p.b * q.c;
    double m21 = p.b * q.a + p.c * q.b, m22 = p.b * q.b + p.c * q.c;
    return (lc_sym2){m11 * p.a + m12 * p.b, m11 * p.b + m12 * p.c, m21 * p.b + m22 * p.c};
}

static inline lc_sym2 lc_sym2_scale(lc_sym2 m, double k) { return (lc_sym2){m.a * k, m.b * k, m.c * k}; }

static inline bool lc_sym2_pd(lc_sym2 m) { return m.a > 0.0 && m.c > 0.0 && lc_sym2_det(m) > 0.0; }

static inline lc_vec2 lc_sym2_apply(lc_sym2 m, lc_vec2 v)
{
    return lc_v2(m.a * v.x + m.b * v.y, m.b * v.x + m.c * v.y);
}

/* m^-1 = adj(m) / det m (each entry divided, not multiplied by 1/det). */
static inline lc_sym2 lc_sym2_inverse(lc_sym2 m)
{
    double det = lc_sym2_det(m);
    return (lc_sym2){m.c / det, -m.b / det, m.a / det};
}

#endif
