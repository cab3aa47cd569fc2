/*
 * ellipse.c - the maximum-area ellipse inscribed in a convex polygon
 * (Boyd and Vandenberghe, Convex Optimization, 8.4.2) by a primal-dual
 * interior-point Newton method with Mehrotra's predictor-corrector.
 *
 * Cost (callgrind, the bench's random polygons, cold solves): 4 sides 10.5k
 * instructions, 16 sides 25.3k, 32 sides 43.8k (59.4k at 16 sides before the
 * passes were fused, paired and the clipper skipped); about 4-5 iterations.
 *
 * How a solve runs:
 * 1. The halfspaces are normalised (unit normals).
 * 2. A start ellipse (T, p0) strictly inside is found: the caller's warm
 *    ellipse when it fits (touching allowed) and the normals surround the
 *    origin; otherwise the polygon: the meets of neighbouring lines in angle
 *    order when that chain is plainly well formed (fast_polygon), else by
 *    clipping a huge box about a point near it (this is where EMPTY and
 *    UNBOUNDED are decided); its area centroid and area covariance give p0
 *    and T.
 * 3. The problem is solved in the frame p = p0 + T q, where the start ellipse
 *    is the unit disc and the polygon is "round": this keeps the 5x5 Newton
 *    systems well conditioned whatever the polygon's size (1e-4 m or 1e3 m),
 *    offset (1e6 m) or aspect ratio, and the iteration count nearly affine
 *    invariant (4 to 8 typically, 15 at most seen in 20000 random polygons).
 * 4. The result is mapped back, L = sqrtm(T L'^2 T) and d = p0 + T d', the
 *    multipliers rescaled to the caller's (unnormalised) constraints.
 * A warm solve that fails in any way (rare: a warm shape far from the
 * answer) is redone cold; info->warm_used tells which one answered.
 *
 * Invariants: lengths in the caller's unit (metres). The returned ellipse
 * passes lc_ellipse_inside_halfspace(e, h_i, 0) for every input halfspace, as
 * evaluated in the caller's own numbers: it is shrunk about its centre by
 * the last iterate's residual infeasibility (about gap_tol) and then by
 * whatever rounding of the way back needs. The duality gap is in units of
 * log det. opts->gap_tol <= 0 or opts->max_iter < 0 mean the defaults. No
 * allocation, no globals, no I/O: everything lives in the caller's scratch
 * of LC_ELLIPSE_SCRATCH(n) doubles (3(n+4) rows, n scales, then the larger
 * of the clipper's 8(n+4) and the interior-point method's 14(n+1)).
 */
#include "ellipse.h"

#include <assert.h>
#include <float.h>
#include <stddef.h>
#include <math.h>
#ifdef __SSE2__
#include <emmintrin.h>
#endif

/* Symmetric 2x2 matrix [[a, b], [b, c]]. */
typedef struct sym2 {
    double a, b, c;
} sym2;

/* The polygon's halfspaces as arrays; rows [n, n + 4) hold the box (the
 * clipper's) or, row n, the interior-point method's ghost. */
typedef struct rows {
    double *a1, *a2, *b;
    int n;
} rows;

/* Convex polygon as a cyclic edge list: vertex k = edge k meets edge k+1. */
typedef struct clip {
    rows h;
    double *edge, *vx, *vy, *sd, *te, *tx, *ty;
    int m;
} clip;

/*
 * Interior-point state in the rounded frame; unit normals, origin inside.
 * The per-constraint arrays hold np = n rounded up to even entries: the
 * passes take two constraints at a time. An odd n gets a ghost at index n,
 * a copy of constraint 0 with lam = 0 and 1/s = 1/lam = 0 forced after each
 * evaluation, so every sum it enters gains an exact zero, its slack moves
 * exactly as constraint 0's (same numbers, same operations) and its step
 * bounds repeat constraint 0's.
 */
typedef struct ipm {
    int n, np;
    const double *a1, *a2, *b;
    double *s, *lam, *ds, *dl;  /* iterate and last direction */
    double *g0, *g1, *g2;       /* L block of the constraint gradient G_i */
    double *z0, *z2;            /* ends of z_i (its middle is g0 - g2) */
    double *rp, *is, *il, *inw, *pa;
    double x[5]; /* l11, l12, l22, d1, d2 */
} ipm;

/* Start ellipse and a record of how it was found. */
typedef struct start {
    sym2 t;
    lc_vec2 p0;
    int warm;
} start;

enum {
    BOX_EDGES = 4,
    NX = 5,
};

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
/* A Cholesky pivot below this fraction of its diagonal entry is noise. */
static const double CHOL_LOST = 1e-13;
static const double CHOL_HUGE = 1e150;
/* The clipper-free start (fast_polygon) wants neighbouring lines at a sine
 * above this and every edge longer than FAST_EDGE_REL of the largest offset:
 * its meets then carry errors below 1e-9 of the offsets, far below the edges
 * it accepts. */
