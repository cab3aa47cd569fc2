/*
 * test_bench.c - `lacuna bench` through the built command (LACUNA_EXE):
 * the shape of its --quick JSON (the build it ran in, the two quick cases
 * with every stage, the ellipse solver beside the reference solver, the scan
 * decoding figures), what --case keeps, and bad options: exit 2, nothing on
 * stdout, one line naming the option.
 *
 * No time is asserted (speed is what the command reports, not what a test
 * decides); the checks are on presence, types, signs and orders that hold
 * for any timing (a median is never above the p99 of the same frames). The
 * one outside check: the ellipse solver agrees with Ipopt (general-purpose
 * NLP solver) to a relative log det gap of 1e-6 when the build has Ipopt.
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "session.h"

static int setup(void **state) { return lc_test_tmpdir_setup("/tmp/lacuna_test_bench_"); }

/* Runs `lacuna ARGS`, wants exit 0; the JSON on stdout (cJSON_Delete it). */
static cJSON *bench_json(const char *args)
{
    int rc = lc_test_lacuna(args);
    char *out = lc_test_slurp(lc_test_tmp("out.json")), *err = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_true(out && err);
    if (rc != 0)
        fail_msg("lacuna %s: exit %d: %s", args, rc, err);
    cJSON *j = cJSON_Parse(out);
    if (!j)
        fail_msg("lacuna %s: not JSON: %.300s", args, out);
    free(out);
    free(err);
    return j;
}

static const cJSON *item(const cJSON *obj, const char *key)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (!it)
        fail_msg("no %s", key);
    return it;
}

/* A figure: a finite number, not negative. */
static double figure(const cJSON *obj, const char *key)
{
    const cJSON *it = item(obj, key);
    if (!cJSON_IsNumber(it) || !isfinite(it->valuedouble) || it->valuedouble < 0)
        fail_msg("%s: not a figure", key);
    return it->valuedouble;
}

static const char *text(const cJSON *obj, const char *key)
{
    const char *s = cJSON_GetStringValue(item(obj, key));
    if (!s)
        fail_msg("%s: not a string", key);
    return s;
}

static void check_case(const cJSON *c, const char *name, const char *model)
{
    assert_string_equal(text(c, "name"), name);
    assert_string_equal(text(c, "model"), model);
    assert_int_equal((int)figure(c, "beams"), 360);
    assert_int_equal((int)figure(c, "obstacles"), 10);
    double median = figure(c, "median_us"), p99 = figure(c, "p99_us");
    assert_true(median <= p99);
    figure(c, "p99_unpreempted_us");
    double preempted = figure(c, "preempted");
    assert_true(preempted == floor(preempted));
    assert_true(figure(c, "fps") > 0);
    assert_true(figure(c, "rounds") >= 1);        /* a region takes a round at least */
    assert_true(figure(c, "ellipse_iterations") > 0);
    const cJSON *stages = item(c, "stages");
    assert_int_equal(cJSON_GetArraySize(stages), LC_STAGE_COUNT);
    for (int s = 0; s < LC_STAGE_COUNT; s++)
        figure(stages, lc_stage_name((lc_stage)s));
}

/* The solver comparison: one polygon size in --quick; with Ipopt in the
 * build, the reference ran and agrees. */
static void check_ellipse(const cJSON *e)
{
    assert_int_equal((int)figure(e, "sides"), 8);
    figure(e, "lacuna_us");
    const cJSON *by = item(e, "by_sides");
    assert_int_equal(cJSON_GetArraySize(by), 1);
    const cJSON *one = cJSON_GetArrayItem(by, 0);
    assert_int_equal((int)figure(one, "sides"), 8);
    assert_int_equal((int)figure(one, "polygons"), 10);
    assert_true(figure(one, "iterations") > 0);
    const char *ref = text(e, "reference");
#if LC_HAVE_IPOPT
    assert_int_equal(strncmp(ref, "Ipopt", 5), 0);
    figure(e, "reference_us");
    figure(e, "ratio");
    assert_true(figure(e, "max_rel_gap") <= 1e-6);
    assert_true(figure(one, "max_rel_gap") <= 1e-6);
#else
    print_message("the build has no Ipopt: reference %s\n", ref);
    assert_true(cJSON_IsNull(item(e, "reference_us")));
    assert_true(cJSON_IsNull(item(e, "max_rel_gap")));
#endif
}

