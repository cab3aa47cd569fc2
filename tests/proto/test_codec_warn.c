/*
 * test_codec_warn.c - what lacuna.v2 added to the wire (codec.h,
 * proto/PROTOCOL.md): the scan frame's own names, errors that name a field
 * by its full path, bad_json that names NaN and Infinity, the setpoint's
 * valid_ms, the shutdown state and the warning message.
 *
 * - A table of bad inputs over every message type: each error names its
 *   field from the message's type ("robot.radius", "route.waypoints[3][1]",
 *   "scan.dist[2]", "setpoint.valid_ms"), as a scenario header and a plan
 *   request name the same objects ("robot.radius", "frame.dist[1]").
 * - The words of JSON's missing numbers as Python's json.dumps writes them
 *   by default (NaN, Infinity, -Infinity: common practice, and what C's
 *   printf writes, nan and inf) are named in the bad_json message, with
 *   their offset, in messages, plan requests and scenario headers; other
 *   bad JSON is not said to hold them.
 * - The scan names on both decode paths: a plain scan takes the fast path
 *   and decodes as the cJSON path does, degenerate scans included; a scan
 *   written with lacuna.v1's names leaves the fast path and is refused,
 *   its old names counted as unknown keys.
 * - valid_ms and warnings encode and decode, and bad ones are refused.
 *
 * Table entries are written with ' for " to stay readable.
 */
#include "testutil.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "codec.h"
#include "codec_fast.h"
#include "scenario.h"

#define SCAN_HEAD "{'type':'scan','seq':7,'stamp':1.5,'pose':[0,0,0],"
#define BAND "'bearing_first':-1,'bearing_step':0.1,'near':0.1,'far':10,"
#define SP_HEAD "{'type':'setpoint','seq':1,'stamp':0,'v':0,'w':0,'state':'tracking'," \
                "'limit':'none','waypoint':null"

enum { MESSAGE = 0, PLAN, HEADER };

typedef struct path_case {
    int entry;
    const char *text;
    const char *field; /* the message starts with "field:" */
} path_case;

