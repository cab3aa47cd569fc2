/*
 * test_plan.c - `lacuna plan` through the built command (LACUNA_EXE), on
 * every request shipped (scenarios/requests/ *.json and
 * proto/examples/plan_request.json) and on frames that `lacuna sim --out`
 * records in every shipped scenario. Each result keeps the promises of
 * proto/PROTOCOL.md's `lacuna plan` section:
 *   - the points it names are the (last) frame's valid returns outside the
 *     footprint, worked out here from the request (beam bearings, mount -
 *     the frame's or its sensor's - and pose as closed-form rigid motions),
 *     in the frame's order;
 *   - the robot centre lies in the region;
 *   - every one of those points is at least radius + margin from the region
 *     (GEOS, GEOSDistance_r), unless the state is too_close; for a polygon
 *     footprint at least the margin from the region summed with the
 *     footprint at the frame's heading (GEOS's hull of the vertex sums: the
 *     Minkowski sum of convex polygons, de Berg et al., 13.3), and points
 *     inside its inscribed disc (about the centre) are its self hits;
 *   - the ellipse lies in the region: for each halfspace a.x <= b, the
 *     support function of {L u + d : |u| <= 1}, a.d + |L a| (L symmetric;
 *     Boyd and Vandenberghe, Convex Optimization, 8.4.1), is at most b, and
 *     GEOS puts 64 points of its boundary in the region's polygon;
 *   - the region's vertices satisfy its halfspaces, the target lies in it,
 *     the setpoint's speed is within v_max (and |w| within w_max).
 * A request's "frames" go through one session: the last frame's plan holds
 * what an earlier frame of another sensor saw. The same request from a file
 * and from standard input gives the same result but for its timing. Bad requests and bad usage exit 2 with one
 * line on stderr naming the field and nothing on stdout. No timing is
 * asserted.
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "codec.h"
#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif

#define TOL 1e-7 /* m: roundoff in the tangent lines, as test_session allows */

static int setup(void **state) { return lc_test_tmpdir_setup("/tmp/lacuna_test_plan_"); }

static int teardown(void **state)
{
    lc_test_geos_teardown(state);
    return lc_test_tmpdir_teardown(state);
}

/* ---- reading the result --------------------------------------------------- */

static cJSON *parse_file(const char *path)
{
    char *s = lc_test_slurp(path);
    assert_non_null(s);
    cJSON *j = cJSON_Parse(s);
    if (!j)
        fail_msg("%s: not JSON: %.300s", path, s);
    free(s);
    return j;
}

static const cJSON *item(const cJSON *obj, const char *key)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, key);
    if (!it)
        fail_msg("no %s in the result", key);
    return it;
}

static double number(const cJSON *j)
{
    if (!cJSON_IsNumber(j))
        fail_msg("not a number: %s", j && j->string ? j->string : "?");
    return j->valuedouble;
}

static lc_vec2 vec2_of(const cJSON *a)
{
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) != 2)
        fail_msg("not a pair of numbers");
    return lc_v2(number(cJSON_GetArrayItem(a, 0)), number(cJSON_GetArrayItem(a, 1)));
}

/* The region of a result, as plain arrays (free with region_free). */
typedef struct region {
    lc_halfspace *h;
    lc_vec2 *v;
    int nh, nv;
} region;

static void region_of(const cJSON *res, region *rg)
{
    const cJSON *r = item(res, "region"), *hs = item(r, "halfspaces"), *vs = item(r, "vertices");
    rg->nh = cJSON_GetArraySize(hs);
    rg->nv = cJSON_GetArraySize(vs);
    assert_true(rg->nh >= 3 && rg->nv >= 3);
    rg->h = calloc((size_t)rg->nh, sizeof *rg->h);
    rg->v = calloc((size_t)rg->nv, sizeof *rg->v);
    assert_true(rg->h && rg->v);
    for (int i = 0; i < rg->nh; i++) {
        const cJSON *t = cJSON_GetArrayItem(hs, i);
        assert_int_equal(cJSON_GetArraySize(t), 3);
        rg->h[i] = (lc_halfspace){{number(cJSON_GetArrayItem(t, 0)), number(cJSON_GetArrayItem(t, 1))},
                                  number(cJSON_GetArrayItem(t, 2))};
    }
    for (int i = 0; i < rg->nv; i++)
        rg->v[i] = vec2_of(cJSON_GetArrayItem(vs, i));
}

