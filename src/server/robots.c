/*
 * robots.c - the hub (see robots.h): hello and roles, one session per robot
 * name, one setpoint per accepted frame, events, the watchdog, throttled
 * shared views, bounded queues and recording.
 *
 * Time is the server's monotonic clock in seconds; frame stamps are only
 * used for the control period dt. Every rejected message gets an error
 * reply; only a failed hello, flooding, a full reply queue, a hello timeout
 * and shutdown close a connection after their error (an oversize message
 * closes at once with 1009).
 */
#include "robots.h"

#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "codec.h"
#include "log.h"
#include "recorder.h"

/* A reference-counted outgoing message; text at bytes + headroom. */
typedef struct msg {
    int refs;
    unsigned long robot; /* a view: the id of the robot it shows; 0 otherwise */
    size_t len;
    char *text;
    char bytes[];
} msg;

typedef struct queue {
    msg **items;
    int cap, head, count;
} queue;

typedef enum conn_role { ROLE_NONE = 0, ROLE_ROBOT, ROLE_VIEWER } conn_role;

typedef struct bot bot;

struct lc_conn {
    lc_conn *next;
    void *user;
    conn_role role;
    bot *bot;                     /* ROLE_ROBOT */
    char addr[48];                /* client address, "" unknown */
    char watch[LC_WIRE_NAME_MAX + 1]; /* ROLE_VIEWER: "" every robot */
    double opened_at;
    /* reassembly of the message being received */
    char *rx;
    size_t rx_len;
    int rx_cap; /* grown by lc_grow; messages are capped far below INT_MAX */
    size_t rx_count; /* bytes of the current message, kept or not */
    bool rx_binary;
    /* flood control: a token bucket of max_rate messages per second */
    double tokens, tokens_at;
    queue replies, views;
    bool paused; /* receive flow: not read until its replies drain (lc_conn_reading) */
    unsigned warned_ignored; /* message types logged for unknown keys (once each) */
    bool closing;
    double close_at; /* kill when the peer has not let us close by then */
    int close_status;
    char close_reason[64];
};

struct bot {
    bot *next;
    unsigned long id;     /* unique in the hub's life: tags this robot's views */
    char name[LC_WIRE_NAME_MAX + 1];
    lc_conn *conn;
    lc_session *core;
    lc_robot desc;
    lc_route route;
    bool has_route;
    bool has_frame;       /* at least one accepted frame */
    int64_t seq;          /* of the last accepted frame */
    double stamp;
    lc_pose pose;
    lc_plan_result result;
    double plan_max_us;   /* the longest plan since the last view (0: none) */
    lc_wire_setpoint last_sp;
    bool has_sp;
    double watchdog_at;   /* INFINITY: not armed */
    double view_at;       /* earliest time of the next view */
    bool view_dirty;
    lc_recorder rec;
    bool rec_failed_unsent; /* recording stopped: the robot is not told yet */
};

struct lc_hub {
    lc_hub_config cfg;
    char robot_token[LC_WIRE_TOKEN_MAX + 1];
    char viewer_token[LC_WIRE_TOKEN_MAX + 1];
    bool need_robot_token, need_viewer_token;
    lc_plan_config plan;
    lc_control control; /* how frames become steps (the options' period, dt_min, ...) */
    lc_wire_limits limits;
    lc_wire_buffers buf;
    lc_wire_text text;
    lc_wire_msg in; /* large (a route): one per hub, not on the stack */
    lc_conn *conns;
    int n_conns;
    bot *bots;
    int n_viewers;
    long views_dropped;
    unsigned long next_bot_id;
};

/* ------------------------------------------------------------ messages */

static msg *msg_new(const lc_hub *hub, const char *text, size_t len)
{
    msg *m = malloc(sizeof *m + hub->cfg.headroom + len + 1);
    if (!m)
        return NULL;
    m->refs = 1;
    m->robot = 0;
    m->len = len;
    m->text = m->bytes + hub->cfg.headroom;
    memcpy(m->text, text, len);
    m->text[len] = '\0';
    return m;
}

static void msg_unref(msg *m)
{
    if (m && --m->refs == 0)
        free(m);
}

