/*
 * test_memory.c - the rolling occupancy grid (memory.h).
 *
 * References:
 * - free evidence: brute force over every cell of the window, the crossing
 *   number point-in-polygon test (the even-odd rule, as in W. R. Franklin's
 *   pnpoly) of the cell's centre against the view polygon built here from
 *   the beams on its own; equality cell by cell on random scans (fixed
 *   seeds);
 * - the cells a beam crosses: exact segment-square intersection (Liang and
 *   Barsky's parametric clipping): every cell a beam crosses well inside its
 *   neighbours' reach, with its centre between them, must be free;
 * - occupied evidence: every kept return's cell, by floor division;
 * - clearing, ageing, the moving window, stamps going back: scripted runs
 *   with the counts the rules in memory.h give.
 */
#include "testutil.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "ingest.h"
#include "memory.h"

#define MAXB 800

typedef struct scan {
    double ranges[MAXB];
    lc_frame f;
} scan;

static void make_scan(scan *s, lc_rng *rng, lc_pose pose, int n, double fov, double far)
{
    for (int i = 0; i < n; i++) {
        double u = lc_rng_uniform(rng, 0, 1);
        s->ranges[i] = u < 0.1 ? NAN : (u < 0.15 ? far + 1 : lc_rng_uniform(rng, 0.2, far));
        if (u > 0.6 && i > 0 && isfinite(s->ranges[i - 1]))
            s->ranges[i] = s->ranges[i - 1] + lc_rng_uniform(rng, -0.05, 0.05); /* surfaces */
    }
    s->f = (lc_frame){.kind = LC_FRAME_SCAN,
                      .seq = 1,
                      .stamp = 10.0,
                      .pose = pose,
                      .mount = {lc_rng_uniform(rng, -0.2, 0.2), lc_rng_uniform(rng, -0.1, 0.1),
                                lc_rng_uniform(rng, -0.5, 0.5)},
                      .angle_start = -fov / 2,
                      .angle_step = fov / n,
                      .range_min = 0.1,
                      .range_max = far,
                      .ranges = s->ranges,
                      .n_ranges = n};
}

/* The view polygon as memory.h defines it, built here independently. */
static int reference_polygon(const lc_frame *f, const lc_memory_config *cfg, lc_vec2 *out)
{
    lc_vec2 sensor = lc_pose_apply(f->pose, lc_v2(f->mount.x, f->mount.y));
    int k = 0, n = f->n_ranges;
    if (!(fabs(f->angle_step) * n >= 2.0 * LC_PI - 1e-9))
        out[k++] = sensor;
    double far = lc_min(f->range_max, cfg->reach), back = 1.5 * cfg->cell;
    /* directions as memory.c steps them: a rotation per beam, exact every
     * 64th (within 1e-14 rad of the exact angle: checked below) */
    lc_vec2 u = lc_v2(1, 0), rot = lc_unit_angle(f->angle_step);
    for (int i = 0; i < n; i++) {
        double a = f->pose.yaw + f->mount.yaw + f->angle_start + f->angle_step * i;
        u = i % 64 == 0 ? lc_unit_angle(a)
                        : lc_v2(rot.x * u.x - rot.y * u.y, rot.y * u.x + rot.x * u.y);
        assert_true(fabs(lc_wrap_angle(atan2(u.y, u.x) - a)) < 1e-13);
        double r = f->ranges[i];
        double free = isfinite(r) && r >= f->range_min && r <= f->range_max ? r - back : far;
        free = lc_max(0.0, lc_min(free, cfg->reach));
        out[k++] = lc_add(sensor, lc_scale(u, free));
    }
    return k;
}

/* Crossing number (even-odd) with the half-open rule in y. */
static bool inside(const lc_vec2 *v, int n, lc_vec2 p)
{
    bool in = false;
    for (int a = 0; a < n; a++) {
        lc_vec2 s = v[a], t = v[a + 1 == n ? 0 : a + 1];
        double lo = lc_min(s.y, t.y), hi = lc_max(s.y, t.y);
        if (s.y == t.y || !(p.y >= lo && p.y < hi))
            continue;
        double slope = (t.x - s.x) / (t.y - s.y); /* memory.c: one slope per edge */
        double x = s.x + (p.y - s.y) * slope;
        if (x <= p.x)
            in = !in;
    }
    return in;
}

/* Liang-Barsky: does segment [a, b] meet the closed square? */
static bool segment_meets_square(lc_vec2 a, lc_vec2 b, double x0, double y0, double side)
{
    double t0 = 0, t1 = 1, d[2] = {b.x - a.x, b.y - a.y};
    double lo[2] = {x0 - a.x, y0 - a.y}, hi[2] = {x0 + side - a.x, y0 + side - a.y};
    for (int k = 0; k < 2; k++) {
        if (d[k] == 0) {
            if (lo[k] > 0 || hi[k] < 0)
                return false;
            continue;
        }
        double ta = lo[k] / d[k], tb = hi[k] / d[k];
        if (ta > tb) {
            double t = ta;
            ta = tb;
            tb = t;
        }
        t0 = lc_max(t0, ta);
        t1 = lc_min(t1, tb);
        if (t0 > t1)
            return false;
    }
    return true;
}

