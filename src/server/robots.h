/*
 * robots.h - the hub: connections, robot sessions by name, viewers and
 * their send queues. No sockets and no clock: the server feeds it received
 * chunks and the monotonic time (s), asks it what to send next, and calls
 * lc_hub_tick at the deadline it returns (watchdog, view throttle, hello
 * timeout, forced closes). So the whole protocol is testable without a
 * network.
 *
 * Queues. Each connection has two bounded queues of outgoing messages:
 * - replies (welcome, setpoints, events, errors), never dropped: past half
 *   of send_queue the connection is not read (lc_conn_reading); when
 *   send_queue of them are pending all the same (the peer reads nothing), the
 *   hub queues one last error (rate_limited) and closes the connection
 *   rather than drop a setpoint silently;
 * - views (viewers only), at most viewer_queue per robot watched: a slow
 *   viewer loses the oldest views of a robot (superseded by newer ones),
 *   never a reply and never the latest view of another robot.
 * Replies go out before views. A view is encoded once per robot and shared
 * (reference counted) by every viewer that watches it.
 *
 * Recording: when a recording cannot be created or a write fails (a full
 * disk), recording of that robot stops, the log says why and the robot
 * gets one error recording_failed; control goes on.
 *
 * Sessions that survive a dropped link: when a robot's connection closes,
 * its session (description, route, progress, memory, the last velocity)
 * waits grace_ms for a hello under the same name, which resumes it (the
 * welcome says "resumed": true); after that it ends. While a connection
 * holds the name, another hello for it gets name_taken, unless the server
 * has a robot token: the token proves the robot, so the new connection takes
 * the session over at once and the old one is closed.
 *
 * Dead links: a robot's connection from which nothing came for a third of
 * link_timeout_ms is pinged (again every third), and closed when nothing,
 * not even a pong, came for link_timeout_ms: a link that went silent without
 * closing (a robot gone out of radio range) lets its robot's name go within
 * that bound, and its session then waits as above. A connection the hub is
 * not reading (receive flow, below) is not judged: its frames wait in TCP;
 * if it reads nothing at all, the full reply queue closes it.
 *
 * Ownership: the hub owns every lc_conn and robot session. A connection
 * lives from lc_hub_open to lc_hub_close (the transport's close callback);
 * a robot session from its first hello to grace_ms after its last
 * connection closed. Message buffers have `headroom` free bytes before the
 * text (the transport's LWS_PRE).
 */
#ifndef LC_ROBOTS_H
#define LC_ROBOTS_H

#include <stdbool.h>
#include <stddef.h>

#include "config.h"
#include "session.h"

typedef struct lc_hub lc_hub;
typedef struct lc_conn lc_conn;

typedef struct lc_hub_io {
    /* The connection has something to send or wants to close: ask the
     * transport for a writeable callback. */
    void (*wake)(void *data, void *conn_user);
    /* The connection did not close in time: drop it without ceremony. */
    void (*kill)(void *data, void *conn_user);
    void *data;
} lc_hub_io;

typedef struct lc_hub_config {
    lc_server_config opts;
    const char *robot_token;  /* NULL: robots need none */
    const char *viewer_token; /* NULL: viewers need none */
    size_t headroom;          /* bytes before every outgoing message */
    const lc_plan_config *plan; /* NULL: defaults */
    /* Times each plan (the view's plan_us, for field tests on a small
     * computer); timing never changes a result. NULL: not timed. */
    const lc_clock *clock;
    lc_hub_io io;
} lc_hub_config;

/* WebSocket close statuses the hub asks for (RFC 6455). */
enum {
    LC_CLOSE_NORMAL = 1000,
    LC_CLOSE_GOING_AWAY = 1001,
    LC_CLOSE_POLICY = 1008,
    LC_CLOSE_TOO_BIG = 1009,
    LC_CLOSE_INTERNAL = 1011,
};

/* NULL when out of memory. The tokens are copied. */
lc_hub *lc_hub_new(const lc_hub_config *cfg);
void lc_hub_free(lc_hub *hub);

/* Who opened a connection, as the handshake said (strings copied or unused after the call). */
typedef struct lc_peer {
    const char *addr;   /* client address; NULL or "": unknown (not counted per address) */
    const char *origin; /* Origin header; NULL or "": none (not a browser) */
    const char *host;   /* Host header */
} lc_peer;

/*
 * A new connection; NULL when max_connections are open (refuse it). peer
 * NULL: no admission checks (tests). A connection whose Origin is not
 * allowed (lc_origin_allowed with allow_origin) gets the error forbidden,
 * one beyond max_per_address from its address too_many_connections; both
 * are then closed (1008) without reading anything they send.
 */
lc_conn *lc_hub_open(lc_hub *hub, void *conn_user, const lc_peer *peer, double now);
/* The transport closed the connection: forget it; its robot session, if
 * any, waits grace_ms for a resume. */
void lc_hub_close(lc_hub *hub, lc_conn *conn, double now);
int lc_hub_connections(const lc_hub *hub);

/*
 * One received chunk of a message (first/final as the transport says).
 * Returns 0, or -1 when the connection must be closed at once with
 * lc_conn_close_status (an oversize message: 1009).
 */
int lc_hub_receive(lc_hub *hub, lc_conn *conn, const void *data, size_t len, bool first,
                   bool final, bool binary, double now);

/* Next message to send (headroom bytes before it are free), or NULL. */
char *lc_conn_peek(lc_conn *conn, size_t *len);
void lc_conn_pop(lc_conn *conn);
/*
 * Receive flow control: false while the transport should stop reading the
 * connection. A robot that sends faster than it reads its setpoints (a
 * burst, or a flood) fills its reply queue; at half of send_queue the hub
 * asks to stop reading it, at a quarter to read again, so its frames wait
 * in TCP's buffers (the sender is slowed, nothing is lost) instead of
 * overflowing the queue. Only a peer that reads nothing at all fills the
 * queue (then with the watchdog's stale stops) and is closed.
 */
bool lc_conn_reading(lc_conn *conn);

/*
 * Liveness: the transport calls lc_hub_heard when a pong arrives (every
 * received chunk counts by itself), and sends a ping (before the queued
 * messages) when lc_conn_take_ping returns true.
 */
void lc_hub_heard(lc_hub *hub, lc_conn *conn, double now);
bool lc_conn_take_ping(lc_conn *conn);

/* True once the connection is to be closed after its queue drained. */
bool lc_conn_closing(const lc_conn *conn);
int lc_conn_close_status(const lc_conn *conn, const char **reason);

/* Timers: do what is due at now; returns the next deadline (INFINITY: none). */
double lc_hub_tick(lc_hub *hub, double now);
double lc_hub_deadline(const lc_hub *hub);

/* Shutdown: a last stop setpoint to every robot, then close everything;
 * no session waits for a resume any more. */
void lc_hub_shutdown(lc_hub *hub, double now);
/* SIGHUP: reopen the recording files. */
void lc_hub_reopen(lc_hub *hub);

/* Views dropped for slow viewers so far (for logs and tests). */
long lc_hub_views_dropped(const lc_hub *hub);

/* Equal strings, in time that depends only on the lengths' upper bound. */
bool lc_token_equal(const char *a, const char *b);

#endif