static int queue_init(queue *q, int cap)
{
    q->items = calloc((size_t)cap, sizeof *q->items);
    q->cap = cap;
    q->head = q->count = 0;
    return q->items ? 0 : -1;
}

static void queue_push(queue *q, msg *m)
{
    q->items[(q->head + q->count) % q->cap] = m;
    q->count++;
}

static msg *queue_front(const queue *q) { return q->count ? q->items[q->head] : NULL; }

static void queue_drop_front(queue *q)
{
    msg_unref(q->items[q->head]);
    q->head = (q->head + 1) % q->cap;
    q->count--;
}

/* Remove the k-th item from the front (0: the front) and release it. */
static void queue_remove(queue *q, int k)
{
    msg_unref(q->items[(q->head + k) % q->cap]);
    for (int i = k; i + 1 < q->count; i++)
        q->items[(q->head + i) % q->cap] = q->items[(q->head + i + 1) % q->cap];
    q->count--;
}

/* Twice the room, items kept in order; -1 when out of memory. */
static int queue_grow(queue *q)
{
    msg **items = calloc((size_t)q->cap * 2, sizeof *items);
    if (!items)
        return -1;
    for (int i = 0; i < q->count; i++)
        items[i] = q->items[(q->head + i) % q->cap];
    free(q->items);
    q->items = items;
    q->head = 0;
    q->cap *= 2;
    return 0;
}

static void queue_free(queue *q)
{
    while (q->count)
        queue_drop_front(q);
    free(q->items);
    q->items = NULL;
}

/* --------------------------------------------------------- connections */

static void wake(lc_hub *hub, lc_conn *c) { hub->cfg.io.wake(hub->cfg.io.data, c->user); }

static void start_close(lc_hub *hub, lc_conn *c, int status, const char *reason, double now)
{
    if (c->closing)
        return;
    c->closing = true;
    c->close_status = status;
    c->close_at = now + 2.0;
    snprintf(c->close_reason, sizeof c->close_reason, "%s", reason);
    wake(hub, c);
}

/*
 * Queue a reply. The reply queue keeps one slot in reserve: when the other
 * slots are full the peer is not reading, so the last slot carries an error
 * and the connection closes (a setpoint is never dropped silently).
 */
static void send_text(lc_hub *hub, lc_conn *c, const char *text, size_t len, double now)
{
    if (c->closing)
        return;
    if (c->replies.count >= c->replies.cap - 1) {
        static const char full[] =
            "{\"type\":\"error\",\"code\":\"rate_limited\",\"message\":"
            "\"connection: replies are not being read (send queue full); closing\"}";
        msg *m = msg_new(hub, full, sizeof full - 1);
        if (m)
            queue_push(&c->replies, m);
        lc_log(LC_LOG_WARN, "%s %s: send queue full, closing",
               c->role == ROLE_ROBOT ? "robot" : "viewer", c->bot ? c->bot->name : c->watch);
        start_close(hub, c, LC_CLOSE_POLICY, "send queue full", now);
        return;
    }
    msg *m = msg_new(hub, text, len);
    if (!m) {
        start_close(hub, c, LC_CLOSE_INTERNAL, "out of memory", now);
        return;
    }
    queue_push(&c->replies, m);
    wake(hub, c);
}

static void send_encoded(lc_hub *hub, lc_conn *c, int rc, double now)
{
    if (rc == 0)
        send_text(hub, c, hub->text.s, (size_t)hub->text.len, now);
    else
        start_close(hub, c, LC_CLOSE_INTERNAL, "out of memory", now);
}

static void send_error(lc_hub *hub, lc_conn *c, const lc_wire_error *err, double now)
{
    lc_log(LC_LOG_DEBUG, "error to %s: %s %s", c->bot ? c->bot->name : "client",
           lc_wire_code_name(err->code), err->message);
    send_encoded(hub, c, lc_wire_encode_error(&hub->text, err), now);
}

static void send_error_close(lc_hub *hub, lc_conn *c, const lc_wire_error *err, double now)
{
    send_error(hub, c, err, now);
    start_close(hub, c, LC_CLOSE_POLICY, lc_wire_code_name(err->code), now);
}

