/*
 * test_scenario.c - the scenario file reader and writer: every header field,
 * defaults, an exact round trip of the header (numbers parse back bit for
 * bit), bad lines reported with their line numbers, a truncated last line
 * skipped with a warning, and degenerate files (empty, header only, blank
 * lines, a second header, huge numbers); unknown keys warned of (the header
 * every time, messages once per type) and none in the shipped scenarios;
 * the header's list of simulated sensors (fields, defaults, round trip, and
 * each bad field named).
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "scenario.h"

static const char header_full[] =
    "{\"type\":\"scenario\",\"version\":1,\"description\":\"a \\\"test\\\" site\","
    "\"robot\":{\"model\":\"unicycle\",\"radius\":0.32,\"v_max\":0.9},"
    "\"route\":{\"waypoints\":[[4,0],[4,4]],\"loop\":true,\"tolerance\":0.3},"
    "\"start\":[0.1,0.2,0.3],"
    "\"world\":{\"polygons\":[[[2,-0.6],[2.6,-0.6],[2.6,0.3]],[[0,5],[6,5]]]},"
    "\"sensor\":{\"beams\":181,\"fov\":3.141592653589793,\"near\":0.05,"
    "\"far\":8,\"rate\":10,\"noise\":0.01,\"mount\":[0.1,0,0]},"
    "\"expect\":\"blocked\",\"max_time\":30,\"family\":\"cul_de_sac\",\"shortest_path\":12.5}";

static const char scan_line[] =
    "{\"type\":\"scan\",\"seq\":1,\"stamp\":0.1,\"pose\":[0,0,0],\"bearing_first\":-1,"
    "\"bearing_step\":0.5,\"near\":0.05,\"far\":8,\"dist\":[1,2,null,3,4]}";

static const char setpoint_line[] =
    "{\"type\":\"setpoint\",\"seq\":1,\"stamp\":0.1,\"v\":0.25,\"w\":-0.125,"
    "\"state\":\"tracking\",\"limit\":\"braking\",\"waypoint\":0,\"valid_ms\":100}";

typedef struct warnings {
    int count, line;
    char last[128];
} warnings;

static void on_warning(void *data, int line, const char *message)
{
    warnings *w = data;
    w->count++;
    w->line = line;
    snprintf(w->last, sizeof w->last, "%s", message);
}

/* Reads text fully: the number of messages, or -(line) of the first error. */
static int read_all(const char *text, warnings *w, lc_scenario_error *err, int *types)
{
    lc_scenario_reader r;
    lc_scenario_header h;
    lc_scenario_header_init(&h);
    lc_scenario_reader_init(&r, text, strlen(text), NULL);
    r.warning = on_warning;
    r.warning_data = w;
    int n = 0, rc = lc_scenario_read_header(&r, &h, err);
    if (rc == 0) {
        lc_wire_msg m;
        while ((rc = lc_scenario_next(&r, &m, err)) > 0) {
            if (types)
                types[n] = m.type;
            n++;
        }
    }
    lc_scenario_reader_free(&r);
    lc_scenario_header_free(&h);
    return rc < 0 ? -err->line : n;
}

static void test_header_fields(void **state)
{
    lc_scenario_header h;
    lc_scenario_header_init(&h);
    lc_scenario_error err;
    assert_int_equal(lc_scenario_parse_header(header_full, strlen(header_full), &h, &err), 0);
    assert_string_equal(h.description, "a \"test\" site");
    assert_true(h.has_robot && h.robot.model == LC_MODEL_UNICYCLE);
    assert_near(h.robot.radius, 0.32, 0);
    assert_near(h.robot.margin, 0.05, 0); /* docs/INTERFACES.md default */
    assert_true(h.has_route && h.route.count == 2 && h.route.loop);
    assert_near(h.route.waypoints[1].y, 4, 0);
    assert_true(h.has_start);
    assert_near(h.start.yaw, 0.3, 0);
    assert_true(h.has_world);
    assert_int_equal(h.world.np, 2);
    assert_int_equal(h.world.span[1].count, 2);
    assert_true(h.has_sensor);
    assert_int_equal(h.sensor.beams, 181);
    assert_near(h.sensor.mount.x, 0.1, 0);
    assert_int_equal(h.expect, LC_EXPECT_BLOCKED);
    assert_near(h.max_time, 30, 0);
    assert_string_equal(h.family, "cul_de_sac");
    assert_near(h.shortest_path, 12.5, 0);
    assert_near(lc_scenario_first_dt(&h), 0.1, 0);
    lc_scenario_header_free(&h);
}