static const path_case path_cases[] = {
    {MESSAGE, "{'type':'robot','radius':0}", "robot.radius"},
    {MESSAGE, "{'type':'robot','sensors':[{'name':'a'},{'name':'a'}]}", "robot.sensors[1].name"},
    {MESSAGE, "{'type':'route','waypoints':[[0,0],[1,1],[2,2],[3,'x']]}",
     "route.waypoints[3][1]"},
    {MESSAGE, "{'type':'route','waypoints':[],'tolerance':-1}", "route.tolerance"},
    {MESSAGE, SCAN_HEAD BAND "'dist':[1,2,'far']}", "scan.dist[2]"},
    {MESSAGE, SCAN_HEAD "'bearing_first':0,'bearing_step':0,'near':1,'far':2,'dist':[1]}",
     "scan.bearing_step"},
    {MESSAGE, SCAN_HEAD "'bearing_first':0,'bearing_step':0.1,'near':2,'far':2,'dist':[1]}",
     "scan.far"},
    {MESSAGE, SCAN_HEAD "'bearing_first':0,'bearing_step':0.1,'far':2,'dist':[1]}", "scan.near"},
    {MESSAGE, "{'type':'scan','seq':7,'stamp':1.5,'pose':[0,0]}", "scan.pose"},
    {MESSAGE, "{'type':'scan','seq':7,'stamp':1.5,'pose':[0,0,0],'sensor':''}", "scan.sensor"},
    {MESSAGE, "{'type':'points','seq':1,'stamp':0,'pose':[0,0,0],'xy':[1,2],'z':[1,2]}",
     "points.z"},
    {MESSAGE, "{'type':'hello','role':'admin'}", "hello.role"},
    {MESSAGE, "{'type':'hello','role':'robot','robot':'a/b'}", "hello.robot"},
    {MESSAGE, "{'type':'hello','role':'robot','robot':'r','token':7}", "hello.token"},
    {MESSAGE, "{'type':'welcome','role':'robot','robot':'r'}", "welcome.protocol"},
    {MESSAGE, SP_HEAD "}", "setpoint.valid_ms"},
    {MESSAGE, SP_HEAD ",'valid_ms':0}", "setpoint.valid_ms"},
    {MESSAGE, SP_HEAD ",'valid_ms':99.5}", "setpoint.valid_ms"},
    {MESSAGE, SP_HEAD ",'valid_ms':1000000001}", "setpoint.valid_ms"},
    {MESSAGE, SP_HEAD ",'valid_ms':'100'}", "setpoint.valid_ms"},
    {MESSAGE, "{'type':'setpoint','seq':1,'stamp':0,'v':0,'w':0,'state':'napping'}",
     "setpoint.state"},
    {MESSAGE, "{'type':'event','event':'teleported','stamp':0}", "event.event"},
    {MESSAGE, "{'type':'error','code':'oops','message':'x'}", "error.code"},
    {MESSAGE, "{'type':'warning','code':'typo','message':'x'}", "warning.code"},
    {MESSAGE, "{'type':'warning','code':'no_route'}", "warning.message"},
    {MESSAGE, "{'type':'warning','code':'no_route','message':'x','seq':-1}", "warning.seq"},
    {MESSAGE, "{'type':'warning','code':'no_route','message':7}", "warning.message"},
    {PLAN, "{'goal':[1,0],'robot':{'radius':0},'frame':{'xy':[]}}", "robot.radius"},
    {PLAN, "{'goal':[1,0],'frame':{'type':'scan','seq':1,'stamp':0,'pose':[0,0,0]," BAND
           "'dist':[1,'x']}}", "frame.dist[1]"},
    {HEADER, "{'type':'scenario','version':1,'robot':{'radius':0}}", "robot.radius"},
    {HEADER, "{'type':'scenario','version':1,'route':{'waypoints':[[0,'x']]}}",
     "route.waypoints[0][1]"},
    {HEADER, "{'type':'scenario','version':1,'sensor':{'near':2,'far':1}}", "sensor.far"},
    {HEADER, "{'type':'scenario','version':1,'sensors':[{'name':'a','far':0}]}",
     "sensors[0].far"},
    {HEADER, "{'type':'scenario','version':1,'control':{'dt_min':0}}", "control.dt_min"},
};

static void test_full_paths(void **state)
{
    (void)state;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    static lc_scenario_header h;
    lc_scenario_header_init(&h);
    for (size_t i = 0; i < sizeof path_cases / sizeof path_cases[0]; i++) {
        char text[1024];
        const path_case *c = &path_cases[i];
        lc_test_unquote(c->text, text, sizeof text);
        lc_wire_error err;
        lc_scenario_error serr;
        const char *said = NULL;
        int rc;
        if (c->entry == MESSAGE) {
            rc = lc_wire_decode(text, strlen(text), NULL, &buf, &msg, &err);
            said = err.message;
        } else if (c->entry == PLAN) {
            rc = lc_wire_decode_plan_request(text, strlen(text), NULL, &buf, &req, &err);
            said = err.message;
        } else {
            rc = lc_scenario_parse_header(text, strlen(text), &h, &serr);
            said = strchr(serr.message, ' ') ? strchr(serr.message, ' ') + 1 : serr.message;
        }
        if (rc != -1 || !lc_test_names_field(said, c->field))
            fail_msg("case %zu %s: rc %d, \"%s\"; wanted it to name %s", i, text, rc, said,
                     c->field);
    }
    lc_scenario_header_free(&h);
    lc_wire_buffers_free(&buf);
}

/* ------------------------------------------------------ NaN, Infinity */

