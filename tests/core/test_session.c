/*
 * test_session.c - the per-frame step as a whole: the promises (docs/INTERFACES.md) of
 * `lacuna plan` on random scenes (robot inside the region, every valid
 * return at least radius + margin away by GEOS distance, the target the
 * goal or its GEOS nearest point in the region, the braking promise along
 * the setpoint) on random scenes and along patrols through every shipped
 * scenario, no allocation once warm, determinism, too_close, the standoff
 * at a blocked waypoint, the height band. A robot with a polygon footprint
 * promises the same of its whole footprint: every valid return at least
 * the margin from the region summed with the footprint at the frame's
 * heading (GEOS: the sum of convex polygons is the hull of the sums of
 * their vertices, de Berg et al., Computational Geometry, 13.3), and, for
 * a unicycle, along its braking path (integrated here, 1 ms steps: the
 * body's distance to every return near it at each step).
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "footprint.h"
#include "geos_oracle.h"
#include "lc_config.h"
#include "scenario.h"
#include "session.h"
#include "steer.h"
#include "world.h"

static void random_world(lc_world *w, lc_rng *rng, int count)
{
    lc_world_init(w);
    for (int k = 0; k < count; k++) {
        lc_vec2 c = lc_v2(lc_rng_uniform(rng, -7, 7), lc_rng_uniform(rng, -7, 7));
        if (lc_len(c) < 1.2)
            continue;
        double a = lc_rng_uniform(rng, 0, LC_PI), l = lc_rng_uniform(rng, 0.1, 2.0);
        double t = lc_rng_uniform(rng, 0.05, 0.6);
        lc_vec2 u = lc_unit_angle(a), n = lc_perp(u);
        lc_vec2 v[4] = {lc_add(c, lc_scale(u, -l)), lc_add(c, lc_scale(u, l)),
                        lc_add(lc_add(c, lc_scale(u, l)), lc_scale(n, t)),
                        lc_add(lc_add(c, lc_scale(u, -l)), lc_scale(n, t))};
        lc_world_add(w, v, 4);
    }
}

static lc_frame scan_of(const lc_world *w, const lc_sensor *s, lc_pose pose, double *ranges,
                        lc_sim_rng *rng)
{
    lc_world_scan(w, pose, s, rng, ranges);
    return (lc_frame){.kind = LC_FRAME_SCAN, .pose = pose, .mount = s->mount,
                      .angle_start = lc_sensor_beam_angle(s, 0),
                      .angle_step = lc_sensor_angle_step(s), .range_min = s->range_min,
                      .range_max = s->range_max, .ranges = ranges, .n_ranges = s->beams};
}

/* Frame k of a closed loop: a scan at pose, stamped k dt, planned by ses. */
static void step_frame(lc_session *ses, const lc_world *w, const lc_sensor *s, lc_pose pose,
                       double *ranges, lc_sim_rng *rng, int k, double dt, lc_frame *f,
                       lc_plan_result *r)
{
    *f = scan_of(w, s, pose, ranges, rng);
    f->seq = k;
    f->stamp = k * dt;
    assert_int_equal(lc_session_step(ses, f, dt, r), 0);
}

/* The robot follows sp exactly for dt (the simulator's kinematics). */
static lc_pose follow(lc_pose pose, const lc_setpoint *sp, lc_model model, double dt)
{
    if (model == LC_MODEL_POINT) {
        lc_vec2 d = lc_rotate(lc_v2(sp->vx * dt, sp->vy * dt), pose.yaw);
        return (lc_pose){pose.x + d.x, pose.y + d.y, pose.yaw};
    }
    return fabs(sp->v) > 0 ? lc_motion_arc(pose, sp->w / sp->v, sp->v * dt)
                           : (lc_pose){pose.x, pose.y, pose.yaw + sp->w * dt};
}

/* The footprint of r at pose, world frame; its vertex count. */
static int placed(const lc_robot *r, lc_pose pose, lc_vec2 *v)
{
    return lc_robot_place_footprint(r, pose, v);
}

#if LC_HAVE_GEOS
/* Every return at least the margin from the region summed with the
 * footprint at the frame's heading (GEOS's hull of the vertex sums). */
static void check_footprint_region(const lc_robot *robot, const lc_frame *f,
                                   const lc_plan_result *r)
{
    const lc_region *rg = r->region;
    static lc_vec2 sums[64 * LC_FOOTPRINT_MAX], hull[64 * LC_FOOTPRINT_MAX];
    lc_vec2 fp[LC_FOOTPRINT_MAX];
    int nf = placed(robot, (lc_pose){0, 0, f->pose.yaw}, fp), k = 0;
    assert_true(rg->nv <= 64);
    for (int i = 0; i < rg->nv; i++)
        for (int j = 0; j < nf; j++)
            sums[k++] = lc_add(rg->v[i], fp[j]);
    double area;
    int nh = oracle_convex_hull(sums, k, hull, 64 * LC_FOOTPRINT_MAX, &area);
    for (int i = 0; i < r->cloud->n; i++) {
        double d = oracle_point_distance(hull, nh, r->cloud->world[i]);
        if (d < robot->margin - 1e-7)
            fail_msg("return (%.6f, %.6f) is %.9f m from the region's footprints",
                     r->cloud->world[i].x, r->cloud->world[i].y, d);
    }
}
#endif