static void test_header_defaults(void **state)
{
    const char *t = "{\"type\":\"scenario\",\"version\":1}";
    lc_scenario_header h;
    lc_scenario_header_init(&h);
    lc_scenario_error err;
    assert_int_equal(lc_scenario_parse_header(t, strlen(t), &h, &err), 0);
    assert_false(h.has_robot || h.has_route || h.has_start || h.has_world || h.has_sensor);
    assert_int_equal(h.robot.model, LC_MODEL_POINT);
    assert_near(h.robot.v_max, 0.8, 0);
    assert_int_equal(h.expect, LC_EXPECT_DONE);
    assert_string_equal(h.family, "");
    assert_near(h.shortest_path, 0, 0);
    assert_near(lc_scenario_first_dt(&h), 0.05, 0);
    lc_scenario_header_free(&h);
}

/* Encode, parse back, encode again: the same text and the same doubles. */
static void test_header_round_trip(void **state)
{
    lc_scenario_header a, b;
    lc_scenario_header_init(&a);
    lc_scenario_header_init(&b);
    lc_scenario_error err;
    assert_int_equal(lc_scenario_parse_header(header_full, strlen(header_full), &a, &err), 0);
    a.start = (lc_pose){0.1 + 0.2, 1.0 / 3.0, -LC_PI}; /* no short decimal form */
    a.has_start = true;
    lc_wire_text t1, t2;
    lc_wire_text_init(&t1, NULL);
    lc_wire_text_init(&t2, NULL);
    assert_int_equal(lc_scenario_encode_header(&t1, &a), 0);
    assert_int_equal(lc_scenario_parse_header(t1.s, (size_t)t1.len, &b, &err), 0);
    assert_true(b.start.x == a.start.x && b.start.y == a.start.y && b.start.yaw == a.start.yaw);
    assert_int_equal(lc_scenario_encode_header(&t2, &b), 0);
    assert_string_equal(t1.s, t2.s);
    assert_string_equal(b.description, a.description);
    assert_int_equal(b.world.nv, a.world.nv);
    assert_int_equal(b.sensor.beams, a.sensor.beams);
    assert_true(b.sensor.fov == a.sensor.fov);
    assert_string_equal(b.family, "cul_de_sac");
    assert_true(b.shortest_path == 12.5);
    lc_wire_text_free(&t1);
    lc_wire_text_free(&t2);
    lc_scenario_header_free(&a);
    lc_scenario_header_free(&b);
}

static void test_messages_in_order(void **state)
{
    char text[2048];
    snprintf(text, sizeof text, "%s\n%s\n\n  \n%s\n", header_full, scan_line, setpoint_line);
    warnings w = {0};
    lc_scenario_error err;
    int types[4];
    assert_int_equal(read_all(text, &w, &err, types), 2);
    assert_int_equal(types[0], LC_MSG_SCAN);
    assert_int_equal(types[1], LC_MSG_SETPOINT);
    assert_int_equal(w.count, 0);
}

