/*
 * codec_decode.c - decoding (see codec.h): a text message to one checked
 * struct, and the robot -> server objects (hello, robot, route, scan,
 * points) and the `lacuna plan` request.
 *
 * The text is checked for what cJSON would let through (control bytes,
 * trailing bytes) and parsed once; the message's "type" picks its decoder,
 * which reads the tree with the field readers of json_read.c. The server ->
 * client messages have theirs in codec_client.c. Scan and points messages
 * in plain form take a one-pass fast path first (codec_fast.c) that decodes
 * exactly as this path would or declines.
 *
 * A decoded frame's arrays live in the caller's lc_wire_buffers (grown
 * through its lc_alloc to a high-water mark, then reused); the cJSON tree
 * is freed before every call returns.
 */
#include "codec_client.h"
#include "codec_fast.h"
#include "codec_names.h"
#include "json_read.h"

#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#define MAG LC_WIRE_MAGNITUDE_MAX
#define TWO_PI (2.0 * LC_PI)

/* --------------------------------------------------- limits and buffers */

void lc_wire_limits_default(lc_wire_limits *lim)
{
    lim->max_message = 1u << 20;
    lim->max_beams = 100000;
    lim->max_points = 100000;
    lim->dt_max = 1.0;
}

static const lc_wire_limits *limits_or_default(const lc_wire_limits *lim,
                                               lc_wire_limits *storage)
{
    if (lim)
        return lim;
    lc_wire_limits_default(storage);
    return storage;
}

void lc_wire_buffers_init(lc_wire_buffers *b, const lc_alloc *alloc)
{
    memset(b, 0, sizeof *b);
    b->alloc = alloc ? alloc : lc_alloc_default();
}

void lc_wire_buffers_free(lc_wire_buffers *b)
{
    LC_RELEASE(b->alloc, b->ranges, b->cap_ranges);
    LC_RELEASE(b->alloc, b->xy, b->cap_xy);
    LC_RELEASE(b->alloc, b->z, b->cap_z);
}

static int grow_or_fail(const lc_alloc *alloc, double **p, int *cap, int need,
                        const char *path, const char *key, lc_wire_error *err)
{
    if (lc_grow(alloc, (void **)p, cap, need < 1 ? 1 : need, sizeof **p) != 0)
        return lc_jr_fail(err, LC_WIRE_INTERNAL, path, key, "out of memory");
    return 0;
}

/* ------------------------------------------------------ object decoders */

static const char *const robot_keys[] = {"type", "model", "radius", "footprint", "margin",
                                         "v_max", "a_max", "w_max", "dw_max", "reverse", "z_min",
                                         "z_max", "sensors", NULL};

/* z_min < z_max, else an error naming path.z_max. */
static int band_ok(const char *path, double z_min, double z_max, lc_wire_error *err)
{
    if (z_min < z_max)
        return 0;
    return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "z_max", "must be greater than z_min");
}

static const char *const sensor_keys[] = {"name", "kind", "mount", "fov", "z_min", "z_max",
                                          NULL};

/* A scan sensor sees a plane: a field of view or a height band is for points only. */
static int scan_sensor_extras(const cJSON *obj, const char *path, lc_wire_error *err)
{
    static const char *const points_only[] = {"fov", "z_min", "z_max"};
    for (int k = 0; k < 3; k++)
        if (cJSON_GetObjectItemCaseSensitive(obj, points_only[k]))
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, points_only[k],
                              "only for a points sensor");
    return 0;
}

/* One sensor of the robot description; path is "sensors[i]" under the robot's. */
static int sensor_from_json(const cJSON *obj, const char *path, lc_sensor_desc *s,
                            lc_wire_error *err)
{
    static const lc_wire_bounds b_fov = {0.0, TWO_PI, true, false};
    if (!cJSON_IsObject(obj))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "", "not an object");
    int kind = LC_FRAME_SCAN;
    if (lc_wire_check_duplicates(obj, path, sensor_keys, err) ||
        lc_jr_choice(obj, path, "kind", false, lc_wire_kind_names, 2, &kind, err) < 0)
        return -1;
    lc_sensor_desc_default(s, (lc_frame_kind)kind);
    if (lc_jr_sensor_name(obj, path, "name", true, s->name, err) < 0 ||
        lc_jr_pose_member(obj, path, "mount", false, &s->mount, err) < 0)
        return -1;
    if (kind == LC_FRAME_SCAN)
        return scan_sensor_extras(obj, path, err);
    if (lc_wire_number_field(obj, path, "fov", false, &b_fov, &s->fov, err) < 0 ||
        lc_wire_number_field(obj, path, "z_min", false, NULL, &s->z_min, err) < 0 ||
        lc_wire_number_field(obj, path, "z_max", false, NULL, &s->z_max, err) < 0)
        return -1;
    return band_ok(path, s->z_min, s->z_max, err);
}

