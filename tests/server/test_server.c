/*
 * test_server.c - the daemon: option table, listen addresses, tokens, and
 * the hub (robots.c) driven without sockets on a fake clock (hello, roles,
 * name_taken, one setpoint per frame, watchdog, queues, limits, shutdown).
 * The built `lacuna serve` over real websockets is meson's e2e_serve test
 * (tests/server/e2e_serve.py).
 *
 * The fake clock makes the watchdog checks exact and independent of the
 * machine's load; e2e_serve.py checks the real timer in a wide band.
 */
#include "testutil.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "codec.h"
#include "config.h"
#include "hubfake.h"
#include "recorder.h"
#include "robots.h"
#include "server.h"

/* ------------------------------------------------------------ options */

static void test_config_defaults_and_flags(void **state)
{
    lc_server_config c;
    char err[256];
    lc_server_config_default(&c);
    assert_string_equal(c.listen, "127.0.0.1:7640");
    assert_int_equal(c.watchdog_ms, 200);
    assert_int_equal(c.max_message, 1 << 20);
    assert_int_equal(lc_server_config_flag(&c, "--watchdog-ms", "150", err, sizeof err), 1);
    assert_int_equal(c.watchdog_ms, 150);
    assert_int_equal(lc_server_config_flag(&c, "--watchdog-ms", "5", err, sizeof err), -1);
    assert_non_null(strstr(err, "watchdog_ms"));
    assert_int_equal(lc_server_config_flag(&c, "--watchdog-ms", "1.5", err, sizeof err), -1);
    assert_int_equal(lc_server_config_flag(&c, "--watchdog-ms", "abc", err, sizeof err), -1);
    assert_int_equal(lc_server_config_flag(&c, "--watchdog-ms", NULL, err, sizeof err), -1);
    assert_int_equal(lc_server_config_flag(&c, "--no-such", "1", err, sizeof err), 0);
    assert_int_equal(lc_server_config_flag(&c, "--log-level", "loud", err, sizeof err), -1);
    assert_int_equal(lc_server_config_flag(&c, "--log-level", "debug", err, sizeof err), 1);
    assert_int_equal(lc_server_config_flag(&c, "--view-hz", "nan", err, sizeof err), -1);
    assert_int_equal(lc_server_config_flag(&c, "--view-hz", "21", err, sizeof err), -1);
    assert_int_equal(c.watchdog_ms, 150);
}