static void test_bad_lines_named(void **state)
{
    static const struct {
        const char *line3;
        const char *reason; /* a piece of the message */
    } cases[] = {
        {"{\"type\":\"scan\",", "bad_json"},
        {"[1,2]", "bad_message"},
        {"{\"type\":\"teleport\"}", "unknown_type"},
        {"{\"type\":\"setpoint\",\"seq\":1,\"stamp\":0,\"vx\":1,\"vy\":0,\"state\":\"x\","
         "\"limit\":\"goal\",\"waypoint\":0}", "state"},
        {"{\"type\":\"scan\",\"seq\":1,\"stamp\":1e400,\"pose\":[0,0,0],\"bearing_first\":0,"
         "\"bearing_step\":0.1,\"near\":0.1,\"far\":5,\"dist\":[1]}", "stamp"},
        {"{\"type\":\"scenario\",\"version\":1}", "second scenario"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        char text[2048];
        snprintf(text, sizeof text, "%s\n%s\n%s\n%s\n", header_full, scan_line, cases[i].line3,
                 setpoint_line);
        warnings w = {0};
        lc_scenario_error err = {0};
        assert_int_equal(read_all(text, &w, &err, NULL), -3);
        if (!strstr(err.message, cases[i].reason))
            fail_msg("case %zu: '%s' does not name '%s'", i, err.message, cases[i].reason);
    }
}

static void test_truncated_last_line_skipped(void **state)
{
    char text[2048];
    /* a crash mid-write: the last line stops inside its JSON, no newline */
    snprintf(text, sizeof text, "%s\n%s\n%s\n%.40s", header_full, scan_line, setpoint_line,
             scan_line);
    warnings w = {0};
    lc_scenario_error err;
    assert_int_equal(read_all(text, &w, &err, NULL), 2);
    assert_int_equal(w.count, 1);
    assert_int_equal(w.line, 4);
    assert_non_null(strstr(w.last, "truncated"));
    /* a complete last line without its newline is read */
    snprintf(text, sizeof text, "%s\n%s", header_full, scan_line);
    assert_int_equal(read_all(text, &w, &err, NULL), 1);
    assert_int_equal(w.count, 1);
    /* but a complete, wrong last line is an error, not a truncation */
    snprintf(text, sizeof text, "%s\n{\"type\":\"scan\"}", header_full);
    assert_int_equal(read_all(text, &w, &err, NULL), -2);
}

static void test_bad_headers(void **state)
{
    static const struct {
        const char *text;
        const char *reason;
    } cases[] = {
        {"", "no scenario header"},
        {"\n{\"type\":\"scenario\",\"version\":1}\n", "no scenario header"},
        {"{\"type\":\"scenario\",\"vers", "truncated"},
        {"{\"type\":\"scan\",\"version\":1}\n", "scenario"},
        {"{\"type\":\"scenario\"}\n", "version"},
        {"{\"type\":\"scenario\",\"version\":2}\n", "not supported"},
        {"{\"type\":\"scenario\",\"version\":1,\"world\":{\"polygons\":[[[0,0]]]}}\n",
         "world.polygons[0]"},
        {"{\"type\":\"scenario\",\"version\":1,\"world\":{\"polygons\":[[[0,0],[1,\"a\"]]]}}\n",
         "world.polygons[0][1]"},
        {"{\"type\":\"scenario\",\"version\":1,\"sensor\":{\"beams\":0}}\n", "sensor.beams"},
        {"{\"type\":\"scenario\",\"version\":1,\"sensor\":{\"near\":5,\"far\":1}}\n",
         "far"},
        {"{\"type\":\"scenario\",\"version\":1,\"robot\":{\"radius\":-1}}\n", "robot.radius"},
        {"{\"type\":\"scenario\",\"version\":1,\"start\":[0,1e400,0]}\n", "start"},
        {"{\"type\":\"scenario\",\"version\":1,\"expect\":\"maybe\"}\n", "expect"},
        {"{\"type\":\"scenario\",\"version\":1,\"version\":1}\n", "version"},
        {"{\"type\":\"scenario\",\"version\":1,\"family\":\"\"}\n", "family"},
        {"{\"type\":\"scenario\",\"version\":1,\"family\":\"two words\"}\n", "family"},
        {"{\"type\":\"scenario\",\"version\":1,\"family\":7}\n", "family"},
        {"{\"type\":\"scenario\",\"version\":1,\"family\":\"a123456789b123456789c123456789"
         "d123456789e123456789f123456789g123\"}\n", "family"},
        {"{\"type\":\"scenario\",\"version\":1,\"shortest_path\":-1}\n", "shortest_path"},
        {"{\"type\":\"scenario\",\"version\":1,\"shortest_path\":\"far\"}\n", "shortest_path"},
        {"{\"type\":\"scenario\",\"version\":1} x\n", "after"},
        /* the list of sensors */
        {"{'type':'scenario','version':1,'sensor':{},'sensors':[{'name':'a'}]}\n",
         "sensors: give sensor or sensors"},
        {"{'type':'scenario','version':1,'sensors':[]}\n", "sensors: fewer than 1"},
        {"{'type':'scenario','version':1,'sensors':{}}\n", "sensors: not an array"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a'},{'name':'b'},{'name':'c'},"
         "{'name':'d'},{'name':'e'},{'name':'f'},{'name':'g'},{'name':'h'},{'name':'i'}]}\n",
         "sensors: more than 8"},
        {"{'type':'scenario','version':1,'sensors':[7]}\n", "sensors[0]: not an object"},
        {"{'type':'scenario','version':1,'sensors':[{'beams':3}]}\n", "sensors[0].name: missing"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a'},{'name':'a/b'}]}\n",
         "sensors[1].name"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a'},{'name':'b'},{'name':'a'}]}\n",
         "sensors[2].name: \"a\" is the name of sensors[0]"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','kind':'sonar'}]}\n",
         "sensors[0].kind"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','near':2,'far':1}]}\n",
         "sensors[0].far: must be > near"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','rate':0}]}\n", "sensors[0].rate"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','beams':0}]}\n",
         "sensors[0].beams"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','fov':7}]}\n", "sensors[0].fov"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','noise':-1}]}\n",
         "sensors[0].noise"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','mount':[0,0]}]}\n",
         "sensors[0].mount"},
        {"{'type':'scenario','version':1,'sensors':[{'name':'a','name':'b'}]}\n",
         "sensors[0].name"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        warnings w = {0};
        lc_scenario_error err = {0};
        char text[1024];
        size_t n = strlen(cases[i].text);
        assert_true(n < sizeof text);
        for (size_t k = 0; k <= n; k++) /* ' for " in the newer cases */
            text[k] = cases[i].text[k] == '\'' ? '"' : cases[i].text[k];
        int rc = read_all(text, &w, &err, NULL);
        if (rc != -1 || !strstr(err.message, cases[i].reason))
            fail_msg("case %zu: rc %d, '%s' does not name '%s'", i, rc, err.message,
                     cases[i].reason);
    }
}

