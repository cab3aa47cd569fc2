/*
 * hub_bot.c - one robot's session in the hub: its description and route,
 * each frame's step (the control period dt, the session step, the setpoint,
 * errors and events: lc_session_drive), the watchdog's stop setpoints, the last stop at
 * shutdown, its recording, the warnings a robot hears about its frames
 * (before a route, stamps or seq going back, sensors it did not describe:
 * each once per connection, the last one also logged), and the session's
 * life across links: kept for grace_ms when its link drops, resumed whole
 * by the next hello under its name.
 *
 * A resumed session goes on from what the robot was last told: the core
 * session is the same one, so the next frame's rate limits start from the
 * last setpoint sent, or from rest when the watchdog's stop went out before
 * the link was found dead (lc_session_stop). Nothing is sent while no link
 * holds the session, so nothing is told then either.
 */
#include <errno.h>
#include <inttypes.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "hub_internal.h"
#include "log.h"

bot *lc_hub_find_bot(const lc_hub *hub, const char *name)
{
    for (bot *b = hub->bots; b; b = b->next)
        if (strcmp(b->name, name) == 0)
            return b;
    return NULL;
}

bot *lc_hub_bot_new(lc_hub *hub, lc_conn *c, const char *name)
{
    bot *b = calloc(1, sizeof *b);
    if (!b)
        return NULL;
    lc_robot_default(&b->desc);
    lc_route_default(&b->route);
    b->core = lc_session_new(&b->desc, &hub->plan, NULL);
    if (b->core && hub->cfg.clock)
        lc_session_set_clock(b->core, hub->cfg.clock);
    if (b->core)
        lc_session_set_control(b->core, &hub->control);
    if (!b->core) {
        free(b);
        return NULL;
    }
    snprintf(b->name, sizeof b->name, "%s", name);
    b->id = ++hub->next_bot_id;
    b->conn = c;
    b->seq = -1;
    b->watchdog_at = INFINITY;
    b->expire_at = INFINITY;
    b->next = hub->bots;
    hub->bots = b;
    return b;
}

void lc_hub_bot_free(lc_hub *hub, bot *b)
{
    for (bot **p = &hub->bots; *p; p = &(*p)->next) {
        if (*p == b) {
            *p = b->next;
            break;
        }
    }
    if (!b->conn)
        hub->n_waiting--;
    lc_recorder_close(&b->rec);
    lc_session_free(b->core);
    free(b);
}

/* The waiting session whose grace ends first (NULL: none waits). */
static bot *first_to_expire(const lc_hub *hub)
{
    bot *first = NULL;
    for (bot *b = hub->bots; b; b = b->next)
        if (!b->conn && (!first || b->expire_at < first->expire_at))
            first = b;
    return first;
}

void lc_hub_bot_drop(lc_hub *hub, bot *b, double now)
{
    const lc_server_config *o = &hub->cfg.opts;
    if (hub->shutting || o->grace_ms <= 0) {
        lc_log(LC_LOG_INFO, "robot %s disconnected: session ended", b->name);
        lc_hub_bot_free(hub, b);
        return;
    }
    /* waiting sessions are bounded like live ones: the oldest gives way */
    bot *oldest = hub->n_waiting >= o->max_connections ? first_to_expire(hub) : NULL;
    if (oldest) {
        lc_log(LC_LOG_WARN, "robot %s: session ended before its grace ran out: %d sessions "
               "wait for their robots (max_connections)", oldest->name, hub->n_waiting);
        lc_hub_bot_free(hub, oldest);
    }
    b->conn = NULL;
    b->dropped_at = now;
    b->expire_at = now + o->grace_ms / 1000.0;
    b->view_dirty = true;
    hub->n_waiting++;
    lc_log(LC_LOG_INFO, "robot %s disconnected: its session waits %d ms for it to say hello "
           "again (grace_ms)", b->name, o->grace_ms);
}

void lc_hub_bot_resume(lc_hub *hub, bot *b, lc_conn *c, double now)
{
    lc_conn *old = b->conn;
    if (old) {
        old->bot = NULL;
        lc_log(LC_LOG_WARN, "robot %s: a new connection proved the token and takes the session "
               "over; the old link is closed", b->name);
        lc_hub_error_close(hub, old, LC_WIRE_NAME_TAKEN, now,
                           "robot: a new connection with the token took this robot's session over");
    } else {
        hub->n_waiting--;
        lc_log(LC_LOG_INFO, "robot %s is back after %.1f s: session resumed (description, "
               "route, progress and velocity kept)", b->name, now - b->dropped_at);
    }
    b->conn = c;
    c->bot = b;
    b->expire_at = INFINITY;
    b->n_unlisted = 0; /* said once per connection */
    /* the robot gets a watchdog period for its first frame on the new link */
    if (b->has_frame)
        b->watchdog_at = now + hub->cfg.opts.watchdog_ms / 1000.0;
    b->view_dirty = true;
}

