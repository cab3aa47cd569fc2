/*
 * ipm.c - see ipm.h.
 *
 * Cost (callgrind, the bench's random polygons, cold solves of the whole
 * solver): 4 sides 10.5k instructions, 16 sides 25.3k, 32 sides 43.8k
 * (59.4k at 16 sides before the passes were fused, paired and the clipper
 * skipped); about 4-5 iterations.
 */
#include "ipm.h"

#include <float.h>
#include <math.h>
#ifdef __SSE2__
#include <emmintrin.h>
#endif

#include "chol5.h"

enum { NX = LC_CHOL5_N };

/* Start ellipse in the rounded frame: theta times the unit disc (the warm
 * ellipse touches the polygon, the cold one is a rough guess). */
static const double START_THETA = 0.92;
static const double START_THETA_WARM = 0.97;
/* Fraction of the way to the boundary a step may go: 1 - min(TAU_GAP,
 * mu^0.75), so that the last steps come close to full Newton steps (fast
 * final convergence) without letting one slack collapse far below the
 * others (which would wreck the conditioning of the Newton matrix). */
static const double STEP_TAU_GAP = 0.005;
/* mu >= MU_RD_FLOOR |r_d|^2 (see ipm_step). */
static const double MU_RD_FLOOR = 0.01;
/* A warm solve that needs more iterations than this is given up for a cold
 * one (a warm ellipse of a shape far from the answer; rare). */
enum { WARM_MAX_ITER = 30 };
/* Growth of the rounded-frame ellipse beyond which a warm solve gives up:
 * the polygon is unbounded or the warm ellipse was far too small. */
static const double WARM_GROWTH_MAX = 1e6;

/* The state, in the rounded frame (see ipm.h for the ghost). */
typedef struct ipm {
    int n, np;
    const double *a1, *a2, *b;
    double *s, *lam, *ds, *dl;  /* iterate and last direction */
    double *g0, *g1, *g2;       /* L block of the constraint gradient G_i */
    double *z0, *z2;            /* ends of z_i (its middle is g0 - g2) */
    double *rp, *is, *il, *inw, *pa;
    double x[5]; /* l11, l12, l22, d1, d2 */
} ipm;

/* --------------------------------------------------------- Newton step */

/*
 * Notation: x = (l11, l12, l22, d1, d2), g_i(x) = |L a_i| + a_i . d - b_i,
 * slack s_i > 0 (a variable of its own, g_i + s_i = 0 only in the limit, as
 * in Ipopt: with s_i = -g_i kept exact, the curvature of the constraints
 * would forbid full steps to the end), multiplier lam_i > 0, u_i = L a_i /
 * |L a_i|. The gradient of g_i is G_i = (a1 u1, a2 u1 + a1 u2, a2 u2, a1, a2)
 * and its Hessian the rank-one z_i z_i^T / |L a_i| on the L block, with
 * z_i = J^T u_i^perp. Eliminating ds and dlam from the Newton system of the
 * perturbed KKT conditions leaves the 5x5 SPD system
 *   (H_f + sum lam_i/|L a_i| z z^T + sum lam_i/s_i G G^T) dx
 *     = -r_d - sum G_i (lam_i rp_i - rc_i) / s_i,
 *   ds_i = -rp_i - G_i . dx,  dlam_i = (-rc_i - lam_i ds_i) / s_i,
 * with rp_i = g_i + s_i and rc_i = s_i lam_i (predictor) or
 * s_i lam_i + ds_i dlam_i - sigma mu (Mehrotra's corrector). */

/* Packed lower triangle of a symmetric 5x5 matrix (chol5.h). */
enum { NT = LC_CHOL5_NT };
static inline int tri(int r, int c) { return lc_chol5_tri(r, c); }

/* -log det L: gradient into g, Hessian into H. */
static void objective_derivs(const double x[NX], double g[NX], double H[NT])
{
    double l11 = x[0], l12 = x[1], l22 = x[2];
    double iD = 1.0 / (l11 * l22 - l12 * l12), iD2 = iD * iD;
    g[0] = -l22 * iD;
    g[1] = 2.0 * l12 * iD;
    g[2] = -l11 * iD;
    g[3] = g[4] = 0.0;
    #pragma GCC unroll 15
    for (int k = 0; k < NT; k++)
        H[k] = 0.0;
    H[tri(0, 0)] = l22 * l22 * iD2;
    H[tri(1, 0)] = -2.0 * l12 * l22 * iD2;
    H[tri(2, 0)] = l12 * l12 * iD2;
    H[tri(1, 1)] = 2.0 * iD + 4.0 * l12 * l12 * iD2;
    H[tri(2, 1)] = -2.0 * l12 * l11 * iD2;
    H[tri(2, 2)] = l11 * l11 * iD2;
}