static void region_free(region *rg)
{
    free(rg->h);
    free(rg->v);
}

/* The largest violation of the halfspaces by p (<= 0: inside). */
static double excess(const region *rg, lc_vec2 p)
{
    double worst = -INFINITY;
    for (int i = 0; i < rg->nh; i++)
        worst = fmax(worst, lc_dot(rg->h[i].a, p) - rg->h[i].b);
    return worst;
}

/* ---- the frame's valid returns, worked out here ----------------------------- */

typedef struct returns {
    lc_vec2 *w;     /* world frame */
    bool *edge;     /* within 1e-9 m of the footprint's rim: either way is right */
    int n;
} returns;

/* The frame's sensor from the robot description, NULL when it has none
 * (protocol: the named sensor, else the first). */
static const lc_sensor_desc *sensor_of(const lc_wire_plan_request *req)
{
    const lc_frame *f = &req->frame;
    for (int i = 0; i < req->robot.n_sensors; i++)
        if (!f->sensor[0] || strcmp(f->sensor, req->robot.sensors[i].name) == 0)
            return &req->robot.sensors[i];
    return NULL;
}

/* Adds the sensor-frame point p when it lies outside the footprint. The
 * mount: the frame's own, else its sensor's (PROTOCOL.md). */
static void add_return(returns *rt, const lc_wire_plan_request *req, lc_vec2 p_sensor)
{
    const lc_sensor_desc *sd = sensor_of(req);
    lc_pose mount = req->frame.has_mount || !sd ? req->frame.mount : sd->mount;
    lc_vec2 p_robot = lc_pose_apply(mount, p_sensor);
    double d = lc_len(p_robot), r = lc_robot_inradius(&req->robot);
    if (d < r - 1e-9)
        return;
    rt->edge[rt->n] = d < r + 1e-9;
    rt->w[rt->n++] = lc_pose_apply(req->frame.pose, p_robot);
}

/* Scans: finite distances within [near, far] (the codec makes null
 * and out-of-limit values NaN); points: finite, within the robot's height
 * band and its sensor's when the frame has heights. Self hits (inside the
 * footprint) out. */
static void returns_of(const lc_wire_plan_request *req, returns *rt)
{
    const lc_frame *f = &req->frame;
    const lc_sensor_desc *sd = sensor_of(req);
    double z_min = fmax(req->robot.z_min, sd ? sd->z_min : -INFINITY);
    double z_max = fmin(req->robot.z_max, sd ? sd->z_max : INFINITY);
    int total = f->kind == LC_FRAME_SCAN ? f->n_ranges : f->n_points;
    rt->w = calloc((size_t)total + 1, sizeof *rt->w);
    rt->edge = calloc((size_t)total + 1, sizeof *rt->edge);
    assert_true(rt->w && rt->edge);
    rt->n = 0;
    for (int i = 0; i < total; i++) {
        if (f->kind == LC_FRAME_SCAN) {
            double r = f->ranges[i], b = f->angle_start + i * f->angle_step;
            if (isfinite(r) && r >= f->range_min && r <= f->range_max)
                add_return(rt, req, lc_v2(r * cos(b), r * sin(b)));
        } else {
            lc_vec2 p = lc_v2(f->xy[2 * i], f->xy[2 * i + 1]);
            double z = f->z ? f->z[i] : 0.0;
            if (lc_vec2_finite(p) && isfinite(z) &&
                (!f->z || (z >= z_min && z <= z_max)))
                add_return(rt, req, p);
        }
    }
}