/* The window's cells that hold a kept return (floor division), as flags. */
static void hit_cells(const lc_memory_window *w, const lc_cloud *cloud, unsigned char *hit)
{
    memset(hit, 0, (size_t)w->n * (size_t)w->n);
    for (int p = 0; p < cloud->n; p++) {
        long i = (long)floor(cloud->world[p].x / w->cell) - w->i0;
        long j = (long)floor(cloud->world[p].y / w->cell) - w->j0;
        if (i >= 0 && i < w->n && j >= 0 && j < w->n)
            hit[j * w->n + i] = 1;
    }
}

static lc_memory *fresh(lc_memory_config *cfg)
{
    lc_memory_config_default(cfg);
    cfg->size = 12;
    cfg->reach = 5;
    lc_memory *m = lc_memory_new(cfg, NULL);
    assert_non_null(m);
    return m;
}

static void ingest(const lc_frame *f, lc_cloud *cloud, double body)
{
    lc_ingest_config ic;
    lc_ingest_config_default(&ic);
    ic.self_radius = body;
    assert_true(lc_ingest(f, &ic, cloud) >= 0);
}

static void test_config(void **state)
{
    (void)state;
    lc_memory_config c;
    lc_memory_config_default(&c);
    const char *field = "x";
    assert_int_equal(lc_memory_config_check(&c, &field), 0);
    assert_null(field);
    assert_int_equal(lc_memory_side(&c), 400);
    /* the default grid: 400 x 400 cells of 7 bytes, well under 16 MiB */
    assert_int_equal(lc_memory_grid_bytes(&c), 400u * 400u * 7u);
    struct {
        double *x;
        double v;
        const char *name;
    } bad[] = {{&c.cell, 0.001, "cell"}, {&c.cell, NAN, "cell"},       {&c.size, 0.1, "size"},
               {&c.size, 1e6, "size"},   {&c.reach, -1, "reach"},      {&c.reach, INFINITY, "reach"},
               {&c.hold_occupied, 0, "hold_occupied"}, {&c.hold_free, 1e4, "hold_free"}};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        lc_memory_config b = c;
        *(bad[i].x == &c.cell ? &b.cell : bad[i].x == &c.size ? &b.size
          : bad[i].x == &c.reach ? &b.reach : bad[i].x == &c.hold_occupied ? &b.hold_occupied
          : &b.hold_free) = bad[i].v;
        assert_int_equal(lc_memory_config_check(&b, &field), -1);
        assert_string_equal(field, bad[i].name);
        assert_null(lc_memory_new(&b, NULL));
    }
    lc_memory_config b = c;
    b.clear_frames = 0;
    assert_int_equal(lc_memory_config_check(&b, &field), -1);
    assert_string_equal(field, "clear_frames");
}

/* Free, occupied and the body, cell by cell against the brute force. */
static void test_against_brute_force(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 2024);
    static scan s;
    static lc_vec2 poly[MAXB + 1];
    lc_cloud cloud = {0};
    long cells = 0, free_cells = 0;
    for (int trial = 0; trial < 30; trial++) {
        lc_memory_config cfg;
        lc_memory *m = fresh(&cfg);
        int n = 10 + (int)lc_rng_uniform(&rng, 0, MAXB - 10);
        double fov = trial % 5 == 0 ? 2 * LC_PI : lc_rng_uniform(&rng, 0.5, 2 * LC_PI);
        lc_pose pose = {lc_rng_uniform(&rng, -50, 50), lc_rng_uniform(&rng, -50, 50),
                        lc_rng_uniform(&rng, -4, 4)};
        make_scan(&s, &rng, pose, n, fov, lc_rng_uniform(&rng, 2, 8));
        double body = trial % 3 ? 0.3 : 0.0;
        ingest(&s.f, &cloud, body);
        assert_int_equal(lc_memory_update(m, &s.f, &cloud, body), 0);
        int nv = reference_polygon(&s.f, &cfg, poly);
        lc_memory_window w = lc_memory_get_window(m);
        assert_int_equal(w.n, 240);
        static unsigned char hits[240 * 240];
        hit_cells(&w, &cloud, hits);
        for (long j = w.j0; j < w.j0 + w.n; j++)
            for (long i = w.i0; i < w.i0 + w.n; i++) {
                lc_vec2 c = lc_memory_cell_centre(m, i, j);
                bool hit = hits[(j - w.j0) * w.n + (i - w.i0)];
                bool in_body = body > 0 && lc_dist(c, lc_v2(pose.x, pose.y)) <= body;
                bool seen = inside(poly, nv, c);
                lc_cell_state want = in_body ? LC_CELL_FREE
                                     : hit   ? LC_CELL_OCCUPIED
                                     : seen  ? LC_CELL_FREE
                                             : LC_CELL_UNKNOWN;
                assert_int_equal(lc_memory_cell(m, i, j), want);
                assert_int_equal(lc_memory_touched_now(m, i, j), in_body || hit || seen);
                cells++;
                free_cells += want == LC_CELL_FREE;
            }
        lc_memory_free(m);
    }
    assert_true(free_cells > cells / 20); /* the test looked at real views */
    lc_cloud_free(&cloud);
}

