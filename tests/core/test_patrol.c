/*
 * test_patrol.c - progress along a route: arrival, end of route, laps,
 * blocked detection and the two blocked policies.
 *
 * The reference is the behaviour docs/INTERFACES.md fixes (states, the blocked rule
 * "the distance to the current waypoint has not shrunk by the progress
 * threshold over the blocked time, by frame stamps", hold or skip) and its
 * defaults; scripted runs with hand-computed event sequences, guided
 * progress along a path included.
 */
#include "testutil.h"

#include <string.h>

#include "patrol.h"

typedef struct run {
    lc_patrol patrol;
    lc_route route;
    lc_event events[LC_PATROL_MAX_EVENTS];
    int n;
} run;

static void run_init(run *r, const lc_vec2 *wps, int n, bool loop, lc_blocked_policy pol)
{
    lc_route_default(&r->route);
    if (n > 0)
        memcpy(r->route.waypoints, wps, sizeof wps[0] * n);
    r->route.count = n;
    r->route.loop = loop;
    r->route.on_blocked = pol;
    lc_patrol_reset(&r->patrol);
}

/* One frame with the target equal to the waypoint (nothing in the way). */
static lc_state frame(run *r, lc_vec2 pos, lc_vec2 target, double stamp)
{
    r->n = 0;
    return lc_patrol_update(&r->patrol, &r->route, pos, target, stamp, r->events, &r->n);
}

static lc_state frame_free(run *r, lc_vec2 pos, double stamp)
{
    lc_vec2 wp = pos;
    lc_patrol_waypoint(&r->patrol, &r->route, &wp);
    return frame(r, pos, wp, stamp);
}

static void expect_events(const run *r, const lc_event_kind *kinds, const int *wps, int n)
{
    assert_int_equal(r->n, n);
    for (int i = 0; i < n; i++) {
        assert_int_equal(r->events[i].kind, kinds[i]);
        assert_int_equal(r->events[i].waypoint, wps[i]);
    }
}

static void test_names_and_defaults(void **state)
{
    (void)state;
    /* docs/INTERFACES.md `state` values */
    static const char *const st[] = {"idle", "tracking", "arrived", "done",
                                     "blocked", "stale", "too_close", "shutdown"};
    for (int i = 0; i < LC_STATE_COUNT; i++)
        assert_string_equal(lc_state_name((lc_state)i), st[i]);
    assert_string_equal(lc_state_name(LC_STATE_COUNT), "unknown");
    /* patrol.h's event names */
    static const char *const ev[] = {"waypoint_reached", "route_done", "blocked",
                                     "unblocked", "waypoint_skipped", "lap"};
    for (int i = 0; i < LC_EVENT_COUNT; i++)
        assert_string_equal(lc_event_name((lc_event_kind)i), ev[i]);
    assert_string_equal(lc_event_name((lc_event_kind)-3), "unknown");

    /* docs/INTERFACES.md defaults: route loop false, tolerance 0.25; blocked time 10 s */
    lc_route route;
    lc_route_default(&route);
    assert_int_equal(route.count, 0);
    assert_false(route.loop);
    assert_near(route.tolerance, 0.25, 0);
    assert_int_equal(route.on_blocked, LC_BLOCKED_WAIT);
    assert_near(route.blocked_time, 10.0, 0);
    assert_near(route.progress, 0.10, 0);
    /* docs/INTERFACES.md robot defaults: point, 0.30, 0.05, 0.8, 0.5, 1.0, 2.0 */
    lc_robot robot;
    lc_robot_default(&robot);
    assert_int_equal(robot.model, LC_MODEL_POINT);
    assert_near(robot.radius, 0.30, 0);
    assert_near(robot.margin, 0.05, 0);
    assert_near(robot.v_max, 0.8, 0);
    assert_near(robot.a_max, 0.5, 0);
    assert_near(robot.w_max, 1.0, 0);
    assert_near(robot.dw_max, 2.0, 0);
    assert_false(robot.reverse);
    assert_near(lc_robot_clearance(&robot), 0.35, 1e-15);
}

