/*
 * test_view.c - the lines the sensor's view puts round the region
 * (src/core/view.c): a scanner's blind sector and the view wedge of a robot
 * that slides sideways. Outside references: the closed form of the wedge
 * with the sensor at the centre (half angle fov/2 - pi/2, view.h) and a
 * brute-force sweep of the footprint over sampled discs, not the module's
 * own algebra. Random mounts and views use fixed seeds. Degenerate input:
 * no view, a full view, NaN and negative values.
 */
#include "testutil.h"

#include <stdbool.h>

#include "view.h"

/* A 270 degree scanner looking +x: one line through the centre bounds the
 * blind cone behind it; the region lies on the seen side. */
static void test_blind_sector(void **state)
{
    lc_halfspace b[2];
    int n = lc_region_blind_lines(lc_v2(0, 0), 1.5 * LC_PI, 0.0, false, lc_v2(0, 0), b);
    assert_int_equal(n, 1);
    assert_near(b[0].a.x, -1.0, 1e-12); /* normal toward the blind axis (-x) */
    assert_near(b[0].b, 0.0, 1e-12);
    /* With a waypoint behind-left, the line tilts to leave room toward it but
     * still has the whole blind cone (angles 135..225 deg) outside. */
    n = lc_region_blind_lines(lc_v2(0, 0), 1.5 * LC_PI, 0.0, true, lc_v2(-3, 3), b);
    assert_int_equal(n, 1);
    for (int k = 0; k <= 20; k++) {
        lc_vec2 u = lc_unit_angle(0.75 * LC_PI + 0.5 * LC_PI * k / 20.0);
        assert_true(lc_dot(b[0].a, u) >= -1e-12);
    }
    /* A 120 degree view: the two edges of the seen cone. */
    n = lc_region_blind_lines(lc_v2(1, 1), 2.0 * LC_PI / 3, LC_PI / 2, false, lc_v2(0, 0), b);
    assert_int_equal(n, 2);
    lc_vec2 ahead = lc_v2(1, 3);
    assert_true(lc_dot(b[0].a, ahead) <= b[0].b && lc_dot(b[1].a, ahead) <= b[1].b);
    lc_vec2 side = lc_v2(3, 1);
    assert_false(lc_dot(b[0].a, side) <= b[0].b && lc_dot(b[1].a, side) <= b[1].b);
    /* Full view: nothing. */
    assert_int_equal(lc_region_blind_lines(lc_v2(0, 0), 2 * LC_PI, 0, false, lc_v2(0, 0), b), 0);
}

/* Does the disc of radius r swept from c along u (over [0, len]) cover a
 * point the sensor at o (view fov about view_mid) does not see, outside
 * the disc at c? Brute force over the swept discs' boundaries. */
static bool sweep_touches_unseen(lc_vec2 c, lc_vec2 u, double len, lc_vec2 o, double fov,
                                 double view_mid, double r)
{
    for (int i = 0; i <= 60; i++) {
        lc_vec2 at = lc_add(c, lc_scale(u, len * i / 60.0));
        for (int k = 0; k < 360; k++) {
            lc_vec2 q = lc_add(at, lc_scale(lc_unit_angle(2 * LC_PI * k / 360.0), r));
            if (lc_dist(q, c) <= r + 1e-9)
                continue;
            lc_vec2 d = lc_sub(q, o);
            double off = lc_wrap_angle(atan2(d.y, d.x) - view_mid);
            if (fabs(off) > 0.5 * fov + 1e-9)
                return true;
        }
    }
    return false;
}

static bool in_wedge(const lc_halfspace b[2], lc_vec2 c, lc_vec2 u)
{
    lc_vec2 p = lc_add(c, u);
    return lc_dot(b[0].a, p) <= b[0].b + 1e-12 && lc_dot(b[1].a, p) <= b[1].b + 1e-12;
}

/*
 * The view wedge of a robot that slides sideways. Closed form (region.h):
 * with the sensor at the centre the wedge's half angle is fov/2 - pi/2.
 * Then, on random mounts and views, a brute-force sweep of the footprint
 * (not the module's own algebra): no direction inside the wedge reaches
 * unseen space beyond the robot's own disc, and directions 2 degrees
 * outside do (unless the wedge is already a half plane).
 */