/*
 * A polygon footprint's body (lc_memory_mark_body): a 1.0 x 0.5 m
 * rectangle turned by 0.6 rad, a return under it (no self-hit filter: the
 * frame's cell holds it), and the rest of the view. Cells whose centres the
 * rectangle covers (crossing number, as above) are free and seen now, the
 * occupied one too; cells whose centres it does not cover are what the
 * frame made them. Too few vertices or a non-finite one: nothing changes.
 */
static void test_polygon_body(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory *m = fresh(&cfg);
    static double ranges[3] = {0.35, NAN, 3.0};
    lc_pose pose = {2.03, -1.01, 0.6};
    lc_frame f = {.kind = LC_FRAME_SCAN, .seq = 1, .stamp = 5.0, .pose = pose,
                  .angle_start = -0.1, .angle_step = 0.1, .range_min = 0.1, .range_max = 4,
                  .ranges = ranges, .n_ranges = 3};
    lc_cloud cloud = {0};
    ingest(&f, &cloud, 0.0);
    assert_int_equal(cloud.n, 2);
    assert_int_equal(lc_memory_update(m, &f, &cloud, 0.0), 0);
    const lc_vec2 rect[4] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
    lc_vec2 body[4];
    for (int i = 0; i < 4; i++)
        body[i] = lc_pose_apply(pose, rect[i]);
    lc_vec2 under = cloud.world[0]; /* 0.35 m ahead: under the body */
    long ui, uj;
    lc_memory_cell_of(m, under, &ui, &uj);
    assert_int_equal(lc_memory_cell(m, ui, uj), LC_CELL_OCCUPIED);
    lc_memory_window w = lc_memory_get_window(m);
    static lc_cell_state before[240 * 240];
    for (long j = w.j0; j < w.j0 + w.n; j++)
        for (long i = w.i0; i < w.i0 + w.n; i++)
            before[(j - w.j0) * w.n + (i - w.i0)] = lc_memory_cell(m, i, j);
    lc_vec2 bad[3] = {{0, 0}, {1, NAN}, {0, 1}};
    lc_memory_mark_body(m, body, 2);
    lc_memory_mark_body(m, bad, 3);
    assert_int_equal(lc_memory_cell(m, ui, uj), LC_CELL_OCCUPIED);
    lc_memory_mark_body(m, body, 4);
    int covered = 0;
    for (long j = w.j0; j < w.j0 + w.n; j++)
        for (long i = w.i0; i < w.i0 + w.n; i++) {
            lc_vec2 c = lc_memory_cell_centre(m, i, j);
            lc_cell_state st = lc_memory_cell(m, i, j);
            if (inside(body, 4, c)) {
                covered++;
                assert_int_equal(st, LC_CELL_FREE);
                assert_true(lc_memory_touched_now(m, i, j));
            } else {
                assert_int_equal(st, before[(j - w.j0) * w.n + (i - w.i0)]);
            }
        }
    /* 0.5 m^2 of 5 cm cells: about 200 centres */
    assert_true(covered > 180 && covered < 220);
    assert_int_equal(lc_memory_cell(m, ui, uj), LC_CELL_FREE);
    lc_memory_free(m);
    lc_cloud_free(&cloud);
}

/* Every cell a beam crosses well inside its neighbours' reach is free
 * (exact segment-square intersection). */
