/*
 * server.c - see server.h. libwebsockets 4.1 notes that shape this file
 * (docs/LIBNOTES.md): an IPv4 iface alone still listens on every interface
 * unless IPv6 is disabled; permessage-deflate stays off; lws_write only in
 * the WRITEABLE callback, one message per callback; timers are lws_sul,
 * and no protocol work is done after lws_service returns except reacting
 * to the signal flags.
 */
#include "server.h"

#include <arpa/inet.h>
#include <errno.h>
#include <libwebsockets.h>
#include <limits.h>
#include <math.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/socket.h>

#include "clock_mono.h"
#include "codec.h"
#include "log.h"
#include "robots.h"
#include "signals.h"

typedef struct server {
    const lc_server_params *p;
    char web_root[PATH_MAX]; /* realpath of the web directory; "" none */
    struct lws_context *ctx;
    lc_hub *hub;
    lws_sorted_usec_list_t tick;
    lws_sorted_usec_list_t give_up;
    bool shutting, give_up_now, destroying;
} server;

/* Per websocket connection; the handshake's headers are copied at the filter
 * callback, the last moment libwebsockets guarantees them. */
struct pss {
    lc_conn *conn;
    bool rx_off; /* receive flow stopped (lc_conn_reading) */
    char addr[48];
    char origin[256];
    char host[256];
};

static volatile sig_atomic_t got_stop, got_hup;
static struct lws_context *volatile signal_ctx;

/* The hub's time: the monotonic clock in seconds (the plans are timed on
 * the same clock, lc_mono_clock). */
static double now_s(void) { return lc_mono_us() * 1e-6; }

int lc_listen_parse(const char *text, lc_listen_addr *out, char *err, size_t n)
{
    memset(out, 0, sizeof *out);
    const char *colon = strrchr(text, ':');
    size_t hl = colon ? (size_t)(colon - text) : 0;
    if (!colon || hl == 0 || hl >= sizeof out->host) {
        snprintf(err, n, "listen: '%s' is not HOST:PORT", text);
        return -1;
    }
    char *end = NULL;
    long port = strtol(colon + 1, &end, 10);
    if (end == colon + 1 || *end != '\0' || port < 0 || port > 65535) {
        snprintf(err, n, "listen: port '%s' is not 0 to 65535", colon + 1);
        return -1;
    }
    memcpy(out->host, text, hl);
    out->host[hl] = '\0';
    if (strcmp(out->host, "localhost") == 0)
        snprintf(out->host, sizeof out->host, "127.0.0.1");
    struct in_addr a;
    if (inet_pton(AF_INET, out->host, &a) != 1) {
        snprintf(err, n, "listen: host '%s' is not an IPv4 address, localhost or 0.0.0.0",
                 out->host);
        return -1;
    }
    out->port = (int)port;
    out->loopback = (ntohl(a.s_addr) >> 24) == 127;
    return 0;
}

/* ------------------------------------------------------------- timers */

static void arm(server *s);

static void on_tick(lws_sorted_usec_list_t *sul)
{
    server *s = lws_container_of(sul, server, tick);
    lc_hub_tick(s->hub, now_s());
    arm(s);
}

static void on_give_up(lws_sorted_usec_list_t *sul)
{
    server *s = lws_container_of(sul, server, give_up);
    s->give_up_now = true;
}

/* The hub's next deadline becomes the one pending timer. */
static void arm(server *s)
{
    if (s->destroying)
        return;
    double d = lc_hub_deadline(s->hub);
    if (isinf(d)) {
        lws_sul_schedule(s->ctx, 0, &s->tick, on_tick, LWS_SET_TIMER_USEC_CANCEL);
        return;
    }
    double us = (d - now_s()) * 1e6;
    lws_sul_schedule(s->ctx, 0, &s->tick, on_tick, us < 1 ? 1 : (lws_usec_t)us);
}

static void hub_wake(void *data, void *conn_user) { lws_callback_on_writable(conn_user); }

static void hub_kill(void *data, void *conn_user)
{
    lws_set_timeout(conn_user, PENDING_TIMEOUT_USER_OK, LWS_TO_KILL_ASYNC);
}

/* ---------------------------------------------------------- callbacks */

static int close_with(struct lws *wsi, lc_conn *conn)
{
    const char *reason = "";
    int status = lc_conn_close_status(conn, &reason);
    lws_close_reason(wsi, (enum lws_close_status)status, (unsigned char *)reason, strlen(reason));
    return -1;
}

/* A ping the hub asked for (robots.h, liveness); the peer's pong comes back
 * as LWS_CALLBACK_RECEIVE_PONG. */
