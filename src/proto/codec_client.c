/*
 * codec_client.c - decoders of the server -> client messages (see
 * codec_client.h): welcome, setpoint, event, error and warning, with the field
 * readers of json_read.c.
 *
 * The names of states, limits and events are the core's (lc_state_name and
 * friends); a name the core does not know is a bad field, not a default.
 */
#include "codec_client.h"
#include "codec_names.h"
#include "json_read.h"

#include <stdio.h>
#include <string.h>

/* A string member copied into out[n]; too long is an error. */
static int copy_string_field(const cJSON *obj, const char *path, const char *key,
                             bool required, char *out, size_t n, lc_wire_error *err)
{
    const char *s = NULL;
    out[0] = '\0';
    int rc = lc_jr_string(obj, path, key, required, false, &s, err);
    if (rc <= 0)
        return rc;
    size_t len = strlen(s);
    if (len >= n)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "longer than %zu characters", n - 1);
    memcpy(out, s, len + 1);
    return 1;
}

static const char *const welcome_keys[] = {"type", "role", "robot", "server", "protocol",
                                           "watchdog_ms", "max_message", "max_beams",
                                           "max_points", "view_hz", "max_waypoints", "resumed",
                                           "grace_ms", "link_timeout_ms", NULL};

int lc_wire_welcome_from_json(const cJSON *obj, lc_wire_welcome *out, lc_wire_error *err)
{
    static const char path[] = "welcome";
    const lc_wire_bounds *count = &lc_jr_count;
    memset(out, 0, sizeof *out);
    int role = 0, max_message = 0;
    if (lc_jr_check_keys(obj, path, welcome_keys, true, err) ||
        lc_jr_choice(obj, path, "role", true, lc_wire_role_names, 2, &role, err) < 0 ||
        lc_jr_robot_name(obj, path, "robot", true, out->robot, err) ||
        copy_string_field(obj, path, "server", false, out->server, sizeof out->server, err) < 0 ||
        copy_string_field(obj, path, "protocol", true, out->protocol, sizeof out->protocol, err) < 0 ||
        lc_wire_int_field(obj, path, "watchdog_ms", false, count, &out->watchdog_ms, err) < 0 ||
        lc_wire_int_field(obj, path, "max_message", false, count, &max_message, err) < 0 ||
        lc_wire_int_field(obj, path, "max_beams", false, count, &out->max_beams, err) < 0 ||
        lc_wire_int_field(obj, path, "max_points", false, count, &out->max_points, err) < 0 ||
        lc_wire_number_field(obj, path, "view_hz", false, &lc_jr_nonneg, &out->view_hz, err) < 0 ||
        lc_wire_int_field(obj, path, "max_waypoints", false, count, &out->max_waypoints, err) < 0 ||
        lc_wire_bool_field(obj, path, "resumed", false, &out->resumed, err) < 0 ||
        lc_wire_int_field(obj, path, "grace_ms", false, count, &out->grace_ms, err) < 0 ||
        lc_wire_int_field(obj, path, "link_timeout_ms", false, count, &out->link_timeout_ms,
                          err) < 0)
        return -1;
    out->role = (lc_wire_role)role;
    out->max_message = max_message;
    return 0;
}

/* A name member looked up with find(); the index in *out. */
static int core_name_field(const cJSON *obj, const char *path, const char *key,
                           int (*find)(const char *), int *out, lc_wire_error *err)
{
    const char *s;
    if (lc_jr_string(obj, path, key, true, false, &s, err) < 0)
        return -1;
    int i = find(s);
    if (i < 0)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, key, "unknown name");
    *out = i;
    return 0;
}

static const char *const setpoint_keys[] = {"type", "seq", "stamp", "vx", "vy", "v", "w",
                                            "state", "limit", "waypoint", "valid_ms", NULL};

/* vx, vy (point) or v, w (unicycle), never both pairs. */
static int velocity_pair(const cJSON *obj, const char *path, lc_wire_setpoint *out,
                         lc_wire_error *err)
{
    bool point = cJSON_GetObjectItemCaseSensitive(obj, "vx") ||
                 cJSON_GetObjectItemCaseSensitive(obj, "vy");
    bool uni = cJSON_GetObjectItemCaseSensitive(obj, "v") ||
               cJSON_GetObjectItemCaseSensitive(obj, "w");
    if (point && uni)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "v", "not allowed together with vx, vy");
    out->model = uni ? LC_MODEL_UNICYCLE : LC_MODEL_POINT;
    double *a = uni ? &out->sp.v : &out->sp.vx, *b = uni ? &out->sp.w : &out->sp.vy;
    if (lc_wire_number_field(obj, path, uni ? "v" : "vx", true, &lc_jr_any, a, err) < 0 ||
        lc_wire_number_field(obj, path, uni ? "w" : "vy", true, &lc_jr_any, b, err) < 0)
        return -1;
    return 0;
}