/*
 * The least distance from the footprint to the returns along the braking
 * path of (v, w) from pose: held for t_r, then v falling at a_max and w
 * with it (curvature kept) or at dw_max. 1 ms steps; returns farther than
 * the path can reach are skipped.
 */
static double body_brake_gap(const lc_robot *robot, const lc_cloud *cloud, lc_pose pose,
                             double v, double w, double t_r)
{
    const double h = 1e-3;
    bool hold = fabs(v) > 1e-12 && fabs(w / v) * robot->a_max <= robot->dw_max;
    double k = fabs(v) > 1e-12 ? w / v : 0, gap = INFINITY;
    double reach = fabs(v) * t_r + v * v / (2 * robot->a_max) + robot->radius + 0.2;
    lc_vec2 c0 = lc_v2(pose.x, pose.y);
    for (double t = 0;; t += h) {
        lc_vec2 fp[LC_FOOTPRINT_MAX];
        int n = placed(robot, pose, fp);
        for (int i = 0; i < cloud->n; i++)
            if (lc_dist(cloud->world[i], c0) <= reach)
                gap = fmin(gap, lc_convex_distance(fp, n, cloud->world[i], NULL));
        if (v == 0 && w == 0)
            return gap;
        pose.x += v * cos(pose.yaw) * h;
        pose.y += v * sin(pose.yaw) * h;
        pose.yaw += w * h;
        if (t < t_r)
            continue;
        double vn = fabs(v) - robot->a_max * h, wn = fabs(w) - robot->dw_max * h;
        v = vn > 0 ? copysign(vn, v) : 0;
        w = hold ? k * v : (wn > 0 ? copysign(wn, w) : 0);
    }
}

/*
 * The promises of one plan (docs/INTERFACES.md). prev: the setpoint before
 * (NULL: from rest). The braking check is motion.h's: a setpoint brakes
 * inside the region whenever the hardest braking of the one before does;
 * when the region has shrunk faster than that (the memory's view of the
 * space behind the robot can narrow at once), the step brakes as hard as
 * its rate limit allows ("braking"), and that is what is checked then.
 */
static void check_promises(const lc_robot *robot, const lc_frame *f, const lc_plan_result *r,
                           lc_vec2 goal, double dt, const lc_setpoint *prev)
{
    const lc_region *rg = r->region;
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    assert_non_null(rg);
    assert_true(lc_region_margin(rg, c) >= -1e-9);
#if LC_HAVE_GEOS
    double need = lc_robot_clearance(robot);
    /* every valid return at least radius + margin from the region (GEOS) */
    for (int i = 0; i < r->cloud->n && !lc_robot_has_footprint(robot); i++)
        assert_true(oracle_point_distance(rg->v, rg->nv, r->cloud->world[i]) >= need - 1e-7);
    if (lc_robot_has_footprint(robot))
        check_footprint_region(robot, f, r);
    if (r->path && r->path->status == LC_GUIDE_PATH && r->has_waypoint &&
        lc_dist(r->path->goal, r->waypoint) < 1e-9) {
        /* guided: a point of the path that the region holds (GEOS: inside
         * or on the region's boundary; on the path's polyline) */
        assert_true(oracle_point_distance(rg->v, rg->nv, r->target) <= 1e-7 ||
                    lc_region_contains(rg, r->target, 1e-7));
        double on = INFINITY;
        for (int k = 0; k + 1 < r->path->n; k++)
            on = fmin(on, lc_segment_distance(r->target, r->path->v[k], r->path->v[k + 1], NULL));
        /* or on the first leg, from the robot to the end of its segment */
        for (int k = 1; k < r->path->n; k++)
            on = fmin(on, lc_segment_distance(r->target, c, r->path->v[k], NULL));
        /* or, where the path runs along the region's edge, the region's
         * closest point to a point of it: within a search cell (0.1 m) */
        assert_true(on <= 0.1 + 1e-7);
    } else {
        /* the target: the goal if inside, else GEOS's nearest point */
        lc_vec2 g = oracle_nearest(rg->v, rg->nv, goal);
        assert_near(r->target.x, g.x, 1e-7);
        assert_near(r->target.y, g.y, 1e-7);
    }
#endif
    /* speed within v_max; braking along the setpoint's direction stays inside */
    lc_vec2 v_robot = robot->model == LC_MODEL_POINT ? lc_v2(r->setpoint.vx, r->setpoint.vy)
                                                     : lc_v2(r->setpoint.v, 0);
    double speed = lc_len(v_robot);
    assert_true(speed <= robot->v_max + 1e-9);
    if (speed > 1e-9 && robot->model == LC_MODEL_POINT) {
        lc_vec2 dir = lc_rotate(lc_scale(v_robot, 1.0 / speed), f->pose.yaw);
        double stop = speed * speed / (2 * robot->a_max);
        if (!lc_region_contains(rg, lc_add(c, lc_scale(dir, stop)), 1e-7)) {
            /* only the hardest braking of the setpoint before, along it */
            assert_int_equal(r->setpoint.limit, LC_LIMIT_BRAKING);
            assert_non_null(prev);
            double was = hypot(prev->vx, prev->vy);
            assert_near(speed, was - robot->a_max * dt, 1e-9);
            assert_true(lc_dot(v_robot, lc_v2(prev->vx, prev->vy)) >= speed * was * (1 - 1e-9));
        }
    }
    if (robot->model == LC_MODEL_UNICYCLE && lc_robot_has_footprint(robot)) {
        /* the body along its braking path (latency: the period, as steer.c
         * holds it), within 1 ms of motion (under 1.5 mm here) */
        double gap = body_brake_gap(robot, r->cloud, f->pose, r->setpoint.v, r->setpoint.w, dt);
        if (gap < robot->margin - 1.5e-3) {
            /* only the hardest braking of the setpoint before */
            assert_int_equal(r->setpoint.limit, LC_LIMIT_BRAKING);
            assert_non_null(prev);
            assert_near(fabs(r->setpoint.v), fmax(fabs(prev->v) - robot->a_max * dt, 0), 1e-9);
        }
    }
}

