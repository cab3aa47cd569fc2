/*
 * test_codec_view.c - what a view tells the viewer beyond the geometry
 * (codec_view.c, proto/PROTOCOL.md "Server to viewer: view"): the link, why
 * the patrol is blocked, guidance's way ahead and whether it is a detour,
 * and the remembered occupied cells as runs along rows.
 *
 * - guide: a hand-made path round a wall (10 m along it against 4 m
 *   straight) is a detour, a straight one is not, no_path has an empty way,
 *   and no path at all (or no waypoint) is null.
 * - memory: from a real session's memory after a frame, the runs name
 *   exactly the occupied cells of the box about the robot, counted cell by
 *   cell through lc_memory_cell (the brute force, outside the encoder); a
 *   frame with more separate returns than a view carries runs keeps the rows
 *   nearest the robot and says it is not complete; without with_memory the
 *   key is absent.
 * - degenerate: no frame yet (no result): link, blocked null, guide null.
 */
#include "testutil.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "codec.h"
#include "session.h"

static cJSON *encode(const lc_wire_view *v)
{
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    assert_int_equal(lc_wire_encode_view(&t, v), 0);
    cJSON *j = cJSON_ParseWithLength(t.s, (size_t)t.len);
    assert_non_null(j);
    lc_wire_text_free(&t);
    return j;
}

static const cJSON *member(const cJSON *j, const char *key)
{
    return cJSON_GetObjectItemCaseSensitive(j, key);
}

/* A result with a waypoint and the given path (nothing else). */
static lc_plan_result with_path(const lc_guide_path *p)
{
    lc_plan_result r;
    memset(&r, 0, sizeof r);
    r.has_waypoint = true;
    r.waypoint = lc_v2(4, 0);
    r.path = p;
    return r;
}

static void test_guide(void **state)
{
    lc_robot robot;
    lc_robot_default(&robot);
    /* round a wall on the x axis between the robot and the goal: up, across, down */
    static lc_guide_path round;
    round.status = LC_GUIDE_PATH;
    round.v[0] = lc_v2(0, 0);
    round.v[1] = lc_v2(0, 3);
    round.v[2] = lc_v2(4, 3);
    round.v[3] = lc_v2(4, 0);
    round.n = 4;
    round.goal = lc_v2(4, 0);
    lc_plan_result r = with_path(&round);
    lc_wire_view v = {.robot = "r", .desc = &robot, .result = &r, .seq = 1};
    cJSON *j = encode(&v);
    const cJSON *g = member(j, "guide");
    assert_string_equal(member(g, "status")->valuestring, "path");
    assert_true(cJSON_IsTrue(member(g, "detour")));
    assert_near(member(g, "to_go")->valuedouble, 10.0, 1e-9);
    assert_near(member(g, "straight")->valuedouble, 4.0, 1e-9);
    assert_int_equal(cJSON_GetArraySize(member(g, "path")), 4); /* the robot, then v[1..3] */
    assert_string_equal(member(j, "link")->valuestring, "up");
    assert_true(cJSON_IsNull(member(j, "blocked")));
    assert_null(member(j, "memory"));
    cJSON_Delete(j);

    /* straight to the goal, and 0.9 m longer than straight: no detour */
    static lc_guide_path straight;
    straight = round;
    straight.v[1] = lc_v2(2, 1.0);
    straight.v[2] = lc_v2(4, 0);
    straight.n = 3;
    r = with_path(&straight);
    j = encode(&v);
    g = member(j, "guide");
    assert_false(cJSON_IsTrue(member(g, "detour")));
    assert_true(member(g, "to_go")->valuedouble < 4.0 + 1.0);
    cJSON_Delete(j);

    /* no path: status no_path, an empty way; the patrol blocked for it */
    static lc_guide_path none;
    memset(&none, 0, sizeof none);
    none.status = LC_GUIDE_NO_PATH;
    none.goal = lc_v2(4, 0);
    r = with_path(&none);
    v.blocked = LC_BLOCK_NO_PATH;
    v.link_down = true;
    j = encode(&v);
    g = member(j, "guide");
    assert_string_equal(member(g, "status")->valuestring, "no_path");
    assert_int_equal(cJSON_GetArraySize(member(g, "path")), 0);
    assert_false(cJSON_IsTrue(member(g, "detour")));
    assert_string_equal(member(j, "blocked")->valuestring, "no_path");
    assert_string_equal(member(j, "link")->valuestring, "down");
    cJSON_Delete(j);

    /* no guidance (path NULL) or no waypoint: null */
    r = with_path(NULL);
    v.blocked = LC_BLOCK_NO_PROGRESS;
    j = encode(&v);
    assert_true(cJSON_IsNull(member(j, "guide")));
    assert_string_equal(member(j, "blocked")->valuestring, "no_progress");
    cJSON_Delete(j);
    r = with_path(&round);
    r.has_waypoint = false;
    j = encode(&v);
    assert_true(cJSON_IsNull(member(j, "guide")));
    cJSON_Delete(j);
}

