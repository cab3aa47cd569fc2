/*
 * test_simbatch.c - `lacuna sim FILE... | DIR` through the built command
 * (LACUNA_EXE), on two tiny worlds written here: "hall", a room crossed in
 * a straight line (shortest path 3 m, closed form: nothing in the way), and
 * "cage", whose waypoint sits inside a closed box (expect "blocked").
 *   - bad usage and bad files exit 2 before any run, naming what is wrong;
 *   - a directory (the second world one level down) with both models: the
 *     table's rows count what each run did, and the JSON agrees with the
 *     table, with itself (groups and totals sum to the runs) and with the
 *     single-run path (`lacuna sim FILE --json`: the same time);
 *   - a run that misses its expectation makes the batch exit 1, and
 *     --svg-dir keeps that run's SVG only;
 *   - --jobs 1 and --jobs 2 print the same JSON (results in file order);
 *   - --seeds K runs each world and model K times, seeds N .. N + K - 1,
 *     each the same as a single run with that seed;
 *   - the share done's interval (lc_share_interval) against published
 *     values and the closed forms at its ends.
 */
#include "testutil.h"
#include "jsonutil.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cjson/cJSON.h>

#include "simbatch.h"

static int setup(void **state) { return lc_test_tmpdir_setup("/tmp/lacuna_test_simbatch_"); }

/* A 6 x 3 m room, a point robot at (0.5, 0) facing +x; extra polygons,
 * route and header keys spliced in. */
static void world(const char *path, const char *family, const char *route, const char *extra,
                  const char *expect)
{
    char text[2048];
    snprintf(text, sizeof text,
             "{\"type\":\"scenario\",\"version\":1,\"description\":\"batch test %s\","
             "\"family\":\"%s\",\"robot\":{\"model\":\"point\",\"radius\":0.2,\"margin\":0.05,"
             "\"v_max\":0.8,\"a_max\":0.5},\"route\":%s,\"start\":[0.5,0,0],"
             "\"world\":{\"polygons\":[[[-0.2,-1.7],[6.2,-1.7],[6.2,-1.5],[-0.2,-1.5]],"
             "[[-0.2,1.5],[6.2,1.5],[6.2,1.7],[-0.2,1.7]],[[-0.2,-1.5],[0,-1.5],[0,1.5],"
             "[-0.2,1.5]],[[6,-1.5],[6.2,-1.5],[6.2,1.5],[6,1.5]]%s]},"
             "\"sensor\":{\"beams\":91,\"fov\":4.71238898038469,\"near\":0.05,"
             "\"far\":8,\"rate\":20,\"noise\":0,\"mount\":[0,0,0]},"
             "\"expect\":\"%s\",\"max_time\":30,\"shortest_path\":3}\n",
             family, family, route, extra, expect);
    lc_test_write_file(path, text, strlen(text));
}

static const char hall_route[] = "{\"waypoints\":[[3.5,0]],\"tolerance\":0.25}";
static const char cage_route[] = "{\"waypoints\":[[3.5,0]],\"tolerance\":0.25,\"blocked_time\":2}";
static const char cage[] = ",[[3,-0.5],[4,-0.5]],[[4,-0.5],[4,0.5]],[[4,0.5],[3,0.5]],"
                           "[[3,0.5],[3,-0.5]]";

/* dir/hall.jsonl and dir/deeper/cage.jsonl; cage_expect for the second. */
static void two_worlds(const char *dir, const char *cage_expect)
{
    char path[LC_TEST_PATH_MAX];
    mkdir(lc_test_tmp(dir), 0777);
    snprintf(path, sizeof path, "%s/deeper", lc_test_tmp(dir));
    mkdir(path, 0777);
    snprintf(path, sizeof path, "%s/hall.jsonl", lc_test_tmp(dir));
    world(path, "hall", hall_route, "", "done");
    snprintf(path, sizeof path, "%s/deeper/cage.jsonl", lc_test_tmp(dir));
    world(path, "cage", cage_route, cage, cage_expect);
}

static const cJSON *item(const cJSON *j, const char *key)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(j, key);
    if (!it)
        fail_msg("no %s", key);
    return it;
}

static void expect_usage(const char *args, const char *reason)
{
    if (lc_test_lacuna(args) != 2)
        fail_msg("'%s' did not exit 2", args);
    char *err = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_non_null(err);
    if (!strstr(err, reason))
        fail_msg("'%s': stderr '%s' does not say '%s'", args, err, reason);
    free(err);
}