static void check_codec(const cJSON *c)
{
    assert_int_equal((int)figure(c, "beams"), 1081);
    double mm = figure(c, "bytes_mm"), full = figure(c, "bytes_full");
    /* millimetre ranges print shorter than 17-digit ones: "1.234" against
     * "1.2345678901234567", over 3 characters a beam at least */
    assert_true(mm > 1081 && mm + 3 * 1081 < full);
    assert_true(figure(c, "decode_mm_us") > 0);
    assert_true(figure(c, "decode_full_us") > 0);
    assert_true(figure(c, "decode_mm_cjson_us") > 0);
}

/* The search section: every search timed found its way (the goals are
 * drawn in remembered free space of one open hall), and the amortised
 * share is the mean over the cadence. */
static void check_search(const cJSON *c)
{
    assert_int_equal((int)figure(c, "searches"), 5);
    assert_int_equal((int)figure(c, "no_path"), 0);
    assert_true(figure(c, "window_m") == 20.0);
    double median = figure(c, "median_us"), p99 = figure(c, "p99_us");
    assert_true(median > 0 && p99 >= median);
    assert_true(figure(c, "p99_unpreempted_us") > 0);
    assert_true(figure(c, "expanded") >= 1);
    double cadence = figure(c, "cadence_frames");
    assert_true(cadence >= 10);
    assert_true(fabs(figure(c, "amortised_us") - figure(c, "mean_us") / cadence) < 0.01);
}

static void test_quick_json(void **state)
{
    static const char *const lines[] = {"bench --quick --json", "bench --quick",
                                        "bench --json --quick --frames 3"};
    for (size_t i = 0; i < sizeof lines / sizeof lines[0]; i++) {
        /* --json is the default when stdout is not a terminal (a file here) */
        cJSON *j = bench_json(lines[i]);
        assert_string_equal(text(j, "build"), LC_BUILD_TYPE);
        assert_string_equal(text(j, "sanitize"), LC_BUILD_SANITIZE);
        assert_true(strlen(text(j, "machine")) > 0);
        const cJSON *cases = item(j, "cases");
        assert_int_equal(cJSON_GetArraySize(cases), 2);
        check_case(cJSON_GetArrayItem(cases, 0), "quick-360-10-point", "point");
        check_case(cJSON_GetArrayItem(cases, 1), "quick-360-10-unicycle", "unicycle");
        /* two cases of one size: no slope to fit */
        assert_true(cJSON_IsNull(item(j, "slope_beams")));
        assert_true(cJSON_IsNull(item(j, "slope_obstacles")));
        check_ellipse(item(j, "ellipse"));
        check_codec(item(j, "codec"));
        check_search(item(j, "search"));
        for (int k = 0; k < 2; k++) {
            const cJSON *c = cJSON_GetArrayItem(cases, k);
            /* the robot stays put: a search each 100 frames, the first in
             * the untimed warm-up */
            assert_true(figure(c, "searches") <= 1);
            assert_true(figure(c, "median_no_search_us") > 0);
        }
        cJSON_Delete(j);
    }
}

/*
 * A robot that stands among 100 obstacles while guidance refuses spots
 * round it (the bench's robot stays put): its path may cross a refused spot
 * the search let it through, and that is searched again at the cadence
 * (every 10 frames), not every frame (it was 244 searches in 400 frames).
 * Search counts are deterministic, not timings.
 */
