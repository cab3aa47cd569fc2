/*
 * world.c - polygons and a ray-cast scanner (see world.h). Exact ray/segment
 * intersection; every surface edge is tested, which is plenty for sites of a
 * few hundred edges at sensor rates.
 */
#include "world.h"

void lc_sensor_default(lc_sensor *s)
{
    s->beams = 541;
    s->fov = 270.0 * LC_PI / 180.0;
    s->range_min = 0.05;
    s->range_max = 12.0;
    s->rate = 20.0;
    s->noise = 0.01;
    s->mount = (lc_pose){0, 0, 0};
}

double lc_sim_rng_normal(lc_sim_rng *r)
{
    uint64_t a[2];
    for (int k = 0; k < 2; k++) {
        uint64_t z = (r->state += 0x9e3779b97f4a7c15ull);
        z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
        z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
        a[k] = z ^ (z >> 31);
    }
    double u = ((double)(a[0] >> 11) + 0.5) * 0x1.0p-53, v = (double)(a[1] >> 11) * 0x1.0p-53;
    return sqrt(-2.0 * log(u)) * cos(2.0 * LC_PI * v);
}

void lc_world_init(lc_world *w) { *w = (lc_world){0}; }

void lc_world_free(lc_world *w) { lc_polyset_free(&w->polys); }

int lc_world_add(lc_world *w, const lc_vec2 *v, int n)
{
    if (n < 2)
        return -1;
    return lc_polyset_push(&w->polys, v, n, w->polys.np);
}

/* Ray origin + t dir against segment [a, b]: t >= 0 of the hit or INFINITY. */
static double ray_segment(lc_vec2 o, lc_vec2 dir, lc_vec2 a, lc_vec2 b)
{
    lc_vec2 e = lc_sub(b, a), ao = lc_sub(a, o);
    double den = lc_cross(dir, e);
    if (den == 0)
        return INFINITY;
    double t = lc_cross(ao, e) / den, u = lc_cross(ao, dir) / den;
    return t >= 0 && u >= 0 && u <= 1 ? t : INFINITY;
}

static int edge_count(int n) { return n == 2 ? 1 : n; }

double lc_world_raycast(const lc_world *w, lc_vec2 origin, lc_vec2 dir, double max_range)
{
    double best = INFINITY;
    for (int j = 0; j < w->polys.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&w->polys, j, &n);
        for (int i = 0; i < edge_count(n); i++) {
            double t = ray_segment(origin, dir, v[i], v[(i + 1) % n]);
            if (t < best)
                best = t;
        }
    }
    return best <= max_range ? best : INFINITY;
}

double lc_sensor_angle_step(const lc_sensor *s)
{
    return s->beams > 1 ? s->fov / (s->beams - 1) : 0.0;
}

double lc_sensor_beam_angle(const lc_sensor *s, int i)
{
    return s->beams > 1 ? -0.5 * s->fov + lc_sensor_angle_step(s) * i : 0.0;
}

void lc_world_scan(const lc_world *w, lc_pose pose, const lc_sensor *s, lc_sim_rng *rng,
                   double *ranges)
{
    lc_pose sensor = lc_pose_compose(pose, s->mount);
    lc_vec2 o = lc_v2(sensor.x, sensor.y);
    for (int i = 0; i < s->beams; i++) {
        double a = sensor.yaw + lc_sensor_beam_angle(s, i);
        double r = lc_world_raycast(w, o, lc_unit_angle(a), s->range_max);
        if (isfinite(r) && rng && s->noise > 0)
            r += s->noise * lc_sim_rng_normal(rng);
        ranges[i] = isfinite(r) && r >= s->range_min && r <= s->range_max ? r : NAN;
    }
}

/* p inside the closed ring v[0..n) (ray parity; never for n < 3). */
static bool ring_inside(const lc_vec2 *v, int n, lc_vec2 p)
{
    bool in = false;
    for (int i = 0, k = n - 1; n >= 3 && i < n; k = i++)
        if ((v[i].y > p.y) != (v[k].y > p.y) &&
            p.x < (v[k].x - v[i].x) * (p.y - v[i].y) / (v[k].y - v[i].y) + v[i].x)
            in = !in;
    return in;
}

bool lc_world_inside(const lc_world *w, lc_vec2 p)
{
    for (int j = 0; j < w->polys.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&w->polys, j, &n);
        if (ring_inside(v, n, p))
            return true;
    }
    return false;
}

double lc_world_distance(const lc_world *w, lc_vec2 p)
{
    if (lc_world_inside(w, p))
        return 0.0;
    double best = INFINITY;
    for (int j = 0; j < w->polys.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&w->polys, j, &n);
        for (int i = 0; i < edge_count(n); i++)
            best = fmin(best, lc_segment_distance(p, v[i], v[(i + 1) % n], NULL));
    }
    return best;
}