/* The default scanner with `beams` beams, and room for one scan of it. */
static double *scanner(lc_sensor *s, int beams)
{
    lc_sensor_default(s);
    s->beams = beams;
    double *ranges = malloc(sizeof *ranges * (size_t)s->beams);
    assert_non_null(ranges);
    return ranges;
}

static void test_promises_random(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 99);
    lc_sensor s;
    double *ranges = scanner(&s, 541);
    int checked = 0;
    for (int trial = 0; trial < 120; trial++) {
        lc_world w;
        random_world(&w, &rng, (int)lc_rng_uniform(&rng, 0, 30));
        lc_robot robot;
        lc_robot_default(&robot);
        robot.model = trial % 2 ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
        lc_pose pose = {0, 0, lc_rng_uniform(&rng, -3, 3)};
        if (lc_world_distance(&w, lc_v2(0, 0)) < 0.6) {
            lc_world_free(&w);
            continue;
        }
        lc_sim_rng g = {(uint64_t)trial};
        lc_frame f = scan_of(&w, &s, pose, ranges, &g);
        lc_session *ses = lc_session_new(&robot, NULL, NULL);
        lc_vec2 goal = lc_v2(lc_rng_uniform(&rng, -9, 9), lc_rng_uniform(&rng, -9, 9));
        lc_session_set_goal(ses, goal);
        lc_plan_result r;
        assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
        if (r.state != LC_STATE_TOO_CLOSE) {
            check_promises(&robot, &f, &r, goal, 0.05, NULL);
            checked++;
        }
        lc_session_free(ses);
        lc_world_free(&w);
    }
    assert_true(checked > 80);
    free(ranges);
    LC_GEOS_CHECKED();
}

/*
 * A polygon footprint on random scenes, both models: short closed loops
 * (the robot follows each setpoint for the period) toward a random goal,
 * the promises checked at every 2nd frame. Footprints: rectangles up to
 * 1.2 x 0.7 m and random convex polygons, the rotation centre off their
 * middle at times.
 */
static void test_promises_footprint_random(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 1717);
    lc_sensor s;
    double *ranges = scanner(&s, 361);
    int checked = 0, moving = 0;
    for (int trial = 0; trial < 60; trial++) {
        lc_world w;
        random_world(&w, &rng, (int)lc_rng_uniform(&rng, 0, 30));
        lc_robot robot;
        lc_robot_default(&robot);
        robot.model = trial % 2 ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
        lc_vec2 fp[LC_FOOTPRINT_MAX];
        int n = 4, at;
        if (trial % 3 == 2) {
            do {
                n = 3 + (int)(lc_rng_next(&rng) % 8);
                lc_test_random_convex(&rng, lc_v2(lc_rng_uniform(&rng, -0.1, 0.1), 0),
                                      lc_rng_uniform(&rng, 0.2, 0.6), n, fp);
            } while (lc_footprint_check(fp, n, &at) != LC_FOOTPRINT_OK);
        } else {
            double hx = lc_rng_uniform(&rng, 0.15, 0.6), hy = lc_rng_uniform(&rng, 0.1, 0.35);
            double off = lc_rng_uniform(&rng, -0.5, 0.5) * hx;
            fp[0] = lc_v2(hx + off, -hy), fp[1] = lc_v2(hx + off, hy);
            fp[2] = lc_v2(-hx + off, hy), fp[3] = lc_v2(-hx + off, -hy);
        }
        assert_int_equal(lc_robot_set_footprint(&robot, fp, n), LC_OK);
        lc_pose pose = {0, 0, lc_rng_uniform(&rng, -3, 3)};
        if (lc_world_distance(&w, lc_v2(0, 0)) < robot.radius + 0.3) {
            lc_world_free(&w);
            continue;
        }
        lc_session *ses = lc_session_new(&robot, NULL, NULL);
        lc_vec2 goal = lc_v2(lc_rng_uniform(&rng, -9, 9), lc_rng_uniform(&rng, -9, 9));
        lc_session_set_goal(ses, goal);
        lc_sim_rng g = {(uint64_t)trial};
        lc_setpoint prev = lc_setpoint_stop(LC_LIMIT_NONE);
        const double dt = 0.05;
        for (int k = 0; k < 60; k++) {
            lc_frame f;
            lc_plan_result r;
            step_frame(ses, &w, &s, pose, ranges, &g, k, dt, &f, &r);
            if (k % 2 == 0 && r.state != LC_STATE_TOO_CLOSE && r.has_waypoint &&
                r.state != LC_STATE_DONE) {
                check_promises(&robot, &f, &r, r.waypoint, dt, k ? &prev : NULL);
                checked++;
                moving += fabs(r.setpoint.v) + hypot(r.setpoint.vx, r.setpoint.vy) > 0.2;
            }
            pose = follow(pose, &r.setpoint, robot.model, dt);
            prev = r.setpoint;
        }
        lc_session_free(ses);
        lc_world_free(&w);
    }
    print_message("%d plans of polygon robots checked, %d at over 0.2 m/s\n", checked, moving);
    assert_true(checked > 800 && moving > 200);
    free(ranges);
    LC_GEOS_CHECKED();
}

