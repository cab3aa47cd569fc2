/*
 * test_control.c - the frame driver's dt rule (control.h),
 * lc_session_drive / lc_session_stop, and the turn the driven steps keep
 * (lc_motion_keep_turning, motion.h).
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
 *
 * Frames stamped alike (session.h): the reply to the second is compared
 * with a second session that never saw the first (the same frames before
 * it), bit for bit; the rate limit over the instant against a_max dt once
 * (the point model's acceleration bound, robot.h). The keep-turning rule
 * against its statement in motion.h, on a table and on random angles.
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

/* A scan with one return per beam at `range` over the beams [lo, hi) (a
 * wall's worth of returns to one side), none elsewhere. */
static lc_frame side_scan(int64_t seq, double stamp, double *ranges, int n, int lo, int hi,
                          double range)
{
    lc_frame f = empty_scan(seq, stamp, ranges, n);
    for (int i = lo; i < hi; i++)
        ranges[i] = range;
    return f;
}

static lc_session *driven_session(bool memory)
{
    lc_robot robot;
    lc_robot_default(&robot); /* point model, a_max 0.5 */
    lc_plan_config cfg;
    lc_plan_config_default(&cfg);
    cfg.memory.enabled = memory;
    cfg.guide.enabled = memory;
    lc_session *s = lc_session_new(&robot, &cfg, NULL);
    assert_non_null(s);
    lc_session_set_goal(s, lc_v2(5, 0));
    lc_control c;
    lc_control_default(&c);
    lc_session_set_control(s, &c);
    return s;
}

static bool same_reply(const lc_reply *a, const lc_reply *b)
{
    return a->seq == b->seq && a->stamp == b->stamp && a->model == b->model &&
           a->sp.vx == b->sp.vx && a->sp.vy == b->sp.vy && a->sp.v == b->sp.v &&
           a->sp.w == b->sp.w && a->sp.limit == b->sp.limit && a->state == b->state &&
           a->waypoint == b->waypoint;
}

/*
 * Two frames at one instant (session.h): the second revises the reply to
 * the first, starting from the velocity and with the period the first had.
 * Session one drives F0, F1, A, A' (A and A' stamped alike, A' with a wall
 * to the left); session two drives F0, F1, A' alone: the replies to A' are
 * the same, bit for bit. The speed-up over the instant is a_max dt once
 * (0.5 x 0.1), not twice; a third frame at the instant revises again from
 * the same start. Memory off: what A adds to the memory is not the rule.
 */
static void test_same_instant(void **state)
{
    (void)state;
    lc_session *s1 = driven_session(false), *s2 = driven_session(false);
    double ranges[360], wall[360];
    lc_plan_result res;
    lc_reply r1, r2, ra;
    lc_frame f = empty_scan(1, 100.0, ranges, 360);
    lc_session_drive(s1, &f, &res, &r1);
    lc_session_drive(s2, &f, &res, &r2);
    f = empty_scan(2, 100.1, ranges, 360);
    lc_session_drive(s1, &f, &res, &r1);
    lc_session_drive(s2, &f, &res, &r2);
    assert_true(same_reply(&r1, &r2));
    double v1 = r1.sp.vx;
    f = empty_scan(3, 100.2, ranges, 360);
    lc_session_drive(s1, &f, &res, &ra);
    assert_near(ra.sp.vx - v1, 0.5 * 0.1, 1e-9); /* A alone: a_max dt */
    lc_frame a2 = side_scan(4, 100.2, wall, 360, 200, 280, 1.5);
    assert_int_equal(lc_session_drive(s1, &a2, &res, &r1), 0);
    assert_int_equal(lc_session_drive(s2, &a2, &res, &r2), 0);
    assert_true(same_reply(&r1, &r2));
    assert_true(hypot(r1.sp.vx - v1, r1.sp.vy) <= 0.5 * 0.1 + 1e-9); /* once, not twice */
    assert_true(r1.sp.vx > v1);
    /* a third at the same instant: from the same start again */
    f = empty_scan(5, 100.2, ranges, 360);
    lc_session_drive(s1, &f, &res, &r1);
    assert_true(r1.sp.vx == ra.sp.vx && r1.sp.vy == ra.sp.vy);
    /* the next instant starts from the last revision's setpoint */
    f = empty_scan(6, 100.3, ranges, 360);
    lc_session_drive(s1, &f, &res, &r2);
    assert_near(r2.sp.vx - r1.sp.vx, 0.5 * 0.1, 1e-9);
    lc_session_free(s1);
    lc_session_free(s2);
}

/* The same with the memory and guidance on (the default session): the
 * same frame twice at one instant (a sensor that repeats itself) gives the
 * same reply twice, and the speed-up over the instant stays a_max dt. */
static void test_same_instant_with_memory(void **state)
{
    (void)state;
    lc_session *s = driven_session(true);
    double ranges[360];
    lc_plan_result res;
    lc_reply r0, r1, r2;
    lc_frame f = side_scan(1, 50.0, ranges, 360, 200, 280, 1.5);
    lc_session_drive(s, &f, &res, &r0);
    f.seq = 2;
    f.stamp = 50.1;
    lc_session_drive(s, &f, &res, &r1);
    f.seq = 3;
    lc_session_drive(s, &f, &res, &r2);
    assert_true(r1.sp.vx == r2.sp.vx && r1.sp.vy == r2.sp.vy && r1.sp.limit == r2.sp.limit);
    assert_int_equal(r2.seq, 3);
    assert_true(hypot(r2.sp.vx - r0.sp.vx, r2.sp.vy - r0.sp.vy) <= 0.5 * 0.1 + 1e-9);
    lc_session_free(s);
}

