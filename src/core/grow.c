/*
 * grow.c - obstacles into configuration space (see grow.h).
 *
 * The input is walked as a closed cycle of edges; a corner sits where one
 * edge of non-negligible length meets the next. Each corner gets the polygon
 * circumscribed about its exterior arc (between the outward normals n0, n1
 * of its two edges) in m = max(1, ceil(arc / max_step)) steps: the tangent
 * lines at n0, n0 turned by max_step, twice, ..., and n1, where the last two
 * steps split what is left (between max_step and twice that) evenly. A
 * vertex is where two neighbouring tangent lines meet, so the first and last
 * lie on the two offset edge lines and consecutive corners join along them.
 * A segment is the cycle a -> b -> a (two corners of pi), a point two half
 * turns.
 *
 * No trigonometry per corner: one sincos per polygon gives the rotations by
 * max_step and its half; whether more than one or two steps are left is the
 * sign of a sine against n1, the even split a bisector; whether the cycle
 * turns more than once is a sum of pseudo-angles. Measured with callgrind on
 * the bench's 1081-beam frames (47 polygons, 240 corners): the atan2 and
 * sincos of every corner were over 40% of the stage, which went from 137k to
 * 77k instructions per frame (with the rule computed once per session,
 * lc_grow_polygon_rule), and from 17-22 us to 11-14 us (5 runs each, busy
 * 2-core EPYC).
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

static lc_vec2 edge(const lc_vec2 *v, int n, int i) { return lc_sub(v[i + 1 == n ? 0 : i + 1], v[i]); }

/* Outward normal of an edge direction of a CCW polygon (-90 deg). */
static lc_vec2 outward(lc_vec2 d) { return lc_v2(d.y, -d.x); }

int lc_grow_rule_init(lc_grow_rule *rule, double max_step)
{
    int extra = lc_grow_max_vertices(1, max_step) - 1;
    if (extra <= 0)
        return LC_ERR_BAD_INPUT;
    double ch = cos(0.5 * max_step), sh = sin(0.5 * max_step);
    lc_vec2 rot = lc_v2(2.0 * ch * ch - 1.0, 2.0 * sh * ch);
    *rule = (lc_grow_rule){.step = max_step, .extra = extra, .sec_half = 1.0 / ch, .rot = rot,
                           .half = lc_v2(ch, sh),
                           .two = lc_v2(rot.x * rot.x - rot.y * rot.y, 2.0 * rot.x * rot.y)};
    return LC_OK;
}

/* The arcs of one polygon: the rule and the radius. */
typedef struct arc_rule {
    double r, rho; /* rho = r / cos(step / 2): a full step's vertex */
    lc_vec2 rot, half, two;
} arc_rule;

static arc_rule arc_rule_of(double r, const lc_grow_rule *g)
{
    return (arc_rule){r, r * g->sec_half, g->rot, g->half, g->two};
}

/* v turned by the angle whose (cos, sin) is cs. */
static lc_vec2 turn_by(lc_vec2 v, lc_vec2 cs)
{
    return lc_v2(cs.x * v.x - cs.y * v.y, cs.y * v.x + cs.x * v.y);
}

/* Where the tangent lines of the circle (c, r) at unit normals a and b meet
 * (a to b at most pi/2 apart). */
static lc_vec2 tangent_meet(lc_vec2 c, double r, lc_vec2 a, lc_vec2 b)
{
    return lc_add(c, lc_scale(lc_add(a, b), r / (1.0 + lc_dot(a, b))));
}

/* The unit normal halfway from a to b counter-clockwise (angle in (0, 2 pi)):
 * b - a turned by -90 degrees, normalised. */
static lc_vec2 halfway(lc_vec2 a, lc_vec2 b)
{
    lc_vec2 d = lc_sub(b, a);
    return lc_scale(lc_v2(d.y, -d.x), 1.0 / lc_len(d));
}

/* A turn of at most this much beyond a whole number of steps (its sine) is
 * rounding: the corner takes that number of steps. */
#define LC_GROW_TURN_TOL 1e-12

/* Does the turn from n to n1 (counter-clockwise, at most pi) exceed the angle
 * whose (cos, sin) is cs? sin(turn - angle) > 0, up to rounding. */
static bool turns_beyond(lc_vec2 n, lc_vec2 n1, lc_vec2 cs)
{
    return lc_cross(n, n1) * cs.x - lc_dot(n, n1) * cs.y > LC_GROW_TURN_TOL;
}

/*
 * Appends the circumscribed arc about centre c from unit normal n0 to n1
 * (counter-clockwise, at most pi) in ceil(turn / step) steps: full steps
 * while more than two are left, then what is left in one step, or in two
 * even ones when it exceeds one step. Returns the new count, or
 * LC_ERR_BAD_INPUT when cap is too small.
 */