/* What one evaluation pass gathers at the current point. */
typedef struct kkt {
    double H[NT];     /* reduced matrix */
    double rd[NX];    /* dual residual */
    double rhs[NX];   /* predictor right-hand side */
    double gs[NX];    /* sum G_i / s_i, for the corrector */
    double gap, rpmax; /* sum s lam, max |primal residual| */
} kkt;

/*
 * Pairs of doubles for the per-constraint passes: SSE2 registers on x86-64
 * (its baseline), GCC's generic vectors elsewhere. Sums keep one partial per
 * lane, added at the end: a different rounding from a sequential sum, but
 * the same on every run and machine (ISO C mode: no contraction into FMA).
 * Measured on the bench's 16-gons: 35.9k -> 27.0k instructions per solve.
 */
typedef double v2 __attribute__((vector_size(16)));
typedef double v2u __attribute__((vector_size(16), aligned(8), may_alias));

static inline v2 ld2(const double *p) { return *(const v2u *)p; }
static inline void st2(double *p, v2 v) { *(v2u *)p = v; }
static inline v2 set2(double x) { return (v2){x, x}; }
static inline double sum2(v2 v) { return v[0] + v[1]; }
static inline double max2(v2 v) { return lc_max(v[0], v[1]); }
#ifdef __SSE2__
static inline v2 vsqrt2(v2 v) { return _mm_sqrt_pd(v); }
/* a > b ? a : b per lane, as lc_max */
static inline v2 vmax2(v2 a, v2 b) { return _mm_max_pd(a, b); }
#else
static inline v2 vsqrt2(v2 v) { return (v2){sqrt(v[0]), sqrt(v[1])}; }
static inline v2 vmax2(v2 a, v2 b) { return (v2){lc_max(a[0], b[0]), lc_max(a[1], b[1])}; }
#endif

/* G_i . dx for the pair at i */
static inline v2 g_dot2(const ipm *w, int i, const v2 dx[NX])
{
    return ld2(w->g0 + i) * dx[0] + ld2(w->g1 + i) * dx[1] + ld2(w->g2 + i) * dx[2] +
           ld2(w->a1 + i) * dx[3] + ld2(w->a2 + i) * dx[4];
}

static inline void splat5(const double x[NX], v2 out[NX])
{
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        out[p] = set2(x[p]);
}

/*
 * Moves s and lam by alpha along the last direction, evaluates each
 * constraint (gradient, z, primal residual, 1/s, 1/lam, 1/|L a|) and
 * gathers what the convergence test needs: dual residual, gap, largest
 * primal residual. The Newton matrix waits for newton_matrix(), which the
 * last pass skips.
 */
static void evaluate(ipm *w, double alpha, kkt *k)
{
    v2 x[NX], rd[NX] = {0}, gap = {0}, rpmax = {0};
    const v2 va = set2(alpha), one = set2(1.0);
    splat5(w->x, x);
    double gf[NX];
    objective_derivs(w->x, gf, k->H);
    for (int i = 0; i < w->np; i += 2) {
        v2 s = ld2(w->s + i) + va * ld2(w->ds + i), lam = ld2(w->lam + i) + va * ld2(w->dl + i);
        v2 a1 = ld2(w->a1 + i), a2 = ld2(w->a2 + i);
        v2 w1 = x[0] * a1 + x[1] * a2, w2 = x[1] * a1 + x[2] * a2;
        v2 nw = vsqrt2(w1 * w1 + w2 * w2), inw = one / nw;
        v2 u1 = w1 * inw, u2 = w2 * inw, rp = nw + a1 * x[3] + a2 * x[4] - ld2(w->b + i) + s;
        v2 g0 = a1 * u1, g1 = a2 * u1 + a1 * u2, g2 = a2 * u2;
        st2(w->s + i, s);
        st2(w->lam + i, lam);
        st2(w->g0 + i, g0);
        st2(w->g1 + i, g1);
        st2(w->g2 + i, g2);
        st2(w->z0 + i, -(a1 * u2));
        st2(w->z2 + i, a2 * u1);
        st2(w->inw + i, inw);
        st2(w->is + i, one / s);
        st2(w->il + i, one / lam);
        st2(w->rp + i, rp);
        rd[0] += lam * g0;
        rd[1] += lam * g1;
        rd[2] += lam * g2;
        rd[3] += lam * a1;
        rd[4] += lam * a2;
        gap += s * lam;
        rpmax = vmax2(rpmax, vmax2(rp, -rp));
    }
    if (w->np > w->n)
        w->is[w->n] = w->il[w->n] = 0.0; /* the ghost */
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        k->rd[p] = gf[p] + sum2(rd[p]);
    k->gap = sum2(gap);
    k->rpmax = max2(rpmax);
}