/* Sensor i of the robot, named unlike the ones before it. */
static int sensor_item(const cJSON *it, const char *name, int i, void *ctx, lc_wire_error *err)
{
    lc_robot *out = ctx;
    if (sensor_from_json(it, name, &out->sensors[i], err) < 0)
        return -1;
    for (int k = 0; k < i; k++)
        if (strcmp(out->sensors[k].name, out->sensors[i].name) == 0)
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, name, "name",
                              "\"%s\" is the name of sensors[%d] already",
                              out->sensors[i].name, k);
    return 0;
}

/* "sensors": 1..LC_SENSORS_MAX sensors of unique names, or absent (none). */
static int sensors_field(const cJSON *obj, const char *path, lc_robot *out, lc_wire_error *err)
{
    int rc;
    if (!lc_jr_member(obj, path, "sensors", false, &rc, err))
        return rc;
    return lc_jr_each(obj, path, "sensors", 1, LC_SENSORS_MAX, "sensors", sensor_item, out,
                      &out->n_sensors, err);
}

static int vertex_item(const cJSON *it, const char *name, int i, void *ctx, lc_wire_error *err)
{
    lc_vec2 *v = ctx;
    return lc_wire_vec2_from_json(it, name, &v[i], err) != 0 ? -1 : 0;
}

/* What lc_footprint_check found, as an error naming the vertex at fault. */
static int footprint_fault(const char *path, lc_footprint_fault f, int at, lc_wire_error *err)
{
    char key[32];
    snprintf(key, sizeof key, "footprint[%d]", at);
    switch (f) {
    case LC_FOOTPRINT_FAR:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key,
                          "must lie within %g m of the rotation centre", LC_FOOTPRINT_REACH);
    case LC_FOOTPRINT_REPEATED:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key,
                          "repeats the vertex before it (edges of at least %g m)",
                          LC_FOOTPRINT_EDGE_MIN);
    case LC_FOOTPRINT_NOT_CONVEX:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key,
                          "the outline turns right or back here: the footprint must be convex");
    case LC_FOOTPRINT_COLLINEAR:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key,
                          "lies on the line through its neighbours: leave it out");
    case LC_FOOTPRINT_CLOCKWISE:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "footprint",
                          "runs clockwise: list the vertices counter-clockwise");
    case LC_FOOTPRINT_SELF_CROSSING:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "footprint",
                          "winds round more than once: the outline crosses itself");
    case LC_FOOTPRINT_CENTRE_OUTSIDE:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "footprint",
                          "must hold the rotation centre (0, 0) inside");
    default:
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "footprint",
                          "must hold %d to %d vertices", LC_FOOTPRINT_MIN, LC_FOOTPRINT_MAX);
    }
}

/*
 * "footprint": a valid polygon footprint (footprint.h), or absent (the
 * disc). With one, "radius" is left out or is its circumscribed radius
 * (within LC_WIRE_RADIUS_AGREE): it then always is.
 */
