/*
 * test_svg.c - the run picture is well-formed XML (checked by xmllint from
 * Debian's libxml2-utils, outside the project) and holds its layers (group
 * ids): from a synthetic run, from degenerate runs (no frame, one frame,
 * NaN clearance, a title full of XML specials, huge coordinates) and from
 * `lacuna sim --svg` and `lacuna replay --svg` through the built command.
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
    static const char *const ids[] = {"seen", "regions", "trajectory", "route", "robot",
                                      "clearance"};
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

/* A synthetic run: n frames along a line, a square region, one obstacle. */
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

/* Count of non-overlapping occurrences of needle in s. */
static int count_of(const char *s, const char *needle)
{
    int n = 0;
    for (const char *p = strstr(s, needle); p; p = strstr(p + 1, needle))
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
    const char *robot = strstr(s, "<g id=\"robot\"");
    assert_non_null(robot);
    /* frames 10, 20, ..., 90, then start and end: 11 outlines */
    assert_int_equal(count_of(robot, "<polygon"), 11);
    assert_int_equal(count_of(robot, "class=\"pose\""), 9);
    assert_null(strstr(robot, "<circle"));
    free(s);
    sc.footprint = NULL; /* the disc: two circles, no outlines */
    write_svg(lc_test_tmp("disc.svg"), &run, &sc);
    s = lc_test_slurp(lc_test_tmp("disc.svg"));
    robot = strstr(s, "<g id=\"robot\"");
    assert_int_equal(count_of(robot, "<circle"), 2);
    assert_int_equal(count_of(robot, "class=\"pose\""), 0);
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
        cmocka_unit_test(test_degenerate_runs),
        cmocka_unit_test(test_sim_and_replay_pictures),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