/* One frame of points through a session: its memory remembers them. */
static lc_session *session_with(const double *xy, int n, lc_plan_result *out)
{
    lc_session *s = lc_session_new(NULL, NULL, NULL);
    assert_non_null(s);
    lc_session_set_goal(s, lc_v2(3, 0));
    lc_frame f;
    memset(&f, 0, sizeof f);
    f.kind = LC_FRAME_POINTS;
    f.seq = 1;
    f.xy = xy;
    f.n_points = n;
    assert_int_equal(lc_session_step(s, &f, 0.05, out), 0);
    assert_non_null(out->memory);
    return s;
}

/* The view of a result with its memory. */
static cJSON *memory_view(const lc_plan_result *res)
{
    lc_robot robot;
    lc_robot_default(&robot);
    lc_wire_view v = {.robot = "r", .desc = &robot, .result = res, .seq = 1,
                      .with_memory = true};
    return encode(&v);
}

/* The cells the runs of a view's memory name: each must be occupied; the count. */
static long run_cells(const cJSON *mem, const lc_memory *m)
{
    const cJSON *origin = member(mem, "origin"), *runs = member(mem, "runs");
    long i0 = (long)cJSON_GetArrayItem(origin, 0)->valuedouble;
    long j0 = (long)cJSON_GetArrayItem(origin, 1)->valuedouble;
    int n = cJSON_GetArraySize(runs);
    assert_int_equal(n % 3, 0);
    long cells = 0;
    for (int k = 0; k < n; k += 3) {
        long dj = (long)cJSON_GetArrayItem(runs, k)->valuedouble;
        long di = (long)cJSON_GetArrayItem(runs, k + 1)->valuedouble;
        long len = (long)cJSON_GetArrayItem(runs, k + 2)->valuedouble;
        assert_true(len >= 1);
        for (long i = 0; i < len; i++)
            assert_int_equal(lc_memory_cell(m, i0 + di + i, j0 + dj), LC_CELL_OCCUPIED);
        /* a run is maximal: the cells beside it are not occupied */
        assert_int_not_equal(lc_memory_cell(m, i0 + di - 1, j0 + dj), LC_CELL_OCCUPIED);
        assert_int_not_equal(lc_memory_cell(m, i0 + di + len, j0 + dj), LC_CELL_OCCUPIED);
        cells += len;
    }
    return cells;
}

/* Occupied cells within the view's reach of the origin cell, one by one. */
static long occupied_near(const lc_memory *m)
{
    lc_memory_window w = lc_memory_get_window(m);
    long ic, jc, reach = (long)ceil(LC_WIRE_VIEW_MEMORY_REACH / w.cell), count = 0;
    lc_memory_cell_of(m, lc_v2(0, 0), &ic, &jc);
    for (long j = jc - reach; j <= jc + reach; j++)
        for (long i = ic - reach; i <= ic + reach; i++)
            count += lc_memory_cell(m, i, j) == LC_CELL_OCCUPIED;
    return count;
}