#define LC_WIRE_RADIUS_AGREE 1e-3 /* m */
static int footprint_field(const cJSON *obj, const char *path, bool has_radius, lc_robot *out,
                           lc_wire_error *err)
{
    int rc, n, at;
    if (!lc_jr_member(obj, path, "footprint", false, &rc, err))
        return rc;
    lc_vec2 v[LC_FOOTPRINT_MAX];
    if (lc_jr_each(obj, path, "footprint", LC_FOOTPRINT_MIN, LC_FOOTPRINT_MAX, "vertices",
                   vertex_item, v, &n, err) < 0)
        return -1;
    lc_footprint_fault f = lc_footprint_check(v, n, &at);
    if (f != LC_FOOTPRINT_OK)
        return footprint_fault(path, f, at, err);
    double r = lc_footprint_circumradius(v, n);
    if (has_radius && !(fabs(out->radius - r) <= LC_WIRE_RADIUS_AGREE))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "radius",
                          "with a footprint, leave it out or give its circumscribed radius "
                          "(%.4f m)", r);
    return lc_robot_set_footprint(out, v, n) == LC_OK ? 0 : -1;
}

/* The robot object at path; top: it is a robot message (see lc_jr_check_keys). */
static int robot_from_json(const cJSON *obj, const char *path, bool top, lc_robot *out,
                           lc_wire_error *err)
{
    lc_robot_default(out);
    if (lc_jr_check_keys(obj, path, robot_keys, top, err) ||
        lc_jr_check_type(obj, path, "robot", err))
        return -1;
    int model = out->model;
    if (lc_jr_choice(obj, path, "model", false, lc_wire_model_names, 2, &model, err) < 0)
        return -1;
    out->model = (lc_model)model;
    int has_radius = lc_wire_number_field(obj, path, "radius", false, &lc_jr_pos, &out->radius, err);
    if (has_radius < 0 || footprint_field(obj, path, has_radius == 1, out, err) < 0 ||
        lc_wire_number_field(obj, path, "margin", false, &lc_jr_nonneg, &out->margin, err) < 0 ||
        lc_wire_number_field(obj, path, "v_max", false, &lc_jr_pos, &out->v_max, err) < 0 ||
        lc_wire_number_field(obj, path, "a_max", false, &lc_jr_pos, &out->a_max, err) < 0 ||
        lc_wire_number_field(obj, path, "w_max", false, &lc_jr_pos, &out->w_max, err) < 0 ||
        lc_wire_number_field(obj, path, "dw_max", false, &lc_jr_pos, &out->dw_max, err) < 0 ||
        lc_wire_bool_field(obj, path, "reverse", false, &out->reverse, err) < 0 ||
        lc_wire_number_field(obj, path, "z_min", false, NULL, &out->z_min, err) < 0 ||
        lc_wire_number_field(obj, path, "z_max", false, NULL, &out->z_max, err) < 0 ||
        band_ok(path, out->z_min, out->z_max, err) < 0)
        return -1;
    return sensors_field(obj, path, out, err);
}

int lc_wire_robot_from_json(const cJSON *obj, const char *path, lc_robot *out,
                            lc_wire_error *err)
{
    return robot_from_json(obj, path, false, out, err);
}

static const char *const route_keys[] = {"type", "waypoints", "loop", "tolerance",
                                         "on_blocked", "blocked_time", "progress", NULL};

static int waypoint_item(const cJSON *it, const char *name, int i, void *ctx,
                         lc_wire_error *err)
{
    lc_route *out = ctx;
    return lc_wire_vec2_from_json(it, name, &out->waypoints[i], err) != 0 ? -1 : 0;
}

static int waypoints_field(const cJSON *obj, const char *path, lc_route *out,
                           lc_wire_error *err)
{
    return lc_jr_each(obj, path, "waypoints", 0, LC_ROUTE_MAX, "waypoints", waypoint_item, out,
                      &out->count, err);
}

/* The route object at path; top: it is a route message. */
static int route_from_json(const cJSON *obj, const char *path, bool top, lc_route *out,
                           lc_wire_error *err)
{
    lc_route_default(out);
    if (lc_jr_check_keys(obj, path, route_keys, top, err) ||
        lc_jr_check_type(obj, path, "route", err) || waypoints_field(obj, path, out, err))
        return -1;
    int policy = out->on_blocked;
    if (lc_wire_bool_field(obj, path, "loop", false, &out->loop, err) < 0 ||
        lc_wire_number_field(obj, path, "tolerance", false, &lc_jr_pos, &out->tolerance, err) < 0 ||
        lc_jr_choice(obj, path, "on_blocked", false, lc_wire_policy_names, 2, &policy, err) < 0 ||
        lc_wire_number_field(obj, path, "blocked_time", false, &lc_jr_pos, &out->blocked_time,
                             err) < 0 ||
        lc_wire_number_field(obj, path, "progress", false, &lc_jr_nonneg, &out->progress, err) < 0)
        return -1;
    out->on_blocked = (lc_blocked_policy)policy;
    return 0;
}