static void test_beam_cells(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 77);
    static scan s;
    lc_cloud cloud = {0};
    long checked = 0;
    for (int trial = 0; trial < 20; trial++) {
        lc_memory_config cfg;
        lc_memory *m = fresh(&cfg);
        lc_pose pose = {lc_rng_uniform(&rng, -5, 5), lc_rng_uniform(&rng, -5, 5), 0.3 * trial};
        int n = 360 + 20 * trial;
        make_scan(&s, &rng, pose, n, 1.5 * LC_PI, 6);
        ingest(&s.f, &cloud, 0);
        lc_memory_update(m, &s.f, &cloud, 0);
        lc_vec2 sensor = lc_pose_apply(pose, lc_v2(s.f.mount.x, s.f.mount.y));
        double yaw = pose.yaw + s.f.mount.yaw, step = s.f.angle_step, c = cfg.cell;
        for (int i = 1; i + 1 < n; i += 7) {
            double reach = INFINITY;
            for (int k = i - 1; k <= i + 1; k++) {
                double r = s.ranges[k];
                double fr = isfinite(r) && r >= 0.1 && r <= 6 ? r - 1.5 * c : lc_min(6, cfg.reach);
                reach = lc_min(reach, lc_min(fr, cfg.reach));
            }
            double d = reach * cos(step) - c * sqrt(2.0);
            if (!(d > 0))
                continue;
            double a = yaw + s.f.angle_start + step * i;
            lc_vec2 end = lc_add(sensor, lc_scale(lc_unit_angle(a), d));
            lc_memory_window w = lc_memory_get_window(m);
            static unsigned char hits[240 * 240];
            hit_cells(&w, &cloud, hits);
            /* the cells of the segment's bounding box, one more each side */
            long ia = (long)floor(lc_min(sensor.x, end.x) / c) - 1;
            long ib = (long)floor(lc_max(sensor.x, end.x) / c) + 1;
            long ja = (long)floor(lc_min(sensor.y, end.y) / c) - 1;
            long jb = (long)floor(lc_max(sensor.y, end.y) / c) + 1;
            for (long jj = ja; jj <= jb; jj++)
                for (long ii = ia; ii <= ib; ii++) {
                    if (!segment_meets_square(sensor, end, ii * c, jj * c, c))
                        continue;
                    lc_vec2 cc = lc_memory_cell_centre(m, ii, jj);
                    double b = atan2(cc.y - sensor.y, cc.x - sensor.x);
                    double off = lc_wrap_angle(b - a);
                    if (!(fabs(off) < step) || lc_dist(cc, sensor) > d)
                        continue;
                    assert_true(ii >= w.i0 && ii < w.i0 + w.n && jj >= w.j0 && jj < w.j0 + w.n);
                    if (!hits[(jj - w.j0) * w.n + (ii - w.i0)])
                        assert_int_equal(lc_memory_cell(m, ii, jj), LC_CELL_FREE);
                    checked++;
                }
        }
        lc_memory_free(m);
    }
    assert_true(checked > 1000);
    lc_cloud_free(&cloud);
}

/* A full turn of 720 beams at a wall ring of the given radius about pose
 * (radii like 2.02 keep the returns off cell borders). */
static lc_frame ring_scan(double *ranges, lc_pose pose, double stamp, double radius)
{
    for (int i = 0; i < 720; i++)
        ranges[i] = radius;
    return (lc_frame){.kind = LC_FRAME_SCAN, .seq = 1, .stamp = stamp, .pose = pose,
                      .angle_start = -LC_PI, .angle_step = 2 * LC_PI / 720, .range_min = 0.05,
                      .range_max = 10, .ranges = ranges, .n_ranges = 720};
}

/* A return stays until clear_frames frames see through its cell. */
static void test_clearing(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory *m = fresh(&cfg);
    static double ranges[720];
    lc_cloud cloud = {0};
    lc_pose pose = {0, 0, 0};
    lc_frame f = ring_scan(ranges, pose, 1.0, 2.02);
    ingest(&f, &cloud, 0.3);
    lc_memory_update(m, &f, &cloud, 0.3);
    lc_vec2 wall = lc_v2(2.02, 0.02);
    assert_int_equal(lc_memory_state(m, wall), LC_CELL_OCCUPIED);
    assert_int_equal(lc_memory_state(m, lc_v2(1.0, 0)), LC_CELL_FREE);
    assert_int_equal(lc_memory_state(m, lc_v2(2.5, 0)), LC_CELL_UNKNOWN);
    for (int k = 1; k <= cfg.clear_frames; k++) {
        f = ring_scan(ranges, pose, 1.0 + 0.05 * k, 4.02); /* the ring was moved away */
        ingest(&f, &cloud, 0.3);
        lc_memory_update(m, &f, &cloud, 0.3);
        assert_int_equal(lc_memory_state(m, wall),
                         k < cfg.clear_frames ? LC_CELL_OCCUPIED : LC_CELL_FREE);
    }
    assert_int_equal(lc_memory_state(m, lc_v2(4.02, 0.02)), LC_CELL_OCCUPIED);
    lc_memory_free(m);
    lc_cloud_free(&cloud);
}

/* A memory (12 m, occupied cells held 5 s, free ones hold_free s) that has
 * seen a ring of radius 2.02 m round (0, 0) at t = 100 s. */
static lc_memory *ringed(lc_memory_config *cfg, double hold_free, double *ranges,
                         lc_cloud *cloud)
{
    lc_memory_config_default(cfg);
    cfg->size = 12;
    cfg->hold_occupied = 5;
    cfg->hold_free = hold_free;
    lc_memory *m = lc_memory_new(cfg, NULL);
    assert_non_null(m);
    lc_frame f = ring_scan(ranges, (lc_pose){0, 0, 0}, 100.0, 2.02);
    ingest(&f, cloud, 0.3);
    lc_memory_update(m, &f, cloud, 0.3);
    return m;
}