static const double FAST_MIN_SIN = 1e-6;
static const double FAST_EDGE_REL = 1e-7;
/* Below this |sin| between two lines the clipper interpolates instead. */
static const double CLIP_MIN_SIN = 1e-9;
/* A polygon whose inradius-like slack at its centroid is below this fraction
 * of its diameter counts as having zero area. */
static const double ZERO_AREA_REL = 1e-9;
/* A warm ellipse may poke out by this fraction and still count as touching. */
static const double WARM_TOUCH_REL = 1e-9;
/* Growth of the rounded-frame ellipse beyond which a warm solve gives up:
 * the polygon is unbounded or the warm ellipse was far too small. */
static const double WARM_GROWTH_MAX = 1e6;

/* fmin/fmax without the libm call (operands are never NaN where used). */
static double dmin(double p, double q) { return p < q ? p : q; }
static double dmax(double p, double q) { return p > q ? p : q; }

void lc_ellipse_opts_default(lc_ellipse_opts *opts)
{
    opts->gap_tol = 1e-9;
    opts->max_iter = 60;
}

static double sym2_det(sym2 m) { return m.a * m.c - m.b * m.b; }

/*
 * Principal square root of a symmetric PD 2x2 matrix, closed form
 * (m + s I) / sqrt(tr m + 2 s) with s = sqrt(det m) given: for a thin
 * ellipse det m from m's entries cancels badly, while the caller can often
 * get it from factors.
 */
static sym2 sym2_sqrt_det(sym2 m, double s)
{
    double t = sqrt(m.a + m.c + 2.0 * s);
    return (sym2){(m.a + s) / t, m.b / t, (m.c + s) / t};
}

static sym2 sym2_sqrt(sym2 m) { return sym2_sqrt_det(m, sqrt(fmax(sym2_det(m), 0.0))); }

/* p q p for symmetric p, q. */
static sym2 sym2_sandwich(sym2 p, sym2 q)
{
    double m11 = p.a * q.a + p.b * q.b, m12 = p.a * q.b + p.b * q.c;
    double m21 = p.b * q.a + p.c * q.b, m22 = p.b * q.b + p.c * q.c;
    return (sym2){m11 * p.a + m12 * p.b, m11 * p.b + m12 * p.c, m21 * p.b + m22 * p.c};
}

static sym2 sym2_scale(sym2 m, double k) { return (sym2){m.a * k, m.b * k, m.c * k}; }

static bool sym2_pd(sym2 m) { return m.a > 0.0 && m.c > 0.0 && sym2_det(m) > 0.0; }

static lc_vec2 sym2_apply(sym2 m, lc_vec2 v)
{
    return lc_v2(m.a * v.x + m.b * v.y, m.b * v.x + m.c * v.y);
}

/* ---------------------------------------------------------------- input */

/* Unit normals into r; c[i] = |a_i|. False on a non-finite or zero normal. */
static bool normalise(const lc_halfspace *h, int n, rows r, double *c)
{
    for (int i = 0; i < n; i++) {
        double ax = h[i].a.x, ay = h[i].a.y, len2 = ax * ax + ay * ay;
        /* hypot only where the squares over- or underflow */
        double len = len2 > 1e-300 && len2 < 1e300 ? sqrt(len2) : hypot(ax, ay);
        if (!lc_vec2_finite(h[i].a) || !isfinite(h[i].b) || !(len > 0.0) || !isfinite(len))
            return false;
        r.a1[i] = ax / len;
        r.a2[i] = ay / len;
        r.b[i] = h[i].b / len;
        if (!isfinite(r.b[i]))
            return false;
        c[i] = len;
    }
    return true;
}

/* ----------------------------------------------------------- cold start */

static int cyc_next(int k, int m) { return k + 1 == m ? 0 : k + 1; }
static int cyc_prev(int k, int m) { return k == 0 ? m - 1 : k - 1; }

/*
 * Where lines p and q meet. Nearly parallel lines are met by interpolating
 * along the edge (x0, y0, s0) -> (x1, y1, s1) that crosses line q, with s
 * the side values of its ends (s0 <= 0 < s1 or the reverse).
 */
static void clip_meet(const clip *c, int p, int q, const double e[6], double *x, double *y)
{
    const rows *r = &c->h;
    double det = r->a1[p] * r->a2[q] - r->a2[p] * r->a1[q];
    if (fabs(det) > CLIP_MIN_SIN) {
        *x = (r->b[p] * r->a2[q] - r->b[q] * r->a2[p]) / det;
        *y = (r->a1[p] * r->b[q] - r->a1[q] * r->b[p]) / det;
        if (isfinite(*x) && isfinite(*y))
            return;
    }
    double den = e[2] - e[5];
    double t = den != 0.0 ? e[2] / den : 0.5;
    t = fmin(fmax(t, 0.0), 1.0);
    *x = e[0] + t * (e[3] - e[0]);
    *y = e[1] + t * (e[4] - e[1]);
}