int lc_wire_route_from_json(const cJSON *obj, const char *path, lc_route *out,
                            lc_wire_error *err)
{
    return route_from_json(obj, path, false, out, err);
}

/* seq, stamp, pose, sensor, mount: what scans and points share. has_mount
 * says whether the frame carried its mount (else the sensor's is used). */
static int frame_header(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    f->mount = (lc_pose){0.0, 0.0, 0.0};
    int rc;
    if (lc_jr_seq(obj, path, true, &f->seq, err) < 0 ||
        lc_wire_number_field(obj, path, "stamp", true, &lc_jr_finite, &f->stamp, err) < 0 ||
        lc_jr_pose_member(obj, path, "pose", true, &f->pose, err) < 0 ||
        lc_jr_sensor_name(obj, path, "sensor", false, f->sensor, err) < 0 ||
        (rc = lc_jr_pose_member(obj, path, "mount", false, &f->mount, err)) < 0)
        return -1;
    f->has_mount = rc == 1;
    return 0;
}

static const char *const scan_keys[] = {"type", "seq", "stamp", "pose", "sensor", "mount",
                                        "bearing_first", "bearing_step", "near", "far", "dist",
                                        NULL};

static int scan_bearings(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    static const lc_wire_bounds b_step = {-TWO_PI, TWO_PI, false, false};
    if (lc_wire_number_field(obj, path, "bearing_first", true, &lc_jr_any, &f->angle_start,
                             err) < 0 ||
        lc_wire_number_field(obj, path, "bearing_step", true, &b_step, &f->angle_step, err) < 0)
        return -1;
    if (f->angle_step == 0.0)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "bearing_step", "must not be 0");
    return 0;
}

/* The band of distances that count as returns: 0 < near < far. */
static int scan_band(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    if (lc_wire_number_field(obj, path, "near", true, &lc_jr_pos, &f->range_min, err) < 0 ||
        lc_wire_number_field(obj, path, "far", true, &lc_jr_pos, &f->range_max, err) < 0)
        return -1;
    if (!(f->range_min < f->range_max))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "far", "must be > near");
    return 0;
}

/* Beam distances: null or a number outside [near, far] is "no return". */
static int scan_dist(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                     lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    int n;
    const cJSON *arr = lc_jr_array(obj, path, "dist", 1, lim->max_beams, "beams", &n, err);
    if (!arr)
        return -1;
    /* A scan wider than one turn would make the field of view meaningless. */
    if (fabs(f->angle_step) * (n - 1) > TWO_PI * (1.0 + 1e-9))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "bearing_step",
                          "%d beams span more than a full turn", n);
    if (grow_or_fail(buf->alloc, &buf->ranges, &buf->cap_ranges, n, path, "dist", err))
        return -1;
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        double r = NAN;
        if (cJSON_IsNumber(it)) {
            r = it->valuedouble;
            if (!isfinite(r)) {
                char k[64];
                snprintf(k, sizeof k, "dist[%d]", i);
                return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, k, "not finite");
            }
            if (!(r >= f->range_min && r <= f->range_max))
                r = NAN;
        } else if (!cJSON_IsNull(it)) {
            char k[64];
            snprintf(k, sizeof k, "dist[%d]", i);
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, k, "not a number or null");
        }
        buf->ranges[i++] = r;
    }
    f->ranges = buf->ranges;
    f->n_ranges = n;
    return 0;
}

static int scan_from_json(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                          lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    memset(f, 0, sizeof *f);
    f->kind = LC_FRAME_SCAN;
    if (lc_wire_check_duplicates(obj, path, scan_keys, err) || frame_header(obj, path, f, err) ||
        scan_bearings(obj, path, f, err) || scan_band(obj, path, f, err) ||
        scan_dist(obj, path, lim, buf, f, err))
        return -1;
    return 0;
}

static const char *const points_keys[] = {"type", "seq", "stamp", "pose", "sensor", "mount",
                                          "xy", "z", NULL};

