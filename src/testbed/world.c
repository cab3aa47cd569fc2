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

bool lc_world_inside(const lc_world *w, lc_vec2 p)
{
    for (int j = 0; j < w->polys.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&w->polys, j, &n);
        if (n < 3)
            continue;
        bool in = false;
        for (int i = 0, k = n - 1; i < n; k = i++)
            if ((v[i].y > p.y) != (v[k].y > p.y) &&
                p.x < (v[k].x - v[i].x) * (p.y - v[i].y) / (v[k].y - v[i].y) + v[i].x)
                in = !in;
        if (in)
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