/* A frame that looks only to the east, from (0, 3): a 10 degree scan with
 * no returns (r[10]); the caller sets its stamp. */
static lc_frame east_glance(double *r)
{
    for (int i = 0; i < 10; i++)
        r[i] = NAN;
    return (lc_frame){.kind = LC_FRAME_SCAN, .pose = {0, 3, 0}, .angle_start = -0.1,
                      .angle_step = 0.02, .range_min = 0.05, .range_max = 1, .ranges = r,
                      .n_ranges = 10};
}

/* Evidence nobody refreshes is forgotten after its hold time. */
static void test_ageing(void **state)
{
    (void)state;
    lc_memory_config cfg;
    static double ranges[720], r2[10];
    lc_cloud cloud = {0}, none = {0};
    lc_memory *m = ringed(&cfg, 3, ranges, &cloud);
    lc_frame g = east_glance(r2);
    double t[] = {102.9, 103.001, 104.999, 105.0, 105.002};
    lc_cell_state fr[] = {LC_CELL_FREE, LC_CELL_UNKNOWN, LC_CELL_UNKNOWN, LC_CELL_UNKNOWN,
                          LC_CELL_UNKNOWN};
    lc_cell_state oc[] = {LC_CELL_OCCUPIED, LC_CELL_OCCUPIED, LC_CELL_OCCUPIED, LC_CELL_OCCUPIED,
                          LC_CELL_UNKNOWN};
    for (int k = 0; k < 5; k++) {
        g.stamp = t[k];
        ingest(&g, &none, 0.0);
        lc_memory_update(m, &g, &none, 0.0);
        assert_int_equal(lc_memory_state(m, lc_v2(-1.0, 0.0)), fr[k]);
        assert_int_equal(lc_memory_state(m, lc_v2(-2.02, 0.02)), oc[k]);
    }
    lc_memory_free(m);
    lc_cloud_free(&cloud);
    lc_cloud_free(&none);
}

/*
 * lc_memory_keep_near: an occupied cell near a robot that stands out of
 * every sensor's view of it is not forgotten while it stays near; a far
 * one is (hold_occupied 5 s, as test_ageing); the kept cell is not "seen
 * now", a sensor that sees through it still clears it, and a forgotten
 * cell is not brought back.
 */
static void test_keep_near(void **state)
{
    (void)state;
    lc_memory_config cfg;
    static double ranges[720], r2[10];
    lc_cloud cloud = {0}, none = {0};
    lc_memory *m = ringed(&cfg, 90, ranges, &cloud);
    lc_frame f, g = east_glance(r2);
    lc_vec2 west = lc_v2(-2.02, 0.02), east = lc_v2(2.02, 0.02), robot = lc_v2(-1.5, 0);
    long wi, wj;
    lc_memory_cell_of(m, west, &wi, &wj);
    for (int k = 1; k <= 40; k++) { /* 20 s, four times the hold */
        g.stamp = 100.0 + 0.5 * k;
        lc_memory_update(m, &g, &none, 0.0);
        lc_memory_keep_near(m, robot, 0.8);
        assert_int_equal(lc_memory_state(m, west), LC_CELL_OCCUPIED);
        assert_false(lc_memory_touched_now(m, wi, wj));
        assert_int_equal(lc_memory_state(m, east), k * 0.5 <= 5.0 ? LC_CELL_OCCUPIED
                                                                  : LC_CELL_UNKNOWN);
    }
    /* seen through clear_frames times: free, keep or not */
    for (int k = 1; k <= cfg.clear_frames; k++) {
        f = ring_scan(ranges, (lc_pose){0, 0, 0}, 120.0 + 0.05 * k, 4.02);
        ingest(&f, &cloud, 0.3);
        lc_memory_update(m, &f, &cloud, 0.3);
        lc_memory_keep_near(m, robot, 0.8);
    }
    assert_int_equal(lc_memory_state(m, west), LC_CELL_FREE);
    /* the ring at 4.02 m: left alone for longer than the hold, it is
     * forgotten, and a robot coming near later does not bring it back */
    lc_vec2 far_west = lc_v2(-4.02, 0.02);
    assert_int_equal(lc_memory_state(m, far_west), LC_CELL_OCCUPIED);
    g.stamp = 126.0;
    lc_memory_update(m, &g, &none, 0.0);
    lc_memory_keep_near(m, lc_v2(-3.6, 0), 0.8);
    assert_int_equal(lc_memory_state(m, far_west), LC_CELL_UNKNOWN);
    /* degenerate input changes nothing */
    lc_memory_keep_near(m, lc_v2(NAN, 0), 0.8);
    lc_memory_keep_near(m, robot, -1.0);
    lc_memory_keep_near(m, robot, INFINITY);
    lc_memory_free(m);
    lc_cloud_free(&cloud);
}