static int points_z(const cJSON *obj, const char *path, lc_wire_buffers *buf, lc_frame *f,
                    lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, "z");
    f->z = NULL;
    if (!it || cJSON_IsNull(it))
        return 0;
    if (!cJSON_IsArray(it))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "z", "not an array");
    int n = cJSON_GetArraySize(it);
    if (n != f->n_points)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "z", "%d heights for %d points", n,
                          f->n_points);
    if (grow_or_fail(buf->alloc, &buf->z, &buf->cap_z, n, path, "z", err) ||
        lc_jr_numbers(it, path, "z", buf->z, err))
        return -1;
    f->z = buf->z;
    return 0;
}

static int points_from_json(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                            lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    memset(f, 0, sizeof *f);
    f->kind = LC_FRAME_POINTS;
    if (lc_wire_check_duplicates(obj, path, points_keys, err) || frame_header(obj, path, f, err))
        return -1;
    int n;
    long most = 2L * lim->max_points;
    const cJSON *arr = lc_jr_array(obj, path, "xy", 0, most > 2147483646L ? 2147483646 : (int)most,
                                   "numbers", &n, err);
    if (!arr)
        return -1;
    if (n % 2 != 0)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "xy", "odd length %d", n);
    if (grow_or_fail(buf->alloc, &buf->xy, &buf->cap_xy, n, path, "xy", err) ||
        lc_jr_numbers(arr, path, "xy", buf->xy, err))
        return -1;
    f->xy = buf->xy;
    f->n_points = n / 2;
    return points_z(obj, path, buf, f, err);
}

int lc_wire_frame_from_json(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                            lc_wire_buffers *buf, lc_frame *out, lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    if (!cJSON_IsObject(obj))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "", "not an object");
    const cJSON *type = cJSON_GetObjectItemCaseSensitive(obj, "type");
    bool scan;
    if (!type) {
        scan = cJSON_GetObjectItemCaseSensitive(obj, "dist") != NULL;
        if (!scan && !cJSON_GetObjectItemCaseSensitive(obj, "xy"))
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "type",
                              "missing (and no dist or xy)");
    } else if (cJSON_IsString(type) && type->valuestring &&
               (strcmp(type->valuestring, "scan") == 0 ||
                strcmp(type->valuestring, "points") == 0)) {
        scan = strcmp(type->valuestring, "scan") == 0;
    } else {
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "type", "must be \"scan\" or \"points\"");
    }
    return scan ? scan_from_json(obj, path, lim, buf, out, err)
                : points_from_json(obj, path, lim, buf, out, err);
}

static const char *const hello_keys[] = {"type", "role", "robot", "token", NULL};

static int token_field(const cJSON *obj, const char *path, lc_wire_hello *out,
                       lc_wire_error *err)
{
    const char *s = NULL;
    out->has_token = false;
    out->token[0] = '\0';
    if (lc_jr_string(obj, path, "token", false, true, &s, err) < 0)
        return -1;
    if (!s)
        return 0;
    size_t n = strlen(s);
    if (n > LC_WIRE_TOKEN_MAX)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "token", "longer than %d characters",
                          LC_WIRE_TOKEN_MAX);
    for (size_t i = 0; i < n; i++)
        if ((unsigned char)s[i] < 0x20 || (unsigned char)s[i] > 0x7e)
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "token", "not printable ASCII");
    memcpy(out->token, s, n + 1);
    out->has_token = true;
    return 0;
}

static int hello_from_json(const cJSON *obj, lc_wire_hello *out, lc_wire_error *err)
{
    static const char path[] = "hello";
    int role = 0;
    if (lc_jr_check_keys(obj, path, hello_keys, true, err) ||
        lc_jr_choice(obj, path, "role", true, lc_wire_role_names, 2, &role, err) < 0)
        return -1;
    out->role = (lc_wire_role)role;
    if (lc_jr_robot_name(obj, path, "robot", out->role == LC_ROLE_VIEWER, out->robot, err) ||
        token_field(obj, path, out, err))
        return -1;
    return 0;
}

/* --------------------------------------------------------- text parsing */