/*
 * The promises (docs/INTERFACES.md) on every 3rd frame of a closed-loop patrol through
 * each shipped scenario's world (the scenes the product is shown on, not
 * only random ones): check_promises (GEOS distances and nearest points),
 * and the ellipse inside the region (32 points of its boundary).
 */
static void test_promises_on_shipped_scenarios(void **state)
{
    static char paths[64][LC_TEST_PATH_MAX];
    int files = lc_test_jsonl_files("scenarios", paths, 64);
    int scenarios = 0, checked = 0;
    for (int i = 0; i < files; i++) {
        const char *path = paths[i];
        FILE *fp = fopen(path, "r");
        assert_non_null(fp);
        static char line[1 << 20];
        assert_non_null(fgets(line, sizeof line, fp));
        fclose(fp);
        lc_scenario_header h;
        lc_scenario_error err;
        lc_scenario_header_init(&h);
        if (lc_scenario_parse_header(line, strlen(line), &h, &err) < 0)
            fail_msg("%s: %s", path, err.message);
        lc_world w = {.polys = h.world};
        lc_sensor sen = {.beams = h.sensor.beams, .fov = h.sensor.fov,
                         .range_min = h.sensor.range_min, .range_max = h.sensor.range_max,
                         .rate = h.sensor.rate, .noise = h.sensor.noise, .mount = h.sensor.mount};
        double *ranges = calloc((size_t)sen.beams, sizeof *ranges), dt = 1.0 / sen.rate;
        lc_session *ses = lc_session_new(&h.robot, NULL, NULL);
        if (ses && h.has_route)
            lc_session_set_route(ses, &h.route);
        lc_sim_rng g = {1};
        lc_pose pose = h.start;
        lc_setpoint prev = lc_setpoint_stop(LC_LIMIT_NONE);
        for (int k = 0; k < 600; k++) {
            lc_frame f;
            lc_plan_result r;
            step_frame(ses, &w, &sen, pose, ranges, &g, k, dt, &f, &r);
            if (r.state == LC_STATE_DONE)
                break;
            if (k % 3 == 0 && r.state != LC_STATE_TOO_CLOSE && r.has_waypoint) {
                check_promises(&h.robot, &f, &r, r.waypoint, dt, &prev);
                const lc_ellipse *el = &r.region->ellipse;
                for (int j = 0; j < 32; j++) {
                    lc_vec2 u = lc_unit_angle(2 * LC_PI * j / 32);
                    lc_vec2 p = lc_add(el->d, lc_v2(el->l11 * u.x + el->l12 * u.y,
                                                    el->l12 * u.x + el->l22 * u.y));
                    assert_true(lc_region_contains(r.region, p, 1e-7));
                }
                checked++;
            }
            pose = follow(pose, &r.setpoint, h.robot.model, dt);
            prev = r.setpoint;
        }
        lc_session_free(ses);
        free(ranges);
        lc_scenario_header_free(&h);
        scenarios++;
    }
    assert_true(scenarios >= 6);
    print_message("%d frames of %d scenarios checked\n", checked, scenarios);
    assert_true(checked > 6 * 100);
    LC_GEOS_CHECKED();
}

/* Warm session: a run of frames allocates nothing through the core's
 * hook; for the default disc robot and for polygon footprints, both
 * models. */
static void test_no_alloc_when_warm(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 5);
    lc_world w;
    random_world(&w, &rng, 30);
    lc_sensor s;
    double *ranges = scanner(&s, 1081);
    const lc_vec2 rect[] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
    lc_sim_rng g = {1};
    /* Twenty noisy frames: the first pass raises every buffer to its
     * high-water mark, the second must not allocate at all. */
    double *all = malloc(sizeof *all * 1081 * 20);
    for (int k = 0; k < 20; k++)
        scan_of(&w, &s, (lc_pose){0, 0, 0}, all + 1081 * k, &g);
    for (int kind = 0; kind < 3; kind++) {
        lc_robot robot;
        lc_robot_default(&robot);
        if (kind > 0) {
            robot.model = kind == 1 ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
            assert_int_equal(lc_robot_set_footprint(&robot, rect, 4), LC_OK);
        }
        lc_counting_alloc ca;
        lc_counting_alloc_init(&ca);
        lc_session *ses = lc_session_new(&robot, NULL, &ca.alloc);
        lc_session_set_goal(ses, lc_v2(5, 1));
        lc_plan_result r;
        lc_frame f = scan_of(&w, &s, (lc_pose){0, 0, 0}, ranges, &g);
        for (int k = 0; k < 20; k++) {
            f.ranges = all + 1081 * k;
            assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
        }
        long before = ca.calls;
        for (int k = 0; k < 20; k++) {
            f.ranges = all + 1081 * k;
            assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
        }
        assert_int_equal(ca.calls, before);
        lc_session_free(ses);
        assert_int_equal(ca.live, 0);
    }
    free(all);
    lc_world_free(&w);
    free(ranges);
}

