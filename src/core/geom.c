/* geom.c - see geom.h. */
#include "geom.h"

double lc_wrap_angle(double a)
{
    a = fmod(a, 2.0 * LC_PI);
    if (a <= -LC_PI)
        a += 2.0 * LC_PI;
    else if (a > LC_PI)
        a -= 2.0 * LC_PI;
    return a;
}

double lc_segment_distance(lc_vec2 p, lc_vec2 a, lc_vec2 b, lc_vec2 *closest)
{
    lc_vec2 ab = lc_sub(b, a);
    double l2 = lc_len2(ab);
    double t = l2 > 0 ? lc_dot(lc_sub(p, a), ab) / l2 : 0.0;
    t = t < 0 ? 0 : (t > 1 ? 1 : t);
    lc_vec2 c = lc_add(a, lc_scale(ab, t));
    if (closest)
        *closest = c;
    return lc_dist(p, c);
}

double lc_polygon_area2(const lc_vec2 *v, int n)
{
    double s = 0;
    for (int i = 0, j = n - 1; i < n; j = i++)
        s += lc_cross(v[j], v[i]);
    return s;
}

bool lc_convex_contains(const lc_vec2 *v, int n, lc_vec2 p, double eps)
{
    if (n <= 0)
        return false;
    if (n <= 2)
        return lc_segment_distance(p, v[0], v[n - 1], NULL) <= eps;
    for (int i = 0, j = n - 1; i < n; j = i++) {
        lc_vec2 e = lc_sub(v[i], v[j]);
        double l = lc_len(e);
        if (l == 0)
            continue;
        if (lc_cross(e, lc_sub(p, v[j])) / l < -eps)
            return false;
    }
    return true;
}

double lc_convex_distance(const lc_vec2 *v, int n, lc_vec2 p, lc_vec2 *closest)
{
    if (n >= 3 && lc_convex_contains(v, n, p, 0.0)) {
        if (closest)
            *closest = p;
        return 0.0;
    }
    double best = INFINITY;
    lc_vec2 bc = p;
    int edges = n >= 3 ? n : (n == 2 ? 1 : 0);
    if (n == 1) {
        best = lc_dist(p, v[0]);
        bc = v[0];
    }
    for (int i = 0; i < edges; i++) {
        lc_vec2 c;
        double d = lc_segment_distance(p, v[i], v[(i + 1) % n], &c);
        if (d < best) {
            best = d;
            bc = c;
        }
    }
    if (closest)
        *closest = bc;
    return best;
}
