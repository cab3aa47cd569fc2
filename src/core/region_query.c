/*
 * region_query.c - questions asked of a finished region: containment, ray
 * exit and projection. Pure functions of the halfspaces and vertices.
 */
#include "region.h"

bool lc_region_contains(const lc_region *r, lc_vec2 p, double eps)
{
    for (int i = 0; i < r->nh; i++)
        if (lc_dot(r->h[i].a, p) > r->h[i].b + eps)
            return false;
    return r->nh > 0;
}

double lc_region_margin(const lc_region *r, lc_vec2 p)
{
    double m = INFINITY;
    for (int i = 0; i < r->nh; i++) {
        double s = r->h[i].b - lc_dot(r->h[i].a, p);
        if (s < m)
            m = s;
    }
    return m;
}

double lc_region_ray_exit(const lc_region *r, lc_vec2 p, lc_vec2 dir)
{
    double s_max = INFINITY;
    for (int i = 0; i < r->nh; i++) {
        double slack = r->h[i].b - lc_dot(r->h[i].a, p);
        double rate = lc_dot(r->h[i].a, dir);
        if (slack < -1e-12)
            return 0.0; /* outside (beyond rounding): no room at all */
        slack = slack > 0 ? slack : 0.0;
        /* a line through p with dir along it (rate a rounding error away
         * from 0) does not stop the ray: p stays on it */
        if (rate > 1e-12) {
            double s = slack / rate;
            if (s < s_max)
                s_max = s;
        }
    }
    return isfinite(s_max) ? s_max : 0.0;
}

lc_vec2 lc_region_project(const lc_region *r, lc_vec2 p)
{
    if (lc_region_contains(r, p, 0.0) || r->nv == 0)
        return p;
    lc_vec2 c = p;
    lc_convex_distance(r->v, r->nv, p, &c);
    return c;
}
