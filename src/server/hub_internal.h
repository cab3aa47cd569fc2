/*
 * hub_internal.h - the hub's parts, shared by its files only (the public
 * API is robots.h). One file a job:
 *   robots.c      the hub's and the connections' lifetime
 *   hub_queue.c   outgoing messages: the bounded queues, sending, closing
 *   hub_admit.c   admission (origin, per address) and the hello
 *   hub_bot.c     one robot's session: its messages, each frame's step,
 *                 the watchdog, its recording
 *   hub_rx.c      receiving: reassembly, flood control, routing a message
 *   hub_views.c   the views: throttled, encoded once, shared by viewers
 *   hub_timers.c  what is due at a time (watchdog, views, pings, dead
 *                 links, the end of a dropped session's grace), and shutdown
 *
 * Time is the server's monotonic clock in seconds; frame stamps are only
 * used for the control period dt. Every rejected message gets an error
 * reply; only a failed hello, flooding, a full reply queue, a hello timeout
 * and shutdown close a connection after their error (an oversize message
 * closes at once with 1009).
 */
#ifndef LC_HUB_INTERNAL_H
#define LC_HUB_INTERNAL_H

#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>

#include "codec.h"
#include "recorder.h"
#include "robots.h"

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
    unsigned warned;         /* warning kinds sent, 1 << lc_wire_warn (once each) */
    bool rx_frame;           /* a frame accepted on this connection: rx_seq, rx_stamp hold */
    int64_t rx_seq;          /* the last one's seq and stamp (warnings when they go back) */
    double rx_stamp;
    /* liveness (admitted connections): the last time anything came from
     * the peer (a message's chunk or a pong), and when the next ping is due */
    double heard_at, ping_at;
    bool ping_due; /* the transport is to send a ping (lc_conn_take_ping) */
    bool closing;
    double close_at; /* kill when the peer has not let us close by then */
    int close_status;
    char close_reason[64];
};

/*
 * A robot session. It outlives its connection by grace_ms: when the link
 * drops, conn becomes NULL and the session waits (expire_at) for a hello
 * under its name, which resumes it whole (the core session too, so that its
 * velocity and the rate limits go on from what the robot was last told).
 */
struct bot {
    bot *next;
    unsigned long id;     /* unique in the hub's life: tags this robot's views */
    char name[LC_WIRE_NAME_MAX + 1];
    lc_conn *conn;        /* NULL: the link dropped, the session waits for a resume */
    double expire_at;     /* conn NULL: the session ends then; INFINITY while linked */
    double dropped_at;    /* when the link last dropped */
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
    lc_block_reason blocked; /* why the patrol is blocked (its last blocked event), for views */
    double watchdog_at;   /* INFINITY: not armed */
    double view_at;       /* earliest time of the next view */
    double memory_view_at; /* earliest time of the next view that carries the memory */
    bool view_dirty;
    lc_recorder rec;
    bool rec_failed_unsent; /* recording stopped: the robot is not told yet */
    /* sensors its frames named that its description does not list, each
     * logged once (the first LC_SENSORS_MAX; then one line for the rest) */
    char unlisted[LC_SENSORS_MAX][LC_SENSOR_NAME_MAX + 1];
    int n_unlisted;
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
    int n_waiting;   /* sessions whose link dropped, within their grace */
    bool shutting;   /* lc_hub_shutdown was called: no session waits any more */
    long views_dropped;
    unsigned long next_bot_id;
};

/* hub_queue.c: messages and queues */
msg *lc_hub_msg_new(const lc_hub *hub, const char *text, size_t len); /* NULL: out of memory */
void lc_hub_msg_unref(msg *m);
int lc_hub_queue_init(queue *q, int cap); /* -1: out of memory */
void lc_hub_queue_push(queue *q, msg *m);
void lc_hub_queue_drop_front(queue *q);
void lc_hub_queue_remove(queue *q, int k);
int lc_hub_queue_grow(queue *q);
void lc_hub_queue_free(queue *q);

/* hub_queue.c: sending to a connection, closing it */
void lc_hub_wake(lc_hub *hub, lc_conn *c);
void lc_hub_start_close(lc_hub *hub, lc_conn *c, int status, const char *reason, double now);
/* What hub->text holds when rc is 0; a close for out of memory otherwise. */
void lc_hub_send_encoded(lc_hub *hub, lc_conn *c, int rc, double now);
void lc_hub_send_error(lc_hub *hub, lc_conn *c, const lc_wire_error *err, double now);
void lc_hub_send_error_close(lc_hub *hub, lc_conn *c, const lc_wire_error *err, double now);
void lc_hub_error_close(lc_hub *hub, lc_conn *c, lc_wire_code code, double now, const char *text);

/* hub_admit.c: the first message of a connection */
void lc_hub_hello(lc_hub *hub, lc_conn *c, const lc_wire_hello *h, double now);

/* hub_bot.c: robot sessions */
bot *lc_hub_find_bot(const lc_hub *hub, const char *name);
bot *lc_hub_bot_new(lc_hub *hub, lc_conn *c, const char *name); /* NULL: out of memory */
void lc_hub_bot_free(lc_hub *hub, bot *b);
/* The link dropped: keep the session for grace_ms (or end it: no grace, shutdown). */
void lc_hub_bot_drop(lc_hub *hub, bot *b, double now);
/* A hello under the name of session b: c takes it over, as it stands. */
void lc_hub_bot_resume(lc_hub *hub, bot *b, lc_conn *c, double now);
void lc_hub_robot_message(lc_hub *hub, lc_conn *c, const lc_wire_msg *m, double now);
void lc_hub_watchdog(lc_hub *hub, bot *b, double now);
void lc_hub_bot_stop(lc_hub *hub, bot *b, double now);
/* A warning message to a robot connection, once per connection and code
 * (bypass: sent even when the code was, for unknown keys, which hub_rx.c
 * says once per message type); seq < 0: none. printf-formatted message. */
void lc_hub_warn(lc_hub *hub, lc_conn *c, lc_wire_warn code, bool bypass, int64_t seq,
                 double now, const char *fmt, ...) __attribute__((format(printf, 7, 8)));

/* hub_views.c */
void lc_hub_mark_views_dirty(lc_hub *hub);
void lc_hub_broadcast_view(lc_hub *hub, bot *b, double now);

#endif