static void error_close(lc_hub *hub, lc_conn *c, lc_wire_code code, double now, const char *text);

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
        error_close(hub, c, LC_WIRE_FORBIDDEN, now, text);
        return;
    }
    int n = c->addr[0] ? connections_from(hub, c->addr) - 1 : 0;
    if (n >= o->max_per_address) {
        lc_log(LC_LOG_WARN, "websocket from %s refused: %d connections from it (max_per_address)",
               c->addr, n);
        snprintf(text, sizeof text,
                 "connection: %d connections from %s already (max_per_address %d)", n, c->addr,
                 o->max_per_address);
        error_close(hub, c, LC_WIRE_TOO_MANY_CONNECTIONS, now, text);
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
    /* +1: the reserved slot for the closing error (send_text) */
    if (queue_init(&c->replies, hub->cfg.opts.send_queue + 1) < 0 ||
        queue_init(&c->views, hub->cfg.opts.viewer_queue) < 0) {
        queue_free(&c->replies);
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

int lc_hub_connections(const lc_hub *hub) { return hub->n_conns; }

char *lc_conn_peek(lc_conn *conn, size_t *len)
{
    msg *m = queue_front(&conn->replies);
    if (!m)
        m = queue_front(&conn->views);
    if (!m)
        return NULL;
    *len = m->len;
    return m->text;
}

void lc_conn_pop(lc_conn *conn)
{
    if (conn->replies.count)
        queue_drop_front(&conn->replies);
    else if (conn->views.count)
        queue_drop_front(&conn->views);
}

bool lc_conn_reading(lc_conn *conn)
{
    int room = conn->replies.cap - 1; /* send_queue */
    if (!conn->paused && conn->replies.count >= room / 2)
        conn->paused = true;
    else if (conn->paused && conn->replies.count <= room / 4)
        conn->paused = false;
    return !conn->paused;
}

bool lc_conn_closing(const lc_conn *conn) { return conn->closing; }

int lc_conn_close_status(const lc_conn *conn, const char **reason)
{
    if (reason)
        *reason = conn->close_reason;
    return conn->close_status ? conn->close_status : LC_CLOSE_NORMAL;
}

/* ------------------------------------------------------------- robots */

static bot *find_bot(const lc_hub *hub, const char *name)
{
    for (bot *b = hub->bots; b; b = b->next)
        if (strcmp(b->name, name) == 0)
            return b;
    return NULL;
}

static bot *bot_new(lc_hub *hub, lc_conn *c, const char *name)
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
    b->next = hub->bots;
    hub->bots = b;
    return b;
}

static void bot_free(lc_hub *hub, bot *b)
{
    for (bot **p = &hub->bots; *p; p = &(*p)->next) {
        if (*p == b) {
            *p = b->next;
            break;
        }
    }
    lc_recorder_close(&b->rec);
    lc_session_free(b->core);
    free(b);
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
    send_error(hub, b->conn, &e, now);
}

/* Send what hub->text holds to the robot and record it. */
static void send_to_robot(lc_hub *hub, bot *b, int rc, double now)
{
    if (rc == 0)
        record(b, hub->text.s, (size_t)hub->text.len);
    send_encoded(hub, b->conn, rc, now);
    tell_recording_failed(hub, b, now);
}

void lc_hub_close(lc_hub *hub, lc_conn *conn)
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
    if (conn->bot) {
        lc_log(LC_LOG_INFO, "robot %s disconnected", conn->bot->name);
        bot_free(hub, conn->bot);
    }
    queue_free(&conn->replies);
    queue_free(&conn->views);
    free(conn->rx);
    free(conn);
}

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
    while (hub->conns)
        lc_hub_close(hub, hub->conns);
    lc_wire_buffers_free(&hub->buf);
    lc_wire_text_free(&hub->text);
    free(hub);
}

long lc_hub_views_dropped(const lc_hub *hub) { return hub->views_dropped; }

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

/* --------------------------------------------------------------- hello */

static void error_close(lc_hub *hub, lc_conn *c, lc_wire_code code, double now, const char *text)
{
    lc_wire_error e = {0};
    lc_wire_error_set(&e, code, "%s", text);
    send_error_close(hub, c, &e, now);
}