static void test_config_file(void **state)
{
    lc_server_config c;
    char err[256];
    lc_server_config_default(&c);
    const char ok[] = "{\"watchdog_ms\": 300, \"listen\": \"127.0.0.1:0\", \"period\": 0.05}";
    assert_int_equal(lc_server_config_parse(&c, ok, strlen(ok), err, sizeof err), 0);
    assert_int_equal(c.watchdog_ms, 300);
    assert_string_equal(c.listen, "127.0.0.1:0");
    assert_near(c.period, 0.05, 0);
    static const char *const bad[] = {
        "", "[]", "{\"watchdog_ms\": \"300\"}", "{\"watchdog_ms\": 1e9}", "{\"nope\": 1}",
        "{\"listen\": 5}", "{\"listen\": \"no-port\"}", "{} x", "{\"max_rate\": 0}",
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        assert_int_equal(lc_server_config_parse(&c, bad[i], strlen(bad[i]), err, sizeof err), -1);
    assert_int_equal(c.watchdog_ms, 300);
}

/* allow_origin: a list; file string or array; each flag adds, the first replaces the file's. */
static void test_config_allow_origin(void **state)
{
    lc_server_config c;
    char err[256];
    lc_server_config_default(&c);
    assert_string_equal(c.allow_origin, "");
    assert_int_equal(c.max_per_address, 32);
    const char file[] = "{\"allow_origin\": [\"https://a.example\", \"http://b.example:8080\"]}";
    assert_int_equal(lc_server_config_parse(&c, file, strlen(file), err, sizeof err), 0);
    assert_string_equal(c.allow_origin, "https://a.example,http://b.example:8080");
    const char file2[] = "{\"allow_origin\": \" https://a.example , null \"}";
    assert_int_equal(lc_server_config_parse(&c, file2, strlen(file2), err, sizeof err), 0);
    assert_string_equal(c.allow_origin, "https://a.example,null");
    assert_int_equal(
        lc_server_config_flag(&c, "--allow-origin", "http://c.example", err, sizeof err), 1);
    assert_string_equal(c.allow_origin, "http://c.example");
    assert_int_equal(
        lc_server_config_flag(&c, "--allow-origin", "*,https://[::1]:9", err, sizeof err), 1);
    assert_string_equal(c.allow_origin, "http://c.example,*,https://[::1]:9");
    static const char *const bad[] = {
        "https://a.example/", "https://a.example/page", "ftp://a.example", "a.example",
        "https://", "https://a.example:", "https://a.example:80x", "http://a b.example", "",
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        lc_server_config d = c;
        int rc = lc_server_config_flag(&d, "--allow-origin", bad[i], err, sizeof err);
        if (bad[i][0]) {
            assert_int_equal(rc, -1);
            assert_non_null(strstr(err, "allow_origin"));
        } else {
            assert_int_equal(rc, 1); /* an empty item adds nothing */
            assert_string_equal(d.allow_origin, c.allow_origin);
        }
    }
    static const char *const bad_files[] = {
        "{\"allow_origin\": 5}", "{\"allow_origin\": [5]}", "{\"allow_origin\": [\"a,b\"]}",
        "{\"allow_origin\": [\"\"]}", "{\"allow_origin\": \"https://x/\"}",
        "{\"max_per_address\": 0}",
    };
    for (size_t i = 0; i < sizeof bad_files / sizeof bad_files[0]; i++)
        assert_int_equal(
            lc_server_config_parse(&c, bad_files[i], strlen(bad_files[i]), err, sizeof err), -1);
    /* the hardening options are in --help with their bounds and defaults */
    char *help = NULL;
    size_t n = 0;
    FILE *f = open_memstream(&help, &n);
    lc_server_config_help(f);
    fclose(f);
    static const char *const wanted[] = {
        "--allow-origin ORIGIN", "--max-per-address N", "(1 to 10000, default 32)",
        "--send-buffer N", "(0 to 16777216, default 262144)", "--max-rate X",
    };
    for (size_t i = 0; i < sizeof wanted / sizeof wanted[0]; i++)
        if (!strstr(help, wanted[i]))
            fail_msg("--help lacks %s", wanted[i]);
    free(help);
}

/* Origin rule (RFC 6454 origins; RFC 6455 10.2: the server checks Origin for browsers). */
static void test_origin_allowed(void **state)
{
    static const struct {
        const char *allow, *origin, *host;
        bool tls, ok;
    } cases[] = {
        {"", NULL, "127.0.0.1:7640", false, true},          /* no Origin: not a browser */
        {"", "", "127.0.0.1:7640", false, true},
        {"", "http://127.0.0.1:7640", "127.0.0.1:7640", false, true}, /* the page's own */
        {"", "HTTP://LOCALHOST:7640", "localhost:7640", false, true},
        {"", "https://127.0.0.1:7640", "127.0.0.1:7640", false, false}, /* scheme differs */
        {"", "https://robot.site:7640", "robot.site:7640", true, true},
        {"", "http://robot.site:7640", "robot.site:7640", true, false},
        {"", "http://127.0.0.1:7641", "127.0.0.1:7640", false, false}, /* port differs */
        {"", "http://evil.example", "127.0.0.1:7640", false, false},
        {"", "null", "127.0.0.1:7640", false, false},
        {"null", "null", "127.0.0.1:7640", false, true},
        {"https://a.example,http://b.example:8080", "http://b.example:8080", "x:1", false, true},
        {"https://a.example,http://b.example:8080", "http://b.example", "x:1", false, false},
        {"https://a.example", "https://A.Example", "x:1", false, true},
        {"https://a.example", "https://a.example.evil", "x:1", false, false},
        {"*", "http://anything.example", "x:1", false, true},
        {"", "http://127.0.0.1:7640/", "127.0.0.1:7640", false, false},
        {"", "(header too long)", "127.0.0.1:7640", false, false},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        bool got = lc_origin_allowed(cases[i].allow, cases[i].origin, cases[i].host, cases[i].tls);
        if (got != cases[i].ok)
            fail_msg("case %zu: origin %s host %s allow '%s': %d", i, cases[i].origin,
                     cases[i].host, cases[i].allow, got);
    }
}

/* --print-config output parses back to the same configuration. */
static void test_config_print_round_trip(void **state)
{
    lc_server_config c, d;
    char err[256], *text = NULL;
    size_t n = 0;
    lc_server_config_default(&c);
    lc_server_config_flag(&c, "--dt-min", "0.001", err, sizeof err);
    lc_server_config_flag(&c, "--web", "dir \"quoted\"\\x", err, sizeof err);
    lc_server_config_flag(&c, "--allow-origin", "https://a.example", err, sizeof err);
    lc_server_config_flag(&c, "--allow-origin", "null", err, sizeof err);
    c.list_flags = 0; /* how the value came, not part of it */
    FILE *f = open_memstream(&text, &n);
    lc_server_config_print(&c, f);
    fclose(f);
    lc_server_config_default(&d);
    assert_int_equal(lc_server_config_parse(&d, text, n, err, sizeof err), 0);
    assert_memory_equal(&c, &d, sizeof c);
    free(text);
}

static void test_listen_parse(void **state)
{
    lc_listen_addr a;
    char err[128];
    assert_int_equal(lc_listen_parse("127.0.0.1:7640", &a, err, sizeof err), 0);
    assert_true(a.loopback);
    assert_int_equal(a.port, 7640);
    assert_int_equal(lc_listen_parse("localhost:0", &a, err, sizeof err), 0);
    assert_string_equal(a.host, "127.0.0.1");
    assert_true(a.loopback);
    assert_int_equal(lc_listen_parse("127.9.9.9:1", &a, err, sizeof err), 0);
    assert_true(a.loopback);
    assert_int_equal(lc_listen_parse("0.0.0.0:80", &a, err, sizeof err), 0);
    assert_false(a.loopback);
    assert_int_equal(lc_listen_parse("192.0.2.7:80", &a, err, sizeof err), 0);
    assert_false(a.loopback);
    static const char *const bad[] = {"", ":80", "127.0.0.1", "127.0.0.1:", "127.0.0.1:65536",
                                      "127.0.0.1:-1", "127.0.0.1:8x", "example:80", "1.2.3:80"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        assert_int_equal(lc_listen_parse(bad[i], &a, err, sizeof err), -1);
}

static void test_token_equal(void **state)
{
    assert_true(lc_token_equal("abc", "abc"));
    assert_true(lc_token_equal("", ""));
    assert_false(lc_token_equal("abc", "abd"));
    assert_false(lc_token_equal("abc", "ab"));
    assert_false(lc_token_equal("ab", "abc"));
    assert_false(lc_token_equal("", "a"));
}

/* ------------------------------------------------------ hub, no sockets */

/* Short names for the fake hub's helpers (hubfake.h). */
#define io lc_fake
#define hub_with(tweak) lc_fake_hub(tweak)
#define say(hub, c, text, now) lc_fake_say(hub, c, text, now)
#define next(c) lc_fake_next(c)
#define str(j, key) lc_fake_str(j, key)
#define num(j, key) lc_fake_num(j, key)
#define expect(c, type, code) lc_fake_expect(c, type, code)
#define expect_none(c) lc_fake_expect_none(c)
#define robot(hub, name, now) lc_fake_robot(hub, name, now)

static const char scan_fmt[] =
    "{\"type\":\"scan\",\"seq\":%d,\"stamp\":%g,\"pose\":[0,0,0],\"bearing_first\":-1.5,"
    "\"bearing_step\":0.1,\"near\":0.05,\"far\":10,\"dist\":[6,6,6,6,6,6,6,6,6,6,"
    "6,6,6,6,6,6,6,6,6,6,6,6,6,6,6,6,6,6,6,6,6]}";

static void send_scan(lc_hub *hub, lc_conn *c, int seq, double stamp, double now)
{
    char text[512];
    snprintf(text, sizeof text, scan_fmt, seq, stamp);
    assert_int_equal(say(hub, c, text, now), 0);
}

static void test_hub_hello_and_roles(void **state)
{
    lc_hub *hub = hub_with(NULL);
    lc_conn *c = lc_hub_open(hub, NULL, NULL, 0);
    send_scan(hub, c, 1, 0, 0);
    expect(c, "error", "unauthorized");
    assert_true(lc_conn_closing(c));
    assert_int_equal(lc_conn_close_status(c, NULL), LC_CLOSE_POLICY);
    lc_hub_close(hub, c, 0);

    lc_conn *r = robot(hub, "r1", 0);
    lc_conn *v = lc_hub_open(hub, NULL, NULL, 0);
    assert_int_equal(say(hub, v, "{\"type\":\"hello\",\"role\":\"viewer\"}", 0), 0);
    expect(v, "welcome", NULL);
    send_scan(hub, v, 3, 0, 0);
    cJSON *j = next(v);
    assert_string_equal(str(j, "code"), "forbidden");
    assert_near(num(j, "seq"), 3, 0);
    cJSON_Delete(j);
    assert_false(lc_conn_closing(v));

    lc_conn *twin = lc_hub_open(hub, NULL, NULL, 0);
    say(hub, twin, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"r1\"}", 0);
    expect(twin, "error", "name_taken");
    assert_true(lc_conn_closing(twin));
    lc_hub_close(hub, twin, 0);

    say(hub, r, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"r1\"}", 0);
    expect(r, "error", "bad_message");
    assert_false(lc_conn_closing(r));
    lc_hub_free(hub);
}

static const char *robot_token = "river-stone-3";
static void with_token(lc_hub_config *hc) { hc->robot_token = robot_token; }

static void test_hub_token(void **state)
{
    static const char *const hellos[] = {
        "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"a\"}",
        "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"a\",\"token\":\"river-stone-4\"}",
        "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"a\",\"token\":\"river-stone-3 \"}",
    };
    lc_hub *hub = hub_with(with_token);
    for (size_t i = 0; i < sizeof hellos / sizeof hellos[0]; i++) {
        lc_conn *c = lc_hub_open(hub, NULL, NULL, 0);
        say(hub, c, hellos[i], 0);
        expect(c, "error", "unauthorized");
        assert_true(lc_conn_closing(c));
        lc_hub_close(hub, c, 0);
    }
    lc_conn *c = lc_hub_open(hub, NULL, NULL, 0);
    say(hub, c, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"a\",\"token\":\"river-stone-3\"}",
        0);
    expect(c, "welcome", NULL);
    lc_hub_free(hub);
}

/* One setpoint per frame, seq and stamp echoed; then the watchdog on the fake clock. */
static void test_hub_setpoints_and_watchdog(void **state)
{
    lc_hub *hub = hub_with(NULL);
    lc_conn *r = robot(hub, "w", 0);
    assert_true(isinf(lc_hub_deadline(hub))); /* not armed before the first frame */
    say(hub, r, "{\"type\":\"route\",\"waypoints\":[[3,0]]}", 0);
    expect_none(r);
    for (int k = 1; k <= 3; k++) {
        send_scan(hub, r, k, 0.05 * k, 0.05 * k);
        cJSON *j = next(r);
        assert_string_equal(str(j, "type"), "setpoint");
        assert_near(num(j, "seq"), k, 0);
        assert_near(num(j, "stamp"), 0.05 * k, 1e-12);
        assert_string_equal(str(j, "state"), "tracking");
        cJSON_Delete(j);
        expect_none(r);
    }
    double t = 0.15;
    assert_near(lc_hub_deadline(hub), t + 0.2, 1e-9);
    lc_hub_tick(hub, t + 0.19);
    expect_none(r);
    for (int k = 1; k <= 3; k++) {
        double d = lc_hub_tick(hub, t + 0.2 * k + 1e-6);
        cJSON *j = next(r);
        assert_string_equal(str(j, "state"), "stale");
        assert_string_equal(str(j, "limit"), "stale");
        assert_near(num(j, "seq"), 3, 0);
        assert_near(num(j, "vx"), 0, 0);
        cJSON_Delete(j);
        expect_none(r);
        assert_near(d, t + 0.2 * (k + 1), 1e-9);
    }
    /* a late loop does not burst */
    lc_hub_tick(hub, t + 5.0);
    expect(r, "setpoint", NULL);
    expect_none(r);
    send_scan(hub, r, 4, 6.0, 6.0);
    cJSON *j = next(r);
    assert_string_equal(str(j, "state"), "tracking");
    cJSON_Delete(j);
    lc_hub_free(hub);
}

static void small_queues(lc_hub_config *hc)
{
    hc->opts.send_queue = 4;
    hc->opts.viewer_queue = 1;
}

/* A robot that does not read: error, then close; never a silent drop. */
static void test_hub_send_queue_full(void **state)
{
    lc_hub *hub = hub_with(small_queues);
    lc_conn *r = robot(hub, "slow", 0);
    say(hub, r, "{\"type\":\"route\",\"waypoints\":[[3,0]]}", 0); /* no warning */
    /* receive flow: stop reading at half the queue (2 of 4), read again at a quarter */
    assert_true(lc_conn_reading(r));
    send_scan(hub, r, 1, 0.05, 0.05);
    assert_true(lc_conn_reading(r));
    send_scan(hub, r, 2, 0.1, 0.1);
    assert_false(lc_conn_reading(r));
    lc_conn_pop(r);
    assert_true(lc_conn_reading(r)); /* 1 left: a quarter of 4 */
    lc_conn_pop(r);
    for (int k = 3; k <= 8; k++) /* seq and stamps go on: no warning */
        send_scan(hub, r, k, 0.05 * k, 0.05 * k);
    for (int k = 1; k <= 4; k++)
        expect(r, "setpoint", NULL);
    expect(r, "error", "rate_limited");
    expect_none(r);
    assert_true(lc_conn_closing(r));
    /* it does not close by itself: the hub kills it after a grace period */
    int kills = io.kills;
    lc_hub_tick(hub, 10.0);
    assert_int_equal(io.kills, kills + 1);
    lc_hub_free(hub);
}

/* A slow viewer loses views, not replies; views are throttled to view_hz. */
static void test_hub_views(void **state)
{
    lc_hub *hub = hub_with(small_queues);
    lc_conn *v = lc_hub_open(hub, NULL, NULL, 0);
    say(hub, v, "{\"type\":\"hello\",\"role\":\"viewer\",\"robot\":\"seen\"}", 0);
    lc_conn *r = robot(hub, "seen", 0);
    lc_conn *other = robot(hub, "unseen", 0);
    double now = 0;
    for (int k = 1; k <= 40; k++) {
        now = 0.01 * k;
        send_scan(hub, r, k, now, now);
        send_scan(hub, other, k, now, now);
        lc_hub_tick(hub, now);
        lc_conn_pop(r);
        lc_conn_pop(other);
    }
    expect(v, "welcome", NULL);
    cJSON *j = next(v);
    assert_string_equal(str(j, "type"), "view");
    assert_string_equal(str(j, "robot"), "seen");
    cJSON_Delete(j);
    expect_none(v);
    /* 0.4 s at 20 views/s: at most 9 views were made, all but one dropped */
    assert_true(lc_hub_views_dropped(hub) >= 3 && lc_hub_views_dropped(hub) <= 8);
    lc_hub_free(hub);
}

/* A slow viewer of every robot loses older views of a robot, never a whole robot. */
static void test_hub_views_every_robot(void **state)
{
    lc_hub *hub = hub_with(small_queues); /* viewer_queue 1 */
    lc_conn *v = lc_hub_open(hub, NULL, NULL, 0);
    say(hub, v, "{\"type\":\"hello\",\"role\":\"viewer\"}", 0);
    expect(v, "welcome", NULL);
    static const char *const names[] = {"r0", "r1", "r2"};
    lc_conn *r[3];
    for (int i = 0; i < 3; i++)
        r[i] = robot(hub, names[i], 0);
    for (int k = 1; k <= 5; k++) { /* every robot's view falls due in the same ticks */
        double now = 0.1 * k;
        for (int i = 0; i < 3; i++) {
            send_scan(hub, r[i], k, now, now);
            lc_conn_pop(r[i]);
        }
        lc_hub_tick(hub, now);
    }
    bool seen[3] = {false};
    for (int i = 0; i < 3; i++) {
        cJSON *j = next(v);
        assert_non_null(j);
        assert_string_equal(str(j, "type"), "view");
        for (int n = 0; n < 3; n++)
            seen[n] |= strcmp(str(j, "robot"), names[n]) == 0;
        assert_near(num(j, "seq"), 5, 0); /* the latest of each */
        cJSON_Delete(j);
    }
    expect_none(v);
    assert_true(seen[0] && seen[1] && seen[2]);
    assert_int_equal(lc_hub_views_dropped(hub), 12); /* 15 made, 3 kept */
    lc_hub_free(hub);
}

static void test_hub_limits(void **state)
{
    lc_hub *hub = hub_with(NULL);
    lc_conn *r = robot(hub, "lim", 0);
    /* fragments are joined */
    const char *a = "{\"type\":\"route\",", *b = "\"waypoints\":[[1,", *c = "0]]} ";
    assert_int_equal(lc_hub_receive(hub, r, a, strlen(a), true, false, false, 0), 0);
    assert_int_equal(lc_hub_receive(hub, r, b, strlen(b), false, false, false, 0), 0);
    assert_int_equal(lc_hub_receive(hub, r, c, strlen(c), false, false, false, 0), 0);
    assert_int_equal(lc_hub_receive(hub, r, "", 0, false, true, false, 0), 0); /* empty final */
    expect_none(r); /* the route was accepted */
    assert_int_equal(lc_hub_receive(hub, r, "", 0, true, true, false, 0), 0);
    expect(r, "error", "bad_json"); /* an empty message */
    /* binary: error, stays open */
    assert_int_equal(lc_hub_receive(hub, r, "\x01\x02", 2, true, true, true, 0), 0);
    expect(r, "error", "binary");
    assert_false(lc_conn_closing(r));
    /* oversize: close at once with 1009, whatever the fragments */
    static char big[65536];
    memset(big, ' ', sizeof big);
    int rc = 0;
    for (int k = 0; k < 17 && rc == 0; k++)
        rc = lc_hub_receive(hub, r, big, sizeof big, k == 0, false, false, 0);
    assert_int_equal(rc, -1);
    assert_int_equal(lc_conn_close_status(r, NULL), LC_CLOSE_TOO_BIG);
    lc_hub_free(hub);
}

static void slow_rate(lc_hub_config *hc) { hc->opts.max_rate = 2; }

static void test_hub_flood_and_hello_timeout(void **state)
{
    lc_hub *hub = hub_with(slow_rate);
    lc_conn *r = robot(hub, "flood", 0);
    send_scan(hub, r, 1, 0, 0);
    expect(r, "warning", "no_route");
    expect(r, "setpoint", NULL);
    send_scan(hub, r, 2, 0.01, 0.01);
    expect(r, "error", "rate_limited");
    assert_true(lc_conn_closing(r));
    lc_conn *mute = lc_hub_open(hub, NULL, NULL, 0);
    lc_hub_tick(hub, 9.9);
    expect_none(mute);
    lc_hub_tick(hub, 10.0);
    expect(mute, "error", "unauthorized");
    assert_true(lc_conn_closing(mute));
    lc_hub_free(hub);
}

static void test_hub_shutdown(void **state)
{
    lc_hub *hub = hub_with(NULL);
    lc_conn *r = robot(hub, "last", 0);
    lc_conn *quiet = robot(hub, "quiet", 0);
    say(hub, r, "{\"type\":\"route\",\"waypoints\":[[3,0]]}", 0);
    send_scan(hub, r, 7, 0, 0);
    cJSON *j = next(r);
    assert_true(num(j, "vx") > 0);
    cJSON_Delete(j);
    lc_hub_shutdown(hub, 0.01);
    j = next(r);
    assert_string_equal(str(j, "type"), "setpoint");
    assert_string_equal(str(j, "state"), "shutdown"); /* not idle, which means no route */
    assert_string_equal(str(j, "limit"), "none");
    assert_near(num(j, "valid_ms"), 100, 0); /* the first frame's 0.05 s, twice */
    assert_near(num(j, "seq"), 7, 0);
    assert_near(num(j, "vx"), 0, 0);
    assert_near(num(j, "vy"), 0, 0);
    cJSON_Delete(j);
    expect_none(r);
    expect_none(quiet); /* no frame, so never a setpoint to stop */
    assert_true(lc_conn_closing(r) && lc_conn_closing(quiet));
    assert_int_equal(lc_conn_close_status(r, NULL), LC_CLOSE_GOING_AWAY);
    lc_hub_free(hub);
}

/* The next message is a warning of this code, naming what (seq < 0: none). */
static void expect_warning(lc_conn *c, const char *code, const char *what, int seq)
{
    cJSON *j = next(c);
    assert_non_null(j);
    assert_string_equal(str(j, "type"), "warning");
    assert_string_equal(str(j, "code"), code);
    if (!strstr(str(j, "message"), what))
        fail_msg("warning %s: \"%s\" does not say %s", code, str(j, "message"), what);
    if (seq < 0)
        assert_null(cJSON_GetObjectItemCaseSensitive(j, "seq"));
    else
        assert_near(num(j, "seq"), seq, 0);
    cJSON_Delete(j);
}

/* A scan of this seq and stamp, naming a sensor and carrying an extra key
 * when those are not NULL; received 10 ms after the one before (the hub's
 * clock goes on whatever the stamps do). */
static double warn_now; /* the hub's clock in test_hub_warnings */

static void send_scan_with(lc_hub *hub, lc_conn *c, int seq, double stamp, const char *sensor,
                           const char *extra)
{
    double now = warn_now += 0.01;
    char text[640];
    int n = snprintf(text, sizeof text, scan_fmt, seq, stamp);
    if (sensor || extra)
        snprintf(text + n - 1, sizeof text - (size_t)n + 1, ",\"%s\":\"%s\"}",
                 sensor ? "sensor" : extra, sensor ? sensor : "x");
    assert_int_equal(say(hub, c, text, now), 0);
}

/*
 * Warnings a robot hears (PROTOCOL.md): each kind once per connection and
 * not twice, unknown keys once per message type (the hello's after its
 * welcome), each before the setpoint of the frame it is about, with that
 * frame's seq; a new connection hears them again; a viewer hears none.
 */
static void test_hub_warnings(void **state)
{
    lc_hub *hub = hub_with(NULL);
    lc_conn *c = lc_hub_open(hub, NULL, NULL, 0);
    say(hub, c, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"w1\",\"tokn\":\"x\"}", 0);
    expect(c, "welcome", NULL);
    expect_warning(c, "unknown_key", "'hello.tokn'", -1);
    expect_none(c);
    for (int k = 0; k < 2; k++) /* a typo keeps the default radius: said once */
        say(hub, c, "{\"type\":\"robot\",\"radus\":0.5,\"sensors\":[{\"name\":\"front\"}]}", 0);
    expect_warning(c, "unknown_key", "'robot.radus'", -1);
    expect_none(c);
    send_scan_with(hub, c, 5, 1.0, NULL, NULL);
    expect_warning(c, "no_route", "route", 5);
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 6, 1.05, NULL, NULL);
    expect(c, "setpoint", NULL);
    expect_none(c);
    say(hub, c, "{\"type\":\"route\",\"waypoints\":[[3,0]]}", warn_now);
    send_scan_with(hub, c, 4, 1.1, NULL, NULL);
    expect_warning(c, "seq_backwards", "scan.seq: 4 is below the previous frame's 6", 4);
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 7, 0.9, NULL, NULL);
    expect_warning(c, "stamp_backwards", "scan.stamp: 0.90000000000000002 is before", 7);
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 3, 0.5, NULL, NULL); /* both again: not said again */
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 8, 1.2, "front", NULL); /* a listed sensor */
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 9, 1.25, "cam", NULL);
    expect_warning(c, "unlisted_sensor", "scan.sensor: 'cam'", 9);
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 10, 1.3, "cam2", NULL);
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 11, 1.35, NULL, "strength");
    expect_warning(c, "unknown_key", "'scan.strength'", 11);
    expect(c, "setpoint", NULL);
    send_scan_with(hub, c, 12, 1.4, NULL, "strength");
    expect(c, "setpoint", NULL);
    expect_none(c);
    /* equal stamps (two sensors at one instant) and equal seqs are no warning */
    lc_conn *c2 = robot(hub, "w2", warn_now);
    say(hub, c2, "{\"type\":\"route\",\"waypoints\":[[3,0]]}", warn_now);
    for (int k = 0; k < 3; k++) {
        send_scan_with(hub, c2, 1, 2.0, NULL, NULL);
        expect(c2, "setpoint", NULL);
    }
    expect_none(c2);
    /* a viewer's unknown key is logged, not sent */
    lc_conn *v = lc_hub_open(hub, NULL, NULL, 0);
    say(hub, v, "{\"type\":\"hello\",\"role\":\"viewer\",\"colour\":\"red\"}", 0);
    expect(v, "welcome", NULL);
    expect_none(v);
    lc_hub_free(hub);
}

