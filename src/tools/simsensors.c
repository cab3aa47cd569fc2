/*
 * simsensors.c - the simulated sensors of `lacuna sim` (see simsensors.h):
 * the merged schedule of their frames, ray-cast scans and points, and the
 * robot description that lists them.
 */
#include "simsensors.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static void rays_from_header(const lc_scenario_sensor *in, lc_sensor *out)
{
    *out = (lc_sensor){.beams = in->beams,
                       .fov = in->fov,
                       .range_min = in->range_min,
                       .range_max = in->range_max,
                       .rate = in->rate,
                       .noise = in->noise,
                       .mount = in->mount};
}

int lc_simsensors_init(lc_simsensors *ss, const lc_scenario_header *h)
{
    memset(ss, 0, sizeof *ss);
    const lc_scenario_sensor *list;
    int n = lc_scenario_sim_sensors(h, &list);
    for (int k = 0; k < n && k < LC_SENSORS_MAX; k++) {
        lc_simsensor *s = &ss->s[k];
        memcpy(s->name, list[k].name, sizeof s->name);
        s->kind = list[k].kind;
        rays_from_header(&list[k], &s->rays);
        s->ranges = calloc((size_t)s->rays.beams, sizeof *s->ranges);
        s->xy = s->kind == LC_FRAME_POINTS ? calloc(2 * (size_t)s->rays.beams, sizeof *s->xy)
                                           : NULL;
        ss->n = k + 1;
        if (!s->ranges || (s->kind == LC_FRAME_POINTS && !s->xy)) {
            lc_simsensors_free(ss);
            return -1;
        }
    }
    return 0;
}

void lc_simsensors_free(lc_simsensors *ss)
{
    for (int k = 0; k < ss->n; k++) {
        free(ss->s[k].ranges);
        free(ss->s[k].xy);
    }
    ss->n = 0;
}

static double stamp_of(const lc_simsensor *s) { return (double)s->next / s->rays.rate; }

int lc_simsensors_next(const lc_simsensors *ss, double *stamp)
{
    int best = 0;
    for (int k = 1; k < ss->n; k++)
        if (stamp_of(&ss->s[k]) < stamp_of(&ss->s[best]))
            best = k; /* strictly earlier: a tie keeps the sensor listed first */
    *stamp = stamp_of(&ss->s[best]);
    return best;
}

/* The returns of a ray-cast as points in the sensor frame; their count. */
static int returns_as_points(const lc_simsensor *s)
{
    int n = 0;
    for (int i = 0; i < s->rays.beams; i++) {
        double r = s->ranges[i];
        if (isnan(r))
            continue;
        double a = lc_sensor_beam_angle(&s->rays, i);
        s->xy[2 * n] = r * cos(a);
        s->xy[2 * n + 1] = r * sin(a);
        n++;
    }
    return n;
}

lc_frame lc_simsensors_frame(lc_simsensors *ss, const lc_world *w, lc_pose pose,
                             lc_sim_rng *rng)
{
    double stamp;
    lc_simsensor *s = &ss->s[lc_simsensors_next(ss, &stamp)];
    lc_world_scan(w, pose, &s->rays, rng, s->ranges);
    lc_frame f = {.kind = s->kind, .seq = ss->seq++, .stamp = stamp, .pose = pose};
    s->next++;
    if (s->name[0])
        memcpy(f.sensor, s->name, sizeof f.sensor);
    else
        f = (lc_frame){.kind = f.kind, .seq = f.seq, .stamp = stamp, .pose = pose,
                       .has_mount = true, .mount = s->rays.mount};
    if (s->kind == LC_FRAME_POINTS) {
        f.xy = s->xy;
        f.n_points = returns_as_points(s);
        return f;
    }
    f.angle_start = lc_sensor_beam_angle(&s->rays, 0);
    f.angle_step = lc_sensor_angle_step(&s->rays);
    f.range_min = s->rays.range_min;
    f.range_max = s->rays.range_max;
    f.ranges = s->ranges;
    f.n_ranges = s->rays.beams;
    return f;
}

void lc_simsensors_describe(const lc_scenario_header *h, lc_robot *robot)
{
    if (h->n_sensors <= 0)
        return;
    robot->n_sensors = h->n_sensors < LC_SENSORS_MAX ? h->n_sensors : LC_SENSORS_MAX;
    for (int k = 0; k < robot->n_sensors; k++) {
        const lc_scenario_sensor *in = &h->sensors[k];
        lc_sensor_desc *d = &robot->sensors[k];
        lc_sensor_desc_default(d, in->kind);
        memcpy(d->name, in->name, sizeof d->name);
        d->mount = in->mount;
        if (in->kind == LC_FRAME_POINTS)
            d->fov = in->fov;
    }
}