/* A line of the robot's recording, when it is being recorded. */
static void record(bot *b, const char *text, size_t len)
{
    if (lc_recorder_is_open(&b->rec) && lc_recorder_line(&b->rec, text, len) < 0)
        b->rec_failed_unsent = true; /* told after the message at hand (it is in hub->text) */
}

/* The robot learns once that its recording stopped (the log has said so already). */
static void tell_recording_failed(lc_hub *hub, bot *b, double now)
{
    if (!b->rec_failed_unsent)
        return;
    b->rec_failed_unsent = false;
    lc_wire_error e = {0};
    lc_wire_error_set(&e, LC_WIRE_RECORDING_FAILED,
                      "record: %s; recording stopped, control goes on", strerror(b->rec.error));
    e.has_seq = b->has_frame;
    e.seq = b->seq;
    lc_hub_send_error(hub, b->conn, &e, now);
}

/* Record what hub->text holds, when its encoding (rc) succeeded. */
static void record_encoded(lc_hub *hub, bot *b, int rc)
{
    if (rc == 0)
        record(b, hub->text.s, (size_t)hub->text.len);
}

/* Send what hub->text holds to the robot and record it. */
static void send_to_robot(lc_hub *hub, bot *b, int rc, double now)
{
    record_encoded(hub, b, rc);
    lc_hub_send_encoded(hub, b->conn, rc, now);
    tell_recording_failed(hub, b, now);
}

static void start_recording(lc_hub *hub, bot *b)
{
    if (!hub->cfg.opts.record[0] || lc_recorder_is_open(&b->rec) || b->rec.failed)
        return;
    const lc_server_config *o = &hub->cfg.opts;
    if (lc_recorder_open(&b->rec, o->record, b->name, &b->desc, &b->route,
                         lc_session_control(b->core)) < 0) {
        b->rec.error = errno;
        lc_log(LC_LOG_ERROR, "robot %s: cannot record in %s: %s", b->name, o->record,
               strerror(errno));
        b->rec.failed = true;
        b->rec_failed_unsent = true;
    }
}

/* Why the patrol is blocked, as its blocked event said, while it stays blocked. */
static void note_blocked(bot *b)
{
    if (b->result.state != LC_STATE_BLOCKED)
        b->blocked = LC_BLOCK_NONE;
    for (int i = 0; i < b->result.n_events; i++)
        if (b->result.events[i].kind == LC_EVENT_BLOCKED)
            b->blocked = b->result.events[i].reason;
}

static void send_events(lc_hub *hub, bot *b, double now)
{
    for (int i = 0; i < b->result.n_events; i++) {
        lc_wire_event ev = {.ev = b->result.events[i], .seq = b->seq};
        send_to_robot(hub, b, lc_wire_encode_event(&hub->text, &ev), now);
    }
}

/* "scan" or "points": the frame's message type, the root of its field names. */
static const char *frame_type(const lc_frame *f)
{
    return lc_msg_type_name(f->kind == LC_FRAME_POINTS ? LC_MSG_POINTS : LC_MSG_SCAN);
}

void lc_hub_warn(lc_hub *hub, lc_conn *c, lc_wire_warn code, bool bypass, int64_t seq,
                 double now, const char *fmt, ...)
{
    if (c->role != ROLE_ROBOT || c->closing || (!bypass && (c->warned & (1u << code))))
        return;
    c->warned |= 1u << code;
    lc_wire_warning w = {.code = code, .has_seq = seq >= 0, .seq = seq};
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(w.message, sizeof w.message, fmt, ap);
    va_end(ap);
    lc_hub_send_encoded(hub, c, lc_wire_encode_warning(&hub->text, &w), now);
}

/*
 * A frame that names a sensor the robot's description does not list is
 * planned all the same (with its own mount: lc_robot_sensor finds none),
 * and logged once per connection and sensor name; the robot hears of the
 * first (a warning).
 */
static void unlisted_sensor(lc_hub *hub, bot *b, const lc_frame *f, double now)
{
    if (!f->sensor[0] || lc_robot_sensor(&b->desc, f))
        return;
    lc_hub_warn(hub, b->conn, LC_WARN_UNLISTED_SENSOR, false, f->seq, now,
                "%s.sensor: '%s' is not one of the robot's sensors; planned with the frame's "
                "own mount (said once)", frame_type(f), f->sensor);
    for (int i = 0; i < b->n_unlisted && i < LC_SENSORS_MAX; i++)
        if (strcmp(b->unlisted[i], f->sensor) == 0)
            return;
    if (b->n_unlisted < LC_SENSORS_MAX) {
        snprintf(b->unlisted[b->n_unlisted++], sizeof b->unlisted[0], "%s", f->sensor);
        lc_log(LC_LOG_WARN, "robot %s: frame %lld names sensor '%s', which its description "
               "does not list; planned with the frame's own mount (said once per sensor)",
               b->name, (long long)f->seq, f->sensor);
    } else if (b->n_unlisted == LC_SENSORS_MAX) {
        b->n_unlisted++;
        lc_log(LC_LOG_WARN, "robot %s: frames name more unlisted sensors ('%s', ...); "
               "no more said", b->name, f->sensor);
    }
}