static void one_connection(lc_hub_config *hc) { hc->opts.max_connections = 1; }

static void test_hub_max_connections(void **state)
{
    lc_hub *hub = hub_with(one_connection);
    lc_conn *c = lc_hub_open(hub, NULL, NULL, 0);
    assert_non_null(c);
    assert_null(lc_hub_open(hub, NULL, NULL, 0));
    lc_hub_close(hub, c, 0);
    assert_non_null(lc_hub_open(hub, NULL, NULL, 0));
    lc_hub_free(hub);
}

static void two_per_address(lc_hub_config *hc)
{
    hc->opts.max_per_address = 2;
    snprintf(hc->opts.allow_origin, sizeof hc->opts.allow_origin, "https://ops.example");
}

/* Admission: Origin allow-list and connections per address; refused ones read nothing. */
static void test_hub_admission(void **state)
{
    lc_hub *hub = hub_with(two_per_address);
    const lc_peer a = {"192.0.2.5", NULL, "192.0.2.1:7640"};
    const lc_peer page = {"192.0.2.6", "http://192.0.2.1:7640", "192.0.2.1:7640"};
    const lc_peer listed = {"192.0.2.6", "https://ops.example", "192.0.2.1:7640"};
    const lc_peer hostile = {"192.0.2.7", "https://evil.example", "192.0.2.1:7640"};
    lc_conn *a1 = lc_hub_open(hub, NULL, &a, 0), *a2 = lc_hub_open(hub, NULL, &a, 0);
    assert_false(lc_conn_closing(a1) || lc_conn_closing(a2));
    lc_conn *a3 = lc_hub_open(hub, NULL, &a, 0);
    cJSON *j = next(a3);
    assert_string_equal(str(j, "code"), "too_many_connections");
    assert_non_null(strstr(str(j, "message"), "192.0.2.5"));
    assert_non_null(strstr(str(j, "message"), "max_per_address"));
    cJSON_Delete(j);
    assert_true(lc_conn_closing(a3));
    assert_int_equal(lc_conn_close_status(a3, NULL), LC_CLOSE_POLICY);
    /* nothing a refused connection sends is read */
    assert_int_equal(say(hub, a3, "{\"type\":\"hello\",\"role\":\"robot\",\"robot\":\"x\"}", 0), 0);
    expect_none(a3);
    lc_hub_close(hub, a3, 0);
    lc_hub_close(hub, a1, 0);
    lc_conn *a4 = lc_hub_open(hub, NULL, &a, 0); /* a slot is free again */
    assert_false(lc_conn_closing(a4));
    lc_conn *p1 = lc_hub_open(hub, NULL, &page, 0), *p2 = lc_hub_open(hub, NULL, &listed, 0);
    assert_false(lc_conn_closing(p1) || lc_conn_closing(p2));
    lc_conn *h = lc_hub_open(hub, NULL, &hostile, 0);
    j = next(h);
    assert_string_equal(str(j, "code"), "forbidden");
    assert_non_null(strstr(str(j, "message"), "https://evil.example"));
    cJSON_Delete(j);
    assert_true(lc_conn_closing(h));
    assert_int_equal(lc_hub_connections(hub), 5);
    lc_hub_free(hub);
}