/* The result's "points" are exactly these returns, in order. */
static void check_points(const returns *rt, const cJSON *res)
{
    const cJSON *pts = item(res, "points");
    int m = cJSON_GetArraySize(pts), k = 0;
    assert_int_equal(m % 2, 0);
    for (int i = 0; i < rt->n; i++) {
        lc_vec2 q = k < m ? lc_v2(number(cJSON_GetArrayItem(pts, k)),
                                  number(cJSON_GetArrayItem(pts, k + 1)))
                          : lc_v2(NAN, NAN);
        bool same = lc_dist(q, rt->w[i]) <= 1e-9 * (1 + lc_len(rt->w[i]));
        if (same)
            k += 2;
        else if (!rt->edge[i])
            fail_msg("return %d (%.9g, %.9g) is not the result's point %d (%.9g, %.9g)", i,
                     rt->w[i].x, rt->w[i].y, k / 2, q.x, q.y);
    }
    if (k != m)
        fail_msg("the result names %d points, the frame has %d valid returns", m / 2, rt->n);
}

/* ---- the promises -------------------------------------------------------- */

typedef struct tally {
    int results, regions, too_close, points_checked;
} tally;

static void check_region_promises(const lc_wire_plan_request *req, const returns *rt,
                                  const cJSON *res, bool too_close, tally *t)
{
    region rg;
    region_of(res, &rg);
    lc_vec2 centre = lc_v2(req->frame.pose.x, req->frame.pose.y);
    assert_true(excess(&rg, centre) <= 1e-9);
    for (int i = 0; i < rg.nv; i++)
        assert_true(excess(&rg, rg.v[i]) <= TOL);
    assert_true(lc_polygon_area2(rg.v, rg.nv) > 0); /* CCW, of some area */
    /* the ellipse: its support function in every halfspace's direction */
    const cJSON *el = item(res, "ellipse"), *mat = item(el, "matrix");
    lc_vec2 d = vec2_of(item(el, "center"));
    lc_vec2 row0 = vec2_of(cJSON_GetArrayItem(mat, 0)), row1 = vec2_of(cJSON_GetArrayItem(mat, 1));
    assert_near(row0.y, row1.x, 0); /* symmetric */
    for (int i = 0; i < rg.nh; i++) {
        lc_vec2 a = rg.h[i].a, la = lc_v2(lc_dot(row0, a), lc_dot(row1, a));
        assert_true(lc_dot(a, d) + lc_len(la) <= rg.h[i].b + TOL);
    }
    const cJSON *target = item(res, "target");
    if (!cJSON_IsNull(target))
        assert_true(excess(&rg, vec2_of(target)) <= TOL);
#if LC_HAVE_GEOS
    /* GEOS: the centre in the polygon, the ellipse's rim in it, and every
     * return at least radius + margin away */
    assert_true(oracle_point_distance(rg.v, rg.nv, centre) <= 1e-9);
    for (int j = 0; j < 64; j++) {
        lc_vec2 u = lc_unit_angle(2 * LC_PI * j / 64);
        lc_vec2 p = lc_add(d, lc_v2(lc_dot(row0, u), lc_dot(row1, u)));
        assert_true(oracle_point_distance(rg.v, rg.nv, p) <= TOL);
    }
    double need = req->robot.radius + req->robot.margin; /* written out: the check stands alone */
    static lc_vec2 sums[4096], body[4096];
    int nb = rg.nv;
    memcpy(body, rg.v, sizeof *body * (size_t)rg.nv);
    if (req->robot.n_footprint > 0) { /* the region's footprints: hull of the sums */
        int k = 0;
        for (int i = 0; i < rg.nv; i++)
            for (int j = 0; j < req->robot.n_footprint && k < 4096; j++)
                sums[k++] = lc_add(rg.v[i], lc_rotate(req->robot.footprint[j], req->frame.pose.yaw));
        double area;
        nb = oracle_convex_hull(sums, k, body, 4096, &area);
        need = req->robot.margin;
    }
    for (int i = 0; i < rt->n && !too_close; i++) {
        double dist = oracle_point_distance(body, nb, rt->w[i]);
        if (dist < need - TOL)
            fail_msg("return (%.6f, %.6f) is %.9f m from the region, less than %.3f", rt->w[i].x,
                     rt->w[i].y, dist, need);
        t->points_checked++;
    }
#endif
    t->regions++;
    region_free(&rg);
}

