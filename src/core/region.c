/*
 * region.c - iterative region inflation (Deits and Tedrake, "Computing Large
 * Convex Regions of Obstacle-Free Space through Semidefinite Programming",
 * WAFR 2014) in the plane, with lacuna's additions (see region.h).
 *
 * Invariants:
 * - every halfspace has |a| = 1 and keeps every seed (the robot centre, and
 *   the goal seed when there is one) inside;
 * - every grown obstacle that does not hold the centre lies outside or on
 *   the boundary of the region, so every obstacle point is at least
 *   radius + margin from it;
 * - a round's lines keep the previous round's ellipse inside, so the
 *   ellipse area does not decrease; a round that would shrink it (possible
 *   only when a line had to be moved to keep a seed) is discarded and the
 *   previous round's region returned.
 */
#include "region.h"

#include <string.h>

enum {
    FLAG_SKIP = 1, /* obstacle holds the centre or lies off the window */
    FLAG_BASE = 2, /* beyond a blind line: cut off in every round (see mark_obstacles) */
};
#define SEED_EPS 1e-9            /* m, a seed must be this far inside each line */
#define FALLBACK_DIRS 180        /* directions tried when a line must keep a seed */

void lc_region_config_default(lc_region_config *cfg)
{
    cfg->window = 0.0;
    cfg->window_max = 10.0;
    cfg->max_rounds = 6;
    cfg->area_tol = 0.02;
    cfg->seed_radius = 1.0;
    cfg->goal_step = 1.0;
    cfg->blind_line = true;
    cfg->points_fov = 0.0;
}

static lc_halfspace hs_through(lc_vec2 normal, lc_vec2 p)
{
    double l = lc_len(normal);
    lc_vec2 a = lc_scale(normal, 1.0 / l);
    return (lc_halfspace){a, lc_dot(a, p)};
}

int lc_region_blind_lines(lc_vec2 centre, double fov, double view_mid, bool has_waypoint,
                          lc_vec2 waypoint, lc_halfspace out[2])
{
    if (!(fov < 2.0 * LC_PI - 1e-9) || !(fov > 0))
        return 0;
    double half = 0.5 * fov;
    if (fov <= LC_PI) {
        /* The seen cone is convex: the region stays between its edges. */
        out[0] = hs_through(lc_unit_angle(view_mid + half + 0.5 * LC_PI), centre);
        out[1] = hs_through(lc_unit_angle(view_mid - half - 0.5 * LC_PI), centre);
        return 2;
    }
    /* Normals n with n . u >= 0 over the blind cone lie within
     * (half - pi/2) of the blind axis; the region is n . (p - c) <= 0. */
    double blind_axis = view_mid + LC_PI, spread = half - 0.5 * LC_PI;
    double nang = blind_axis;
    if (has_waypoint && lc_dist(waypoint, centre) > 0) {
        lc_vec2 g = lc_sub(waypoint, centre);
        double want = atan2(-g.y, -g.x); /* n = -g leaves the most room toward g */
        double off = lc_wrap_angle(want - blind_axis);
        nang = blind_axis + (off > spread ? spread : (off < -spread ? -spread : off));
    }
    out[0] = hs_through(lc_unit_angle(nang), centre);
    return 1;
}

/* May the footprint move along u (see lc_region_view_wedge)? e[] are the
 * blind cone's edge directions, o the sensor relative to the centre. */
static bool sweep_sees(lc_vec2 u, lc_vec2 o, const lc_vec2 e[2], double radius)
{
    const double tol = 1e-12;
    double ou = lc_dot(o, u);
    for (int k = 0; k < 2; k++) {
        double eu = lc_dot(e[k], u);
        if (ou <= 0) {
            if (eu > tol)
                return false;
            continue;
        }
        /* the apex lies ahead: the cone must leave the half plane again
         * (eu < 0) and the stretch of its edge ahead stays in the disc */
        if (!(eu < -tol))
            return false;
        lc_vec2 exit = lc_add(o, lc_scale(e[k], -ou / eu));
        if (lc_len(exit) > radius)
            return false;
    }
    return ou <= 0 || lc_len(o) <= radius;
}

/* The largest angle in [0, pi/2] that directions view_mid + side * a keep
 * qualifying for every a up to it (bisection; qualifying shrinks with a). */
static double wedge_reach(double view_mid, double side, lc_vec2 o, const lc_vec2 e[2],
                          double radius)
{
    double lo = 0.0, hi = 0.5 * LC_PI;
    lc_vec2 ulo = lc_unit_angle(view_mid), uhi = lc_unit_angle(view_mid + side * hi);
    if (sweep_sees(uhi, o, e, radius))
        return hi;
    /* The directions are halved as unit vectors (the normalised sum of the
     * two ends) beside the angles: a square root per step, not a sincos
     * (the two sides' 80 sincos were 14k of the 600k instructions of a
     * 1081-beam bench frame, callgrind). */
    for (int i = 0; i < 40; i++) {
        double mid = 0.5 * (lo + hi);
        lc_vec2 sum = lc_add(ulo, uhi), umid = lc_scale(sum, 1.0 / lc_len(sum));
        if (sweep_sees(umid, o, e, radius)) {
            lo = mid;
            ulo = umid;
        } else {
            hi = mid;
            uhi = umid;
        }
    }
    return lo;
}

