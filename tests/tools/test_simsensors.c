/*
 * test_simsensors.c - the sensors `lacuna sim` simulates (simsensors.h),
 * alone and through the built command (LACUNA_EXE):
 *   - the schedule: the frames of sensors at 40, 30 and 40 Hz come out in
 *     the order of a brute-force merge of every (j / rate_k, k), stamps bit
 *     for bit, ties in list order, seq 0, 1, 2, ...;
 *   - a points sensor's points lie on the world's surfaces (no noise:
 *     distance 0 up to rounding), one per ray that returns, no heights; a
 *     listed sensor's frame names it and carries no mount, the single
 *     "sensor"'s carries its mount and no name; the robot description that
 *     lists the sensors;
 *   - closed loop: a front and rear scanner robot and a scanner and camera
 *     robot drive their routes, frames in time order naming their sensors,
 *     each answered by its setpoint, and `lacuna replay` of `--out` finds 0
 *     mismatches;
 *   - a point robot backing toward a wall that only its rear scanner sees
 *     (the front one's returns never come near it) stops short of it, ends
 *     blocked without a collision, and drives through once the wall is gone.
 */
#include "testutil.h"
#include "jsonutil.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "scenario.h"
#include "simsensors.h"
#include "world.h"

static int setup(void **state) { return lc_test_tmpdir_setup("/tmp/lacuna_test_simsensors_"); }

/* A header from text (one line). */
static void header_of(const char *text, lc_scenario_header *h)
{
    lc_scenario_error err;
    lc_scenario_header_init(h);
    if (lc_scenario_parse_header(text, strlen(text), h, &err) < 0)
        fail_msg("%s: %s", text, err.message);
}

/* ------------------------------------------------------ the schedule */

static void test_schedule_merges_by_time(void **state)
{
    (void)state;
    static const char text[] =
        "{\"type\":\"scenario\",\"version\":1,\"sensors\":["
        "{\"name\":\"a\",\"rate\":40,\"beams\":3},"
        "{\"name\":\"b\",\"kind\":\"points\",\"rate\":30,\"beams\":3},"
        "{\"name\":\"c\",\"rate\":40,\"beams\":3}]}";
    lc_scenario_header h;
    header_of(text, &h);
    lc_simsensors ss;
    assert_int_equal(lc_simsensors_init(&ss, &h), 0);
    assert_int_equal(ss.n, 3);
    lc_world w;
    lc_world_init(&w);
    /* brute force: every frame within 2 s, sorted by (stamp, sensor) */
    const double rates[3] = {40, 30, 40};
    typedef struct {
        double t;
        int k;
    } at;
    at want[256];
    int n = 0;
    for (int k = 0; k < 3; k++)
        for (int j = 0; (double)j / rates[k] <= 2.0; j++)
            want[n++] = (at){(double)j / rates[k], k};
    for (int i = 1; i < n; i++) /* insertion sort, stable */
        for (int m = i; m > 0 && (want[m].t < want[m - 1].t ||
                                  (want[m].t == want[m - 1].t && want[m].k < want[m - 1].k));
             m--) {
            at x = want[m];
            want[m] = want[m - 1];
            want[m - 1] = x;
        }
    assert_int_equal(n, 81 + 61 + 81);
    int ties = 0;
    for (int i = 0; i < n; i++) {
        double t;
        int k = lc_simsensors_next(&ss, &t);
        lc_frame f = lc_simsensors_frame(&ss, &w, (lc_pose){0, 0, 0}, NULL);
        if (k != want[i].k || memcmp(&f.stamp, &want[i].t, sizeof t) != 0 || f.stamp != t)
            fail_msg("frame %d: sensor %d at %.17g, want %d at %.17g", i, k, f.stamp, want[i].k,
                     want[i].t);
        assert_true(f.seq == i);
        assert_string_equal(f.sensor, k == 0 ? "a" : k == 1 ? "b" : "c");
        assert_int_equal(f.kind, k == 1 ? LC_FRAME_POINTS : LC_FRAME_SCAN);
        ties += i > 0 && want[i].t == want[i - 1].t;
    }
    assert_true(ties >= 81); /* a and c always, a and b every 0.1 s */
    lc_simsensors_free(&ss);
    lc_scenario_header_free(&h);
}