static bool token_ok(bool needed, const char *want, const lc_wire_hello *h)
{
    if (!needed)
        return true;
    return lc_token_equal(want, h->has_token ? h->token : "") && h->has_token;
}

static void send_welcome(lc_hub *hub, lc_conn *c, const lc_wire_hello *h, double now)
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
    send_encoded(hub, c, lc_wire_encode_welcome(&hub->text, &w), now);
}

static void mark_all_dirty(lc_hub *hub)
{
    for (bot *b = hub->bots; b; b = b->next)
        b->view_dirty = true;
}

static void hello(lc_hub *hub, lc_conn *c, const lc_wire_hello *h, double now)
{
    bool robot = h->role == LC_ROLE_ROBOT;
    if (!token_ok(robot ? hub->need_robot_token : hub->need_viewer_token,
                  robot ? hub->robot_token : hub->viewer_token, h)) {
        lc_log(LC_LOG_WARN, "%s hello for '%s' refused: wrong or missing token",
               robot ? "robot" : "viewer", h->robot);
        error_close(hub, c, LC_WIRE_UNAUTHORIZED, now, "token: wrong or missing");
        return;
    }
    if (!robot) {
        c->role = ROLE_VIEWER;
        hub->n_viewers++;
        snprintf(c->watch, sizeof c->watch, "%s", h->robot);
        mark_all_dirty(hub);
        lc_log(LC_LOG_INFO, "viewer connected (watching %s)", h->robot[0] ? h->robot : "all");
        send_welcome(hub, c, h, now);
        return;
    }
    if (find_bot(hub, h->robot)) {
        char text[128];
        snprintf(text, sizeof text, "robot: '%s' is connected already", h->robot);
        lc_log(LC_LOG_WARN, "second connection for robot %s refused", h->robot);
        error_close(hub, c, LC_WIRE_NAME_TAKEN, now, text);
        return;
    }
    c->bot = bot_new(hub, c, h->robot);
    if (!c->bot) {
        error_close(hub, c, LC_WIRE_INTERNAL, now, "server: out of memory");
        return;
    }
    c->role = ROLE_ROBOT;
    lc_log(LC_LOG_INFO, "robot %s connected", h->robot);
    send_welcome(hub, c, h, now);
}

/* ------------------------------------------------------------- frames */

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

static void send_events(lc_hub *hub, bot *b, double now)
{
    for (int i = 0; i < b->result.n_events; i++) {
        lc_wire_event ev = {.ev = b->result.events[i], .seq = b->seq};
        send_to_robot(hub, b, lc_wire_encode_event(&hub->text, &ev), now);
    }
}

static void frame(lc_hub *hub, bot *b, const lc_frame *f, double now)
{
    start_recording(hub, b);
    if (lc_recorder_is_open(&b->rec) && lc_wire_encode_frame(&hub->text, f) == 0)
        record(b, hub->text.s, (size_t)hub->text.len);
    int rc = lc_session_drive(b->core, f, &b->result, &b->last_sp);
    b->plan_max_us = fmax(b->plan_max_us, b->result.total_us);
    b->has_frame = true;
    b->seq = f->seq;
    b->stamp = f->stamp;
    b->pose = f->pose;
    b->has_sp = true;
    send_to_robot(hub, b, lc_wire_encode_setpoint(&hub->text, &b->last_sp), now);
    if (rc < 0) {
        lc_wire_error e = {0};
        lc_wire_error_set(&e, LC_WIRE_INTERNAL, "frame: out of memory while planning (stop sent)");
        e.has_seq = true;
        e.seq = f->seq;
        send_error(hub, b->conn, &e, now);
    }
    send_events(hub, b, now);
    b->watchdog_at = now + hub->cfg.opts.watchdog_ms / 1000.0;
    b->view_dirty = true;
}