/* Checks one request's result (out.json of the last run). */
static void check_result(const char *req_path, tally *t)
{
    size_t len = 0;
    char *text = lc_test_slurp_len(req_path, &len);
    assert_non_null(text);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_plan_request req;
    lc_wire_error err;
    if (lc_wire_decode_plan_request(text, len, NULL, &buf, &req, &err) < 0)
        fail_msg("%s: %s", req_path, err.message);
    cJSON *res = parse_file(lc_test_tmp("out.json"));
    returns rt;
    returns_of(&req, &rt);
    check_points(&rt, res);
    const cJSON *state = item(res, "state");
    assert_true(cJSON_IsString(state));
    bool too_close = strcmp(state->valuestring, "too_close") == 0;
    t->too_close += too_close;
    if (!cJSON_IsNull(item(res, "region")))
        check_region_promises(&req, &rt, res, too_close, t);
    else
        assert_true(cJSON_IsNull(item(res, "ellipse")));
    const cJSON *sp = item(res, "setpoint");
    if (req.robot.model == LC_MODEL_UNICYCLE) {
        assert_true(fabs(number(item(sp, "v"))) <= req.robot.v_max + 1e-9);
        assert_true(fabs(number(item(sp, "w"))) <= req.robot.w_max + 1e-9);
    } else {
        lc_vec2 v = lc_v2(number(item(sp, "vx")), number(item(sp, "vy")));
        assert_true(lc_len(v) <= req.robot.v_max + 1e-9);
    }
    t->results++;
    free(rt.w);
    free(rt.edge);
    cJSON_Delete(res);
    lc_wire_buffers_free(&buf);
    free(text);
}

static void plan_and_check(const char *req_path, tally *t)
{
    char args[LC_TEST_PATH_MAX + 32];
    snprintf(args, sizeof args, "plan --json '%s'", req_path);
    int rc = lc_test_lacuna(args);
    if (rc != 0) {
        char *err = lc_test_slurp(lc_test_tmp("err.txt"));
        fail_msg("lacuna %s: exit %d: %s", args, rc, err ? err : "");
    }
    check_result(req_path, t);
}

/* ---- the tests ----------------------------------------------------------- */

static void test_shipped_requests(void **state)
{
    static char paths[33][LC_TEST_PATH_MAX];
    int n = lc_test_files("scenarios/requests", ".json", paths, 32);
    assert_true(n >= 2);
    snprintf(paths[n++], LC_TEST_PATH_MAX, "%s", lc_test_source_path("proto/examples/plan_request.json"));
    tally t = {0};
    for (int i = 0; i < n; i++)
        plan_and_check(paths[i], &t);
    /* each shipped request has a region, and returns to keep away from */
    assert_int_equal(t.results, n);
    assert_int_equal(t.regions, n);
    assert_int_equal(t.too_close, 0);
    print_message("%d requests, %d returns checked against GEOS\n", n, t.points_checked);
    LC_GEOS_CHECKED();
}

/* The period of the frame's sensor: the header's "sensor", else the one of
 * its "sensors" the frame names. */
static double sensor_period(const cJSON *header, const cJSON *frame)
{
    const cJSON *one = cJSON_GetObjectItemCaseSensitive(header, "sensor");
    if (one)
        return 1.0 / number(item(one, "rate"));
    const char *name = cJSON_GetStringValue(item(frame, "sensor"));
    const cJSON *s;
    cJSON_ArrayForEach(s, item(header, "sensors"))
        if (name && strcmp(cJSON_GetStringValue(item(s, "name")), name) == 0)
            return 1.0 / number(item(s, "rate"));
    fail_msg("frame of sensor %s, which the header does not list", name ? name : "?");
    return 0;
}