/* H += k v v^T on the leading 3x3 block (packed lower triangle). */
static inline void rank1_3(v2 H[NT], const v2 v[3], v2 k)
{
    v2 k0 = k * v[0], k1 = k * v[1], k2 = k * v[2];
    H[0] += k0 * v[0];
    H[1] += k1 * v[0];
    H[2] += k1 * v[1];
    H[3] += k2 * v[0];
    H[4] += k2 * v[1];
    H[5] += k2 * v[2];
}

/* H += k v v^T on the whole packed 5x5 matrix. */
static inline void rank1_5(v2 H[NT], const v2 v[NX], v2 k)
{
    rank1_3(H, v, k);
    v2 k3 = k * v[3], k4 = k * v[4];
    H[6] += k3 * v[0];
    H[7] += k3 * v[1];
    H[8] += k3 * v[2];
    H[9] += k3 * v[3];
    H[10] += k4 * v[0];
    H[11] += k4 * v[1];
    H[12] += k4 * v[2];
    H[13] += k4 * v[3];
    H[14] += k4 * v[4];
}

static inline void grad_g2(const ipm *w, int i, v2 G[NX])
{
    G[0] = ld2(w->g0 + i);
    G[1] = ld2(w->g1 + i);
    G[2] = ld2(w->g2 + i);
    G[3] = ld2(w->a1 + i);
    G[4] = ld2(w->a2 + i);
}

/* The reduced Newton matrix and right-hand sides at the evaluated point. */
static void newton_matrix(ipm *w, kkt *k)
{
    v2 H[NT] = {0}, acc[NX] = {0}, gs[NX] = {0};
    const v2 one = set2(1.0);
    for (int i = 0; i < w->np; i += 2) {
        v2 lam = ld2(w->lam + i), is = ld2(w->is + i), G[NX];
        grad_g2(w, i, G);
        v2 z[3] = {ld2(w->z0 + i), G[0] - G[2], ld2(w->z2 + i)};
        v2 v = lam * (ld2(w->rp + i) * is - one);
        rank1_3(H, z, lam * ld2(w->inw + i));
        rank1_5(H, G, lam * is);
#pragma GCC unroll 5
        for (int p = 0; p < NX; p++) {
            acc[p] += v * G[p];
            gs[p] += is * G[p];
        }
    }
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++) {
        k->rhs[p] = -k->rd[p] - sum2(acc[p]); /* predictor: rc_i = s_i lam_i */
        k->gs[p] = sum2(gs[p]);
    }
    #pragma GCC unroll 15
    for (int q = 0; q < NT; q++)
        k->H[q] += sum2(H[q]);
}

/* Largest step in (0, 1e300] keeping L + alpha dL positive definite. */
static double step_pd(const double x[NX], const double dx[NX])
{
    double c0 = x[0] * x[2] - x[1] * x[1];
    double c1 = x[0] * dx[2] + x[2] * dx[0] - 2.0 * x[1] * dx[1];
    double c2 = dx[0] * dx[2] - dx[1] * dx[1];
    double best = 1e300;
    /* roots of c0 + c1 t + c2 t^2 with c0 > 0 */
    if (c2 == 0.0)
        return c1 < 0.0 ? -c0 / c1 : best;
    double disc = c1 * c1 - 4.0 * c2 * c0;
    if (disc < 0.0)
        return best;
    double q = -0.5 * (c1 + copysign(sqrt(disc), c1));
    double r1 = q / c2, r2 = q != 0.0 ? c0 / q : 1e300;
    if (r1 > 0.0)
        best = lc_min(best, r1);
    if (r2 > 0.0)
        best = lc_min(best, r2);
    return best;
}

/* 1 / (largest step keeping positive): max(0, -dv/v, ...), from 1/v. */
static inline v2 inv_step2(v2 dv, v2 iv, v2 acc) { return vmax2(acc, -dv * iv); }