static void test_header_only(void **state)
{
    warnings w = {0};
    lc_scenario_error err;
    assert_int_equal(read_all(header_full, &w, &err, NULL), 0);
    assert_int_equal(w.count, 0);
}

static void test_unknown_keys_warned(void **state)
{
    (void)state;
    char text[4096];
    /* a typo in the header's robot: the default margin stays, and it is said */
    snprintf(text, sizeof text,
             "{\"type\":\"scenario\",\"version\":1,\"robot\":{\"radius\":0.3,\"margn\":0.2}}\n"
             "%s\n%s\n%s\n", scan_line, scan_line, setpoint_line);
    warnings w = {0};
    lc_scenario_error err;
    assert_int_equal(read_all(text, &w, &err, NULL), 3);
    assert_int_equal(w.count, 1);
    assert_int_equal(w.line, 1);
    assert_string_equal(w.last, "scenario header: unknown key 'robot.margn' ignored");

    /* in messages: once per message type, on the line where it first appears */
    char odd_scan[sizeof scan_line + 32];
    snprintf(odd_scan, sizeof odd_scan, "%.*s,\"strength\":[1]}",
             (int)(sizeof scan_line - 2), scan_line);
    snprintf(text, sizeof text, "%s\n%s\n%s\n%s\n", header_full, odd_scan, odd_scan,
             setpoint_line);
    w = (warnings){0};
    assert_int_equal(read_all(text, &w, &err, NULL), 3);
    assert_int_equal(w.count, 1);
    assert_int_equal(w.line, 2);
    assert_string_equal(w.last, "unknown key 'scan.strength' ignored (said once per "
                                "message type)");

    /* a recording's header, as lacuna serve writes it: every key known */
    const char *rec = "{\"type\":\"scenario\",\"version\":1,\"control\":{\"period\":0,"
                      "\"dt_min\":0.0001,\"dt_max\":1,\"first_dt\":0.05,\"watchdog_ms\":200}}";
    lc_scenario_header h;
    lc_scenario_header_init(&h);
    assert_int_equal(lc_scenario_parse_header(rec, strlen(rec), &h, &err), 0);
    assert_string_equal(err.ignored, "");
    assert_true(h.has_control);
    assert_int_equal(h.control.watchdog_ms, 200);
    /* written back (replay --out of a recording keeps how it was stepped) */
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    assert_int_equal(lc_scenario_encode_header(&t, &h), 0);
    lc_scenario_header back;
    lc_scenario_header_init(&back);
    assert_int_equal(lc_scenario_parse_header(t.s, (size_t)t.len, &back, &err), 0);
    assert_true(back.has_control);
    assert_true(back.control.period == h.control.period &&
                back.control.dt_min == h.control.dt_min &&
                back.control.dt_max == h.control.dt_max &&
                back.control.first_dt == h.control.first_dt);
    assert_int_equal(back.control.watchdog_ms, h.control.watchdog_ms);
    lc_control c = lc_scenario_control(&back);
    assert_true(c.dt_min == 0.0001 && c.dt_max == 1 && c.first_dt == 0.05);
    lc_scenario_header_free(&back);
    lc_wire_text_free(&t);
    lc_scenario_header_free(&h);
    /* no control: the simulator's rule, first_dt from the sensor's rate */
    lc_scenario_header_init(&h);
    h.has_sensor = true;
    h.sensor.rate = 40;
    c = lc_scenario_control(&h);
    assert_true(c.period == 0 && c.dt_min == 0 && isinf(c.dt_max) && c.first_dt == 1.0 / 40);
    lc_scenario_header_free(&h);
}