static void test_deterministic(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 8);
    lc_world w;
    random_world(&w, &rng, 25);
    lc_sensor s;
    lc_sensor_default(&s);
    double *ranges = malloc(sizeof *ranges * (size_t)s.beams);
    lc_sim_rng g = {3};
    lc_frame f = scan_of(&w, &s, (lc_pose){0, 0, 0.4}, ranges, &g);
    lc_plan_result a, b;
    lc_session *s1 = lc_session_new(NULL, NULL, NULL), *s2 = lc_session_new(NULL, NULL, NULL);
    lc_session_set_goal(s1, lc_v2(4, 4));
    lc_session_set_goal(s2, lc_v2(4, 4));
    lc_session_step(s1, &f, 0.05, &a);
    lc_session_step(s2, &f, 0.05, &b);
    assert_memory_equal(&a.setpoint, &b.setpoint, sizeof a.setpoint);
    assert_memory_equal(&a.target, &b.target, sizeof a.target);
    assert_int_equal(a.region->nv, b.region->nv);
    assert_memory_equal(a.region->v, b.region->v, sizeof *a.region->v * (size_t)a.region->nv);
    lc_session_free(s1);
    lc_session_free(s2);
    lc_world_free(&w);
    free(ranges);
}

/* A return 0.2 m from the centre of a 0.3 m robot is a self hit (dropped);
 * one at 0.33 m is within radius + margin: too_close. The robot stops at
 * once from 0.5 m/s, then eases out: away from the return only, from rest
 * (a_max dt at most), never faster than LC_STEER_EASE_SPEED. Returns on
 * both sides: no way out, no translation. Each frame on its own (without
 * memory: the self hit frame does not look past 0.2 m, so a memory keeps
 * the first one's return, rightly). */
static void test_too_close(void **state)
{
    /* a 270-degree scan with one return, back on the left (bearing 135
     * degrees: the way out, forward right, is one a point robot with this
     * scanner may slide in, without memory) */
    double ranges[271];
    for (int i = 0; i < 271; i++)
        ranges[i] = NAN;
    ranges[270] = 0.33;
    lc_frame f = {.kind = LC_FRAME_SCAN, .angle_start = -0.75 * LC_PI, .angle_step = LC_PI / 180,
                  .range_min = 0.05, .range_max = 10, .ranges = ranges, .n_ranges = 271};
    lc_plan_config cfg;
    lc_plan_config_default(&cfg);
    cfg.memory.enabled = false;
    lc_session *ses = lc_session_new(NULL, &cfg, NULL);
    lc_session_set_goal(ses, lc_v2(3, 0));
    lc_setpoint moving = {.vx = 0.5, .limit = LC_LIMIT_GOAL};
    lc_session_set_velocity(ses, &moving);
    lc_plan_result r;
    assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
    assert_int_equal(r.state, LC_STATE_TOO_CLOSE);
    const lc_vec2 toward = {-sqrt(0.5), sqrt(0.5)}; /* the return's direction */
    assert_true(lc_dot(lc_v2(r.setpoint.vx, r.setpoint.vy), toward) <= 1e-12);
    double a_step = lc_session_robot(ses)->a_max * 0.05;
    assert_true(hypot(r.setpoint.vx, r.setpoint.vy) <= a_step + 1e-12);
    assert_non_null(r.region);
    assert_true(lc_region_contains(r.region, lc_v2(0, 0), 1e-9));
    for (int k = 0; k < 40; k++) { /* easing on: away, never faster than allowed */
        lc_session_set_velocity(ses, &r.setpoint);
        assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
        assert_int_equal(r.state, LC_STATE_TOO_CLOSE);
        assert_true(lc_dot(lc_v2(r.setpoint.vx, r.setpoint.vy), toward) <= 1e-12);
        assert_true(hypot(r.setpoint.vx, r.setpoint.vy) <= LC_STEER_EASE_SPEED + 1e-12);
    }
    print_message("eased to vx %.3f vy %.3f limit %d\n", r.setpoint.vx, r.setpoint.vy, r.setpoint.limit);
    assert_true(lc_dot(lc_v2(r.setpoint.vx, r.setpoint.vy), toward) < -0.1); /* it got going */
    /* returns on the left and right (both 0.33 m away): no way out, a stop */
    double both[2] = {0.33, 0.33};
    lc_frame g = {.kind = LC_FRAME_SCAN, .angle_start = -0.5 * LC_PI, .angle_step = LC_PI,
                  .range_min = 0.05, .range_max = 10, .ranges = both, .n_ranges = 2};
    lc_session_set_velocity(ses, &moving);
    assert_int_equal(lc_session_step(ses, &g, 0.05, &r), 0);
    assert_int_equal(r.state, LC_STATE_TOO_CLOSE);
    assert_int_equal(r.setpoint.limit, LC_LIMIT_TOO_CLOSE);
    assert_near(r.setpoint.vx, 0, 0);
    assert_near(r.setpoint.vy, 0, 0);
    ranges[270] = 0.2;
    assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
    assert_int_equal(r.cloud->dropped_self, 1);
    assert_int_not_equal(r.state, LC_STATE_TOO_CLOSE);
    lc_session_free(ses);
}

