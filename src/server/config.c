/*
 * config.c - the option table and its readers (see config.h). Adding an
 * option is one line in `options` and one field in lc_server_config.
 */
#include "config.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <math.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>

#include "cli.h"
#include "codec.h"
#include "log.h"

typedef enum opt_type { OPT_STR, OPT_INT, OPT_NUM } opt_type;

typedef struct opt {
    const char *name;
    opt_type type;
    size_t offset;
    size_t size;     /* OPT_STR: capacity */
    double lo, hi;   /* OPT_INT, OPT_NUM: inclusive bounds */
    double def_num;
    const char *def_str;
    const char *metavar; /* what --help shows for the value */
    const char *help;
} opt;

#define STR(field, metavar, def, help) \
    {#field, OPT_STR, offsetof(lc_server_config, field), \
     sizeof(((lc_server_config *)0)->field), 0, 0, 0, def, metavar, help}
#define INT(field, lo, hi, def, help) \
    {#field, OPT_INT, offsetof(lc_server_config, field), 0, lo, hi, def, NULL, "N", help}
#define NUM(field, lo, hi, def, help) \
    {#field, OPT_NUM, offsetof(lc_server_config, field), 0, lo, hi, def, NULL, "X", help}

static const opt options[] = {
    STR(listen, "HOST:PORT", "127.0.0.1:7640",
        "HOST:PORT to listen on; HOST an IPv4 address, localhost or 0.0.0.0 (all); PORT 0 "
        "picks a free port"),
    STR(web, "DIR", "", "directory of the viewer page (default: web/ beside the program)"),
    STR(record, "DIR", "", "directory to write one scenario file per robot session"),
    STR(token_file, "FILE", "", "file holding the robot token (required off loopback)"),
    STR(viewer_token_file, "FILE", "", "file holding the viewer token (viewers need none without it)"),
    STR(log_level, "LEVEL", "info", "error, warn, info or debug"),
    STR(log_file, "FILE", "", "append the log to this file instead of stderr (reopened on SIGHUP)"),
    STR(tls_cert, "FILE", "", "PEM certificate: serve wss:// and https:// (needs --tls-key)"),
    STR(tls_key, "FILE", "", "PEM private key of --tls-cert"),
    INT(watchdog_ms, 20, 60000, 200, "stop setpoints (stale) when no valid frame came for this long"),
    INT(max_message, 1024, 64 << 20, 1 << 20, "largest message in bytes (larger: close 1009)"),
    INT(max_beams, 1, 1000000, 100000, "most ranges in one scan"),
    INT(max_points, 1, 1000000, 100000, "most points in one points frame"),
    INT(max_connections, 1, 10000, 64, "most websocket connections at a time"),
    NUM(view_hz, 0.1, 20, 20, "view messages per second per robot"),
    INT(viewer_queue, 1, 1024, 4, "views queued per viewer; older ones are dropped for a slow viewer"),
    INT(send_queue, 4, 100000, 256,
        "setpoints and other replies queued per connection; beyond it: error, then close"),
    NUM(max_rate, 1, 100000, 1000, "messages per second per connection; beyond it: error, then close"),
    NUM(period, 0, 10, 0, "fixed control period in s for every step; 0: from frame stamps"),
    NUM(dt_min, 0.0001, 10, 0.005, "s, least control period taken from stamps"),
    NUM(dt_max, 0.0001, 10, 0.2, "s, largest control period taken from stamps"),
    INT(hello_timeout_ms, 100, 600000, 10000, "close connections that send no hello for this long"),
    INT(shutdown_ms, 0, 60000, 1000, "longest wait for the last stop setpoints at shutdown"),
};

#define N_OPTIONS (int)(sizeof options / sizeof options[0])

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
        if (o->type == OPT_STR)
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
    char *text = lc_cli_read_file(path, &len);
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
        if (o->type == OPT_STR)
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
        } else if (o->type != OPT_STR) {
            lc_wire_format_number(lo, o->lo, -1);
            lc_wire_format_number(hi, o->hi, -1);
            lc_wire_format_number(def, o->def_num, -1);
            fprintf(out, " (%s to %s, default %s)", lo, hi, def);
        }
        fputc('\n', out);
    }
}