/* ---------------------------------------------------------- frames */

static void test_frames(void **state)
{
    (void)state;
    static const char text[] =
        "{\"type\":\"scenario\",\"version\":1,\"sensors\":["
        "{\"name\":\"cam\",\"kind\":\"points\",\"mount\":[0.3,0.1,0.4],\"beams\":201,"
        "\"fov\":1.2,\"far\":6,\"noise\":0},"
        "{\"name\":\"rear\",\"mount\":[-0.3,0,3.141592653589793],\"beams\":91,\"noise\":0}]}";
    lc_scenario_header h;
    header_of(text, &h);
    lc_world w;
    lc_world_init(&w);
    /* a wall ahead of the camera, partly beyond its far limit */
    lc_world_add(&w, (lc_vec2[]){{3, -10}, {3.2, -10}, {3.2, 10}, {3, 10}}, 4);
    lc_world_add(&w, (lc_vec2[]){{-4, -1}, {-4.2, -1}, {-4.2, 1}, {-4, 1}}, 4);
    lc_simsensors ss;
    assert_int_equal(lc_simsensors_init(&ss, &h), 0);
    lc_pose pose = {0.5, -0.2, 0.3};
    lc_frame f = lc_simsensors_frame(&ss, &w, pose, NULL);
    assert_int_equal(f.kind, LC_FRAME_POINTS);
    assert_string_equal(f.sensor, "cam");
    assert_false(f.has_mount);
    assert_null(f.z);
    assert_true(f.n_points > 20 && f.n_points < 201); /* some rays reach past far */
    lc_pose sensor = lc_pose_compose(pose, h.sensors[0].mount);
    for (int i = 0; i < f.n_points; i++) {
        lc_vec2 p = lc_pose_apply(sensor, lc_v2(f.xy[2 * i], f.xy[2 * i + 1]));
        assert_true(lc_world_distance(&w, p) < 1e-9);
        assert_true(lc_len(lc_v2(f.xy[2 * i], f.xy[2 * i + 1])) <= 6 + 1e-9);
        /* within the camera's fov */
        assert_true(fabs(atan2(f.xy[2 * i + 1], f.xy[2 * i])) <= 0.6 + 1e-9);
    }
    /* the rear scanner's frame: a scan naming it */
    f = lc_simsensors_frame(&ss, &w, pose, NULL);
    assert_int_equal(f.kind, LC_FRAME_SCAN);
    assert_string_equal(f.sensor, "rear");
    assert_false(f.has_mount);
    assert_int_equal(f.n_ranges, 91);
    lc_simsensors_free(&ss);
    lc_scenario_header_free(&h);

    /* the single "sensor": its mount on every frame, no name */
    header_of("{\"type\":\"scenario\",\"version\":1,\"sensor\":{\"mount\":[0.1,0,0],"
              "\"beams\":11}}",
              &h);
    assert_int_equal(lc_simsensors_init(&ss, &h), 0);
    f = lc_simsensors_frame(&ss, &w, pose, NULL);
    assert_string_equal(f.sensor, "");
    assert_true(f.has_mount && f.mount.x == 0.1);
    assert_int_equal(f.n_ranges, 11);
    lc_robot robot;
    lc_robot_default(&robot);
    lc_simsensors_describe(&h, &robot);
    assert_int_equal(robot.n_sensors, 0);
    lc_simsensors_free(&ss);
    lc_scenario_header_free(&h);
    lc_world_free(&w);
}

