/*
 * wsclient.c - see wsclient.h. libwebsockets 4.1 shapes it (docs/LIBNOTES.md): a
 * context with no listening port; lws_write only inside the WRITEABLE
 * callback, one message per callback, on a buffer with LWS_PRE bytes in
 * front (so outgoing messages wait in our own queue); received messages
 * reassembled from fragments; deadlines are one lws_sul timer that only
 * wakes lws_service.
 */
#include "wsclient.h"

#include <libwebsockets.h>
#include <limits.h>
#include <math.h>
#include <poll.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "clock_mono.h"
#include "codec.h"

/* One queued message; outgoing text starts at bytes + LWS_PRE. */
typedef struct node {
    struct node *next;
    size_t len;
    double rx_us;
    char bytes[];
} node;

typedef struct fifo {
    node *head, *tail;
} fifo;

struct lc_wsclient {
    struct lws_context *ctx;
    struct lws *wsi;
    lws_sorted_usec_list_t wake;
    fifo out, in;
    node *current;  /* the message the last poll returned */
    char *rx;       /* reassembly of the message being received */
    size_t rx_len;
    int rx_cap;
    bool established, closed, want_close;
    volatile sig_atomic_t interrupted;
    char reason[256];
};

static void push(fifo *q, node *n)
{
    n->next = NULL;
    if (q->tail)
        q->tail->next = n;
    else
        q->head = n;
    q->tail = n;
}

static node *pop(fifo *q)
{
    node *n = q->head;
    if (n) {
        q->head = n->next;
        if (!q->head)
            q->tail = NULL;
    }
    return n;
}

static void drain(fifo *q)
{
    node *n;
    while ((n = pop(q)))
        free(n);
}

int lc_ws_url_parse(const char *text, lc_ws_url *out, char *err, size_t n)
{
    memset(out, 0, sizeof *out);
    if (strncmp(text, "ws://", 5) != 0) {
        snprintf(err, n, "%s: not a ws://HOST:PORT address", text);
        return -1;
    }
    const char *h = text + 5, *slash = strchr(h, '/');
    const char *end = slash ? slash : h + strlen(h);
    const char *colon = memchr(h, ':', (size_t)(end - h));
    size_t hl = colon ? (size_t)(colon - h) : (size_t)(end - h);
    if (hl == 0 || hl >= sizeof out->host) {
        snprintf(err, n, "%s: no host", text);
        return -1;
    }
    memcpy(out->host, h, hl);
    long port = 7640;
    if (colon) {
        char *pe = NULL;
        port = strtol(colon + 1, &pe, 10);
        if (pe == colon + 1 || pe != end || port < 1 || port > 65535) {
            snprintf(err, n, "%s: port is not 1 to 65535", text);
            return -1;
        }
    }
    out->port = (int)port;
    if (strlen(slash ? slash : "/") >= sizeof out->path) {
        snprintf(err, n, "%s: path too long", text);
        return -1;
    }
    snprintf(out->path, sizeof out->path, "%s", slash ? slash : "/");
    return 0;
}

/* ----------------------------------------------------------- callbacks */

static void closed_because(lc_wsclient *c, const char *fmt, const char *arg)
{
    if (!c->reason[0])
        snprintf(c->reason, sizeof c->reason, fmt, arg);
    c->closed = true;
    c->wsi = NULL;
}

static int received(lc_wsclient *c, struct lws *wsi, const void *in, size_t len)
{
    if (lws_is_first_fragment(wsi))
        c->rx_len = 0;
    if (c->rx_len + len + 1 > INT_MAX ||
        LC_GROW(NULL, c->rx, c->rx_cap, (int)(c->rx_len + len + 1)) < 0)
        return -1;
    memcpy(c->rx + c->rx_len, in, len);
    c->rx_len += len;
    if (!lws_is_final_fragment(wsi))
        return 0;
    node *n = malloc(sizeof *n + c->rx_len + 1);
    if (!n)
        return -1;
    n->len = c->rx_len;
    n->rx_us = lc_mono_us();
    memcpy(n->bytes, c->rx, c->rx_len);
    n->bytes[c->rx_len] = '\0';
    push(&c->in, n);
    return 0;
}