/*
 * too_close turns a unicycle in place from the last w, rate limited; from
 * a last w beyond w_max (a plan request's velocity) it starts at w_max
 * (found by fuzzing: tests/fuzz/corpus/plan/regress-too-close-spin-beyond-w-max,
 * w 49.9 rad/s with w_max 1 came out).
 */
static void test_too_close_turn_within_w_max(void **state)
{
    (void)state;
    double ranges[181];
    for (int i = 0; i < 181; i++)
        ranges[i] = 0.32; /* within radius + margin all round the front */
    lc_frame f = {.kind = LC_FRAME_SCAN, .angle_start = -LC_PI / 2, .angle_step = LC_PI / 180,
                  .range_min = 0.05, .range_max = 10, .ranges = ranges, .n_ranges = 181};
    lc_robot robot;
    lc_robot_default(&robot);
    robot.model = LC_MODEL_UNICYCLE;
    lc_session *ses = lc_session_new(&robot, NULL, NULL);
    lc_session_set_goal(ses, lc_v2(0, 3)); /* to the left: turn counter-clockwise */
    const double dt = 0.05, step = robot.dw_max * dt;
    const double lasts[] = {50, -50, 1, 0};
    for (int k = 0; k < 4; k++) {
        lc_setpoint last = {.v = 0, .w = lasts[k]};
        lc_session_set_velocity(ses, &last);
        lc_plan_result r;
        assert_int_equal(lc_session_step(ses, &f, dt, &r), 0);
        assert_int_equal(r.state, LC_STATE_TOO_CLOSE);
        assert_near(r.setpoint.v, 0, 0);
        assert_true(fabs(r.setpoint.w) <= robot.w_max);
        double w0 = fmax(-robot.w_max, fmin(robot.w_max, lasts[k]));
        assert_true(fabs(r.setpoint.w - w0) <= step + 1e-12);
        assert_true(r.setpoint.w > w0 - 1e-12 || w0 == robot.w_max); /* toward the goal */
    }
    lc_session_free(ses);
}

/*
 * A waypoint behind a wall, 1 cm range noise: the robot drives up to the
 * wall and waits there. It stops the standoff inside the region, so the
 * noise does not throw it into too_close (a parked robot flickered between
 * too_close and tracking before), and it never comes nearer the wall than
 * radius + margin (closed form: the wall face is the plane x = 2).
 */
static void test_standoff_at_blocked_waypoint(void **state)
{
    lc_world w;
    lc_world_init(&w);
    lc_vec2 wall[4] = {{2.0, -3}, {2.2, -3}, {2.2, 3}, {2.0, 3}};
    lc_world_add(&w, wall, 4);
    lc_sensor sen;
    lc_sensor_default(&sen);
    sen.noise = 0.01;
    lc_sim_rng noise = {7};
    double *ranges = calloc((size_t)sen.beams, sizeof *ranges);
    /* the local planner's parking, without guidance (which would go round
     * the wall's end: test_guided_round_wall) */
    lc_plan_config cfg;
    lc_plan_config_default(&cfg);
    cfg.guide.enabled = false;
    for (int m = 0; m < 2; m++) {
        lc_robot robot;
        lc_robot_default(&robot);
        robot.model = m ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
        lc_session *ses = lc_session_new(&robot, &cfg, NULL);
        lc_session_set_goal(ses, lc_v2(4, 0.3));
        lc_pose pose = {0, 0, 0};
        int too_close = 0;
        double nearest = INFINITY, dt = 0.05;
        for (int k = 0; k < 400; k++) {
            lc_frame f;
            lc_plan_result r;
            step_frame(ses, &w, &sen, pose, ranges, &noise, k, dt, &f, &r);
            too_close += r.state == LC_STATE_TOO_CLOSE;
            pose = follow(pose, &r.setpoint, robot.model, dt);
            nearest = fmin(nearest, 2.0 - pose.x);
        }
        assert_int_equal(too_close, 0);
        assert_true(nearest >= lc_robot_clearance(&robot) - 1e-6);
        /* it did come up to the wall: within 10 cm of the closest allowed */
        assert_true(2.0 - pose.x <= lc_robot_clearance(&robot) + 0.1);
        lc_session_free(ses);
    }
    free(ranges);
    lc_world_free(&w);
}

/*
 * Guidance round a wall: the same 6 m wall across the way, the goal behind
 * it. The local region alone parks at the wall (above); with guidance the
 * robot goes round the wall's end and arrives, both models, never within
 * radius + margin of the wall's face or ends. Its driven length is checked
 * against the closed form of the shortest way for a disc of clearance R
 * round the wall's nearer end: straight to (2, 3 + R), along the wall's
 * 0.2 m top, straight to the goal (an upper bound of the exact tangent
 * path, so the ratio asked of the robot is a little generous).
 */