static char rec_dir[64];
static void record_to(lc_hub_config *hc)
{
    snprintf(hc->opts.record, sizeof hc->opts.record, "%s", rec_dir);
}

/* A recording that cannot be written: one error recording_failed, setpoints go on. */
static void test_hub_recording_fails(void **state)
{
    snprintf(rec_dir, sizeof rec_dir, "/proc/self/lacuna-no-such-dir");
    lc_hub *hub = hub_with(record_to);
    lc_conn *r = robot(hub, "tape", 0);
    send_scan(hub, r, 1, 0.05, 0.05);
    expect(r, "warning", "no_route");
    expect(r, "setpoint", NULL);
    cJSON *j = next(r);
    assert_string_equal(str(j, "type"), "error");
    assert_string_equal(str(j, "code"), "recording_failed");
    assert_non_null(strstr(str(j, "message"), "record: "));
    assert_near(num(j, "seq"), 1, 0);
    cJSON_Delete(j);
    expect_none(r);
    for (int k = 2; k <= 4; k++) { /* told once; control continues */
        send_scan(hub, r, k, 0.05 * k, 0.05 * k);
        expect(r, "setpoint", NULL);
        expect_none(r);
    }
    lc_hub_free(hub);
}

/* ----------------------------------------------------------- recorder */