static void test_empty_route(void **state)
{
    (void)state;
    run r;
    run_init(&r, NULL, 0, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame(&r, lc_v2(0, 0), lc_v2(0, 0), 0.0), LC_STATE_IDLE);
    assert_int_equal(r.n, 0);
    lc_vec2 wp;
    assert_false(lc_patrol_waypoint(&r.patrol, &r.route, &wp));
    int n = 0;
    assert_int_equal(lc_patrol_update(&r.patrol, NULL, lc_v2(0, 0), lc_v2(0, 0), 0, r.events, &n),
                     LC_STATE_IDLE);
    assert_false(lc_patrol_waypoint(&r.patrol, NULL, &wp));
}

/* Drive along three waypoints at 0.5 m per frame: tracking, arrived x3, done. */
static void test_route_done(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{2, 0}, {2, 2}, {0, 2}};
    run r;
    run_init(&r, wps, 3, false, LC_BLOCKED_WAIT);
    lc_vec2 pos = {0, 0};
    double stamp = 0;
    int arrivals = 0, frames = 0;
    lc_state last = LC_STATE_IDLE;
    while (frames++ < 100) {
        lc_vec2 wp;
        bool has = lc_patrol_waypoint(&r.patrol, &r.route, &wp);
        lc_state s = frame(&r, pos, has ? wp : pos, stamp);
        if (s == LC_STATE_ARRIVED) {
            assert_int_equal(r.events[0].kind, LC_EVENT_REACHED);
            assert_int_equal(r.events[0].waypoint, arrivals);
            assert_near(r.events[0].stamp, stamp, 0);
            arrivals++;
            if (arrivals == 3) {
                /* the last arrival also ends the route */
                const lc_event_kind k[] = {LC_EVENT_REACHED, LC_EVENT_DONE};
                const int w[] = {2, 2};
                expect_events(&r, k, w, 2);
            } else {
                assert_int_equal(r.n, 1);
            }
        } else if (s == LC_STATE_DONE) {
            assert_int_equal(r.n, 0);
            last = s;
            break;
        } else {
            assert_int_equal(s, LC_STATE_TRACKING);
            assert_int_equal(r.n, 0);
        }
        if (has) {
            lc_vec2 d = lc_sub(wp, pos);
            double l = lc_len(d);
            pos = l <= 0.5 ? wp : lc_add(pos, lc_scale(d, 0.5 / l));
        }
        stamp += 0.1;
    }
    assert_int_equal(arrivals, 3);
    assert_int_equal(last, LC_STATE_DONE);
    assert_true(r.patrol.done);
    lc_vec2 wp;
    assert_false(lc_patrol_waypoint(&r.patrol, &r.route, &wp));
    /* stays done, no more events */
    assert_int_equal(frame_free(&r, lc_v2(9, 9), stamp + 50), LC_STATE_DONE);
    assert_int_equal(r.n, 0);
}

static void test_tolerance_boundary(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{1, 0}, {5, 0}};
    run r;
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    /* 0.26 away: not yet; exactly 0.25 (0.75 is exact in binary): arrived */
    assert_int_equal(frame_free(&r, lc_v2(0.74, 0), 0), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(0.75, 0), 0.1), LC_STATE_ARRIVED);
    assert_int_equal(r.patrol.current, 1);
    /* a waypoint at the start is reached on the first frame */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_free(&r, lc_v2(1, 0), 0), LC_STATE_ARRIVED);
    /* duplicates: one arrival per frame */
    const lc_vec2 dup[] = {{0, 0}, {0, 0}, {0, 0}};
    run_init(&r, dup, 3, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 0), LC_STATE_ARRIVED);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 0.1), LC_STATE_ARRIVED);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 0.2), LC_STATE_ARRIVED);
    assert_int_equal(r.n, 2);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 0.3), LC_STATE_DONE);
}

