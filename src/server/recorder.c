/*
 * recorder.c - see recorder.h. The header is built with the codec's robot
 * and route encoders, so it holds the same fields as the wire messages.
 */
#include "recorder.h"

#include <errno.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>

#include "codec.h"
#include "log.h"

/* The codec's "robot"/"route" objects minus their "type" member. */
static int write_member(FILE *f, const char *key, const char *obj)
{
    static const char robot_type[] = "{\"type\":\"robot\",";
    static const char route_type[] = "{\"type\":\"route\",";
    const char *body = obj + 1;
    if (strncmp(obj, robot_type, sizeof robot_type - 1) == 0)
        body = obj + sizeof robot_type - 1;
    else if (strncmp(obj, route_type, sizeof route_type - 1) == 0)
        body = obj + sizeof route_type - 1;
    return fprintf(f, ",\"%s\":{%s", key, body) < 0 ? -1 : 0;
}

static int write_control(FILE *f, const lc_control *c)
{
    char p[LC_WIRE_NUMBER_MAX], lo[LC_WIRE_NUMBER_MAX], hi[LC_WIRE_NUMBER_MAX],
        first[LC_WIRE_NUMBER_MAX];
    lc_wire_format_number(p, c->period, -1);
    lc_wire_format_number(lo, c->dt_min, -1);
    lc_wire_format_number(hi, c->dt_max, -1);
    lc_wire_format_number(first, c->first_dt, -1);
    return fprintf(f,
                   ",\"control\":{\"period\":%s,\"dt_min\":%s,\"dt_max\":%s,\"first_dt\":%s,"
                   "\"watchdog_ms\":%d}",
                   p, lo, hi, first, c->watchdog_ms) < 0
               ? -1
               : 0;
}

static int write_header(FILE *f, const lc_robot *robot, const lc_route *route,
                        const lc_control *control)
{
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    int rc = fputs("{\"type\":\"scenario\",\"version\":1", f) < 0 ? -1 : 0;
    if (rc == 0 && lc_wire_encode_robot(&t, robot) == 0)
        rc = write_member(f, "robot", t.s);
    else
        rc = -1;
    if (rc == 0 && lc_wire_encode_route(&t, route) == 0)
        rc = write_member(f, "route", t.s);
    else
        rc = -1;
    lc_wire_text_free(&t);
    if (rc == 0)
        rc = write_control(f, control);
    if (rc == 0 && (fputs("}\n", f) < 0 || fflush(f) != 0))
        rc = -1;
    return rc;
}

static FILE *create_file(char *path, size_t n, const char *dir, const char *name)
{
    char when[32];
    time_t now = time(NULL);
    struct tm tm;
    gmtime_r(&now, &tm);
    strftime(when, sizeof when, "%Y%m%dT%H%M%SZ", &tm);
    for (int k = 0; k < 1000; k++) {
        snprintf(path, n, "%s/%s-%s-%d.jsonl", dir, name, when, k);
        FILE *f = fopen(path, "wx");
        if (f || errno != EEXIST)
            return f;
    }
    return NULL;
}

int lc_recorder_open(lc_recorder *rec, const char *dir, const char *robot_name,
                     const lc_robot *robot, const lc_route *route,
                     const lc_control *control)
{
    memset(rec, 0, sizeof *rec);
    rec->control = *control;
    FILE *f = create_file(rec->path, sizeof rec->path, dir, robot_name);
    if (!f)
        return -1;
    if (write_header(f, robot, route, control) < 0) {
        int e = errno;
        fclose(f);
        errno = e;
        return -1;
    }
    rec->file = f;
    lc_log(LC_LOG_INFO, "recording %s to %s", robot_name, rec->path);
    return 0;
}

bool lc_recorder_is_open(const lc_recorder *rec) { return rec->file != NULL; }

static void stop_failed(lc_recorder *rec)
{
    rec->error = errno;
    lc_log(LC_LOG_ERROR, "recording %s: %s; recording stopped", rec->path, strerror(errno));
    fclose(rec->file);
    rec->file = NULL;
    rec->failed = true;
}

int lc_recorder_line(lc_recorder *rec, const char *text, size_t len)
{
    if (!rec->file)
        return -1;
    if (fwrite(text, 1, len, rec->file) != len || fputc('\n', rec->file) == EOF ||
        fflush(rec->file) != 0) {
        stop_failed(rec);
        return -1;
    }
    return 0;
}

int lc_recorder_reopen(lc_recorder *rec, const lc_robot *robot, const lc_route *route)
{
    if (!rec->file)
        return 0;
    fclose(rec->file);
    rec->file = fopen(rec->path, "a");
    if (!rec->file) {
        rec->error = errno;
        lc_log(LC_LOG_ERROR, "recording %s: %s; recording stopped", rec->path, strerror(errno));
        rec->failed = true;
        return -1;
    }
    if (ftell(rec->file) == 0 && write_header(rec->file, robot, route, &rec->control) < 0) {
        stop_failed(rec);
        return -1;
    }
    return 0;
}

void lc_recorder_close(lc_recorder *rec)
{
    if (rec->file)
        fclose(rec->file);
    rec->file = NULL;
}
