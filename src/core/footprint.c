/*
 * footprint.c - the polygon footprint and convex geometry (see footprint.h).
 *
 * Edge order without angles: an edge direction lies in the upper half
 * (y > 0, or y == 0 and x > 0: angles [0, pi)) or the lower one ([pi,
 * 2 pi)); within a half the cross product orders two directions exactly.
 * From a polygon's lowest vertex (least y, then least x) the edges of a
 * convex CCW polygon come in that order, upper half first, which is what
 * the merge of the Minkowski sum walks.
 */
#include "footprint.h"

#include <float.h>

/* ------------------------------------------------------------ footprint */

/* Sine of the turn from edge d0 to d1 (both non-zero). */
static double turn_sine(lc_vec2 d0, lc_vec2 d1)
{
    return lc_cross(d0, d1) / (lc_len(d0) * lc_len(d1));
}

static lc_vec2 at_mod(const lc_vec2 *v, int n, int i) { return v[((i % n) + n) % n]; }

/* The first vertex that does not turn left (-1: none), and whether any does. */
static int first_non_left(const lc_vec2 *v, int n, bool *any_left)
{
    int first = -1;
    *any_left = false;
    for (int i = 0; i < n; i++) {
        double s = turn_sine(lc_sub(v[i], at_mod(v, n, i - 1)), lc_sub(at_mod(v, n, i + 1), v[i]));
        if (s > LC_FOOTPRINT_TURN_MIN)
            *any_left = true;
        else if (first < 0)
            first = i;
    }
    return first;
}

/* Total turning of the outline, radians (2 pi for a simple CCW polygon). */
static double total_turn(const lc_vec2 *v, int n)
{
    double t = 0;
    for (int i = 0; i < n; i++) {
        lc_vec2 d0 = lc_sub(v[i], at_mod(v, n, i - 1)), d1 = lc_sub(at_mod(v, n, i + 1), v[i]);
        t += atan2(lc_cross(d0, d1), lc_dot(d0, d1));
    }
    return t;
}

lc_footprint_fault lc_footprint_check(const lc_vec2 *v, int n, int *at)
{
    *at = 0;
    if (n < LC_FOOTPRINT_MIN || n > LC_FOOTPRINT_MAX)
        return LC_FOOTPRINT_COUNT;
    for (int i = 0; i < n; i++)
        if (!lc_vec2_finite(v[i]) || !(lc_len(v[i]) <= LC_FOOTPRINT_REACH)) {
            *at = i;
            return LC_FOOTPRINT_FAR;
        }
    for (int i = 0; i < n; i++)
        if (lc_dist(v[i], at_mod(v, n, i - 1)) < LC_FOOTPRINT_EDGE_MIN) {
            *at = i;
            return LC_FOOTPRINT_REPEATED;
        }
    bool any_left;
    int bad = first_non_left(v, n, &any_left);
    if (!any_left && lc_polygon_area2(v, n) < 0)
        return LC_FOOTPRINT_CLOCKWISE;
    if (bad >= 0) {
        *at = bad;
        lc_vec2 d0 = lc_sub(v[bad], at_mod(v, n, bad - 1)), d1 = lc_sub(at_mod(v, n, bad + 1), v[bad]);
        bool straight = fabs(turn_sine(d0, d1)) <= LC_FOOTPRINT_TURN_MIN && lc_dot(d0, d1) > 0;
        return straight ? LC_FOOTPRINT_COLLINEAR : LC_FOOTPRINT_NOT_CONVEX;
    }
    if (total_turn(v, n) > 3.0 * LC_PI)
        return LC_FOOTPRINT_SELF_CROSSING;
    for (int i = 0; i < n; i++)
        if (!(lc_cross(lc_sub(at_mod(v, n, i + 1), v[i]), lc_scale(v[i], -1.0)) > 0))
            return LC_FOOTPRINT_CENTRE_OUTSIDE;
    return LC_FOOTPRINT_OK;
}

double lc_footprint_circumradius(const lc_vec2 *v, int n)
{
    double r2 = 0;
    for (int i = 0; i < n; i++)
        r2 = lc_max(r2, lc_len2(v[i]));
    return sqrt(r2);
}

double lc_footprint_inradius(const lc_vec2 *v, int n)
{
    double r = INFINITY;
    for (int i = 0; i < n; i++) {
        lc_vec2 e = lc_sub(at_mod(v, n, i + 1), v[i]);
        r = lc_min(r, lc_cross(e, lc_scale(v[i], -1.0)) / lc_len(e));
    }
    return n > 0 ? r : 0.0;
}

