/*
 * test_control.c - the frame driver's dt rule (control.h) and
 * lc_session_drive / lc_session_stop.
 *
 * The reference for the dt rule is the two rules it replaced, written out
 * here as they stood: lacuna serve's (a fixed period, else the stamp
 * difference with anything below dt_min raised to dt_min and anything above
 * dt_max cut to dt_max, the first frame 0.05 s) and the simulator's (the
 * stamp difference when it is positive and finite, else the first frame's
 * period 1 / rate). Every recording made before must step exactly as it
 * did, so the comparison is exact (==), on a table of edge cases and on
 * random stamps with a fixed seed.
 *
 * valid_ms (control.h) is checked against its rule written out, on a table
 * of edge cases and random periods, and through the driver: every reply
 * carries the valid_ms of its own step, and a stop the one it replaces.
 */
#include "testutil.h"

#include <math.h>
#include <string.h>

#include "control.h"
#include "session.h"

static double server_rule(double period, double lo, double hi, bool first, double prev,
                          double stamp)
{
    if (period > 0)
        return period;
    double dt = first ? 0.05 : stamp - prev;
    if (!(dt >= lo))
        dt = lo;
    return dt > hi ? hi : dt;
}

static double sim_rule(bool first, double prev, double stamp, double first_dt)
{
    double dt = stamp - prev;
    return !first && isfinite(dt) && dt > 0 ? dt : first_dt;
}

static void test_defaults(void **state)
{
    (void)state;
    lc_control c;
    lc_control_default(&c);
    assert_true(c.period == 0 && c.dt_min == 0.005 && c.dt_max == 0.2 && c.first_dt == 0.05);
    assert_int_equal(c.watchdog_ms, 200);
    lc_control_stamps(&c, 0.025);
    assert_true(c.period == 0 && c.dt_min == 0 && isinf(c.dt_max) && c.first_dt == 0.025);
}

static void test_table(void **state)
{
    (void)state;
    lc_control srv;
    lc_control_default(&srv);
    const double cases[][2] = {
        {0.0, 0.05},   {0.0, 0.0},    {1.0, 0.5},  {1.0, 1.0001}, {1.0, 1.003},
        {1.0, 1.5},    {1e6, 1e6 + 0.02}, {5.0, -5.0}, {0.3, 0.3 + 1e-12},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double prev = cases[i][0], stamp = cases[i][1];
        for (int first = 0; first < 2; first++) {
            assert_true(lc_control_dt(&srv, first, prev, stamp) ==
                        server_rule(0, 0.005, 0.2, first, prev, stamp));
            lc_control sim;
            lc_control_stamps(&sim, 1.0 / 20);
            assert_true(lc_control_dt(&sim, first, prev, stamp) ==
                        sim_rule(first, prev, stamp, 1.0 / 20));
        }
    }
    srv.period = 0.01; /* a fixed period wins over everything */
    assert_true(lc_control_dt(&srv, true, 0, 0) == 0.01);
    assert_true(lc_control_dt(&srv, false, 3, 2) == 0.01);
}

/* Random stamps (fixed seed): both old rules reproduced exactly. */
static void test_random(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 7);
    for (int i = 0; i < 20000; i++) {
        double prev = lc_rng_uniform(&rng, -10, 1e5);
        double d = lc_rng_uniform(&rng, -0.5, 0.5);
        if (i % 7 == 0)
            d = 0;
        double stamp = prev + d;
        double lo = lc_rng_uniform(&rng, 1e-4, 0.05), hi = lo + lc_rng_uniform(&rng, 0, 1);
        lc_control srv = {0, lo, hi, 0.05, 200};
        bool first = i % 13 == 0;
        assert_true(lc_control_dt(&srv, first, prev, stamp) ==
                    server_rule(0, lo, hi, first, prev, stamp));
        double rate = lc_rng_uniform(&rng, 1, 100);
        lc_control sim;
        lc_control_stamps(&sim, 1.0 / rate);
        assert_true(lc_control_dt(&sim, first, prev, stamp) ==
                    sim_rule(first, prev, stamp, 1.0 / rate));
    }
}

/* valid_ms: two periods, at most the watchdog, at least 1 ms. */
static void test_valid_ms(void **state)
{
    (void)state;
    lc_control srv, sim;
    lc_control_default(&srv); /* watchdog 200 ms */
    lc_control_stamps(&sim, 0.05); /* no watchdog */
    const struct {
        double dt;
        int srv, sim;
    } cases[] = {
        {0.05, 100, 100},   {0.025, 50, 50},  {0.1, 200, 200},   {0.2, 200, 400},
        {1.0, 200, 2000},   {0.005, 10, 10},  {0.0004, 1, 1},    {0.0, 1, 1},
        {-1.0, 1, 1},       {NAN, 1, 1},      {INFINITY, 200, LC_VALID_MS_MAX},
        {0.0333, 67, 67},   {1e12, 200, LC_VALID_MS_MAX},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        if (lc_control_valid_ms(&srv, cases[i].dt) != cases[i].srv ||
            lc_control_valid_ms(&sim, cases[i].dt) != cases[i].sim)
            fail_msg("dt %g: valid_ms %d and %d, want %d and %d", cases[i].dt,
                     lc_control_valid_ms(&srv, cases[i].dt), lc_control_valid_ms(&sim, cases[i].dt),
                     cases[i].srv, cases[i].sim);
    }
    lc_rng rng;
    lc_rng_seed(&rng, 11);
    for (int i = 0; i < 20000; i++) {
        lc_control c = srv;
        c.watchdog_ms = (int)lc_rng_uniform(&rng, 0, 1000);
        double dt = lc_rng_uniform(&rng, 0, 1);
        int ms = lc_control_valid_ms(&c, dt), two = (int)lround(2000.0 * dt);
        int want = c.watchdog_ms > 0 && two > c.watchdog_ms ? c.watchdog_ms : two;
        assert_int_equal(ms, want < 1 ? 1 : want);
    }
}