static void test_describe(void **state)
{
    (void)state;
    lc_scenario_header h;
    header_of("{\"type\":\"scenario\",\"version\":1,\"robot\":{\"sensors\":[{\"name\":\"old\"}]},"
              "\"sensors\":[{\"name\":\"front\",\"mount\":[0.3,0,0],\"fov\":4},"
              "{\"name\":\"cam\",\"kind\":\"points\",\"mount\":[0.2,0,0.1],\"fov\":1.1}]}",
              &h);
    lc_simsensors_describe(&h, &h.robot);
    assert_int_equal(h.robot.n_sensors, 2); /* the header's list replaces the robot's */
    assert_string_equal(h.robot.sensors[0].name, "front");
    assert_int_equal(h.robot.sensors[0].kind, LC_FRAME_SCAN);
    assert_true(h.robot.sensors[0].mount.x == 0.3 && h.robot.sensors[0].fov == 0);
    assert_string_equal(h.robot.sensors[1].name, "cam");
    assert_int_equal(h.robot.sensors[1].kind, LC_FRAME_POINTS);
    assert_true(h.robot.sensors[1].fov == 1.1 && h.robot.sensors[1].mount.yaw == 0.1);
    assert_true(isinf(h.robot.sensors[1].z_min) && isinf(h.robot.sensors[1].z_max));
    lc_scenario_header_free(&h);
}

/* ------------------------------------------------- through `lacuna sim` */

/* A corridor along x (inner faces y = +-1.5), the robot at the origin facing
 * +x, its route, extra polygons and sensors; into name in the temporary
 * directory. */
static const char *scene(const char *name, const char *route, const char *extra,
                         const char *sensors)
{
    char text[4096];
    int n = snprintf(text, sizeof text,
                     "{\"type\":\"scenario\",\"version\":1,\"description\":\"test\","
                     "\"robot\":{\"model\":\"point\",\"radius\":0.3,\"margin\":0.05},"
                     "\"route\":%s,\"start\":[0,0,0],\"world\":{\"polygons\":["
                     "[[-8,-1.7],[16,-1.7],[16,-1.5],[-8,-1.5]],"
                     "[[-8,1.5],[16,1.5],[16,1.7],[-8,1.7]]%s]},"
                     "\"sensors\":%s,\"max_time\":40}\n",
                     route, extra, sensors);
    assert_true(n > 0 && n < (int)sizeof text);
    const char *path = lc_test_tmp(name);
    lc_test_write_file(path, text, (size_t)n);
    return path;
}

/* The lines of a run written by --out, parsed (a NULL after the last). */
static cJSON **lines_of(const char *path, int *count)
{
    char *text = lc_test_slurp(path);
    assert_non_null(text);
    int cap = 1024, n = 0;
    cJSON **v = malloc(sizeof *v * (size_t)cap);
    assert_non_null(v);
    for (char *line = strtok(text, "\n"); line; line = strtok(NULL, "\n")) {
        if (n + 1 >= cap) {
            cap *= 2;
            v = realloc(v, sizeof *v * (size_t)cap);
            assert_non_null(v);
        }
        v[n] = cJSON_Parse(line);
        assert_non_null(v[n]);
        n++;
    }
    v[n] = NULL;
    free(text);
    *count = n;
    return v;
}

static void lines_free(cJSON **v)
{
    for (int i = 0; v[i]; i++)
        cJSON_Delete(v[i]);
    free(v);
}

static bool is_frame(const cJSON *j)
{
    const char *t = lc_test_str(j, "type");
    return strcmp(t, "scan") == 0 || strcmp(t, "points") == 0;
}

/* `lacuna replay` of a --out file: every frame compared, none differs. */
static void replays_exactly(const char *out, int frames)
{
    char args[2 * LC_TEST_PATH_MAX];
    snprintf(args, sizeof args, "replay '%s' --json", out);
    assert_int_equal(lc_test_lacuna(args), 0);
    cJSON *j = lc_test_result();
    assert_int_equal((int)lc_test_num(j, "frames"), frames);
    assert_int_equal((int)lc_test_num(j, "compared"), frames);
    assert_int_equal((int)lc_test_num(j, "mismatches"), 0);
    cJSON_Delete(j);
}

/*
 * The frames of a --out file: in time order, seq 0, 1, 2, ..., sensor k's
 * j-th frame at j / rates[k] (bit for bit), names[k] on it, no mount; each
 * followed by the setpoint of its seq. kinds[k]: "scan" or "points". The
 * header's robot lists the sensors. Returns the number of frames.
 */
