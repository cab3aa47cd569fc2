/*
 * simlink.c - see simlink.h. Built on wsclient (one connection, pull
 * driven) and the codec: every message the server sends is decoded with
 * the same strict decoder the server uses for robots, so a server that
 * broke the protocol would show here as a failed run.
 */
#include "simlink.h"

#include <math.h>
#include <stdbool.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "clock_mono.h"
#include "codec.h"
#include "wsclient.h"

struct lc_simlink {
    lc_wsclient *ws;
    lc_wire_text text;
    lc_wire_buffers buf;
    double timeout_s;
    lc_event pending[LC_PATROL_MAX_EVENTS];
    int n_pending;
};

/* Keeps an event for the next step; beyond the room of a result the
 * oldest are kept (a step never sees more than one frame's events). */
static void keep_event(lc_simlink *l, const lc_event *ev)
{
    if (l->n_pending < LC_PATROL_MAX_EVENTS)
        l->pending[l->n_pending++] = *ev;
}

static void hand_over_events(lc_simlink *l, lc_plan_result *res)
{
    for (int i = 0; i < l->n_pending && res->n_events < LC_PATROL_MAX_EVENTS; i++)
        res->events[res->n_events++] = l->pending[i];
    l->n_pending = 0;
}

static int send_text(lc_simlink *l, int encoded, char *err, size_t n)
{
    if (encoded < 0 || lc_wsclient_send(l->ws, l->text.s, (size_t)l->text.len) < 0) {
        snprintf(err, n, "cannot send: %s",
                 encoded < 0 ? "out of memory" : lc_wsclient_reason(l->ws));
        return -1;
    }
    return 0;
}

/*
 * Waits for one message up to deadline_us and decodes it into *m.
 * 1: a message; 0: deadline; -1: closed, interrupted or undecodable (err).
 * An `error` from the server is returned as -1 with its code and text.
 */
static int next_message(lc_simlink *l, double deadline_us, lc_wire_msg *m, char *err, size_t n)
{
    const char *text;
    size_t len;
    int rc = lc_wsclient_poll(l->ws, deadline_us, &text, &len, NULL);
    if (rc < 0) {
        snprintf(err, n, "%s", lc_wsclient_reason(l->ws));
        return -1;
    }
    if (rc == 0)
        return lc_mono_us() < deadline_us ? (snprintf(err, n, "interrupted"), -1) : 0;
    lc_wire_error e;
    if (lc_wire_decode(text, len, NULL, &l->buf, m, &e) < 0) {
        snprintf(err, n, "the server sent a message lacuna cannot read (%s: %s)",
                 lc_wire_code_name(e.code), e.message);
        return -1;
    }
    if (m->type == LC_MSG_ERROR) {
        snprintf(err, n, "the server answered %s: %s", lc_wire_code_name(m->u.error.code),
                 m->u.error.message);
        return -1;
    }
    if (m->type == LC_MSG_EVENT)
        keep_event(l, &m->u.event.ev);
    return 1;
}

lc_simlink *lc_simlink_open(const lc_simlink_opts *o, const lc_robot *robot,
                            const lc_route *route, char *err, size_t n)
{
    lc_ws_url url;
    if (lc_ws_url_parse(o->url, &url, err, n) < 0)
        return NULL;
    lc_simlink *l = calloc(1, sizeof *l);
    if (!l) {
        snprintf(err, n, "out of memory");
        return NULL;
    }
    l->timeout_s = o->timeout_s > 0 ? o->timeout_s : 2.0;
    lc_wire_text_init(&l->text, NULL);
    lc_wire_buffers_init(&l->buf, NULL);
    l->ws = lc_wsclient_open(&url, l->timeout_s, err, n);
    if (!l->ws) {
        lc_simlink_close(l);
        return NULL;
    }
    lc_wire_hello h = {.role = LC_ROLE_ROBOT, .has_token = o->token != NULL};
    snprintf(h.robot, sizeof h.robot, "%s", o->name);
    if (o->token)
        snprintf(h.token, sizeof h.token, "%s", o->token);
    lc_wire_msg m;
    double deadline = lc_mono_us() + l->timeout_s * 1e6;
    int rc = send_text(l, lc_wire_encode_hello(&l->text, &h), err, n);
    while (rc == 0 && (rc = next_message(l, deadline, &m, err, n)) == 1 &&
           m.type != LC_MSG_WELCOME)
        rc = 0;
    if (rc == 0)
        snprintf(err, n, "no welcome from the server within %.1f s", l->timeout_s);
    if (rc == 1)
        rc = send_text(l, lc_wire_encode_robot(&l->text, robot), err, n);
    if (rc == 0)
        rc = lc_simlink_send_route(l, route, err, n);
    if (rc != 0) {
        lc_simlink_close(l);
        return NULL;
    }
    return l;
}

int lc_simlink_send_route(lc_simlink *l, const lc_route *route, char *err, size_t n)
{
    return send_text(l, lc_wire_encode_route(&l->text, route), err, n);
}

int lc_simlink_idle(lc_simlink *l, double until_us, char *err, size_t n)
{
    lc_wire_msg m;
    int rc;
    while ((rc = next_message(l, until_us, &m, err, n)) == 1)
        ;
    return rc;
}

static void fill_result(const lc_wire_setpoint *sp, double round_trip_us, lc_plan_result *res)
{
    memset(res, 0, sizeof *res);
    res->setpoint = sp->sp;
    res->state = sp->state;
    res->has_waypoint = sp->waypoint >= 0;
    res->waypoint_index = sp->waypoint;
    res->total_us = round_trip_us;
    res->clearance = NAN;
}

int lc_simlink_step(lc_simlink *l, const lc_frame *f, lc_plan_result *res, lc_reply *reply,
                    char *err, size_t n)
{
    double sent = lc_mono_us();
    if (send_text(l, lc_wire_encode_frame(&l->text, f), err, n) < 0)
        return -1;
    double deadline = sent + l->timeout_s * 1e6;
    lc_wire_msg m;
    for (;;) {
        int rc = next_message(l, deadline, &m, err, n);
        if (rc == 0)
            snprintf(err, n, "no setpoint for frame %lld within %.1f s", (long long)f->seq,
                     l->timeout_s);
        if (rc <= 0)
            return -1;
        if (m.type == LC_MSG_SETPOINT && m.u.setpoint.seq == f->seq &&
            m.u.setpoint.state != LC_STATE_STALE)
            break;
    }
    fill_result(&m.u.setpoint, lc_mono_us() - sent, res);
    *reply = m.u.setpoint;
    hand_over_events(l, res);
    return 0;
}

void lc_simlink_drain(lc_simlink *l, double wait_s, lc_plan_result *res)
{
    char err[LC_WIRE_MESSAGE_MAX + 64];
    lc_simlink_idle(l, lc_mono_us() + wait_s * 1e6, err, sizeof err);
    hand_over_events(l, res);
}

void lc_simlink_interrupt(lc_simlink *l)
{
    if (l)
        lc_wsclient_interrupt(l->ws);
}

void lc_simlink_close(lc_simlink *l)
{
    if (!l)
        return;
    lc_wsclient_close(l->ws, 1.0);
    lc_wire_text_free(&l->text);
    lc_wire_buffers_free(&l->buf);
    free(l);
}
