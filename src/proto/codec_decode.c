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

static const char *const robot_keys[] = {"type", "model", "radius", "margin", "v_max",
                                         "a_max", "w_max", "dw_max", "reverse", "z_min", "z_max",
                                         NULL};

int lc_wire_robot_from_json(const cJSON *obj, const char *path, lc_robot *out,
                            lc_wire_error *err)
{
    lc_robot_default(out);
    if (lc_wire_check_duplicates(obj, path, robot_keys, err) ||
        lc_jr_check_type(obj, path, "robot", err))
        return -1;
    int model = out->model;
    if (lc_jr_choice(obj, path, "model", false, lc_wire_model_names, 2, &model, err) < 0)
        return -1;
    out->model = (lc_model)model;
    if (lc_wire_number_field(obj, path, "radius", false, &lc_jr_pos, &out->radius, err) < 0 ||
        lc_wire_number_field(obj, path, "margin", false, &lc_jr_nonneg, &out->margin, err) < 0 ||
        lc_wire_number_field(obj, path, "v_max", false, &lc_jr_pos, &out->v_max, err) < 0 ||
        lc_wire_number_field(obj, path, "a_max", false, &lc_jr_pos, &out->a_max, err) < 0 ||
        lc_wire_number_field(obj, path, "w_max", false, &lc_jr_pos, &out->w_max, err) < 0 ||
        lc_wire_number_field(obj, path, "dw_max", false, &lc_jr_pos, &out->dw_max, err) < 0 ||
        lc_wire_bool_field(obj, path, "reverse", false, &out->reverse, err) < 0 ||
        lc_wire_number_field(obj, path, "z_min", false, NULL, &out->z_min, err) < 0 ||
        lc_wire_number_field(obj, path, "z_max", false, NULL, &out->z_max, err) < 0)
        return -1;
    if (!(out->z_min < out->z_max)) {
        char name[96];
        lc_jr_join_name(name, sizeof name, path, "z_max");
        lc_wire_error_set(err, LC_WIRE_BAD_FIELD, "%s: must be greater than z_min", name);
        return -1;
    }
    return 0;
}

static const char *const route_keys[] = {"type", "waypoints", "loop", "tolerance",
                                         "on_blocked", "blocked_time", "progress", NULL};

static int waypoints_field(const cJSON *obj, const char *path, lc_route *out,
                           lc_wire_error *err)
{
    int n;
    const cJSON *arr = lc_jr_array(obj, path, "waypoints", 0, LC_ROUTE_MAX, "waypoints", &n, err);
    if (!arr)
        return -1;
    char base[96];
    lc_jr_join_name(base, sizeof base, path, "waypoints");
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        char name[112];
        snprintf(name, sizeof name, "%s[%d]", base, i);
        if (lc_wire_vec2_from_json(it, name, &out->waypoints[i], err) != 0)
            return -1;
        i++;
    }
    out->count = n;
    return 0;
}

int lc_wire_route_from_json(const cJSON *obj, const char *path, lc_route *out,
                            lc_wire_error *err)
{
    lc_route_default(out);
    if (lc_wire_check_duplicates(obj, path, route_keys, err) ||
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

/* seq, stamp, pose, mount: what scans and points share. */
static int frame_header(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    f->mount = (lc_pose){0.0, 0.0, 0.0};
    if (lc_jr_seq(obj, path, true, &f->seq, err) < 0 ||
        lc_wire_number_field(obj, path, "stamp", true, &lc_jr_finite, &f->stamp, err) < 0 ||
        lc_jr_pose_member(obj, path, "pose", true, &f->pose, err) < 0 ||
        lc_jr_pose_member(obj, path, "mount", false, &f->mount, err) < 0)
        return -1;
    return 0;
}

static const char *const scan_keys[] = {"type", "seq", "stamp", "pose", "mount",
                                        "angle_start", "angle_step", "range_min",
                                        "range_max", "ranges", NULL};

static int scan_angles(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    static const lc_wire_bounds b_step = {-TWO_PI, TWO_PI, false, false};
    if (lc_wire_number_field(obj, path, "angle_start", true, &lc_jr_any, &f->angle_start,
                             err) < 0 ||
        lc_wire_number_field(obj, path, "angle_step", true, &b_step, &f->angle_step, err) < 0)
        return -1;
    if (f->angle_step == 0.0)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "angle_step", "must not be 0");
    return 0;
}

static int scan_limits(const cJSON *obj, const char *path, lc_frame *f, lc_wire_error *err)
{
    if (lc_wire_number_field(obj, path, "range_min", true, &lc_jr_pos, &f->range_min, err) < 0 ||
        lc_wire_number_field(obj, path, "range_max", true, &lc_jr_pos, &f->range_max, err) < 0)
        return -1;
    if (!(f->range_min < f->range_max))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "range_max", "must be > range_min");
    return 0;
}