static void test_bad_usage(void **state)
{
    char dir[LC_TEST_PATH_MAX], args[4096];
    snprintf(dir, sizeof dir, "%s", lc_test_tmp(""));
    dir[strlen(dir) - 1] = '\0'; /* without its trailing '/' */
    const char *bad = "{\"type\":\"scenario\",\"version\":1,\"family\":\"a b\"}\n";
    world(lc_test_tmp("hall.jsonl"), "hall", hall_route, "", "done");
    lc_test_write_file(lc_test_tmp("bad.jsonl"), bad, strlen(bad));
    mkdir(lc_test_tmp("empty"), 0777);
    /* each %s is the temporary directory */
    static const struct {
        const char *args, *reason;
    } cases[] = {
        {"sim '%s/hall.jsonl' '%s/missing.jsonl'", "missing.jsonl: No such file"},
        {"sim '%s/empty'", "empty: no .jsonl scenario files"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --jobs 0", "--jobs"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --jobs 257", "--jobs"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --jobs two", "--jobs"},
        {"sim '%s/hall.jsonl' --jobs", "--jobs needs a value"},
        {"sim '%s/hall.jsonl' --model both --model car", "--model"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --out x.jsonl", "--out runs one scenario"},
        {"sim '%s' --connect ws://127.0.0.1:1/", "--connect runs one scenario"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --frobnicate", "unknown option --frobnicate"},
        {"sim --model both", "no scenario FILE or DIR"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --seed -2", "--seed"},
        {"sim '%s/hall.jsonl' '%s/hall.jsonl' --max-time 0", "--max-time"},
        {"sim '%s/hall.jsonl' --seeds 0", "--seeds: a whole number from 1 to 1000"},
        {"sim '%s/hall.jsonl' --seeds 1001", "--seeds"},
        {"sim '%s/hall.jsonl' --seeds two", "--seeds"},
        {"sim '%s/hall.jsonl' --seeds", "--seeds needs a value"},
        {"sim '%s/hall.jsonl' --seed 18446744073709551615 --seeds 2", "past the largest seed"},
        {"sim '%s/hall.jsonl' --svg-dir '%s/hall.jsonl'", "--svg-dir"},
        /* a bad file among good ones: named with its line, before any run */
        {"sim '%s/hall.jsonl' '%s/bad.jsonl'", "bad.jsonl:1: bad_field: family"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        snprintf(args, sizeof args, cases[i].args, dir, dir);
        expect_usage(args, cases[i].reason);
    }
}

/* The table row of family and model: runs, done, collisions, blocked,
 * other; the medians as printed. Fails when there is no such row. */
static void table_row(const char *table, const char *family, const char *model, int *counts,
                      char *med_t, char *med_r, char *share)
{
    for (const char *line = table; line && *line; line = strchr(line, '\n'), line += !!line) {
        char f[64], m[16];
        if (sscanf(line, "%63s %15s %d %d %d %d %d %31s %31s %31s", f, m, &counts[0], &counts[1],
                   &counts[2], &counts[3], &counts[4], med_t, med_r, share) == 10 &&
            strcmp(f, family) == 0 && strcmp(m, model) == 0)
            return;
    }
    fail_msg("no row %s %s in:\n%s", family, model, table);
}

static void test_table(void **state)
{
    two_worlds("suite", "blocked");
    char args[2048];
    snprintf(args, sizeof args, "sim '%s' --model both --jobs 2", lc_test_tmp("suite"));
    assert_int_equal(lc_test_lacuna(args), 0);
    char *table = lc_test_slurp(lc_test_tmp("out.json"));
    assert_non_null(table);
    print_message("%s", table);
    assert_non_null(strstr(table, "family"));
    /* done_95%: Wilson score intervals in whole percent, rounded outward;
     * closed forms: 0 of 1 up to z^2 / (1 + z^2) = 0.7935, 1 of 1 from
     * 1 / (1 + z^2) = 0.2065, 1 of 2 is 1/2 -+ z / (2 (2 + z^2)) sqrt(2 + z^2)
     * = 0.0945 .. 0.9055 (z = 1.96) */
    static const struct {
        const char *family, *model;
        int counts[5]; /* runs, done, collisions, blocked, other */
        bool timed;
        const char *share;
    } rows[] = {
        {"cage", "point", {1, 0, 0, 1, 0}, false, "0-80"},
        {"cage", "unicycle", {1, 0, 0, 1, 0}, false, "0-80"},
        {"hall", "point", {1, 1, 0, 0, 0}, true, "20-100"},
        {"hall", "unicycle", {1, 1, 0, 0, 0}, true, "20-100"},
        {"all", "point", {2, 1, 0, 1, 0}, true, "9-91"},
        {"all", "unicycle", {2, 1, 0, 1, 0}, true, "9-91"},
    };
    for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
        int c[5];
        char t[32], r[32], share[32];
        table_row(table, rows[i].family, rows[i].model, c, t, r, share);
        assert_string_equal(share, rows[i].share);
        for (int k = 0; k < 5; k++)
            if (c[k] != rows[i].counts[k])
                fail_msg("%s %s: column %d is %d, not %d", rows[i].family, rows[i].model, k,
                         c[k], rows[i].counts[k]);
        /* a median time only where a run was done; the straight 3 m at 0.8 m/s
         * (less the 0.25 m tolerance) takes at least 3.4 s, so ratio >= 0.9 */
        assert_true(rows[i].timed == (strcmp(t, "-") != 0));
        if (rows[i].timed)
            assert_true(atof(r) > 0.9 && atof(r) < 3.0);
    }
    assert_non_null(strstr(table, "4 runs: 4 met their expectation"));
    free(table);
}

/* The JSON's figures against each other and against its own rows. */
static void check_consistent(const cJSON *j)
{
    const cJSON *runs = item(j, "runs"), *groups = item(j, "groups"), *totals = item(j, "totals");
    int n = cJSON_GetArraySize(runs), ok = 0, sum_groups = 0, sum_totals = 0;
    assert_int_equal((int)lc_test_num(j, "count"), n);
    const cJSON *r, *g;
    cJSON_ArrayForEach(r, runs) {
        ok += cJSON_IsTrue(item(r, "ok"));
        const cJSON *ratio = item(r, "ratio");
        if (strcmp(lc_test_str(r, "outcome"), "done") == 0) {
            /* ratio = time / (shortest_path / v_max), v_max 0.8 */
            double at_v_max = lc_test_num(r, "shortest_path") / 0.8;
            assert_near(lc_test_num(r, "ratio"), lc_test_num(r, "sim_time") / at_v_max, 1e-5);
        } else {
            assert_true(cJSON_IsNull(ratio));
        }
    }
    assert_int_equal((int)lc_test_num(j, "ok"), ok);
    cJSON_ArrayForEach(g, groups) {
        sum_groups += (int)lc_test_num(g, "runs");
        double parts = lc_test_num(g, "done") + lc_test_num(g, "blocked") +
                       lc_test_num(g, "other");
        assert_int_equal((int)lc_test_num(g, "runs"), (int)parts);
    }
    cJSON_ArrayForEach(g, totals)
        sum_totals += (int)lc_test_num(g, "runs");
    assert_int_equal(sum_groups, n);
    assert_int_equal(sum_totals, n);
}

static void test_json(void **state)
{
    two_worlds("suite", "blocked");
    char args[2048];
    snprintf(args, sizeof args, "sim '%s' --model both --jobs 2 --json", lc_test_tmp("suite"));
    assert_int_equal(lc_test_lacuna(args), 0);
    cJSON *j = lc_test_result();
    check_consistent(j);
    assert_int_equal((int)lc_test_num(j, "count"), 4);
    assert_int_equal(cJSON_GetArraySize(item(j, "groups")), 4);
    assert_int_equal(cJSON_GetArraySize(item(j, "totals")), 2);
    /* sorted names: "deeper" (the cage's directory) before "hall.jsonl";
     * each file's runs point then unicycle */
    const cJSON *runs = item(j, "runs");
    static const char *const order[][2] = {
        {"cage", "point"}, {"cage", "unicycle"}, {"hall", "point"}, {"hall", "unicycle"}};
    for (int i = 0; i < 4; i++) {
        const cJSON *r = cJSON_GetArrayItem(runs, i);
        assert_string_equal(lc_test_str(r, "family"), order[i][0]);
        assert_string_equal(lc_test_str(r, "model"), order[i][1]);
        assert_string_equal(lc_test_str(r, "outcome"), i < 2 ? "blocked" : "done");
        assert_int_equal((int)lc_test_num(r, "collisions"), 0);
    }
    /* the hall's point run as a single run: the same time */
    const cJSON *hall = cJSON_GetArrayItem(runs, 2);
    double t = lc_test_num(hall, "sim_time");
    const cJSON *g;
    cJSON_ArrayForEach(g, item(j, "groups")) {
        if (strcmp(lc_test_str(g, "family"), "hall") == 0 &&
            strcmp(lc_test_str(g, "model"), "point") == 0)
            assert_near(lc_test_num(g, "median_time"), t, 1e-9); /* one run: its own time */
    }
    snprintf(args, sizeof args, "sim '%s' --json --model point", lc_test_str(hall, "file"));
    cJSON_Delete(j);
    assert_int_equal(lc_test_lacuna(args), 0);
    j = lc_test_result();
    assert_near(lc_test_num(j, "sim_time"), t, 1e-9);
    cJSON_Delete(j);
}

/* The two worlds in dir, the cage's expecting "done" (its waypoint cannot
 * be reached), run as a batch with extra options and --svg-dir svg (a
 * directory of that name under the temporary one, its path written to
 * svg): exit 1, its JSON result checked for consistency. */
static cJSON *failing_batch(const char *dir, const char *extra, char *svg)
{
    two_worlds(dir, "done");
    char args[2048];
    snprintf(svg, LC_TEST_PATH_MAX, "%s", lc_test_tmp("svgs"));
    snprintf(svg + strlen(svg), LC_TEST_PATH_MAX - strlen(svg), "_%s", dir);
    snprintf(args, sizeof args, "sim '%s' --jobs 2 --svg-dir '%s' --json %s", lc_test_tmp(dir),
             svg, extra);
    assert_int_equal(lc_test_lacuna(args), 1);
    cJSON *j = lc_test_result();
    check_consistent(j);
    return j;
}

static void test_failure_exit_and_svg(void **state)
{
    char svg[LC_TEST_PATH_MAX];
    cJSON *j = failing_batch("failing", "", svg);
    assert_int_equal((int)lc_test_num(j, "count"), 2); /* each header's model: point */
    assert_int_equal((int)lc_test_num(j, "ok"), 1);
    cJSON_Delete(j);
    char path[LC_TEST_PATH_MAX + 64];
    snprintf(path, sizeof path, "%s/deeper_cage.point.svg", svg);
    assert_int_equal(access(path, R_OK), 0);
    snprintf(path, sizeof path, "%s/hall.point.svg", svg);
    assert_int_equal(access(path, F_OK), -1); /* met its expectation: removed */
}

static void test_jobs_do_not_change_the_result(void **state)
{
    two_worlds("suite", "blocked");
    char args[2048];
    char *text[2];
    for (int k = 0; k < 2; k++) {
        snprintf(args, sizeof args, "sim '%s' --model both --jobs %d --json --seed 5",
                 lc_test_tmp("suite"), k + 1);
        assert_int_equal(lc_test_lacuna(args), 0);
        text[k] = lc_test_slurp(lc_test_tmp("out.json"));
        assert_non_null(text[k]);
    }
    assert_string_equal(text[0], text[1]);
    free(text[0]);
    free(text[1]);
}

/* --seeds 3 --seed 7: each world and model three times, seeds 7, 8, 9 in
 * that order, each run the single run with its seed (the hall has no range
 * noise, so every seed takes the same time); a failing run's SVG names its
 * seed. */
static void test_seeds(void **state)
{
    char args[2048], svg[LC_TEST_PATH_MAX];
    cJSON *j = failing_batch("seeds", "--seeds 3 --seed 7", svg); /* the cage's SVGs kept */
    assert_int_equal((int)lc_test_num(j, "count"), 6); /* 2 worlds, their model, 3 seeds */
    const cJSON *runs = item(j, "runs");
    for (int i = 0; i < 6; i++) {
        const cJSON *r = cJSON_GetArrayItem(runs, i);
        assert_string_equal(lc_test_str(r, "family"), i < 3 ? "cage" : "hall");
        assert_int_equal((int)lc_test_num(r, "seed"), 7 + i % 3);
        char path[LC_TEST_PATH_MAX + 64];
        snprintf(path, sizeof path, "%s/%s.point.seed%d.svg", svg,
                 i < 3 ? "deeper_cage" : "hall", 7 + i % 3);
        assert_int_equal(access(path, F_OK), i < 3 ? 0 : -1);
    }
    double t = lc_test_num(cJSON_GetArrayItem(runs, 3), "sim_time");
    const cJSON *g;
    cJSON_ArrayForEach(g, item(j, "groups")) {
        if (strcmp(lc_test_str(g, "family"), "hall") != 0)
            continue;
        assert_int_equal((int)lc_test_num(g, "done"), 3);
        /* 3 of 3: from 3 / (3 + z^2) = 0.4385 (closed form) */
        assert_near(lc_test_num(g, "done_low"), 3.0 / (3.0 + 1.959964 * 1.959964), 1e-6);
        assert_near(lc_test_num(g, "done_high"), 1.0, 0.0);
    }
    cJSON_Delete(j);
    snprintf(args, sizeof args, "sim '%s/hall.jsonl' --json --seed 9", lc_test_tmp("seeds"));
    assert_int_equal(lc_test_lacuna(args), 0);
    j = lc_test_result();
    assert_near(lc_test_num(j, "sim_time"), t, 1e-9);
    assert_int_equal((int)lc_test_num(j, "seed"), 9);
    cJSON_Delete(j);
}

/*
 * lc_share_interval. Published 95 % Wilson score intervals: R. G. Newcombe,
 * "Two-sided confidence intervals for the single proportion: comparison of
 * seven methods", Statistics in Medicine 17 (1998) 857-872, table I (values
 * from memory, to 4 decimals): 81 of 263 0.2553-0.3662, 15 of 148
 * 0.0624-0.1605, 0 of 20 0-0.1611, 1 of 29 0.0061-0.1718. Closed forms at
 * the ends: k = n from n / (n + z^2), k = 0 up to z^2 / (n + z^2); the
 * interval of n - k is that of k mirrored. Random shares (fixed seed): the
 * interval lies in [0, 1], holds k / n and narrows as n grows.
 */
static void test_share_interval(void **state)
{
    static const struct {
        int k, n;
        double low, high;
    } published[] = {
        {81, 263, 0.2553, 0.3662}, {15, 148, 0.0624, 0.1605},
        {0, 20, 0.0, 0.1611},      {1, 29, 0.0061, 0.1718},
    };
    double lo, hi, lo2, hi2, z = LC_SHARE_Z95;
    for (size_t i = 0; i < sizeof published / sizeof published[0]; i++) {
        lc_share_interval(published[i].k, published[i].n, z, &lo, &hi);
        assert_near(lo, published[i].low, 5e-5);
        assert_near(hi, published[i].high, 5e-5);
    }
    for (int n = 1; n <= 200; n++) {
        lc_share_interval(n, n, z, &lo, &hi);
        assert_near(lo, n / (n + z * z), 1e-12);
        assert_true(hi == 1.0);
        lc_share_interval(0, n, z, &lo, &hi);
        assert_true(lo == 0.0);
        assert_near(hi, z * z / (n + z * z), 1e-12);
    }
    unsigned long long x = 12345;
    for (int i = 0; i < 10000; i++) {
        x = x * 6364136223846793005ULL + 1442695040888963407ULL;
        int n = 1 + (int)((x >> 33) % 500), k = (int)((x >> 13) % (unsigned)(n + 1));
        lc_share_interval(k, n, z, &lo, &hi);
        assert_true(lo >= 0.0 && lo <= (double)k / n && (double)k / n <= hi && hi <= 1.0);
        lc_share_interval(n - k, n, z, &lo2, &hi2);
        assert_near(lo2, 1.0 - hi, 1e-12);
        assert_near(hi2, 1.0 - lo, 1e-12);
        lc_share_interval(4 * k, 4 * n, z, &lo2, &hi2);
        assert_true(lo2 >= lo - 1e-12 && hi2 <= hi + 1e-12);
    }
    /* degenerate: no runs, or more done than runs */
    lc_share_interval(0, 0, z, &lo, &hi);
    assert_true(isnan(lo) && isnan(hi));
    lc_share_interval(3, 2, z, &lo, &hi);
    assert_true(isnan(lo) && isnan(hi));
    lc_share_interval(-1, 2, z, &lo, &hi);
    assert_true(isnan(lo) && isnan(hi));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_bad_usage),
        cmocka_unit_test(test_table),
        cmocka_unit_test(test_json),
        cmocka_unit_test(test_failure_exit_and_svg),
        cmocka_unit_test(test_jobs_do_not_change_the_result),
        cmocka_unit_test(test_seeds),
        cmocka_unit_test(test_share_interval),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
