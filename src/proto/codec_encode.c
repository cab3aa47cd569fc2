/*
 * codec_encode.c - the message encoders of codec.h (hello, welcome, robot,
 * route, scan and points, setpoint, event, error, warning) and the pieces of them in
 * codec_encode.h. Every encoder clears its lc_wire_text, writes one object
 * with its "type" through json_write.c and returns 0, or -1 out of memory.
 *
 * Numbers here are all exact (they parse back to the same double): frames,
 * robot, route and setpoints are what replay reproduces bit for bit.
 */
#include "codec_encode.h"
#include "codec_names.h"
#include "json_write.h"

#include <math.h>

#include "lc_config.h"

/* ---------------------------------------------------------------- pieces */

static void kv_velocity(lc_wire_text *t, const lc_setpoint *sp, lc_model model)
{
    if (model == LC_MODEL_UNICYCLE) {
        lc_jw_kv_num(t, "v", sp->v, -1);
        lc_jw_kv_num(t, "w", sp->w, -1);
    } else {
        lc_jw_kv_num(t, "vx", sp->vx, -1);
        lc_jw_kv_num(t, "vy", sp->vy, -1);
    }
}

void lc_wire_put_setpoint(lc_wire_text *t, const lc_setpoint *sp, lc_model model)
{
    lc_jw_open(t, '{');
    kv_velocity(t, sp, model);
    lc_jw_close(t, '}');
}

void lc_wire_kv_state(lc_wire_text *t, lc_state s)
{
    lc_jw_key(t, "state");
    lc_jw_str(t, (int)s >= 0 && s < LC_STATE_COUNT ? lc_state_name(s) : NULL);
}

void lc_wire_kv_limit(lc_wire_text *t, lc_limit l)
{
    lc_jw_key(t, "limit");
    lc_jw_str(t, (int)l >= 0 && l < LC_LIMIT_COUNT ? lc_limit_name(l) : NULL);
}

void lc_wire_kv_model(lc_wire_text *t, lc_model m)
{
    lc_jw_kv_str(t, "model", lc_wire_model_names[m == LC_MODEL_UNICYCLE ? 1 : 0]);
}

void lc_wire_kv_event(lc_wire_text *t, const lc_event *ev)
{
    lc_event_kind k = ev->kind;
    lc_jw_key(t, "event");
    lc_jw_str(t, (int)k >= 0 && k < LC_EVENT_COUNT ? lc_event_name(k) : NULL);
    lc_jw_kv_index(t, "waypoint", ev->waypoint);
    lc_jw_kv_num(t, "stamp", ev->stamp, -1);
    if (k == LC_EVENT_BLOCKED && ev->reason > LC_BLOCK_NONE && ev->reason < LC_BLOCK_REASON_COUNT)
        lc_jw_kv_str(t, "reason", lc_block_reason_name(ev->reason));
}

/* The robot's sensors as the decoder reads them: fov and height band only
 * for points sensors, and only when given (fov 0 and +-inf are "none"). */
static void put_sensors(lc_wire_text *t, const lc_robot *m)
{
    int n = m->n_sensors > LC_SENSORS_MAX ? LC_SENSORS_MAX : m->n_sensors;
    lc_jw_key(t, "sensors");
    lc_jw_open(t, '[');
    for (int i = 0; i < n; i++) {
        const lc_sensor_desc *s = &m->sensors[i];
        bool points = s->kind == LC_FRAME_POINTS;
        lc_jw_open(t, '{');
        lc_jw_kv_str(t, "name", s->name);
        lc_jw_kv_str(t, "kind", lc_wire_kind_names[points ? 1 : 0]);
        lc_jw_key(t, "mount");
        lc_jw_pose(t, s->mount, -1);
        if (points && s->fov > 0)
            lc_jw_kv_num(t, "fov", s->fov, -1);
        if (points && isfinite(s->z_min))
            lc_jw_kv_num(t, "z_min", s->z_min, -1);
        if (points && isfinite(s->z_max))
            lc_jw_kv_num(t, "z_max", s->z_max, -1);
        lc_jw_close(t, '}');
    }
    lc_jw_close(t, ']');
}