/* The window follows the robot (memory.h): centred on it first, then moved
 * by as little as brings it back to a quarter side off the centre, so that
 * up to three quarters of a side behind it is kept; what comes in is
 * unknown (no ghost of the cells that left the torus). */
static void test_window_follows(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory *m = fresh(&cfg); /* 12 m, 240 cells: a quarter side is 60 cells, 3 m */
    static double ranges[720];
    lc_cloud cloud = {0};
    lc_frame f = ring_scan(ranges, (lc_pose){0, 0, 0}, 1.0, 2.02);
    ingest(&f, &cloud, 0.3);
    lc_memory_update(m, &f, &cloud, 0.3);
    lc_memory_window w0 = lc_memory_get_window(m);
    assert_int_equal(w0.i0, -120);
    assert_int_equal(w0.j0, -120);
    /* a short move (under a quarter side): the window stays */
    static double none_r[4] = {NAN, NAN, NAN, NAN};
    lc_frame g = {.kind = LC_FRAME_SCAN, .stamp = 1.1, .pose = {2.9, 0, 0}, .angle_start = 0,
                  .angle_step = 0.001, .range_min = 0.05, .range_max = 0.1, .ranges = none_r,
                  .n_ranges = 4};
    lc_cloud empty = {0};
    ingest(&g, &empty, 0);
    lc_memory_update(m, &g, &empty, 0);
    assert_int_equal(lc_memory_get_window(m).i0, -120);
    /* 5 m east (cell 100): moved 40 cells, the robot a quarter side off
     * the centre again; the ring 2 m behind it is still there */
    g.pose.x = 5.0;
    g.stamp = 1.2;
    lc_memory_update(m, &g, &empty, 0);
    lc_memory_window w1 = lc_memory_get_window(m);
    assert_int_equal(w1.i0, -80);
    assert_int_equal(w1.j0, -120); /* no move along y */
    assert_int_equal(lc_memory_state(m, lc_v2(-2.02, 0.02)), LC_CELL_OCCUPIED); /* behind: kept */
    assert_int_equal(lc_memory_state(m, lc_v2(2.02, 0.02)), LC_CELL_OCCUPIED);
    assert_int_equal(lc_memory_state(m, lc_v2(1.0, 0.5)), LC_CELL_FREE);
    /* the cells that came in on the east hold nothing of the west ones
     * that shared their slots */
    for (long i = w1.i0 + w1.n - 40; i < w1.i0 + w1.n; i++)
        for (long j = w1.j0; j < w1.j0 + w1.n; j++)
            assert_int_equal(lc_memory_cell(m, i, j), LC_CELL_UNKNOWN);
    /* 8.5 m east (cell 170): moved 70 cells more; the west of the ring
     * has left the window, its east stays */
    g.pose.x = 8.5;
    g.stamp = 1.25;
    lc_memory_update(m, &g, &empty, 0);
    lc_memory_window w2 = lc_memory_get_window(m);
    assert_int_equal(w2.i0, -10);
    assert_int_equal(lc_memory_state(m, lc_v2(-2.02, 0.02)), LC_CELL_UNKNOWN); /* left behind */
    assert_int_equal(lc_memory_state(m, lc_v2(2.02, 0.02)), LC_CELL_OCCUPIED);
    assert_int_equal(lc_memory_state(m, lc_v2(1.0, 0.5)), LC_CELL_FREE);
    for (long i = w2.i0 + w2.n - 70; i < w2.i0 + w2.n; i++)
        for (long j = w2.j0; j < w2.j0 + w2.n; j++)
            assert_int_equal(lc_memory_cell(m, i, j), LC_CELL_UNKNOWN);
    /* far away: everything forgotten */
    g.pose.x = 500;
    g.stamp = 1.3;
    lc_memory_update(m, &g, &empty, 0);
    lc_memory_stats st;
    lc_memory_get_stats(m, &st);
    assert_int_equal(st.occupied, 0);
    lc_memory_free(m);
    lc_cloud_free(&cloud);
    lc_cloud_free(&empty);
}

/* The occupied cells met by a box, by the whole-window iterator and the
 * box's own, on random scans from poses that move the window (so the
 * stored rows wrap) and random boxes, some off the window: the box's
 * iterator gives exactly the returns whose cell (by floor division) meets
 * the box. */
typedef struct box_ref {
    lc_vec2 lo, hi, p[4096];
    double c;
    int n;
} box_ref;

static bool cell_meets(const box_ref *b, lc_vec2 p)
{
    double cx = floor(p.x / b->c) * b->c, cy = floor(p.y / b->c) * b->c;
    return cx <= b->hi.x && cx + b->c >= b->lo.x && cy <= b->hi.y && cy + b->c >= b->lo.y;
}

static int ref_one(void *data, lc_vec2 p)
{
    box_ref *b = data;
    if (cell_meets(b, p) && b->n < 4096)
        b->p[b->n++] = p;
    return 0;
}