/* ------------------------------------------- a polygon footprint */

typedef struct box {
    double x0, y0, x1, y1;
} box;

static box box_of(const lc_vec2 *v, int n)
{
    box b = {v[0].x, v[0].y, v[0].x, v[0].y};
    for (int i = 1; i < n; i++)
        b = (box){fmin(b.x0, v[i].x), fmin(b.y0, v[i].y), fmax(b.x1, v[i].x), fmax(b.y1, v[i].y)};
    return b;
}

static double box_gap(box a, box b)
{
    double dx = fmax(0.0, fmax(a.x0 - b.x1, b.x0 - a.x1));
    double dy = fmax(0.0, fmax(a.y0 - b.y1, b.y0 - a.y1));
    return hypot(dx, dy);
}

/* The segments [a, b] and [c, d] cross at a point inside both. */
static bool segments_cross(lc_vec2 a, lc_vec2 b, lc_vec2 c, lc_vec2 d)
{
    double d1 = lc_cross(lc_sub(b, a), lc_sub(c, a)), d2 = lc_cross(lc_sub(b, a), lc_sub(d, a));
    double d3 = lc_cross(lc_sub(d, c), lc_sub(a, c)), d4 = lc_cross(lc_sub(d, c), lc_sub(b, c));
    return ((d1 > 0 && d2 < 0) || (d1 < 0 && d2 > 0)) && ((d3 > 0 && d4 < 0) || (d3 < 0 && d4 > 0));
}

/* Squared distance between the segments [a, b] and [c, d]: 0 when they
 * cross, else the least of the four endpoint-to-segment distances. */
static double segments_distance2(lc_vec2 a, lc_vec2 b, lc_vec2 c, lc_vec2 d)
{
    if (segments_cross(a, b, c, d))
        return 0.0;
    return fmin(fmin(lc_segment_distance2(c, a, b), lc_segment_distance2(d, a, b)),
                fmin(lc_segment_distance2(a, c, d), lc_segment_distance2(b, c, d)));
}

/* Distance from p to the boundary of ring or segment v[0..n). */
static double boundary_distance(const lc_vec2 *v, int n, lc_vec2 p)
{
    double best = INFINITY;
    for (int i = 0; i < edge_count(n); i++)
        best = fmin(best, lc_segment_distance(p, v[i], v[(i + 1) % n], NULL));
    return best;
}

/* How deep the convex foot[0..nf) and the world polygon v[0..n) overlap:
 * the deepest vertex of either inside the other, at least 1e-9; 0 when
 * they do not. */
static double overlap_depth(const lc_vec2 *foot, int nf, const lc_vec2 *v, int n)
{
    double depth = 0.0;
    bool meet = false;
    for (int i = 0; i < nf; i++)
        if (ring_inside(v, n, foot[i])) {
            meet = true;
            depth = fmax(depth, boundary_distance(v, n, foot[i]));
        }
    for (int i = 0; i < n; i++)
        if (lc_convex_contains(foot, nf, v[i], 0.0)) {
            meet = true;
            depth = fmax(depth, boundary_distance(foot, nf, v[i]));
        }
    for (int i = 0; !meet && i < nf; i++)
        for (int k = 0; k < edge_count(n); k++)
            meet = meet || segments_distance2(foot[i], foot[(i + 1) % nf], v[k], v[(k + 1) % n]) == 0;
    return meet ? fmax(depth, 1e-9) : 0.0;
}

/*
 * Per world polygon: skipped when its box lies farther than the best so
 * far; the overlap tests only when the boxes meet; else every pair of
 * edges, squared, one root at the end (the simulator asks this after
 * every 1 ms substep).
 */
double lc_world_polygon_distance(const lc_world *w, const lc_vec2 *foot, int nf)
{
    if (nf < 3)
        return NAN;
    box fb = box_of(foot, nf);
    double best2 = INFINITY, depth = 0.0;
    for (int j = 0; j < w->polys.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&w->polys, j, &n);
        double gap = box_gap(fb, box_of(v, n));
        if (gap > 0 && gap * gap >= best2)
            continue;
        double d = gap > 0 ? 0.0 : overlap_depth(foot, nf, v, n);
        if (d > 0) {
            depth = fmax(depth, d);
            continue;
        }
        for (int i = 0; i < nf; i++)
            for (int k = 0; k < edge_count(n); k++)
                best2 = fmin(best2, segments_distance2(foot[i], foot[(i + 1) % nf], v[k],
                                                       v[(k + 1) % n]));
    }
    return depth > 0 ? -depth : sqrt(best2);
}