static int check_run(const char *out, int n_sensors, const char *const *names,
                     const double *rates, const char *const *kinds)
{
    int count;
    cJSON **v = lines_of(out, &count);
    const cJSON *robot = cJSON_GetObjectItemCaseSensitive(v[0], "robot");
    const cJSON *listed = cJSON_GetObjectItemCaseSensitive(robot, "sensors");
    assert_int_equal(cJSON_GetArraySize(listed), n_sensors);
    for (int k = 0; k < n_sensors; k++)
        assert_string_equal(lc_test_str(cJSON_GetArrayItem(listed, k), "name"), names[k]);
    long next[8] = {0};
    int frames = 0;
    double last = -1;
    for (int i = 1; i < count; i++) {
        if (!is_frame(v[i]))
            continue;
        const char *name = lc_test_str(v[i], "sensor");
        int k = 0;
        while (k < n_sensors && strcmp(names[k], name) != 0)
            k++;
        assert_true(k < n_sensors);
        assert_string_equal(lc_test_str(v[i], "type"), kinds[k]);
        double stamp = lc_test_num(v[i], "stamp"), want = (double)next[k]++ / rates[k];
        if (stamp != want)
            fail_msg("frame %d of %s at %.17g, want %.17g", frames, name, stamp, want);
        assert_true(stamp >= last);
        last = stamp;
        assert_null(cJSON_GetObjectItemCaseSensitive(v[i], "mount"));
        assert_int_equal((int)lc_test_num(v[i], "seq"), frames);
        /* answered by its setpoint, next line */
        assert_non_null(v[i + 1]);
        assert_string_equal(lc_test_str(v[i + 1], "type"), "setpoint");
        assert_int_equal((int)lc_test_num(v[i + 1], "seq"), frames);
        frames++;
    }
    /* no sensor falls behind: each sent what its rate allows up to the end */
    for (int k = 0; k < n_sensors; k++)
        assert_true(fabs((double)next[k] / rates[k] - last) <= 1.0 / rates[k] + 1e-9);
    lines_free(v);
    return frames;
}

/* A closed-loop run of the scene at path with two sensors: done without a
 * collision, its frames as check_run wants them, and `lacuna replay` of its
 * --out exact. */
static void run_two_sensors(const char *path, const char *const names[2],
                            const double rates[2], const char *const kinds[2])
{
    char args[3 * LC_TEST_PATH_MAX];
    snprintf(args, sizeof args, "sim '%s' --json --out '%s'", path, lc_test_tmp("run.out"));
    assert_int_equal(lc_test_lacuna(args), 0);
    cJSON *j = lc_test_result();
    assert_true(lc_test_flag(j, "done"));
    assert_int_equal((int)lc_test_num(j, "collisions"), 0);
    int frames = (int)lc_test_num(j, "frames");
    cJSON_Delete(j);
    assert_int_equal(check_run(lc_test_tmp("run.out"), 2, names, rates, kinds), frames);
    replays_exactly(lc_test_tmp("run.out"), frames);
}

static void test_front_and_rear_scanners(void **state)
{
    (void)state;
    /* down the corridor and back, without turning: the way back is behind */
    const char *path = scene(
        "front_rear.jsonl", "{\"waypoints\":[[6,0.3],[0.5,-0.3]],\"tolerance\":0.25}",
        ",[[3,0.8],[3.6,0.8],[3.6,1.5],[3,1.5]]",
        "[{\"name\":\"front\",\"mount\":[0.25,0,0],\"beams\":181,\"rate\":25},"
        "{\"name\":\"rear\",\"mount\":[-0.25,0,3.141592653589793],\"beams\":181,"
        "\"rate\":12.5}]");
    static const char *const names[] = {"front", "rear"}, *const kinds[] = {"scan", "scan"};
    static const double rates[] = {25, 12.5};
    run_two_sensors(path, names, rates, kinds);
}