static void test_nonfinite_named(void **state)
{
    (void)state;
    static const char *const words[] = {"NaN", "Infinity", "-Infinity", "nan", "-nan", "inf",
                                        "-inf"};
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg msg;
    static lc_wire_plan_request req;
    for (size_t i = 0; i < sizeof words / sizeof words[0]; i++) {
        char text[256], want[64];
        int n = snprintf(text, sizeof text,
                         "{\"type\":\"scan\",\"seq\":3,\"stamp\":0,\"pose\":[0,0,0],"
                         "\"bearing_first\":0,\"bearing_step\":0.1,\"near\":0.1,\"far\":9,"
                         "\"dist\":[1.5,%s,2]}", words[i]);
        lc_wire_error err;
        assert_int_equal(lc_wire_decode(text, (size_t)n, NULL, &buf, &msg, &err), -1);
        assert_int_equal(err.code, LC_WIRE_BAD_JSON);
        snprintf(want, sizeof want, "message: %s at offset %ld is not JSON", words[i],
                 (long)(strstr(text, words[i]) - text));
        if (strncmp(err.message, want, strlen(want)) != 0 || !strstr(err.message, "null"))
            fail_msg("%s: \"%s\", wanted it to start \"%s\" and say null", words[i],
                     err.message, want);
        /* a plan request's frame the same */
        n = snprintf(text, sizeof text, "{\"goal\":[1,0],\"dt\":%s,\"frame\":{\"xy\":[]}}",
                     words[i]);
        assert_int_equal(lc_wire_decode_plan_request(text, (size_t)n, NULL, &buf, &req, &err),
                         -1);
        assert_non_null(strstr(err.message, words[i]));
    }
    /* a scenario header the same (a script's json.dumps may write them) */
    static lc_scenario_header h;
    lc_scenario_header_init(&h);
    lc_scenario_error serr;
    const char *hdr = "{\"type\":\"scenario\",\"version\":1,\"max_time\":Infinity}";
    assert_int_equal(lc_scenario_parse_header(hdr, strlen(hdr), &h, &serr), -1);
    assert_non_null(strstr(serr.message, "bad_json: header: Infinity at offset 42 is not JSON"));
    lc_scenario_header_free(&h);
    /* other bad JSON is not said to hold them; a string "NaN" is fine */
    char text[128];
    lc_wire_error err;
    lc_test_unquote("{'type':'robot','radius':0.3,", text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &msg, &err), -1);
    assert_int_equal(err.code, LC_WIRE_BAD_JSON);
    assert_null(strstr(err.message, "NaN"));
    lc_test_unquote("{'type':'robot','radius':nul}", text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &msg, &err), -1);
    assert_null(strstr(err.message, "nan"));
    lc_test_unquote("{'type':'hello','role':'robot','robot':'r','token':'NaN'}", text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &msg, &err), 0);
    lc_wire_buffers_free(&buf);
}

/* ------------------------------------------------- scan names, 2 paths */

/* Decoded by the fast path and by the cJSON path alone: the same frame. */
static void both_paths(const char *text, int want_fast)
{
    lc_wire_buffers b1, b2;
    lc_wire_buffers_init(&b1, NULL);
    lc_wire_buffers_init(&b2, NULL);
    static lc_wire_msg fast, slow;
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    lc_wire_error err;
    int took = lc_wire_decode_frame_fast(text, strlen(text), &lim, &b1, &fast);
    int rc = lc_wire_decode_slow(text, strlen(text), &lim, &b2, &slow, &err);
    if (took != want_fast)
        fail_msg("%s: fast path %s", text, took ? "took it" : "declined");
    if (took) {
        assert_int_equal(rc, 0);
        const lc_frame *a = &fast.u.frame, *b = &slow.u.frame;
        assert_true(a->angle_start == b->angle_start && a->angle_step == b->angle_step &&
                    a->range_min == b->range_min && a->range_max == b->range_max);
        assert_int_equal(a->n_ranges, b->n_ranges);
        for (int i = 0; i < a->n_ranges; i++)
            assert_true(memcmp(&a->ranges[i], &b->ranges[i], sizeof(double)) == 0 ||
                        (isnan(a->ranges[i]) && isnan(b->ranges[i])));
    }
    lc_wire_buffers_free(&b1);
    lc_wire_buffers_free(&b2);
}

