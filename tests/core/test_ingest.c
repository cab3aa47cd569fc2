/*
 * test_ingest.c - frames into world points: transforms (closed-form rigid
 * motions), range limits, invalid beams, self hits, the height band.
 */
#include "testutil.h"

#include <string.h>

#include "ingest.h"

static lc_frame scan_frame(const double *r, int n, double a0, double step)
{
    lc_frame f = {.kind = LC_FRAME_SCAN, .angle_start = a0, .angle_step = step,
                  .range_min = 0.1, .range_max = 10.0, .ranges = r, .n_ranges = n};
    return f;
}

static lc_ingest_config cfg_default(void)
{
    lc_ingest_config c;
    lc_ingest_config_default(&c);
    return c;
}

/* A beam straight ahead of a rotated, offset mount on a moved robot: the
 * world point is pose * mount * (r, 0), written out by hand. */
static void test_scan_transforms(void **state)
{
    double r[1] = {2.0};
    lc_frame f = scan_frame(r, 1, 0.0, 0.01);
    f.pose = (lc_pose){3.0, -1.0, LC_PI / 2};
    f.mount = (lc_pose){0.5, 0.0, LC_PI / 2};
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    assert_int_equal(lc_ingest(&f, &cfg, &c), 1);
    /* robot frame: (0.5, 0) + R(90)(2, 0) = (0.5, 2); world: R(90)(0.5, 2) + (3, -1) = (1, -0.5) */
    assert_near(c.world[0].x, 1.0, 1e-12);
    assert_near(c.world[0].y, -0.5, 1e-12);
    assert_near(c.sensor_world.x, 3.0, 1e-12);
    assert_near(c.sensor_world.y, -0.5, 1e-12);
    assert_true(c.ordered);
    lc_cloud_free(&c);
}

static void test_scan_drops(void **state)
{
    double r[7] = {NAN, INFINITY, 0.05, 10.5, 1.0, -1.0, 10.0};
    lc_frame f = scan_frame(r, 7, -0.3, 0.1);
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    assert_int_equal(lc_ingest(&f, &cfg, &c), 2);
    assert_int_equal(c.dropped_invalid, 2);
    assert_int_equal(c.dropped_range, 3);
    /* kept points keep beam order and their bearing */
    assert_near(c.bearing[0], -0.3 + 0.4, 1e-12);
    assert_near(c.range[1], 10.0, 0);
    lc_cloud_free(&c);
}

static void test_scan_no_returns(void **state)
{
    double r[5] = {NAN, NAN, NAN, NAN, NAN};
    lc_frame f = scan_frame(r, 5, 0, 0.1);
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    assert_int_equal(lc_ingest(&f, &cfg, &c), 0);
    assert_int_equal(c.n, 0);
    assert_near(c.fov, 0.5, 1e-12);
    lc_cloud_free(&c);
}

static void test_self_hits(void **state)
{
    /* A mount 0.2 m ahead looking back: a return at 0.25 m lands 0.05 m
     * behind the centre, inside a 0.3 m footprint. */
    double r[2] = {0.25, 3.0};
    lc_frame f = scan_frame(r, 2, LC_PI, 0.001);
    f.mount = (lc_pose){0.2, 0, 0};
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    cfg.self_radius = 0.3;
    assert_int_equal(lc_ingest(&f, &cfg, &c), 1);
    assert_int_equal(c.dropped_self, 1);
    assert_near(c.world[0].x, 0.2 - 3.0 * cos(0.001), 1e-9);
    lc_cloud_free(&c);
}

static void test_points_height_band(void **state)
{
    double xy[8] = {1, 0, 2, 0, 3, 0, NAN, 1};
    double z[4] = {0.05, 0.5, 2.5, 0.3};
    lc_frame f = {.kind = LC_FRAME_POINTS, .xy = xy, .z = z, .n_points = 4,
                  .pose = {10, 10, 0}};
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    cfg.z_min = 0.1;
    cfg.z_max = 2.0;
    assert_int_equal(lc_ingest(&f, &cfg, &c), 1);
    assert_int_equal(c.dropped_height, 2);
    assert_int_equal(c.dropped_invalid, 1);
    assert_near(c.world[0].x, 12.0, 0);
    assert_false(c.ordered);
    /* Without z the band does not apply. */
    f.z = NULL;
    assert_int_equal(lc_ingest(&f, &cfg, &c), 3);
    lc_cloud_free(&c);
}

static void test_huge_coordinates(void **state)
{
    double r[1] = {5.0};
    lc_frame f = scan_frame(r, 1, 0.0, 0.01);
    f.pose = (lc_pose){1e7, -1e7, 0};
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    assert_int_equal(lc_ingest(&f, &cfg, &c), 1);
    assert_near(c.world[0].x, 1e7 + 5.0, 1e-8);
    lc_cloud_free(&c);
}

/* A depth camera's points span +-40 degrees about a mount turned 90 deg:
 * the frame's view is judged as that sector, its back unseen. */
static void test_points_view_from_bearings(void **state)
{
    double xy[162];
    for (int i = 0; i <= 80; i++) {
        double a = (-40.0 + i) * LC_PI / 180.0;
        xy[2 * i] = 3 * cos(a);
        xy[2 * i + 1] = 3 * sin(a);
    }
    lc_frame f = {.kind = LC_FRAME_POINTS, .xy = xy, .n_points = 81,
                  .mount = {0, 0, LC_PI / 2}};
    lc_cloud c = {0};
    lc_ingest_config cfg = cfg_default();
    assert_int_equal(lc_ingest(&f, &cfg, &c), 81);
    assert_near(c.fov, 81.0 * LC_PI / 180.0, 2.0 * LC_PI / 180.0);
    assert_near(lc_wrap_angle(c.fov_mid - LC_PI / 2), 0.0, 1.5 * LC_PI / 180.0);
    /* Points all around: a full view. */
    for (int i = 0; i <= 80; i++) {
        double a = i * 2 * LC_PI / 81;
        xy[2 * i] = 3 * cos(a);
        xy[2 * i + 1] = 3 * sin(a);
    }
    lc_ingest(&f, &cfg, &c);
    assert_near(c.fov, 2 * LC_PI, 0);
    lc_cloud_free(&c);
}

/* Warm buffers: a second frame of the same size allocates nothing. */
static void test_no_alloc_when_warm(void **state)
{
    double r[100];
    for (int i = 0; i < 100; i++)
        r[i] = 1.0 + 0.01 * i;
    lc_frame f = scan_frame(r, 100, -1, 0.02);
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_cloud c;
    lc_cloud_init(&c, &ca.alloc);
    lc_ingest_config cfg = cfg_default();
    lc_ingest(&f, &cfg, &c);
    long before = ca.calls;
    for (int k = 0; k < 10; k++)
        lc_ingest(&f, &cfg, &c);
    assert_int_equal(ca.calls, before);
    lc_cloud_free(&c);
    assert_int_equal(ca.live, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_scan_transforms),
        cmocka_unit_test(test_scan_drops),
        cmocka_unit_test(test_scan_no_returns),
        cmocka_unit_test(test_self_hits),
        cmocka_unit_test(test_points_height_band),
        cmocka_unit_test(test_huge_coordinates),
        cmocka_unit_test(test_points_view_from_bearings),
        cmocka_unit_test(test_no_alloc_when_warm),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