/*
 * One JSON value and nothing but white space around it. cJSON takes any
 * byte <= 0x20 for white space and raw control bytes inside strings; JSON
 * allows neither, so those are refused before parsing.
 */
static cJSON *parse_text(const char *text, size_t len, const lc_wire_limits *lim,
                         lc_wire_error *err)
{
    if (len > lim->max_message) {
        lc_wire_error_set(err, LC_WIRE_TOO_LARGE, "message: %zu bytes, more than %zu", len,
                          lim->max_message);
        return NULL;
    }
    if (!text || len == 0) {
        lc_wire_error_set(err, LC_WIRE_BAD_JSON, "message: empty");
        return NULL;
    }
    for (size_t i = 0; i < len; i++) {
        unsigned char c = (unsigned char)text[i];
        if (c < 0x20 && c != '\t' && c != '\n' && c != '\r') {
            lc_wire_error_set(err, LC_WIRE_BAD_JSON, "message: control byte at offset %zu", i);
            return NULL;
        }
    }
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root) {
        lc_jr_bad_json(err, "message", text, len, end);
        return NULL;
    }
    for (const char *p = end; p < text + len; p++) {
        if (*p != ' ' && *p != '\t' && *p != '\n' && *p != '\r') {
            lc_wire_error_set(err, LC_WIRE_BAD_JSON,
                              "message: bytes after the JSON value (offset %ld)", (long)(p - text));
            cJSON_Delete(root);
            return NULL;
        }
    }
    return root;
}

static bool seq_ok(const cJSON *it)
{
    if (!cJSON_IsNumber(it))
        return false;
    double x = it->valuedouble;
    return isfinite(x) && x == floor(x) && x >= 0.0 && x <= LC_WIRE_SEQ_MAX;
}

/* A readable seq goes into the error reply even when the message is refused. */
static void peek_seq(const cJSON *obj, lc_wire_error *err)
{
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(obj, "seq");
    if (it && seq_ok(it)) {
        err->has_seq = true;
        err->seq = (int64_t)it->valuedouble;
    }
}

static int message_type(const cJSON *root, lc_msg_type *type, lc_wire_error *err)
{
    if (!cJSON_IsObject(root)) {
        lc_wire_error_set(err, LC_WIRE_BAD_MESSAGE, "message: not a JSON object");
        return -1;
    }
    peek_seq(root, err);
    const cJSON *it = cJSON_GetObjectItemCaseSensitive(root, "type");
    if (!it)
        return lc_jr_fail(err, LC_WIRE_BAD_MESSAGE, NULL, "type", "missing");
    if (!cJSON_IsString(it) || !it->valuestring)
        return lc_jr_fail(err, LC_WIRE_BAD_MESSAGE, NULL, "type", "not a string");
    *type = lc_wire_msg_type_from_name(it->valuestring);
    if (*type == LC_MSG_NONE) {
        /* Echo at most a short, printable prefix of what was sent. */
        char shown[33];
        size_t k = 0;
        for (const char *s = it->valuestring; *s && k < sizeof shown - 1; s++)
            shown[k++] = lc_jr_shown_char(*s, '"');
        shown[k] = '\0';
        return lc_jr_fail(err, LC_WIRE_UNKNOWN_TYPE, NULL, "type", "unknown type \"%s\"", shown);
    }
    return 0;
}

/* A message's fields are named from its type: "robot.radius", "scan.dist[3]". */
static int decode_body(const cJSON *root, lc_msg_type type, const lc_wire_limits *lim,
                       lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    const char *path = lc_msg_type_name(type);
    switch (type) {
    case LC_MSG_HELLO:
        return hello_from_json(root, &out->u.hello, err);
    case LC_MSG_ROBOT:
        return robot_from_json(root, path, true, &out->u.robot, err);
    case LC_MSG_ROUTE:
        return route_from_json(root, path, true, &out->u.route, err);
    case LC_MSG_SCAN:
        return scan_from_json(root, path, lim, buf, &out->u.frame, err);
    case LC_MSG_POINTS:
        return points_from_json(root, path, lim, buf, &out->u.frame, err);
    case LC_MSG_WELCOME:
        return lc_wire_welcome_from_json(root, &out->u.welcome, err);
    case LC_MSG_SETPOINT:
        return lc_wire_setpoint_from_json(root, &out->u.setpoint, err);
    case LC_MSG_EVENT:
        return lc_wire_event_from_json(root, &out->u.event, err);
    case LC_MSG_ERROR:
        return lc_wire_error_from_json(root, &out->u.error, err);
    case LC_MSG_WARNING:
        return lc_wire_warning_from_json(root, &out->u.warning, err);
    case LC_MSG_VIEW:
    case LC_MSG_SCENARIO:
        return 0;
    default:
        lc_wire_error_set(err, LC_WIRE_INTERNAL, "type: not handled");
        return -1;
    }
}