/* Side values against line h; returns the count of vertices strictly out. */
static int clip_sides(clip *c, int h, int *kmax)
{
    const rows *r = &c->h;
    double best = 0.0;
    int nout = 0;
    for (int k = 0; k < c->m; k++) {
        double px = r->a1[h] * c->vx[k], py = r->a2[h] * c->vy[k];
        double sd = px + py - r->b[h];
        double tol = 8.0 * DBL_EPSILON * (fabs(px) + fabs(py) + fabs(r->b[h]));
        c->sd[k] = sd > tol ? sd : dmin(sd, 0.0);
        if (c->sd[k] > 0.0) {
            nout++;
            if (c->sd[k] > best) {
                best = c->sd[k];
                *kmax = k;
            }
        }
    }
    return nout;
}

static void swap_ptr(double **p, double **q)
{
    double *t = *p;
    *p = *q;
    *q = t;
}

/* Cuts the polygon by line h. False when nothing is left. */
static bool clip_by(clip *c, int h)
{
    int m = c->m, kmax = 0;
    int nout = clip_sides(c, h, &kmax);
    if (nout == 0)
        return true;
    if (nout == m)
        return false;
    /* The outside run v_j..v_k around the farthest vertex (a second run can
     * only be rounding noise next to line h; it is treated as inside). */
    int j = kmax, k = kmax;
    while (c->sd[cyc_prev(j, m)] > 0.0)
        j = cyc_prev(j, m);
    while (c->sd[cyc_next(k, m)] > 0.0)
        k = cyc_next(k, m);
    int cnt = 0;
    for (int t = cyc_next(k, m);; t = cyc_next(t, m)) {
        c->te[cnt] = c->edge[t];
        if (t == j) {
            int pj = cyc_prev(j, m);
            double e[6] = {c->vx[pj], c->vy[pj], c->sd[pj], c->vx[j], c->vy[j], c->sd[j]};
            clip_meet(c, (int)c->edge[j], h, e, &c->tx[cnt], &c->ty[cnt]);
            cnt++;
            break;
        }
        c->tx[cnt] = c->vx[t];
        c->ty[cnt] = c->vy[t];
        cnt++;
    }
    int nk = cyc_next(k, m);
    double e[6] = {c->vx[k], c->vy[k], c->sd[k], c->vx[nk], c->vy[nk], c->sd[nk]};
    c->te[cnt] = h;
    clip_meet(c, (int)c->edge[nk], h, e, &c->tx[cnt], &c->ty[cnt]);
    cnt++;
    swap_ptr(&c->edge, &c->te);
    swap_ptr(&c->vx, &c->tx);
    swap_ptr(&c->vy, &c->ty);
    c->m = cnt;
    return true;
}

/* Box of half-width R about the origin as rows [n, n + 4), CCW edges. */
static void clip_init_box(clip *c, double R)
{
    static const double nx[BOX_EDGES] = {1, 0, -1, 0}, ny[BOX_EDGES] = {0, 1, 0, -1};
    static const double vx[BOX_EDGES] = {1, -1, -1, 1}, vy[BOX_EDGES] = {1, 1, -1, -1};
    for (int k = 0; k < BOX_EDGES; k++) {
        int r = c->h.n + k;
        c->h.a1[r] = nx[k];
        c->h.a2[r] = ny[k];
        c->h.b[r] = R;
        c->edge[k] = r;
        c->vx[k] = vx[k] * R;
        c->vy[k] = vy[k] * R;
    }
    c->m = BOX_EDGES;
}

/* Area, centroid and area covariance of the clipped polygon. */
static bool clip_moments(const clip *c, lc_vec2 *g, sym2 *cov, double *diam)
{
    double ox = c->vx[0], oy = c->vy[0];
    double A = 0, sx = 0, sy = 0, sxx = 0, sxy = 0, syy = 0;
    double xmin = ox, xmax = ox, ymin = oy, ymax = oy;
    for (int k = 1; k + 1 < c->m; k++) {
        double px = c->vx[k] - ox, py = c->vy[k] - oy;
        double qx = c->vx[k + 1] - ox, qy = c->vy[k + 1] - oy;
        double a = 0.5 * (px * qy - py * qx);
        A += a;
        sx += a * (px + qx) / 3.0;
        sy += a * (py + qy) / 3.0;
        sxx += a / 6.0 * (px * px + qx * qx + px * qx);
        syy += a / 6.0 * (py * py + qy * qy + py * qy);
        sxy += a / 12.0 * (2.0 * px * py + 2.0 * qx * qy + px * qy + qx * py);
    }
    for (int k = 0; k < c->m; k++) {
        xmin = fmin(xmin, c->vx[k]);
        xmax = fmax(xmax, c->vx[k]);
        ymin = fmin(ymin, c->vy[k]);
        ymax = fmax(ymax, c->vy[k]);
    }
    *diam = hypot(xmax - xmin, ymax - ymin);
    if (!(A > 0.0) || !isfinite(A))
        return false;
    double cx = sx / A, cy = sy / A;
    *g = lc_v2(ox + cx, oy + cy);
    *cov = (sym2){sxx / A - cx * cx, sxy / A - cx * cy, syy / A - cy * cy};
    return true;
}