static void robot_message(lc_hub *hub, lc_conn *c, const lc_wire_msg *m, double now)
{
    bot *b = c->bot;
    switch (m->type) {
    case LC_MSG_ROBOT:
        b->desc = m->u.robot;
        lc_session_set_robot(b->core, &b->desc);
        if (lc_wire_encode_robot(&hub->text, &b->desc) == 0)
            record(b, hub->text.s, (size_t)hub->text.len);
        b->view_dirty = true;
        break;
    case LC_MSG_ROUTE:
        b->route = m->u.route;
        b->has_route = true;
        lc_session_set_route(b->core, &b->route);
        if (lc_wire_encode_route(&hub->text, &b->route) == 0)
            record(b, hub->text.s, (size_t)hub->text.len);
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

/* ------------------------------------------------------------ receiving */

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
    send_error(hub, c, &e, now);
}

/*
 * Unknown keys are ignored (PROTOCOL.md), but a typo ("margn") would leave a
 * default in force without a word: log it, once per connection and message
 * type. A frame with an unknown key also misses the codec's fast path.
 */
static void log_ignored(lc_conn *c, const lc_wire_msg *m, const lc_wire_error *err)
{
    if (!err->ignored || (c->warned_ignored & (1u << m->type)))
        return;
    c->warned_ignored |= 1u << m->type;
    bool frame = m->type == LC_MSG_SCAN || m->type == LC_MSG_POINTS;
    char text[LC_WIRE_KEY_SHOWN + 64];
    lc_wire_ignored_text(err, text, sizeof text);
    lc_log(LC_LOG_WARN, "%s %s: %s message: %s%s (said once per connection and message type)",
           c->bot ? "robot" : "client", c->bot ? c->bot->name : (c->addr[0] ? c->addr : "?"),
           lc_msg_type_name(m->type), text,
           frame ? "; frames with unknown keys take the slower decoder" : "");
}

static void message(lc_hub *hub, lc_conn *c, const char *text, size_t len, double now)
{
    lc_wire_error err;
    lc_wire_msg *m = &hub->in;
    int rc = lc_wire_decode(text, len, &hub->limits, &hub->buf, m, &err);
    if (rc == 0)
        log_ignored(c, m, &err);
    if (c->role == ROLE_NONE) {
        if (rc < 0)
            send_error_close(hub, c, &err, now);
        else if (m->type != LC_MSG_HELLO)
            error_close(hub, c, LC_WIRE_UNAUTHORIZED, now,
                        "type: the first message must be a hello");
        else
            hello(hub, c, &m->u.hello, now);
        return;
    }
    if (rc < 0) {
        send_error(hub, c, &err, now);
        return;
    }
    const char *type = lc_msg_type_name(m->type);
    if (m->type == LC_MSG_HELLO)
        refuse(hub, c, LC_WIRE_BAD_MESSAGE, m, &err, now, "type: %s already received", type);
    else if (c->role == ROLE_VIEWER)
        refuse(hub, c, LC_WIRE_FORBIDDEN, m, &err, now, "type: a viewer may not send %s", type);
    else if (!robot_may_send(m->type))
        refuse(hub, c, LC_WIRE_FORBIDDEN, m, &err, now, "type: a robot may not send %s", type);
    else
        robot_message(hub, c, m, now);
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
        error_close(hub, c, LC_WIRE_RATE_LIMITED, now, text);
        return;
    }
    if (c->rx_binary) {
        lc_wire_error e = {0};
        lc_wire_error_set(&e, LC_WIRE_BINARY, "message: binary messages are not accepted");
        if (c->role == ROLE_NONE)
            send_error_close(hub, c, &e, now);
        else
            send_error(hub, c, &e, now);
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

/* --------------------------------------------------------------- timers */

static void watchdog(lc_hub *hub, bot *b, double now)
{
    double period = hub->cfg.opts.watchdog_ms / 1000.0;
    lc_session_stop(b->core, LC_STATE_STALE, LC_LIMIT_STALE, &b->last_sp);
    b->view_dirty = true;
    send_to_robot(hub, b, lc_wire_encode_setpoint(&hub->text, &b->last_sp), now);
    b->watchdog_at += period;
    if (b->watchdog_at <= now)
        b->watchdog_at = now + period; /* the loop was late: do not send a burst */
}

static bool watches(const lc_conn *c, const bot *b)
{
    return c->role == ROLE_VIEWER && !c->closing && (!c->watch[0] || strcmp(c->watch, b->name) == 0);
}

/*
 * A slow viewer keeps at most viewer_queue views of each robot: a new view
 * pushes out the oldest one of the same robot, never another robot's (a
 * viewer of every robot would otherwise lose whole robots when their views
 * fall due in the same tick). The queue grows to fit; it holds pointers to
 * shared views, at most viewer_queue per robot.
 */
static void push_view(lc_hub *hub, lc_conn *c, msg *m)
{
    int mine = 0, oldest = -1;
    for (int k = 0; k < c->views.count; k++) {
        if (c->views.items[(c->views.head + k) % c->views.cap]->robot == m->robot) {
            oldest = oldest < 0 ? k : oldest;
            mine++;
        }
    }
    if (mine >= hub->cfg.opts.viewer_queue) {
        queue_remove(&c->views, oldest);
        hub->views_dropped++;
    }
    if (c->views.count == c->views.cap && queue_grow(&c->views) < 0) {
        queue_drop_front(&c->views); /* out of memory: lose the oldest of any robot */
        hub->views_dropped++;
    }
    m->refs++;
    queue_push(&c->views, m);
    wake(hub, c);
}

static void broadcast_view(lc_hub *hub, bot *b, double now)
{
    b->view_dirty = false;
    bool any = false;
    for (lc_conn *c = hub->conns; c && !any; c = c->next)
        any = watches(c, b);
    if (!any)
        return;
    lc_wire_view v = {.robot = b->name, .desc = &b->desc,
                      .route = b->has_route ? &b->route : NULL,
                      .result = b->has_frame ? &b->result : NULL,
                      .pose = b->pose, .seq = b->seq, .stamp = b->stamp,
                      .setpoint = b->has_sp ? &b->last_sp : NULL,
                      .plan_us = b->has_frame ? b->result.total_us : 0.0};
    /* the longest of the frames since the previous view, the last one among them */
    v.plan_max_us = fmax(b->plan_max_us, v.plan_us);
    b->plan_max_us = 0.0;
    if (lc_wire_encode_view(&hub->text, &v) < 0)
        return;
    msg *m = msg_new(hub, hub->text.s, (size_t)hub->text.len);
    if (!m)
        return;
    m->robot = b->id;
    for (lc_conn *c = hub->conns; c; c = c->next)
        if (watches(c, b))
            push_view(hub, c, m);
    msg_unref(m);
    b->view_at = now + 1.0 / hub->cfg.opts.view_hz;
}

static void conn_timers(lc_hub *hub, lc_conn *c, double now)
{
    if (c->closing && now >= c->close_at) {
        hub->cfg.io.kill(hub->cfg.io.data, c->user);
        c->close_at = INFINITY;
    } else if (!c->closing && c->role == ROLE_NONE &&
               now >= c->opened_at + hub->cfg.opts.hello_timeout_ms / 1000.0) {
        error_close(hub, c, LC_WIRE_UNAUTHORIZED, now, "hello: none received in time");
    }
}

double lc_hub_tick(lc_hub *hub, double now)
{
    for (bot *b = hub->bots; b; b = b->next) {
        if (b->watchdog_at <= now && !b->conn->closing)
            watchdog(hub, b, now);
        if (b->view_dirty && now >= b->view_at)
            broadcast_view(hub, b, now);
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
    for (bot *b = hub->bots; b; b = b->next) {
        if (!b->has_frame || b->conn->closing)
            continue;
        lc_session_stop(b->core, LC_STATE_IDLE, LC_LIMIT_IDLE, &b->last_sp);
        send_to_robot(hub, b, lc_wire_encode_setpoint(&hub->text, &b->last_sp), now);
    }
    for (lc_conn *c = hub->conns; c; c = c->next) {
        start_close(hub, c, LC_CLOSE_GOING_AWAY, "server shutting down", now);
        c->close_at = now + hub->cfg.opts.shutdown_ms / 1000.0;
    }
}

void lc_hub_reopen(lc_hub *hub)
{
    for (bot *b = hub->bots; b; b = b->next)
        lc_recorder_reopen(&b->rec, &b->desc, &b->route);
}
