/*
 * codec_names.c - the wire names of error and warning codes, message types, roles,
 * motion models, blocked policies and sensor kinds, the characters names
 * may use, and the lookups from a name back to its code (see codec.h and
 * codec_names.h). The strings are the protocol's
 * (proto/PROTOCOL.md): changing one changes the wire.
 */
#include "codec_names.h"

#include <string.h>

static const char *const code_names[LC_WIRE_CODE_COUNT] = {
    [LC_WIRE_OK] = "ok",
    [LC_WIRE_BAD_JSON] = "bad_json",
    [LC_WIRE_BAD_MESSAGE] = "bad_message",
    [LC_WIRE_BAD_FIELD] = "bad_field",
    [LC_WIRE_UNKNOWN_TYPE] = "unknown_type",
    [LC_WIRE_UNAUTHORIZED] = "unauthorized",
    [LC_WIRE_FORBIDDEN] = "forbidden",
    [LC_WIRE_NAME_TAKEN] = "name_taken",
    [LC_WIRE_TOO_LARGE] = "too_large",
    [LC_WIRE_BINARY] = "binary",
    [LC_WIRE_RATE_LIMITED] = "rate_limited",
    [LC_WIRE_INTERNAL] = "internal",
    [LC_WIRE_TOO_MANY_CONNECTIONS] = "too_many_connections",
    [LC_WIRE_RECORDING_FAILED] = "recording_failed",
};

static const char *const warn_names[LC_WARN_COUNT] = {
    [LC_WARN_UNKNOWN_KEY] = "unknown_key",
    [LC_WARN_NO_ROUTE] = "no_route",
    [LC_WARN_STAMP_BACKWARDS] = "stamp_backwards",
    [LC_WARN_SEQ_BACKWARDS] = "seq_backwards",
    [LC_WARN_UNLISTED_SENSOR] = "unlisted_sensor",
};

static const char *const msg_names[LC_MSG_COUNT] = {
    [LC_MSG_NONE] = NULL,
    [LC_MSG_HELLO] = "hello",
    [LC_MSG_ROBOT] = "robot",
    [LC_MSG_ROUTE] = "route",
    [LC_MSG_SCAN] = "scan",
    [LC_MSG_POINTS] = "points",
    [LC_MSG_WELCOME] = "welcome",
    [LC_MSG_SETPOINT] = "setpoint",
    [LC_MSG_EVENT] = "event",
    [LC_MSG_ERROR] = "error",
    [LC_MSG_VIEW] = "view",
    [LC_MSG_SCENARIO] = "scenario",
    [LC_MSG_WARNING] = "warning",
};

const char *const lc_wire_role_names[2] = {"robot", "viewer"};
const char *const lc_wire_model_names[2] = {"point", "unicycle"};
const char *const lc_wire_policy_names[2] = {"wait", "skip"};
const char *const lc_wire_kind_names[2] = {[LC_FRAME_SCAN] = "scan", [LC_FRAME_POINTS] = "points"};

bool lc_wire_name_chars_ok(const char *s, size_t n, size_t max)
{
    if (n == 0 || n > max)
        return false;
    for (size_t i = 0; i < n; i++) {
        char c = s[i];
        if (!((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
              c == '_' || c == '-' || c == '.'))
            return false;
    }
    return true;
}

/* A frame's sensor field holds any name the robot description may give. */
_Static_assert(LC_FRAME_SENSOR_MAX == LC_SENSOR_NAME_MAX, "frame.h and robot.h name lengths");

bool lc_wire_sensor_name_ok(const char *s, size_t n)
{
    return lc_wire_name_chars_ok(s, n, LC_SENSOR_NAME_MAX);
}

const char *lc_wire_code_name(lc_wire_code code)
{
    if ((int)code < 0 || code >= LC_WIRE_CODE_COUNT)
        return "internal";
    return code_names[code];
}

bool lc_wire_code_from_name(const char *name, lc_wire_code *out)
{
    int i = lc_wire_name_index(name, code_names, LC_WIRE_CODE_COUNT);
    if (i >= 0)
        *out = (lc_wire_code)i;
    return i >= 0;
}

const char *lc_wire_warn_name(lc_wire_warn code)
{
    if ((int)code < 0 || code >= LC_WARN_COUNT)
        return "unknown";
    return warn_names[code];
}

bool lc_wire_warn_from_name(const char *name, lc_wire_warn *out)
{
    int i = lc_wire_name_index(name, warn_names, LC_WARN_COUNT);
    if (i >= 0)
        *out = (lc_wire_warn)i;
    return i >= 0;
}

const char *lc_wire_role_name(lc_wire_role role)
{
    return role == LC_ROLE_VIEWER ? lc_wire_role_names[1] : lc_wire_role_names[0];
}

const char *lc_msg_type_name(lc_msg_type type)
{
    if ((int)type < 0 || type >= LC_MSG_COUNT)
        return NULL;
    return msg_names[type];
}

int lc_wire_name_index(const char *s, const char *const *names, int n)
{
    for (int i = 0; i < n; i++)
        if (names[i] && strcmp(s, names[i]) == 0)
            return i;
    return -1;
}

lc_msg_type lc_wire_msg_type_from_name(const char *s)
{
    int i = lc_wire_name_index(s, msg_names, LC_MSG_COUNT);
    return i < 0 ? LC_MSG_NONE : (lc_msg_type)i;
}

/* The core's name functions, each seen as a function of an int. */
static const char *state_at(int i) { return lc_state_name((lc_state)i); }
static const char *limit_at(int i) { return lc_limit_name((lc_limit)i); }
static const char *event_at(int i) { return lc_event_name((lc_event_kind)i); }

/* The i in [0, n) whose name(i) is s, or -1. */
static int core_index(const char *s, const char *(*name)(int), int n)
{
    for (int i = 0; i < n; i++) {
        const char *m = name(i);
        if (m && strcmp(s, m) == 0)
            return i;
    }
    return -1;
}

int lc_wire_state_index(const char *s) { return core_index(s, state_at, LC_STATE_COUNT); }
int lc_wire_limit_index(const char *s) { return core_index(s, limit_at, LC_LIMIT_COUNT); }
int lc_wire_event_index(const char *s) { return core_index(s, event_at, LC_EVENT_COUNT); }

static const char *reason_at(int i) { return lc_block_reason_name((lc_block_reason)i); }

/* "no_progress" or "no_path" (never the empty name of LC_BLOCK_NONE). */
int lc_wire_reason_index(const char *s)
{
    int i = core_index(s, reason_at, LC_BLOCK_REASON_COUNT);
    return i > 0 ? i : -1;
}