static int send_ping(struct lws *wsi)
{
    unsigned char buf[LWS_PRE + 2] = {0};
    buf[LWS_PRE] = 'l';
    buf[LWS_PRE + 1] = 'c';
    if (lws_write(wsi, buf + LWS_PRE, 2, LWS_WRITE_PING) < 2)
        return -1;
    lws_callback_on_writable(wsi); /* the queued messages, if any, next */
    return 0;
}

static int writeable(struct lws *wsi, lc_conn *conn)
{
    size_t len = 0;
    if (!lc_conn_closing(conn) && lc_conn_take_ping(conn))
        return send_ping(wsi);
    char *text = lc_conn_peek(conn, &len);
    if (!text)
        return lc_conn_closing(conn) ? close_with(wsi, conn) : 0;
    int n = lws_write(wsi, (unsigned char *)text, len, LWS_WRITE_TEXT);
    if (n < (int)len)
        return -1;
    lc_conn_pop(conn);
    if (lc_conn_peek(conn, &len) || lc_conn_closing(conn))
        lws_callback_on_writable(wsi);
    return 0;
}

/* One header into buf; "" when absent, a marker that matches nothing when too long. */
static void copy_header(struct lws *wsi, char *buf, int n, enum lws_token_indexes h)
{
    buf[0] = '\0';
    if (lws_hdr_total_length(wsi, h) > 0 && lws_hdr_copy(wsi, buf, n, h) < 0)
        snprintf(buf, (size_t)n, "(header too long)");
}

/*
 * An HTTP answer with a one-line plain-text body (reason and a newline),
 * written at once while the request's headers are still bound, then the
 * connection closes. The status line is written here: at the handshake
 * libwebsockets 4.1 has not yet noted the request's HTTP version and its
 * header helpers would say HTTP/1.0, which websocket clients (python3-
 * websockets) refuse to read. 1 (answered), or -1 to hang up.
 */
static int answer_http(struct lws *wsi, int status, const char *title, const char *reason)
{
    char buf[LWS_PRE + 512];
    char *text = buf + LWS_PRE;
    size_t room = sizeof buf - LWS_PRE;
    int body = (int)strlen(reason) + 1;
    int n = snprintf(text, room,
                     "HTTP/1.1 %d %s\r\ncontent-type: text/plain; charset=utf-8\r\n"
                     "content-length: %d\r\nconnection: close\r\n\r\n%s\n",
                     status, title, body, reason);
    if (n < 0 || (size_t)n >= room)
        return -1;
    if (lws_write(wsi, (unsigned char *)text, (size_t)n, LWS_WRITE_HTTP_HEADERS) != n)
        return -1;
    return 1;
}

/*
 * The handshake: past max_connections (or while shutting down) it is
 * refused at once with HTTP 503, spending no connection on it; Origin and
 * the per-address limit are judged by the hub once it is open, so that the
 * client gets an error message it can read (a browser's script cannot see
 * an HTTP status).
 */
static int filter(server *s, struct lws *wsi, struct pss *pss)
{
    if (s->shutting || lc_hub_connections(s->hub) >= s->p->cfg->max_connections) {
        const char *why = s->shutting ? "lacuna: shutting down"
                                      : "lacuna: too many connections (max_connections)";
        lc_log(LC_LOG_WARN, "websocket handshake refused (%s)",
               s->shutting ? "shutting down" : "max_connections");
        return answer_http(wsi, 503, "Service Unavailable", why);
    }
    lws_get_peer_simple(wsi, pss->addr, sizeof pss->addr);
    copy_header(wsi, pss->origin, sizeof pss->origin, WSI_TOKEN_ORIGIN);
    copy_header(wsi, pss->host, sizeof pss->host, WSI_TOKEN_HOST);
    return 0;
}

/*
 * A peer that never reads fills the kernel's send buffer first (autotuned
 * up to megabytes on Linux), then our bounded queues; a fixed SO_SNDBUF
 * bounds the first part too.
 */
static void set_send_buffer(struct lws *wsi, int bytes)
{
    int fd = lws_get_socket_fd(wsi);
    if (bytes > 0 && fd >= 0 && setsockopt(fd, SOL_SOCKET, SO_SNDBUF, &bytes, sizeof bytes) < 0)
        lc_log(LC_LOG_WARN, "send_buffer: setsockopt: %s", strerror(errno));
}

/* Follow the hub's receive flow control (robots.h, lc_conn_reading). */
static void flow(struct lws *wsi, struct pss *pss)
{
    bool off = !lc_conn_reading(pss->conn);
    if (off != pss->rx_off) {
        pss->rx_off = off;
        lws_rx_flow_control(wsi, off ? 0 : 1);
    }
}

