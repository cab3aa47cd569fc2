/*
 * hub_rx.c - receiving: a message's chunks reassembled (capped at
 * max_message; binary ones counted, not kept), a token bucket of max_rate
 * messages per second against flooding, then the decoded message routed by
 * the connection's role: the hello, a robot's messages, refusals; and the
 * unknown keys a message carried, logged and told to a robot (a warning).
 */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "hub_internal.h"
#include "log.h"

static bool robot_may_send(lc_msg_type t)
{
    return t == LC_MSG_ROBOT || t == LC_MSG_ROUTE || t == LC_MSG_SCAN || t == LC_MSG_POINTS;
}

static void refuse(lc_hub *hub, lc_conn *c, lc_wire_code code, const lc_wire_msg *m,
                   const lc_wire_error *from, double now, const char *fmt, const char *arg)
{
    lc_wire_error e = {0};
    lc_wire_error_set(&e, code, fmt, arg);
    if (m->type == LC_MSG_SCAN || m->type == LC_MSG_POINTS) {
        e.has_seq = true;
        e.seq = m->u.frame.seq;
    } else if (from && from->has_seq) {
        e.has_seq = true;
        e.seq = from->seq;
    }
    lc_hub_send_error(hub, c, &e, now);
}

/*
 * Unknown keys are ignored (PROTOCOL.md), but a typo ("margn") would leave a
 * default in force without a word: log it, once per connection and message
 * type; true when it was said now. A frame with an unknown key also misses
 * the codec's fast path.
 */
static bool log_ignored(lc_conn *c, const lc_wire_msg *m, const lc_wire_error *err)
{
    if (!err->ignored || (c->warned_ignored & (1u << m->type)))
        return false;
    c->warned_ignored |= 1u << m->type;
    bool frame = m->type == LC_MSG_SCAN || m->type == LC_MSG_POINTS;
    char text[LC_WIRE_KEY_SHOWN + 64];
    lc_wire_ignored_text(err, text, sizeof text);
    lc_log(LC_LOG_WARN, "%s %s: %s%s (said once per connection and message type)",
           c->bot ? "robot" : "client", c->bot ? c->bot->name : (c->addr[0] ? c->addr : "?"),
           text,
           frame ? "; frames with unknown keys take the slower decoder" : "");
    return true;
}

/* The robot hears what log_ignored said (after its welcome, for a hello). */
static void warn_ignored(lc_hub *hub, lc_conn *c, const lc_wire_msg *m,
                         const lc_wire_error *err, double now)
{
    bool frame = m->type == LC_MSG_SCAN || m->type == LC_MSG_POINTS;
    char text[LC_WIRE_KEY_SHOWN + 64];
    lc_wire_ignored_text(err, text, sizeof text);
    lc_hub_warn(hub, c, LC_WARN_UNKNOWN_KEY, true, frame ? m->u.frame.seq : -1, now,
                "%s (said once per message type)", text);
}

static void message(lc_hub *hub, lc_conn *c, const char *text, size_t len, double now)
{
    lc_wire_error err;
    lc_wire_msg *m = &hub->in;
    int rc = lc_wire_decode(text, len, &hub->limits, &hub->buf, m, &err);
    bool unknown_keys = rc == 0 && log_ignored(c, m, &err);
    if (c->role == ROLE_NONE) {
        if (rc < 0)
            lc_hub_send_error_close(hub, c, &err, now);
        else if (m->type != LC_MSG_HELLO)
            lc_hub_error_close(hub, c, LC_WIRE_UNAUTHORIZED, now,
                        "type: the first message must be a hello");
        else
            lc_hub_hello(hub, c, &m->u.hello, now);
        if (unknown_keys)
            warn_ignored(hub, c, m, &err, now); /* only a welcomed robot hears it */
        return;
    }
    if (rc < 0) {
        lc_hub_send_error(hub, c, &err, now);
        return;
    }
    const char *type = lc_msg_type_name(m->type);
    if (m->type == LC_MSG_HELLO)
        refuse(hub, c, LC_WIRE_BAD_MESSAGE, m, &err, now, "type: %s already received", type);
    else if (c->role == ROLE_VIEWER)
        refuse(hub, c, LC_WIRE_FORBIDDEN, m, &err, now, "type: a viewer may not send %s", type);
    else if (!robot_may_send(m->type))
        refuse(hub, c, LC_WIRE_FORBIDDEN, m, &err, now, "type: a robot may not send %s", type);
    else {
        if (unknown_keys)
            warn_ignored(hub, c, m, &err, now); /* before the frame's setpoint */
        lc_hub_robot_message(hub, c, m, now);
    }
}

/* false when the connection sends faster than max_rate (flooding). */
static bool take_token(lc_hub *hub, lc_conn *c, double now)
{
    double rate = hub->cfg.opts.max_rate;
    c->tokens = fmin(rate, c->tokens + (now - c->tokens_at) * rate);
    c->tokens_at = now;
    if (c->tokens < 1.0)
        return false;
    c->tokens -= 1.0;
    return true;
}

static void complete(lc_hub *hub, lc_conn *c, double now)
{
    if (c->closing)
        return;
    if (!take_token(hub, c, now)) {
        char text[96];
        snprintf(text, sizeof text, "connection: more than %g messages per second",
                 hub->cfg.opts.max_rate);
        lc_log(LC_LOG_WARN, "closing a flooding connection");
        lc_hub_error_close(hub, c, LC_WIRE_RATE_LIMITED, now, text);
        return;
    }
    if (c->rx_binary) {
        lc_wire_error e = {0};
        lc_wire_error_set(&e, LC_WIRE_BINARY, "message: binary messages are not accepted");
        if (c->role == ROLE_NONE)
            lc_hub_send_error_close(hub, c, &e, now);
        else
            lc_hub_send_error(hub, c, &e, now);
        return;
    }
    message(hub, c, c->rx, c->rx_len, now);
}

static int append(lc_conn *c, const void *data, size_t len)
{
    if (c->rx_binary || len == 0)
        return 0; /* binary bodies are counted, not kept */
    if (LC_GROW(NULL, c->rx, c->rx_cap, (int)(c->rx_len + len)) < 0)
        return -1; /* max_message (at most 64 MiB) was checked before */
    memcpy(c->rx + c->rx_len, data, len);
    c->rx_len += len;
    return 0;
}

int lc_hub_receive(lc_hub *hub, lc_conn *c, const void *data, size_t len, bool first,
                   bool final, bool binary, double now)
{
    lc_hub_heard(hub, c, now); /* anything from the peer proves the link */
    if (first) {
        c->rx_len = 0;
        c->rx_binary = binary;
        c->rx_count = 0;
    }
    c->rx_count += len;
    if (c->rx_count > (size_t)hub->cfg.opts.max_message) {
        c->close_status = LC_CLOSE_TOO_BIG;
        snprintf(c->close_reason, sizeof c->close_reason, "too_large: more than %d bytes",
                 hub->cfg.opts.max_message);
        lc_log(LC_LOG_WARN, "closing a connection: message larger than %d bytes",
               hub->cfg.opts.max_message);
        return -1;
    }
    if (append(c, data, len) < 0) {
        c->close_status = LC_CLOSE_INTERNAL;
        snprintf(c->close_reason, sizeof c->close_reason, "out of memory");
        return -1;
    }
    if (final)
        complete(hub, c, now);
    return 0;
}