static const lc_control rec_ctl = {0, 0.005, 0.2, 0.05, 200};

/* A fresh directory in dir (a "/tmp/lacuna-rec-XXXXXX" buffer), default robot and route. */
static void recorder_setup(char *dir, lc_robot *robot, lc_route *route)
{
    assert_non_null(mkdtemp(dir));
    lc_robot_default(robot);
    lc_route_default(route);
}

static void test_recorder(void **state)
{
    char dir[] = "/tmp/lacuna-rec-XXXXXX";
    lc_robot robot;
    lc_route route;
    recorder_setup(dir, &robot, &route);
    route.count = 1;
    route.waypoints[0] = lc_v2(2.5, -1.0);
    const lc_control ctl = rec_ctl;
    lc_recorder rec;
    assert_int_equal(lc_recorder_open(&rec, dir, "r-1", &robot, &route, &ctl), 0);
    assert_int_equal(lc_recorder_line(&rec, "{\"type\":\"x\"}", 12), 0);
    /* every line is on disk before close (flushed per line) */
    char *text = lc_test_slurp(rec.path);
    assert_non_null(text);
    char *nl = strchr(text, '\n');
    assert_non_null(nl);
    cJSON *h = cJSON_ParseWithLength(text, (size_t)(nl - text));
    assert_non_null(h);
    assert_string_equal(str(h, "type"), "scenario");
    assert_near(num(h, "version"), 1, 0);
    const cJSON *r = cJSON_GetObjectItemCaseSensitive(h, "robot");
    assert_near(num(r, "radius"), robot.radius, 0);
    assert_null(cJSON_GetObjectItemCaseSensitive(r, "type"));
    const cJSON *c = cJSON_GetObjectItemCaseSensitive(h, "control");
    assert_near(num(c, "dt_max"), 0.2, 0);
    cJSON_Delete(h);
    assert_string_equal(nl + 1, "{\"type\":\"x\"}\n");
    free(text);
    /* rotated away: the reopened file starts with the header again */
    char moved[4200];
    snprintf(moved, sizeof moved, "%s.1", rec.path);
    assert_int_equal(rename(rec.path, moved), 0);
    assert_int_equal(lc_recorder_reopen(&rec, &robot, &route), 0);
    assert_int_equal(lc_recorder_line(&rec, "{}", 2), 0);
    text = lc_test_slurp(rec.path);
    assert_non_null(text);
    assert_true(strncmp(text, "{\"type\":\"scenario\",", 19) == 0);
    free(text);
    char path[4200];
    snprintf(path, sizeof path, "%s", rec.path);
    lc_recorder_close(&rec);
    /* a second session of the same name gets its own file */
    lc_recorder rec2;
    assert_int_equal(lc_recorder_open(&rec2, dir, "r-1", &robot, &route, &ctl), 0);
    assert_string_not_equal(rec2.path, path);
    unlink(rec2.path);
    lc_recorder_close(&rec2);
    unlink(path);
    unlink(moved);
    rmdir(dir);
}