/* Smallest slack of the real halfspaces at p, less its rounding error. */
static double min_slack(rows r, lc_vec2 p)
{
    double best = INFINITY;
    for (int i = 0; i < r.n; i++) {
        double px = r.a1[i] * p.x, py = r.a2[i] * p.y;
        double err = 16.0 * DBL_EPSILON * (fabs(px) + fabs(py) + fabs(r.b[i]));
        best = dmin(best, r.b[i] - px - py - err);
    }
    return best;
}

/*
 * A point near the polygon: where line 0 meets the line most transversal to
 * it. Clipping about it keeps the offsets b small, so that vertices of
 * nearly parallel lines far from the origin (a sliver at 1e6 m) are not lost
 * to cancellation.
 */
static lc_vec2 reference_point(rows r)
{
    int best = 0;
    double sbest = 0.0;
    for (int i = 1; i < r.n; i++) {
        double sn = fabs(r.a1[0] * r.a2[i] - r.a2[0] * r.a1[i]);
        if (sn > sbest) {
            sbest = sn;
            best = i;
        }
    }
    if (!(sbest > CLIP_MIN_SIN))
        return lc_v2(r.a1[0] * r.b[0], r.a2[0] * r.b[0]);
    double det = r.a1[0] * r.a2[best] - r.a2[0] * r.a1[best];
    return lc_v2((r.b[0] * r.a2[best] - r.b[best] * r.a2[0]) / det,
                 (r.a1[0] * r.b[best] - r.a1[best] * r.b[0]) / det);
}

/* Rows of r about ref (offsets into bl); returns max |offset|. */
static double local_rows(rows r, lc_vec2 ref, double *bl, rows *loc)
{
    double bmax = 0.0;
    for (int i = 0; i < r.n; i++) {
        bl[i] = r.b[i] - r.a1[i] * ref.x - r.a2[i] * ref.y;
        bmax = dmax(bmax, fabs(bl[i]));
    }
    *loc = (rows){r.a1, r.a2, bl, r.n};
    return bmax;
}

/*
 * Clips a box far larger than any sensible polygon (1e9 times the largest
 * offset) by every halfspace. A box edge left over means unbounded.
 */
static int clip_all(clip *c, double bmax)
{
    clip_init_box(c, 1e9 * (bmax > 0.0 ? bmax : 1.0));
    for (int i = 0; i < c->h.n; i++)
        if (!clip_by(c, i))
            return LC_ELLIPSE_EMPTY;
    for (int k = 0; k < c->m; k++)
        if (c->edge[k] >= c->h.n)
            return LC_ELLIPSE_UNBOUNDED;
    return LC_ELLIPSE_OK;
}

/* Pseudo-angle of a unit vector in [0, 4): monotone in its angle, no trig. */
static double pseudo_angle(double x, double y) { return y >= 0.0 ? 1.0 - x : 3.0 + x; }

/*
 * The polygon without clipping, when it is plainly well formed: taken in the
 * order of their normals' angles, every two neighbouring lines meet at a
 * clear angle (sine above FAST_MIN_SIN: each turn is below pi, so the
 * polygon is bounded, and the meets are well conditioned) and every line
 * keeps an edge longer than FAST_EDGE_REL of the largest offset (so none is
 * redundant and the chain of meets is the polygon itself, not empty). Fills
 * c as clip_all does; false sends the caller to the clipper, which decides
 * every other case. The clipper costs O(n^2) (each line is tested against
 * every vertex so far), this O(n) after an insertion sort. Measured with
 * callgrind on the bench's random 16-gons: 10.2k instructions in the
 * clipper against 2.0k here, the whole cold start 13.2k -> 5.0k.
 */
static bool fast_polygon(clip *c, double bmax)
{
    const rows *r = &c->h;
    int n = r->n;
    double *key = c->te, *ord = c->edge;
    for (int i = 0; i < n; i++) {
        double k = pseudo_angle(r->a1[i], r->a2[i]);
        int j = i;
        for (; j > 0 && key[j - 1] > k; j--) {
            key[j] = key[j - 1];
            ord[j] = ord[j - 1];
        }
        key[j] = k;
        ord[j] = i;
    }
    for (int k = 0; k < n; k++) {
        int p = (int)ord[k], q = (int)ord[cyc_next(k, n)];
        double det = r->a1[p] * r->a2[q] - r->a2[p] * r->a1[q];
        if (!(det > FAST_MIN_SIN))
            return false;
        c->vx[k] = (r->b[p] * r->a2[q] - r->b[q] * r->a2[p]) / det;
        c->vy[k] = (r->a1[p] * r->b[q] - r->a1[q] * r->b[p]) / det;
    }
    double tol = FAST_EDGE_REL * bmax;
    for (int k = 0; k < n; k++) {
        int p = (int)ord[k], km = cyc_prev(k, n);
        /* line p's edge runs from vertex k-1 to vertex k, direction (-a2, a1) */
        double len = r->a1[p] * (c->vy[k] - c->vy[km]) - r->a2[p] * (c->vx[k] - c->vx[km]);
        if (!(len > tol))
            return false;
    }
    c->m = n;
    return true;
}