/* The largest step from the lanes' 1/(step) bounds (a bound of 0 or -0 is
 * no bound at all). */
static double step_from(v2 ia_s, v2 ia_l) { return 1.0 / lc_max(max2(vmax2(ia_s, ia_l)), DBL_MIN); }

/* What the predictor pass hands to the corrector. */
typedef struct affine {
    double alpha, mu;  /* affine step length, complementarity after it */
    double gp[NX];     /* sum G_i ds_i dlam_i / s_i */
} affine;

/* Affine-scaling (predictor) direction; stores ds*dlam per constraint. */
static void predictor(ipm *w, const lc_chol5 *Hc, const kkt *k, affine *af)
{
    double dx[NX];
    v2 d[NX], gp[NX] = {0}, s1 = {0}, s2 = {0}, ia_s = {0}, ia_l = {0};
    lc_chol5_solve(Hc, k->rhs, dx);
    splat5(dx, d);
    for (int i = 0; i < w->np; i += 2) {
        v2 s = ld2(w->s + i), lam = ld2(w->lam + i), is = ld2(w->is + i), G[NX];
        v2 ds = -ld2(w->rp + i) - g_dot2(w, i, d);
        v2 dl = -lam * (s + ds) * is;
        ia_s = inv_step2(ds, is, ia_s);
        ia_l = inv_step2(dl, ld2(w->il + i), ia_l);
        s1 += s * dl + lam * ds;
        s2 += ds * dl;
        v2 pa = ds * dl, t = pa * is;
        st2(w->pa + i, pa);
        grad_g2(w, i, G);
#pragma GCC unroll 5
        for (int p = 0; p < NX; p++)
            gp[p] += t * G[p];
    }
    af->alpha = lc_min(1.0, lc_min(step_pd(w->x, dx), step_from(ia_s, ia_l)));
    af->mu = (k->gap + af->alpha * sum2(s1) + af->alpha * af->alpha * sum2(s2)) / w->n;
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        af->gp[p] = sum2(gp[p]);
}

/* Corrector direction into dx, w->ds, w->dl; returns the largest step. */
static double corrector(ipm *w, const lc_chol5 *Hc, const kkt *k, const affine *af,
                        double sigma_mu, double dx[NX])
{
    double rhs[NX];
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        rhs[p] = k->rhs[p] - sigma_mu * k->gs[p] + af->gp[p];
    lc_chol5_solve(Hc, rhs, dx);
    v2 d[NX], ia_s = {0}, ia_l = {0};
    const v2 smu = set2(sigma_mu);
    splat5(dx, d);
    for (int i = 0; i < w->np; i += 2) {
        v2 s = ld2(w->s + i), lam = ld2(w->lam + i), is = ld2(w->is + i);
        v2 ds = -ld2(w->rp + i) - g_dot2(w, i, d);
        v2 rc = s * lam - smu + ld2(w->pa + i);
        v2 dl = (-rc - lam * ds) * is;
        st2(w->ds + i, ds);
        st2(w->dl + i, dl);
        ia_s = inv_step2(ds, is, ia_s);
        ia_l = inv_step2(dl, ld2(w->il + i), ia_l);
    }
    return lc_min(step_pd(w->x, dx), step_from(ia_s, ia_l));
}

static double absmax5(const double v[NX])
{
    double m = 0.0;
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        m = lc_max(m, fabs(v[p]));
    return m;
}

/*
 * One Mehrotra predictor-corrector step: x moves now, s and lam at the next
 * evaluate(). Returns the step length, 0 on a numerical breakdown.
 */
static double ipm_step(ipm *w, const kkt *k)
{
    lc_chol5 hc;
    double dx[NX];
    if (!lc_chol5_factor(&hc, k->H))
        return 0.0;
    double mu = k->gap / w->n;
    affine af;
    predictor(w, &hc, k, &af);
    /* Mehrotra's sigma; but complementarity may not run far ahead of dual
     * feasibility (mu >= k |r_d|^2), or the slacks collapse to 1e-20 with the
     * dual residual still large and the Newton matrix loses all its digits */
    double ratio = lc_min(lc_max(af.mu / mu, 0.0), 1.0), rdn = absmax5(k->rd);
    double sigma_mu = lc_min(lc_max(ratio * ratio * ratio * mu, MU_RD_FLOOR * rdn * rdn), mu);
    double rmu = sqrt(mu), tau = 1.0 - lc_min(STEP_TAU_GAP, rmu * sqrt(rmu)); /* mu^0.75 */
    double alpha = lc_min(1.0, tau * corrector(w, &hc, k, &af, sigma_mu, dx));
    if (!(alpha > 0.0) || !isfinite(alpha))
        return 0.0;
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        w->x[p] += alpha * dx[p];
    return alpha;
}