int lc_region_view_wedge(lc_vec2 centre, lc_vec2 sensor_offset, double fov, double view_mid,
                         double radius, lc_halfspace out[2])
{
    if (!(fov < 2.0 * LC_PI - 1e-9))
        return 0;
    if (!(fov > LC_PI) || !lc_vec2_finite(sensor_offset) || !(radius >= 0) ||
        !sweep_sees(lc_unit_angle(view_mid), sensor_offset,
                    (lc_vec2[2]){lc_unit_angle(view_mid + 0.5 * fov),
                                 lc_unit_angle(view_mid - 0.5 * fov)},
                    radius))
        return -1;
    /* the blind cone's edges run from the sensor at view_mid +- fov/2 */
    lc_vec2 e[2] = {lc_unit_angle(view_mid + 0.5 * fov), lc_unit_angle(view_mid - 0.5 * fov)};
    double left = wedge_reach(view_mid, 1.0, sensor_offset, e, radius);
    double right = wedge_reach(view_mid, -1.0, sensor_offset, e, radius);
    out[0] = hs_through(lc_unit_angle(view_mid + left + 0.5 * LC_PI), centre);
    out[1] = hs_through(lc_unit_angle(view_mid - right - 0.5 * LC_PI), centre);
    return 2;
}

/* 2x2 symmetric inverse of the ellipse's L. */
static void l_inverse(const lc_ellipse *e, double inv[3])
{
    double det = e->l11 * e->l22 - e->l12 * e->l12;
    inv[0] = e->l22 / det;
    inv[1] = -e->l12 / det;
    inv[2] = e->l11 / det;
}

static lc_vec2 sym_mul(const double m[3], lc_vec2 p)
{
    return lc_v2(m[0] * p.x + m[1] * p.y, m[1] * p.x + m[2] * p.y);
}

/* The segments [a, b] and [c, d] cross at a point inside both. (Touching
 * shows as a distance of 0 in seg_poly_distance.) */
static bool segments_cross(lc_vec2 a, lc_vec2 b, lc_vec2 c, lc_vec2 d)
{
    double d1 = lc_cross(lc_sub(b, a), lc_sub(c, a)), d2 = lc_cross(lc_sub(b, a), lc_sub(d, a));
    double d3 = lc_cross(lc_sub(d, c), lc_sub(a, c)), d4 = lc_cross(lc_sub(d, c), lc_sub(b, c));
    return ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0));
}

/*
 * Distance between the segment [a, b] and the convex polygon v[0..n): 0 when
 * they meet, else the least of the distances from a and b to the edges and
 * from the vertices to [a, b] (each vertex once: it starts one edge).
 */
static double seg_poly_distance(lc_vec2 a, lc_vec2 b, const lc_vec2 *v, int n)
{
    if (lc_convex_contains(v, n, a, 0.0) || lc_convex_contains(v, n, b, 0.0))
        return 0.0;
    double best = n < 3 ? lc_segment_distance2(v[n - 1], a, b) : INFINITY;
    int edges = n >= 3 ? n : 1;
    for (int i = 0; i < edges; i++) {
        lc_vec2 p = v[i], q = v[i + 1 == n ? 0 : i + 1];
        if (segments_cross(a, b, p, q))
            return 0.0;
        double d = lc_min(lc_segment_distance2(p, a, b),
                          lc_min(lc_segment_distance2(a, p, q), lc_segment_distance2(b, p, q)));
        best = lc_min(best, d);
    }
    return sqrt(best);
}

static bool inside_all(const lc_halfspace *h, int n, lc_vec2 p, double eps)
{
    for (int i = 0; i < n; i++)
        if (lc_dot(h[i].a, p) > h[i].b - eps)
            return false;
    return true;
}

/* All vertices on or beyond the line (the test of excluded()). */
static bool beyond(lc_halfspace h, const lc_vec2 *v, int n)
{
    int i = 0;
    while (i < n && lc_dot(h.a, v[i]) >= h.b - 1e-12)
        i++;
    return i == n;
}

/* The obstacle lies outside (or on) line h. Its bounding circle (centre,
 * radius) decides most cases without the vertices. */
static bool cut_off_by(lc_halfspace h, const lc_vec2 *v, int n, const double *circle)
{
    double s = lc_dot(h.a, lc_v2(circle[0], circle[1])) - h.b;
    if (s >= circle[2])
        return true;
    return s > -circle[2] && beyond(h, v, n);
}

/*
 * The obstacle lies outside (or on) one of the lines hs[k0..nh). The window's
 * four lines and the blind lines (hs[0..nbase)) are left to mark_obstacles,
 * which flags every obstacle beyond one of them once per frame by the same
 * test: callers pass k0 = nbase.
 */