static int callback(struct lws *wsi, enum lws_callback_reasons reason, void *user, void *in,
                    size_t len)
{
    struct pss *pss = user;
    server *s = lws_context_user(lws_get_context(wsi));
    int rc = 0;
    switch (reason) {
    case LWS_CALLBACK_FILTER_PROTOCOL_CONNECTION:
        return filter(s, wsi, pss);
    case LWS_CALLBACK_ESTABLISHED: {
        lc_peer peer = {.addr = pss->addr, .origin = pss->origin, .host = pss->host};
        set_send_buffer(wsi, s->p->cfg->send_buffer);
        pss->conn = lc_hub_open(s->hub, wsi, &peer, now_s());
        rc = pss->conn ? 0 : -1;
        break;
    }
    case LWS_CALLBACK_RECEIVE:
        if (!pss->conn)
            return -1;
        if (lc_hub_receive(s->hub, pss->conn, in, len, lws_is_first_fragment(wsi),
                           lws_is_final_fragment(wsi), lws_frame_is_binary(wsi), now_s()) < 0)
            rc = close_with(wsi, pss->conn);
        else
            flow(wsi, pss);
        break;
    case LWS_CALLBACK_RECEIVE_PONG:
        if (pss->conn)
            lc_hub_heard(s->hub, pss->conn, now_s());
        break;
    case LWS_CALLBACK_SERVER_WRITEABLE:
        if (!pss->conn)
            return -1;
        rc = writeable(wsi, pss->conn);
        if (rc == 0)
            flow(wsi, pss);
        break;
    case LWS_CALLBACK_CLOSED:
        if (pss->conn)
            lc_hub_close(s->hub, pss->conn, now_s());
        pss->conn = NULL;
        break;
    default:
        return 0;
    }
    arm(s);
    return rc;
}

lc_web_path lc_web_path_check(const char *root, const char *uri, size_t len)
{
    char path[PATH_MAX], real[PATH_MAX];
    size_t rl = strlen(root);
    if (len == 0 || uri[0] != '/' || memchr(uri, '\0', len) || rl + len >= sizeof path)
        return LC_WEB_OUTSIDE;
    memcpy(path, root, rl);
    memcpy(path + rl, uri, len);
    path[rl + len] = '\0';
    if (!realpath(path, real))
        return errno == ENOENT || errno == ENOTDIR ? LC_WEB_MISSING : LC_WEB_OUTSIDE;
    bool inside = strncmp(real, root, rl) == 0 && (real[rl] == '\0' || real[rl] == '/');
    return inside ? LC_WEB_INSIDE : LC_WEB_OUTSIDE;
}

/* Static files stay inside the web directory: 404 for anything else. */
static int filter_http(server *s, struct lws *wsi, const char *uri, size_t len)
{
    lc_web_path where = lc_web_path_check(s->web_root, uri, len);
    if (where == LC_WEB_INSIDE)
        return 0;
    char addr[48] = "", shown[201];
    size_t n = len < sizeof shown - 1 ? len : sizeof shown - 1;
    for (size_t i = 0; i < n; i++) /* a decoded %0a must not forge a log line */
        shown[i] = uri[i] >= 0x20 && uri[i] < 0x7f ? uri[i] : '?';
    shown[n] = '\0';
    lws_get_peer_simple(wsi, addr, sizeof addr);
    lc_log(where == LC_WEB_OUTSIDE ? LC_LOG_WARN : LC_LOG_DEBUG, "http from %s: '%s' refused (%s)",
           addr, shown,
           where == LC_WEB_OUTSIDE ? "leads outside the web directory" : "no such file");
    lws_return_http_status(wsi, HTTP_STATUS_NOT_FOUND, NULL);
    return 1;
}

/* Whether the Sec-WebSocket-Protocol list (comma separated) names ours. */
static bool offers_ours(const char *list)
{
    size_t n = strlen(LC_WIRE_PROTOCOL);
    for (const char *p = list; *p;) {
        while (*p == ' ' || *p == '\t' || *p == ',')
            p++;
        size_t k = strcspn(p, ", \t");
        if (k == n && strncmp(p, LC_WIRE_PROTOCOL, n) == 0)
            return true;
        p += k;
    }
    return false;
}

/*
 * A websocket handshake that does not offer our subprotocol gets HTTP 400
 * and a reason before libwebsockets would pick a protocol for it (with
 * none offered it would take the HTTP one; with another one only it would
 * hang up without an answer). The offer is shown in the log, cut and with
 * control bytes replaced.
 */
