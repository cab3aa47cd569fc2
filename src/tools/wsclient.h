/*
 * wsclient.h - a small websocket client (libwebsockets) for the tools that
 * talk to a running `lacuna serve`: `lacuna sim --connect` and
 * `lacuna bench --connect`. One connection per client, subprotocol
 * lacuna.v2, text messages only, no permessage-deflate (docs/LIBNOTES.md).
 *
 * Single-threaded and pull-driven: the caller queues messages with
 * lc_wsclient_send and runs the event loop through lc_wsclient_poll, which
 * returns one received message at a time or when its deadline passes.
 * Times are lc_mono_us() microseconds (monotonic). Messages are copied in
 * both directions; a received message stays valid until the next poll.
 * Only lc_wsclient_interrupt may be called from a signal handler.
 */
#ifndef LC_WSCLIENT_H
#define LC_WSCLIENT_H

#include <stdbool.h>
#include <stddef.h>

typedef struct lc_wsclient lc_wsclient;

/* ws://HOST:PORT[/PATH]; HOST a name or IPv4 address. */
typedef struct lc_ws_url {
    char host[256];
    int port;
    char path[256]; /* "/" when absent */
} lc_ws_url;

/* 0, or -1 with a one-line reason in err. */
int lc_ws_url_parse(const char *text, lc_ws_url *out, char *err, size_t n);

/*
 * Connects and waits for the websocket handshake up to timeout_s. NULL on
 * failure with a one-line reason in err (refused, no such host, no
 * lacuna.v2 subprotocol, ...).
 */
lc_wsclient *lc_wsclient_open(const lc_ws_url *url, double timeout_s, char *err, size_t n);

/* Queues one text message (copied); 0, or -1 when closed or out of memory. */
int lc_wsclient_send(lc_wsclient *c, const char *text, size_t len);

/*
 * Runs the loop until a message has arrived (1: *text, *len, *rx_us its
 * arrival time; NUL-terminated), deadline_us passes or the client was
 * interrupted (0), or the connection is closed (-1: see lc_wsclient_reason).
 * rx_us may be NULL.
 */
int lc_wsclient_poll(lc_wsclient *c, double deadline_us, const char **text, size_t *len,
                     double *rx_us);

/* Why the connection closed ("" while open). */
const char *lc_wsclient_reason(const lc_wsclient *c);

/* Async-signal-safe: makes a pending or the next poll return 0 at once. */
void lc_wsclient_interrupt(lc_wsclient *c);

/* Sends what is queued, a normal close (1000), waits up to timeout_s for
 * the peer, then frees everything. NULL is fine. */
void lc_wsclient_close(lc_wsclient *c, double timeout_s);

#endif