static bool excluded(const lc_halfspace *h, int k0, int nh, const lc_vec2 *v, int n,
                     const double *circle)
{
    for (int k = k0; k < nh; k++)
        if (cut_off_by(h[k], v, n, circle))
            return true;
    return false;
}

/* Smallest (support of obstacle) - (support of keep set) along n, i.e. the
 * separation margin of direction n; the line is n . p <= min over obstacle. */
static double margin_along(lc_vec2 n, const lc_vec2 *obs, int no, const lc_vec2 *keep, int nk,
                           double *b)
{
    double lo = INFINITY, hi = -INFINITY;
    for (int i = 0; i < no; i++)
        lo = lc_min(lo, lc_dot(n, obs[i]));
    for (int i = 0; i < nk; i++)
        hi = lc_max(hi, lc_dot(n, keep[i]));
    *b = lo;
    return lo - hi;
}

/*
 * A line that keeps every point of keep[] strictly inside and touches the
 * obstacle from outside, chosen among sampled directions (then refined) for
 * the largest margin. Returns false when no sampled direction separates.
 */
static bool separate(const lc_vec2 *obs, int no, const lc_vec2 *keep, int nk, lc_halfspace *out)
{
    double best = -INFINITY, best_ang = 0, b;
    for (int k = 0; k < FALLBACK_DIRS; k++) {
        double ang = 2.0 * LC_PI * k / FALLBACK_DIRS;
        double m = margin_along(lc_unit_angle(ang), obs, no, keep, nk, &b);
        if (m > best) {
            best = m;
            best_ang = ang;
        }
    }
    for (double step = LC_PI / FALLBACK_DIRS; step > 1e-7; step *= 0.5) {
        for (int s = -1; s <= 1; s += 2) {
            double m = margin_along(lc_unit_angle(best_ang + s * step), obs, no, keep, nk, &b);
            if (m > best) {
                best = m;
                best_ang += s * step;
            }
        }
    }
    if (!(best > SEED_EPS))
        return false;
    lc_vec2 n = lc_unit_angle(best_ang);
    margin_along(n, obs, no, keep, nk, &b);
    *out = (lc_halfspace){n, b};
    return true;
}

/* Points of the polygon circumscribed about ellipse e (32 sides), plus seeds. */
static int keep_set(const lc_ellipse *e, const lc_vec2 *seeds, int ns, lc_vec2 *out, bool with_e)
{
    int n = 0;
    if (with_e) {
        double grow = 1.0 / cos(LC_PI / 32.0);
        for (int k = 0; k < 32; k++) {
            lc_vec2 u = lc_scale(lc_unit_angle(2.0 * LC_PI * (k + 0.5) / 32.0), grow);
            out[n++] = lc_add(e->d, lc_v2(e->l11 * u.x + e->l12 * u.y, e->l12 * u.x + e->l22 * u.y));
        }
    }
    for (int i = 0; i < ns; i++)
        out[n++] = seeds[i];
    return n;
}

/*
 * The separating line for one obstacle: tangent to the ellipse's level set
 * through the obstacle's nearest point in the ellipse metric (the method's
 * line); when that would cut a seed off, the widest line that keeps the
 * ellipse (circumscribed) and the seeds, or at least the seeds.
 */
static bool obstacle_line(const lc_ellipse *e, const double inv[3], const lc_vec2 *v, int n,
                          lc_vec2 xstar, const lc_vec2 *seeds, int ns, lc_halfspace *out,
                          int *fallback)
{
    double r = lc_len(xstar);
    if (r > 0) {
        lc_vec2 a = sym_mul(inv, lc_scale(xstar, 1.0 / r));
        double la = lc_len(a);
        lc_halfspace h = {lc_scale(a, 1.0 / la), (r + lc_dot(a, e->d)) / la};
        /* Touch the obstacle exactly: its support along a. */
        double lo = INFINITY;
        for (int i = 0; i < n; i++)
            lo = lc_min(lo, lc_dot(h.a, v[i]));
        h.b = lc_min(h.b, lo);
        if (inside_all(&h, 1, seeds[0], SEED_EPS) && (ns < 2 || inside_all(&h, 1, seeds[1], SEED_EPS))) {
            *out = h;
            return true;
        }
    }
    lc_vec2 keep[34];
    (*fallback)++;
    int nk = keep_set(e, seeds, ns, keep, true);
    if (separate(v, n, keep, nk, out))
        return true;
    nk = keep_set(e, seeds, ns, keep, false);
    return separate(v, n, keep, nk, out);
}

/*
 * The point of the convex CCW polygon v[0..n) (n >= 3) nearest the origin;
 * the origin itself when it lies inside. The nearest is a vertex or the foot
 * on an edge whose projection falls inside it, at squared distance
 * cross(a, e)^2 / |e|^2: candidates are compared as fractions, and only the
 * winner's point is computed, so no edge costs a division.
 */