/* Writes that fail (/dev/full gives ENOSPC on every write): stop, keep errno, say so once. */
static void test_recorder_full_disk(void **state)
{
    char dir[] = "/tmp/lacuna-rec-XXXXXX";
    lc_robot robot;
    lc_route route;
    recorder_setup(dir, &robot, &route);
    lc_recorder rec;
    assert_int_equal(lc_recorder_open(&rec, dir, "full", &robot, &route, &rec_ctl), 0);
    unlink(rec.path);
    FILE *full = fopen("/dev/full", "w");
    if (!full) {
        rmdir(dir);
        skip();
    }
    fclose(rec.file);
    rec.file = full;
    assert_int_equal(lc_recorder_line(&rec, "{\"type\":\"x\"}", 12), -1);
    assert_false(lc_recorder_is_open(&rec));
    assert_true(rec.failed);
    assert_int_equal(rec.error, ENOSPC);
    assert_int_equal(lc_recorder_line(&rec, "{}", 2), -1);
    lc_recorder_close(&rec);
    rmdir(dir);
}

/* Static files: links and ".." that leave the web directory are refused. */
static void test_web_path_check(void **state)
{
    char top[] = "/tmp/lacuna-web-XXXXXX", web[64], path[128], root[PATH_MAX];
    assert_non_null(mkdtemp(top));
    snprintf(web, sizeof web, "%s/web", top);
    assert_int_equal(mkdir(web, 0755), 0);
    snprintf(path, sizeof path, "%s/sub", web);
    assert_int_equal(mkdir(path, 0755), 0);
    static const char *const files[] = {"web/index.html", "web/sub/a.js", "secret.txt"};
    for (size_t i = 0; i < 3; i++) {
        snprintf(path, sizeof path, "%s/%s", top, files[i]);
        FILE *f = fopen(path, "w");
        assert_non_null(f);
        fclose(f);
    }
    static const char *const links[][2] = {
        {"web/leak.txt", "../secret.txt"}, {"web/etc", "/etc"},
        {"web/sub/home.html", "../index.html"}, {"web/loop", "loop"},
    };
    for (size_t i = 0; i < 4; i++) {
        snprintf(path, sizeof path, "%s/%s", top, links[i][0]);
        assert_int_equal(symlink(links[i][1], path), 0);
    }
    assert_non_null(realpath(web, root));
    static const struct {
        const char *uri;
        lc_web_path want;
    } cases[] = {
        {"/", LC_WEB_INSIDE}, {"/index.html", LC_WEB_INSIDE}, {"/sub/a.js", LC_WEB_INSIDE},
        {"/sub/home.html", LC_WEB_INSIDE}, {"/sub/../index.html", LC_WEB_INSIDE},
        {"/leak.txt", LC_WEB_OUTSIDE}, {"/etc/hostname", LC_WEB_OUTSIDE}, {"/etc", LC_WEB_OUTSIDE},
        {"/../secret.txt", LC_WEB_OUTSIDE}, {"/sub/../../secret.txt", LC_WEB_OUTSIDE},
        {"/..", LC_WEB_OUTSIDE}, {"/loop", LC_WEB_OUTSIDE}, {"index.html", LC_WEB_OUTSIDE},
        {"", LC_WEB_OUTSIDE}, {"/nothing.html", LC_WEB_MISSING},
        {"/index.html/x", LC_WEB_MISSING},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        lc_web_path got = lc_web_path_check(root, cases[i].uri, strlen(cases[i].uri));
        if (got != cases[i].want)
            fail_msg("%s: %d, want %d", cases[i].uri, got, cases[i].want);
    }
    assert_int_equal(lc_web_path_check(root, "/index.html\0../x", 17), LC_WEB_OUTSIDE);
    char cmd[160];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", top);
    assert_int_equal(system(cmd), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_config_defaults_and_flags),
        cmocka_unit_test(test_config_file),
        cmocka_unit_test(test_config_allow_origin),
        cmocka_unit_test(test_origin_allowed),
        cmocka_unit_test(test_config_print_round_trip),
        cmocka_unit_test(test_listen_parse),
        cmocka_unit_test(test_token_equal),
        cmocka_unit_test(test_hub_hello_and_roles),
        cmocka_unit_test(test_hub_token),
        cmocka_unit_test(test_hub_setpoints_and_watchdog),
        cmocka_unit_test(test_hub_send_queue_full),
        cmocka_unit_test(test_hub_views),
        cmocka_unit_test(test_hub_views_every_robot),
        cmocka_unit_test(test_hub_limits),
        cmocka_unit_test(test_hub_flood_and_hello_timeout),
        cmocka_unit_test(test_hub_shutdown),
        cmocka_unit_test(test_hub_warnings),
        cmocka_unit_test(test_hub_max_connections),
        cmocka_unit_test(test_hub_admission),
        cmocka_unit_test(test_hub_recording_fails),
        cmocka_unit_test(test_recorder),
        cmocka_unit_test(test_recorder_full_disk),
        cmocka_unit_test(test_web_path_check),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
