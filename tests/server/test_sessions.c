/*
 * test_sessions.c - robot sessions that survive a dropped link, in the hub
 * without sockets (hubfake.h) on a fake clock: a hello under the name within
 * grace_ms resumes the description, route, progress and velocity (the
 * welcome says so); after it the session is new; a watchdog stop sent before
 * the link was found dead is honoured (the next setpoint starts from rest);
 * a connection with the token takes a live name over; a link from which
 * nothing comes is pinged and closed within link_timeout_ms, letting the
 * name go, but not one the server itself stopped reading; waiting sessions
 * are bounded and end at shutdown. The same over
 * real websockets through the built daemon: tests/server/e2e_resume.py.
 */
#include "testutil.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "hubfake.h"

#define DT 0.05 /* s between frames */

static const char route_msg[] =
    "{\"type\":\"route\",\"waypoints\":[[0.1,0],[20,0],[20,5]],\"tolerance\":0.25}";
static const char robot_msg[] = "{\"type\":\"robot\",\"radius\":0.2,\"v_max\":0.6}";

/* The setpoint that answers a frame at pose (x, 0); vx is returned. */
static double step(lc_hub *hub, lc_conn *c, int seq, double stamp, double x, int *waypoint)
{
    lc_fake_frame(hub, c, seq, stamp, x, 0, stamp);
    cJSON *j;
    do { /* events come after their setpoint */
        j = lc_fake_next(c);
        assert_non_null(j);
        if (strcmp(lc_fake_str(j, "type"), "setpoint") == 0)
            break;
        assert_string_equal(lc_fake_str(j, "type"), "event");
        cJSON_Delete(j);
    } while (1);
    double vx = lc_fake_num(j, "vx");
    if (waypoint)
        *waypoint = (int)lc_fake_num(j, "waypoint");
    cJSON_Delete(j);
    while ((j = lc_fake_next(c)) != NULL) {
        assert_string_equal(lc_fake_str(j, "type"), "event");
        cJSON_Delete(j);
    }
    return vx;
}

/* A robot with a description and a route, driven n frames (from seq 1,
 * stamp DT) along +x as it is told; returns the last vx. */
static double drive(lc_hub *hub, lc_conn *c, int n, double *x, int *waypoint)
{
    assert_int_equal(lc_fake_say(hub, c, robot_msg, 0), 0);
    assert_int_equal(lc_fake_say(hub, c, route_msg, 0), 0);
    double vx = 0;
    for (int k = 1; k <= n; k++) {
        vx = step(hub, c, k, DT * k, *x, waypoint);
        *x += vx * DT;
    }
    return vx;
}

/* The robot "rover", welcomed at 0 and driven n frames; *x its position,
 * *vx (may be NULL) its last speed. */
static lc_conn *rover(lc_hub *hub, int n, double *x, double *vx)
{
    lc_conn *c = lc_fake_robot(hub, "rover", 0);
    *x = 0;
    double v = drive(hub, c, n, x, NULL);
    if (vx)
        *vx = v;
    return c;
}

/* A hello under name; the welcome (the caller frees), or fails. */
static cJSON *hello(lc_hub *hub, lc_conn *c, const char *name, const char *token, double now)
{
    char text[256];
    snprintf(text, sizeof text, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"%s\"%s%s%s}",
             name, token ? ",\"token\":\"" : "", token ? token : "", token ? "\"" : "");
    assert_int_equal(lc_fake_say(hub, c, text, now), 0);
    cJSON *w = lc_fake_next(c);
    assert_non_null(w);
    return w;
}

static bool resumed(const cJSON *welcome)
{
    assert_string_equal(lc_fake_str(welcome, "type"), "welcome");
    return cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(welcome, "resumed"));
}

static lc_conn *reconnect(lc_hub *hub, const char *name, const char *token, double now,
                          bool want_resumed)
{
    lc_conn *c = lc_hub_open(hub, NULL, NULL, now);
    assert_non_null(c);
    cJSON *w = hello(hub, c, name, token, now);
    assert_int_equal(resumed(w), want_resumed);
    assert_near(lc_fake_num(w, "grace_ms"), 5000, 0);
    cJSON_Delete(w);
    return c;
}