static void test_loop_lap(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{1, 0}, {1, 1}};
    run r;
    run_init(&r, wps, 2, true, LC_BLOCKED_WAIT);
    assert_int_equal(frame_free(&r, lc_v2(1, 0), 0), LC_STATE_ARRIVED);
    assert_int_equal(frame_free(&r, lc_v2(1, 0.5), 1), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(1, 1), 2), LC_STATE_ARRIVED);
    const lc_event_kind k[] = {LC_EVENT_REACHED, LC_EVENT_LAP};
    const int w[] = {1, 0};
    expect_events(&r, k, w, 2);
    assert_int_equal(r.patrol.current, 0);
    assert_int_equal(r.patrol.laps, 1);
    lc_vec2 wp;
    assert_true(lc_patrol_waypoint(&r.patrol, &r.route, &wp));
    assert_near(wp.x, 1, 0);
    assert_near(wp.y, 0, 0);
    assert_int_equal(frame_free(&r, lc_v2(1, 0.5), 3), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(1, 0), 4), LC_STATE_ARRIVED);
    assert_int_equal(r.events[0].waypoint, 0);
    assert_false(r.patrol.done);
}

/*
 * A waypoint behind a wall: the robot stands still, the target (the
 * waypoint pulled into the region) stays at the robot. Frames every 0.1 s.
 * Blocked when 10 s have passed without 0.10 m of progress.
 */
static void test_blocked_wait(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{5, 0}, {0, 5}};
    run r;
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    lc_vec2 pos = {0, 0};
    int k = 0, blocked_at = -1;
    for (; k <= 200; k++) {
        lc_state s = frame(&r, pos, pos, k * 0.1);
        if (s == LC_STATE_BLOCKED) {
            blocked_at = k;
            const lc_event_kind e[] = {LC_EVENT_BLOCKED};
            const int w[] = {0};
            expect_events(&r, e, w, 1);
            break;
        }
        assert_int_equal(s, LC_STATE_TRACKING);
        assert_int_equal(r.n, 0);
    }
    /* the first stamp with stamp - 0 >= 10 s (k * 0.1 in floating point) */
    int want = 0;
    while (want * 0.1 < 10.0)
        want++;
    assert_int_equal(blocked_at, want);
    /* holds, no repeated event; a target only 0.05 m closer is not progress */
    for (int j = 1; j <= 50; j++) {
        assert_int_equal(frame(&r, pos, lc_v2(0.05, 0), (k + j) * 0.1), LC_STATE_BLOCKED);
        assert_int_equal(r.n, 0);
    }
    assert_true(lc_patrol_waypoint(&r.patrol, &r.route, NULL));
    assert_int_equal(r.patrol.current, 0);
    /* the wall went away: target 1 m closer -> unblocked */
    assert_int_equal(frame(&r, pos, lc_v2(1, 0), 20.0), LC_STATE_TRACKING);
    const lc_event_kind e[] = {LC_EVENT_UNBLOCKED};
    const int w[] = {0};
    expect_events(&r, e, w, 1);
    /* a full blocked time again before the next `blocked` */
    assert_int_equal(frame(&r, pos, pos, 29.9), LC_STATE_TRACKING);
    assert_int_equal(frame(&r, pos, pos, 30.0), LC_STATE_BLOCKED);
    /* arrival ends a wait too */
    assert_int_equal(frame(&r, lc_v2(4.9, 0), lc_v2(5, 0), 31.0), LC_STATE_ARRIVED);
    const lc_event_kind e2[] = {LC_EVENT_UNBLOCKED, LC_EVENT_REACHED};
    const int w2[] = {0, 0};
    expect_events(&r, e2, w2, 2);
    assert_false(r.patrol.blocked);
}

