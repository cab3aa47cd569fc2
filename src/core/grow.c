/*
 * grow.c - obstacles into configuration space (see grow.h).
 *
 * The input is walked as a closed cycle of edges; a corner sits where one
 * edge of non-negligible length meets the next. Each corner gets the polygon
 * circumscribed about its exterior arc (between the outward normals of its
 * two edges), m = max(1, ceil(arc / max_step)) equal steps of phi, vertices
 * at r / cos(phi / 2) along the directions theta0 + (j + 0.5) phi, so the
 * first and last ones lie on the two offset edge lines and consecutive
 * corners join along those lines. A segment is the cycle a -> b -> a (two
 * corners of pi), a point one corner of 2 pi.
 *
 * Invariants: output CCW convex, lengths in the input's units (metres).
 * Edges no longer than `tiny` (repeats, up to roundoff) are skipped; r then
 * grows by their total length, so the result still contains the exact sum.
 * Collinear vertices (zero turn) emit nothing. Pure computation, no
 * allocation: the caller sizes out with lc_grow_max_vertices.
 */
#include "grow.h"

#include <float.h>
#include <limits.h>

/* Edges no longer than this (relative to the extent, plus roundoff of the
 * largest coordinate) are repeats. */
#define LC_GROW_TINY_REL 1e-12
/* A vertex dented inward deeper than this (same scaling) means the input is
 * not convex counter-clockwise. */
#define LC_GROW_DENT_REL 1e-9

static bool valid_step(double max_step) { return max_step > 0 && max_step <= LC_PI / 2; }

/* Corners' steps total < 2 pi / step + corners, and corners <= n. */
int lc_grow_max_vertices(int n, double max_step)
{
    if (n < 1 || !valid_step(max_step))
        return 0;
    double full = ceil(2.0 * LC_PI / max_step);
    if (full > (double)(INT_MAX - n))
        return 0;
    return n + (int)full;
}

double lc_grow_excess_bound(double r, double max_step)
{
    return r * (1.0 / cos(max_step / 2.0) - 1.0);
}

typedef struct grow_scales {
    double tiny; /* edge length treated as zero */
    double dent; /* allowed inward dent of a vertex */
} grow_scales;

/* Tolerances from the extent and the largest coordinate; false if not finite. */
static bool input_scales(const lc_vec2 *v, int n, grow_scales *s)
{
    lc_vec2 lo = v[0], hi = v[0];
    double mag = 0;
    for (int i = 0; i < n; i++) {
        if (!lc_vec2_finite(v[i]))
            return false;
        lo = lc_v2(lc_min(lo.x, v[i].x), lc_min(lo.y, v[i].y));
        hi = lc_v2(lc_max(hi.x, v[i].x), lc_max(hi.y, v[i].y));
        mag = lc_max(mag, lc_max(fabs(v[i].x), fabs(v[i].y)));
    }
    double extent = lc_len(lc_sub(hi, lo));
    s->tiny = LC_GROW_TINY_REL * extent + 16 * DBL_EPSILON * mag;
    s->dent = LC_GROW_DENT_REL * extent + 1024 * DBL_EPSILON * mag;
    return true;
}

static lc_vec2 edge(const lc_vec2 *v, int n, int i) { return lc_sub(v[(i + 1) % n], v[i]); }

/* Outward normal of an edge direction of a CCW polygon (-90 deg). */
static lc_vec2 outward(lc_vec2 d) { return lc_v2(d.y, -d.x); }

/*
 * Appends the circumscribed arc about centre c from unit normal n0 through
 * `arc` radians CCW. Returns the new count, or -1 when cap is too small.
 */
static int emit_arc(lc_vec2 c, lc_vec2 n0, double arc, double r, double max_step,
                    lc_vec2 *out, int count, int cap)
{
    double steps = ceil(arc / max_step);
    if (steps > (double)(cap - count))
        return -1;
    int m = steps < 1 ? 1 : (int)steps;
    if (count + m > cap)
        return -1;
    /* One sincos per arc: the half step gives the first bisector and, by
     * the double-angle formulas, the rotation from one bisector to the next. */
    double ch = cos(arc / m / 2.0), sh = sin(arc / m / 2.0);
    double rho = r / ch, cs = 2.0 * ch * ch - 1.0, sn = 2.0 * sh * ch;
    lc_vec2 w = lc_v2(ch * n0.x - sh * n0.y, sh * n0.x + ch * n0.y);
    for (int j = 0; j < m; j++) {
        out[count++] = lc_add(c, lc_scale(w, rho));
        w = lc_v2(cs * w.x - sn * w.y, sn * w.x + cs * w.y);
    }
    return count;
}

/* Index of the last edge longer than tiny (-1: all vertices coincide), and
 * the total length of the skipped ones. */
static int last_real_edge(const lc_vec2 *v, int n, double tiny, double *skipped)
{
    int last = -1;
    *skipped = 0;
    for (int i = 0; i < n; i++) {
        double l = lc_len(edge(v, n, i));
        if (l > tiny)
            last = i;
        else
            *skipped += l;
    }
    return last;
}

int lc_grow_polygon(const lc_vec2 *poly, int n, double r, double max_step,
                    lc_vec2 *out, int cap)
{
    grow_scales s;
    if (n < 1 || !(r > 0) || !isfinite(r) || !valid_step(max_step) ||
        !input_scales(poly, n, &s))
        return -1;
    double skipped;
    int last = last_real_edge(poly, n, s.tiny, &skipped);
    double reff = r + skipped;
    if (last < 0)
        return emit_arc(poly[0], lc_v2(1, 0), 2.0 * LC_PI, reff, max_step, out, 0, cap);
    lc_vec2 e = edge(poly, n, last);
    double lprev = lc_len(e), total = 0;
    lc_vec2 dprev = lc_scale(e, 1.0 / lprev);
    int count = 0;
    for (int k = 0; k < n && count >= 0; k++) {
        e = edge(poly, n, k);
        double l = lc_len(e);
        if (l <= s.tiny)
            continue;
        lc_vec2 d = lc_scale(e, 1.0 / l);
        double sine = lc_cross(dprev, d);
        /* a b sin / (a + b) is at most the vertex's distance from the chord */
        if (-sine * lprev * l / (lprev + l) > s.dent)
            return -1;
        /* sine <= 0 within the dent tolerance is collinear, or exactly
         * reversed (a segment's end): atan2 of +0 gives 0 or pi. */
        double turn = atan2(sine > 0 ? sine : 0.0, lc_dot(dprev, d));
        total += turn;
        if (turn > 0)
            count = emit_arc(poly[k], outward(dprev), turn, reff, max_step, out, count, cap);
        dprev = d;
        lprev = l;
    }
    /* A convex CCW cycle turns once; more is a self-overlapping input. */
    if (count >= 0 && total > 2.0 * LC_PI + 1e-9)
        return -1;
    return count;
}