void lc_wire_robot_members(lc_wire_text *t, const lc_robot *m)
{
    lc_jw_kv_str(t, "type", "robot");
    lc_wire_kv_model(t, m->model);
    lc_jw_kv_num(t, "radius", m->radius, -1);
    if (m->n_footprint > 0) {
        lc_jw_key(t, "footprint");
        lc_jw_vec2_list(t, m->footprint, m->n_footprint, -1);
    }
    lc_jw_kv_num(t, "margin", m->margin, -1);
    lc_jw_kv_num(t, "v_max", m->v_max, -1);
    lc_jw_kv_num(t, "a_max", m->a_max, -1);
    lc_jw_kv_num(t, "w_max", m->w_max, -1);
    lc_jw_kv_num(t, "dw_max", m->dw_max, -1);
    lc_jw_kv_bool(t, "reverse", m->reverse);
    if (isfinite(m->z_min))
        lc_jw_kv_num(t, "z_min", m->z_min, -1);
    if (isfinite(m->z_max))
        lc_jw_kv_num(t, "z_max", m->z_max, -1);
    if (m->n_sensors > 0)
        put_sensors(t, m);
}

void lc_wire_route_common(lc_wire_text *t, const lc_route *m, int decimals)
{
    int n = m->count < 0 ? 0 : (m->count > LC_ROUTE_MAX ? LC_ROUTE_MAX : m->count);
    lc_jw_key(t, "waypoints");
    lc_jw_vec2_list(t, m->waypoints, n, decimals);
    lc_jw_kv_bool(t, "loop", m->loop);
    lc_jw_kv_num(t, "tolerance", m->tolerance, decimals);
    lc_jw_kv_str(t, "on_blocked", lc_wire_policy_names[m->on_blocked == LC_BLOCKED_SKIP ? 1 : 0]);
    lc_jw_kv_num(t, "blocked_time", m->blocked_time, decimals);
}

void lc_wire_route_members(lc_wire_text *t, const lc_route *m)
{
    lc_jw_kv_str(t, "type", "route");
    lc_wire_route_common(t, m, -1);
    lc_jw_kv_num(t, "progress", m->progress, -1);
}

/* ------------------------------------------------------------- encoders */

int lc_wire_encode_hello(lc_wire_text *t, const lc_wire_hello *m)
{
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", "hello");
    lc_jw_kv_str(t, "role", lc_wire_role_name(m->role));
    lc_jw_kv_str(t, "robot", m->robot);
    if (m->has_token)
        lc_jw_kv_str(t, "token", m->token);
    return lc_jw_end(t);
}

int lc_wire_encode_welcome(lc_wire_text *t, const lc_wire_welcome *m)
{
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", "welcome");
    lc_jw_kv_str(t, "role", lc_wire_role_name(m->role));
    lc_jw_kv_str(t, "robot", m->robot);
    lc_jw_kv_str(t, "server", "lacuna " LC_VERSION);
    lc_jw_kv_str(t, "protocol", LC_WIRE_PROTOCOL);
    lc_jw_kv_int(t, "watchdog_ms", m->watchdog_ms);
    lc_jw_kv_int(t, "max_message", m->max_message);
    lc_jw_kv_int(t, "max_beams", m->max_beams);
    lc_jw_kv_int(t, "max_points", m->max_points);
    lc_jw_kv_int(t, "max_waypoints", LC_ROUTE_MAX);
    lc_jw_kv_num(t, "view_hz", m->view_hz, -1);
    if (m->role == LC_ROLE_ROBOT)
        lc_jw_kv_bool(t, "resumed", m->resumed);
    lc_jw_kv_int(t, "grace_ms", m->grace_ms);
    lc_jw_kv_int(t, "link_timeout_ms", m->link_timeout_ms);
    return lc_jw_end(t);
}

