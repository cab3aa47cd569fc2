/*
 * test_replay.c - `lacuna replay` through the built command (LACUNA_EXE):
 * a sim recording (both robot models) replays with every setpoint equal bit
 * for bit (tolerance 0); a deliberately changed setpoint in a copy is one
 * mismatch reported with its line number; --expect, --tolerance and --out;
 * a truncated last line is skipped; bad files and bad usage exit 2; a
 * header-only file and a setpoint without a frame are degenerate input.
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

static double result_num(const char *key)
{
    char *s = lc_test_slurp(lc_test_tmp("out.json"));
    cJSON *j = s ? cJSON_Parse(s) : NULL;
    if (!j)
        fail_msg("not JSON: %s", s ? s : "(none)");
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(j, key);
    if (!cJSON_IsNumber(it))
        fail_msg("no number %s in %s", key, s);
    double v = it->valuedouble;
    cJSON_Delete(j);
    free(s);
    return v;
}

static bool err_has(const char *piece)
{
    char *s = lc_test_slurp(lc_test_tmp("err.txt"));
    bool has = s && strstr(s, piece);
    free(s);
    return has;
}

/* Two recordings made once: unicycle (office) and point (warehouse). */
static long frames_uni, frames_point;

static int setup(void **state)
{
    if (lc_test_tmpdir_setup("/tmp/lacuna_test_replay_") != 0)
        return -1;
    char args[2048];
    snprintf(args, sizeof args, "sim '%s' --json --max-time 12 --out '%s'",
             lc_test_source_path("scenarios/office_round.jsonl"), lc_test_tmp("uni.jsonl"));
    lc_test_lacuna(args);
    frames_uni = (long)result_num("frames");
    snprintf(args, sizeof args, "sim '%s' --json --max-time 12 --seed 5 --out '%s'",
             lc_test_source_path("scenarios/warehouse_aisles.jsonl"), lc_test_tmp("point.jsonl"));
    lc_test_lacuna(args);
    frames_point = (long)result_num("frames");
    return frames_uni > 100 && frames_point > 100 ? 0 : -1;
}

static void test_sim_recording_replays_exactly(void **state)
{
    const char *files[2] = {"uni.jsonl", "point.jsonl"};
    long frames[2] = {frames_uni, frames_point};
    for (int i = 0; i < 2; i++) {
        char args[1024];
        snprintf(args, sizeof args, "replay '%s' --json --tolerance 0", lc_test_tmp(files[i]));
        assert_int_equal(lc_test_lacuna(args), 0);
        assert_int_equal((long)result_num("frames"), frames[i]);
        assert_int_equal((long)result_num("compared"), frames[i]);
        assert_int_equal((long)result_num("mismatches"), 0);
        assert_true(result_num("max_diff") == 0.0);
    }
}

/*
 * Copy src to dst with a change on the first setpoint line at or after
 * line `from` that holds `find`: `find` becomes `repl`. Returns the line.
 */
static int edit_copy(const char *src, const char *dst, int from, const char *find,
                     const char *repl)
{
    char *s = lc_test_slurp(src);
    assert_non_null(s);
    size_t n = strlen(s), cap = n + 256;
    char *out = malloc(cap);
    size_t o = 0;
    int line = 1, edited = 0;
    for (char *p = s; *p;) {
        char *nl = strchr(p, '\n');
        size_t len = nl ? (size_t)(nl - p) + 1 : strlen(p);
        char *hit = NULL;
        if (!edited && line >= from && strncmp(p, "{\"type\":\"setpoint\"", 18) == 0) {
            hit = strstr(p, find);
            if (hit && hit >= p + len)
                hit = NULL;
        }
        if (hit) {
            size_t pre = (size_t)(hit - p);
            memcpy(out + o, p, pre);
            o += pre;
            memcpy(out + o, repl, strlen(repl));
            o += strlen(repl);
            memcpy(out + o, hit + strlen(find), len - pre - strlen(find));
            o += len - pre - strlen(find);
            edited = line;
        } else {
            memcpy(out + o, p, len);
            o += len;
        }
        p += len;
        line++;
    }
    lc_test_write_file(dst, out, o);
    free(out);
    free(s);
    assert_true(edited > 0);
    return edited;
}