static int got_one(void *data, lc_vec2 p)
{
    box_ref *b = data;
    assert_true(b->n < 4096);
    b->p[b->n++] = p;
    return 0;
}

static int by_yx(const void *a, const void *b)
{
    const lc_vec2 *p = a, *q = b;
    return p->y < q->y ? -1 : p->y > q->y ? 1 : p->x < q->x ? -1 : p->x > q->x ? 1 : 0;
}

static void test_occupied_in_box(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory *m = fresh(&cfg);
    static scan s;
    static box_ref want, got;
    lc_cloud cloud = {0};
    lc_rng rng = {91};
    lc_pose pose = {0, 0, 0};
    for (int frame = 0; frame < 12; frame++) {
        make_scan(&s, &rng, pose, 360, 2 * LC_PI, 5.0);
        s.f.stamp = 10.0 + 0.1 * frame;
        ingest(&s.f, &cloud, 0.3);
        assert_int_equal(lc_memory_update(m, &s.f, &cloud, 0.3), 0);
        for (int t = 0; t < 40; t++) {
            lc_vec2 a = {pose.x + lc_rng_uniform(&rng, -9, 9), pose.y + lc_rng_uniform(&rng, -9, 9)};
            lc_vec2 b = {a.x + lc_rng_uniform(&rng, 0, 3), a.y + lc_rng_uniform(&rng, 0, 3)};
            want = (box_ref){.lo = a, .hi = b, .c = cfg.cell};
            got = want;
            lc_memory_each_occupied(m, ref_one, &want);
            lc_memory_each_occupied_in(m, a, b, got_one, &got);
            assert_int_equal(got.n, want.n);
            qsort(want.p, (size_t)want.n, sizeof want.p[0], by_yx);
            qsort(got.p, (size_t)got.n, sizeof got.p[0], by_yx);
            for (int i = 0; i < got.n; i++) {
                assert_true(got.p[i].x == want.p[i].x && got.p[i].y == want.p[i].y);
                assert_true(cell_meets(&got, got.p[i]));
            }
        }
        /* an empty box (hi below lo) and one far off meet nothing */
        got = (box_ref){.c = cfg.cell};
        lc_memory_each_occupied_in(m, lc_v2(1, 1), lc_v2(0, 0), got_one, &got);
        lc_memory_each_occupied_in(m, lc_v2(500, 500), lc_v2(501, 501), got_one, &got);
        assert_int_equal(got.n, 0);
        pose.x += 1.7; /* past a quarter side in a few frames: the window moves */
        pose.y -= 0.9;
    }
    lc_memory_free(m);
    lc_cloud_free(&cloud);
}

/* A clock that goes back more than a second, or jumps ahead by more than
 * LC_MEMORY_JUMP, starts the memory over; another sensor's frame a little
 * older does not. */
static void test_stamps(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory *m = fresh(&cfg);
    static double ranges[720];
    lc_cloud cloud = {0};
    double stamps[] = {50.0, 49.5, 48.4, 48.5, 48.5 + LC_MEMORY_JUMP + 1};
    long clears[] = {0, 0, 1, 1, 2};
    for (int k = 0; k < 5; k++) {
        lc_frame f = ring_scan(ranges, (lc_pose){0, 0, 0}, stamps[k], 2.02);
        ingest(&f, &cloud, 0.3);
        lc_memory_update(m, &f, &cloud, 0.3);
        lc_memory_stats st;
        lc_memory_get_stats(m, &st);
        assert_int_equal(st.clears, clears[k]);
        assert_int_equal(lc_memory_state(m, lc_v2(2.02, 0.02)), LC_CELL_OCCUPIED);
    }
    /* a frame at the same stamp still counts as a new one */
    lc_frame f = ring_scan(ranges, (lc_pose){0, 0, 0}, stamps[4], 2.02);
    lc_memory_update(m, &f, &cloud, 0.3);
    long i, j;
    lc_memory_cell_of(m, lc_v2(1, 0), &i, &j);
    assert_true(lc_memory_touched_now(m, i, j));
    /* NaN pose or stamp: nothing happens */
    f.pose.x = NAN;
    assert_int_equal(lc_memory_update(m, &f, &cloud, 0.3), 0);
    lc_memory_free(m);
    lc_cloud_free(&cloud);
}