static void test_view_wedge(void **state)
{
    lc_halfspace b[2];
    lc_vec2 c = lc_v2(1, -2);
    for (int k = 0; k < 3; k++) {
        double fov = (double[]){1.5 * LC_PI, 5.0 * LC_PI / 3.0, 1.2 * LC_PI}[k];
        double half = 0.5 * fov - 0.5 * LC_PI, mid = 0.3;
        assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), fov, mid, 0.3, b), 2);
        assert_true(in_wedge(b, c, lc_unit_angle(mid + half - 1e-6)));
        assert_true(in_wedge(b, c, lc_unit_angle(mid - half + 1e-6)));
        assert_false(in_wedge(b, c, lc_unit_angle(mid + half + 1e-6)));
        assert_false(in_wedge(b, c, lc_unit_angle(mid - half - 1e-6)));
        /* the robot centre is on both lines */
        assert_near(lc_dot(b[0].a, c), b[0].b, 1e-12);
        assert_near(lc_dot(b[1].a, c), b[1].b, 1e-12);
    }
    lc_rng rng;
    lc_rng_seed(&rng, 4711);
    for (int t = 0; t < 40; t++) {
        double r = lc_rng_uniform(&rng, 0.15, 0.5), fov = lc_rng_uniform(&rng, 1.05, 1.95) * LC_PI;
        double mid = lc_rng_uniform(&rng, -LC_PI, LC_PI);
        lc_vec2 o = lc_scale(lc_unit_angle(lc_rng_uniform(&rng, -LC_PI, LC_PI)),
                             lc_rng_uniform(&rng, 0, 0.8 * r));
        int n = lc_region_view_wedge(c, o, fov, mid, r, b);
        assert_true(n == 2 || n == LC_ERR_DEGENERATE);
        if (n < 0)
            continue;
        for (int k = 0; k < 72; k++) {
            lc_vec2 u = lc_unit_angle(2 * LC_PI * k / 72.0);
            if (in_wedge(b, c, u))
                assert_false(sweep_touches_unseen(c, u, 3.0, lc_add(c, o), fov, mid, r));
        }
        for (int side = 0; side < 2; side++) {
            /* the wedge edge direction of line `side`, 2 degrees further out */
            lc_vec2 edge = side == 0 ? lc_v2(-b[0].a.y, b[0].a.x) : lc_v2(b[1].a.y, -b[1].a.x);
            double ang = atan2(edge.y, edge.x) + (side == 0 ? 1 : -1) * 2.0 * LC_PI / 180;
            if (fabs(lc_wrap_angle(atan2(edge.y, edge.x) - mid)) < 0.5 * LC_PI - 1e-6)
                assert_true(sweep_touches_unseen(c, lc_unit_angle(ang), 3.0, lc_add(c, o), fov,
                                                 mid, r));
        }
    }
    /* A full view needs no wedge; a narrow view, or a sensor ahead of the
     * footprint, leaves no qualifying direction (callers fall back). */
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), 2 * LC_PI, 0, 0.3, b), 0);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), 0.9 * LC_PI, 0, 0.3, b),
                     LC_ERR_DEGENERATE);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0.5, 0), 1.5 * LC_PI, 0, 0.3, b),
                     LC_ERR_DEGENERATE);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(NAN, 0), 1.5 * LC_PI, 0, 0.3, b),
                     LC_ERR_BAD_INPUT);
}

/* No view, a full view, and bad numbers: no lines, or the fallback. */
static void test_view_degenerate(void **state)
{
    lc_halfspace b[2];
    lc_vec2 c = lc_v2(0, 0);
    assert_int_equal(lc_region_blind_lines(c, 0.0, 0, false, c, b), 0);
    assert_int_equal(lc_region_blind_lines(c, -1.0, 0, false, c, b), 0);
    assert_int_equal(lc_region_blind_lines(c, NAN, 0, false, c, b), 0);
    assert_int_equal(lc_region_blind_lines(c, 7.0, 0, false, c, b), 0);
    /* a waypoint on the centre: the line is perpendicular to the blind axis */
    assert_int_equal(lc_region_blind_lines(c, 1.5 * LC_PI, 0, true, c, b), 1);
    assert_near(b[0].a.x, -1.0, 1e-12);
    /* a view of exactly pi: the two edges of the seen half plane coincide */
    assert_int_equal(lc_region_blind_lines(c, LC_PI, 0, false, c, b), 2);
    assert_near(b[0].a.x, -1.0, 1e-12);
    assert_near(b[1].a.x, -1.0, 1e-12);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), NAN, 0, 0.3, b), 0);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), 1.5 * LC_PI, 0, -0.1, b),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), 1.5 * LC_PI, 0, NAN, b),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, INFINITY), 1.5 * LC_PI, 0, 0.3, b),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_region_view_wedge(c, lc_v2(0, 0), LC_PI, 0, 0.3, b), LC_ERR_DEGENERATE);
    /* a sensor on the footprint's edge, looking out: still a wedge */
    assert_int_equal(lc_region_view_wedge(c, lc_v2(-0.3, 0), 1.5 * LC_PI, 0, 0.3, b), 2);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_blind_sector),
        cmocka_unit_test(test_view_wedge),
        cmocka_unit_test(test_view_degenerate),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