/* True when the polygon's edges lie far from the origin of the clip frame. */
static bool clip_far(const clip *c, double diam)
{
    double far = 0.0;
    for (int k = 0; k < c->m; k++)
        far = dmax(far, fabs(c->h.b[(int)c->edge[k]]));
    return far > 1e3 * diam;
}

/*
 * Cold start: the polygon by clipping (where EMPTY and UNBOUNDED are
 * decided), about a reference point near it, redone once about the
 * centroid when the reference was far; then centroid and covariance.
 */
static int cold_start(rows r, double *work, start *st)
{
    int m = r.n + BOX_EDGES;
    lc_vec2 ref = reference_point(r);
    for (int pass = 0;; pass++) {
        rows loc;
        double bmax = local_rows(r, ref, work, &loc);
        clip c = {loc,          work + m,     work + 2 * m, work + 3 * m, work + 4 * m,
                  work + 5 * m, work + 6 * m, work + 7 * m, 0};
        if (!fast_polygon(&c, bmax)) {
            int status = clip_all(&c, bmax);
            if (status != LC_ELLIPSE_OK)
                return status;
        }
        lc_vec2 g;
        sym2 cov;
        double diam;
        if (!clip_moments(&c, &g, &cov, &diam))
            return LC_ELLIPSE_EMPTY;
        if (pass == 0 && clip_far(&c, diam)) {
            ref = lc_add(ref, g);
            continue;
        }
        if (!(min_slack(loc, g) > ZERO_AREA_REL * diam))
            return LC_ELLIPSE_EMPTY;
        st->p0 = lc_add(ref, g);
        st->t = sym2_pd(cov) ? sym2_sqrt(cov) : (sym2){diam, 0.0, diam};
        st->warm = 0;
        return LC_ELLIPSE_OK;
    }
}

/*
 * True when the normals are not all in one closed half-plane, i.e. the
 * polygon (if not empty) is bounded. Each normal gets a pseudo-angle in
 * (-2, 2] relative to the first one (monotone in the true angle, no trig);
 * the normals fit in a half-plane exactly when the two extreme ones span at
 * most 180 degrees, or, with an exact antipode of the first, when all the
 * others lie on one side of it.
 */
static bool normals_surround(rows r)
{
    double a0x = r.a1[0], a0y = r.a2[0], pmin = 0.0, pmax = 0.0;
    int imin = 0, imax = 0;
    bool antipode = false;
    for (int i = 1; i < r.n; i++) {
        double x = a0x * r.a1[i] + a0y * r.a2[i], y = a0x * r.a2[i] - a0y * r.a1[i];
        if (y == 0.0) {
            antipode = antipode || x < 0.0;
            continue;
        }
        double p = (1.0 - x / (fabs(x) + fabs(y))) * (y > 0.0 ? 1.0 : -1.0);
        if (p < pmin) {
            pmin = p;
            imin = i;
        }
        if (p > pmax) {
            pmax = p;
            imax = i;
        }
    }
    if (antipode)
        return pmin < 0.0 && pmax > 0.0;
    double span = r.a1[imin] * r.a2[imax] - r.a2[imin] * r.a1[imax];
    return pmin < 0.0 && pmax > 0.0 && span < 0.0;
}

/* A warm ellipse is worth trying when finite and positive definite. */
static bool warm_valid(const lc_ellipse *w)
{
    sym2 t = {w->l11, w->l12, w->l22};
    return isfinite(t.a) && isfinite(t.b) && isfinite(t.c) && lc_vec2_finite(w->d) &&
           sym2_pd(t);
}

/* ------------------------------------------------------- rounded frame */

/*
 * Rewrites r in the frame p = p0 + T q with unit normals, T scaled so that
 * the unit disc touches the polygon; c[i] *= |T a_i|. Returns the scale
 * applied: 1 when the start ellipse touched the polygon, < 1 when it poked
 * out, not > 0 when the centre is outside.
 */