/*
 * What the robot should hear about a frame that is planned all the same:
 * one before any route (it is answered idle), a stamp or seq below the
 * previous frame's on this connection (equal stamps are several sensors at
 * one instant; equal seqs are allowed too), a sensor it did not describe.
 */
static void frame_warnings(lc_hub *hub, bot *b, const lc_frame *f, double now)
{
    lc_conn *c = b->conn;
    const char *type = frame_type(f);
    if (!b->has_route)
        lc_hub_warn(hub, c, LC_WARN_NO_ROUTE, false, f->seq, now,
                    "%s: no route yet; the robot is told to stay still (state idle) until a "
                    "route message comes (said once)", type);
    if (c->rx_frame && f->stamp < c->rx_stamp)
        lc_hub_warn(hub, c, LC_WARN_STAMP_BACKWARDS, false, f->seq, now,
                    "%s.stamp: %.17g is before the previous frame's %.17g; stamps should "
                    "increase (said once)", type, f->stamp, c->rx_stamp);
    if (c->rx_frame && f->seq < c->rx_seq)
        lc_hub_warn(hub, c, LC_WARN_SEQ_BACKWARDS, false, f->seq, now,
                    "%s.seq: %" PRId64 " is below the previous frame's %" PRId64 "; setpoints "
                    "echo seq, so it should increase (said once)", type, f->seq, c->rx_seq);
    unlisted_sensor(hub, b, f, now);
    c->rx_frame = true;
    c->rx_seq = f->seq;
    c->rx_stamp = f->stamp;
}

static void frame(lc_hub *hub, bot *b, const lc_frame *f, double now)
{
    start_recording(hub, b);
    frame_warnings(hub, b, f, now);
    if (lc_recorder_is_open(&b->rec) && lc_wire_encode_frame(&hub->text, f) == 0)
        record(b, hub->text.s, (size_t)hub->text.len);
    int rc = lc_session_drive(b->core, f, &b->result, &b->last_sp);
    b->plan_max_us = fmax(b->plan_max_us, b->result.total_us);
    b->has_frame = true;
    b->seq = f->seq;
    b->stamp = f->stamp;
    b->pose = f->pose;
    b->has_sp = true;
    note_blocked(b);
    send_to_robot(hub, b, lc_wire_encode_setpoint(&hub->text, &b->last_sp), now);
    if (rc < 0) {
        lc_wire_error e = {0};
        lc_wire_error_set(&e, LC_WIRE_INTERNAL, "frame: out of memory while planning (stop sent)");
        e.has_seq = true;
        e.seq = f->seq;
        lc_hub_send_error(hub, b->conn, &e, now);
    }
    send_events(hub, b, now);
    b->watchdog_at = now + hub->cfg.opts.watchdog_ms / 1000.0;
    b->view_dirty = true;
}

void lc_hub_watchdog(lc_hub *hub, bot *b, double now)
{
    double period = hub->cfg.opts.watchdog_ms / 1000.0;
    lc_session_stop(b->core, LC_STATE_STALE, LC_LIMIT_STALE, &b->last_sp);
    b->view_dirty = true;
    send_to_robot(hub, b, lc_wire_encode_setpoint(&hub->text, &b->last_sp), now);
    b->watchdog_at += period;
    if (b->watchdog_at <= now)
        b->watchdog_at = now + period; /* the loop was late: do not send a burst */
}

/* Shutdown: a last stop setpoint to a robot that has had a frame. */
void lc_hub_bot_stop(lc_hub *hub, bot *b, double now)
{
    if (!b->has_frame || !b->conn || b->conn->closing)
        return;
    lc_session_stop(b->core, LC_STATE_SHUTDOWN, LC_LIMIT_NONE, &b->last_sp);
    send_to_robot(hub, b, lc_wire_encode_setpoint(&hub->text, &b->last_sp), now);
}

void lc_hub_robot_message(lc_hub *hub, lc_conn *c, const lc_wire_msg *m, double now)
{
    bot *b = c->bot;
    switch (m->type) {
    case LC_MSG_ROBOT:
        b->desc = m->u.robot;
        lc_session_set_robot(b->core, &b->desc);
        record_encoded(hub, b, lc_wire_encode_robot(&hub->text, &b->desc));
        b->view_dirty = true;
        break;
    case LC_MSG_ROUTE:
        b->route = m->u.route;
        b->has_route = true;
        lc_session_set_route(b->core, &b->route);
        record_encoded(hub, b, lc_wire_encode_route(&hub->text, &b->route));
        b->view_dirty = true;
        break;
    case LC_MSG_SCAN:
    case LC_MSG_POINTS:
        frame(hub, b, &m->u.frame, now);
        break;
    default:
        break;
    }
    tell_recording_failed(hub, b, now);
}

void lc_hub_reopen(lc_hub *hub)
{
    for (bot *b = hub->bots; b; b = b->next)
        lc_recorder_reopen(&b->rec, &b->desc, &b->route);
}
