/*
 * test_world.c - the simulator's ray caster against analytic distances:
 * a box seen from inside and outside (plane geometry), and a circle, whose
 * ray distance is the closed form t = d.c - sqrt((d.c)^2 - |c|^2 + R^2)
 * (ray-sphere intersection, common practice). The circle is a 2048-gon, so
 * it is within R (1 - cos(pi/2048)) ~ 1.2e-6 R of the true one. A
 * polygon footprint's clearance (lc_world_polygon_distance) against GEOS's
 * distance between the footprint and each world polygon (GEOSDistance_r),
 * on random rectangles, L-shaped rings and thin walls, and closed forms.
 */
#include "testutil.h"

#include "footprint.h"
#include "world.h"
#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif

static void box(lc_world *w, double x0, double y0, double x1, double y1)
{
    lc_vec2 v[4] = {{x0, y0}, {x1, y0}, {x1, y1}, {x0, y1}};
    assert_int_equal(lc_world_add(w, v, 4), 0);
}

static void test_box_from_inside(void **state)
{
    lc_world w;
    lc_world_init(&w);
    box(&w, -2, -1, 3, 4);
    lc_vec2 o = lc_v2(0.5, 0.5);
    assert_near(lc_world_raycast(&w, o, lc_v2(1, 0), 100), 2.5, 1e-12);
    assert_near(lc_world_raycast(&w, o, lc_v2(0, 1), 100), 3.5, 1e-12);
    assert_near(lc_world_raycast(&w, o, lc_v2(-1, 0), 100), 2.5, 1e-12);
    assert_near(lc_world_raycast(&w, o, lc_v2(0, -1), 100), 1.5, 1e-12);
    /* 45 degrees toward the top-right wall x = 3: t = 2.5 / cos 45 */
    assert_near(lc_world_raycast(&w, o, lc_unit_angle(LC_PI / 4), 100), 2.5 * sqrt(2.0), 1e-12);
    /* beyond the range limit: no hit */
    assert_true(isinf(lc_world_raycast(&w, o, lc_v2(0, 1), 3.0)));
    lc_world_free(&w);
}

static void test_circle_closed_form(void **state)
{
    lc_world w;
    lc_world_init(&w);
    const int n = 2048;
    const double R = 1.5;
    const lc_vec2 c = {4, 1};
    lc_vec2 v[2048];
    for (int i = 0; i < n; i++)
        v[i] = lc_add(c, lc_scale(lc_unit_angle(2 * LC_PI * i / n), R));
    lc_world_add(&w, v, n);
    lc_rng rng;
    lc_rng_seed(&rng, 11);
    for (int k = 0; k < 200; k++) {
        lc_vec2 o = lc_v2(lc_rng_uniform(&rng, -3, 0), lc_rng_uniform(&rng, -3, 3));
        /* aim within the circle's angular radius so the ray hits */
        lc_vec2 oc = lc_sub(c, o);
        double half = asin(R / lc_len(oc)) * 0.9;
        double a = atan2(oc.y, oc.x) + lc_rng_uniform(&rng, -half, half);
        lc_vec2 d = lc_unit_angle(a);
        double b = lc_dot(d, oc), disc = b * b - lc_len2(oc) + R * R;
        double want = b - sqrt(disc);
        assert_near(lc_world_raycast(&w, o, d, 100), want, 2e-5);
    }
    lc_world_free(&w);
}

/* A full scan from a known pose inside a box: every beam's range matches the
 * analytic wall distance; the mount offset and the robot's yaw both count. */
static void test_scan_box(void **state)
{
    lc_world w;
    lc_world_init(&w);
    box(&w, -5, -5, 5, 5);
    lc_sensor s;
    lc_sensor_default(&s);
    s.beams = 361;
    s.fov = 1.5 * LC_PI;
    s.noise = 0;
    s.mount = (lc_pose){0.2, 0, 0};
    lc_pose pose = {1, -1, LC_PI / 2};
    double ranges[361];
    lc_world_scan(&w, pose, &s, NULL, ranges);
    lc_vec2 o = lc_pose_apply(pose, lc_v2(0.2, 0)); /* (1, -0.8) */
    for (int i = 0; i < s.beams; i++) {
        double a = pose.yaw + lc_sensor_beam_angle(&s, i);
        lc_vec2 d = lc_unit_angle(a);
        double t = INFINITY;
        if (d.x > 1e-12) t = fmin(t, (5 - o.x) / d.x);
        if (d.x < -1e-12) t = fmin(t, (-5 - o.x) / d.x);
        if (d.y > 1e-12) t = fmin(t, (5 - o.y) / d.y);
        if (d.y < -1e-12) t = fmin(t, (-5 - o.y) / d.y);
        if (t > s.range_max)
            assert_true(isnan(ranges[i]));
        else
            assert_near(ranges[i], t, 1e-9);
    }
    /* noise: seeded, so the same seed repeats exactly */
    s.noise = 0.02;
    double r1[361], r2[361];
    lc_sim_rng g1 = {5}, g2 = {5};
    lc_world_scan(&w, pose, &s, &g1, r1);
    lc_world_scan(&w, pose, &s, &g2, r2);
    assert_memory_equal(r1, r2, sizeof r1);
    lc_world_free(&w);
}