static lc_vec2 nearest_to_origin(const lc_vec2 *v, int n)
{
    double num = INFINITY, den = 1.0, tn_best = 0.0, l2_best = 1.0;
    int best = 0;
    bool inside = true;
    for (int i = 0, j = n - 1; i < n; j = i++) {
        lc_vec2 a = v[j], e = lc_sub(v[i], a);
        double cr = lc_cross(a, e), a2 = lc_len2(a), tn = -lc_dot(a, e), l2 = lc_len2(e);
        inside = inside && !(cr < 0);
        if (a2 * den < num) { /* vertex a: |a|^2 */
            num = a2;
            den = 1.0;
            best = j;
            tn_best = 0.0;
        }
        if (tn > 0 && tn < l2 && cr * cr * den < num * l2) { /* the foot on edge j */
            num = cr * cr;
            den = l2;
            best = j;
            tn_best = tn;
            l2_best = l2;
        }
    }
    if (inside)
        return lc_v2(0, 0);
    lc_vec2 a = v[best];
    if (tn_best == 0.0)
        return a;
    lc_vec2 e = lc_sub(v[best + 1 == n ? 0 : best + 1], a);
    return lc_add(a, lc_scale(e, tn_best / l2_best));
}

/* Sutherland-Hodgman step: clip the CCW polygon (v, own) by h (owner k). */
static int clip(const lc_vec2 *v, const int *own, int n, lc_halfspace h, int k, lc_vec2 *ov, int *oo)
{
    int m = 0;
    for (int i = 0; i < n; i++) {
        lc_vec2 p = v[i], q = v[(i + 1) % n];
        double sp = lc_dot(h.a, p) - h.b, sq = lc_dot(h.a, q) - h.b;
        if (sp <= 0) {
            if (sq > 0 && sp < 0) {
                ov[m] = p;
                oo[m++] = own[i];
                ov[m] = lc_lerp(p, q, sp / (sp - sq));
                oo[m++] = k;
            } else {
                ov[m] = p;
                oo[m++] = sq > 0 ? k : own[i];
            }
        } else if (sq < 0) {
            ov[m] = lc_lerp(p, q, sp / (sp - sq));
            oo[m++] = own[i];
        }
    }
    return m;
}

static int grow_ws(lc_region_ws *ws, const lc_alloc *alloc, int n_obs, int max_hs, int max_v)
{
    if (LC_GROW(alloc, ws->order, ws->cap_order, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->dist, ws->cap_dist, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->flags, ws->cap_flags, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->box, ws->cap_box, 4 * n_obs + 4) < 0 ||
        LC_GROW(alloc, ws->xstar, ws->cap_xstar, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->circle, ws->cap_circle, 3 * n_obs + 3) < 0 ||
        LC_GROW(alloc, ws->lower, ws->cap_lower, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->heap, ws->cap_heap, n_obs + 1) < 0 ||
        LC_GROW(alloc, ws->hs, ws->cap_hs, max_hs) < 0 ||
        LC_GROW(alloc, ws->hs_src, ws->cap_hs_src, max_hs) < 0 ||
        LC_GROW(alloc, ws->clip_a, ws->cap_ca, max_v) < 0 ||
        LC_GROW(alloc, ws->clip_b, ws->cap_cb, max_v) < 0 ||
        LC_GROW(alloc, ws->own_a, ws->cap_oa, max_v) < 0 ||
        LC_GROW(alloc, ws->own_b, ws->cap_ob, max_v) < 0 ||
        LC_GROW(alloc, ws->scratch, ws->cap_scratch, LC_ELLIPSE_SCRATCH(max_hs)) < 0 ||
        LC_GROW(alloc, ws->lambda, ws->cap_lambda, max_hs) < 0)
        return -1;
    return 0;
}

/* Insertion sort of order[0..n) by dist[]: linear on the nearly sorted
 * order a later round inherits from the one before. */
static void insertion_sort_by_dist(int *order, const double *dist, int n)
{
    for (int i = 1; i < n; i++) {
        int t = order[i], j = i;
        double dt = dist[t];
        for (; j > 0 && dist[order[j - 1]] > dt; j--)
            order[j] = order[j - 1];
        order[j] = t;
    }
}

/* Shell sort of order[0..n) by dist[] (no allocation, unlike some qsorts). */
static void sort_by_dist(int *order, const double *dist, int n)
{
    for (int gap = n / 2; gap > 0; gap /= 2)
        for (int i = gap; i < n; i++) {
            int t = order[i], j = i;
            for (; j >= gap && dist[order[j - gap]] > dist[t]; j -= gap)
                order[j] = order[j - gap];
            order[j] = t;
        }
}

