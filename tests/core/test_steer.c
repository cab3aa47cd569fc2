/*
 * test_steer.c - the motion policy (steer.h): turning in place, the
 * standoff kept from grown obstacles, sliding, failure handling.
 *
 * References: the rate limit |w - w_last| <= dw_max dt and |w| <= w_max
 * (the robot description's promise, docs/INTERFACES.md); the turn law
 * w = k_alpha alpha (the polar law's heading term with beta = 0, Siegwart,
 * Nourbakhsh, Scaramuzza, Introduction to Autonomous Mobile Robots, 3.6);
 * distances to polygons by closed form (axis-aligned squares).
 */
#include "testutil.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "steer.h"

/* A square box [-h, h]^2 about c as a region (no other lines). */
static lc_halfspace box_h[4];
static lc_region box_region(lc_vec2 c, double h)
{
    box_h[0] = (lc_halfspace){{1, 0}, c.x + h};
    box_h[1] = (lc_halfspace){{0, 1}, c.y + h};
    box_h[2] = (lc_halfspace){{-1, 0}, -(c.x - h)};
    box_h[3] = (lc_halfspace){{0, -1}, -(c.y - h)};
    lc_region r;
    memset(&r, 0, sizeof r);
    r.h = box_h;
    r.nh = 4;
    r.ellipse = (lc_ellipse){h, 0, h, c};
    return r;
}

/* lc_steer_turn_in_place as the session calls it, without obstacles. */
static void turn(const lc_robot *robot, const lc_motion_params *mp, lc_pose pose, lc_vec2 target,
                 const lc_setpoint *last, double dt, lc_setpoint *out)
{
    lc_steer_ws ws;
    lc_steer_ws_init(&ws, NULL);
    lc_steer_input in = {.robot = robot, .params = mp, .pose = pose, .target = target,
                         .last = last, .dt = dt};
    assert_int_equal(lc_steer_turn_in_place(&in, &ws, out), 0);
    lc_steer_ws_free(&ws);
}

static void test_turn_in_place(void **state)
{
    (void)state;
    lc_robot robot;
    lc_robot_default(&robot);
    robot.model = LC_MODEL_UNICYCLE; /* w_max 1.0, dw_max 2.0 */
    lc_motion_params mp;
    lc_motion_params_default(&mp);
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out = lc_setpoint_stop(LC_LIMIT_TOO_CLOSE);
    lc_pose pose = {0, 0, 0};
    /* target to the left: k_alpha * pi/2 is far beyond w_max; from rest the
     * rate limit binds: dw_max * dt */
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0.1, &out);
    assert_near(out.w, 2.0 * 0.1, 1e-12);
    assert_true(out.v == 0 && out.limit == LC_LIMIT_TOO_CLOSE);
    /* from w_last = 0.95 the w_max cap binds */
    last.w = 0.95;
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0.1, &out);
    assert_near(out.w, 1.0, 1e-12);
    /* a small heading error: the law itself, k_alpha * alpha */
    last.w = 0;
    turn(&robot, &mp, pose, lc_v2(1, 0.01), &last, 1.0, &out);
    assert_near(out.w, mp.k_alpha * atan2(0.01, 1), 1e-12);
    /* to the right, from a last w beyond w_max (a lowered description) */
    last.w = 5;
    turn(&robot, &mp, pose, lc_v2(0, -1), &last, 0.1, &out);
    assert_near(out.w, 1.0 - 0.2, 1e-12);
    /* nothing for the point model, a target at the robot, dt <= 0, NaN dt */
    out.w = 42;
    robot.model = LC_MODEL_POINT;
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0.1, &out);
    robot.model = LC_MODEL_UNICYCLE;
    turn(&robot, &mp, pose, lc_v2(0, 0), &last, 0.1, &out);
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0, &out);
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, NAN, &out);
    assert_true(out.w == 42);
}

/* A point robot next to a grown obstacle (closer than the standoff) may
 * slide along it, never come nearer; the region alone would let it. */
static void test_standoff_point(void **state)
{
    (void)state;
    lc_robot robot;
    lc_robot_default(&robot);
    lc_motion_params mp;
    lc_motion_params_default(&mp);
    lc_polyset grown = {0};
    /* a square whose left edge is 0.02 m ahead of the robot */
    const lc_vec2 sq[4] = {{0.02, -1}, {1.02, -1}, {1.02, 1}, {0.02, 1}};
    assert_int_equal(lc_polyset_push(&grown, sq, 4, 0), 0);
    lc_region r = box_region(lc_v2(0, 0), 5);
    /* at rest (a robot already moving at it brakes as hard as it may:
     * motion.h's fallback) */
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
    lc_steer_input in = {.robot = &robot, .params = &mp, .standoff = 0.04, .region = &r,
                         .grown = &grown, .pose = {0, 0, 0}, .target = lc_v2(3, 2),
                         .waypoint = lc_v2(3, 2), .last = &last, .dt = 0.05};
    lc_steer_ws ws = {0};
    assert_int_equal(lc_steer_drive(&in, &ws, &out), 0);
    assert_true(out.vx <= 1e-12); /* no nearer to the obstacle */
    assert_true(out.vy > 0);      /* but along it, toward the target's side */
    /* standoff 0: only the region binds, and it lets the robot go on */
    in.standoff = 0;
    assert_int_equal(lc_steer_drive(&in, &ws, &out), 0);
    assert_true(out.vx > 0);
    /* far from everything the standoff changes nothing */
    in.standoff = 0.04;
    in.pose = (lc_pose){-3, 0, 0};
    in.target = in.waypoint = lc_v2(-3, 3);
    lc_setpoint a, b;
    last = lc_setpoint_stop(LC_LIMIT_NONE);
    assert_int_equal(lc_steer_drive(&in, &ws, &a), 0);
    in.standoff = 0;
    assert_int_equal(lc_steer_drive(&in, &ws, &b), 0);
    assert_true(a.vx == b.vx && a.vy == b.vy && a.limit == b.limit);
    lc_steer_ws_free(&ws);
    lc_polyset_free(&grown);
}

static void *refuse(void *data, void *p, size_t n)
{
    (void)data;
    if (n == 0)
        free(p);
    return NULL;
}

/* Out of memory: -1 and a stop, never a stale velocity. */
static void test_no_memory(void **state)
{
    (void)state;
    lc_robot robot;
    lc_robot_default(&robot);
    lc_motion_params mp;
    lc_motion_params_default(&mp);
    lc_polyset grown = {0};
    const lc_vec2 sq[4] = {{1, -1}, {2, -1}, {2, 1}, {1, 1}};
    lc_polyset_push(&grown, sq, 4, 0);
    lc_region r = box_region(lc_v2(0, 0), 5);
    lc_setpoint last = {.vx = 0.3}, out;
    lc_steer_input in = {.robot = &robot, .params = &mp, .standoff = 0.04, .region = &r,
                         .grown = &grown, .pose = {0, 0, 0}, .target = lc_v2(0, 3),
                         .waypoint = lc_v2(0, 3), .last = &last, .dt = 0.05};
    lc_alloc none = {refuse, NULL};
    lc_steer_ws ws;
    lc_steer_ws_init(&ws, &none);
    assert_int_equal(lc_steer_drive(&in, &ws, &out), -1);
    assert_true(out.vx == 0 && out.vy == 0 && out.limit == LC_LIMIT_NONE);
    lc_polyset_free(&grown);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_turn_in_place),
        cmocka_unit_test(test_standoff_point),
        cmocka_unit_test(test_no_memory),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