/*
 * Stamps going back (control.h): the period is dt_min (0.005 s), so the
 * speed-up is a_max dt_min; with the simulator's rule (dt_min 0) first_dt.
 * After lc_session_stop the next frame starts from rest, even one stamped
 * like the last driven frame (a stop is not a frame to revise): from 0 by
 * a_max dt_min.
 */
static void test_stamps_back_and_stop(void **state)
{
    (void)state;
    lc_session *s = driven_session(false);
    double ranges[360];
    lc_plan_result res;
    lc_reply r0, r1;
    lc_frame f = empty_scan(1, 100.0, ranges, 360);
    lc_session_drive(s, &f, &res, &r0);
    f = empty_scan(2, 100.1, ranges, 360);
    lc_session_drive(s, &f, &res, &r0);
    f = empty_scan(3, 100.05, ranges, 360); /* back in time */
    lc_session_drive(s, &f, &res, &r1);
    assert_near(r1.sp.vx - r0.sp.vx, 0.5 * 0.005, 1e-12);
    f = empty_scan(4, 100.15, ranges, 360); /* from 100.05: 0.1 s */
    lc_session_drive(s, &f, &res, &r0);
    assert_near(r0.sp.vx - r1.sp.vx, 0.5 * 0.1, 1e-9);

    lc_session_stop(s, LC_STATE_STALE, LC_LIMIT_STALE, NULL);
    f = empty_scan(5, 100.15, ranges, 360); /* the stopped frame's stamp */
    lc_session_drive(s, &f, &res, &r1);
    assert_near(r1.sp.vx, 0.5 * 0.005, 1e-12);
    assert_near(r1.sp.vy, 0, 1e-12);
    lc_session_free(s);

    lc_control sim;
    lc_control_stamps(&sim, 0.04);
    s = driven_session(false);
    lc_session_set_control(s, &sim);
    f = empty_scan(1, 10.0, ranges, 360);
    lc_session_drive(s, &f, &res, &r0);
    assert_near(r0.sp.vx, 0.5 * 0.04, 1e-12); /* first_dt */
    f = empty_scan(2, 9.0, ranges, 360);
    lc_session_drive(s, &f, &res, &r1);
    assert_near(r1.sp.vx - r0.sp.vx, 0.5 * 0.04, 1e-12); /* back: first_dt */
    lc_session_free(s);
}

/*
 * lc_motion_keep_turning (motion.h): a target within LC_MOTION_TURN_KEEP
 * of straight behind, on the other side from the way the robot turns
 * (|w0| > 1e-3), is turned to that way (alpha -/+ 2 pi, the same
 * direction); anywhere else, and when the robot does not turn, alpha as
 * given. A table at the band's edges, then random angles (fixed seed): the
 * direction is always the same one.
 */
static void test_keep_turning(void **state)
{
    (void)state;
    const double pi = LC_PI, k = LC_MOTION_TURN_KEEP;
    const struct {
        double alpha, w0, want;
    } table[] = {
        {pi - 0.3, -0.5, pi - 0.3 - 2 * pi},   /* behind on the left, turning right */
        {-(pi - 0.3), 0.5, -(pi - 0.3) + 2 * pi},
        {pi - 0.3, 0.5, pi - 0.3},             /* already turning that way */
        {-(pi - 0.3), -0.5, -(pi - 0.3)},
        {pi - 0.3, 0.0, pi - 0.3},             /* not turning */
        {pi - 0.3, -1e-3, pi - 0.3},           /* |w0| at the threshold */
        {pi - 0.3, -2e-3, pi - 0.3 - 2 * pi},
        {pi - k, -0.5, pi - k},                /* the band's edge: outside */
        {pi - k + 1e-9, -0.5, pi - k + 1e-9 - 2 * pi},
        {pi - 0.6, -0.5, pi - 0.6},            /* outside the band */
        {0.2, -0.5, 0.2},
        {pi, -0.5, -pi},
        {-pi, 0.5, pi},
    };
    for (size_t i = 0; i < sizeof table / sizeof table[0]; i++)
        assert_true(lc_motion_keep_turning(table[i].alpha, table[i].w0) == table[i].want);
    lc_rng rng;
    lc_rng_seed(&rng, 3);
    for (int t = 0; t < 20000; t++) {
        double alpha = lc_rng_uniform(&rng, -pi, pi), w0 = lc_rng_uniform(&rng, -2, 2);
        double got = lc_motion_keep_turning(alpha, w0);
        /* the same direction */
        assert_near(cos(got), cos(alpha), 1e-12);
        assert_near(sin(got), sin(alpha), 1e-12);
        bool band = fabs(alpha) > pi - k && fabs(w0) > 1e-3 && alpha * w0 < 0;
        if (band) {
            assert_true(got * w0 > 0); /* turned the way the robot turns */
            assert_true(fabs(got) < pi + k);
        } else {
            assert_true(got == alpha);
        }
    }
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
        cmocka_unit_test(test_same_instant),
        cmocka_unit_test(test_same_instant_with_memory),
        cmocka_unit_test(test_stamps_back_and_stop),
        cmocka_unit_test(test_keep_turning),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