static int writeable(lc_wsclient *c, struct lws *wsi)
{
    node *n = pop(&c->out);
    if (!n) {
        if (!c->want_close)
            return 0;
        lws_close_reason(wsi, LWS_CLOSE_STATUS_NORMAL, (unsigned char *)"bye", 3);
        return -1;
    }
    int w = lws_write(wsi, (unsigned char *)n->bytes + LWS_PRE, n->len, LWS_WRITE_TEXT);
    free(n);
    if (w < 0)
        return -1;
    if (c->out.head || c->want_close)
        lws_callback_on_writable(wsi);
    return 0;
}

/* The peer's close frame: two bytes of status, then its reason. */
static void peer_closed(lc_wsclient *c, const unsigned char *in, size_t len)
{
    int status = len >= 2 ? (in[0] << 8) | in[1] : 1005;
    int rl = len > 2 ? (int)(len - 2) : 0;
    snprintf(c->reason, sizeof c->reason, "the server closed the connection (%d%s%.*s)", status,
             rl ? ": " : "", rl, (const char *)in + 2);
}

static int callback(struct lws *wsi, enum lws_callback_reasons reason, void *user, void *in,
                    size_t len)
{
    lc_wsclient *c = lws_context_user(lws_get_context(wsi));
    (void)user;
    if (!c)
        return 0;
    switch (reason) {
    case LWS_CALLBACK_CLIENT_ESTABLISHED:
        c->established = true;
        if (c->out.head)
            lws_callback_on_writable(wsi);
        return 0;
    case LWS_CALLBACK_CLIENT_CONNECTION_ERROR:
        closed_because(c, "cannot connect: %s", in ? (const char *)in : "unknown error");
        return 0;
    case LWS_CALLBACK_CLIENT_RECEIVE:
        return received(c, wsi, in, len);
    case LWS_CALLBACK_CLIENT_WRITEABLE:
        return writeable(c, wsi);
    case LWS_CALLBACK_WS_PEER_INITIATED_CLOSE:
        peer_closed(c, in, len);
        return 0;
    case LWS_CALLBACK_CLIENT_CLOSED:
        closed_because(c, "%s", "the connection was lost");
        return 0;
    default:
        return 0;
    }
}

static const struct lws_protocols protocols[] = {
    {LC_WIRE_PROTOCOL, callback, 0, 65536, 0, NULL, 0},
    {NULL, NULL, 0, 0, 0, NULL, 0},
};

static void on_wake(lws_sorted_usec_list_t *sul) { (void)sul; }

static void quiet_log(int level, const char *line)
{
    (void)level;
    (void)line;
}

/* ---------------------------------------------------------------- API */

/*
 * Waits until deadline_us at the latest for the socket to have something to
 * read, or, while a message waits to go out (ours or a partial write inside
 * lws), to take more: ppoll's microsecond resolution. Returns at once when
 * lws has work of its own ("forced service").
 */
static void wait_socket(lc_wsclient *c, double deadline_us)
{
    int fd = c->wsi ? (int)lws_get_socket_fd(c->wsi) : -1;
    double us = deadline_us - lc_mono_us();
    if (fd < 0 || us <= 0 || lws_service_adjust_timeout(c->ctx, 1, 0) == 0)
        return;
    bool sending = c->out.head || lws_partial_buffered(c->wsi);
    struct pollfd p = {.fd = fd, .events = (short)(POLLIN | (sending ? POLLOUT : 0))};
    struct timespec ts = {(time_t)(us / 1e6), (long)fmod(us, 1e6) * 1000};
    (void)ppoll(&p, 1, &ts, NULL);
}

/*
 * One turn of the loop, woken at deadline_us at the latest. lws_service's
 * own wait has millisecond resolution (and lws runs ripe timers before it
 * computes it, so a wake timer due already would leave poll waiting for the
 * next packet): with under a millisecond left the turn services what is
 * ready without waiting, then waits on the socket itself to the microsecond.
 * Not a busy loop: the peer may share this machine's cores.
 */