void lc_footprint_place(const lc_vec2 *v, int n, double yaw, bool reflect, lc_vec2 *out)
{
    double c = cos(yaw), s = sin(yaw), k = reflect ? -1.0 : 1.0;
    for (int i = 0; i < n; i++)
        out[i] = lc_v2(k * (c * v[i].x - s * v[i].y), k * (s * v[i].x + c * v[i].y));
}

double lc_footprint_support(const lc_vec2 *v, int n, lc_vec2 a)
{
    double h = -INFINITY;
    for (int i = 0; i < n; i++)
        h = lc_max(h, lc_dot(a, v[i]));
    return h;
}

/* ------------------------------------------------------ Minkowski sum */

/* Upper half of directions (angles [0, pi)) or lower ([pi, 2 pi)). */
static int half_of(lc_vec2 d) { return d.y > 0 || (d.y == 0 && d.x > 0) ? 0 : 1; }

/* > 0 when direction p comes before q from angle 0 on, < 0 after, 0 when
 * they point the same way. */
static double order(lc_vec2 p, lc_vec2 q)
{
    int hp = half_of(p), hq = half_of(q);
    if (hp != hq)
        return hp < hq ? 1.0 : -1.0;
    return lc_cross(p, q);
}

/* One polygon's boundary walked from its lowest vertex, edges no longer
 * than tiny skipped. */
typedef struct walk {
    const lc_vec2 *v;
    int n, start, k; /* k edges taken so far, of n */
    lc_vec2 prev;    /* the last edge taken (zero before the first) */
    double tiny, dent; /* edge length taken as 0; sine of a dent let through */
} walk;

static int lowest(const lc_vec2 *v, int n)
{
    int b = 0;
    for (int i = 1; i < n; i++)
        if (v[i].y < v[b].y || (v[i].y == v[b].y && v[i].x < v[b].x))
            b = i;
    return b;
}

static lc_vec2 walk_vertex(const walk *w) { return w->v[(w->start + w->k) % w->n]; }
static lc_vec2 walk_edge(const walk *w)
{
    return lc_sub(w->v[(w->start + w->k + 1) % w->n], walk_vertex(w));
}

/* Skips tiny edges; false when the polygon is used up. */
static bool walk_ready(walk *w)
{
    while (w->k < w->n && lc_len2(walk_edge(w)) <= w->tiny * w->tiny)
        w->k++;
    return w->k < w->n;
}

/*
 * Takes the current edge; false when it turns against the one before
 * beyond rounding: clockwise by more than the dent, or (from the lower
 * half back into the upper) forward, which is a second turn round. A
 * convex CCW polygon turns by 0 to pi at each vertex.
 */
static bool walk_take(walk *w)
{
    lc_vec2 e = walk_edge(w), p = w->prev;
    bool ok;
    if (p.x == 0 && p.y == 0) {
        ok = half_of(e) == 0;
    } else {
        double c = lc_cross(p, e);
        ok = c >= -w->dent * lc_len(p) * lc_len(e) && !(half_of(p) == 1 && half_of(e) == 0 && c > 0);
    }
    w->prev = e;
    w->k++;
    return ok;
}

/* Rounding scales of both inputs: tiny edges, and the dent let through. */
static bool scales(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, double *tiny,
                   double *dent)
{
    double mag = 0, ext = 0;
    const lc_vec2 *ps[2] = {a, b};
    int ns[2] = {na, nb};
    for (int k = 0; k < 2; k++) {
        lc_vec2 lo = ps[k][0], hi = ps[k][0];
        for (int i = 0; i < ns[k]; i++) {
            lc_vec2 p = ps[k][i];
            if (!lc_vec2_finite(p))
                return false;
            lo = lc_v2(lc_min(lo.x, p.x), lc_min(lo.y, p.y));
            hi = lc_v2(lc_max(hi.x, p.x), lc_max(hi.y, p.y));
            mag = lc_max(mag, lc_max(fabs(p.x), fabs(p.y)));
        }
        ext = lc_max(ext, lc_len(lc_sub(hi, lo)));
    }
    *tiny = 1e-12 * ext + 16 * DBL_EPSILON * mag;
    *dent = 1e-9; /* sine of a backward turn taken as rounding */
    return true;
}

