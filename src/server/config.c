/*
 * config.c - the option table and its readers (see config.h). Adding an
 * option is one line in `options` and one field in lc_server_config.
 */
#include "config.h"

#include <cjson/cJSON.h>
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

#include "codec.h"
#include "file.h"
#include "log.h"

typedef enum opt_type { OPT_STR, OPT_LIST, OPT_INT, OPT_NUM } opt_type;

typedef struct opt {
    const char *name;
    opt_type type;
    size_t offset;
    size_t size;     /* OPT_STR, OPT_LIST: capacity */
    double lo, hi;   /* OPT_INT, OPT_NUM: inclusive bounds */
    double def_num;
    const char *def_str;
    const char *metavar; /* what --help shows for the value */
    const char *help;
} opt;

#define STR(field, metavar, def, help) \
    {#field, OPT_STR, offsetof(lc_server_config, field), \
     sizeof(((lc_server_config *)0)->field), 0, 0, 0, def, metavar, help}
#define LIST(field, metavar, help) \
    {#field, OPT_LIST, offsetof(lc_server_config, field), \
     sizeof(((lc_server_config *)0)->field), 0, 0, 0, "", metavar, help}
#define INT(field, lo, hi, def, help) \
    {#field, OPT_INT, offsetof(lc_server_config, field), 0, lo, hi, def, NULL, "N", help}
#define NUM(field, lo, hi, def, help) \
    {#field, OPT_NUM, offsetof(lc_server_config, field), 0, lo, hi, def, NULL, "X", help}

static const opt options[] = {
    STR(listen, "HOST:PORT", "127.0.0.1:7640",
        "HOST:PORT to listen on; HOST an IPv4 address, localhost or 0.0.0.0 (all); PORT 0 "
        "picks a free port"),
    STR(web, "DIR", "",
        "directory of the viewer page (default: the installed one, else web/ beside the build; "
        "none found: exit 2 naming the paths tried)"),
    STR(record, "DIR", "", "directory to write one scenario file per robot session"),
    STR(token_file, "FILE", "", "file holding the robot token (required off loopback)"),
    STR(viewer_token_file, "FILE", "", "file holding the viewer token (viewers need none without it)"),
    STR(log_level, "LEVEL", "info", "error, warn, info or debug"),
    STR(log_file, "FILE", "", "append the log to this file instead of stderr (reopened on SIGHUP)"),
    STR(tls_cert, "FILE", "", "PEM certificate: serve wss:// and https:// (needs --tls-key)"),
    STR(tls_key, "FILE", "", "PEM private key of --tls-cert"),
    LIST(allow_origin, "ORIGIN",
         "browser origin (scheme://host[:port], null, or * for any) allowed to open a websocket; "
         "repeat or separate with commas. Always allowed: no Origin header (programs) and the "
         "page's own origin; any other is refused (error forbidden, close 1008)"),
    INT(watchdog_ms, 20, 60000, 200,
        "stop setpoints (stale) when no valid frame came for this long; also the most any "
        "setpoint's valid_ms can be"),
    INT(max_message, 1024, 64 << 20, 1 << 20, "largest message in bytes (larger: close 1009)"),
    INT(max_beams, 1, 1000000, 100000, "most beams (dist values) in one scan"),
    INT(max_points, 1, 1000000, 100000, "most points in one points frame"),
    INT(max_connections, 1, 10000, 64,
        "most websocket connections at a time; beyond it the handshake gets HTTP 503"),
    INT(max_per_address, 1, 10000, 32,
        "most websocket connections from one client address; beyond it: error "
        "too_many_connections, then close"),
    NUM(view_hz, 0.1, 20, 20, "view messages per second per robot"),
    INT(viewer_queue, 1, 1024, 4,
        "views queued per viewer and robot; a slow viewer loses a robot's older views"),
    INT(send_queue, 4, 100000, 256,
        "setpoints and other replies queued per connection; beyond it: error, then close"),
    NUM(max_rate, 1, 100000, 1000, "messages per second per connection; beyond it: error, then close"),
    INT(send_buffer, 0, 16 << 20, 256 << 10,
        "kernel send buffer per websocket connection in bytes (SO_SNDBUF, which Linux doubles; "
        "0: the kernel's own sizing, up to megabytes): bounds what a peer that never reads "
        "pins in the kernel"),
    NUM(period, 0, 10, 0, "fixed control period in s for every step; 0: from frame stamps"),
    NUM(dt_min, 0.0001, 10, 0.005, "s, least control period taken from stamps"),
    NUM(dt_max, 0.0001, 10, 0.2, "s, largest control period taken from stamps"),
    INT(hello_timeout_ms, 100, 600000, 10000, "close connections that send no hello for this long"),
    INT(shutdown_ms, 0, 60000, 1000, "longest wait for the last stop setpoints at shutdown"),
    INT(grace_ms, 0, 600000, 5000,
        "keep a robot's session this long after its link drops: a robot that says hello "
        "again under its name within it resumes its description, route, progress and "
        "velocity (0: the session ends with the link)"),
    INT(link_timeout_ms, 0, 600000, 3000,
        "close a robot's link when nothing (not even the answer to a ping) came for this "
        "long: a link that went silent without closing lets its robot's name go within it. "
        "Pings go out after a third of it without a message (0: never)"),
};

#define N_OPTIONS (int)(sizeof options / sizeof options[0])
_Static_assert(N_OPTIONS <= 64, "list_flags has one bit per option");

static void *field(lc_server_config *cfg, const opt *o) { return (char *)cfg + o->offset; }
static const void *cfield(const lc_server_config *cfg, const opt *o)
{
    return (const char *)cfg + o->offset;
}

void lc_server_config_default(lc_server_config *cfg)
{
    memset(cfg, 0, sizeof *cfg);
    for (int i = 0; i < N_OPTIONS; i++) {
        const opt *o = &options[i];
        if (o->type == OPT_STR || o->type == OPT_LIST)
            snprintf(field(cfg, o), o->size, "%s", o->def_str);
        else if (o->type == OPT_INT)
            *(int *)field(cfg, o) = (int)o->def_num;
        else
            *(double *)field(cfg, o) = o->def_num;
    }
}

static int fail(char *err, size_t n, const char *name, const char *what)
{
    snprintf(err, n, "%s: %s", name, what);
    return -1;
}

/* Checks that only some string options need. */
static int check_string(const opt *o, const char *s, char *err, size_t n)
{
    lc_log_level level;
    if (strcmp(o->name, "log_level") == 0 && !lc_log_level_from_name(s, &level))
        return fail(err, n, o->name, "must be error, warn, info or debug");
    if (strcmp(o->name, "listen") == 0 && !strchr(s, ':'))
        return fail(err, n, o->name, "must be HOST:PORT");
    return 0;
}

/*
 * An origin as browsers send it (RFC 6454): scheme://host[:port] with no
 * path, scheme http or https; "null" for opaque origins (file:, sandboxes).
 * On success *scheme_len and the authority (host[:port]) are set.
 */
static bool parse_origin(const char *s, size_t n, size_t *scheme_len, const char **auth,
                         size_t *auth_len)
{
    const char *sep = memmem(s, n, "://", 3);
    if (!sep)
        return false;
    size_t sl = (size_t)(sep - s);
    if (!((sl == 4 && strncasecmp(s, "http", 4) == 0) ||
          (sl == 5 && strncasecmp(s, "https", 5) == 0)))
        return false;
    const char *a = sep + 3, *end = s + n, *p = a;
    if (p < end && *p == '[') { /* an IPv6 literal */
        p++;
        while (p < end && (isxdigit((unsigned char)*p) || *p == ':' || *p == '.'))
            p++;
        if (p == end || *p++ != ']')
            return false;
    } else {
        while (p < end && (isalnum((unsigned char)*p) || *p == '.' || *p == '-'))
            p++;
    }
    if (p == a)
        return false;
    if (p < end && *p == ':') { /* a port: 1 to 5 digits */
        const char *d = ++p;
        while (p < end && isdigit((unsigned char)*p))
            p++;
        if (p == d || p - d > 5)
            return false;
    }
    if (p != end)
        return false;
    *scheme_len = sl;
    *auth = a;
    *auth_len = (size_t)(end - a);
    return true;
}

static bool origin_item_ok(const char *s, size_t n)
{
    size_t sl, al;
    const char *a;
    if ((n == 1 && s[0] == '*') || (n == 4 && strncmp(s, "null", 4) == 0))
        return true;
    return parse_origin(s, n, &sl, &a, &al);
}

/* The next item of a comma list: [*s, *end) without surrounding blanks. */
static bool next_item(const char **p, const char **s, const char **end)
{
    const char *q = *p;
    if (!*q)
        return false;
    const char *comma = strchr(q, ',');
    const char *e = comma ? comma : q + strlen(q);
    *p = comma ? comma + 1 : e;
    while (q < e && isspace((unsigned char)*q))
        q++;
    while (e > q && isspace((unsigned char)e[-1]))
        e--;
    *s = q;
    *end = e;
    return true;
}

/*
 * A list option from a comma list: every item checked, blanks trimmed,
 * stored joined by ','; with append, after the items already there.
 */
static int set_list(lc_server_config *cfg, const opt *o, const char *text, bool append,
                    char *err, size_t n)
{
    char out[LC_CONFIG_STR_MAX], what[160];
    size_t len = 0;
    out[0] = '\0';
    if (append)
        len = (size_t)snprintf(out, sizeof out, "%s", (const char *)field(cfg, o));
    const char *p = text, *a, *b;
    while (next_item(&p, &a, &b)) {
        size_t k = (size_t)(b - a);
        if (!origin_item_ok(a, k)) {
            snprintf(what, sizeof what,
                     "'%.*s' is not an origin (scheme://host[:port] with http or https and no "
                     "path, null, or *)",
                     (int)(k > 80 ? 80 : k), a);
            return fail(err, n, o->name, what);
        }
        if (len + k + 2 > o->size || len + k + 2 > sizeof out)
            return fail(err, n, o->name, "too long");
        len += (size_t)snprintf(out + len, sizeof out - len, "%s%.*s", len ? "," : "", (int)k, a);
    }
    snprintf(field(cfg, o), o->size, "%s", out);
    return 0;
}

bool lc_origin_allowed(const char *allow, const char *origin, const char *host, bool tls)
{
    if (!origin || !origin[0])
        return true; /* not a browser: browsers always send Origin on a websocket */
    size_t n = strlen(origin), sl, al;
    const char *auth;
    if (parse_origin(origin, n, &sl, &auth, &al) && sl == (tls ? 5u : 4u) && host &&
        strlen(host) == al && strncasecmp(auth, host, al) == 0)
        return true; /* the page's own origin: same scheme and host[:port] */
    const char *p = allow, *a, *b;
    while (p && next_item(&p, &a, &b)) {
        size_t k = (size_t)(b - a);
        if ((k == 1 && a[0] == '*') || (k == n && strncasecmp(a, origin, n) == 0))
            return true;
    }
    return false;
}

static int set_string(lc_server_config *cfg, const opt *o, const char *s, char *err, size_t n)
{
    if (strlen(s) >= o->size)
        return fail(err, n, o->name, "too long");
    if (check_string(o, s, err, n) < 0)
        return -1;
    snprintf(field(cfg, o), o->size, "%s", s);
    return 0;
}

static int set_number(lc_server_config *cfg, const opt *o, double x, char *err, size_t n)
{
    char what[160];
    if (!isfinite(x) || x < o->lo || x > o->hi) {
        snprintf(what, sizeof what, "must be a number from %g to %g", o->lo, o->hi);
        return fail(err, n, o->name, what);
    }
    if (o->type == OPT_INT) {
        if (x != floor(x))
            return fail(err, n, o->name, "must be an integer");
        *(int *)field(cfg, o) = (int)x;
    } else {
        *(double *)field(cfg, o) = x;
    }
    return 0;
}

static const opt *find_option(const char *name)
{
    for (int i = 0; i < N_OPTIONS; i++)
        if (strcmp(options[i].name, name) == 0)
            return &options[i];
    return NULL;
}

/* A list option in the file: a comma list, or an array of strings. */
static int set_json_list(lc_server_config *cfg, const opt *o, const cJSON *it, char *err,
                         size_t n)
{
    if (cJSON_IsString(it) && it->valuestring)
        return set_list(cfg, o, it->valuestring, false, err, n);
    if (!cJSON_IsArray(it))
        return fail(err, n, o->name, "must be a string or an array of strings");
    set_list(cfg, o, "", false, err, n);
    const cJSON *item;
    cJSON_ArrayForEach(item, it)
    {
        if (!cJSON_IsString(item) || !item->valuestring || strchr(item->valuestring, ',') ||
            !item->valuestring[0])
            return fail(err, n, o->name, "items must be non-empty strings without commas");
        if (set_list(cfg, o, item->valuestring, true, err, n) < 0)
            return -1;
    }
    return 0;
}

static int set_json(lc_server_config *cfg, const cJSON *it, char *err, size_t n)
{
    const opt *o = find_option(it->string);
    if (!o)
        return fail(err, n, it->string, "unknown option");
    if (o->type == OPT_STR) {
        if (!cJSON_IsString(it) || !it->valuestring)
            return fail(err, n, o->name, "must be a string");
        return set_string(cfg, o, it->valuestring, err, n);
    }
    if (o->type == OPT_LIST)
        return set_json_list(cfg, o, it, err, n);
    if (!cJSON_IsNumber(it))
        return fail(err, n, o->name, "must be a number");
    return set_number(cfg, o, it->valuedouble, err, n);
}

int lc_server_config_parse(lc_server_config *cfg, const char *text, size_t len, char *err,
                           size_t n)
{
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root)
        return fail(err, n, "config", "not valid JSON");
    for (const char *p = end; p && p < text + len; p++) {
        if (*p != ' ' && *p != '\t' && *p != '\n' && *p != '\r') {
            cJSON_Delete(root);
            return fail(err, n, "config", "bytes after the JSON object");
        }
    }
    int rc = cJSON_IsObject(root) ? 0 : fail(err, n, "config", "not a JSON object");
    const cJSON *it;
    cJSON_ArrayForEach(it, root)
    {
        if (rc == 0)
            rc = set_json(cfg, it, err, n);
    }
    cJSON_Delete(root);
    return rc;
}

int lc_server_config_load(lc_server_config *cfg, const char *path, char *err, size_t n)
{
    size_t len = 0;
    char *text = lc_file_read(path, &len);
    if (!text) {
        snprintf(err, n, "%s: %s", path, strerror(errno));
        return -1;
    }
    char inner[256];
    int rc = lc_server_config_parse(cfg, text, len, inner, sizeof inner);
    free(text);
    if (rc < 0)
        snprintf(err, n, "%s: %s", path, inner);
    return rc;
}

int lc_server_config_flag(lc_server_config *cfg, const char *flag, const char *value, char *err,
                          size_t n)
{
    if (strncmp(flag, "--", 2) != 0)
        return 0;
    char name[64];
    size_t k = 0;
    for (const char *p = flag + 2; *p && k < sizeof name - 1; p++)
        name[k++] = *p == '-' ? '_' : *p;
    name[k] = '\0';
    const opt *o = find_option(name);
    if (!o)
        return 0;
    if (!value)
        return fail(err, n, flag, "needs a value");
    if (o->type == OPT_LIST) {
        unsigned long long bit = 1ULL << (o - options);
        bool append = (cfg->list_flags & bit) != 0;
        cfg->list_flags |= bit;
        return set_list(cfg, o, value, append, err, n) < 0 ? -1 : 1;
    }
    if (o->type == OPT_STR)
        return set_string(cfg, o, value, err, n) < 0 ? -1 : 1;
    char *end = NULL;
    errno = 0;
    double x = strtod(value, &end);
    if (end == value || *end != '\0' || errno == ERANGE)
        return fail(err, n, flag, "not a number");
    return set_number(cfg, o, x, err, n) < 0 ? -1 : 1;
}

static void print_json_string(FILE *out, const char *s)
{
    fputc('"', out);
    for (; *s; s++) {
        unsigned char c = (unsigned char)*s;
        if (c == '"' || c == '\\')
            fprintf(out, "\\%c", c);
        else if (c < 0x20)
            fprintf(out, "\\u%04x", c);
        else
            fputc(c, out);
    }
    fputc('"', out);
}

void lc_server_config_print(const lc_server_config *cfg, FILE *out)
{
    fputc('{', out);
    for (int i = 0; i < N_OPTIONS; i++) {
        const opt *o = &options[i];
        fprintf(out, "%s\"%s\": ", i ? ", " : "", o->name);
        if (o->type == OPT_STR || o->type == OPT_LIST)
            print_json_string(out, cfield(cfg, o));
        else if (o->type == OPT_INT)
            fprintf(out, "%d", *(const int *)cfield(cfg, o));
        else {
            char num[LC_WIRE_NUMBER_MAX];
            lc_wire_format_number(num, *(const double *)cfield(cfg, o), -1);
            fputs(num, out);
        }
    }
    fputs("}\n", out);
}

void lc_server_config_help(FILE *out)
{
    for (int i = 0; i < N_OPTIONS; i++) {
        const opt *o = &options[i];
        char flag[80], lo[LC_WIRE_NUMBER_MAX], hi[LC_WIRE_NUMBER_MAX], def[LC_WIRE_NUMBER_MAX];
        size_t k = 0;
        for (const char *p = o->name; *p && k < sizeof flag - 1; p++)
            flag[k++] = *p == '_' ? '-' : *p;
        flag[k] = '\0';
        fprintf(out, "  --%s %s\n      %s", flag, o->metavar, o->help);
        if (o->type == OPT_STR && o->def_str[0]) {
            fprintf(out, " (default %s)", o->def_str);
        } else if (o->type == OPT_LIST) {
            fputs(" (default: none)", out);
        } else if (o->type != OPT_STR) {
            lc_wire_format_number(lo, o->lo, -1);
            lc_wire_format_number(hi, o->hi, -1);
            lc_wire_format_number(def, o->def_num, -1);
            fprintf(out, " (%s to %s, default %s)", lo, hi, def);
        }
        fputc('\n', out);
    }
}
