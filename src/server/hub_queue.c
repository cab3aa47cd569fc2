/*
 * hub_queue.c - the hub's outgoing messages (see robots.h, Queues): a
 * message is encoded once and reference counted; each connection has a
 * bounded queue of replies and one of views; a reply that does not fit
 * closes the connection rather than being dropped. Sending and closing.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "hub_internal.h"
#include "log.h"

msg *lc_hub_msg_new(const lc_hub *hub, const char *text, size_t len)
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

void lc_hub_msg_unref(msg *m)
{
    if (m && --m->refs == 0)
        free(m);
}

int lc_hub_queue_init(queue *q, int cap)
{
    q->items = calloc((size_t)cap, sizeof *q->items);
    q->cap = cap;
    q->head = q->count = 0;
    return q->items ? 0 : -1;
}

void lc_hub_queue_push(queue *q, msg *m)
{
    q->items[(q->head + q->count) % q->cap] = m;
    q->count++;
}

static msg *queue_front(const queue *q) { return q->count ? q->items[q->head] : NULL; }

void lc_hub_queue_drop_front(queue *q)
{
    lc_hub_msg_unref(q->items[q->head]);
    q->head = (q->head + 1) % q->cap;
    q->count--;
}

/* Remove the k-th item from the front (0: the front) and release it. */
void lc_hub_queue_remove(queue *q, int k)
{
    lc_hub_msg_unref(q->items[(q->head + k) % q->cap]);
    for (int i = k; i + 1 < q->count; i++)
        q->items[(q->head + i) % q->cap] = q->items[(q->head + i + 1) % q->cap];
    q->count--;
}

/* Twice the room, items kept in order; -1 when out of memory. */
int lc_hub_queue_grow(queue *q)
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

void lc_hub_queue_free(queue *q)
{
    while (q->count)
        lc_hub_queue_drop_front(q);
    free(q->items);
    q->items = NULL;
}

void lc_hub_wake(lc_hub *hub, lc_conn *c) { hub->cfg.io.wake(hub->cfg.io.data, c->user); }

void lc_hub_start_close(lc_hub *hub, lc_conn *c, int status, const char *reason, double now)
{
    if (c->closing)
        return;
    c->closing = true;
    c->close_status = status;
    c->close_at = now + 2.0;
    snprintf(c->close_reason, sizeof c->close_reason, "%s", reason);
    lc_hub_wake(hub, c);
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
        msg *m = lc_hub_msg_new(hub, full, sizeof full - 1);
        if (m)
            lc_hub_queue_push(&c->replies, m);
        lc_log(LC_LOG_WARN, "%s %s: send queue full, closing",
               c->role == ROLE_ROBOT ? "robot" : "viewer", c->bot ? c->bot->name : c->watch);
        lc_hub_start_close(hub, c, LC_CLOSE_POLICY, "send queue full", now);
        return;
    }
    msg *m = lc_hub_msg_new(hub, text, len);
    if (!m) {
        lc_hub_start_close(hub, c, LC_CLOSE_INTERNAL, "out of memory", now);
        return;
    }
    lc_hub_queue_push(&c->replies, m);
    lc_hub_wake(hub, c);
}

void lc_hub_send_encoded(lc_hub *hub, lc_conn *c, int rc, double now)
{
    if (rc == 0)
        send_text(hub, c, hub->text.s, (size_t)hub->text.len, now);
    else
        lc_hub_start_close(hub, c, LC_CLOSE_INTERNAL, "out of memory", now);
}

void lc_hub_send_error(lc_hub *hub, lc_conn *c, const lc_wire_error *err, double now)
{
    lc_log(LC_LOG_DEBUG, "error to %s: %s %s", c->bot ? c->bot->name : "client",
           lc_wire_code_name(err->code), err->message);
    lc_hub_send_encoded(hub, c, lc_wire_encode_error(&hub->text, err), now);
}

void lc_hub_send_error_close(lc_hub *hub, lc_conn *c, const lc_wire_error *err, double now)
{
    lc_hub_send_error(hub, c, err, now);
    lc_hub_start_close(hub, c, LC_CLOSE_POLICY, lc_wire_code_name(err->code), now);
}

void lc_hub_error_close(lc_hub *hub, lc_conn *c, lc_wire_code code, double now, const char *text)
{
    lc_wire_error e = {0};
    lc_wire_error_set(&e, code, "%s", text);
    lc_hub_send_error_close(hub, c, &e, now);
}

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
        lc_hub_queue_drop_front(&conn->replies);
    else if (conn->views.count)
        lc_hub_queue_drop_front(&conn->views);
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
