/*
 * hub_admit.c - who may stay: a new connection is admitted by its Origin
 * and the count of connections from its address; its first message must be
 * a hello with the right token for its role, and a robot's name must be
 * free: held by no session, or by one whose link dropped (the hello resumes
 * it), or, when the server has a robot token (which the hello proved), by a
 * live link that the new connection then takes over. Everything refused
 * gets an error, then the connection closes.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "hub_internal.h"
#include "log.h"

static int connections_from(const lc_hub *hub, const char *addr)
{
    int n = 0;
    for (const lc_conn *c = hub->conns; c; c = c->next)
        n += strcmp(c->addr, addr) == 0;
    return n;
}

/* Origin and per-address limits: refuse (error, then close) what may not stay. */
static void admit(lc_hub *hub, lc_conn *c, const lc_peer *peer, double now)
{
    const lc_server_config *o = &hub->cfg.opts;
    char text[LC_WIRE_MESSAGE_MAX];
    if (!lc_origin_allowed(o->allow_origin, peer->origin, peer->host, o->tls_cert[0] != '\0')) {
        lc_log(LC_LOG_WARN, "websocket from %s refused: origin '%.100s' not allowed (allow_origin)",
               c->addr[0] ? c->addr : "?", peer->origin);
        snprintf(text, sizeof text, "origin: '%.100s' is not allowed (see allow_origin)",
                 peer->origin);
        lc_hub_error_close(hub, c, LC_WIRE_FORBIDDEN, now, text);
        return;
    }
    int n = c->addr[0] ? connections_from(hub, c->addr) - 1 : 0;
    if (n >= o->max_per_address) {
        lc_log(LC_LOG_WARN, "websocket from %s refused: %d connections from it (max_per_address)",
               c->addr, n);
        snprintf(text, sizeof text,
                 "connection: %d connections from %s already (max_per_address %d)", n, c->addr,
                 o->max_per_address);
        lc_hub_error_close(hub, c, LC_WIRE_TOO_MANY_CONNECTIONS, now, text);
    }
}

lc_conn *lc_hub_open(lc_hub *hub, void *conn_user, const lc_peer *peer, double now)
{
    if (hub->n_conns >= hub->cfg.opts.max_connections) {
        lc_log(LC_LOG_WARN, "connection refused: %d connections open (max_connections)",
               hub->n_conns);
        return NULL;
    }
    lc_conn *c = calloc(1, sizeof *c);
    if (!c)
        return NULL;
    /* +1: the reserved slot for the closing error (hub_queue.c, send_text) */
    if (lc_hub_queue_init(&c->replies, hub->cfg.opts.send_queue + 1) < 0 ||
        lc_hub_queue_init(&c->views, hub->cfg.opts.viewer_queue) < 0) {
        lc_hub_queue_free(&c->replies);
        free(c);
        return NULL;
    }
    c->user = conn_user;
    c->opened_at = now;
    c->tokens = hub->cfg.opts.max_rate;
    c->tokens_at = now;
    c->next = hub->conns;
    hub->conns = c;
    hub->n_conns++;
    if (peer) {
        snprintf(c->addr, sizeof c->addr, "%s", peer->addr ? peer->addr : "");
        admit(hub, c, peer, now);
    }
    return c;
}

bool lc_token_equal(const char *a, const char *b)
{
    /* Walk the full capacity whatever the contents, so that the time does
     * not tell how many leading characters matched. */
    size_t na = strlen(a), nb = strlen(b);
    unsigned diff = (unsigned)(na ^ nb);
    for (size_t i = 0; i < LC_WIRE_TOKEN_MAX; i++) {
        unsigned char ca = i < na ? (unsigned char)a[i] : 0;
        unsigned char cb = i < nb ? (unsigned char)b[i] : 0;
        diff |= (unsigned)(ca ^ cb);
    }
    return diff == 0 && na <= LC_WIRE_TOKEN_MAX;
}

static bool token_ok(bool needed, const char *want, const lc_wire_hello *h)
{
    if (!needed)
        return true;
    return lc_token_equal(want, h->has_token ? h->token : "") && h->has_token;
}

static void send_welcome(lc_hub *hub, lc_conn *c, const lc_wire_hello *h, bool resumed,
                         double now)
{
    lc_wire_welcome w;
    memset(&w, 0, sizeof w);
    w.role = h->role;
    snprintf(w.robot, sizeof w.robot, "%s", h->robot);
    w.watchdog_ms = hub->cfg.opts.watchdog_ms;
    w.max_message = hub->cfg.opts.max_message;
    w.max_beams = hub->cfg.opts.max_beams;
    w.max_points = hub->cfg.opts.max_points;
    w.view_hz = hub->cfg.opts.view_hz;
    w.resumed = resumed;
    w.grace_ms = hub->cfg.opts.grace_ms;
    w.link_timeout_ms = hub->cfg.opts.link_timeout_ms;
    lc_hub_send_encoded(hub, c, lc_wire_encode_welcome(&hub->text, &w), now);
}

void lc_hub_hello(lc_hub *hub, lc_conn *c, const lc_wire_hello *h, double now)
{
    bool robot = h->role == LC_ROLE_ROBOT;
    if (!token_ok(robot ? hub->need_robot_token : hub->need_viewer_token,
                  robot ? hub->robot_token : hub->viewer_token, h)) {
        lc_log(LC_LOG_WARN, "%s hello for '%s' refused: wrong or missing token",
               robot ? "robot" : "viewer", h->robot);
        lc_hub_error_close(hub, c, LC_WIRE_UNAUTHORIZED, now, "hello.token: wrong or missing");
        return;
    }
    if (!robot) {
        c->role = ROLE_VIEWER;
        hub->n_viewers++;
        snprintf(c->watch, sizeof c->watch, "%s", h->robot);
        lc_hub_mark_views_dirty(hub);
        lc_log(LC_LOG_INFO, "viewer connected (watching %s)", h->robot[0] ? h->robot : "all");
        lc_hub_heard(hub, c, now);
        send_welcome(hub, c, h, false, now);
        return;
    }
    bot *b = lc_hub_find_bot(hub, h->robot);
    if (b && b->conn && !b->conn->closing && !hub->need_robot_token) {
        char text[160];
        snprintf(text, sizeof text, "hello.robot: '%s' is connected already (a link that went silent "
                 "lets the name go within %d ms)", h->robot, hub->cfg.opts.link_timeout_ms);
        lc_log(LC_LOG_WARN, "second connection for robot %s refused", h->robot);
        lc_hub_error_close(hub, c, LC_WIRE_NAME_TAKEN, now, text);
        return;
    }
    if (b) {
        lc_hub_bot_resume(hub, b, c, now);
    } else if ((c->bot = lc_hub_bot_new(hub, c, h->robot)) != NULL) {
        lc_log(LC_LOG_INFO, "robot %s connected", h->robot);
    } else {
        lc_hub_error_close(hub, c, LC_WIRE_INTERNAL, now, "server: out of memory");
        return;
    }
    c->role = ROLE_ROBOT;
    lc_hub_heard(hub, c, now);
    send_welcome(hub, c, h, b != NULL, now);
}