static void test_scan_names_both_paths(void **state)
{
    (void)state;
    char text[512];
    /* plain scans, degenerate ones too: one beam, all no return, out of
     * band either side, a full turn, a negative step */
    static const char *const plain[] = {
        SCAN_HEAD BAND "'dist':[2.5]}",
        SCAN_HEAD BAND "'dist':[null,null,null]}",
        SCAN_HEAD BAND "'dist':[0.05,10.5,0.1,10,5]}",
        SCAN_HEAD "'bearing_first':0,'bearing_step':-0.5,'near':0.01,'far':1e6,'dist':[1,2]}",
        SCAN_HEAD "'bearing_first':-3.14159,'bearing_step':1.5707963267948966,'near':1,"
                  "'far':2,'dist':[1,1,1,1,1]}",
    };
    for (size_t i = 0; i < sizeof plain / sizeof plain[0]; i++)
        both_paths(lc_test_unquote(plain[i], text, sizeof text), 1);
    /* no return: outside [near, far] or null, on the fast path as on the other */
    static lc_wire_msg m;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_error err;
    lc_test_unquote(plain[2], text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err), 0);
    assert_true(isnan(m.u.frame.ranges[0]) && isnan(m.u.frame.ranges[1]));
    assert_true(m.u.frame.ranges[2] == 0.1 && m.u.frame.ranges[3] == 10);
    /* refused ones decline on the fast path; the cJSON path names the field */
    static const char *const refused[][2] = {
        {SCAN_HEAD "'bearing_first':0,'bearing_step':0.1,'near':3,'far':3,'dist':[1]}", "scan.far"},
        {SCAN_HEAD "'bearing_first':0,'bearing_step':0.1,'near':0,'far':3,'dist':[1]}",
         "scan.near"},
        {SCAN_HEAD BAND "'dist':[]}", "scan.dist"},
        {SCAN_HEAD "'bearing_first':0,'bearing_step':3,'near':1,'far':3,'dist':[1,1,1,1]}",
         "scan.bearing_step"},
        /* lacuna.v1's names: unknown keys now, so the required ones are missing */
        {SCAN_HEAD "'angle_start':0,'angle_step':0.1,'range_min':0.1,'range_max':10,"
                   "'ranges':[1,2]}", "scan.bearing_first"},
        {SCAN_HEAD BAND "'dist':[1],'ranges':[1]}", NULL},
    };
    for (size_t i = 0; i < sizeof refused / sizeof refused[0]; i++) {
        lc_test_unquote(refused[i][0], text, sizeof text);
        both_paths(text, 0);
        int rc = lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err);
        if (!refused[i][1]) { /* an extra key: accepted, counted, slow path */
            assert_int_equal(rc, 0);
            assert_int_equal(err.ignored, 1);
            assert_string_equal(err.ignored_keys, "'scan.ranges'");
            continue;
        }
        if (rc != -1 || !lc_test_names_field(err.message, refused[i][1]))
            fail_msg("%s: \"%s\", wanted %s", text, err.message, refused[i][1]);
    }
    lc_test_unquote(refused[4][0], text, sizeof text);
    lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err);
    assert_int_equal(err.ignored, 5);
    /* encoding writes the new names and nothing of the old ones */
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_test_unquote(plain[2], text, sizeof text);
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err), 0);
    assert_int_equal(lc_wire_encode_frame(&t, &m.u.frame), 0);
    assert_non_null(strstr(t.s, "\"bearing_first\":-1,\"bearing_step\":0.1,\"near\":0.1,"
                                "\"far\":10,\"dist\":[null,null,0.1,10,5]"));
    assert_null(strstr(t.s, "range"));
    assert_null(strstr(t.s, "angle"));
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

/* ------------------------------------------- valid_ms, shutdown, warning */