/* A points frame: free up to the nearest point of each bearing bin. */
static void test_points(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory *m = fresh(&cfg);
    /* a row of points 2.02 m ahead, y from -0.48 to 0.52 (sensor frame) */
    double xy[2 * 21];
    for (int k = 0; k < 21; k++) {
        xy[2 * k] = 2.02;
        xy[2 * k + 1] = -0.48 + 0.05 * k;
    }
    lc_frame f = {.kind = LC_FRAME_POINTS, .stamp = 3, .pose = {1, 1, LC_PI / 2}, .xy = xy,
                  .n_points = 21};
    lc_cloud cloud = {0};
    ingest(&f, &cloud, 0);
    assert_int_equal(lc_memory_update(m, &f, &cloud, 0), 0);
    /* world: the row is at y = 3.02, x from 0.48 to 1.48 */
    assert_int_equal(lc_memory_state(m, lc_v2(1.0, 2.0)), LC_CELL_FREE);
    assert_int_equal(lc_memory_state(m, lc_v2(1.03, 3.03)), LC_CELL_OCCUPIED);
    assert_int_equal(lc_memory_state(m, lc_v2(1.0, 3.5)), LC_CELL_UNKNOWN);
    assert_int_equal(lc_memory_state(m, lc_v2(1.0, 0.0)), LC_CELL_UNKNOWN); /* behind */
    assert_int_equal(lc_memory_state(m, lc_v2(2.5, 2.0)), LC_CELL_UNKNOWN); /* no point there */
    lc_memory_free(m);
    lc_cloud_free(&cloud);
}

/* Same frames, same memory; a warm update allocates nothing; out of
 * memory leaves the memory as it was. */
static void test_determinism_and_allocation(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory_config_default(&cfg);
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_memory *a = lc_memory_new(&cfg, &ca.alloc), *b = lc_memory_new(&cfg, NULL);
    lc_rng rng;
    lc_rng_seed(&rng, 5);
    static scan s;
    lc_cloud cloud = {0};
    long calls = 0;
    for (int k = 0; k < 30; k++) {
        lc_pose pose = {0.2 * k, 0.1 * k, 0.05 * k};
        make_scan(&s, &rng, pose, 541, 1.5 * LC_PI, 8);
        s.f.stamp = 0.05 * k;
        ingest(&s.f, &cloud, 0.3);
        if (k == 10)
            calls = ca.calls;
        assert_int_equal(lc_memory_update(a, &s.f, &cloud, 0.3), 0);
        assert_int_equal(lc_memory_update(b, &s.f, &cloud, 0.3), 0);
    }
    /* 541 beams of at most 8 m: the scratch is warm after ten frames */
    assert_int_equal(ca.calls, calls);
    lc_memory_stats sa, sb;
    lc_memory_get_stats(a, &sa);
    lc_memory_get_stats(b, &sb);
    assert_true(sa.occupied > 100 && sa.free > 1000);
    assert_int_equal(sa.occupied, sb.occupied);
    assert_int_equal(sa.free, sb.free);
    lc_memory_window w = lc_memory_get_window(a);
    for (long j = w.j0; j < w.j0 + w.n; j++)
        for (long i = w.i0; i < w.i0 + w.n; i++)
            assert_int_equal(lc_memory_cell(a, i, j), lc_memory_cell(b, i, j));
    assert_true(sa.bytes < 16u << 20);
    lc_memory_free(a);
    lc_memory_free(b);
    assert_int_equal(ca.live, 0);
    lc_cloud_free(&cloud);
}

static void *refuse_after(void *data, void *p, size_t n)
{
    long *left = data;
    if (n == 0) {
        free(p);
        return NULL;
    }
    if (*left <= 0)
        return NULL;
    (*left)--;
    return realloc(p, n);
}

static void test_out_of_memory(void **state)
{
    (void)state;
    lc_memory_config cfg;
    lc_memory_config_default(&cfg);
    cfg.size = 6;
    for (long budget = 0; budget < 8; budget++) {
        long left = budget;
        lc_alloc al = {refuse_after, &left};
        lc_memory *m = lc_memory_new(&cfg, &al);
        if (!m)
            continue; /* refused while creating: nothing leaked (checked by ASan) */
        static double ranges[720];
        lc_cloud cloud = {0};
        lc_frame f = ring_scan(ranges, (lc_pose){0, 0, 0}, 1.0, 2.02);
        ingest(&f, &cloud, 0.3);
        int rc = lc_memory_update(m, &f, &cloud, 0.3);
        lc_memory_stats st;
        lc_memory_get_stats(m, &st);
        if (rc < 0) {
            assert_int_equal(st.updates, 0);
            assert_int_equal(st.free + st.occupied, 0);
        } else {
            assert_true(st.occupied > 0);
        }
        lc_memory_free(m);
        lc_cloud_free(&cloud);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_config),
        cmocka_unit_test(test_against_brute_force),
        cmocka_unit_test(test_polygon_body),
        cmocka_unit_test(test_beam_cells),
        cmocka_unit_test(test_clearing),
        cmocka_unit_test(test_ageing),
        cmocka_unit_test(test_keep_near),
        cmocka_unit_test(test_window_follows),
        cmocka_unit_test(test_occupied_in_box),
        cmocka_unit_test(test_stamps),
        cmocka_unit_test(test_points),
        cmocka_unit_test(test_determinism_and_allocation),
        cmocka_unit_test(test_out_of_memory),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
