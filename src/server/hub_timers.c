/*
 * hub_timers.c - what falls due at a time: each robot's watchdog and view,
 * the end of a dropped session's grace, each connection's hello timeout
 * and forced close, each robot link's pings and dead link; the next deadline; and shutdown (a
 * last stop setpoint to every robot, then every connection closes).
 */
#include <math.h>

#include "hub_internal.h"
#include "log.h"

static double link_timeout(const lc_hub *hub) { return hub->cfg.opts.link_timeout_ms / 1000.0; }

/*
 * A robot's link that is not closing yet: its liveness is watched (unless
 * link_timeout_ms is 0). A viewer's is not: it holds no name, it sends
 * nothing after its hello, and one that reads slowly has a backlog of views
 * in front of any ping, so silence would not tell a slow viewer from a dead
 * one; its queue is bounded anyway (robots.h, Queues).
 */
static bool watched(const lc_hub *hub, const lc_conn *c)
{
    return !c->closing && c->role == ROLE_ROBOT && hub->cfg.opts.link_timeout_ms > 0;
}

/*
 * Nothing came for the link timeout, not even a pong: the peer is gone
 * without closing (out of radio range, a frozen process). It is dropped at
 * once, since it would not answer a close either; marking it closing lets
 * its robot's name go now, before the transport reports the close.
 */
static void link_dead(lc_hub *hub, lc_conn *c)
{
    lc_log(LC_LOG_WARN, "robot %s: nothing heard for %d ms, not even a pong: link closed",
           c->bot ? c->bot->name : "?", hub->cfg.opts.link_timeout_ms);
    c->closing = true;
    c->close_at = INFINITY;
    c->close_status = LC_CLOSE_GOING_AWAY;
    hub->cfg.io.kill(hub->cfg.io.data, c->user);
}

static void conn_timers(lc_hub *hub, lc_conn *c, double now)
{
    /* Not read for now (robots.h, receive flow): what it sends waits in TCP,
     * so its silence says nothing. A peer that reads nothing at all is closed
     * by the full reply queue instead. */
    if (c->paused)
        lc_hub_heard(hub, c, now);
    if (c->closing && now >= c->close_at) {
        hub->cfg.io.kill(hub->cfg.io.data, c->user);
        c->close_at = INFINITY;
    } else if (!c->closing && c->role == ROLE_NONE &&
               now >= c->opened_at + hub->cfg.opts.hello_timeout_ms / 1000.0) {
        lc_hub_error_close(hub, c, LC_WIRE_UNAUTHORIZED, now, "hello: none received in time");
    } else if (watched(hub, c) && now >= c->heard_at + link_timeout(hub)) {
        link_dead(hub, c);
    } else if (watched(hub, c) && now >= c->ping_at) {
        c->ping_due = true;
        c->ping_at = now + link_timeout(hub) / 3.0;
        lc_hub_wake(hub, c);
    }
}

/* Sessions whose robot did not come back within grace_ms end. */
static void end_expired(lc_hub *hub, double now)
{
    bot **p = &hub->bots;
    while (*p) {
        bot *b = *p;
        if (!b->conn && now >= b->expire_at) {
            lc_log(LC_LOG_INFO, "robot %s did not come back within %d ms: session ended",
                   b->name, hub->cfg.opts.grace_ms);
            lc_hub_bot_free(hub, b); /* unlinks b: *p is the next one */
        } else {
            p = &b->next;
        }
    }
}

double lc_hub_tick(lc_hub *hub, double now)
{
    end_expired(hub, now);
    for (bot *b = hub->bots; b; b = b->next) {
        if (b->conn && b->watchdog_at <= now && !b->conn->closing)
            lc_hub_watchdog(hub, b, now);
        if (b->view_dirty && now >= b->view_at)
            lc_hub_broadcast_view(hub, b, now);
    }
    for (lc_conn *c = hub->conns; c; c = c->next)
        conn_timers(hub, c, now);
    return lc_hub_deadline(hub);
}

double lc_hub_deadline(const lc_hub *hub)
{
    double t = INFINITY;
    for (const bot *b = hub->bots; b; b = b->next) {
        if (!b->conn)
            t = fmin(t, b->expire_at);
        else if (!b->conn->closing)
            t = fmin(t, b->watchdog_at);
        if (b->view_dirty && hub->n_viewers > 0)
            t = fmin(t, b->view_at);
    }
    for (const lc_conn *c = hub->conns; c; c = c->next) {
        if (c->closing)
            t = fmin(t, c->close_at);
        else if (c->role == ROLE_NONE)
            t = fmin(t, c->opened_at + hub->cfg.opts.hello_timeout_ms / 1000.0);
        else if (watched(hub, c))
            t = fmin(t, fmin(c->ping_at, c->heard_at + link_timeout(hub)));
    }
    return t;
}

void lc_hub_shutdown(lc_hub *hub, double now)
{
    hub->shutting = true;
    for (bot *b = hub->bots; b; b = b->next)
        lc_hub_bot_stop(hub, b, now);
    for (lc_conn *c = hub->conns; c; c = c->next) {
        lc_hub_start_close(hub, c, LC_CLOSE_GOING_AWAY, "server shutting down", now);
        c->close_at = now + hub->cfg.opts.shutdown_ms / 1000.0;
    }
}
