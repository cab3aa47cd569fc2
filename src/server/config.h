/*
 * config.h - the daemon's options: one table, a JSON file, flags on top.
 *
 * Every option is declared once in the table of config.c with its name,
 * type, bounds, default and help; the JSON file uses the name as key, the
 * command line the name with '-' for '_' (watchdog_ms -> --watchdog-ms).
 * Precedence: defaults < --config FILE < flags. A list option (allow_origin)
 * is a comma-separated string; in the file it may also be an array of
 * strings; on the command line each repetition of its flag adds one item,
 * and the first flag replaces the file's list. Units: milliseconds where
 * the name says _ms, seconds for periods, bytes for sizes.
 *
 * Ownership: lc_server_config is a plain value (fixed-size strings), owned
 * by the caller. Tokens are not options: they are read from the files the
 * options name and never printed.
 */
#ifndef LC_CONFIG_H
#define LC_CONFIG_H

#include <stdbool.h>
#include <stdio.h>

#define LC_CONFIG_STR_MAX 1024

typedef struct lc_server_config {
    char listen[LC_CONFIG_STR_MAX];            /* HOST:PORT, IPv4 or localhost */
    char web[LC_CONFIG_STR_MAX];               /* "" = the installed one or the build's */
    char record[LC_CONFIG_STR_MAX];            /* "" = no recording */
    char token_file[LC_CONFIG_STR_MAX];
    char viewer_token_file[LC_CONFIG_STR_MAX];
    char log_level[16];
    char log_file[LC_CONFIG_STR_MAX];          /* "" = stderr */
    char tls_cert[LC_CONFIG_STR_MAX];          /* PEM; with tls_key: wss:// and https:// */
    char tls_key[LC_CONFIG_STR_MAX];
    char allow_origin[LC_CONFIG_STR_MAX];      /* browser origins, comma separated; "*" any */
    int watchdog_ms;
    int max_message;     /* bytes */
    int max_beams;
    int max_points;
    int max_connections;
    int max_per_address; /* websocket connections from one client address */
    double view_hz;      /* views per second per robot, at most 20 */
    int viewer_queue;    /* views queued per viewer and robot before dropping older ones */
    int send_queue;      /* other messages queued per connection before closing */
    double max_rate;     /* messages per second per connection (flooding) */
    int send_buffer;     /* bytes of SO_SNDBUF per websocket connection; 0: the kernel's */
    double period;       /* s, fixed control period; 0: from frame stamps */
    double dt_min;       /* s, clamp of the stamp difference */
    double dt_max;
    int hello_timeout_ms;
    int shutdown_ms;     /* longest wait for the last messages at shutdown */
    int grace_ms;        /* a dropped robot's session is kept this long for a reconnect */
    int link_timeout_ms; /* a link silent this long (pings unanswered) is closed */
    unsigned long long list_flags; /* bit i: list option i was set by a flag (next ones add) */
} lc_server_config;

void lc_server_config_default(lc_server_config *cfg);

/*
 * Load a JSON object of options from a file over *cfg. Returns 0, or -1
 * with a one-line reason naming the option in err.
 */
int lc_server_config_load(lc_server_config *cfg, const char *path, char *err, size_t n);
/* The same from text (for tests and the file loader). */
int lc_server_config_parse(lc_server_config *cfg, const char *text, size_t len, char *err,
                           size_t n);

/*
 * Set one option from a flag value ("--watchdog-ms" "150"). Returns 1 when
 * applied, 0 when flag is no option of the table, -1 on a bad value (err).
 */
int lc_server_config_flag(lc_server_config *cfg, const char *flag, const char *value, char *err,
                          size_t n);

/*
 * May a websocket handshake with this Origin header proceed? Yes when there
 * is none (not a browser), when it is the page's own origin (scheme http,
 * or https with tls, and host[:port] equal to the Host header), or when
 * allow (an allow_origin list) names it or holds "*". Case-insensitive.
 */
bool lc_origin_allowed(const char *allow, const char *origin, const char *host, bool tls);

/* Print the effective configuration as one JSON object (and a newline). */
void lc_server_config_print(const lc_server_config *cfg, FILE *out);
/* The option list for --help: "  --name VALUE  help (default ...)". */
void lc_server_config_help(FILE *out);

#endif