/* Progress resets the timer; creeping slower than the threshold does not. */
static void test_progress_timer(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{20, 0}};
    run r;
    run_init(&r, wps, 1, false, LC_BLOCKED_WAIT);
    /* 0.11 m every 9 s: never blocked over 90 s */
    for (int k = 0; k <= 10; k++) {
        lc_vec2 pos = {0.11 * k, 0};
        assert_int_equal(frame_free(&r, pos, 9.0 * k), LC_STATE_TRACKING);
    }
    /* 0.01 m per second: 0.10 m takes 10 s, measured from the last progress
     * (a fresh run: the reference is the first frame) */
    run_init(&r, wps, 1, false, LC_BLOCKED_WAIT);
    lc_state s = LC_STATE_TRACKING;
    int k = 0;
    for (; k < 100 && s == LC_STATE_TRACKING; k++)
        s = frame_free(&r, lc_v2(0.009 * k, 0), k);
    assert_int_equal(s, LC_STATE_BLOCKED);
    assert_int_equal(k - 1, 10); /* at 10 s only 0.09 m */
    /* a clock that went back does not block by itself */
    run_init(&r, wps, 1, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 100.0), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 0.0), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 9.9), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), 10.0), LC_STATE_BLOCKED);
    /* blocked_time 0 disables the check */
    run_init(&r, wps, 1, false, LC_BLOCKED_WAIT);
    r.route.blocked_time = 0;
    for (int j = 0; j < 5; j++)
        assert_int_equal(frame_free(&r, lc_v2(0, 0), j * 100.0), LC_STATE_TRACKING);
}

static void test_blocked_skip(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{5, 0}, {0, 1}, {0, 3}};
    run r;
    run_init(&r, wps, 3, false, LC_BLOCKED_SKIP);
    lc_vec2 pos = {0, 0};
    assert_int_equal(frame(&r, pos, pos, 0.0), LC_STATE_TRACKING);
    assert_int_equal(frame(&r, pos, pos, 5.0), LC_STATE_TRACKING);
    assert_int_equal(frame(&r, pos, pos, 10.0), LC_STATE_BLOCKED);
    const lc_event_kind e[] = {LC_EVENT_BLOCKED, LC_EVENT_SKIPPED};
    const int w[] = {0, 0};
    expect_events(&r, e, w, 2);
    assert_int_equal(r.patrol.current, 1);
    assert_false(r.patrol.blocked);
    /* on with the next waypoint, fresh timer */
    assert_int_equal(frame_free(&r, lc_v2(0, 0.5), 15.0), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(0, 0.9), 16.0), LC_STATE_ARRIVED);
    /* the last one is unreachable too: skipped, and the route is done */
    assert_int_equal(frame(&r, lc_v2(0, 0.9), lc_v2(0, 0.9), 17.0), LC_STATE_TRACKING);
    assert_int_equal(frame(&r, lc_v2(0, 0.9), lc_v2(0, 0.9), 27.0), LC_STATE_BLOCKED);
    const lc_event_kind e2[] = {LC_EVENT_BLOCKED, LC_EVENT_SKIPPED, LC_EVENT_DONE};
    const int w2[] = {2, 2, 2};
    expect_events(&r, e2, w2, 3);
    assert_int_equal(frame_free(&r, lc_v2(0, 0.9), 28.0), LC_STATE_DONE);

    /* looping: skipping the last waypoint starts a lap */
    run_init(&r, wps, 3, true, LC_BLOCKED_SKIP);
    r.patrol.current = 2;
    assert_int_equal(frame(&r, pos, pos, 0.0), LC_STATE_TRACKING);
    assert_int_equal(frame(&r, pos, pos, 10.0), LC_STATE_BLOCKED);
    const lc_event_kind e3[] = {LC_EVENT_BLOCKED, LC_EVENT_SKIPPED, LC_EVENT_LAP};
    const int w3[] = {2, 2, 0};
    expect_events(&r, e3, w3, 3);
    assert_int_equal(r.patrol.current, 0);
    assert_int_equal(r.patrol.laps, 1);
}

/* One guided frame: the way along the path is to_go long from pos. */
static lc_state frame_way(run *r, lc_vec2 pos, double stamp, double to_go, bool new_way,
                          bool gave_up)
{
    lc_patrol_way way = {.guided = true,
                         .to_go = to_go,
                         .to_go_target = to_go,
                         .new_way = new_way,
                         .gave_up = gave_up};
    r->n = 0;
    return lc_patrol_update_way(&r->patrol, &r->route, pos, pos, &way, stamp, r->events, &r->n);
}

