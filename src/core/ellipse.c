/*
 * ellipse.c - the maximum-area ellipse inscribed in a convex polygon
 * (Boyd and Vandenberghe, Convex Optimization, 8.4.2): the driver. The
 * interior-point method is ipm.c (its 5x5 Newton systems chol5.h), the
 * polygon of the cold start clip.c, the 2x2 matrices sym2.h.
 *
 * How a solve runs:
 * 1. The halfspaces are normalised (unit normals).
 * 2. A start ellipse (T, p0) strictly inside is found: the caller's warm
 *    ellipse when it fits (touching allowed) and the normals surround the
 *    origin; otherwise the polygon: the meets of neighbouring lines in angle
 *    order when that chain is plainly well formed (lc_clip_fast), else by
 *    clipping a huge box about a point near it (lc_clip_all: this is where
 *    EMPTY and UNBOUNDED are decided); its area centroid and area
 *    covariance give p0 and T.
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

#include "clip.h"
#include "ipm.h"

/* Start ellipse and a record of how it was found. */
typedef struct start {
    lc_sym2 t;
    lc_vec2 p0;
    int warm;
} start;

/* A polygon whose inradius-like slack at its centroid is below this fraction
 * of its diameter counts as having zero area. */
static const double ZERO_AREA_REL = 1e-9;
/* A warm ellipse may poke out by this fraction and still count as touching. */
static const double WARM_TOUCH_REL = 1e-9;

void lc_ellipse_opts_default(lc_ellipse_opts *opts)
{
    opts->gap_tol = 1e-9;
    opts->max_iter = 60;
}

/* ---------------------------------------------------------------- input */

/* Unit normals into r; c[i] = |a_i|. False on a non-finite or zero normal. */
static bool normalise(const lc_halfspace *h, int n, lc_hrows r, double *c)
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

/* Area, centroid and area covariance of the clipped polygon. */
static bool clip_moments(const lc_clip *c, lc_vec2 *g, lc_sym2 *cov, double *diam)
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
    *cov = (lc_sym2){sxx / A - cx * cx, sxy / A - cx * cy, syy / A - cy * cy};
    return true;
}

/* Smallest slack of the real halfspaces at p, less its rounding error. */
static double min_slack(lc_hrows r, lc_vec2 p)
{
    double best = INFINITY;
    for (int i = 0; i < r.n; i++) {
        double px = r.a1[i] * p.x, py = r.a2[i] * p.y;
        double err = 16.0 * DBL_EPSILON * (fabs(px) + fabs(py) + fabs(r.b[i]));
        best = lc_min(best, r.b[i] - px - py - err);
    }
    return best;
}

/*
 * A point near the polygon: where line 0 meets the line most transversal to
 * it. Clipping about it keeps the offsets b small, so that vertices of
 * nearly parallel lines far from the origin (a sliver at 1e6 m) are not lost
 * to cancellation.
 */
static lc_vec2 reference_point(lc_hrows r)
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
    if (!(sbest > LC_CLIP_MIN_SIN))
        return lc_v2(r.a1[0] * r.b[0], r.a2[0] * r.b[0]);
    double det = r.a1[0] * r.a2[best] - r.a2[0] * r.a1[best];
    return lc_v2((r.b[0] * r.a2[best] - r.b[best] * r.a2[0]) / det,
                 (r.a1[0] * r.b[best] - r.a1[best] * r.b[0]) / det);
}

/* Rows of r about ref (offsets into bl); returns max |offset|. */
static double local_rows(lc_hrows r, lc_vec2 ref, double *bl, lc_hrows *loc)
{
    double bmax = 0.0;
    for (int i = 0; i < r.n; i++) {
        bl[i] = r.b[i] - r.a1[i] * ref.x - r.a2[i] * ref.y;
        bmax = lc_max(bmax, fabs(bl[i]));
    }
    *loc = (lc_hrows){r.a1, r.a2, bl, r.n};
    return bmax;
}