static int confirm_upgrade(struct lws *wsi)
{
    char offered[128] = "", addr[48] = "", why[200];
    copy_header(wsi, offered, sizeof offered, WSI_TOKEN_PROTOCOL);
    if (offers_ours(offered))
        return 0;
    for (char *c = offered; *c; c++)
        if (*c < 0x20 || *c > 0x7e)
            *c = '?';
    lws_get_peer_simple(wsi, addr, sizeof addr);
    if (offered[0])
        snprintf(why, sizeof why, "lacuna: websocket subprotocol %s required, offered '%s'",
                 LC_WIRE_PROTOCOL, offered);
    else
        snprintf(why, sizeof why, "lacuna: websocket subprotocol %s required, none offered",
                 LC_WIRE_PROTOCOL);
    lc_log(LC_LOG_WARN, "websocket handshake from %s refused with 400: %s", addr[0] ? addr : "?",
           why + strlen("lacuna: "));
    return answer_http(wsi, 400, "Bad Request", why);
}

/* protocols[0]: the static files, and the check of every websocket handshake. */
static int http_callback(struct lws *wsi, enum lws_callback_reasons reason, void *user, void *in,
                         size_t len)
{
    server *s = lws_context_user(lws_get_context(wsi));
    if (reason == LWS_CALLBACK_FILTER_HTTP_CONNECTION && s->web_root[0])
        return filter_http(s, wsi, in, len);
    if (reason == LWS_CALLBACK_HTTP_CONFIRM_UPGRADE && in && strcmp(in, "websocket") == 0)
        return confirm_upgrade(wsi);
    return lws_callback_http_dummy(wsi, reason, user, in, len);
}

static const struct lws_protocols protocols[] = {
    {"http", http_callback, 0, 0, 0, NULL, 0},
    {LC_WIRE_PROTOCOL, callback, sizeof(struct pss), 65536, 0, NULL, 0},
    {NULL, NULL, 0, 0, 0, NULL, 0},
};

/* Types the viewer may use that libwebsockets does not know. */
static const struct lws_protocol_vhost_options mime_jsonl = {NULL, NULL, ".jsonl",
                                                             "application/x-ndjson"};
static const struct lws_protocol_vhost_options mime_mjs = {&mime_jsonl, NULL, ".mjs",
                                                           "text/javascript"};

/* ------------------------------------------------------------- signals */

static void on_signal(int sig)
{
    if (sig == SIGHUP)
        got_hup = 1;
    else
        got_stop = 1;
    if (signal_ctx)
        lws_cancel_service(signal_ctx);
}

static void install_signals(void)
{
    static const int sigs[] = {SIGINT, SIGTERM, SIGHUP};
    lc_signals_catch(on_signal, sigs, 3);
}

static void lws_to_log(int level, const char *line)
{
    size_t n = strlen(line);
    while (n && (line[n - 1] == '\n' || line[n - 1] == '\r'))
        n--;
    lc_log(level == LLL_ERR ? LC_LOG_WARN : LC_LOG_DEBUG, "libwebsockets: %.*s", (int)n, line);
}

/* ---------------------------------------------------------------- loop */

static void begin_shutdown(server *s)
{
    s->shutting = true;
    lc_log(LC_LOG_INFO, "shutting down: stop setpoints to every robot");
    lc_hub_shutdown(s->hub, now_s());
    arm(s);
    lws_sul_schedule(s->ctx, 0, &s->give_up, on_give_up,
                     (lws_usec_t)(s->p->cfg->shutdown_ms + 500) * 1000);
}

/* The flags are looked at before each wait, so a signal that came before
 * the first one (at start-up) is not left waiting for traffic. */
static void loop(server *s)
{
    for (;;) {
        if (got_hup) {
            got_hup = 0;
            if (lc_log_reopen() < 0)
                lc_log(LC_LOG_ERROR, "cannot reopen the log file; logging to stderr");
            lc_hub_reopen(s->hub);
            lc_log(LC_LOG_INFO, "SIGHUP: log and recordings reopened");
        }
        if (got_stop && !s->shutting)
            begin_shutdown(s);
        if (s->shutting && (lc_hub_connections(s->hub) == 0 || s->give_up_now))
            break;
        if (lws_service(s->ctx, 0) < 0)
            break;
    }
}