/*
 * Guided progress (docs/INTERFACES.md, blocked reasons): measured along the
 * path; a new way of about the same length is no progress, a way round
 * longer by more than LC_PATROL_DETOUR starts the count over; a way given up
 * starts it over for the first LC_PATROL_TRIES of a waypoint, then the
 * count runs on. Hand-computed stamps, default blocked_time 10 s.
 */
static void test_guided_progress(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{20, 0}, {20, 10}};
    const lc_vec2 at = {0, 0};
    run r;
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    /* along the path: 12 m to go though the waypoint is 20 m off, and 0.11 m
     * along it every 9 s is progress */
    for (int k = 0; k <= 5; k++)
        assert_int_equal(frame_way(&r, at, 9.0 * k, 12.0 - 0.11 * k, false, false),
                         LC_STATE_TRACKING);
    /* a new way 0.9 m longer is no progress: blocked 10 s after the last */
    assert_int_equal(frame_way(&r, at, 50.0, 12.35, true, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 54.9, 12.35, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 55.0, 12.35, false, false), LC_STATE_BLOCKED);
    assert_int_equal(r.events[0].reason, LC_BLOCK_NO_PROGRESS);

    /* a way round longer by more than the detour starts the count over */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_way(&r, at, 0.0, 12.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 8.0, 12.0 + LC_PATROL_DETOUR + 0.01, true, false),
                     LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 17.9, 13.01, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 18.0, 13.01, false, false), LC_STATE_BLOCKED);

    /* ways given up every 8 s: the first LC_PATROL_TRIES (4) start the
     * count over, so the robot is blocked 10 s after the 4th (at 32 s), at
     * 42 s; the 5th (at 40 s) changes nothing */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(LC_PATROL_TRIES, 4);
    assert_int_equal(frame_way(&r, at, 0.0, 12.0, false, false), LC_STATE_TRACKING);
    for (int k = 1; k <= 5; k++) {
        assert_int_equal(frame_way(&r, at, 8.0 * k - 0.1, 12.0, false, false),
                         LC_STATE_TRACKING);
        assert_int_equal(frame_way(&r, at, 8.0 * k, 12.0, false, true), LC_STATE_TRACKING);
    }
    assert_int_equal(frame_way(&r, at, 41.9, 12.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 42.0, 12.0, false, false), LC_STATE_BLOCKED);
    /* held blocked (wait), a way given up unblocks nothing */
    assert_int_equal(frame_way(&r, at, 43.0, 12.0, false, true), LC_STATE_BLOCKED);

    /* the next waypoint has tries of its own */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_way(&r, at, 0.0, 12.0, false, false), LC_STATE_TRACKING);
    for (int k = 1; k <= 4; k++)
        assert_int_equal(frame_way(&r, at, 8.0 * k, 12.0, false, true), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, wps[0], 33.0, 0.0, false, false), LC_STATE_ARRIVED);
    assert_int_equal(r.patrol.current, 1);
    assert_int_equal(frame_way(&r, wps[0], 34.0, 10.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, wps[0], 42.0, 10.0, false, true), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, wps[0], 51.9, 10.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, wps[0], 52.0, 10.0, false, false), LC_STATE_BLOCKED);

    /* held in the margin: a way given up counts from the first frame the
     * robot is free again, not while held, and not for another waypoint */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_way(&r, at, 0.0, 12.0, false, false), LC_STATE_TRACKING);
    r.n = 0;
    lc_patrol_way held = {.guided = true, .to_go = 12.0, .to_go_target = 12.0, .gave_up = true,
                          .held = true};
    assert_int_equal(lc_patrol_update_way(&r.patrol, &r.route, at, at, &held, 8.0, r.events, &r.n),
                     LC_STATE_TRACKING);
    assert_int_equal(r.patrol.tries, 0);
    assert_int_equal(frame_way(&r, at, 9.0, 12.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(r.patrol.tries, 1); /* counted at 9 s: blocked at 19 s */
    assert_int_equal(frame_way(&r, at, 18.9, 12.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(frame_way(&r, at, 19.0, 12.0, false, false), LC_STATE_BLOCKED);
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_way(&r, at, 0.0, 12.0, false, false), LC_STATE_TRACKING);
    r.n = 0;
    assert_int_equal(lc_patrol_update_way(&r.patrol, &r.route, wps[0], wps[0], &held, 8.0, r.events,
                                          &r.n),
                     LC_STATE_ARRIVED); /* held at the waypoint: on to the next */
    assert_int_equal(frame_way(&r, wps[0], 9.0, 10.0, false, false), LC_STATE_TRACKING);
    assert_int_equal(r.patrol.tries, 0);
    assert_int_equal(frame_way(&r, wps[0], 19.0, 10.0, false, false), LC_STATE_BLOCKED);

    /* no path blocks at once, whatever was tried */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_way(&r, at, 0.0, 12.0, false, true), LC_STATE_TRACKING);
    r.n = 0;
    lc_patrol_way none = {.no_path = true};
    assert_int_equal(lc_patrol_update_way(&r.patrol, &r.route, at, at, &none, 0.05, r.events, &r.n),
                     LC_STATE_BLOCKED);
    assert_int_equal(r.events[0].reason, LC_BLOCK_NO_PATH);
}

static void test_degenerate(void **state)
{
    (void)state;
    const lc_vec2 wps[] = {{5, 0}, {0, 5}};
    run r;
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    /* NaN position or stamp: no decision, no events */
    assert_int_equal(frame_free(&r, lc_v2(NAN, 0), 0), LC_STATE_TRACKING);
    assert_int_equal(frame_free(&r, lc_v2(0, 0), NAN), LC_STATE_TRACKING);
    assert_int_equal(r.n, 0);
    assert_false(r.patrol.started);
    /* NaN target while blocked: stays blocked */
    assert_int_equal(frame(&r, lc_v2(0, 0), lc_v2(0, 0), 0), LC_STATE_TRACKING);
    assert_int_equal(frame(&r, lc_v2(0, 0), lc_v2(0, 0), 10), LC_STATE_BLOCKED);
    assert_int_equal(frame(&r, lc_v2(0, 0), lc_v2(NAN, 0), 11), LC_STATE_BLOCKED);
    /* huge coordinates */
    run_init(&r, (const lc_vec2[]){{1e300, 1e300}}, 1, false, LC_BLOCKED_WAIT);
    assert_int_equal(frame_free(&r, lc_v2(-1e300, -1e300), 0), LC_STATE_TRACKING);
    /* an index beyond a shortened route restarts it */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    r.patrol.current = 7;
    assert_int_equal(frame_free(&r, lc_v2(5, 0), 0), LC_STATE_ARRIVED);
    assert_int_equal(r.events[0].waypoint, 0);
    /* a full event buffer is never overrun */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    r.patrol.current = 1;
    r.n = LC_PATROL_MAX_EVENTS - 1;
    lc_patrol_update(&r.patrol, &r.route, lc_v2(0, 5), lc_v2(0, 5), 0, r.events, &r.n);
    assert_int_equal(r.n, LC_PATROL_MAX_EVENTS);
    assert_int_equal(r.events[LC_PATROL_MAX_EVENTS - 1].kind, LC_EVENT_REACHED);
    assert_true(r.patrol.done);
    /* no event array at all */
    run_init(&r, wps, 2, false, LC_BLOCKED_WAIT);
    assert_int_equal(lc_patrol_update(&r.patrol, &r.route, lc_v2(5, 0), lc_v2(5, 0), 0, NULL, NULL),
                     LC_STATE_ARRIVED);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_names_and_defaults),
        cmocka_unit_test(test_empty_route),
        cmocka_unit_test(test_route_done),
        cmocka_unit_test(test_tolerance_boundary),
        cmocka_unit_test(test_loop_lap),
        cmocka_unit_test(test_blocked_wait),
        cmocka_unit_test(test_progress_timer),
        cmocka_unit_test(test_blocked_skip),
        cmocka_unit_test(test_guided_progress),
        cmocka_unit_test(test_degenerate),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