/* The shipped scenarios use only keys the reader knows. */
static void test_shipped_scenarios_clean(void **state)
{
    (void)state;
    static char paths[64][LC_TEST_PATH_MAX];
    const char *dirs[] = {"scenarios", "tests/tools/untuned"};
    int total = 0;
    for (int d = 0; d < 2; d++) {
        int n = lc_test_jsonl_files(dirs[d], paths, 64);
        assert_true(n > 0);
        for (int i = 0; i < n; i++) {
            FILE *f = fopen(paths[i], "rb");
            assert_non_null(f);
            static char text[1 << 20];
            size_t len = fread(text, 1, sizeof text - 1, f);
            fclose(f);
            text[len] = '\0';
            warnings w = {0};
            lc_scenario_error err;
            if (read_all(text, &w, &err, NULL) < 0)
                fail_msg("%s:%d: %s", paths[i], err.line, err.message);
            if (w.count)
                fail_msg("%s:%d: %s", paths[i], w.line, w.last);
            total++;
        }
    }
    assert_true(total >= 10);
}

/* A robot with a front and a rear scanner and a depth camera. */
static const char header_sensors[] =
    "{\"type\":\"scenario\",\"version\":1,\"sensors\":["
    "{\"name\":\"front\",\"mount\":[0.25,0,0],\"beams\":181,\"fov\":4.7,\"near\":0.1,"
    "\"far\":10,\"rate\":40,\"noise\":0.005},"
    "{\"name\":\"rear\",\"kind\":\"scan\",\"mount\":[-0.25,0,3.141592653589793],\"rate\":20},"
    "{\"name\":\"cam\",\"kind\":\"points\",\"fov\":1.2,\"far\":4,\"rate\":30,\"beams\":64}]}";