int lc_wire_decode(const char *text, size_t len, const lc_wire_limits *lim,
                   lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    if (len <= lim->max_message && lc_wire_decode_frame_fast(text, len, lim, buf, out)) {
        lc_jr_error_clear(err);
        err->has_seq = true; /* as peek_seq leaves it on the cJSON path */
        err->seq = out->u.frame.seq;
        return 0;
    }
    return lc_wire_decode_slow(text, len, lim, buf, out, err);
}

int lc_wire_decode_slow(const char *text, size_t len, const lc_wire_limits *lim,
                        lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    lc_jr_error_clear(err);
    out->type = LC_MSG_NONE;
    cJSON *root = parse_text(text, len, lim, err);
    if (!root)
        return -1;
    lc_msg_type type = LC_MSG_NONE;
    int rc = message_type(root, &type, err);
    if (rc == 0)
        rc = decode_body(root, type, lim, buf, out, err);
    cJSON_Delete(root);
    out->type = rc == 0 ? type : LC_MSG_NONE;
    return rc;
}

static const char *const plan_keys[] = {"type", "robot", "goal", "velocity", "dt", "frame",
                                        "frames", NULL};

/* Room a frame object may take in each buffer: its array's length, plus one
 * (a decoder always grows a buffer to at least one element). */
static int frame_room(const cJSON *frame, const char *key)
{
    const cJSON *it = cJSON_IsObject(frame) ? cJSON_GetObjectItemCaseSensitive(frame, key) : NULL;
    return (cJSON_IsArray(it) ? cJSON_GetArraySize(it) : 0) + 1;
}

/* A realloc that never gives memory: a frame's window of the buffers must
 * not move (frames_from_json makes every window large enough). */
static void *no_growth(void *data, void *p, size_t n)
{
    (void)data, (void)p, (void)n;
    return NULL;
}

/*
 * "frames": 1..LC_WIRE_PLAN_FRAMES_MAX frames, decoded one after another
 * into one set of buffers, each frame's arrays in a window of its own: the
 * buffers are first grown to the sum of all windows, so no frame's arrays
 * move when the next is decoded.
 */
static int frames_from_json(const cJSON *arr, const lc_wire_limits *lim, lc_wire_buffers *buf,
                            lc_wire_plan_request *out, lc_wire_error *err)
{
    long r = 0, xy = 0, z = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        r += frame_room(it, "dist");
        xy += frame_room(it, "xy");
        z += frame_room(it, "z");
    }
    if (r > INT_MAX || xy > INT_MAX || z > INT_MAX)
        return lc_jr_fail(err, LC_WIRE_TOO_LARGE, NULL, "frames", "too many numbers");
    if (grow_or_fail(buf->alloc, &buf->ranges, &buf->cap_ranges, (int)r, NULL, "frames", err) ||
        grow_or_fail(buf->alloc, &buf->xy, &buf->cap_xy, (int)xy, NULL, "frames", err) ||
        grow_or_fail(buf->alloc, &buf->z, &buf->cap_z, (int)z, NULL, "frames", err))
        return -1;
    static const lc_alloc fixed = {no_growth, NULL};
    int i = 0, at_r = 0, at_xy = 0, at_z = 0;
    cJSON_ArrayForEach(it, arr) {
        lc_wire_buffers win = {.alloc = &fixed,
                               .ranges = buf->ranges + at_r, .cap_ranges = buf->cap_ranges - at_r,
                               .xy = buf->xy + at_xy, .cap_xy = buf->cap_xy - at_xy,
                               .z = buf->z + at_z, .cap_z = buf->cap_z - at_z};
        char name[32];
        snprintf(name, sizeof name, "frames[%d]", i);
        if (lc_jr_need_object(it, NULL, name, err))
            return -1;
        err->has_seq = false;
        peek_seq(it, err);
        if (lc_wire_frame_from_json(it, name, lim, &win, &out->frames[i], err) < 0)
            return -1;
        at_r += frame_room(it, "dist");
        at_xy += frame_room(it, "xy");
        at_z += frame_room(it, "z");
        i++;
    }
    out->n_frames = i;
    return 0;
}