/* The window clipped by hs[0..nh): vertices into r (non-redundant lines kept). */
static int build_polygon(lc_region_ws *ws, int nh, lc_region *r, const lc_alloc *alloc)
{
    lc_vec2 *va = ws->clip_a, *vb = ws->clip_b;
    int *oa = ws->own_a, *ob = ws->own_b;
    /* hs[0..4) are the window box, E N W S, so its corners are known. */
    double xe = ws->hs[0].b, yn = ws->hs[1].b, xw = -ws->hs[2].b, ys = -ws->hs[3].b;
    lc_vec2 box[4] = {{xe, ys}, {xe, yn}, {xw, yn}, {xw, ys}};
    int bown[4] = {0, 1, 2, 3};
    memcpy(va, box, sizeof box);
    memcpy(oa, bown, sizeof bown);
    int n = 4;
    for (int k = 4; k < nh && n > 0; k++) {
        n = clip(va, oa, n, ws->hs[k], k, vb, ob);
        lc_vec2 *tv = va; va = vb; vb = tv;
        int *to = oa; oa = ob; ob = to;
    }
    /* Drop repeated vertices and the zero-length edges they make. */
    int m = 0;
    for (int i = 0; i < n; i++) {
        lc_vec2 nxt = va[(i + 1) % n];
        if (n - (i - m) > 3 && lc_dist(va[i], nxt) < 1e-12)
            continue;
        va[m] = va[i];
        oa[m++] = oa[i];
    }
    if (m < 3)
        return LC_REGION_DEGENERATE;
    int cv = r->cap_v, ch = r->cap_h, cs = r->cap_src;
    if (LC_GROW(alloc, r->v, cv, m) < 0 || LC_GROW(alloc, r->h, ch, m) < 0 ||
        LC_GROW(alloc, r->h_src, cs, m) < 0)
        return LC_REGION_NO_MEMORY;
    r->cap_v = cv;
    r->cap_h = ch;
    r->cap_src = cs;
    /* Each edge's line once, in the order the edges go round. */
    r->nh = 0;
    for (int i = 0; i < m; i++) {
        int k = oa[i], dup = 0;
        for (int j = 0; j < r->nh && !dup; j++)
            dup = r->h_src[j] == ws->hs_src[k] && r->h[j].b == ws->hs[k].b &&
                  r->h[j].a.x == ws->hs[k].a.x && r->h[j].a.y == ws->hs[k].a.y;
        if (!dup) {
            r->h[r->nh] = ws->hs[k];
            r->h_src[r->nh++] = ws->hs_src[k];
        }
    }
    memcpy(r->v, va, sizeof *va * (size_t)m);
    r->nv = m;
    return LC_REGION_OK;
}

static lc_ellipse seed_ellipse(const lc_vec2 *seeds, int ns, double eps)
{
    if (ns < 2)
        return (lc_ellipse){eps, 0, eps, seeds[0]};
    lc_vec2 d = lc_sub(seeds[1], seeds[0]);
    double h = 0.5 * lc_len(d) + eps, c = d.x / lc_len(d), s = d.y / lc_len(d);
    /* L = R diag(h, eps) R^T */
    return (lc_ellipse){h * c * c + eps * s * s, (h - eps) * c * s, h * s * s + eps * c * c,
                        lc_lerp(seeds[0], seeds[1], 0.5)};
}

static void copy_region(lc_region *dst, const lc_region *src, const lc_alloc *alloc, int *rc)
{
    int cv = dst->cap_v, ch = dst->cap_h, cs = dst->cap_src;
    if (LC_GROW(alloc, dst->v, cv, src->nv) < 0 || LC_GROW(alloc, dst->h, ch, src->nh) < 0 ||
        LC_GROW(alloc, dst->h_src, cs, src->nh) < 0) {
        *rc = LC_REGION_NO_MEMORY;
        return;
    }
    dst->cap_v = cv;
    dst->cap_h = ch;
    dst->cap_src = cs;
    memcpy(dst->v, src->v, sizeof *src->v * (size_t)src->nv);
    memcpy(dst->h, src->h, sizeof *src->h * (size_t)src->nh);
    memcpy(dst->h_src, src->h_src, sizeof *src->h_src * (size_t)src->nh);
    dst->nv = src->nv;
    dst->nh = src->nh;
    dst->ellipse = src->ellipse;
}

/* A lower bound of the distance from segment [a, b] to obstacle j: the gap
 * between their bounding boxes. */
static double box_gap(const lc_region_ws *ws, int j, lc_vec2 a, lc_vec2 b)
{
    const double *bx = ws->box + 4 * j;
    double dx = lc_max(0.0, lc_max(bx[0] - lc_max(a.x, b.x), lc_min(a.x, b.x) - bx[1]));
    double dy = lc_max(0.0, lc_max(bx[2] - lc_max(a.y, b.y), lc_min(a.y, b.y) - bx[3]));
    return sqrt(dx * dx + dy * dy);
}

/*
 * Marks obstacles to leave out; returns how many hold the centre. Beside
 * FLAG_SKIP (off the window, or holding the centre), FLAG_BASE marks those
 * beyond a blind line (hs[4..nbase)): lines only accumulate, so every round
 * would cut them off again; marked once, they cost no round anything (with
 * the view wedge, most of a scan's obstacles lie beside it: 1081-beam bench
 * frames, region and ellipse stages 248k -> 211k instructions).
 */