static double to_frame(rows r, double *c, start *st)
{
    double rmin = INFINITY;
    for (int i = 0; i < r.n; i++) {
        lc_vec2 ta = sym2_apply(st->t, lc_v2(r.a1[i], r.a2[i]));
        double len = sqrt(ta.x * ta.x + ta.y * ta.y), il = 1.0 / len;
        double room = r.b[i] - r.a1[i] * st->p0.x - r.a2[i] * st->p0.y;
        r.a1[i] = ta.x * il;
        r.a2[i] = ta.y * il;
        r.b[i] = room * il;
        c[i] *= len;
        rmin = dmin(rmin, r.b[i]);
    }
    if (!(rmin > 0.0) || !isfinite(rmin))
        return 0.0;
    double ir = 1.0 / rmin;
    for (int i = 0; i < r.n; i++) {
        r.b[i] *= ir;
        c[i] *= rmin;
    }
    st->t = sym2_scale(st->t, rmin);
    return rmin;
}

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

/* Packed lower triangle of a symmetric 5x5 matrix. */
enum { NT = NX * (NX + 1) / 2 };
static inline int tri(int r, int c) { return r * (r + 1) / 2 + c; }

/*
 * In-place Cholesky of a packed SPD 5x5 matrix. Near the optimum the weights
 * lam/s of active constraints reach 1e10 and more, and a pivot can lose all
 * its digits to rounding; such a pivot is set huge, which freezes that
 * direction instead of failing (the usual safeguard of interior-point LP
 * codes, common practice). False only on a non-finite matrix. The loops are
 * unrolled (fixed size): packed indices become constants.
 */
static bool chol5(double H[NT])
{
#pragma GCC unroll 5
    for (int j = 0; j < NX; j++) {
        double d = H[tri(j, j)], d0 = d;
#pragma GCC unroll 5
        for (int k = 0; k < j; k++)
            d -= H[tri(j, k)] * H[tri(j, k)];
        if (!isfinite(d))
            return false;
        if (!(d > CHOL_LOST * d0))
            d = CHOL_HUGE;
        d = sqrt(d);
        H[tri(j, j)] = d;
#pragma GCC unroll 5
        for (int i = j + 1; i < NX; i++) {
            double v = H[tri(i, j)];
#pragma GCC unroll 5
            for (int k = 0; k < j; k++)
                v -= H[tri(i, k)] * H[tri(j, k)];
            H[tri(i, j)] = v / d;
        }
    }
    return true;
}

/* Cholesky factor with the reciprocals of its diagonal. */
typedef struct chol {
    double f[NT], id[NX];
} chol;

static inline void chol5_solve(const chol *c, const double rhs[NX], double x[NX])
{
    double y[NX];
#pragma GCC unroll 5
    for (int i = 0; i < NX; i++) {
        double v = rhs[i];
#pragma GCC unroll 5
        for (int k = 0; k < i; k++)
            v -= c->f[tri(i, k)] * y[k];
        y[i] = v * c->id[i];
    }
#pragma GCC unroll 5
    for (int i = NX - 1; i >= 0; i--) {
        double v = y[i];
#pragma GCC unroll 5
        for (int k = i + 1; k < NX; k++)
            v -= c->f[tri(k, i)] * x[k];
        x[i] = v * c->id[i];
    }
}

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
static inline double max2(v2 v) { return dmax(v[0], v[1]); }
#ifdef __SSE2__
static inline v2 vsqrt2(v2 v) { return _mm_sqrt_pd(v); }
/* a > b ? a : b per lane, as dmax */
static inline v2 vmax2(v2 a, v2 b) { return _mm_max_pd(a, b); }
#else
static inline v2 vsqrt2(v2 v) { return (v2){sqrt(v[0]), sqrt(v[1])}; }
static inline v2 vmax2(v2 a, v2 b) { return (v2){dmax(a[0], b[0]), dmax(a[1], b[1])}; }
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
        best = dmin(best, r1);
    if (r2 > 0.0)
        best = dmin(best, r2);
    return best;
}

/* 1 / (largest step keeping positive): max(0, -dv/v, ...), from 1/v. */
static inline v2 inv_step2(v2 dv, v2 iv, v2 acc) { return vmax2(acc, -dv * iv); }

/* The largest step from the lanes' 1/(step) bounds (a bound of 0 or -0 is
 * no bound at all). */
static double step_from(v2 ia_s, v2 ia_l) { return 1.0 / dmax(max2(vmax2(ia_s, ia_l)), DBL_MIN); }

/* What the predictor pass hands to the corrector. */
typedef struct affine {
    double alpha, mu;  /* affine step length, complementarity after it */
    double gp[NX];     /* sum G_i ds_i dlam_i / s_i */
} affine;

/* Affine-scaling (predictor) direction; stores ds*dlam per constraint. */
static void predictor(ipm *w, const chol *Hc, const kkt *k, affine *af)
{
    double dx[NX];
    v2 d[NX], gp[NX] = {0}, s1 = {0}, s2 = {0}, ia_s = {0}, ia_l = {0};
    chol5_solve(Hc, k->rhs, dx);
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
    af->alpha = dmin(1.0, dmin(step_pd(w->x, dx), step_from(ia_s, ia_l)));
    af->mu = (k->gap + af->alpha * sum2(s1) + af->alpha * af->alpha * sum2(s2)) / w->n;
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        af->gp[p] = sum2(gp[p]);
}