int lc_wire_encode_robot(lc_wire_text *t, const lc_robot *m)
{
    lc_jw_begin(t);
    lc_wire_robot_members(t, m);
    return lc_jw_end(t);
}

int lc_wire_encode_route(lc_wire_text *t, const lc_route *m)
{
    lc_jw_begin(t);
    lc_wire_route_members(t, m);
    return lc_jw_end(t);
}

static void frame_header_out(lc_wire_text *t, const lc_frame *m)
{
    lc_jw_kv_int(t, "seq", m->seq);
    lc_jw_kv_num(t, "stamp", m->stamp, -1);
    lc_jw_key(t, "pose");
    lc_jw_pose(t, m->pose, -1);
    if (m->sensor[0])
        lc_jw_kv_str(t, "sensor", m->sensor);
    if (m->has_mount) { /* else the sensor's mount applies: a replay must see none either */
        lc_jw_key(t, "mount");
        lc_jw_pose(t, m->mount, -1);
    }
}

int lc_wire_encode_frame(lc_wire_text *t, const lc_frame *m)
{
    lc_jw_begin(t);
    if (m->kind == LC_FRAME_SCAN) {
        lc_jw_kv_str(t, "type", "scan");
        frame_header_out(t, m);
        lc_jw_kv_num(t, "bearing_first", m->angle_start, -1);
        lc_jw_kv_num(t, "bearing_step", m->angle_step, -1);
        lc_jw_kv_num(t, "near", m->range_min, -1);
        lc_jw_kv_num(t, "far", m->range_max, -1);
        lc_jw_key(t, "dist");
        lc_jw_doubles(t, m->ranges, m->ranges ? m->n_ranges : 0, -1);
    } else {
        int n = m->xy ? m->n_points : 0;
        lc_jw_kv_str(t, "type", "points");
        frame_header_out(t, m);
        lc_jw_key(t, "xy");
        lc_jw_doubles(t, m->xy, 2 * n, -1);
        if (m->z) {
            lc_jw_key(t, "z");
            lc_jw_doubles(t, m->z, n, -1);
        }
    }
    return lc_jw_end(t);
}

int lc_wire_encode_setpoint(lc_wire_text *t, const lc_wire_setpoint *m)
{
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", "setpoint");
    lc_jw_kv_int(t, "seq", m->seq);
    lc_jw_kv_num(t, "stamp", m->stamp, -1);
    kv_velocity(t, &m->sp, m->model);
    lc_wire_kv_state(t, m->state);
    lc_wire_kv_limit(t, m->sp.limit);
    lc_jw_kv_index(t, "waypoint", m->waypoint);
    lc_jw_kv_int(t, "valid_ms", m->valid_ms);
    return lc_jw_end(t);
}

int lc_wire_encode_event(lc_wire_text *t, const lc_wire_event *m)
{
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", "event");
    lc_wire_kv_event(t, &m->ev);
    if (m->seq >= 0)
        lc_jw_kv_int(t, "seq", m->seq);
    return lc_jw_end(t);
}

/* An error or a warning: the same four members. */
static int encode_coded(lc_wire_text *t, const char *type, const char *code,
                        const char *message, bool has_seq, int64_t seq)
{
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", type);
    lc_jw_kv_str(t, "code", code);
    lc_jw_kv_str(t, "message", message);
    if (has_seq)
        lc_jw_kv_int(t, "seq", seq);
    return lc_jw_end(t);
}

int lc_wire_encode_error(lc_wire_text *t, const lc_wire_error *m)
{
    return encode_coded(t, "error", lc_wire_code_name(m->code), m->message, m->has_seq, m->seq);
}

int lc_wire_encode_warning(lc_wire_text *t, const lc_wire_warning *m)
{
    return encode_coded(t, "warning", lc_wire_warn_name(m->code), m->message, m->has_seq,
                        m->seq);
}