/* Within grace_ms: route, progress, description and velocity go on. */
static void test_resume_within_grace(void **state)
{
    lc_hub *hub = lc_fake_hub(NULL);
    lc_conn *c = lc_hub_open(hub, NULL, NULL, 0);
    cJSON *w = hello(hub, c, "rover", NULL, 0);
    assert_false(resumed(w)); /* a first hello */
    cJSON_Delete(w);
    double x = 0;
    int wp = -1;
    double v0 = drive(hub, c, 30, &x, &wp);
    assert_int_equal(wp, 1); /* waypoint 0 was reached at the start */
    assert_true(v0 > 0.4 && v0 <= 0.6 + 1e-9);
    double t = 30 * DT;
    lc_hub_close(hub, c, t);
    lc_hub_tick(hub, t + 4.0); /* inside the 5 s grace: nothing ends */
    c = reconnect(hub, "rover", NULL, t + 4.5, true);
    lc_fake_expect_none(c); /* nothing before its first frame */
    double v1 = step(hub, c, 31, t + 4.5, x, &wp);
    assert_int_equal(wp, 1);
    /* from the last velocity: the rate limit allows a_max dt_max = 0.1 m/s */
    assert_true(v1 >= v0 - 0.1 - 1e-9);
    assert_true(v1 <= 0.6 + 1e-9); /* the description's v_max still holds */
    lc_hub_free(hub);
}

/* After grace_ms the session is gone: a new one, at rest, without a route. */
static void test_no_resume_after_grace(void **state)
{
    lc_hub *hub = lc_fake_hub(NULL);
    double x;
    lc_conn *c = rover(hub, 30, &x, NULL);
    double t = 30 * DT;
    lc_hub_close(hub, c, t);
    assert_near(lc_hub_deadline(hub), t + 5.0, 1e-9); /* the grace's end is a deadline */
    lc_hub_tick(hub, t + 5.0);
    c = reconnect(hub, "rover", NULL, t + 5.1, false);
    lc_fake_frame(hub, c, 31, t + 5.1, x, 0, t + 5.1);
    lc_fake_expect(c, "warning", "no_route"); /* a new session: no route, and it is told */
    cJSON *j = lc_fake_next(c);
    assert_string_equal(lc_fake_str(j, "state"), "idle");
    assert_near(lc_fake_num(j, "vx"), 0, 0);
    cJSON_Delete(j);
    lc_hub_free(hub);
}

static void no_grace(lc_hub_config *hc) { hc->opts.grace_ms = 0; }

static void test_grace_zero_ends_at_once(void **state)
{
    lc_hub *hub = lc_fake_hub(no_grace);
    double x;
    lc_conn *c = rover(hub, 5, &x, NULL);
    lc_hub_close(hub, c, 1.0);
    assert_true(isinf(lc_hub_deadline(hub)));
    c = lc_hub_open(hub, NULL, NULL, 1.0);
    cJSON *w = hello(hub, c, "rover", NULL, 1.0);
    assert_false(resumed(w));
    cJSON_Delete(w);
    lc_hub_free(hub);
}

/*
 * The watchdog's stop went out (the link was alive as far as the server
 * knew) before the link dropped: the robot was last told to stop, so the
 * resumed session starts from rest.
 */
static void test_resume_honours_the_watchdog_stop(void **state)
{
    lc_hub *hub = lc_fake_hub(NULL);
    double x, v0;
    lc_conn *c = rover(hub, 30, &x, &v0);
    assert_true(v0 > 0.4);
    double t = 30 * DT;
    lc_hub_tick(hub, t + 0.2); /* the watchdog: a stale stop */
    cJSON *j = lc_fake_next(c);
    assert_string_equal(lc_fake_str(j, "state"), "stale");
    cJSON_Delete(j);
    lc_hub_close(hub, c, t + 0.5);
    c = reconnect(hub, "rover", NULL, t + 1.0, true);
    double v1 = step(hub, c, 31, t + 1.0, x, NULL);
    assert_true(v1 <= 0.5 * 0.2 + 1e-9); /* from rest: a_max dt_max at most */
    lc_hub_free(hub);
}

/* The resumed robot gets a watchdog period for its first frame, no stop at once. */
static void test_resume_rearms_the_watchdog(void **state)
{
    lc_hub *hub = lc_fake_hub(NULL);
    double x;
    lc_conn *c = rover(hub, 10, &x, NULL);
    lc_hub_close(hub, c, 0.5);
    lc_hub_tick(hub, 3.0); /* no link: the watchdog sends nothing, to no one */
    c = reconnect(hub, "rover", NULL, 3.0, true);
    assert_near(lc_hub_deadline(hub), 3.2, 1e-9);
    lc_hub_tick(hub, 3.1);
    lc_fake_expect_none(c);
    lc_hub_tick(hub, 3.2);
    lc_fake_expect(c, "setpoint", NULL); /* stale: still no frame on the new link */
    lc_hub_free(hub);
}

static const char *token = "harbour-lamp-9";
static void with_token(lc_hub_config *hc) { hc->robot_token = token; }