/* True when the polygon's edges lie far from the origin of the clip frame. */
static bool clip_far(const lc_clip *c, double diam)
{
    double far = 0.0;
    for (int k = 0; k < c->m; k++)
        far = lc_max(far, fabs(c->h.b[(int)c->edge[k]]));
    return far > 1e3 * diam;
}

/*
 * Cold start: the polygon by clipping (where EMPTY and UNBOUNDED are
 * decided), about a reference point near it, redone once about the
 * centroid when the reference was far; then centroid and covariance.
 */
static int cold_start(lc_hrows r, double *work, start *st)
{
    int m = r.n + LC_CLIP_BOX_EDGES;
    lc_vec2 ref = reference_point(r);
    for (int pass = 0;; pass++) {
        lc_hrows loc;
        double bmax = local_rows(r, ref, work, &loc);
        lc_clip c;
        lc_clip_bind(&c, loc, work + m);
        if (!lc_clip_fast(&c, bmax)) {
            int status = lc_clip_all(&c, bmax);
            if (status != LC_OK)
                return status;
        }
        lc_vec2 g;
        lc_sym2 cov;
        double diam;
        if (!clip_moments(&c, &g, &cov, &diam))
            return LC_ERR_DEGENERATE;
        if (pass == 0 && clip_far(&c, diam)) {
            ref = lc_add(ref, g);
            continue;
        }
        if (!(min_slack(loc, g) > ZERO_AREA_REL * diam))
            return LC_ERR_DEGENERATE;
        st->p0 = lc_add(ref, g);
        st->t = lc_sym2_pd(cov) ? lc_sym2_sqrt(cov) : (lc_sym2){diam, 0.0, diam};
        st->warm = 0;
        return LC_OK;
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
static bool normals_surround(lc_hrows r)
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
    lc_sym2 t = lc_ellipse_shape(w);
    return isfinite(t.a) && isfinite(t.b) && isfinite(t.c) && lc_vec2_finite(w->d) &&
           lc_sym2_pd(t);
}


/* ------------------------------------------------------- rounded frame */

/*
 * Rewrites r in the frame p = p0 + T q with unit normals, T scaled so that
 * the unit disc touches the polygon; c[i] *= |T a_i|. Returns the scale
 * applied: 1 when the start ellipse touched the polygon, < 1 when it poked
 * out, not > 0 when the centre is outside.
 */
static double to_frame(lc_hrows r, double *c, start *st)
{
    double rmin = INFINITY;
    for (int i = 0; i < r.n; i++) {
        lc_vec2 ta = lc_sym2_apply(st->t, lc_v2(r.a1[i], r.a2[i]));
        double len = sqrt(ta.x * ta.x + ta.y * ta.y), il = 1.0 / len;
        double room = r.b[i] - r.a1[i] * st->p0.x - r.a2[i] * st->p0.y;
        r.a1[i] = ta.x * il;
        r.a2[i] = ta.y * il;
        r.b[i] = room * il;
        c[i] *= len;
        rmin = lc_min(rmin, r.b[i]);
    }
    if (!(rmin > 0.0) || !isfinite(rmin))
        return 0.0;
    double ir = 1.0 / rmin;
    for (int i = 0; i < r.n; i++) {
        r.b[i] *= ir;
        c[i] *= rmin;
    }
    st->t = lc_sym2_scale(st->t, rmin);
    return rmin;
}

/* ------------------------------------------------------------- driver */

/* Maps the rounded-frame result back; lambda_i /= c_i. */
static void map_back(const lc_ipm_result *w, int n, const start *st, const double *c,
                     lc_ellipse *out, double *lambda)
{
    lc_sym2 lq = {w->x[0], w->x[1], w->x[2]};
    double s = lc_sym2_det(st->t) * lc_sym2_det(lq); /* sqrt(det(T L'^2 T)) */
    lc_sym2 lq2 = lc_sym2_sandwich(lq, (lc_sym2){1, 0, 1});
    lc_sym2 l = lc_sym2_sqrt_det(lc_sym2_sandwich(st->t, lq2), s);
    lc_vec2 d = lc_add(st->p0, lc_sym2_apply(st->t, lc_v2(w->x[3], w->x[4])));
    *out = (lc_ellipse){l.a, l.b, l.c, d};
    if (lambda)
        for (int i = 0; i < n; i++)
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
        lc_sym2 l = lc_ellipse_shape(e);
        double ad = lc_dot(h.a, e->d), len = lc_len(lc_sym2_apply(l, h.a));
        /* |L a| of a thin ellipse carries the rounding of L's entries */
        double noise = fabs(ad) + fabs(h.b) +
                       (fabs(l.a) + 2.0 * fabs(l.b) + fabs(l.c)) * (fabs(h.a.x) + fabs(h.a.y));
        double margin = tries == 0 ? 0.0 : ldexp(DBL_EPSILON, tries - 2) * noise;
        double room = h.b - ad - margin;
        if (!(room > 0.0))
            return;
        double kappa = lc_min(room / len, 1.0 - DBL_EPSILON);
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
static int solve_in_frame(const lc_halfspace *h, lc_hrows r, const double *c, const start *st,
                          double *work, const lc_ellipse_opts *o, lc_ellipse *out,
                          double *lambda, lc_ellipse_info *info)
{
    lc_ipm_result w;
    int status = lc_ipm_solve(r, work, o, st->warm, info, &w);
    if (status < 0 || !w.feasible)
        return status < 0 ? status : LC_ELLIPSE_MAX_ITER;
    info->warm_used = st->warm;
    map_back(&w, r.n, st, c, out, lambda);
    polish(h, r.n, out);
    return status;
}

/*
 * The warm attempt: used when the warm ellipse lies inside (touching allowed)
 * and the solve converges; otherwise the caller starts cold.
 */
static bool try_warm(const lc_halfspace *h, lc_hrows r, double *c, const lc_ellipse *warm,
                     double *work, const lc_ellipse_opts *o, lc_ellipse *out, double *lambda,
                     lc_ellipse_info *info)
{
    start st = {lc_ellipse_shape(warm), warm->d, 1};
    if (!(to_frame(r, c, &st) >= 1.0 - WARM_TOUCH_REL))
        return false;
    return solve_in_frame(h, r, c, &st, work, o, out, lambda, info) == LC_OK;
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
        return LC_ERR_BAD_INPUT;

    int m = n + LC_CLIP_BOX_EDGES;
    lc_hrows r = {scratch, scratch + m, scratch + 2 * m, n};
    double *c = scratch + 3 * m, *work = c + n;
    if (!normalise(h, n, r, c))
        return LC_ERR_BAD_INPUT;
    if (warm && warm_valid(warm) && normals_surround(r)) {
        if (try_warm(h, r, c, warm, work, &o, out, lambda, info))
            return LC_OK;
        normalise(h, n, r, c); /* the attempt rewrote the rows */
        *info = (lc_ellipse_info){0, INFINITY, 0};
    }
    start st;
    int status = cold_start(r, work, &st);
    if (status != LC_OK)
        return status;
    if (!(to_frame(r, c, &st) > 0.0))
        return LC_ERR_DEGENERATE;
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
    return lc_dot(h.a, e->d) + lc_len(lc_sym2_apply(lc_ellipse_shape(e), h.a)) <= h.b + eps;
}

double lc_ellipse_norm(const lc_ellipse *e, lc_vec2 p)
{
    double det = e->l11 * e->l22 - e->l12 * e->l12;
    lc_vec2 q = lc_sub(p, e->d);
    /* L^-1 = adj(L) / det */
    lc_vec2 u = lc_v2(e->l22 * q.x - e->l12 * q.y, -e->l12 * q.x + e->l11 * q.y);
    return lc_len(u) / fabs(det);
}