static void test_guided_round_wall(void **state)
{
    lc_world w;
    lc_world_init(&w);
    lc_vec2 wall[4] = {{2.0, -3}, {2.2, -3}, {2.2, 3}, {2.0, 3}};
    lc_world_add(&w, wall, 4);
    lc_sensor sen;
    lc_sensor_default(&sen);
    sen.noise = 0.01;
    lc_sim_rng noise = {11};
    double *ranges = calloc((size_t)sen.beams, sizeof *ranges);
    const lc_vec2 goal = {4, 0.3};
    for (int m = 0; m < 2; m++) {
        lc_robot robot;
        lc_robot_default(&robot);
        robot.model = m ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
        double R = lc_robot_clearance(&robot);
        lc_vec2 c0 = {2.0, 3 + R}, c1 = {2.2, 3 + R};
        double bound = lc_dist(lc_v2(0, 0), c0) + 0.2 + lc_dist(c1, goal);
        lc_session *ses = lc_session_new(&robot, NULL, NULL);
        lc_session_set_goal(ses, goal);
        lc_pose pose = {0, 0, 0};
        double driven = 0, nearest = INFINITY, dt = 0.05;
        int k = 0;
        bool done = false;
        for (; k < 1200 && !done; k++) {
            lc_frame f;
            lc_plan_result r;
            step_frame(ses, &w, &sen, pose, ranges, &noise, k, dt, &f, &r);
            done = r.state == LC_STATE_DONE;
            assert_int_not_equal(r.state, LC_STATE_TOO_CLOSE);
            lc_pose next = follow(pose, &r.setpoint, robot.model, dt);
            driven += lc_dist(lc_v2(pose.x, pose.y), lc_v2(next.x, next.y));
            pose = next;
            nearest = fmin(nearest, lc_convex_distance(wall, 4, lc_v2(pose.x, pose.y), NULL));
        }
        print_message("%s: %.2f m driven in %.2f s (closed-form way round %.2f m), "
                      "nearest the wall %.3f m\n", m ? "unicycle" : "point", driven, k * dt,
                      bound, nearest);
        assert_true(done);
        assert_true(lc_dist(lc_v2(pose.x, pose.y), goal) <= lc_session_route(ses)->tolerance);
        assert_true(nearest >= robot.radius);
        assert_true(driven >= lc_dist(lc_v2(0, 0), goal) && driven <= 1.5 * bound);
        lc_session_free(ses);
    }
    free(ranges);
    lc_world_free(&w);
}

/*
 * The robot's height band: a depth camera sees the floor 0.5 m below it
 * and a crate; with z_min = -0.45 the floor points are no obstacles and
 * the crate's are (without a band every floor point would be one).
 */
static void test_height_band(void **state)
{
    double xy[2 * 40], z[40];
    int n = 0;
    for (int i = 0; i < 30; i++, n++) { /* floor, 1 to 2.5 m ahead */
        xy[2 * n] = 1.0 + 0.05 * i;
        xy[2 * n + 1] = 0.3 * sin(i);
        z[n] = -0.5;
    }
    for (int i = 0; i < 10; i++, n++) { /* the crate's face at x = 2, 0.2 m up */
        xy[2 * n] = 2.0;
        xy[2 * n + 1] = -0.25 + 0.05 * i;
        z[n] = 0.2;
    }
    lc_frame f = {.kind = LC_FRAME_POINTS, .xy = xy, .z = z, .n_points = n};
    for (int band = 0; band < 2; band++) {
        lc_robot robot;
        lc_robot_default(&robot);
        if (band)
            robot.z_min = -0.45;
        lc_session *ses = lc_session_new(&robot, NULL, NULL);
        lc_session_set_goal(ses, lc_v2(4, 0));
        lc_plan_result r;
        assert_int_equal(lc_session_step(ses, &f, 0.05, &r), 0);
        assert_int_equal(r.cloud->n, band ? 10 : 40);
        for (int i = 0; band && i < r.cloud->n; i++)
            assert_near(r.cloud->world[i].x, 2.0, 1e-12);
        lc_session_free(ses);
    }
}

/* A patrol in an invented yard: walls round 10 x 6 m, a closed cage round
 * (5, 4); a point robot with a 360 degree scanner drives it closed loop. */
typedef struct patrol_run {
    lc_event_kind kinds[32];
    int waypoints[32], n;
    int blocked_frames_after, moving_while_blocked;
    double end;
} patrol_run;