/* A request from one recorded frame: the header's robot, the waypoint the
 * next setpoint names, the sensor's period; NULL when that setpoint names
 * no waypoint. */
static char *request_of(const cJSON *header, const cJSON *frame, const cJSON *setpoint)
{
    const cJSON *wp = cJSON_GetObjectItemCaseSensitive(setpoint, "waypoint");
    if (!cJSON_IsNumber(wp) || wp->valueint < 0)
        return NULL;
    const cJSON *route = item(item(header, "route"), "waypoints");
    cJSON *req = cJSON_CreateObject(), *robot = cJSON_Duplicate(item(header, "robot"), 1);
    cJSON_DeleteItemFromObjectCaseSensitive(robot, "type");
    cJSON_AddItemToObject(req, "robot", robot);
    cJSON_AddItemToObject(req, "goal", cJSON_Duplicate(cJSON_GetArrayItem(route, wp->valueint), 1));
    cJSON_AddNumberToObject(req, "dt", sensor_period(header, frame));
    cJSON_AddItemToObject(req, "frame", cJSON_Duplicate(frame, 1));
    char *s = cJSON_PrintUnformatted(req);
    cJSON_Delete(req);
    return s;
}

/* Every 25th frame of 20 simulated seconds in every shipped scenario. */
static void test_simulated_frames(void **state)
{
    static char paths[64][LC_TEST_PATH_MAX];
    int files = lc_test_jsonl_files("scenarios", paths, 64);
    assert_true(files >= 6);
    tally t = {0};
    for (int s = 0; s < files; s++) {
        char args[2 * LC_TEST_PATH_MAX + 64];
        snprintf(args, sizeof args, "sim '%.1000s' --max-time 20 --json --out '%.1000s'", paths[s],
                 lc_test_tmp("rec.jsonl"));
        int rc = lc_test_lacuna(args);
        assert_true(rc == 0 || rc == 1); /* 1: the route not done in 20 s */
        char *rec = lc_test_slurp(lc_test_tmp("rec.jsonl"));
        assert_non_null(rec);
        cJSON *header = NULL, *frame = NULL;
        int frames = 0, used = 0;
        for (char *line = strtok(rec, "\n"); line; line = strtok(NULL, "\n")) {
            cJSON *j = cJSON_Parse(line);
            assert_non_null(j);
            const char *type = cJSON_GetStringValue(cJSON_GetObjectItemCaseSensitive(j, "type"));
            assert_non_null(type);
            if (!header) {
                header = j;
                continue;
            }
            if (!strcmp(type, "scan") || !strcmp(type, "points")) {
                cJSON_Delete(frame);
                frame = frames++ % 15 == 0 ? j : NULL;
                if (!frame)
                    cJSON_Delete(j);
                continue;
            }
            char *req = frame && !strcmp(type, "setpoint") ? request_of(header, frame, j) : NULL;
            if (req) {
                lc_test_write_file(lc_test_tmp("req.json"), req, strlen(req));
                plan_and_check(lc_test_tmp("req.json"), &t);
                used++;
                free(req);
            }
            if (!strcmp(type, "setpoint")) {
                cJSON_Delete(frame);
                frame = NULL;
            }
            cJSON_Delete(j);
        }
        assert_true(used >= 10);
        cJSON_Delete(frame);
        cJSON_Delete(header);
        free(rec);
    }
    print_message("%d frames of %d scenarios, %d with a region, %d too close, "
                  "%d returns checked against GEOS\n",
                  t.results, files, t.regions, t.too_close, t.points_checked);
    assert_true(t.regions >= t.results - t.too_close);
    assert_true(t.too_close * 10 < t.results);
    LC_GEOS_CHECKED();
}

/* The result without its timing (the only part that may differ between
 * two runs of one request), as text (free it). */
static char *untimed_result(void)
{
    cJSON *res = parse_file(lc_test_tmp("out.json"));
    cJSON_DeleteItemFromObjectCaseSensitive(res, "timing_us");
    char *s = cJSON_PrintUnformatted(res);
    cJSON_Delete(res);
    return s;
}