/* With a robot token, a hello that proves it takes a live name over. */
static void test_token_takeover(void **state)
{
    lc_hub *hub = lc_fake_hub(with_token);
    lc_conn *a = lc_hub_open(hub, NULL, NULL, 0);
    cJSON *w = hello(hub, a, "rover", token, 0);
    assert_false(resumed(w));
    cJSON_Delete(w);
    double x = 0;
    int wp = -1;
    double v0 = drive(hub, a, 30, &x, &wp);
    double t = 30 * DT;
    /* a wrong token takes nothing over */
    lc_conn *intruder = lc_hub_open(hub, NULL, NULL, t);
    w = hello(hub, intruder, "rover", "harbour-lamp-8", t);
    assert_string_equal(lc_fake_str(w, "code"), "unauthorized");
    cJSON_Delete(w);
    lc_hub_close(hub, intruder, t);
    lc_conn *b = reconnect(hub, "rover", token, t, true);
    lc_fake_expect(a, "error", "name_taken");
    assert_true(lc_conn_closing(a));
    lc_fake_frame(hub, a, 99, t, x, 0, t); /* the old link is not read any more */
    lc_fake_expect_none(a);
    double v1 = step(hub, b, 31, t + DT, x, &wp);
    assert_int_equal(wp, 1);
    assert_true(v1 >= v0 - 0.5 * DT - 1e-9);
    lc_hub_close(hub, a, t + 0.1); /* the old link's close leaves the session alone */
    step(hub, b, 32, t + 2 * DT, x, NULL);
    lc_hub_free(hub);
}

static void live_links(lc_hub_config *hc) { hc->opts.link_timeout_ms = 3000; }

static bool ping_due(lc_conn *c) { return lc_conn_take_ping(c); }

/* A silent link is pinged after a third of the timeout and closed at it. */
static void test_dead_link(void **state)
{
    lc_hub *hub = lc_fake_hub(live_links);
    lc_conn *c = lc_fake_robot(hub, "rover", 0);
    assert_near(lc_hub_deadline(hub), 1.0, 1e-9); /* the first ping */
    lc_hub_tick(hub, 0.9);
    assert_false(ping_due(c));
    int wakes = lc_fake.wakes;
    lc_hub_tick(hub, 1.0);
    assert_true(ping_due(c));
    assert_false(ping_due(c)); /* once */
    assert_int_equal(lc_fake.wakes, wakes + 1);
    lc_hub_heard(hub, c, 1.1); /* the pong */
    int kills = lc_fake.kills;
    lc_hub_tick(hub, 3.5);
    assert_int_equal(lc_fake.kills, kills); /* heard at 1.1: alive until 4.1 */
    assert_false(lc_conn_closing(c));
    lc_hub_tick(hub, 4.1);
    assert_int_equal(lc_fake.kills, kills + 1);
    assert_true(lc_conn_closing(c));
    /* the name is free at once, before the transport reports the close */
    lc_conn *again = reconnect(hub, "rover", NULL, 4.2, true);
    lc_hub_close(hub, c, 4.3);
    lc_fake_frame(hub, again, 1, 4.3, 0, 0, 4.3);
    lc_fake_expect(again, "warning", "no_route"); /* the robot never sent one */
    lc_fake_expect(again, "setpoint", NULL);
    /* frames keep a link alive without pings */
    for (int k = 0; k < 40; k++) {
        double now = 4.3 + 0.1 * k;
        lc_fake_frame(hub, again, 2 + k, now, 0, 0, now);
        lc_hub_tick(hub, now);
        assert_false(ping_due(again));
        lc_fake_drain(again);
    }
    assert_false(lc_conn_closing(again));
    lc_hub_free(hub);
}

static void live_links_small_queue(lc_hub_config *hc)
{
    hc->opts.link_timeout_ms = 3000;
    hc->opts.send_queue = 4;
    hc->opts.watchdog_ms = 60000; /* no stale stops to fill the queue meanwhile */
}

/*
 * A robot the server stopped reading (its replies pile up: receive flow) is
 * not silent: what it sends waits in TCP. It is not closed as dead while
 * the server does not read it, and is watched again once it is read.
 */
static void test_paused_link_is_not_dead(void **state)
{
    lc_hub *hub = lc_fake_hub(live_links_small_queue);
    lc_conn *c = lc_fake_robot(hub, "busy", 0);
    lc_fake_frame(hub, c, 1, 0.05, 0, 0, 0.05);
    lc_fake_frame(hub, c, 2, 0.10, 0, 0, 0.10);
    assert_false(lc_conn_reading(c)); /* two replies of a queue of 4: not read */
    int kills = lc_fake.kills;
    for (double t = 0.5; t <= 8.0; t += 0.5)
        lc_hub_tick(hub, t);
    assert_int_equal(lc_fake.kills, kills);
    assert_false(lc_conn_closing(c));
    lc_fake_drain(c); /* the robot reads its replies: read again */
    assert_true(lc_conn_reading(c));
    lc_hub_tick(hub, 10.9);
    assert_int_equal(lc_fake.kills, kills);
    lc_hub_tick(hub, 11.0); /* silent 3 s since the last tick it was not read */
    assert_int_equal(lc_fake.kills, kills + 1);
    lc_hub_free(hub);
}