/* Corrector direction into dx, w->ds, w->dl; returns the largest step. */
static double corrector(ipm *w, const chol *Hc, const kkt *k, const affine *af,
                        double sigma_mu, double dx[NX])
{
    double rhs[NX];
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        rhs[p] = k->rhs[p] - sigma_mu * k->gs[p] + af->gp[p];
    chol5_solve(Hc, rhs, dx);
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
    return dmin(step_pd(w->x, dx), step_from(ia_s, ia_l));
}

static double absmax5(const double v[NX])
{
    double m = 0.0;
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        m = dmax(m, fabs(v[p]));
    return m;
}

/*
 * One Mehrotra predictor-corrector step: x moves now, s and lam at the next
 * evaluate(). Returns the step length, 0 on a numerical breakdown.
 */
static double ipm_step(ipm *w, const kkt *k)
{
    chol hc;
    double dx[NX];
    #pragma GCC unroll 15
    for (int q = 0; q < NT; q++)
        hc.f[q] = k->H[q];
    if (!chol5(hc.f))
        return 0.0;
    #pragma GCC unroll 5
    for (int p = 0; p < NX; p++)
        hc.id[p] = 1.0 / hc.f[tri(p, p)];
    double mu = k->gap / w->n;
    affine af;
    predictor(w, &hc, k, &af);
    /* Mehrotra's sigma; but complementarity may not run far ahead of dual
     * feasibility (mu >= k |r_d|^2), or the slacks collapse to 1e-20 with the
     * dual residual still large and the Newton matrix loses all its digits */
    double ratio = dmin(dmax(af.mu / mu, 0.0), 1.0), rdn = absmax5(k->rd);
    double sigma_mu = dmin(dmax(ratio * ratio * ratio * mu, MU_RD_FLOOR * rdn * rdn), mu);
    double rmu = sqrt(mu), tau = 1.0 - dmin(STEP_TAU_GAP, rmu * sqrt(rmu)); /* mu^0.75 */
    double alpha = dmin(1.0, tau * corrector(w, &hc, k, &af, sigma_mu, dx));
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
            status = LC_ELLIPSE_OK;
            break;
        }
        if (it >= o->max_iter || (warm && it >= WARM_MAX_ITER))
            break;
        if (warm && dmax(w->x[0], w->x[2]) > WARM_GROWTH_MAX)
            return LC_ELLIPSE_UNBOUNDED;
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
            kappa = dmin(kappa, 1.0 - g * w->inw[i]);
    }
    if (!(kappa > 0.0))
        return false;
    w->x[0] *= kappa;
    w->x[1] *= kappa;
    w->x[2] *= kappa;
    return true;
}

/* ------------------------------------------------------------- driver */

/* Binds the arrays to work (14 np doubles); row n of r becomes the ghost's. */
static void ipm_bind(ipm *w, rows r, double *work)
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

/* Maps the rounded-frame result back; lambda_i /= c_i. */
static void map_back(const ipm *w, const start *st, const double *c, lc_ellipse *out,
                     double *lambda)
{
    sym2 lq = {w->x[0], w->x[1], w->x[2]};
    double s = sym2_det(st->t) * sym2_det(lq); /* sqrt(det(T L'^2 T)) */
    sym2 l = sym2_sqrt_det(sym2_sandwich(st->t, sym2_sandwich(lq, (sym2){1, 0, 1})), s);
    lc_vec2 d = lc_add(st->p0, sym2_apply(st->t, lc_v2(w->x[3], w->x[4])));
    *out = (lc_ellipse){l.a, l.b, l.c, d};
    if (lambda)
        for (int i = 0; i < w->n; i++)
            lambda[i] = w->lam[i] / c[i];
}

/*
 * Rounding in the way back can leave the ellipse out of a halfspace by a few
 * ulps of the caller's coordinates: shrink L about d until every
 * a . d + |L a| <= b holds as evaluated in the caller's own numbers. The
 * margin for the rounding of that test starts at zero and doubles, so that a
 * sliver far from the origin loses no more than it must.
 */
static void polish_one(lc_halfspace h, lc_ellipse *e)
{
    for (int tries = 0; tries < 12 && !lc_ellipse_inside_halfspace(e, h, 0.0); tries++) {
        sym2 l = {e->l11, e->l12, e->l22};
        double ad = lc_dot(h.a, e->d), len = lc_len(sym2_apply(l, h.a));
        /* |L a| of a thin ellipse carries the rounding of L's entries */
        double noise = fabs(ad) + fabs(h.b) +
                       (fabs(l.a) + 2.0 * fabs(l.b) + fabs(l.c)) * (fabs(h.a.x) + fabs(h.a.y));
        double margin = tries == 0 ? 0.0 : ldexp(DBL_EPSILON, tries - 2) * noise;
        double room = h.b - ad - margin;
        if (!(room > 0.0))
            return;
        double kappa = dmin(room / len, 1.0 - DBL_EPSILON);
        e->l11 *= kappa;
        e->l12 *= kappa;
        e->l22 *= kappa;
    }
}