static void test_stdin_and_repeat(void **state)
{
    const char *req = lc_test_source_path("scenarios/requests/office-corner.json");
    char args[LC_TEST_PATH_MAX + 32];
    snprintf(args, sizeof args, "plan --json '%s'", req);
    assert_int_equal(lc_test_lacuna(args), 0);
    char *first = untimed_result();
    assert_int_equal(lc_test_lacuna(args), 0);
    char *again = untimed_result();
    snprintf(args, sizeof args, "plan --json - < '%s'", req);
    assert_int_equal(lc_test_lacuna(args), 0);
    char *piped = untimed_result();
    snprintf(args, sizeof args, "plan < '%s'", req); /* no file, not a terminal: JSON */
    assert_int_equal(lc_test_lacuna(args), 0);
    char *bare = untimed_result();
    assert_string_equal(first, again);
    assert_string_equal(first, piped);
    assert_string_equal(first, bare);
    free(first);
    free(again);
    free(piped);
    free(bare);
}

/* A bad request: exit 2, nothing on stdout, one line on stderr that names
 * the file and the field. */
static void expect_refused(const char *text, const char *field)
{
    const char *path = lc_test_tmp("bad.json");
    lc_test_write_file(path, text, strlen(text));
    char args[LC_TEST_PATH_MAX + 32], want[LC_TEST_PATH_MAX + 128];
    snprintf(args, sizeof args, "plan --json '%s'", path);
    snprintf(want, sizeof want, "lacuna plan: %s: %s", path, field);
    lc_test_refused(args, want);
}

#define SCAN_OBJECT \
    "{\"type\": \"scan\", \"seq\": 1, \"stamp\": 0, \"pose\": [0, 0, 0], " \
    "\"bearing_first\": 0, \"bearing_step\": 0.1, \"near\": 0.1, \"far\": 5, " \
    "\"dist\": [1, 2, null]}"
#define SCAN_FRAME "\"frame\": " SCAN_OBJECT