int lc_minkowski_sum(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_vec2 *out, int cap)
{
    double tiny, dent;
    if (na < 1 || nb < 1 || cap < 1 || !scales(a, na, b, nb, &tiny, &dent))
        return LC_ERR_BAD_INPUT;
    walk wa = {a, na, lowest(a, na), 0, {0, 0}, tiny, dent};
    walk wb = {b, nb, lowest(b, nb), 0, {0, 0}, tiny, dent};
    int count = 0;
    out[count++] = lc_add(walk_vertex(&wa), walk_vertex(&wb));
    for (;;) {
        bool ra = walk_ready(&wa), rb = walk_ready(&wb);
        if (!ra && !rb)
            break;
        double o = ra && rb ? order(walk_edge(&wa), walk_edge(&wb)) : (ra ? 1.0 : -1.0);
        if ((o >= 0 && !walk_take(&wa)) || (o <= 0 && !walk_take(&wb)))
            return LC_ERR_BAD_INPUT;
        if (!walk_ready(&wa) && !walk_ready(&wb))
            break; /* back at the start */
        if (count >= cap)
            return LC_ERR_BAD_INPUT;
        out[count++] = lc_add(walk_vertex(&wa), walk_vertex(&wb));
    }
    /* a CCW walk ends where it began: more than a turn means the edges
     * came back round (caught in walk_take); the lower half closes it */
    return count;
}

/* ----------------------------------------------------------- separate */

/* Distance from p to the boundary of v[0..n) (a point, a segment or a
 * polygon), and its nearest boundary point. */
static double boundary_distance(const lc_vec2 *v, int n, lc_vec2 p, lc_vec2 *q)
{
    if (n == 1) {
        *q = v[0];
        return lc_dist(p, v[0]);
    }
    double best = INFINITY;
    int edges = n == 2 ? 1 : n;
    for (int i = 0; i < edges; i++) {
        lc_vec2 c;
        double d = lc_segment_distance(p, v[i], v[i + 1 == n ? 0 : i + 1], &c);
        if (d < best) {
            best = d;
            *q = c;
        }
    }
    return best;
}

/* The closest pair between the boundaries of a and b: p on a, q on b. */
static double closest_pair(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_vec2 *p,
                           lc_vec2 *q)
{
    double best = INFINITY;
    for (int i = 0; i < na; i++) {
        lc_vec2 c;
        double d = boundary_distance(b, nb, a[i], &c);
        if (d < best) {
            best = d;
            *p = a[i];
            *q = c;
        }
    }
    for (int i = 0; i < nb; i++) {
        lc_vec2 c;
        double d = boundary_distance(a, na, b[i], &c);
        if (d < best) {
            best = d;
            *p = c;
            *q = b[i];
        }
    }
    return best;
}

/* min over b of n . x minus max over a: the gap along the unit direction n. */
static double gap_along(lc_vec2 n, const lc_vec2 *a, int na, const lc_vec2 *b, int nb,
                        double *lo_b)
{
    *lo_b = INFINITY;
    for (int i = 0; i < nb; i++)
        *lo_b = lc_min(*lo_b, lc_dot(n, b[i]));
    return *lo_b - lc_footprint_support(a, na, n);
}

/* Touching polygons: the best edge normal of either (separating axes). */
static double touching_axis(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_halfspace *h)
{
    double best = -INFINITY;
    const lc_vec2 *ps[2] = {a, b};
    int ns[2] = {na, nb};
    for (int k = 0; k < 2; k++)
        for (int i = 0; i < ns[k] && ns[k] >= 2; i++) {
            lc_vec2 e = lc_sub(ps[k][(i + 1) % ns[k]], ps[k][i]);
            double l = lc_len(e);
            if (!(l > 0))
                continue;
            for (int s = -1; s <= 1; s += 2) {
                lc_vec2 n = lc_scale(lc_v2(e.y, -e.x), s / l);
                double lo, g = gap_along(n, a, na, b, nb, &lo);
                if (g > best) {
                    best = g;
                    *h = (lc_halfspace){n, lo};
                }
            }
        }
    return best;
}

#define LC_SEPARATE_TOL 1e-9 /* m */

double lc_convex_separate(const lc_vec2 *a, int na, const lc_vec2 *b, int nb, lc_halfspace *h)
{
    if (na < 1 || nb < 1)
        return -1.0;
    lc_vec2 p = a[0], q = b[0];
    double d = closest_pair(a, na, b, nb, &p, &q);
    if (d > LC_SEPARATE_TOL) {
        /* the line across the shortest segment separates convex sets; when
         * it does not, one holds part of the other */
        lc_vec2 n = lc_scale(lc_sub(q, p), 1.0 / d);
        double lo, g = gap_along(n, a, na, b, nb, &lo);
        if (!(g >= d - LC_SEPARATE_TOL))
            return -1.0;
        *h = (lc_halfspace){n, lo};
        return g;
    }
    lc_halfspace t;
    if (!(touching_axis(a, na, b, nb, &t) >= -LC_SEPARATE_TOL))
        return -1.0;
    *h = t;
    return 0.0;
}