static int mark_obstacles(const lc_region_input *in, lc_region_ws *ws, int nbase)
{
    int held = 0;
    for (int j = 0; j < in->grown->np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        double x0 = INFINITY, x1 = -INFINITY, y0 = INFINITY, y1 = -INFINITY;
        for (int i = 0; i < n; i++) {
            x0 = lc_min(x0, v[i].x); x1 = lc_max(x1, v[i].x);
            y0 = lc_min(y0, v[i].y); y1 = lc_max(y1, v[i].y);
        }
        double *bx = ws->box + 4 * j, *cc = ws->circle + 3 * j;
        bx[0] = x0; bx[1] = x1; bx[2] = y0; bx[3] = y1;
        cc[0] = 0.5 * (x0 + x1);
        cc[1] = 0.5 * (y0 + y1);
        double r2 = 0; /* sqrt is monotone: the root of the largest square */
        for (int i = 0; i < n; i++)
            r2 = lc_max(r2, lc_len2(lc_sub(v[i], lc_v2(cc[0], cc[1]))));
        cc[2] = sqrt(r2) * (1.0 + 1e-12);
        lc_vec2 c = in->centre;
        /* beyond() on a window line, from the box: a . v is x, -x, y or -y */
        const lc_halfspace *h = ws->hs;
        bool off = x0 >= h[0].b - 1e-12 || y0 >= h[1].b - 1e-12 || -x1 >= h[2].b - 1e-12 ||
                   -y1 >= h[3].b - 1e-12;
        bool in_box = c.x >= x0 && c.x <= x1 && c.y >= y0 && c.y <= y1;
        bool holds = !off && in_box && lc_convex_contains(v, n, c, 0.0);
        held += holds;
        ws->flags[j] = (off || holds) ? FLAG_SKIP : 0;
        for (int k = 4; k < nbase && !ws->flags[j]; k++)
            if (cut_off_by(h[k], v, n, cc))
                ws->flags[j] = FLAG_BASE;
    }
    return held;
}

/* Goal seed: up to goal_step toward the waypoint, halved until the step is free. */
static int goal_seed(const lc_region_input *in, const lc_region_config *cfg, lc_region_ws *ws,
                     int nbase, lc_vec2 *seed)
{
    if (!in->has_waypoint || !(cfg->goal_step > 0))
        return 0;
    lc_vec2 dir = lc_sub(in->waypoint, in->centre);
    double len = lc_len(dir);
    if (!(len > 1e-6))
        return 0;
    double step = lc_min(cfg->goal_step, len);
    for (int tries = 0; tries < 4; tries++, step *= 0.5) {
        lc_vec2 g = lc_add(in->centre, lc_scale(dir, step / len));
        bool free = inside_all(ws->hs, nbase, g, SEED_EPS);
        for (int j = 0; free && j < in->grown->np; j++) {
            int n;
            const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
            free = (ws->flags[j] & FLAG_SKIP) || box_gap(ws, j, in->centre, g) > 2e-6 ||
                   seg_poly_distance(in->centre, g, v, n) > 2e-6;
        }
        if (free) {
            *seed = g;
            return 1;
        }
    }
    return 0;
}

static double seed_clearance(const lc_region_input *in, const lc_region_ws *ws, const lc_vec2 *s,
                             int ns)
{
    double best = INFINITY;
    for (int j = 0; j < in->grown->np; j++) {
        if ((ws->flags[j] & FLAG_SKIP) || box_gap(ws, j, s[0], s[ns - 1]) >= best)
            continue;
        int n;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        best = lc_min(best, seg_poly_distance(s[0], s[ns - 1], v, n));
    }
    return best;
}

/* One round: lines for the current ellipse, then the polygon. Returns nh. */
/* Smallest eigenvalue of the symmetric 2x2 L: |L^-1 w| <= |w| / sigma. */
static double l_sigma_min(const lc_ellipse *e)
{
    double m = 0.5 * (e->l11 + e->l22), d = 0.5 * (e->l11 - e->l22);
    return m - sqrt(d * d + e->l12 * e->l12);
}

/* Binary min-heap of obstacle indices keyed by ws->dist (exact distances). */
static void heap_push(lc_region_ws *ws, int *n, int j)
{
    int i = (*n)++;
    while (i > 0 && ws->dist[ws->heap[(i - 1) / 2]] > ws->dist[j]) {
        ws->heap[i] = ws->heap[(i - 1) / 2];
        i = (i - 1) / 2;
    }
    ws->heap[i] = j;
}

static int heap_pop(lc_region_ws *ws, int *n)
{
    int top = ws->heap[0], last = ws->heap[--(*n)], i = 0;
    for (;;) {
        int c = 2 * i + 1;
        if (c >= *n)
            break;
        if (c + 1 < *n && ws->dist[ws->heap[c + 1]] < ws->dist[ws->heap[c]])
            c++;
        if (ws->dist[ws->heap[c]] >= ws->dist[last])
            break;
        ws->heap[i] = ws->heap[c];
        i = c;
    }
    if (*n > 0)
        ws->heap[i] = last;
    return top;
}