/* Neither a viewer's link (it sends nothing, and reads behind a backlog of
 * views) nor a connection before its hello (the hello timeout bounds it) is
 * timed out. */
static void test_viewer_and_no_hello_not_timed_out(void **state)
{
    lc_hub *hub = lc_fake_hub(live_links);
    lc_conn *v = lc_hub_open(hub, NULL, NULL, 0);
    assert_int_equal(lc_fake_say(hub, v, "{\"type\":\"hello\",\"role\":\"viewer\"}", 0), 0);
    cJSON *w = lc_fake_next(v);
    assert_null(cJSON_GetObjectItemCaseSensitive(w, "resumed")); /* a robot's word only */
    assert_near(lc_fake_num(w, "link_timeout_ms"), 3000, 0);
    cJSON_Delete(w);
    lc_conn *mute = lc_hub_open(hub, NULL, NULL, 0);
    int kills = lc_fake.kills;
    for (double t = 0.5; t < 10.0; t += 0.5)
        lc_hub_tick(hub, t);
    assert_int_equal(lc_fake.kills, kills);
    assert_false(lc_conn_closing(v) || lc_conn_closing(mute));
    assert_false(ping_due(v) || ping_due(mute));
    lc_hub_free(hub);
}

static void two_connections(lc_hub_config *hc) { hc->opts.max_connections = 2; }

/* Waiting sessions are bounded by max_connections: the one that waited longest ends. */
static void test_waiting_sessions_bounded(void **state)
{
    lc_hub *hub = lc_fake_hub(two_connections);
    static const char *const names[] = {"r0", "r1", "r2"};
    for (int i = 0; i < 3; i++) {
        lc_conn *c = lc_fake_robot(hub, names[i], 0.1 * i);
        lc_hub_close(hub, c, 0.1 * i + 0.05);
    }
    lc_conn *c = reconnect(hub, "r0", NULL, 1.0, false); /* r0 gave way to r2 */
    lc_hub_close(hub, c, 1.0);
    c = reconnect(hub, "r2", NULL, 1.0, true);
    lc_hub_free(hub);
}

/* Shutdown: no session waits for its robot any more. */
static void test_shutdown_keeps_no_session(void **state)
{
    lc_hub *hub = lc_fake_hub(NULL);
    lc_conn *c = lc_fake_robot(hub, "rover", 0);
    lc_hub_shutdown(hub, 0.1);
    lc_hub_close(hub, c, 0.2);
    assert_true(isinf(lc_hub_deadline(hub)));
    lc_hub_free(hub);
}

/* A viewer sees the link drop (link "down") and the session come back. */
static void test_view_of_a_waiting_session(void **state)
{
    lc_hub *hub = lc_fake_hub(NULL);
    lc_conn *v = lc_hub_open(hub, NULL, NULL, 0);
    assert_int_equal(lc_fake_say(hub, v, "{\"type\":\"hello\",\"role\":\"viewer\"}", 0), 0);
    lc_fake_expect(v, "welcome", NULL);
    double x;
    lc_conn *c = rover(hub, 3, &x, NULL);
    lc_hub_tick(hub, 1.0);
    cJSON *j = lc_fake_next(v);
    assert_string_equal(lc_fake_str(j, "link"), "up");
    cJSON_Delete(j);
    lc_hub_close(hub, c, 1.5);
    lc_hub_tick(hub, 1.5);
    j = lc_fake_next(v);
    assert_string_equal(lc_fake_str(j, "type"), "view");
    assert_string_equal(lc_fake_str(j, "link"), "down");
    assert_near(lc_fake_num(j, "radius"), 0.2, 1e-9); /* the description is kept */
    cJSON_Delete(j);
    c = reconnect(hub, "rover", NULL, 2.0, true);
    lc_hub_tick(hub, 2.0);
    j = lc_fake_next(v);
    assert_string_equal(lc_fake_str(j, "link"), "up");
    cJSON_Delete(j);
    lc_hub_free(hub);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_resume_within_grace),
        cmocka_unit_test(test_no_resume_after_grace),
        cmocka_unit_test(test_grace_zero_ends_at_once),
        cmocka_unit_test(test_resume_honours_the_watchdog_stop),
        cmocka_unit_test(test_resume_rearms_the_watchdog),
        cmocka_unit_test(test_token_takeover),
        cmocka_unit_test(test_dead_link),
        cmocka_unit_test(test_paused_link_is_not_dead),
        cmocka_unit_test(test_viewer_and_no_hello_not_timed_out),
        cmocka_unit_test(test_waiting_sessions_bounded),
        cmocka_unit_test(test_shutdown_keeps_no_session),
        cmocka_unit_test(test_view_of_a_waiting_session),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