static void run_patrol(const lc_route *route, double seconds, patrol_run *out)
{
    lc_world w;
    lc_world_init(&w);
    lc_vec2 walls[4][4] = {{{0, -0.2}, {10, -0.2}, {10, 0}, {0, 0}},
                           {{0, 6}, {10, 6}, {10, 6.2}, {0, 6.2}},
                           {{-0.2, -0.2}, {0, -0.2}, {0, 6.2}, {-0.2, 6.2}},
                           {{10, -0.2}, {10.2, -0.2}, {10.2, 6.2}, {10, 6.2}}};
    for (int i = 0; i < 4; i++)
        lc_world_add(&w, walls[i], 4);
    lc_vec2 cage[4] = {{4.4, 3.4}, {5.6, 3.4}, {5.6, 4.6}, {4.4, 4.6}};
    lc_world_add(&w, cage, 4);
    lc_sensor sen;
    lc_sensor_default(&sen);
    sen.beams = 720;
    sen.fov = 2 * LC_PI * 719 / 720;
    double *ranges = calloc((size_t)sen.beams, sizeof *ranges), dt = 0.05;
    lc_robot robot;
    lc_robot_default(&robot);
    lc_session *ses = lc_session_new(&robot, NULL, NULL);
    lc_session_set_route(ses, route);
    lc_sim_rng g = {3};
    lc_pose pose = {1, 1.5, 0};
    memset(out, 0, sizeof *out);
    bool blocked_seen = false;
    for (int k = 0; k * dt < seconds; k++) {
        lc_frame f;
        lc_plan_result r;
        step_frame(ses, &w, &sen, pose, ranges, &g, k, dt, &f, &r);
        for (int i = 0; i < r.n_events && out->n < 32; i++, out->n++) {
            out->kinds[out->n] = r.events[i].kind;
            out->waypoints[out->n] = r.events[i].waypoint;
            blocked_seen = blocked_seen || r.events[i].kind == LC_EVENT_BLOCKED;
        }
        if (blocked_seen && r.state == LC_STATE_BLOCKED) {
            out->blocked_frames_after++;
            out->moving_while_blocked += r.setpoint.vx != 0 || r.setpoint.vy != 0;
        }
        out->end = f.stamp;
        if (r.state == LC_STATE_DONE)
            break;
        pose = follow(pose, &r.setpoint, LC_MODEL_POINT, dt);
    }
    lc_session_free(ses);
    free(ranges);
    lc_world_free(&w);
}

static void expect_events(const patrol_run *run, const lc_event_kind *kinds, const int *wps,
                          int n)
{
    for (int i = 0; i < run->n; i++)
        print_message("event %s waypoint %d\n", lc_event_name(run->kinds[i]), run->waypoints[i]);
    assert_true(run->n >= n);
    for (int i = 0; i < n; i++) {
        assert_int_equal(run->kinds[i], kinds[i]);
        assert_int_equal(run->waypoints[i], wps[i]);
    }
}

/*
 * A scripted patrol in a scene: the events in order. Skip: reached 0,
 * blocked at the caged waypoint 1 after blocked_time without progress,
 * skipped, reached 2, done. Wait: blocked, then held (zero setpoints, state
 * blocked) until the end. Loop: reached 0, reached 1, lap, reached 0 again.
 */
static void test_scripted_patrol(void **state)
{
    lc_route route;
    lc_route_default(&route);
    route.count = 3;
    route.waypoints[0] = lc_v2(2, 1.5);
    route.waypoints[1] = lc_v2(5, 4);
    route.waypoints[2] = lc_v2(8, 1.5);
    route.blocked_time = 3.0;
    route.on_blocked = LC_BLOCKED_SKIP;
    patrol_run run;
    run_patrol(&route, 60, &run);
    expect_events(&run,
                  (lc_event_kind[]){LC_EVENT_REACHED, LC_EVENT_BLOCKED, LC_EVENT_SKIPPED,
                                    LC_EVENT_REACHED, LC_EVENT_DONE},
                  (int[]){0, 1, 1, 2, 2}, 5);
    assert_int_equal(run.n, 5);
    assert_true(run.end < 40);

    route.on_blocked = LC_BLOCKED_WAIT;
    run_patrol(&route, 25, &run);
    expect_events(&run, (lc_event_kind[]){LC_EVENT_REACHED, LC_EVENT_BLOCKED}, (int[]){0, 1}, 2);
    assert_true(run.blocked_frames_after > 20);
    assert_int_equal(run.moving_while_blocked, 0);

    route.count = 2;
    route.waypoints[1] = lc_v2(8, 1.5);
    route.loop = true;
    run_patrol(&route, 30, &run);
    expect_events(&run,
                  (lc_event_kind[]){LC_EVENT_REACHED, LC_EVENT_REACHED, LC_EVENT_LAP,
                                    LC_EVENT_REACHED},
                  (int[]){0, 1, 0, 0}, 4);
}

static void test_names(void **state)
{
    assert_string_equal(lc_stage_name(LC_STAGE_INGEST), "ingest");
    assert_string_equal(lc_stage_name(LC_STAGE_SETPOINT), "setpoint");
    assert_string_equal(lc_stage_name(LC_STAGE_COUNT), "unknown");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_promises_random),
        cmocka_unit_test(test_promises_footprint_random),
        cmocka_unit_test(test_promises_on_shipped_scenarios),
        cmocka_unit_test(test_no_alloc_when_warm),
        cmocka_unit_test(test_deterministic),
        cmocka_unit_test(test_too_close),
        cmocka_unit_test(test_too_close_turn_within_w_max),
        cmocka_unit_test(test_standoff_at_blocked_waypoint),
        cmocka_unit_test(test_guided_round_wall),
        cmocka_unit_test(test_height_band),
        cmocka_unit_test(test_scripted_patrol),
        cmocka_unit_test(test_names),
    };
    return LC_RUN_TESTS(tests, lc_test_geos_setup, lc_test_geos_teardown);
}