static void test_sensors_list(void **state)
{
    (void)state;
    lc_scenario_header h, back;
    lc_scenario_header_init(&h);
    lc_scenario_header_init(&back);
    lc_scenario_error err;
    assert_int_equal(lc_scenario_parse_header(header_sensors, strlen(header_sensors), &h, &err),
                     0);
    assert_string_equal(err.ignored, "");
    assert_false(h.has_sensor);
    assert_int_equal(h.n_sensors, 3);
    const lc_scenario_sensor *s = h.sensors;
    assert_string_equal(s[0].name, "front");
    assert_int_equal(s[0].kind, LC_FRAME_SCAN);
    assert_true(s[0].beams == 181 && s[0].fov == 4.7 && s[0].range_min == 0.1 &&
                s[0].range_max == 10 && s[0].rate == 40 && s[0].noise == 0.005 &&
                s[0].mount.x == 0.25);
    /* what a list entry leaves out is the single sensor's default */
    lc_scenario_sensor d;
    lc_scenario_sensor_default(&d);
    assert_string_equal(s[1].name, "rear");
    assert_true(s[1].beams == d.beams && s[1].fov == d.fov && s[1].range_min == d.range_min &&
                s[1].range_max == d.range_max && s[1].noise == d.noise && s[1].rate == 20 &&
                s[1].mount.yaw == 3.141592653589793);
    assert_int_equal(s[2].kind, LC_FRAME_POINTS);
    assert_true(s[2].fov == 1.2 && s[2].range_max == 4 && s[2].beams == 64);
    /* the fastest sensor sets the first period */
    assert_true(lc_scenario_first_dt(&h) == 1.0 / 40);
    const lc_scenario_sensor *sim;
    assert_int_equal(lc_scenario_sim_sensors(&h, &sim), 3);
    assert_ptr_equal(sim, h.sensors);
    /* encoded and read back: the same text, the same doubles */
    lc_wire_text t1, t2;
    lc_wire_text_init(&t1, NULL);
    lc_wire_text_init(&t2, NULL);
    assert_int_equal(lc_scenario_encode_header(&t1, &h), 0);
    assert_non_null(strstr(t1.s, "\"near\":0.1,\"far\":10"));
    assert_null(strstr(t1.s, "\"sensor\":"));
    assert_int_equal(lc_scenario_parse_header(t1.s, (size_t)t1.len, &back, &err), 0);
    assert_int_equal(lc_scenario_encode_header(&t2, &back), 0);
    assert_string_equal(t1.s, t2.s);
    assert_int_equal(back.n_sensors, 3);
    for (int i = 0; i < 3; i++) {
        assert_string_equal(back.sensors[i].name, s[i].name);
        assert_int_equal(back.sensors[i].kind, s[i].kind);
        assert_true(back.sensors[i].mount.yaw == s[i].mount.yaw);
    }
    /* one sensor alone: the single "sensor", its default when absent */
    lc_scenario_header_free(&h);
    lc_scenario_header_init(&h);
    assert_int_equal(lc_scenario_sim_sensors(&h, &sim), 1);
    assert_ptr_equal(sim, &h.sensor);
    assert_string_equal(sim->name, "");
    assert_int_equal(sim->kind, LC_FRAME_SCAN);
    lc_wire_text_free(&t1);
    lc_wire_text_free(&t2);
    lc_scenario_header_free(&h);
    lc_scenario_header_free(&back);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_header_fields),
        cmocka_unit_test(test_header_defaults),
        cmocka_unit_test(test_header_round_trip),
        cmocka_unit_test(test_messages_in_order),
        cmocka_unit_test(test_bad_lines_named),
        cmocka_unit_test(test_truncated_last_line_skipped),
        cmocka_unit_test(test_bad_headers),
        cmocka_unit_test(test_header_only),
        cmocka_unit_test(test_unknown_keys_warned),
        cmocka_unit_test(test_shipped_scenarios_clean),
        cmocka_unit_test(test_sensors_list),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
