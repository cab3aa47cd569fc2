/*
 * follow.c - following a guidance path: where the robot is along it and
 * the point a distance on; inside a convex region, the farthest point of
 * the path the region holds, and the path's line followed just inside the
 * region when it runs along its edge.
 */
#include "follow.h"

#include <math.h>

/* lc_follow_nearest, lc_follow_rest, lc_guide_ahead: see follow.h. */
lc_vec2 lc_follow_nearest(const lc_guide_path *p, lc_vec2 from, int *seg)
{
    if (p->n < 2) {
        *seg = 0;
        return p->n ? p->v[0] : from;
    }
    int best = *seg < p->n - 1 ? *seg : p->n - 2, first = best;
    lc_vec2 bq = p->v[best];
    /* the segment the robot was at and those that start within 3 m of
     * its end (however long the segment itself is) */
    double bd = INFINITY, walked = 0.0;
    for (int k = first; k < p->n - 1 && walked < 3.0; k++) {
        lc_vec2 q;
        double d = lc_segment_distance(from, p->v[k], p->v[k + 1], &q);
        if (d < bd - 1e-12) {
            bd = d;
            bq = q;
            best = k;
        }
        if (k > first)
            walked += lc_dist(p->v[k], p->v[k + 1]);
    }
    *seg = best;
    return bq;
}

double lc_follow_rest(const lc_guide_path *p, int seg, lc_vec2 q)
{
    double r = lc_dist(q, p->v[seg + 1 < p->n ? seg + 1 : seg]);
    for (int k = seg + 1; k < p->n - 1; k++)
        r += lc_dist(p->v[k], p->v[k + 1]);
    return r;
}

lc_vec2 lc_guide_ahead(const lc_guide_path *p, lc_vec2 from, double dist, double *rest)
{
    int seg = p->seg;
    lc_vec2 q = lc_follow_nearest(p, from, &seg);
    if (rest)
        *rest = lc_dist(from, q) + (p->n >= 2 ? lc_follow_rest(p, seg, q) : 0.0);
    if (p->n < 2)
        return q;
    double left = dist;
    lc_vec2 at = q;
    for (int k = seg; k < p->n - 1; k++) {
        lc_vec2 next = p->v[k + 1];
        double d = lc_dist(at, next);
        if (d >= left)
            return lc_add(at, lc_scale(lc_sub(next, at), d > 0 ? left / d : 0.0));
        left -= d;
        at = next;
    }
    return p->v[p->n - 1];
}

bool lc_guide_bend_ahead(const lc_guide_path *p, lc_vec2 from, double dist, double near,
                         lc_vec2 *bend)
{
    if (p->n < 3)
        return false;
    int seg = p->seg;
    lc_vec2 at = lc_follow_nearest(p, from, &seg);
    double walked = 0.0;
    for (int k = seg + 1; k < p->n - 1; k++) {
        walked += lc_dist(at, p->v[k]);
        if (!(walked <= dist))
            return false;
        if (lc_dist(from, p->v[k]) >= near) {
            *bend = p->v[k];
            return true;
        }
        at = p->v[k];
    }
    return false;
}

/* Where the segment from a (inside the region) along d leaves it, as a
 * share of d (1: it does not). */
static double exit_share(const lc_region *r, lc_vec2 a, lc_vec2 d)
{
    double t = 1.0;
    for (int i = 0; i < r->nh; i++) {
        double ad = lc_dot(r->h[i].a, d);
        if (ad > 1e-15)
            t = lc_min(t, lc_max(0.0, (r->h[i].b - lc_dot(r->h[i].a, a)) / ad));
    }
    return t;
}

/* The length of path p from point a on segment k - 1 (a up to v[k]) on. */
static double path_rest(const lc_guide_path *p, lc_vec2 a, int k)
{
    double r = k < p->n ? lc_dist(a, p->v[k]) : 0.0;
    for (int i = k; i + 1 < p->n; i++)
        r += lc_dist(p->v[i], p->v[i + 1]);
    return r;
}

/* lc_follow_target: see follow.h. */
lc_vec2 lc_follow_target(const lc_region *r, const lc_guide_path *p, lc_vec2 c, double *rest)
{
    lc_vec2 a = c;
    for (int k = p->seg + 1; k < p->n; k++) {
        lc_vec2 d = lc_sub(p->v[k], a);
        double t = exit_share(r, a, d);
        if (t < 1.0) {
            lc_vec2 e = lc_add(a, lc_scale(d, t));
            *rest = path_rest(p, e, k);
            return e;
        }
        a = p->v[k];
    }
    *rest = 0.0;
    return a;
}

bool lc_follow_hug(const lc_region *r, const lc_guide_path *p, lc_vec2 c, lc_vec2 current,
                   lc_vec2 *target, double *rest)
{
    for (int k = LC_FOLLOW_HUG_SAMPLES; k >= 1; k--) {
        double ahead = LC_FOLLOW_HUG_AHEAD * k / LC_FOLLOW_HUG_SAMPLES, left;
        lc_vec2 q = lc_guide_ahead(p, c, ahead, &left);
        lc_vec2 t = lc_region_project(r, q);
        if (lc_dist(t, q) <= LC_FOLLOW_HUG_SLACK && lc_dist(t, c) > lc_dist(current, c)) {
            *target = t;
            *rest = lc_max(0.0, left - ahead);
            return true;
        }
    }
    return false;
}