static void test_scanner_and_camera(void **state)
{
    (void)state;
    const char *path = scene(
        "cam.jsonl", "{\"waypoints\":[[8,0]],\"tolerance\":0.25}",
        ",[[4,-1.5],[4.6,-1.5],[4.6,-0.3],[4,-0.3]]",
        "[{\"name\":\"lidar\",\"mount\":[0.2,0,0],\"beams\":181,\"far\":8,\"rate\":40},"
        "{\"name\":\"cam\",\"kind\":\"points\",\"mount\":[0.25,0,0],\"beams\":96,"
        "\"fov\":1.2,\"far\":5,\"rate\":30}]");
    static const char *const names[] = {"lidar", "cam"}, *const kinds[] = {"scan", "points"};
    static const double rates[] = {40, 30};
    run_two_sensors(path, names, rates, kinds);
}

/* Returns of the --out file's frames of sensor name within d of the plane
 * x = wall_x (world frame), and whether that sensor sent frames at all. */
static int returns_near_wall(const char *out, const char *name, lc_pose mount, double wall_x,
                             double d)
{
    int count, near = 0;
    cJSON **v = lines_of(out, &count);
    for (int i = 1; i < count; i++) {
        if (!is_frame(v[i]) || strcmp(lc_test_str(v[i], "sensor"), name) != 0)
            continue;
        const cJSON *p = cJSON_GetObjectItemCaseSensitive(v[i], "pose"), *r;
        lc_pose pose = {cJSON_GetArrayItem(p, 0)->valuedouble,
                        cJSON_GetArrayItem(p, 1)->valuedouble,
                        cJSON_GetArrayItem(p, 2)->valuedouble};
        lc_pose sensor = lc_pose_compose(pose, mount);
        double a0 = lc_test_num(v[i], "bearing_first"), da = lc_test_num(v[i], "bearing_step");
        int b = 0;
        cJSON_ArrayForEach(r, cJSON_GetObjectItemCaseSensitive(v[i], "dist")) {
            if (cJSON_IsNumber(r)) {
                double a = a0 + da * b;
                lc_vec2 w = lc_pose_apply(sensor, lc_v2(r->valuedouble * cos(a),
                                                        r->valuedouble * sin(a)));
                near += fabs(w.x - wall_x) < d;
            }
            b++;
        }
    }
    lines_free(v);
    return near;
}

/* The reason of the first blocked event line of an --out file ("" without one). */
static const char *blocked_reason(const char *out, char *buf, size_t cap)
{
    int count;
    cJSON **v = lines_of(out, &count);
    buf[0] = '\0';
    for (int i = 1; i < count && !buf[0]; i++) {
        const char *reason = cJSON_GetStringValue(cJSON_GetObjectItemCaseSensitive(v[i], "reason"));
        if (!strcmp(lc_test_str(v[i], "type"), "event") && reason &&
            !strcmp(lc_test_str(v[i], "event"), "blocked"))
            snprintf(buf, cap, "%s", reason);
    }
    lines_free(v);
    return buf;
}

