/*
 * ingest.c - sensor frame to world-frame obstacle points (see ingest.h).
 *
 * Order of the transforms: sensor -> robot by the mount pose, robot -> world
 * by the robot pose. Self hits are judged in the robot frame (distance from
 * the robot centre), so they do not depend on where the robot is.
 */
#include "ingest.h"

#include <string.h>

void lc_ingest_config_default(lc_ingest_config *cfg)
{
    cfg->self_radius = 0.0;
    cfg->z_min = -INFINITY;
    cfg->z_max = INFINITY;
    cfg->range_cap = 0.0;
}

void lc_cloud_init(lc_cloud *cloud, const lc_alloc *alloc)
{
    memset(cloud, 0, sizeof *cloud);
    cloud->alloc = alloc;
}

static int reserve(lc_cloud *c, int n)
{
    int cw = c->cap, cr = c->cap, cb = c->cap;
    if (LC_GROW(c->alloc, c->world, cw, n) < 0 || LC_GROW(c->alloc, c->range, cr, n) < 0 ||
        LC_GROW(c->alloc, c->bearing, cb, n) < 0)
        return LC_ERR_NO_MEMORY;
    c->cap = cw < cr ? (cw < cb ? cw : cb) : (cr < cb ? cr : cb);
    return LC_OK;
}

/* A pose as a rotation matrix and offset, so that no point pays for a cos. */
typedef struct rigid {
    double c, s, x, y;
} rigid;

static rigid rigid_of(lc_pose p) { return (rigid){cos(p.yaw), sin(p.yaw), p.x, p.y}; }

static inline lc_vec2 rigid_apply(const rigid *t, lc_vec2 p)
{
    return lc_v2(t->c * p.x - t->s * p.y + t->x, t->s * p.x + t->c * p.y + t->y);
}

/* Keeps p_sensor when it is not a self hit; returns 1 when kept. Inline: as
 * a call per beam it cost 9k of the stage's 59k instructions (1081 beams). */
static inline int keep(lc_cloud *c, const rigid *mount, const rigid *pose,
                       const lc_ingest_config *cfg, lc_vec2 p_sensor, double range, double bearing)
{
    lc_vec2 p_robot = rigid_apply(mount, p_sensor);
    if (lc_len2(p_robot) < cfg->self_radius * cfg->self_radius) {
        c->dropped_self++;
        return 0;
    }
    c->world[c->n] = rigid_apply(pose, p_robot);
    c->range[c->n] = range;
    c->bearing[c->n] = bearing;
    c->n++;
    return 1;
}

/*
 * Beam directions by rotation from one beam to the next (one sincos per
 * frame, not per beam), re-anchored every LC_INGEST_REANCHOR beams so that
 * round-off stays below 1e-14 rad.
 */
#define LC_INGEST_REANCHOR 64
static void ingest_scan(const lc_frame *f, const lc_ingest_config *cfg, lc_cloud *c)
{
    double cs = cos(f->angle_step), sn = sin(f->angle_step);
    lc_vec2 u = lc_v2(1, 0);
    rigid mount = rigid_of(f->mount), pose = rigid_of(f->pose);
    for (int i = 0; i < f->n_ranges; i++) {
        double r = f->ranges[i];
        double b = f->angle_start + f->angle_step * i;
        if (i % LC_INGEST_REANCHOR == 0)
            u = lc_unit_angle(b);
        else
            u = lc_v2(cs * u.x - sn * u.y, sn * u.x + cs * u.y);
        if (!isfinite(r) || !isfinite(b)) {
            c->dropped_invalid++;
            continue;
        }
        if (r < f->range_min || r > f->range_max) {
            c->dropped_range++;
            continue;
        }
        keep(c, &mount, &pose, cfg, lc_scale(u, r), r, b);
    }
    double fov = fabs(f->angle_step) * f->n_ranges;
    c->fov = fov > 2.0 * LC_PI || !isfinite(fov) ? 2.0 * LC_PI : fov;
    c->fov_mid = lc_wrap_angle(f->mount.yaw + f->angle_start +
                               0.5 * f->angle_step * (f->n_ranges - 1));
}