static void test_bad_requests(void **state)
{
    static const struct { const char *what, *text, *field; } cases[] = {
        {"empty file", "", "message: empty"},
        {"cut short", "{\"goal\": [1, 2], ", "message: not valid JSON"},
        {"bytes after", "{\"goal\": [1, 2], " SCAN_FRAME "} x", "message: bytes after"},
        {"an array", "[1, 2]", "request: not a JSON object"},
        {"no goal", "{" SCAN_FRAME "}", "goal: missing"},
        {"no frame", "{\"goal\": [1, 2]}", "frame: missing"},
        {"goal of one number", "{\"goal\": [1], " SCAN_FRAME "}", "goal"},
        {"goal a string", "{\"goal\": [\"a\", 2], " SCAN_FRAME "}", "goal[0]: not a number"},
        {"goal overflows", "{\"goal\": [1e400, 2], " SCAN_FRAME "}", "goal[0]: not finite"},
        {"goal twice", "{\"goal\": [1, 2], \"goal\": [1, 1], " SCAN_FRAME "}", "goal: given more"},
        {"dt zero", "{\"goal\": [1, 2], \"dt\": 0, " SCAN_FRAME "}", "dt: must be > 0"},
        {"dt negative", "{\"goal\": [1, 2], \"dt\": -0.1, " SCAN_FRAME "}", "dt: must be > 0"},
        {"dt too long", "{\"goal\": [1, 2], \"dt\": 1.5, " SCAN_FRAME "}", "dt: must be <= 1"},
        {"velocity short", "{\"goal\": [1, 2], \"velocity\": [1], " SCAN_FRAME "}", "velocity"},
        {"velocity overflows", "{\"goal\": [1, 2], \"velocity\": [1e400, 0], " SCAN_FRAME "}",
         "velocity[0]: not finite"},
        {"radius negative", "{\"robot\": {\"radius\": -1}, \"goal\": [1, 2], " SCAN_FRAME "}",
         "robot.radius: must be > 0"},
        {"margin negative", "{\"robot\": {\"margin\": -1}, \"goal\": [1, 2], " SCAN_FRAME "}",
         "robot.margin: must be >= 0"},
        {"unknown model", "{\"robot\": {\"model\": \"tank\"}, \"goal\": [1, 2], " SCAN_FRAME "}",
         "robot.model"},
        {"v_max a string", "{\"robot\": {\"v_max\": \"fast\"}, \"goal\": [1, 2], " SCAN_FRAME "}",
         "robot.v_max: not a number"},
        {"wrong type", "{\"type\": \"scan\", \"goal\": [1, 2], " SCAN_FRAME "}", "type: must be"},
        {"frame a number", "{\"goal\": [1, 2], \"frame\": 5}", "frame: not an object"},
        {"frame of no kind", "{\"goal\": [1, 2], \"frame\": {\"pose\": [0, 0, 0]}}", "frame.type"},
        {"frame a route", "{\"goal\": [1, 2], \"frame\": {\"type\": \"route\"}}", "frame.type"},
        {"no beams", "{\"goal\": [1, 2], \"frame\": {\"type\": \"scan\", \"seq\": 1, \"stamp\": 0, "
         "\"pose\": [0, 0, 0], \"bearing_first\": 0, \"bearing_step\": 0.1, \"near\": 0.1, "
         "\"far\": 5, \"dist\": []}}", "frame.dist"},
        {"a beam a string", "{\"goal\": [1, 2], \"frame\": {\"type\": \"scan\", \"seq\": 1, "
         "\"stamp\": 0, \"pose\": [0, 0, 0], \"bearing_first\": 0, \"bearing_step\": 0.1, "
         "\"near\": 0.1, \"far\": 5, \"dist\": [1, \"x\"]}}", "frame.dist[1]"},
        {"bearing_step zero", "{\"goal\": [1, 2], \"frame\": {\"type\": \"scan\", \"seq\": 1, "
         "\"stamp\": 0, \"pose\": [0, 0, 0], \"bearing_first\": 0, \"bearing_step\": 0, "
         "\"near\": 0.1, \"far\": 5, \"dist\": [1]}}", "frame.bearing_step"},
        {"pose of two", "{\"goal\": [1, 2], \"frame\": {\"type\": \"scan\", \"seq\": 1, "
         "\"stamp\": 0, \"pose\": [0, 0], \"bearing_first\": 0, \"bearing_step\": 0.1, "
         "\"near\": 0.1, \"far\": 5, \"dist\": [1]}}", "frame.pose"},
        {"xy odd", "{\"goal\": [1, 2], \"frame\": {\"type\": \"points\", \"seq\": 1, \"stamp\": 0, "
         "\"pose\": [0, 0, 0], \"xy\": [1, 2, 3]}}", "frame.xy"},
        {"z short", "{\"goal\": [1, 2], \"frame\": {\"type\": \"points\", \"seq\": 1, \"stamp\": 0, "
         "\"pose\": [0, 0, 0], \"xy\": [1, 2, 3, 4], \"z\": [0.1]}}", "frame.z"},
        {"no frames", "{\"goal\": [1, 2], \"frames\": []}", "frames: fewer than 1"},
        {"frame and frames", "{\"goal\": [1, 2], \"frames\": [" SCAN_OBJECT "], " SCAN_FRAME "}",
         "frames: give frame or frames"},
        {"a bad beam in frames[1]", "{\"goal\": [1, 2], \"frames\": [" SCAN_OBJECT ", "
         "{\"type\": \"scan\", \"seq\": 2, \"stamp\": 0, \"pose\": [0, 0, 0], \"bearing_first\": 0, "
         "\"bearing_step\": 0.1, \"near\": 0.1, \"far\": 5, \"dist\": [1, \"x\"]}]}",
         "frames[1].dist[1]"},
        {"a bad sensor name", "{\"goal\": [1, 2], \"frames\": [{\"type\": \"points\", \"seq\": 1, "
         "\"stamp\": 0, \"pose\": [0, 0, 0], \"sensor\": \"cam 2\", \"xy\": []}]}",
         "frames[0].sensor"},
        {"sensors of one name", "{\"robot\": {\"sensors\": [{\"name\": \"a\"}, {\"name\": \"a\"}]}, "
         "\"goal\": [1, 2], " SCAN_FRAME "}", "robot.sensors[1].name"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++)
        expect_refused(cases[i].text, cases[i].field);
}

/* An unknown key is not an error: planned (exit 0), named on stderr. */
static void test_unknown_key_warned(void **state)
{
    const char *path = lc_test_tmp("extra.json");
    const char *text = "{\"goal\": [1, 2], \"colour\": \"teal\", " SCAN_FRAME "}";
    lc_test_write_file(path, text, strlen(text));
    char args[LC_TEST_PATH_MAX + 32];
    snprintf(args, sizeof args, "plan --json '%s'", path);
    assert_int_equal(lc_test_lacuna(args), 0);
    char *err = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_non_null(strstr(err, "unknown key 'colour' ignored"));
    free(err);
    tally t = {0};
    check_result(path, &t);
    assert_int_equal(t.regions, 1);
}

/* Obstacle vertices of the last result (out.json) with x in [x0, x1]. */
static int obstacle_vertices_in(double x0, double x1)
{
    cJSON *res = parse_file(lc_test_tmp("out.json"));
    const cJSON *piece, *v;
    int n = 0;
    cJSON_ArrayForEach(piece, item(res, "obstacles"))
        cJSON_ArrayForEach(v, piece) {
            double x = vec2_of(v).x;
            n += x >= x0 && x <= x1;
        }
    cJSON_Delete(res);
    return n;
}

/*
 * "frames" go through one session: in scenarios/requests/dock-backing.json
 * the front scanner sees a cage 2 m ahead and the rear one (the last frame)
 * the dock wall behind; the plan of the rear frame still holds the cage
 * (remembered), which the rear frame alone does not. Both plans keep every
 * promise about the last frame's returns (plan_and_check).
 */
static void test_frames_remembered(void **state)
{
    const char *path = lc_test_source_path("scenarios/requests/dock-backing.json");
    tally t = {0};
    plan_and_check(path, &t);
    int both = obstacle_vertices_in(1.9, 2.7);
    char *text = lc_test_slurp(path);
    assert_non_null(text);
    cJSON *req = cJSON_Parse(text);
    assert_non_null(req);
    free(text);
    cJSON_DeleteItemFromArray(cJSON_GetObjectItemCaseSensitive(req, "frames"), 0);
    char *rear = cJSON_PrintUnformatted(req);
    cJSON_Delete(req);
    lc_test_write_file(lc_test_tmp("rear.json"), rear, strlen(rear));
    free(rear);
    plan_and_check(lc_test_tmp("rear.json"), &t);
    int rear_only = obstacle_vertices_in(1.9, 2.7);
    print_message("cage vertices: %d planned after the front frame, %d from the rear alone\n",
                  both, rear_only);
    assert_true(both >= 3);
    assert_int_equal(rear_only, 0);
    assert_int_equal(t.regions, 2);
}

/* Bad usage: exit 2, one line naming what is wrong. */
static void test_bad_usage(void **state)
{
    static const struct { const char *args, *want; } cases[] = {
        {"plan --fast", "lacuna plan: unknown option '--fast'"},
        {"plan a.json b.json", "lacuna plan: one request file at most"},
        {"plan /nonexistent/req.json", "lacuna plan: cannot read '/nonexistent/req.json': No such"},
        {"plan /", "lacuna plan: cannot read '/': Is a directory"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++)
        lc_test_refused(cases[i].args, cases[i].want);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_shipped_requests),
        cmocka_unit_test(test_simulated_frames),
        cmocka_unit_test(test_stdin_and_repeat),
        cmocka_unit_test(test_bad_requests),
        cmocka_unit_test(test_frames_remembered),
        cmocka_unit_test(test_unknown_key_warned),
        cmocka_unit_test(test_bad_usage),
    };
    return LC_RUN_TESTS(tests, setup, teardown);
}