static void test_setpoint_valid_ms_and_shutdown(void **state)
{
    (void)state;
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg m;
    lc_wire_error err;
    const int valid[] = {1, 100, 200, LC_VALID_MS_MAX};
    for (size_t i = 0; i < sizeof valid / sizeof valid[0]; i++) {
        lc_wire_setpoint sp = {.seq = 9, .stamp = 4.25, .model = LC_MODEL_POINT,
                               .state = LC_STATE_SHUTDOWN, .waypoint = -1,
                               .valid_ms = valid[i]};
        sp.sp.limit = LC_LIMIT_NONE;
        assert_int_equal(lc_wire_encode_setpoint(&t, &sp), 0);
        char want[64];
        snprintf(want, sizeof want, "\"state\":\"shutdown\",\"limit\":\"none\","
                                    "\"waypoint\":null,\"valid_ms\":%d}", valid[i]);
        assert_non_null(strstr(t.s, want));
        assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &m, &err), 0);
        assert_int_equal(m.type, LC_MSG_SETPOINT);
        assert_int_equal(m.u.setpoint.valid_ms, valid[i]);
        assert_int_equal(m.u.setpoint.state, LC_STATE_SHUTDOWN);
    }
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

static void test_warning_messages(void **state)
{
    (void)state;
    static const char *const names[LC_WARN_COUNT] = {"unknown_key", "no_route",
                                                     "stamp_backwards", "seq_backwards",
                                                     "unlisted_sensor"};
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    static lc_wire_msg m;
    lc_wire_error err;
    for (int k = 0; k < LC_WARN_COUNT; k++) {
        assert_string_equal(lc_wire_warn_name((lc_wire_warn)k), names[k]);
        lc_wire_warn back;
        assert_true(lc_wire_warn_from_name(names[k], &back) && back == (lc_wire_warn)k);
        for (int with_seq = 0; with_seq < 2; with_seq++) {
            lc_wire_warning w = {.code = (lc_wire_warn)k, .has_seq = with_seq, .seq = 12345};
            snprintf(w.message, sizeof w.message, "scan.seq: \"%s\" \\ said once", names[k]);
            assert_int_equal(lc_wire_encode_warning(&t, &w), 0);
            assert_int_equal(strncmp(t.s, "{\"type\":\"warning\",\"code\":\"", 26), 0);
            assert_true(with_seq == (strstr(t.s, "\"seq\":12345") != NULL));
            assert_int_equal(lc_wire_decode(t.s, (size_t)t.len, NULL, &buf, &m, &err), 0);
            assert_int_equal(m.type, LC_MSG_WARNING);
            assert_int_equal(m.u.warning.code, k);
            assert_string_equal(m.u.warning.message, w.message);
            assert_int_equal(m.u.warning.has_seq, with_seq);
            assert_true(!with_seq || m.u.warning.seq == 12345);
        }
    }
    lc_wire_warn x;
    assert_false(lc_wire_warn_from_name("warning", &x));
    assert_false(lc_wire_warn_from_name("", &x));
    assert_string_equal(lc_wire_warn_name(LC_WARN_COUNT), "unknown");
    assert_string_equal(lc_wire_warn_name((lc_wire_warn)-1), "unknown");
    /* a message longer than the codec keeps is refused, not cut */
    char text[512];
    int n = snprintf(text, sizeof text, "{\"type\":\"warning\",\"code\":\"no_route\",\"message\":\"");
    for (int i = 0; i < LC_WIRE_MESSAGE_MAX; i++)
        text[n++] = 'x';
    snprintf(text + n, sizeof text - (size_t)n, "\"}");
    assert_int_equal(lc_wire_decode(text, strlen(text), NULL, &buf, &m, &err), -1);
    assert_true(lc_test_names_field(err.message, "warning.message"));
    lc_wire_text_free(&t);
    lc_wire_buffers_free(&buf);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_full_paths),
        cmocka_unit_test(test_nonfinite_named),
        cmocka_unit_test(test_scan_names_both_paths),
        cmocka_unit_test(test_setpoint_valid_ms_and_shutdown),
        cmocka_unit_test(test_warning_messages),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