static void test_rear_scanner_sees_dead_end(void **state)
{
    (void)state;
    /* the waypoint is behind, in a corridor closed by a wall at x = -2 (its
     * face at -2) and another at x = 3: no way there. Two 270-degree
     * scanners, front and rear (a common layout: their views overlap at the
     * sides, so the memory knows the space all round the robot) */
    static const char both[] =
        "[{\"name\":\"front\",\"mount\":[0.2,0,0],\"beams\":271,"
        "\"fov\":4.71238898038469,\"far\":8,\"rate\":20,\"noise\":0},"
        "{\"name\":\"rear\",\"mount\":[-0.2,0,3.141592653589793],\"beams\":271,"
        "\"fov\":4.71238898038469,\"far\":8,\"rate\":20,\"noise\":0}]";
    static const char front_only[] =
        "[{\"name\":\"front\",\"mount\":[0.2,0,0],\"beams\":271,"
        "\"fov\":4.71238898038469,\"far\":8,\"rate\":20,\"noise\":0}]";
    static const char route[] = "{\"waypoints\":[[-4,0]],\"tolerance\":0.25,\"blocked_time\":3}";
    static const char walls[] = ",[[-2.2,-1.5],[-2,-1.5],[-2,1.5],[-2.2,1.5]],"
                                "[[3,-1.5],[3.2,-1.5],[3.2,1.5],[3,1.5]]";
    const char *path = scene("box.jsonl", route, walls, both);
    char args[3 * LC_TEST_PATH_MAX], reason[32];
    snprintf(args, sizeof args, "sim '%s' --json --out '%s'", path, lc_test_tmp("box.out"));
    assert_int_equal(lc_test_lacuna(args), 1);
    cJSON *j = lc_test_result();
    /* the rear scanner shows the dead end at once: blocked for want of a
     * way (not for want of progress), without driving into it */
    assert_string_equal(lc_test_str(j, "outcome"), "blocked");
    assert_int_equal((int)lc_test_num(j, "collisions"), 0);
    double driven = lc_test_num(j, "path_length");
    print_message("front and rear: %.3f m driven, blocked for %s\n", driven,
                  blocked_reason(lc_test_tmp("box.out"), reason, sizeof reason));
    assert_true(driven < 0.2);
    assert_string_equal(reason, "no_path");
    cJSON_Delete(j);
    /* the front scanner never saw the wall behind, the rear one did */
    lc_pose front = {0.2, 0, 0}, rear = {-0.2, 0, LC_PI};
    assert_int_equal(returns_near_wall(lc_test_tmp("box.out"), "front", front, -2, 0.3), 0);
    assert_true(returns_near_wall(lc_test_tmp("box.out"), "rear", rear, -2, 0.05) > 1000);
    /* with the front scanner alone the robot cannot tell: it does not back
     * into space it has not seen, and is blocked for want of progress */
    path = scene("box-front.jsonl", route, walls, front_only);
    snprintf(args, sizeof args, "sim '%s' --json --out '%s'", path, lc_test_tmp("box-front.out"));
    assert_int_equal(lc_test_lacuna(args), 1);
    j = lc_test_result();
    assert_string_equal(lc_test_str(j, "outcome"), "blocked");
    assert_int_equal((int)lc_test_num(j, "collisions"), 0);
    assert_string_equal(blocked_reason(lc_test_tmp("box-front.out"), reason, sizeof reason),
                        "no_progress");
    cJSON_Delete(j);
    /* without the walls the robot with both scanners backs all the way */
    path = scene("open.jsonl", route, "", both);
    snprintf(args, sizeof args, "sim '%s' --json", path);
    assert_int_equal(lc_test_lacuna(args), 0);
    j = lc_test_result();
    assert_true(lc_test_flag(j, "done"));
    assert_true(lc_test_num(j, "path_length") > 3.7);
    cJSON_Delete(j);
}

static void test_bad_sensors(void **state)
{
    (void)state;
    const char *path = scene("both.jsonl", "{\"waypoints\":[[2,0]]}", "",
                             "[{\"name\":\"a\"}],\"sensor\":{}");
    char args[LC_TEST_PATH_MAX + 32];
    snprintf(args, sizeof args, "sim '%s'", path);
    assert_int_equal(lc_test_lacuna(args), 2);
    char *err = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_non_null(err);
    assert_non_null(strstr(err, "sensors: give sensor or sensors, not both"));
    free(err);
    path = scene("dup.jsonl", "{\"waypoints\":[[2,0]]}", "", "[{\"name\":\"a\"},{\"name\":\"a\"}]");
    snprintf(args, sizeof args, "sim '%s'", path);
    assert_int_equal(lc_test_lacuna(args), 2);
    err = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_non_null(err);
    assert_non_null(strstr(err, "sensors[1].name"));
    free(err);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_schedule_merges_by_time),
        cmocka_unit_test(test_frames),
        cmocka_unit_test(test_describe),
        cmocka_unit_test(test_front_and_rear_scanners),
        cmocka_unit_test(test_scanner_and_camera),
        cmocka_unit_test(test_rear_scanner_sees_dead_end),
        cmocka_unit_test(test_bad_sensors),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