/* "frame", or "frames" (one of them); out->frame is the last. */
static int plan_frames(const cJSON *root, const lc_wire_limits *lim, lc_wire_buffers *buf,
                       lc_wire_plan_request *out, lc_wire_error *err)
{
    int rc, n;
    const cJSON *one = cJSON_GetObjectItemCaseSensitive(root, "frame");
    const cJSON *many = cJSON_GetObjectItemCaseSensitive(root, "frames");
    if (one && many)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, NULL, "frames", "give frame or frames, not both");
    if (many) {
        const cJSON *arr = lc_jr_array(root, NULL, "frames", 1, LC_WIRE_PLAN_FRAMES_MAX, "frames",
                                       &n, err);
        if (!arr || frames_from_json(arr, lim, buf, out, err) < 0)
            return -1;
    } else {
        const cJSON *frame = lc_jr_member(root, NULL, "frame", true, &rc, err);
        if (!frame || lc_jr_need_object(frame, NULL, "frame", err))
            return -1;
        peek_seq(frame, err);
        if (lc_wire_frame_from_json(frame, "frame", lim, buf, &out->frames[0], err) < 0)
            return -1;
        out->n_frames = 1;
    }
    out->frame = out->frames[out->n_frames - 1];
    return 0;
}

static int plan_fields(const cJSON *root, const lc_wire_limits *lim, lc_wire_buffers *buf,
                       lc_wire_plan_request *out, lc_wire_error *err)
{
    const lc_wire_bounds b_dt = {0.0, lim->dt_max, true, false};
    int rc;
    const cJSON *robot = lc_jr_member(root, NULL, "robot", false, &rc, err);
    if (robot) {
        if (lc_jr_need_object(robot, NULL, "robot", err) ||
            lc_wire_robot_from_json(robot, "robot", &out->robot, err))
            return -1;
    } else {
        lc_robot_default(&out->robot);
    }
    lc_vec2 vel = {0.0, 0.0};
    out->dt = 0.05;
    if (lc_jr_vec2_member(root, NULL, "goal", true, &out->goal, err) < 0 ||
        (rc = lc_jr_vec2_member(root, NULL, "velocity", false, &vel, err)) < 0 ||
        lc_wire_number_field(root, NULL, "dt", false, &b_dt, &out->dt, err) < 0)
        return -1;
    out->has_velocity = rc == 1;
    memset(&out->velocity, 0, sizeof out->velocity);
    if (out->robot.model == LC_MODEL_UNICYCLE) {
        out->velocity.v = vel.x;
        out->velocity.w = vel.y;
    } else {
        out->velocity.vx = vel.x;
        out->velocity.vy = vel.y;
    }
    return plan_frames(root, lim, buf, out, err);
}

int lc_wire_decode_plan_request(const char *text, size_t len, const lc_wire_limits *lim,
                                lc_wire_buffers *buf, lc_wire_plan_request *out,
                                lc_wire_error *err)
{
    lc_wire_limits storage;
    lim = limits_or_default(lim, &storage);
    lc_jr_error_clear(err);
    cJSON *root = parse_text(text, len, lim, err);
    if (!root)
        return -1;
    int rc = -1;
    if (!cJSON_IsObject(root))
        lc_wire_error_set(err, LC_WIRE_BAD_MESSAGE, "request: not a JSON object");
    else if (lc_wire_check_duplicates(root, NULL, plan_keys, err) == 0 &&
             lc_jr_check_type(root, NULL, "plan_request", err) == 0)
        rc = plan_fields(root, lim, buf, out, err);
    cJSON_Delete(root);
    return rc;
}