static void test_changed_setpoint_reported(void **state)
{
    /* the unicycle run's setpoints have "v":; change the digits after it */
    int line = edit_copy(lc_test_tmp("uni.jsonl"), lc_test_tmp("changed.jsonl"), 40, "\"v\":",
                         "\"v\":1e-3+");
    (void)line;
    /* "1e-3+0.5" is not JSON: that is a bad line, exit 2 with its number */
    char args[1024], where[64];
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("changed.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 2);
    snprintf(where, sizeof where, "changed.jsonl:%d:", line);
    assert_true(err_has(where));

    /* a real change: a velocity replaced by another number */
    line = edit_copy(lc_test_tmp("uni.jsonl"), lc_test_tmp("changed.jsonl"), 40, "\"w\":",
                     "\"w\":0.123456,\"x\":");
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("changed.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 1);
    assert_int_equal((long)result_num("mismatches"), 1);
    assert_int_equal((long)result_num("compared"), frames_uni);
    assert_true(result_num("max_diff") > 0);
    snprintf(where, sizeof where, "changed.jsonl:%d:", line);
    assert_true(err_has(where));
    /* within a loose tolerance it is accepted (w is at most w_max = 1 apart) */
    snprintf(args, sizeof args, "replay '%s' --json --tolerance 3", lc_test_tmp("changed.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);

    /* a changed state differs at any tolerance */
    line = edit_copy(lc_test_tmp("point.jsonl"), lc_test_tmp("state.jsonl"), 30,
                     "\"state\":\"tracking\"", "\"state\":\"blocked\"");
    snprintf(args, sizeof args, "replay '%s' --json --tolerance 100", lc_test_tmp("state.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 1);
    assert_int_equal((long)result_num("mismatches"), 1);
    snprintf(where, sizeof where, "state.jsonl:%d:", line);
    assert_true(err_has(where));
}

/* The frames alone (header, scan lines) of a recording. */
static void frames_only(const char *src, const char *dst)
{
    char *s = lc_test_slurp(src);
    assert_non_null(s);
    FILE *f = fopen(dst, "w");
    assert_non_null(f);
    int line = 0;
    for (char *p = s; *p;) {
        char *nl = strchr(p, '\n');
        size_t len = nl ? (size_t)(nl - p) + 1 : strlen(p);
        if (line == 0 || strncmp(p, "{\"type\":\"scan\"", 14) == 0)
            fwrite(p, 1, len, f);
        p += len;
        line++;
    }
    fclose(f);
    free(s);
}

static void test_expect_file(void **state)
{
    frames_only(lc_test_tmp("point.jsonl"), lc_test_tmp("frames.jsonl"));
    char args[1024];
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("frames.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);
    assert_int_equal((long)result_num("compared"), 0);
    snprintf(args, sizeof args, "replay '%s' --json --expect '%s'", lc_test_tmp("frames.jsonl"),
             lc_test_tmp("point.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);
    assert_int_equal((long)result_num("compared"), frames_point);
    int line = edit_copy(lc_test_tmp("point.jsonl"), lc_test_tmp("exp2.jsonl"), 100, "\"limit\":\"",
                         "\"vx\":9,\"limit\":\"");
    (void)line; /* a duplicate vx: a bad line of the expect file */
    snprintf(args, sizeof args, "replay '%s' --json --expect '%s'", lc_test_tmp("frames.jsonl"),
             lc_test_tmp("exp2.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 2);
    assert_true(err_has("exp2.jsonl:"));
    line = edit_copy(lc_test_tmp("point.jsonl"), lc_test_tmp("exp3.jsonl"), 100, "\"waypoint\":",
                     "\"waypoint\":7,\"x\":");
    snprintf(args, sizeof args, "replay '%s' --json --expect '%s'", lc_test_tmp("frames.jsonl"),
             lc_test_tmp("exp3.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 1);
    char where[64];
    snprintf(where, sizeof where, "exp3.jsonl:%d:", line);
    assert_true(err_has(where));
}

static void test_out_rerecords(void **state)
{
    char args[1024];
    snprintf(args, sizeof args, "replay '%s' --json --out '%s'", lc_test_tmp("uni.jsonl"),
             lc_test_tmp("re.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);
    char *a = lc_test_slurp(lc_test_tmp("uni.jsonl")), *b = lc_test_slurp(lc_test_tmp("re.jsonl"));
    assert_non_null(a);
    assert_non_null(b);
    assert_string_equal(a, b); /* same header, frames, setpoints and events */
    free(a);
    free(b);
}

static void test_truncated_last_line(void **state)
{
    char *s = lc_test_slurp(lc_test_tmp("point.jsonl"));
    assert_non_null(s);
    size_t n = strlen(s);
    lc_test_write_file(lc_test_tmp("trunc.jsonl"), s, n - 30);
    free(s);
    char args[1024];
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("trunc.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);
    assert_true(err_has("truncated"));
    assert_true((long)result_num("frames") >= frames_point - 1);
}

static void test_bad_input(void **state)
{
    const char *hdr = "{\"type\":\"scenario\",\"version\":1}\n";
    lc_test_write_file(lc_test_tmp("header.jsonl"), hdr, strlen(hdr));
    char args[1024];
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("header.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);
    assert_int_equal((long)result_num("frames"), 0);

    char text[512];
    snprintf(text, sizeof text,
             "%s{\"type\":\"setpoint\",\"seq\":1,\"stamp\":0,\"vx\":0,\"vy\":0,"
             "\"state\":\"idle\",\"limit\":\"idle\",\"waypoint\":null,\"valid_ms\":100}\n",
             hdr);
    lc_test_write_file(lc_test_tmp("lone.jsonl"), text, strlen(text));
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("lone.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 0);
    assert_true(err_has("lone.jsonl:2: setpoint without a frame"));

    snprintf(text, sizeof text, "%s\n{\"type\":\"scan\"}\n", hdr);
    lc_test_write_file(lc_test_tmp("bad.jsonl"), text, strlen(text));
    snprintf(args, sizeof args, "replay '%s' --json", lc_test_tmp("bad.jsonl"));
    assert_int_equal(lc_test_lacuna(args), 2);
    assert_true(err_has("bad.jsonl:3:"));

    const char *usage[] = {"replay", "replay a b", "replay '%s' --tolerance x",
                           "replay '%s' --tolerance -1", "replay '%s' --bogus",
                           "replay '%s' --expect", "replay /nonexistent/file.jsonl"};
    for (size_t i = 0; i < sizeof usage / sizeof usage[0]; i++) {
        snprintf(args, sizeof args, usage[i], lc_test_tmp("header.jsonl"));
        if (lc_test_lacuna(args) != 2)
            fail_msg("'%s' did not exit 2", args);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_sim_recording_replays_exactly),
        cmocka_unit_test(test_changed_setpoint_reported),
        cmocka_unit_test(test_expect_file),
        cmocka_unit_test(test_out_rerecords),
        cmocka_unit_test(test_truncated_last_line),
        cmocka_unit_test(test_bad_input),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
