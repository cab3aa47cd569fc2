/*
 * robots.c - the hub (see robots.h): its lifetime and its connections'. The
 * protocol is in the hub_*.c files, one job each (hub_internal.h lists
 * them): hello and roles, one session per robot name (kept for a resume
 * when its link drops), one setpoint per accepted frame, events, the
 * watchdog, dead links, throttled shared views, bounded queues and
 * recording.
 */
#include "robots.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "hub_internal.h"
#include "log.h"

lc_hub *lc_hub_new(const lc_hub_config *cfg)
{
    lc_hub *hub = calloc(1, sizeof *hub);
    if (!hub)
        return NULL;
    hub->cfg = *cfg;
    hub->need_robot_token = cfg->robot_token != NULL;
    hub->need_viewer_token = cfg->viewer_token != NULL;
    snprintf(hub->robot_token, sizeof hub->robot_token, "%s", cfg->robot_token ? cfg->robot_token : "");
    snprintf(hub->viewer_token, sizeof hub->viewer_token, "%s",
             cfg->viewer_token ? cfg->viewer_token : "");
    hub->cfg.robot_token = hub->cfg.viewer_token = NULL;
    if (cfg->plan)
        hub->plan = *cfg->plan;
    else
        lc_plan_config_default(&hub->plan);
    lc_control_default(&hub->control); /* its first_dt: the first frame of a session */
    hub->control.period = cfg->opts.period;
    hub->control.dt_min = cfg->opts.dt_min;
    hub->control.dt_max = cfg->opts.dt_max;
    hub->control.watchdog_ms = cfg->opts.watchdog_ms;
    lc_wire_limits_default(&hub->limits);
    hub->limits.max_message = (size_t)cfg->opts.max_message;
    hub->limits.max_beams = cfg->opts.max_beams;
    hub->limits.max_points = cfg->opts.max_points;
    lc_wire_buffers_init(&hub->buf, NULL);
    lc_wire_text_init(&hub->text, NULL);
    return hub;
}

void lc_hub_free(lc_hub *hub)
{
    if (!hub)
        return;
    hub->shutting = true; /* no session waits: each ends with its connection */
    while (hub->conns)
        lc_hub_close(hub, hub->conns, 0.0);
    while (hub->bots)
        lc_hub_bot_free(hub, hub->bots);
    lc_wire_buffers_free(&hub->buf);
    lc_wire_text_free(&hub->text);
    free(hub);
}

void lc_hub_close(lc_hub *hub, lc_conn *conn, double now)
{
    for (lc_conn **p = &hub->conns; *p; p = &(*p)->next) {
        if (*p == conn) {
            *p = conn->next;
            hub->n_conns--;
            break;
        }
    }
    if (conn->role == ROLE_VIEWER)
        hub->n_viewers--;
    if (conn->bot)
        lc_hub_bot_drop(hub, conn->bot, now);
    lc_hub_queue_free(&conn->replies);
    lc_hub_queue_free(&conn->views);
    free(conn->rx);
    free(conn);
}

int lc_hub_connections(const lc_hub *hub) { return hub->n_conns; }

void lc_hub_heard(lc_hub *hub, lc_conn *conn, double now)
{
    conn->heard_at = now;
    conn->ping_at = now + hub->cfg.opts.link_timeout_ms / 3000.0;
}

bool lc_conn_take_ping(lc_conn *conn)
{
    bool due = conn->ping_due;
    conn->ping_due = false;
    return due;
}

long lc_hub_views_dropped(const lc_hub *hub) { return hub->views_dropped; }
