/*
 * server.h - the daemon's event loop: one libwebsockets context, one port,
 * the static viewer page over HTTP and the websocket protocol lacuna.v2 on
 * the same port. The protocol itself lives in the hub (robots.h); this file
 * is the transport, the timers (lws_sul), signals and the loop.
 *
 * Signals: SIGINT and SIGTERM send a last stop setpoint to every robot,
 * close every connection and return 0; SIGHUP reopens the log and the
 * recording files. The handlers only set a flag and wake the loop
 * (lws_cancel_service, the one call that is safe there).
 */
#ifndef LC_SERVER_H
#define LC_SERVER_H

#include <stdbool.h>

#include "config.h"

typedef struct lc_listen_addr {
    char host[64];  /* dotted IPv4, "0.0.0.0" for every interface */
    int port;       /* 0: any free port */
    bool loopback;  /* 127.0.0.0/8 */
} lc_listen_addr;

/* Parse HOST:PORT (IPv4, "localhost", "0.0.0.0"); 0 or -1 with a reason. */
int lc_listen_parse(const char *text, lc_listen_addr *out, char *err, size_t n);

typedef struct lc_server_params {
    const lc_server_config *cfg;
    lc_listen_addr listen;
    const char *robot_token;  /* NULL: none */
    const char *viewer_token; /* NULL: none */
    const char *web_dir;      /* NULL: no static files */
    const char *tls_cert;     /* NULL: plain ws:// and http:// */
    const char *tls_key;
} lc_server_params;

/*
 * Static files: where does the request path uri (len bytes, as
 * libwebsockets decoded and normalised it, "/...") lead from root (a
 * realpath)? Resolved with realpath, so ".." and symbolic links that leave
 * root are OUTSIDE, and so is a path with an embedded NUL; a link inside
 * the web directory to another file inside it is fine.
 */
typedef enum lc_web_path { LC_WEB_INSIDE, LC_WEB_MISSING, LC_WEB_OUTSIDE } lc_web_path;
lc_web_path lc_web_path_check(const char *root, const char *uri, size_t len);

/* Run until SIGINT/SIGTERM. Returns 0, or -1 when the server cannot start. */
int lc_server_run(const lc_server_params *p);

#endif