static void service(lc_wsclient *c, double deadline_us)
{
    double us = deadline_us - lc_mono_us();
    if (us < 1000) {
        lws_service(c->ctx, -1);
        if (!c->in.head)
            wait_socket(c, deadline_us);
        return;
    }
    lws_sul_schedule(c->ctx, 0, &c->wake, on_wake, (lws_usec_t)us);
    lws_service(c->ctx, 0);
}

lc_wsclient *lc_wsclient_open(const lc_ws_url *url, double timeout_s, char *err, size_t n)
{
    lc_wsclient *c = calloc(1, sizeof *c);
    if (!c) {
        snprintf(err, n, "out of memory");
        return NULL;
    }
    lws_set_log_level(LLL_ERR, quiet_log);
    struct lws_context_creation_info info;
    memset(&info, 0, sizeof info);
    info.port = CONTEXT_PORT_NO_LISTEN;
    info.protocols = protocols;
    info.user = c;
    c->ctx = lws_create_context(&info);
    if (!c->ctx) {
        free(c);
        snprintf(err, n, "cannot create a websocket context");
        return NULL;
    }
    char host[300];
    snprintf(host, sizeof host, "%s:%d", url->host, url->port);
    struct lws_client_connect_info ci;
    memset(&ci, 0, sizeof ci);
    ci.context = c->ctx;
    ci.address = url->host;
    ci.port = url->port;
    ci.path = url->path;
    ci.host = host;
    ci.origin = host;
    ci.protocol = LC_WIRE_PROTOCOL;
    ci.pwsi = &c->wsi;
    if (!lws_client_connect_via_info(&ci))
        closed_because(c, "%s", "cannot start connecting");
    double deadline = lc_mono_us() + timeout_s * 1e6;
    while (!c->established && !c->closed && !c->interrupted && lc_mono_us() < deadline)
        service(c, deadline);
    if (!c->established) {
        snprintf(err, n, "ws://%s%s: %s", host, url->path,
                 c->closed ? c->reason : (c->interrupted ? "interrupted" : "no answer in time"));
        lc_wsclient_close(c, 0);
        return NULL;
    }
    return c;
}

int lc_wsclient_send(lc_wsclient *c, const char *text, size_t len)
{
    if (c->closed || c->want_close)
        return -1;
    node *n = malloc(sizeof *n + LWS_PRE + len);
    if (!n)
        return -1;
    n->len = len;
    memcpy(n->bytes + LWS_PRE, text, len);
    push(&c->out, n);
    if (c->wsi && c->established)
        lws_callback_on_writable(c->wsi);
    return 0;
}

int lc_wsclient_poll(lc_wsclient *c, double deadline_us, const char **text, size_t *len,
                     double *rx_us)
{
    free(c->current);
    c->current = NULL;
    bool once = false; /* a late caller still gets what has arrived */
    for (;;) {
        if ((c->current = pop(&c->in))) {
            *text = c->current->bytes;
            *len = c->current->len;
            if (rx_us)
                *rx_us = c->current->rx_us;
            return 1;
        }
        if (c->closed)
            return -1;
        if (c->interrupted || (once && lc_mono_us() >= deadline_us))
            return 0;
        once = true;
        service(c, deadline_us);
    }
}

const char *lc_wsclient_reason(const lc_wsclient *c) { return c->closed ? c->reason : ""; }

void lc_wsclient_interrupt(lc_wsclient *c)
{
    if (!c)
        return;
    c->interrupted = 1;
    lws_cancel_service(c->ctx);
}

void lc_wsclient_close(lc_wsclient *c, double timeout_s)
{
    if (!c)
        return;
    if (c->wsi && !c->closed) {
        c->want_close = true;
        lws_callback_on_writable(c->wsi);
        double deadline = lc_mono_us() + timeout_s * 1e6;
        while (!c->closed && lc_mono_us() < deadline)
            service(c, deadline);
    }
    lws_sul_schedule(c->ctx, 0, &c->wake, on_wake, LWS_SET_TIMER_USEC_CANCEL);
    lws_context_destroy(c->ctx);
    drain(&c->out);
    drain(&c->in);
    free(c->current);
    free(c->rx);
    free(c);
}