/* Start: L = theta I, d = 0, exact slacks, lambda centred with sum lambda |L a| = 2. */
static void ipm_init(ipm *w, double th)
{
    w->x[0] = th;
    w->x[1] = 0.0;
    w->x[2] = th;
    w->x[3] = w->x[4] = 0.0;
    double sum = 0.0;
    for (int i = 0; i < w->n; i++) {
        w->s[i] = w->b[i] - th;
        w->ds[i] = w->dl[i] = 0.0;
        sum += th / w->s[i];
    }
    double mu = 2.0 / sum;
    for (int i = 0; i < w->n; i++)
        w->lam[i] = mu / w->s[i];
    if (w->np > w->n) { /* the ghost (see ipm) */
        w->s[w->n] = w->s[0];
        w->lam[w->n] = w->ds[w->n] = w->dl[w->n] = 0.0;
    }
}

/* Runs the method; returns the status, iterations and gap through info. */
static int ipm_run(ipm *w, const lc_ellipse_opts *o, bool warm, lc_ellipse_info *info)
{
    kkt k;
    int it = 0, status = LC_ELLIPSE_MAX_ITER;
    double ptol = o->gap_tol, dtol = sqrt(o->gap_tol) * 1e-2, alpha = 0.0;
    ipm_init(w, warm ? START_THETA_WARM : START_THETA);
    for (;;) {
        evaluate(w, alpha, &k);
        if (k.gap <= o->gap_tol && k.rpmax <= ptol && absmax5(k.rd) <= dtol) {
            status = LC_OK;
            break;
        }
        if (it >= o->max_iter || (warm && it >= WARM_MAX_ITER))
            break;
        if (warm && lc_max(w->x[0], w->x[2]) > WARM_GROWTH_MAX)
            return LC_ERR_UNBOUNDED;
        newton_matrix(w, &k);
        alpha = ipm_step(w, &k);
        if (!(alpha > 0.0))
            break;
        it++;
    }
    info->iterations = it;
    info->gap = k.gap;
    return status;
}

/*
 * Shrinks the rounded-frame ellipse about its centre until it is feasible,
 * from the last evaluation (g_i = rp_i - s_i at the current point).
 */
static bool make_feasible(ipm *w)
{
    double kappa = 1.0;
    for (int i = 0; i < w->n; i++) {
        double g = w->rp[i] - w->s[i];
        if (g > 0.0)
            kappa = lc_min(kappa, 1.0 - g * w->inw[i]);
    }
    if (!(kappa > 0.0))
        return false;
    w->x[0] *= kappa;
    w->x[1] *= kappa;
    w->x[2] *= kappa;
    return true;
}

/* Binds the arrays to work (14 np doubles); row n of r becomes the ghost's. */
static void ipm_bind(ipm *w, lc_hrows r, double *work)
{
    int n = r.n, np = n + (n & 1);
    w->n = n;
    w->np = np;
    if (np > n) {
        r.a1[n] = r.a1[0];
        r.a2[n] = r.a2[0];
        r.b[n] = r.b[0];
    }
    w->a1 = r.a1;
    w->a2 = r.a2;
    w->b = r.b;
    double **arr[] = {&w->s,  &w->lam, &w->ds, &w->dl,  &w->g0, &w->g1, &w->g2,
                      &w->z0, &w->z2,  &w->rp, &w->is,  &w->il, &w->inw, &w->pa};
    for (int j = 0; j < (int)(sizeof arr / sizeof arr[0]); j++)
        *arr[j] = work + j * np;
}

int lc_ipm_solve(lc_hrows r, double *work, const lc_ellipse_opts *o, bool warm,
                 lc_ellipse_info *info, lc_ipm_result *out)
{
    ipm w;
    ipm_bind(&w, r, work);
    int status = ipm_run(&w, o, warm, info);
    out->feasible = status >= 0 && make_feasible(&w);
    for (int p = 0; p < NX; p++)
        out->x[p] = w.x[p];
    out->lam = w.lam;
    return status;
}