/* Nearest point of grown obstacle j to the ellipse centre, ellipse frame. */
static int exact_distance(const lc_region_input *in, lc_region_ws *ws, const double inv[3],
                          const lc_ellipse *e, int j, const lc_alloc *alloc)
{
    int n;
    const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
    if (LC_GROW(alloc, ws->tv, ws->cap_tv, n) < 0)
        return -1;
    for (int i = 0; i < n; i++)
        ws->tv[i] = sym_mul(inv, lc_sub(v[i], e->d));
    ws->xstar[j] = nearest_to_origin(ws->tv, n);
    ws->dist[j] = lc_len(ws->xstar[j]);
    return 0;
}

/*
 * One round's lines. Obstacles are taken in increasing distance in the
 * metric of the current ellipse, each skipped when a line already placed
 * has it outside. The exact distance (all vertices transformed) is computed
 * lazily: obstacles are walked in order of a cheap lower bound (bounding
 * circle over the smallest semi-axis), exact ones wait in a heap until no
 * lower bound below them is left, so the order is exactly the sorted one
 * while an obstacle already cut off costs only its circle test.
 */
/*
 * The obstacles taken into account (not FLAG_SKIP) into ws->order by their
 * lower bound of distance. The set is the same in every round of a frame, so
 * a later round starts from the order the one before left (`warm`): the
 * ellipse grows smoothly and that order is nearly right (1081-beam bench
 * frame: the sorting fell from 35k to 16k instructions). Returns the count.
 */
static int order_obstacles(const lc_region_input *in, lc_region_ws *ws, const double inv[3],
                           const lc_ellipse *e, bool warm)
{
    double sigma = l_sigma_min(e);
    int na = 0;
    if (!warm) {
        for (int j = 0; j < in->grown->np; j++)
            if (!ws->flags[j])
                ws->order[na++] = j;
        ws->n_order = na;
    }
    na = ws->n_order;
    for (int q = 0; q < na; q++) {
        int j = ws->order[q];
        const double *cc = ws->circle + 3 * j;
        double centre = lc_len(sym_mul(inv, lc_sub(lc_v2(cc[0], cc[1]), e->d)));
        ws->lower[j] = lc_max(0.0, centre - cc[2] / sigma) * (1.0 - 1e-12);
    }
    if (warm)
        insertion_sort_by_dist(ws->order, ws->lower, na);
    else
        sort_by_dist(ws->order, ws->lower, na);
    return na;
}

static int place_lines(const lc_region_input *in, lc_region_ws *ws, int nbase, const lc_ellipse *e,
                       bool warm, const lc_vec2 *seeds, int ns, lc_region_info *info,
                       const lc_alloc *alloc)
{
    double inv[3];
    l_inverse(e, inv);
    int na = order_obstacles(in, ws, inv, e, warm);
    int nh = nbase, q = 0, nheap = 0;
    while (q < na || nheap > 0) {
        int j;
        bool from_heap = nheap > 0 && (q == na || ws->dist[ws->heap[0]] <= ws->lower[ws->order[q]]);
        int n;
        if (from_heap) {
            j = heap_pop(ws, &nheap);
        } else {
            j = ws->order[q++];
            const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
            /* Lines only accumulate: an obstacle cut off now stays cut off. */
            if (excluded(ws->hs, nbase, nh, v, n, ws->circle + 3 * j))
                continue;
            if (exact_distance(in, ws, inv, e, j, alloc) < 0)
                return -1;
            heap_push(ws, &nheap, j);
            continue;
        }
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &n);
        if (excluded(ws->hs, nbase, nh, v, n, ws->circle + 3 * j))
            continue;
        lc_halfspace h;
        if (!obstacle_line(e, inv, v, n, ws->xstar[j], seeds, ns, &h, &info->fallback_lines))
            return -2;
        ws->hs[nh] = h;
        ws->hs_src[nh++] = j;
    }
    return nh;
}

static int solve_ellipse(lc_region *r, const lc_ellipse *warm, const lc_ellipse_opts *eopts,
                         lc_region_ws *ws, lc_region_info *info, const lc_clock *clock)
{
    lc_ellipse_info ei = {0};
    double t0 = lc_clock_now(clock);
    int st = lc_ellipse_solve(r->h, r->nh, warm, eopts, &r->ellipse, ws->lambda, ws->scratch, &ei);
    info->ellipse_us += lc_clock_now(clock) - t0;
    info->ellipse_iterations += ei.iterations;
    return st;
}