static int emit_arc(const arc_rule *a, lc_vec2 c, lc_vec2 n0, lc_vec2 n1, lc_vec2 *out,
                    int count, int cap)
{
    lc_vec2 n = n0;
    for (; turns_beyond(n, n1, a->two); n = turn_by(n, a->rot)) {
        if (count >= cap)
            return LC_ERR_BAD_INPUT;
        out[count++] = lc_add(c, lc_scale(turn_by(n, a->half), a->rho));
    }
    if (!turns_beyond(n, n1, a->rot)) {
        if (count >= cap)
            return LC_ERR_BAD_INPUT;
        out[count++] = tangent_meet(c, a->r, n, n1);
        return count;
    }
    if (count + 2 > cap)
        return LC_ERR_BAD_INPUT;
    lc_vec2 mid = halfway(n, n1);
    double k = a->r / (1.0 + lc_dot(n, mid)); /* the same for both halves */
    out[count++] = lc_add(c, lc_scale(lc_add(n, mid), k));
    out[count++] = lc_add(c, lc_scale(lc_add(mid, n1), k));
    return count;
}

/* Pseudo-angle of a unit vector in [0, 4): monotone in its angle, 4 per
 * turn. Written without branches: the sign of y is a coin toss per corner. */
static double pseudo_angle(lc_vec2 u)
{
    double below = u.y < 0;
    return 1.0 - u.x + below * (2.0 + 2.0 * u.x);
}

/* How far the normal advances from a to b turning counter-clockwise by at
 * most pi, in pseudo-angle (at most 2; one whole turn is 4). */
static double advance(lc_vec2 a, lc_vec2 b)
{
    double d = pseudo_angle(b) - pseudo_angle(a);
    d += 4.0 * (d < -1.0);
    return lc_max(d, 0.0);
}

/* Index of the last edge longer than tiny (-1: all vertices coincide), and
 * the total length of the skipped ones. */
static int last_real_edge(const lc_vec2 *v, int n, double tiny, double *skipped)
{
    int last = -1;
    *skipped = 0;
    for (int i = 0; i < n; i++) { /* squares: a root only for the skipped */
        double l2 = lc_len2(edge(v, n, i));
        if (l2 > tiny * tiny)
            last = i;
        else
            *skipped += sqrt(l2);
    }
    return last;
}

int lc_grow_polygon(const lc_vec2 *poly, int n, double r, double max_step,
                    lc_vec2 *out, int cap)
{
    lc_grow_rule rule;
    if (lc_grow_rule_init(&rule, max_step) < 0)
        return LC_ERR_BAD_INPUT;
    return lc_grow_polygon_rule(poly, n, r, &rule, out, cap);
}

int lc_grow_polygon_rule(const lc_vec2 *poly, int n, double r, const lc_grow_rule *rule,
                         lc_vec2 *out, int cap)
{
    grow_scales s;
    if (n < 1 || !(r > 0) || !isfinite(r) || !input_scales(poly, n, &s))
        return LC_ERR_BAD_INPUT;
    double skipped;
    int last = last_real_edge(poly, n, s.tiny, &skipped);
    arc_rule a = arc_rule_of(r + skipped, rule);
    if (last < 0) { /* a point: two half turns */
        int count = emit_arc(&a, poly[0], lc_v2(1, 0), lc_v2(-1, 0), out, 0, cap);
        return count < 0 ? count : emit_arc(&a, poly[0], lc_v2(-1, 0), lc_v2(1, 0), out, count, cap);
    }
    lc_vec2 e = edge(poly, n, last);
    double lprev = lc_len(e), wound = 0;
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
        if (-sine * lprev * l > s.dent * (lprev + l))
            return LC_ERR_BAD_INPUT;
        /* sine <= 0 within the dent tolerance is collinear (no turn), or
         * exactly reversed (a segment's end: a turn of pi). */
        lc_vec2 n0 = outward(dprev), n1 = outward(d);
        if (!(sine > 0)) {
            if (!(lc_dot(dprev, d) < 0)) {
                dprev = d;
                lprev = l;
                continue;
            }
            n1 = lc_scale(n0, -1.0);
        }
        count = emit_arc(&a, poly[k], n0, n1, out, count, cap);
        wound += advance(n0, n1);
        dprev = d;
        lprev = l;
    }
    /* A convex CCW cycle turns once (4 in pseudo-angle; rounding and the
     * dents let through move that by a hair); twice or more is a
     * self-overlapping input. */
    if (count >= 0 && wound > 6.0)
        return LC_ERR_BAD_INPUT;
    return count;
}
