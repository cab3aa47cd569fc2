/*
 * polygon.c - see polygon.h.
 */
#include "polygon.h"

/* The segments [a, b] and [c, d] cross at a point inside both. (Touching
 * shows as a distance of 0 in lc_segment_polygon_distance.) */
static bool segments_cross(lc_vec2 a, lc_vec2 b, lc_vec2 c, lc_vec2 d)
{
    double d1 = lc_cross(lc_sub(b, a), lc_sub(c, a)), d2 = lc_cross(lc_sub(b, a), lc_sub(d, a));
    double d3 = lc_cross(lc_sub(d, c), lc_sub(a, c)), d4 = lc_cross(lc_sub(d, c), lc_sub(b, c));
    return ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0));
}

/* Each vertex is taken once: it starts one edge. */
double lc_segment_polygon_distance(lc_vec2 a, lc_vec2 b, const lc_vec2 *v, int n)
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

/*
 * The nearest is a vertex or the foot on an edge whose projection falls
 * inside it, at squared distance cross(a, e)^2 / |e|^2: candidates are
 * compared as fractions, and only the winner's point is computed, so no
 * edge costs a division.
 */
lc_vec2 lc_polygon_nearest_origin(const lc_vec2 *v, int n)
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