/* Sweeps again when a shrink for one halfspace moved another's rounding. */
static void polish(const lc_halfspace *h, int n, lc_ellipse *e)
{
    for (int sweep = 0; sweep < 4; sweep++) {
        bool clean = true;
        for (int i = 0; i < n; i++)
            if (!lc_ellipse_inside_halfspace(e, h[i], 0.0)) {
                clean = false;
                polish_one(h[i], e);
            }
        if (clean)
            return;
    }
}

/* Solves from st in its rounded frame (r already mapped by to_frame). */
static int solve_in_frame(const lc_halfspace *h, rows r, const double *c, const start *st,
                          double *work, const lc_ellipse_opts *o, lc_ellipse *out,
                          double *lambda, lc_ellipse_info *info)
{
    ipm w;
    ipm_bind(&w, r, work);
    int status = ipm_run(&w, o, st->warm, info);
    if (status < 0 || !make_feasible(&w))
        return status < 0 ? status : LC_ELLIPSE_MAX_ITER;
    info->warm_used = st->warm;
    map_back(&w, st, c, out, lambda);
    polish(h, r.n, out);
    return status;
}

/*
 * The warm attempt: used when the warm ellipse lies inside (touching allowed)
 * and the solve converges; otherwise the caller starts cold.
 */
static bool try_warm(const lc_halfspace *h, rows r, double *c, const lc_ellipse *warm,
                     double *work, const lc_ellipse_opts *o, lc_ellipse *out, double *lambda,
                     lc_ellipse_info *info)
{
    start st = {{warm->l11, warm->l12, warm->l22}, warm->d, 1};
    if (!(to_frame(r, c, &st) >= 1.0 - WARM_TOUCH_REL))
        return false;
    return solve_in_frame(h, r, c, &st, work, o, out, lambda, info) == LC_ELLIPSE_OK;
}

static lc_ellipse_opts opts_or_default(const lc_ellipse_opts *opts)
{
    lc_ellipse_opts o;
    lc_ellipse_opts_default(&o);
    if (opts && opts->gap_tol > 0.0 && isfinite(opts->gap_tol))
        o.gap_tol = opts->gap_tol;
    if (opts && opts->max_iter >= 0)
        o.max_iter = opts->max_iter;
    return o;
}

int lc_ellipse_solve(const lc_halfspace *h, int n, const lc_ellipse *warm,
                     const lc_ellipse_opts *opts, lc_ellipse *out, double *lambda,
                     double *scratch, lc_ellipse_info *info)
{
    assert(out && scratch && (h || n <= 0));
    lc_ellipse_info dummy;
    lc_ellipse_opts o = opts_or_default(opts);
    if (!info)
        info = &dummy;
    *info = (lc_ellipse_info){0, INFINITY, 0};
    if (n < 3)
        return LC_ELLIPSE_BAD_INPUT;

    int m = n + BOX_EDGES;
    rows r = {scratch, scratch + m, scratch + 2 * m, n};
    double *c = scratch + 3 * m, *work = c + n;
    if (!normalise(h, n, r, c))
        return LC_ELLIPSE_BAD_INPUT;
    if (warm && warm_valid(warm) && normals_surround(r)) {
        if (try_warm(h, r, c, warm, work, &o, out, lambda, info))
            return LC_ELLIPSE_OK;
        normalise(h, n, r, c); /* the attempt rewrote the rows */
        *info = (lc_ellipse_info){0, INFINITY, 0};
    }
    start st;
    int status = cold_start(r, work, &st);
    if (status != LC_ELLIPSE_OK)
        return status;
    if (!(to_frame(r, c, &st) > 0.0))
        return LC_ELLIPSE_EMPTY;
    return solve_in_frame(h, r, c, &st, work, &o, out, lambda, info);
}

double lc_ellipse_area(const lc_ellipse *e)
{
    return LC_PI * (e->l11 * e->l22 - e->l12 * e->l12);
}

double lc_ellipse_logdet(const lc_ellipse *e)
{
    return log(e->l11 * e->l22 - e->l12 * e->l12);
}

bool lc_ellipse_inside_halfspace(const lc_ellipse *e, lc_halfspace h, double eps)
{
    sym2 l = {e->l11, e->l12, e->l22};
    return lc_dot(h.a, e->d) + lc_len(sym2_apply(l, h.a)) <= h.b + eps;
}

double lc_ellipse_norm(const lc_ellipse *e, lc_vec2 p)
{
    double det = e->l11 * e->l22 - e->l12 * e->l12;
    lc_vec2 q = lc_sub(p, e->d);
    /* L^-1 = adj(L) / det */
    lc_vec2 u = lc_v2(e->l22 * q.x - e->l12 * q.y, -e->l12 * q.x + e->l11 * q.y);
    return lc_len(u) / fabs(det);
}