/* Beams: null or a number outside [range_min, range_max] is "no return". */
static int scan_ranges(const cJSON *obj, const char *path, const lc_wire_limits *lim,
                       lc_wire_buffers *buf, lc_frame *f, lc_wire_error *err)
{
    int n;
    const cJSON *arr = lc_jr_array(obj, path, "ranges", 1, lim->max_beams, "beams", &n, err);
    if (!arr)
        return -1;
    /* A scan wider than one turn would make the field of view meaningless. */
    if (fabs(f->angle_step) * (n - 1) > TWO_PI * (1.0 + 1e-9))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "angle_step",
                          "%d beams span more than a full turn", n);
    if (grow_or_fail(buf->alloc, &buf->ranges, &buf->cap_ranges, n, path, "ranges", err))
        return -1;
    int i = 0;
    const cJSON *it;
    cJSON_ArrayForEach(it, arr) {
        double r = NAN;
        if (cJSON_IsNumber(it)) {
            r = it->valuedouble;
            if (!isfinite(r)) {
                char k[64];
                snprintf(k, sizeof k, "ranges[%d]", i);
                return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, k, "not finite");
            }
            if (!(r >= f->range_min && r <= f->range_max))
                r = NAN;
        } else if (!cJSON_IsNull(it)) {
            char k[64];
            snprintf(k, sizeof k, "ranges[%d]", i);
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
        scan_angles(obj, path, f, err) || scan_limits(obj, path, f, err) ||
        scan_ranges(obj, path, lim, buf, f, err))
        return -1;
    return 0;
}

static const char *const points_keys[] = {"type", "seq", "stamp", "pose", "mount",
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
        scan = cJSON_GetObjectItemCaseSensitive(obj, "ranges") != NULL;
        if (!scan && !cJSON_GetObjectItemCaseSensitive(obj, "xy"))
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "type",
                              "missing (and no ranges or xy)");
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

static int token_field(const cJSON *obj, lc_wire_hello *out, lc_wire_error *err)
{
    const char *s = NULL;
    out->has_token = false;
    out->token[0] = '\0';
    if (lc_jr_string(obj, NULL, "token", false, true, &s, err) < 0)
        return -1;
    if (!s)
        return 0;
    size_t n = strlen(s);
    if (n > LC_WIRE_TOKEN_MAX)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, NULL, "token", "longer than %d characters",
                          LC_WIRE_TOKEN_MAX);
    for (size_t i = 0; i < n; i++)
        if ((unsigned char)s[i] < 0x20 || (unsigned char)s[i] > 0x7e)
            return lc_jr_fail(err, LC_WIRE_BAD_FIELD, NULL, "token", "not printable ASCII");
    memcpy(out->token, s, n + 1);
    out->has_token = true;
    return 0;
}

static int hello_from_json(const cJSON *obj, lc_wire_hello *out, lc_wire_error *err)
{
    int role = 0;
    if (lc_wire_check_duplicates(obj, NULL, hello_keys, err) ||
        lc_jr_choice(obj, NULL, "role", true, lc_wire_role_names, 2, &role, err) < 0)
        return -1;
    out->role = (lc_wire_role)role;
    if (lc_jr_robot_name(obj, "robot", out->role == LC_ROLE_VIEWER, out->robot, err) ||
        token_field(obj, out, err))
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
        long at = end ? (long)(end - text) : 0;
        lc_wire_error_set(err, LC_WIRE_BAD_JSON, "message: not valid JSON (near offset %ld)", at);
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

static int decode_body(const cJSON *root, lc_msg_type type, const lc_wire_limits *lim,
                       lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err)
{
    switch (type) {
    case LC_MSG_HELLO:
        return hello_from_json(root, &out->u.hello, err);
    case LC_MSG_ROBOT:
        return lc_wire_robot_from_json(root, NULL, &out->u.robot, err);
    case LC_MSG_ROUTE:
        return lc_wire_route_from_json(root, NULL, &out->u.route, err);
    case LC_MSG_SCAN:
        return scan_from_json(root, NULL, lim, buf, &out->u.frame, err);
    case LC_MSG_POINTS:
        return points_from_json(root, NULL, lim, buf, &out->u.frame, err);
    case LC_MSG_WELCOME:
        return lc_wire_welcome_from_json(root, &out->u.welcome, err);
    case LC_MSG_SETPOINT:
        return lc_wire_setpoint_from_json(root, &out->u.setpoint, err);
    case LC_MSG_EVENT:
        return lc_wire_event_from_json(root, &out->u.event, err);
    case LC_MSG_ERROR:
        return lc_wire_error_from_json(root, &out->u.error, err);
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
                                        NULL};

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
    const cJSON *frame = lc_jr_member(root, NULL, "frame", true, &rc, err);
    if (!frame)
        return -1;
    if (lc_jr_need_object(frame, NULL, "frame", err))
        return -1;
    peek_seq(frame, err);
    return lc_wire_frame_from_json(frame, "frame", lim, buf, &out->frame, err);
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