int lc_region_inflate(const lc_region_input *in, const lc_region_config *cfg,
                      const lc_ellipse_opts *eopts, lc_region_ws *ws, lc_region *out,
                      lc_region_info *info, const lc_clock *clock, const lc_alloc *alloc)
{
    lc_region_info local;
    if (!info)
        info = &local;
    memset(info, 0, sizeof *info);
    out->nh = out->nv = 0;
    out->rounds = 0;
    out->has_goal_seed = false;
    if (!lc_vec2_finite(in->centre) || !(in->window > 0) || !isfinite(in->window))
        return LC_REGION_BAD_INPUT;
    int n_obs = in->grown->np;
    int max_hs = 4 + in->n_blind + n_obs;
    int max_v = max_hs + 4; /* each clip adds at most one vertex */
    if (grow_ws(ws, alloc, n_obs, max_hs, max_v) < 0)
        return LC_REGION_NO_MEMORY;

    lc_vec2 c = in->centre;
    double w = in->window;
    ws->hs[0] = (lc_halfspace){{1, 0}, c.x + w};
    ws->hs[1] = (lc_halfspace){{0, 1}, c.y + w};
    ws->hs[2] = (lc_halfspace){{-1, 0}, -(c.x - w)};
    ws->hs[3] = (lc_halfspace){{0, -1}, -(c.y - w)};
    for (int k = 0; k < 4; k++)
        ws->hs_src[k] = LC_REGION_SRC_WINDOW;
    int nbase = 4;
    for (int k = 0; k < in->n_blind; k++) {
        ws->hs[nbase] = in->blind[k];
        ws->hs_src[nbase++] = LC_REGION_SRC_BLIND;
    }
    info->too_close = mark_obstacles(in, ws, nbase);

    lc_vec2 seeds[2] = {c, c};
    int ns = 1 + goal_seed(in, cfg, ws, nbase, &seeds[1]);
    out->has_goal_seed = ns == 2;
    out->goal_seed = seeds[1];
    double clear = seed_clearance(in, ws, seeds, ns);
    double eps = lc_max(lc_min(cfg->seed_radius, 0.5 * clear), 1e-7);
    lc_ellipse e = seed_ellipse(seeds, ns, eps);

    /* Round 1 builds a region from the seed; later rounds keep the best. */
    lc_region *cand = &ws->cand;
    int rc = LC_REGION_OK;
    double best_area = -1;
    for (int round = 1; round <= cfg->max_rounds && round <= LC_REGION_MAX_ROUNDS; round++) {
        int nh = place_lines(in, ws, nbase, &e, round > 1, seeds, ns, info, alloc);
        if (nh < 0) {
            rc = nh == -1 ? LC_REGION_NO_MEMORY : LC_REGION_DEGENERATE;
            break;
        }
        int st = build_polygon(ws, nh, round == 1 ? out : cand, alloc);
        if (st != LC_REGION_OK) {
            rc = st;
            break;
        }
        lc_region *r = round == 1 ? out : cand;
        if (solve_ellipse(r, round == 1 ? NULL : &e, eopts, ws, info, clock) < 0) {
            rc = round == 1 ? LC_REGION_DEGENERATE : LC_REGION_OK;
            break;
        }
        double area = lc_ellipse_area(&r->ellipse);
        info->area[round] = area;
        info->rounds = round;
        if (round > 1 && area < best_area)
            break; /* a moved line cost area: keep the previous round */
        if (round > 1)
            copy_region(out, cand, alloc, &rc);
        out->rounds = round;
        bool converged = round > 1 && area <= best_area * (1.0 + cfg->area_tol);
        best_area = area;
        e = out->ellipse;
        if (converged || rc != LC_REGION_OK)
            break;
    }
    info->area[0] = lc_ellipse_area(&(lc_ellipse){eps, 0, eps, c});
    if (rc == LC_REGION_OK && info->too_close)
        rc = LC_REGION_TOO_CLOSE;
    return rc;
}

void lc_region_free(lc_region *r, const lc_alloc *alloc)
{
    LC_RELEASE(alloc, r->h, r->cap_h);
    LC_RELEASE(alloc, r->h_src, r->cap_src);
    LC_RELEASE(alloc, r->v, r->cap_v);
    r->nh = r->nv = 0;
}

void lc_region_ws_free(lc_region_ws *ws, const lc_alloc *alloc)
{
    LC_RELEASE(alloc, ws->order, ws->cap_order);
    LC_RELEASE(alloc, ws->dist, ws->cap_dist);
    LC_RELEASE(alloc, ws->flags, ws->cap_flags);
    LC_RELEASE(alloc, ws->box, ws->cap_box);
    LC_RELEASE(alloc, ws->xstar, ws->cap_xstar);
    LC_RELEASE(alloc, ws->circle, ws->cap_circle);
    LC_RELEASE(alloc, ws->lower, ws->cap_lower);
    LC_RELEASE(alloc, ws->heap, ws->cap_heap);
    LC_RELEASE(alloc, ws->hs, ws->cap_hs);
    LC_RELEASE(alloc, ws->hs_src, ws->cap_hs_src);
    LC_RELEASE(alloc, ws->tv, ws->cap_tv);
    lc_region_free(&ws->cand, alloc);
    LC_RELEASE(alloc, ws->clip_a, ws->cap_ca);
    LC_RELEASE(alloc, ws->clip_b, ws->cap_cb);
    LC_RELEASE(alloc, ws->own_a, ws->cap_oa);
    LC_RELEASE(alloc, ws->own_b, ws->cap_ob);
    LC_RELEASE(alloc, ws->scratch, ws->cap_scratch);
    LC_RELEASE(alloc, ws->lambda, ws->cap_lambda);
}
