/*
 * test_svg.c - the run picture is well-formed XML (checked by xmllint from
 * Debian's libxml2-utils, outside the project) and holds its layers (group
 * ids): from a synthetic run, from degenerate runs (no frame, one frame,
 * NaN clearance, a title full of XML specials, huge coordinates) and from
 * `lacuna sim --svg` and `lacuna replay --svg` through the built command.
 *
 * The lanes under the map: every lane and the time axis map one time to one
 * x (their data-x0/x1/t0/t1 agree), a state band starts where the closed
 * form x0 + (t - t0) / (t1 - t0) w puts its first frame's stamp, the time
 * axis has a tick there, the speed lane's scale is the run's top speed,
 * the legend names the states, limits and events of the run and no other;
 * a run whose state flickers every frame stays within a band rectangle
 * per pixel column.
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>

#include "svg.h"

static int setup(void **state) { return lc_test_tmpdir_setup("/tmp/lacuna_test_svg_"); }

static bool have_xmllint(void) { return system("command -v xmllint >/dev/null 2>&1") == 0; }

/* xmllint --noout: well-formed XML. Fails the test otherwise. */
static void assert_valid_xml(const char *path)
{
    if (!have_xmllint()) {
        print_message("xmllint missing (Debian libxml2-utils): well-formedness not checked\n");
        return;
    }
    char cmd[1024];
    snprintf(cmd, sizeof cmd, "xmllint --noout '%s'", path);
    int rc = system(cmd);
    if (!WIFEXITED(rc) || WEXITSTATUS(rc) != 0)
        fail_msg("%s is not well-formed XML", path);
}

static void assert_layers(const char *path, bool world)
{
    static const char *const ids[] = {"seen",  "regions", "trajectory", "route",
                                      "robot", "clearance", "speed",    "states",
                                      "events", "time-grid", "time-axis", "legend"};
    char *s = lc_test_slurp(path);
    assert_non_null(s);
    for (size_t i = 0; i < sizeof ids / sizeof ids[0]; i++) {
        char want[64];
        snprintf(want, sizeof want, "<g id=\"%s\"", ids[i]);
        if (!strstr(s, want))
            fail_msg("%s: no layer %s", path, ids[i]);
    }
    assert_true((strstr(s, "<g id=\"world\"") != NULL) == world);
    free(s);
}

/* A synthetic run: n frames along a line, a square region, one obstacle;
 * the first half tracking at 0.5 m/s (top_speed), the second blocked and
 * stopped, the blocked event on the first blocked frame. */
static void fill_run(lc_svg_run *run, int n, double scale, double clearance)
{
    lc_vec2 sq[4] = {{-1, -1}, {1, -1}, {1, 1}, {-1, 1}};
    lc_vec2 ob[3] = {{2, 0}, {3, 0}, {2.5, 1}};
    lc_polyset obstacles = {0};
    assert_int_equal(lc_polyset_push(&obstacles, ob, 3, 0), 0);
    for (int i = 0; i < n; i++) {
        lc_vec2 v[4];
        for (int k = 0; k < 4; k++)
            v[k] = lc_scale(lc_add(sq[k], lc_v2(0.1 * i, 0)), scale);
        lc_region reg = {0};
        reg.v = v;
        reg.nv = 4;
        lc_plan_result res = {0};
        res.region = &reg;
        res.obstacles = &obstacles;
        bool moving = i < n / 2;
        res.state = moving ? LC_STATE_TRACKING : LC_STATE_BLOCKED;
        res.setpoint = moving ? (lc_setpoint){.vx = 0.5, .limit = LC_LIMIT_TOP_SPEED}
                              : lc_setpoint_stop(LC_LIMIT_BLOCKED);
        if (i == n / 2 && n > 1) {
            res.n_events = 1;
            res.events[0] = (lc_event){.kind = LC_EVENT_BLOCKED, .waypoint = 1,
                                       .stamp = 0.05 * i, .reason = LC_BLOCK_NO_PATH};
        }
        lc_frame f = {0};
        f.pose = (lc_pose){0.1 * i * scale, 0, 0};
        f.stamp = 0.05 * i;
        lc_svg_run_add(run, &f, &res, clearance);
    }
    lc_polyset_free(&obstacles);
}