static struct lws_context *create_context(server *s, struct lws_http_mount *mount)
{
    const lc_server_params *p = s->p;
    struct lws_context_creation_info info;
    memset(&info, 0, sizeof info);
    info.port = p->listen.port;
    info.iface = strcmp(p->listen.host, "0.0.0.0") == 0 ? NULL : p->listen.host;
    info.protocols = protocols;
    info.options = LWS_SERVER_OPTION_DISABLE_IPV6; /* else the iface binds everywhere */
    info.user = s;
    info.fd_limit_per_thread = (unsigned int)(2 * p->cfg->max_connections + 64);
    /* lws reads at most this much per socket read (default 4096): a 1081-beam
     * scan (about 6.5 kB) then takes two polls and two reads; one of each at
     * 64 KiB (one buffer per service thread, not per connection). */
    info.pt_serv_buf_size = 65536;
    if (p->tls_cert) {
        info.options |= LWS_SERVER_OPTION_DO_SSL_GLOBAL_INIT;
        info.ssl_cert_filepath = p->tls_cert;
        info.ssl_private_key_filepath = p->tls_key;
    }
    if (p->web_dir && realpath(p->web_dir, s->web_root)) {
        memset(mount, 0, sizeof *mount);
        mount->mountpoint = "/";
        mount->mountpoint_len = 1;
        mount->origin = s->web_root;
        mount->def = "index.html";
        mount->origin_protocol = LWSMPRO_FILE;
        mount->extra_mimetypes = &mime_mjs;
        info.mounts = mount;
    }
    /*
     * The context first, then its one vhost: when the vhost cannot be made
     * (port in use, a certificate that is none), destroying the context
     * frees what it holds; a failing lws_create_context leaks a little
     * (memcheck and LeakSanitizer see it).
     */
    info.options |= LWS_SERVER_OPTION_EXPLICIT_VHOSTS;
    struct lws_context *ctx = lws_create_context(&info);
    if (ctx && !lws_create_vhost(ctx, &info)) {
        lws_context_destroy(ctx);
        ctx = NULL;
    }
    return ctx;
}

static void print_listening(const server *s)
{
    struct lws_vhost *vh = lws_get_vhost_by_name(s->ctx, "default");
    int port = vh ? lws_get_vhost_listen_port(vh) : s->p->listen.port;
    const char *tls = s->p->tls_cert ? "s" : "";
    fprintf(stderr,
            "lacuna serve: listening on http%s://%s:%d/ (websocket ws%s://%s:%d/, protocol %s)\n",
            tls, s->p->listen.host, port, tls, s->p->listen.host, port, LC_WIRE_PROTOCOL);
    fflush(stderr);
}

int lc_server_run(const lc_server_params *p)
{
    server s = {.p = p};
    lc_hub_config hc = {.opts = *p->cfg, .robot_token = p->robot_token,
                        .viewer_token = p->viewer_token, .headroom = LWS_PRE,
                        .clock = lc_mono_clock(),
                        .io = {.wake = hub_wake, .kill = hub_kill, .data = &s}};
    s.hub = lc_hub_new(&hc);
    if (!s.hub)
        return -1;
    lws_set_log_level(LLL_ERR | LLL_WARN, lws_to_log);
    /* Signals wait (blocked) until the handlers and the context exist: a
     * SIGTERM during start-up then stops the server cleanly, not at once. */
    sigset_t stops, before;
    sigemptyset(&stops);
    sigaddset(&stops, SIGINT);
    sigaddset(&stops, SIGTERM);
    sigaddset(&stops, SIGHUP);
    sigprocmask(SIG_BLOCK, &stops, &before);
    install_signals();
    struct lws_http_mount mount;
    s.ctx = create_context(&s, &mount);
    if (!s.ctx) {
        if (p->tls_cert)
            lc_log(LC_LOG_ERROR, "cannot listen on %s:%d with TLS: address in use, or "
                   "certificate %s / key %s not usable (see the lines above)",
                   p->listen.host, p->listen.port, p->tls_cert, p->tls_key);
        else
            lc_log(LC_LOG_ERROR, "cannot listen on %s:%d", p->listen.host, p->listen.port);
        lc_hub_free(s.hub);
        sigprocmask(SIG_SETMASK, &before, NULL);
        return -1;
    }
    signal_ctx = s.ctx;
    print_listening(&s);
    sigprocmask(SIG_SETMASK, &before, NULL);
    loop(&s);
    signal_ctx = NULL;
    s.destroying = true;
    lws_sul_schedule(s.ctx, 0, &s.tick, on_tick, LWS_SET_TIMER_USEC_CANCEL);
    lws_sul_schedule(s.ctx, 0, &s.give_up, on_give_up, LWS_SET_TIMER_USEC_CANCEL);
    lws_context_destroy(s.ctx);
    lc_log(LC_LOG_INFO, "stopped (%ld views dropped for slow viewers)",
           lc_hub_views_dropped(s.hub));
    lc_hub_free(s.hub);
    return 0;
}
