/*
 * hub_timers.c - what falls due at a time: each robot's watchdog and view,
 * each connection's hello timeout and forced close; the next deadline; and
 * shutdown (a last stop setpoint to every robot, then every connection
 * closes).
 */
#include <math.h>

#include "hub_internal.h"

static void conn_timers(lc_hub *hub, lc_conn *c, double now)
{
    if (c->closing && now >= c->close_at) {
        hub->cfg.io.kill(hub->cfg.io.data, c->user);
        c->close_at = INFINITY;
    } else if (!c->closing && c->role == ROLE_NONE &&
               now >= c->opened_at + hub->cfg.opts.hello_timeout_ms / 1000.0) {
        lc_hub_error_close(hub, c, LC_WIRE_UNAUTHORIZED, now, "hello: none received in time");
    }
}

double lc_hub_tick(lc_hub *hub, double now)
{
    for (bot *b = hub->bots; b; b = b->next) {
        if (b->watchdog_at <= now && !b->conn->closing)
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
        if (!b->conn->closing)
            t = fmin(t, b->watchdog_at);
        if (b->view_dirty && hub->n_viewers > 0)
            t = fmin(t, b->view_at);
    }
    for (const lc_conn *c = hub->conns; c; c = c->next) {
        if (c->closing)
            t = fmin(t, c->close_at);
        else if (c->role == ROLE_NONE)
            t = fmin(t, c->opened_at + hub->cfg.opts.hello_timeout_ms / 1000.0);
    }
    return t;
}

void lc_hub_shutdown(lc_hub *hub, double now)
{
    for (bot *b = hub->bots; b; b = b->next)
        lc_hub_bot_stop(hub, b, now);
    for (lc_conn *c = hub->conns; c; c = c->next) {
        lc_hub_start_close(hub, c, LC_CLOSE_GOING_AWAY, "server shutting down", now);
        c->close_at = now + hub->cfg.opts.shutdown_ms / 1000.0;
    }
}
