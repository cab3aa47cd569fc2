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

/* Squared distance from p to [a, b] and the closest point: the square of
 * lc_segment_distance bit for bit (its root is taken last). */
static double segment_closest2(lc_vec2 p, lc_vec2 a, lc_vec2 b, lc_vec2 *closest)
{
    lc_vec2 ab = lc_sub(b, a);
    double l2 = lc_len2(ab);
    double t = l2 > 0 ? lc_dot(lc_sub(p, a), ab) / l2 : 0.0;
    t = t < 0 ? 0 : (t > 1 ? 1 : t);
    *closest = lc_add(a, lc_scale(ab, t));
    return lc_len2(lc_sub(p, *closest));
}

double lc_segment_distance(lc_vec2 p, lc_vec2 a, lc_vec2 b, lc_vec2 *closest)
{
    lc_vec2 c;
    double d2 = segment_closest2(p, a, b, &c);
    if (closest)
        *closest = c;
    return sqrt(d2);
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
        double cr = lc_cross(e, lc_sub(p, v[j]));
        if (eps == 0) { /* cr / |e| < 0 without the root and the division */
            if (cr < 0)
                return false;
            continue;
        }
        double l = lc_len(e);
        if (l != 0 && cr / l < -eps)
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
    double best = INFINITY; /* squared: one root at the end, the same result */
    lc_vec2 bc = p;
    int edges = n >= 3 ? n : (n == 2 ? 1 : 0);
    if (n == 1) {
        best = lc_len2(lc_sub(p, v[0]));
        bc = v[0];
    }
    for (int i = 0; i < edges; i++) {
        lc_vec2 c;
        double d2 = segment_closest2(p, v[i], v[i + 1 == n ? 0 : i + 1], &c);
        if (d2 < best) {
            best = d2;
            bc = c;
        }
    }
    if (closest)
        *closest = bc;
    return sqrt(best);
}