/*
 * The view of a points frame, judged from the points themselves: the largest
 * empty run of 1-degree bearing bins, when at least LC_VIEW_GAP_DEG wide, is
 * taken as unseen (a depth camera's back), the rest as the field of view.
 * No points, or no such gap: a full view.
 */
#define LC_VIEW_BINS 360
#define LC_VIEW_GAP_DEG 30
static void points_view(lc_cloud *c, double mount_yaw)
{
    unsigned char bins[LC_VIEW_BINS] = {0};
    c->fov = 2.0 * LC_PI;
    c->fov_mid = mount_yaw;
    if (c->n == 0)
        return;
    for (int i = 0; i < c->n; i++) {
        double a = lc_wrap_angle(c->bearing[i]) + LC_PI; /* [0, 2 pi] */
        int b = (int)(a * LC_VIEW_BINS / (2.0 * LC_PI));
        bins[b < LC_VIEW_BINS ? b : LC_VIEW_BINS - 1] = 1;
    }
    int best = 0, best_end = 0, run = 0;
    for (int k = 0; k < 2 * LC_VIEW_BINS; k++) {
        run = bins[k % LC_VIEW_BINS] ? 0 : run + 1;
        if (run > best && run <= LC_VIEW_BINS) {
            best = run;
            best_end = k;
        }
    }
    if (best < LC_VIEW_GAP_DEG || best >= LC_VIEW_BINS)
        return;
    double step = 2.0 * LC_PI / LC_VIEW_BINS;
    double gap_mid = (best_end - 0.5 * (best - 1)) * step + 0.5 * step - LC_PI;
    c->fov = 2.0 * LC_PI - best * step;
    c->fov_mid = lc_wrap_angle(mount_yaw + gap_mid + LC_PI);
}

static void ingest_points(const lc_frame *f, const lc_ingest_config *cfg, lc_cloud *c)
{
    rigid mount = rigid_of(f->mount), pose = rigid_of(f->pose);
    for (int i = 0; i < f->n_points; i++) {
        lc_vec2 p = lc_v2(f->xy[2 * i], f->xy[2 * i + 1]);
        double z = f->z ? f->z[i] : 0.0;
        if (!lc_vec2_finite(p) || !isfinite(z)) {
            c->dropped_invalid++;
            continue;
        }
        if (f->z && (z < cfg->z_min || z > cfg->z_max)) {
            c->dropped_height++;
            continue;
        }
        double r = lc_len(p);
        if (cfg->range_cap > 0 && r > cfg->range_cap) {
            c->dropped_range++;
            continue;
        }
        keep(c, &mount, &pose, cfg, p, r, atan2(p.y, p.x));
    }
    points_view(c, f->mount.yaw);
}

int lc_ingest(const lc_frame *frame, const lc_ingest_config *cfg, lc_cloud *cloud)
{
    int total = frame->kind == LC_FRAME_SCAN ? frame->n_ranges : frame->n_points;
    cloud->n = 0;
    cloud->dropped_invalid = cloud->dropped_range = 0;
    cloud->dropped_self = cloud->dropped_height = 0;
    cloud->ordered = frame->kind == LC_FRAME_SCAN;
    cloud->angle_step = frame->kind == LC_FRAME_SCAN ? frame->angle_step : 0.0;
    cloud->sensor_world = lc_pose_apply(frame->pose, lc_v2(frame->mount.x, frame->mount.y));
    if (total < 0)
        return LC_ERR_BAD_INPUT;
    if (reserve(cloud, total > 0 ? total : 1) < 0)
        return LC_ERR_NO_MEMORY;
    if (frame->kind == LC_FRAME_SCAN)
        ingest_scan(frame, cfg, cloud);
    else
        ingest_points(frame, cfg, cloud);
    return cloud->n;
}

void lc_cloud_free(lc_cloud *cloud)
{
    int c1 = cloud->cap, c2 = cloud->cap;
    LC_RELEASE(cloud->alloc, cloud->world, cloud->cap);
    LC_RELEASE(cloud->alloc, cloud->range, c1);
    LC_RELEASE(cloud->alloc, cloud->bearing, c2);
    cloud->n = 0;
}