static void test_memory_runs(void **state)
{
    /* a wall along x (one long run per row it touches), a post, and a point
     * beyond the view's reach that must not appear */
    double xy[2 * 64];
    int n = 0;
    for (int k = 0; k < 40; k++, n++) { /* cell centres: one point a cell */
        xy[2 * n] = -0.975 + 0.05 * k;
        xy[2 * n + 1] = 2.025;
    }
    xy[2 * n] = 1.525, xy[2 * n + 1] = -0.975, n++;
    xy[2 * n] = 7.525, xy[2 * n + 1] = 0.025, n++;
    static lc_plan_result res;
    lc_session *s = session_with(xy, n, &res);
    cJSON *j = memory_view(&res);
    const cJSON *mem = member(j, "memory");
    assert_non_null(mem);
    assert_true(cJSON_IsTrue(member(mem, "complete")));
    assert_near(member(mem, "cell")->valuedouble, lc_memory_get_window(res.memory).cell, 0);
    long cells = run_cells(mem, res.memory);
    assert_int_equal(cells, occupied_near(res.memory));
    assert_int_equal(cells, 41); /* the wall and the post; not the point 7.5 m off */
    /* the wall is one run, the post another */
    assert_int_equal(cJSON_GetArraySize(member(mem, "runs")), 2 * 3);
    cJSON_Delete(j);
    lc_session_free(s);
}

/* More separate returns than a view carries runs: the nearest rows, incomplete. */
static void test_memory_cap(void **state)
{
    int side = 90, n = 0; /* 90 x 90 posts 0.1 m apart: 8100 single-cell runs */
    double *xy = malloc(sizeof *xy * 2 * (size_t)(side * side));
    assert_non_null(xy);
    for (int a = 0; a < side; a++)
        for (int b = 0; b < side; b++, n++) {
            xy[2 * n] = -4.45 + 0.1 * a;
            xy[2 * n + 1] = -4.45 + 0.1 * b;
        }
    static lc_plan_result res;
    lc_session *s = session_with(xy, n, &res);
    cJSON *j = memory_view(&res);
    const cJSON *mem = member(j, "memory");
    assert_false(cJSON_IsTrue(member(mem, "complete")));
    const cJSON *runs = member(mem, "runs");
    assert_int_equal(cJSON_GetArraySize(runs), 3 * LC_WIRE_VIEW_MEMORY_RUNS);
    run_cells(mem, res.memory);
    /* the rows kept are the nearest to the robot's row */
    long ic, jc, reach = (long)ceil(LC_WIRE_VIEW_MEMORY_REACH / lc_memory_get_window(res.memory).cell);
    lc_memory_cell_of(res.memory, lc_v2(0, 0), &ic, &jc);
    long far = 0;
    for (int k = 0; k < cJSON_GetArraySize(runs); k += 3)
        far = (long)fmax((double)far, fabs(cJSON_GetArrayItem(runs, k)->valuedouble - reach));
    assert_true(far < reach / 2);
    cJSON_Delete(j);
    lc_session_free(s);
    free(xy);
}

/* Before any frame: nothing to explain, and it is still a valid view. */
static void test_no_frame(void **state)
{
    lc_wire_view v = {.robot = "r", .seq = -1, .with_memory = true};
    cJSON *j = encode(&v);
    assert_string_equal(member(j, "link")->valuestring, "up");
    assert_true(cJSON_IsNull(member(j, "blocked")));
    assert_true(cJSON_IsNull(member(j, "guide")));
    assert_null(member(j, "memory"));
    cJSON_Delete(j);
    v.blocked = LC_BLOCK_REASON_COUNT; /* out of range: null, never a made-up name */
    j = encode(&v);
    assert_true(cJSON_IsNull(member(j, "blocked")));
    cJSON_Delete(j);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_guide),
        cmocka_unit_test(test_memory_runs),
        cmocka_unit_test(test_memory_cap),
        cmocka_unit_test(test_no_frame),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