static void test_distance_and_inside(void **state)
{
    lc_world w;
    lc_world_init(&w);
    box(&w, 0, 0, 1, 1);
    lc_vec2 seg[2] = {{3, -1}, {3, 1}};
    lc_world_add(&w, seg, 2);
    assert_true(lc_world_inside(&w, lc_v2(0.5, 0.5)));
    assert_near(lc_world_distance(&w, lc_v2(0.5, 0.5)), 0, 0);
    assert_near(lc_world_distance(&w, lc_v2(2, 0.5)), 1.0, 1e-12);
    assert_near(lc_world_distance(&w, lc_v2(4, 2)), sqrt(2.0), 1e-12);
    lc_vec2 one[1] = {{0, 0}};
    assert_int_equal(lc_world_add(&w, one, 1), -1);
    lc_world_free(&w);
}

/* A 1.0 x 0.5 m footprint beside a wall, at 0.1 m, then overlapping it. */
static void test_polygon_distance_closed_form(void **state)
{
    (void)state;
    lc_world w;
    lc_world_init(&w);
    box(&w, -5, 0.35, 5, 0.45);                     /* a wall 0.1 m above the robot */
    const lc_vec2 wall[2] = {{2, -3}, {2, 3}};      /* a thin wall, a segment */
    assert_int_equal(lc_world_add(&w, wall, 2), 0);
    lc_vec2 foot[4] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
    assert_near(lc_world_polygon_distance(&w, foot, 4), 0.1, 1e-12);
    for (int i = 0; i < 4; i++) /* 0.15 up: 0.05 into the wall */
        foot[i].y += 0.15;
    assert_near(lc_world_polygon_distance(&w, foot, 4), -0.05, 1e-12);
    for (int i = 0; i < 4; i++) /* down again and to the thin wall: its segment crosses */
        foot[i] = lc_add(foot[i], lc_v2(1.6, -0.15));
    double d = lc_world_polygon_distance(&w, foot, 4);
    assert_true(d < 0 && d >= -0.1 - 1e-12);
    /* nothing to hit; fewer than 3 vertices */
    lc_world empty;
    lc_world_init(&empty);
    assert_true(isinf(lc_world_polygon_distance(&empty, foot, 4)));
    assert_true(isnan(lc_world_polygon_distance(&w, foot, 2)));
    lc_world_free(&w);
}

#if LC_HAVE_GEOS
/* Random worlds and footprints: the least GEOS distance when apart; when
 * they overlap (GEOS distance 0), negative. */
static void test_polygon_distance_against_geos(void **state)
{
    (void)state;
    lc_rng g;
    lc_rng_seed(&g, 4321);
    int apart = 0, overlap = 0;
    for (int rep = 0; rep < 300; rep++) {
        lc_world w;
        lc_world_init(&w);
        int nw = 1 + (int)(lc_rng_next(&g) % 5);
        lc_vec2 rings[5][6];
        int counts[5];
        for (int k = 0; k < nw; k++) {
            lc_vec2 c = lc_v2(lc_rng_uniform(&g, -2, 2), lc_rng_uniform(&g, -2, 2));
            double a = lc_rng_uniform(&g, 0.1, 1), b = lc_rng_uniform(&g, 0.1, 1);
            int kind = (int)(lc_rng_next(&g) % 3);
            lc_vec2 *v = rings[k];
            if (kind == 0) { /* a rectangle */
                v[0] = lc_add(c, lc_v2(-a, -b)), v[1] = lc_add(c, lc_v2(a, -b));
                v[2] = lc_add(c, lc_v2(a, b)), v[3] = lc_add(c, lc_v2(-a, b));
                counts[k] = 4;
            } else if (kind == 1) { /* an L: not convex */
                v[0] = c, v[1] = lc_add(c, lc_v2(a, 0)), v[2] = lc_add(c, lc_v2(a, 0.2));
                v[3] = lc_add(c, lc_v2(0.2, 0.2)), v[4] = lc_add(c, lc_v2(0.2, b));
                v[5] = lc_add(c, lc_v2(0, b));
                counts[k] = 6;
            } else { /* a thin wall */
                v[0] = c, v[1] = lc_add(c, lc_v2(a, b));
                counts[k] = 2;
            }
            assert_int_equal(lc_world_add(&w, v, counts[k]), 0);
        }
        lc_vec2 fp[LC_FOOTPRINT_MAX], foot[LC_FOOTPRINT_MAX];
        int n = 3 + (int)(lc_rng_next(&g) % 6);
        lc_test_random_convex(&g, lc_v2(0, 0), lc_rng_uniform(&g, 0.2, 0.6), n, fp);
        lc_pose pose = {lc_rng_uniform(&g, -2.5, 2.5), lc_rng_uniform(&g, -2.5, 2.5),
                        lc_rng_uniform(&g, -LC_PI, LC_PI)};
        for (int i = 0; i < n; i++)
            foot[i] = lc_pose_apply(pose, fp[i]);
        double ref = INFINITY;
        for (int k = 0; k < nw; k++)
            ref = fmin(ref, oracle_distance(foot, n, rings[k], counts[k]));
        double mine = lc_world_polygon_distance(&w, foot, n);
        if (ref > 0) {
            apart++;
            assert_near(mine, ref, 1e-9);
        } else {
            overlap++;
            assert_true(mine < 0);
        }
        lc_world_free(&w);
    }
    assert_true(apart > 50 && overlap > 50);
}
#endif

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_box_from_inside),
        cmocka_unit_test(test_circle_closed_form),
        cmocka_unit_test(test_scan_box),
        cmocka_unit_test(test_distance_and_inside),
        cmocka_unit_test(test_polygon_distance_closed_form),
        LC_GEOS_TEST(test_polygon_distance_against_geos),
    };
    return LC_RUN_TESTS(tests, lc_test_geos_setup, lc_test_geos_teardown);
}