int lc_wire_setpoint_from_json(const cJSON *obj, lc_wire_setpoint *out, lc_wire_error *err)
{
    static const char path[] = "setpoint";
    static const lc_wire_bounds b_valid = {1, LC_VALID_MS_MAX, false, false};
    memset(out, 0, sizeof *out);
    int state = 0, limit = 0;
    if (lc_jr_check_keys(obj, path, setpoint_keys, true, err) ||
        lc_jr_seq(obj, path, true, &out->seq, err) < 0 ||
        lc_wire_number_field(obj, path, "stamp", true, &lc_jr_finite, &out->stamp, err) < 0 ||
        velocity_pair(obj, path, out, err) ||
        core_name_field(obj, path, "state", lc_wire_state_index, &state, err) ||
        core_name_field(obj, path, "limit", lc_wire_limit_index, &limit, err) ||
        lc_jr_index(obj, path, "waypoint", &out->waypoint, err) ||
        lc_wire_int_field(obj, path, "valid_ms", true, &b_valid, &out->valid_ms, err) < 0)
        return -1;
    out->state = (lc_state)state;
    out->sp.limit = (lc_limit)limit;
    return 0;
}

static const char *const event_keys[] = {"type", "event", "waypoint", "stamp", "seq",
                                         "reason", NULL};

int lc_wire_event_from_json(const cJSON *obj, lc_wire_event *out, lc_wire_error *err)
{
    static const char path[] = "event";
    memset(out, 0, sizeof *out);
    out->seq = -1;
    int kind = 0;
    if (lc_jr_check_keys(obj, path, event_keys, true, err) ||
        core_name_field(obj, path, "event", lc_wire_event_index, &kind, err) ||
        lc_jr_index(obj, path, "waypoint", &out->ev.waypoint, err) ||
        lc_wire_number_field(obj, path, "stamp", true, &lc_jr_finite, &out->ev.stamp, err) < 0 ||
        lc_jr_seq(obj, path, false, &out->seq, err) < 0)
        return -1;
    out->ev.kind = (lc_event_kind)kind;
    if (cJSON_GetObjectItemCaseSensitive(obj, "reason")) {
        int why = 0;
        if (core_name_field(obj, path, "reason", lc_wire_reason_index, &why, err))
            return -1;
        out->ev.reason = (lc_block_reason)why;
    }
    return 0;
}

static const char *const error_keys[] = {"type", "code", "message", "seq", NULL};

int lc_wire_error_from_json(const cJSON *obj, lc_wire_error *out, lc_wire_error *err)
{
    static const char path[] = "error";
    const char *code;
    lc_jr_error_clear(out);
    if (lc_jr_check_keys(obj, path, error_keys, true, err) ||
        lc_jr_string(obj, path, "code", true, false, &code, err) < 0)
        return -1;
    if (!lc_wire_code_from_name(code, &out->code) || out->code == LC_WIRE_OK)
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "code", "unknown code");
    const char *msg;
    if (lc_jr_string(obj, path, "message", true, false, &msg, err) < 0)
        return -1;
    snprintf(out->message, sizeof out->message, "%s", msg);
    int rc = lc_jr_seq(obj, path, false, &out->seq, err);
    if (rc < 0)
        return -1;
    out->has_seq = rc == 1;
    return 0;
}

static const char *const warning_keys[] = {"type", "code", "message", "seq", NULL};

int lc_wire_warning_from_json(const cJSON *obj, lc_wire_warning *out, lc_wire_error *err)
{
    static const char path[] = "warning";
    memset(out, 0, sizeof *out);
    const char *code;
    if (lc_jr_check_keys(obj, path, warning_keys, true, err) ||
        lc_jr_string(obj, path, "code", true, false, &code, err) < 0)
        return -1;
    if (!lc_wire_warn_from_name(code, &out->code))
        return lc_jr_fail(err, LC_WIRE_BAD_FIELD, path, "code", "unknown code");
    if (copy_string_field(obj, path, "message", true, out->message, sizeof out->message, err) < 0)
        return -1;
    int rc = lc_jr_seq(obj, path, false, &out->seq, err);
    if (rc < 0)
        return -1;
    out->has_seq = rc == 1;
    return 0;
}