static void write_svg(const char *path, const lc_svg_run *run, const lc_svg_scene *sc)
{
    FILE *f = fopen(path, "w");
    assert_non_null(f);
    assert_int_equal(lc_svg_write(f, run, sc), 0);
    fclose(f);
}

static void test_synthetic_run(void **state)
{
    lc_svg_run run;
    lc_svg_run_init(&run, 5);
    fill_run(&run, 100, 1.0, 0.5);
    assert_int_equal(run.n, 100);
    assert_int_equal(run.regions.np, 20); /* one snapshot every 5 frames */
    lc_route route;
    lc_route_default(&route);
    route.count = 2;
    route.waypoints[0] = lc_v2(5, 0);
    route.waypoints[1] = lc_v2(10, 2);
    lc_vec2 wall[2] = {{-2, -2}, {12, -2}};
    lc_polyset world = {0};
    lc_polyset_push(&world, wall, 2, 0);
    lc_svg_scene sc = {.title = "synthetic", .world = &world, .route = &route, .radius = 0.3};
    write_svg(lc_test_tmp("synthetic.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("synthetic.svg"));
    assert_layers(lc_test_tmp("synthetic.svg"), true);
    char *s = lc_test_slurp(lc_test_tmp("synthetic.svg"));
    assert_non_null(s);
    assert_non_null(strstr(s, "<title>synthetic</title>"));
    free(s);
    lc_polyset_free(&world);
    lc_svg_run_free(&run);
}

/* The data-x0/x1/t0/t1 of a group, "" when it has none. */
static void time_attrs(const char *s, const char *id, char *out, size_t n)
{
    char want[64];
    snprintf(want, sizeof want, "<g id=\"%s\"", id);
    const char *g = strstr(s, want), *a = g ? strstr(g, " data-x0=") : NULL;
    const char *end = g ? strchr(g, '>') : NULL;
    out[0] = '\0';
    if (a && end && a < end)
        snprintf(out, n, "%.*s", (int)(end - a), a);
}

static int count_in_group(const char *s, const char *id, const char *what)
{
    char want[64];
    snprintf(want, sizeof want, "<g id=\"%s\"", id);
    const char *g = strstr(s, want), *end = g ? strstr(g, "</g>") : NULL;
    int n = 0;
    for (const char *p = g; p && end && (p = strstr(p, what)) && p < end; p++)
        n++;
    return n;
}

/* Occurrences of what in the group id and the groups nested in it (up to
 * the next top-level group). */
static int count_in_nested_group(const char *s, const char *id, const char *what)
{
    char want[64];
    snprintf(want, sizeof want, "<g id=\"%s\"", id);
    const char *g = strstr(s, want), *end = g ? strstr(g + 1, "\n<g id=\"") : NULL;
    if (g && !end)
        end = g + strlen(g);
    int n = 0;
    for (const char *p = g; p && end && (p = strstr(p, what)) && p < end; p++)
        n++;
    return n;
}

/* A polygon footprint: drawn at start, end and each snapshot as a polygon
 * of its vertices (the disc robot's pictures keep their circles). */
static void test_footprint_poses(void **state)
{
    lc_svg_run run;
    lc_svg_run_init(&run, 10);
    fill_run(&run, 100, 1.0, 0.5);
    const lc_vec2 rect[] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
    lc_svg_scene sc = {.title = "legged", .radius = 0.559, .footprint = rect, .n_footprint = 4};
    write_svg(lc_test_tmp("legged.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("legged.svg"));
    assert_layers(lc_test_tmp("legged.svg"), false);
    char *s = lc_test_slurp(lc_test_tmp("legged.svg"));
    assert_non_null(s);
    assert_non_null(strstr(s, "<g id=\"robot\""));
    /* frames 10, 20, ..., 90, then start and end: 11 outlines */
    assert_int_equal(count_in_nested_group(s, "robot", "<polygon"), 11);
    assert_int_equal(count_in_nested_group(s, "robot", "class=\"pose\""), 9);
    assert_int_equal(count_in_nested_group(s, "robot", "<circle"), 0);
    free(s);
    sc.footprint = NULL; /* the disc: two circles, no outlines */
    write_svg(lc_test_tmp("disc.svg"), &run, &sc);
    s = lc_test_slurp(lc_test_tmp("disc.svg"));
    assert_int_equal(count_in_nested_group(s, "robot", "<circle"), 2);
    assert_int_equal(count_in_nested_group(s, "robot", "class=\"pose\""), 0);
    free(s);
    lc_svg_run_free(&run);
}

/* The lanes of the synthetic run (100 frames 0.05 s apart: t0 0, t1 5 s). */
static void test_lanes_and_legend(void **state)
{
    lc_svg_run run;
    lc_svg_run_init(&run, 10);
    fill_run(&run, 100, 1.0, 0.5);
    lc_svg_scene sc = {.title = "lanes", .radius = 0.3};
    write_svg(lc_test_tmp("lanes.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("lanes.svg"));
    char *s = lc_test_slurp(lc_test_tmp("lanes.svg"));
    assert_non_null(s);
    /* one time, one x: the same mapping in every lane and on the axis */
    char axis[160], lane[160];
    time_attrs(s, "time-axis", axis, sizeof axis);
    assert_string_equal(axis, " data-x0=\"30.00\" data-x1=\"930.00\" data-t0=\"0\" data-t1=\"5\"");
    static const char *const lanes[] = {"clearance", "speed", "states"};
    for (size_t i = 0; i < sizeof lanes / sizeof lanes[0]; i++) {
        time_attrs(s, lanes[i], lane, sizeof lane);
        assert_string_equal(lane, axis);
    }
    /* the blocked band starts at frame 50's stamp, 2.5 s: 30 + 2.5 / 5 * 900 = 480 px,
     * where the axis has its 2.5 s tick (ticks every 0.5 s: 60 px at least) */
    assert_non_null(strstr(s, "<rect x=\"480.00\""));
    assert_non_null(strstr(s, "<title>state blocked, 2.50 to 5.00 s</title>"));
    assert_non_null(strstr(s, "<title>state tracking, 0.00 to 2.50 s</title>"));
    assert_non_null(strstr(s, "<title>limit top_speed, 0.00 to 2.50 s</title>"));
    assert_non_null(strstr(s, "text-anchor=\"middle\">2.5</text>"));
    assert_int_equal(count_in_group(s, "time-axis", "</text>"), 11 + 1); /* 0 to 5 s, and its name */
    assert_int_equal(count_in_group(s, "states", "<rect"), 4); /* two runs in each row */
    assert_non_null(strstr(s, "speed (m/s), 0 to 0.5 m/s"));
    assert_int_equal(count_in_group(s, "events", "<line"), 1);
    assert_non_null(strstr(s, ">blocked 1</text>"));
    /* the legend: the run's states, limits and event; no state it did not have */
    static const char *const named[] = {">state tracking<", ">state blocked<", ">limit top_speed<",
                                        ">limit blocked<", ">event blocked (waypoint index)<",
                                        ">speed<", ">clearance<", ">waypoints, numbered from 0<"};
    for (size_t i = 0; i < sizeof named / sizeof named[0]; i++)
        if (!strstr(s, named[i]))
            fail_msg("the legend lacks %s", named[i]);
    assert_null(strstr(s, ">state stale<"));
    assert_null(strstr(s, ">turn rate |w|<")); /* a point robot: no turn rate */
    assert_null(strstr(s, ">world (walls, as simulated)<"));
    free(s);
    lc_svg_run_free(&run);
}

/* A state that changes every frame: one band rectangle per pixel column at most. */
static void test_flickering_states(void **state)
{
    lc_svg_run run;
    lc_svg_run_init(&run, 100);
    lc_polyset none = {0};
    for (int i = 0; i < 20000; i++) {
        lc_plan_result res = {0};
        res.obstacles = &none;
        res.state = i % 2 ? LC_STATE_TRACKING : LC_STATE_TOO_CLOSE;
        res.setpoint = (lc_setpoint){.v = 0.1 * (i % 3), .w = i % 2 ? 0.5 : -0.5,
                                     .limit = (lc_limit)(i % LC_LIMIT_COUNT)};
        lc_frame f = {0};
        f.pose = (lc_pose){0.001 * i, 0, 0};
        f.stamp = 0.01 * i;
        lc_svg_run_add(&run, &f, &res, 0.3);
    }
    lc_svg_scene sc = {.radius = 0.3};
    write_svg(lc_test_tmp("flicker.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("flicker.svg"));
    char *s = lc_test_slurp(lc_test_tmp("flicker.svg"));
    assert_non_null(s);
    int rects = count_in_group(s, "states", "<rect");
    assert_true(rects > 100 && rects <= 2 * 900);
    assert_non_null(strstr(s, ">turn rate |w|<")); /* a unicycle's turn rate is drawn */
    assert_non_null(strstr(s, "0 to 0.5 rad/s"));
    free(s);
    lc_svg_run_free(&run);
}

static void test_degenerate_runs(void **state)
{
    lc_svg_scene sc = {.title = "<site> & \"quotes\"", .radius = 0.3};
    lc_svg_run run;

    lc_svg_run_init(&run, 0); /* no frame at all */
    write_svg(lc_test_tmp("empty.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("empty.svg"));
    assert_layers(lc_test_tmp("empty.svg"), false);
    char *s = lc_test_slurp(lc_test_tmp("empty.svg"));
    assert_non_null(s);
    assert_non_null(strstr(s, "&lt;site&gt; &amp; &quot;quotes&quot;"));
    free(s);
    lc_svg_run_free(&run);

    lc_svg_run_init(&run, 1); /* one frame, unknown clearance */
    fill_run(&run, 1, 1.0, NAN);
    write_svg(lc_test_tmp("one.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("one.svg"));
    s = lc_test_slurp(lc_test_tmp("one.svg"));
    assert_non_null(s);
    assert_null(strstr(s, "nan"));
    free(s);
    lc_svg_run_free(&run);

    lc_svg_run_init(&run, 1); /* huge coordinates, many frames: thinned, still finite */
    fill_run(&run, 5000, 1e6, INFINITY);
    write_svg(lc_test_tmp("huge.svg"), &run, &sc);
    assert_valid_xml(lc_test_tmp("huge.svg"));
    s = lc_test_slurp(lc_test_tmp("huge.svg"));
    assert_non_null(s);
    assert_null(strstr(s, "nan"));
    assert_null(strstr(s, "inf"));
    free(s);
    lc_svg_run_free(&run);
}

static void test_sim_and_replay_pictures(void **state)
{
    char args[2048];
    snprintf(args, sizeof args, "sim '%s' --json --max-time 8 --svg '%s' --out '%s'",
             lc_test_source_path("scenarios/plant_room.jsonl"), lc_test_tmp("sim.svg"),
             lc_test_tmp("run.jsonl"));
    lc_test_lacuna(args);
    assert_valid_xml(lc_test_tmp("sim.svg"));
    assert_layers(lc_test_tmp("sim.svg"), true);
    snprintf(args, sizeof args, "replay '%s' --json --svg '%s'", lc_test_tmp("run.jsonl"),
             lc_test_tmp("replay.svg"));
    assert_int_equal(lc_test_lacuna(args), 0);
    assert_valid_xml(lc_test_tmp("replay.svg"));
    assert_layers(lc_test_tmp("replay.svg"), false); /* replay draws what was seen */
    snprintf(args, sizeof args, "replay '%s' --svg /nonexistent/dir/x.svg",
             lc_test_tmp("run.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 1);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_synthetic_run),
        cmocka_unit_test(test_footprint_poses),
        cmocka_unit_test(test_lanes_and_legend),
        cmocka_unit_test(test_flickering_states),
        cmocka_unit_test(test_degenerate_runs),
        cmocka_unit_test(test_sim_and_replay_pictures),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