static void test_search_cadence_in_clutter(void **state)
{
    cJSON *j = bench_json("bench --case obstacles-100 --frames 400 --json");
    const cJSON *c = cJSON_GetArrayItem(item(j, "cases"), 0);
    assert_string_equal(text(c, "name"), "obstacles-100");
    assert_true(figure(c, "searches") <= 400 / 10 + 2);
    cJSON_Delete(j);
}

/* --case keeps one part: one case (no solver, no codec), the solver alone,
 * the codec alone. */
static void test_case_selection(void **state)
{
    cJSON *j = bench_json("bench --quick --json --case quick-360-10-unicycle");
    assert_int_equal(cJSON_GetArraySize(item(j, "cases")), 1);
    check_case(cJSON_GetArrayItem(item(j, "cases"), 0), "quick-360-10-unicycle", "unicycle");
    assert_int_equal(cJSON_GetArraySize(item(j, "ellipse")), 0);
    assert_null(cJSON_GetObjectItemCaseSensitive(j, "codec"));
    cJSON_Delete(j);

    j = bench_json("bench --quick --json --case ellipse");
    assert_int_equal(cJSON_GetArraySize(item(j, "cases")), 0);
    check_ellipse(item(j, "ellipse"));
    assert_null(cJSON_GetObjectItemCaseSensitive(j, "codec"));
    cJSON_Delete(j);

    j = bench_json("bench --quick --json --case codec");
    assert_int_equal(cJSON_GetArraySize(item(j, "cases")), 0);
    assert_int_equal(cJSON_GetArraySize(item(j, "ellipse")), 0);
    check_codec(item(j, "codec"));
    assert_null(cJSON_GetObjectItemCaseSensitive(j, "search"));
    cJSON_Delete(j);

    j = bench_json("bench --quick --json --case search");
    assert_int_equal(cJSON_GetArraySize(item(j, "cases")), 0);
    assert_null(cJSON_GetObjectItemCaseSensitive(j, "codec"));
    check_search(item(j, "search"));
    cJSON_Delete(j);
}

/* Bad options: exit 2, nothing on stdout, one line naming the option. */
static void test_bad_options(void **state)
{
    static const struct { const char *args, *want; } cases[] = {
        {"bench --fast", "lacuna bench: unknown option '--fast'"},
        {"bench --frames 0", "lacuna bench: --frames: '0' is not a count"},
        {"bench --frames -3", "lacuna bench: --frames: '-3' is not a count"},
        {"bench --frames x", "lacuna bench: --frames: 'x' is not a count"},
        {"bench --frames 12abc", "lacuna bench: --frames: '12abc' is not a count"},
        {"bench --frames 10000001", "lacuna bench: --frames: '10000001' is not a count"},
        {"bench --frames", "lacuna bench: unknown option '--frames'"},
        {"bench --case", "lacuna bench: unknown option '--case'"},
        {"bench --quick --case no-such-case", "lacuna bench: no case named 'no-such-case'"},
        {"bench --roundtrip --rate 0", "lacuna bench: --rate: frames per second"},
        {"bench --roundtrip --rate 20001", "lacuna bench: --rate: frames per second"},
        {"bench --roundtrip --rate fast", "lacuna bench: --rate: frames per second"},
        {"bench --roundtrip --seconds 0.1", "lacuna bench: --seconds: 0.5 to 3600"},
        {"bench --roundtrip --beams 0", "lacuna bench: --beams: 1 to 100000"},
        {"bench --roundtrip --runs 0", "lacuna bench: --runs: 1 to"},
        {"bench --roundtrip --runs 21", "lacuna bench: --runs: 1 to"},
        {"bench --roundtrip --rate", "lacuna bench: --rate needs a value"},
        {"bench --roundtrip --quick 1", "lacuna bench: --quick: not an option of --roundtrip"},
        {"bench --roundtrip --rate 100 --seconds 0.5", "lacuna bench: --rate x --seconds"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++)
        lc_test_refused(cases[i].args, cases[i].want);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_quick_json),
        cmocka_unit_test(test_search_cadence_in_clutter),
        cmocka_unit_test(test_case_selection),
        cmocka_unit_test(test_bad_options),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