/* An empty scan (no return) at stamp t: the robot is free to move. */
static lc_frame empty_scan(int64_t seq, double stamp, double *ranges, int n)
{
    for (int i = 0; i < n; i++)
        ranges[i] = NAN;
    return (lc_frame){.kind = LC_FRAME_SCAN, .seq = seq, .stamp = stamp,
                      .angle_start = -LC_PI, .angle_step = 2 * LC_PI / n,
                      .range_min = 0.05, .range_max = 10, .ranges = ranges, .n_ranges = n};
}

/*
 * The driver: seq, stamp, model, state and waypoint echoed; the step's dt
 * bounds the speed-up (a_max dt from rest); after lc_session_stop the next
 * frame starts from rest again; the stop reply echoes the last frame.
 */
static void test_drive_and_stop(void **state)
{
    (void)state;
    lc_robot robot;
    lc_robot_default(&robot); /* point model, a_max 0.5 */
    lc_session *s = lc_session_new(&robot, NULL, NULL);
    assert_non_null(s);
    lc_session_set_goal(s, lc_v2(5, 0));
    lc_control c;
    lc_control_default(&c);
    lc_session_set_control(s, &c);
    double ranges[360];
    lc_plan_result res;
    lc_reply rep;
    lc_frame f = empty_scan(10, 100.0, ranges, 360);
    assert_int_equal(lc_session_drive(s, &f, &res, &rep), 0);
    assert_int_equal(rep.seq, 10);
    assert_true(rep.stamp == 100.0);
    assert_int_equal(rep.model, LC_MODEL_POINT);
    assert_int_equal(rep.state, LC_STATE_TRACKING);
    assert_int_equal(rep.waypoint, 0);
    /* first frame: dt = first_dt 0.05, so at most a_max * 0.05 from rest */
    assert_true(hypot(rep.sp.vx, rep.sp.vy) <= 0.5 * 0.05 + 1e-12);
    assert_true(rep.sp.vx > 0);
    assert_int_equal(rep.valid_ms, 100); /* two periods of 0.05 s */
    double v1 = rep.sp.vx;
    f = empty_scan(11, 100.1, ranges, 360); /* dt 0.1 */
    lc_session_drive(s, &f, &res, &rep);
    assert_near(rep.sp.vx - v1, 0.5 * 0.1, 1e-9);
    assert_int_equal(rep.valid_ms, 200);
    f = empty_scan(12, 100.1, ranges, 360); /* the same instant: a revision, the same dt */
    lc_session_drive(s, &f, &res, &rep);
    assert_int_equal(rep.valid_ms, 200);

    lc_reply stop;
    lc_session_stop(s, LC_STATE_STALE, LC_LIMIT_STALE, &stop);
    assert_int_equal(stop.seq, 12);
    assert_true(stop.stamp == 100.1);
    assert_int_equal(stop.valid_ms, 200); /* the valid_ms of the reply it replaces */
    assert_int_equal(stop.state, LC_STATE_STALE);
    assert_int_equal(stop.sp.limit, LC_LIMIT_STALE);
    assert_true(stop.sp.vx == 0 && stop.sp.vy == 0);
    assert_int_equal(stop.waypoint, 0);
    /* after the stop the robot is at rest: the speed-up starts from 0 */
    f = empty_scan(13, 100.15, ranges, 360); /* dt 0.05 */
    lc_session_drive(s, &f, &res, &rep);
    assert_true(rep.sp.vx <= 0.5 * 0.05 + 1e-12);
    assert_int_equal(rep.valid_ms, 100);
    /* the server's last stop: its own state, not idle (no route) */
    lc_session_stop(s, LC_STATE_SHUTDOWN, LC_LIMIT_NONE, &stop);
    assert_int_equal(stop.state, LC_STATE_SHUTDOWN);
    assert_string_equal(lc_state_name(stop.state), "shutdown");
    assert_int_equal(stop.sp.limit, LC_LIMIT_NONE);
    assert_true(stop.sp.vx == 0 && stop.sp.vy == 0);
    assert_int_equal(stop.seq, 13);
    lc_session_free(s);
}

/* Before any frame the stop reply says so: seq -1, no waypoint. */
static void test_stop_before_frames(void **state)
{
    (void)state;
    lc_session *s = lc_session_new(NULL, NULL, NULL);
    lc_reply stop;
    lc_session_stop(s, LC_STATE_IDLE, LC_LIMIT_IDLE, &stop);
    assert_int_equal(stop.seq, -1);
    assert_int_equal(stop.waypoint, -1);
    assert_int_equal(stop.state, LC_STATE_IDLE);
    assert_int_equal(stop.valid_ms, 100); /* the first frame's period, 0.05 s, twice */
    lc_session_stop(s, LC_STATE_STALE, LC_LIMIT_STALE, NULL); /* no reply wanted */
    lc_session_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_defaults),
        cmocka_unit_test(test_table),
        cmocka_unit_test(test_random),
        cmocka_unit_test(test_valid_ms),
        cmocka_unit_test(test_drive_and_stop),
        cmocka_unit_test(test_stop_before_frames),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
