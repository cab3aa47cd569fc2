/*
 * bench_ws.c - `lacuna bench --roundtrip`: the time from sending a frame to
 * receiving its setpoint, over the websocket protocol on loopback, with
 * frames sent on a fixed schedule (default 1 kHz) as a fast robot would.
 *
 * Without --connect it starts its own `lacuna serve` (this program, on a
 * free loopback port, with the flood limit raised above the test rate) and
 * stops it afterwards, so the figure needs one command. Each frame is the
 * same 1081-beam scan of an invented round room with bays (a realistic
 * codec and planning load); the robot stands still, so every frame costs
 * the same. The first WARMUP frames are not counted. Times are
 * lc_mono_us() microseconds; a setpoint is matched to its frame by seq.
 *
 * The machine's share is measured in the same run: how late the client
 * woke to send each frame against its schedule (wake lag: the machine's
 * scheduling, plus the client's own reading of setpoints that arrive just
 * before). On a shared or virtual machine the operating system or the
 * hypervisor takes the CPU away for milliseconds at a time, and the server
 * waits on the same machine as the client: so both are printed side by
 * side. --runs
 * repeats the measurement (a new connection each time) and prints the
 * spread: single runs on a shared machine differ several-fold.
 */
#include <errno.h>
#include <math.h>
#include <signal.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include "cli.h"
#include "clock_mono.h"
#include "codec.h"
#include "file.h"
#include "tools.h"
#include "wsclient.h"

#define WARMUP 200
#define ANSWER_WAIT_S 2.0
#define RUNS_MAX 20

typedef struct rt_opts {
    const char *connect, *token_file;
    double rate, seconds;
    int beams, runs;
    bool json;
} rt_opts;

typedef struct rt_result {
    long sent, answered, late_sends;
    double p50, p99, max, achieved_hz;
    double lag_p50, lag_p99, lag_max; /* the client's wake lag (us) */
} rt_result;

static int parse(int argc, char **argv, rt_opts *o)
{
    *o = (rt_opts){.rate = 1000, .seconds = 5, .beams = 1081, .runs = 1,
                   .json = !isatty(STDOUT_FILENO)};
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i], *v = i + 1 < argc ? argv[i + 1] : NULL;
        char *end = NULL;
        if (strcmp(a, "--roundtrip") == 0) {
            continue;
        } else if (strcmp(a, "--json") == 0) {
            o->json = true;
            continue;
        } else if (!v) {
            return lc_cli_usage_error("bench", "%s needs a value (see lacuna bench --help)", a);
        }
        i++;
        if (strcmp(a, "--connect") == 0) {
            o->connect = v;
        } else if (strcmp(a, "--token-file") == 0) {
            o->token_file = v;
        } else if (strcmp(a, "--rate") == 0) {
            o->rate = strtod(v, &end);
            if (*end || !(o->rate >= 1 && o->rate <= 20000))
                return lc_cli_usage_error("bench", "--rate: frames per second, 1 to 20000: %s", v);
        } else if (strcmp(a, "--seconds") == 0) {
            o->seconds = strtod(v, &end);
            if (*end || !(o->seconds >= 0.5 && o->seconds <= 3600))
                return lc_cli_usage_error("bench", "--seconds: 0.5 to 3600: %s", v);
        } else if (strcmp(a, "--beams") == 0) {
            long n = strtol(v, &end, 10);
            if (*end || n < 1 || n > 100000)
                return lc_cli_usage_error("bench", "--beams: 1 to 100000: %s", v);
            o->beams = (int)n;
        } else if (strcmp(a, "--runs") == 0) {
            long n = strtol(v, &end, 10);
            if (*end || n < 1 || n > RUNS_MAX)
                return lc_cli_usage_error("bench", "--runs: 1 to %d: %s", RUNS_MAX, v);
            o->runs = (int)n;
        } else {
            return lc_cli_usage_error("bench", "%s: not an option of --roundtrip (see --help)", a);
        }
    }
    if (o->rate * o->seconds < WARMUP + 100)
        return lc_cli_usage_error("bench", "--rate x --seconds must give at least %d frames",
                                  WARMUP + 100);
    return 0;
}

/* ------------------------------------------------- our own server */

typedef struct child {
    pid_t pid;
    char url[64];
} child;

/* Reads the server's stderr until its "listening on" line gives the port. */
static int await_port(FILE *err, char *url, size_t n)
{
    char line[512];
    while (fgets(line, sizeof line, err)) {
        const char *p = strstr(line, "listening on http://127.0.0.1:");
        if (p) {
            int port = atoi(p + strlen("listening on http://127.0.0.1:"));
            if (port > 0) {
                snprintf(url, n, "ws://127.0.0.1:%d/", port);
                return 0;
            }
        }
    }
    return -1;
}

static int start_server(const rt_opts *o, child *c)
{
    int fds[2];
    if (pipe(fds) < 0)
        return lc_cli_fail("bench", "pipe: %s", strerror(errno));
    char rate[32];
    snprintf(rate, sizeof rate, "%.0f", o->rate * 4 + 100);
    c->pid = fork();
    if (c->pid < 0) {
        int e = errno;
        close(fds[0]);
        close(fds[1]);
        return lc_cli_fail("bench", "fork: %s", strerror(e));
    }
    if (c->pid == 0) {
        dup2(fds[1], STDERR_FILENO);
        close(fds[0]);
        close(fds[1]);
        execl("/proc/self/exe", "lacuna", "serve", "--listen", "127.0.0.1:0", "--max-rate", rate,
              "--watchdog-ms", "1000", "--log-level", "warn", (char *)NULL);
        _exit(127);
    }
    close(fds[1]);
    FILE *err = fdopen(fds[0], "r");
    int rc = err ? await_port(err, c->url, sizeof c->url) : -1;
    if (err)
        fclose(err); /* the server's later log lines go nowhere: it logs warnings only */
    else
        close(fds[0]);
    if (rc < 0) {
        kill(c->pid, SIGKILL);
        waitpid(c->pid, NULL, 0);
        return lc_cli_fail("bench", "could not start `lacuna serve` for the round trip");
    }
    return 0;
}

static void stop_server(child *c)
{
    if (c->pid <= 0)
        return;
    kill(c->pid, SIGTERM);
    waitpid(c->pid, NULL, 0);
}

/* ------------------------------------------------------ the client */

/* An invented round room, 4 m across, with five shallow bays; ranges in
 * millimetres, as 2-D scanners report them (17 significant digits would
 * make every number a slow one for the server's strtod). */
static void room_scan(double *ranges, int beams, lc_frame *f)
{
    double fov = 1.5 * LC_PI, step = fov / (beams > 1 ? beams - 1 : 1);
    for (int i = 0; i < beams; i++)
        ranges[i] = round(1000.0 * (4.0 + 0.4 * sin(5.0 * (-0.5 * fov + i * step)))) / 1000.0;
    *f = (lc_frame){.kind = LC_FRAME_SCAN, .pose = {0, 0, 0}, .angle_start = -0.5 * fov,
                    .angle_step = step, .range_min = 0.05, .range_max = 10.0,
                    .ranges = ranges, .n_ranges = beams};
}

typedef struct rt_run {
    lc_wsclient *ws;
    lc_wire_text text;
    char *msg;        /* the frame message being sent */
    char *tail;       /* the encoded frame from "pose" on (the same every frame) */
    size_t tail_len;
    lc_wire_buffers buf;
    double *sent_us, *rtt_us, *lag_us;
    char why[LC_WIRE_MESSAGE_MAX + 100];
} rt_run;

static int send_text(rt_run *r, int encoded)
{
    if (encoded < 0 || lc_wsclient_send(r->ws, r->text.s, (size_t)r->text.len) < 0) {
        snprintf(r->why, sizeof r->why, "cannot send: %s", lc_wsclient_reason(r->ws));
        return -1;
    }
    return 0;
}

/* Takes what arrived until deadline_us; -1 on a closed link or an error. */
static int collect(rt_run *r, double deadline_us, long frames)
{
    const char *text;
    size_t len;
    double rx;
    int rc;
    while ((rc = lc_wsclient_poll(r->ws, deadline_us, &text, &len, &rx)) == 1) {
        lc_wire_msg m;
        lc_wire_error e;
        if (lc_wire_decode(text, len, NULL, &r->buf, &m, &e) < 0)
            continue;
        if (m.type == LC_MSG_ERROR) {
            snprintf(r->why, sizeof r->why, "the server answered %s: %s",
                     lc_wire_code_name(m.u.error.code), m.u.error.message);
            return -1;
        }
        if (m.type == LC_MSG_SETPOINT && m.u.setpoint.state != LC_STATE_STALE &&
            m.u.setpoint.seq >= 0 && m.u.setpoint.seq < frames &&
            r->rtt_us[m.u.setpoint.seq] < 0)
            r->rtt_us[m.u.setpoint.seq] = rx - r->sent_us[m.u.setpoint.seq];
    }
    if (rc < 0) {
        snprintf(r->why, sizeof r->why, "%s", lc_wsclient_reason(r->ws));
        return -1;
    }
    return 0;
}

static int say_hello(rt_run *r, const rt_opts *o, char *token, int run)
{
    lc_wire_hello h = {.role = LC_ROLE_ROBOT, .has_token = o->token_file != NULL};
    snprintf(h.robot, sizeof h.robot, "bench-roundtrip-%d", run + 1);
    if (o->token_file)
        snprintf(h.token, sizeof h.token, "%.*s", LC_WIRE_TOKEN_MAX, token);
    lc_robot robot;
    lc_robot_default(&robot);
    lc_route route;
    lc_route_default(&route);
    route.count = 1;
    route.waypoints[0] = lc_v2(3.0, 0.0);
    return send_text(r, lc_wire_encode_hello(&r->text, &h)) < 0 ||
                   send_text(r, lc_wire_encode_robot(&r->text, &robot)) < 0 ||
                   send_text(r, lc_wire_encode_route(&r->text, &route)) < 0
               ? -1
               : 0;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

static double rank(const double *v, long n, double q)
{
    long i = (long)ceil(q * (double)n) - 1;
    return n ? v[i < 0 ? 0 : (i >= n ? n - 1 : i)] : NAN;
}

/* p50, p99 and max of v[0..n) (sorted in place). */
static void spread(double *v, long n, double *p50, double *p99, double *max)
{
    qsort(v, (size_t)n, sizeof *v, cmp_double);
    *p50 = rank(v, n, 0.5);
    *p99 = rank(v, n, 0.99);
    *max = n ? v[n - 1] : NAN;
}

/* One measurement on a new connection (the robot's name says which run). */
static int run(rt_run *r, const rt_opts *o, const char *url, char *token, int index,
               rt_result *res)
{
    lc_ws_url u;
    if (lc_ws_url_parse(url, &u, r->why, sizeof r->why) < 0)
        return -1;
    r->ws = lc_wsclient_open(&u, 3.0, r->why, sizeof r->why);
    if (!r->ws || say_hello(r, o, token, index) < 0)
        return -1;
    long frames = (long)(o->rate * o->seconds);
    for (long k = 0; k < frames; k++)
        r->rtt_us[k] = -1;
    double period = 1e6 / o->rate, t0 = lc_mono_us() + 50e3;
    int rc = 0;
    for (long k = 0; k < frames && rc == 0; k++) {
        double at = t0 + (double)k * period;
        rc = collect(r, at, frames);
        int head = snprintf(r->msg, 128, "{\"type\":\"scan\",\"seq\":%ld,\"stamp\":%.6f,", k,
                            (double)k / o->rate);
        memcpy(r->msg + head, r->tail, r->tail_len);
        r->sent_us[k] = lc_mono_us();
        r->lag_us[k] = r->sent_us[k] - at;
        res->late_sends += r->sent_us[k] > at + period;
        if (rc == 0 && lc_wsclient_send(r->ws, r->msg, (size_t)head + r->tail_len) < 0) {
            snprintf(r->why, sizeof r->why, "cannot send: %s", lc_wsclient_reason(r->ws));
            rc = -1;
        }
    }
    double give_up = lc_mono_us() + ANSWER_WAIT_S * 1e6;
    while (rc == 0 && r->rtt_us[frames - 1] < 0 && lc_mono_us() < give_up)
        rc = collect(r, fmin(lc_mono_us() + 1e4, give_up), frames);
    lc_wsclient_close(r->ws, 1.0);
    r->ws = NULL;
    res->sent = frames;
    res->achieved_hz = frames > 1 ? (double)(frames - 1) * 1e6 / (r->sent_us[frames - 1] - r->sent_us[0]) : NAN;
    long n = 0;
    for (long k = 0; k < frames; k++) {
        res->answered += r->rtt_us[k] >= 0;
        if (k >= WARMUP && r->rtt_us[k] >= 0)
            r->rtt_us[n++] = r->rtt_us[k];
    }
    if (rc == 0) {
        spread(r->rtt_us, n, &res->p50, &res->p99, &res->max);
        spread(r->lag_us + WARMUP, frames - WARMUP, &res->lag_p50, &res->lag_p99, &res->lag_max);
    }
    return rc;
}

/* The frame every run sends (the seq and stamp in front change). */
static int prepare(rt_run *r, const rt_opts *o)
{
    long frames = (long)(o->rate * o->seconds);
    double *ranges = calloc((size_t)o->beams, sizeof *ranges);
    r->sent_us = calloc((size_t)frames, sizeof *r->sent_us);
    r->rtt_us = malloc((size_t)frames * sizeof *r->rtt_us);
    r->lag_us = calloc((size_t)frames, sizeof *r->lag_us);
    lc_frame f;
    if (ranges)
        room_scan(ranges, o->beams, &f);
    /* Encoded once: exact number printing of 1081 ranges takes about as
     * long as a whole plan, and this measures the server, not our printf. */
    bool ok = ranges && r->sent_us && r->rtt_us && r->lag_us &&
              lc_wire_encode_frame(&r->text, &f) == 0 &&
              strstr(r->text.s, "\"pose\"") &&
              (r->tail = strdup(strstr(r->text.s, "\"pose\""))) &&
              (r->msg = malloc(strlen(r->tail) + 128));
    free(ranges);
    if (!ok) {
        snprintf(r->why, sizeof r->why, "out of memory");
        return -1;
    }
    r->tail_len = strlen(r->tail);
    return 0;
}

/* The median of the runs' values of one field (v is scratch). */
static double median_of(const rt_result *res, int n, size_t field, double *v)
{
    for (int i = 0; i < n; i++)
        v[i] = *(const double *)((const char *)&res[i] + field);
    qsort(v, (size_t)n, sizeof *v, cmp_double);
    return n % 2 ? v[n / 2] : 0.5 * (v[n / 2 - 1] + v[n / 2]);
}

static void print_json(const rt_opts *o, const char *url, bool own, const rt_result *res)
{
    double v[RUNS_MAX];
    long sent = 0, answered = 0, late = 0;
    for (int i = 0; i < o->runs; i++) {
        sent += res[i].sent;
        answered += res[i].answered;
        late += res[i].late_sends;
    }
#define MED(f) median_of(res, o->runs, offsetof(rt_result, f), v)
    printf("{\"roundtrip\": {\"server\": \"%s\", \"rate_hz\": %.0f, \"achieved_hz\": %.1f, "
           "\"beams\": %d, \"frames\": %ld, \"answered\": %ld, \"late_sends\": %ld, "
           "\"warmup\": %d, \"p50_us\": %.1f, \"p99_us\": %.1f, \"max_us\": %.1f, "
           "\"wake_lag_p50_us\": %.1f, \"wake_lag_p99_us\": %.1f, \"wake_lag_max_us\": %.1f, "
           "\"runs\": [",
           own ? "own" : url, o->rate, MED(achieved_hz), o->beams, sent, answered, late,
           WARMUP, MED(p50), MED(p99), MED(max), MED(lag_p50), MED(lag_p99), MED(lag_max));
#undef MED
    for (int i = 0; i < o->runs; i++)
        printf("%s{\"p50_us\": %.1f, \"p99_us\": %.1f, \"max_us\": %.1f, "
               "\"wake_lag_p99_us\": %.1f, \"late_sends\": %ld}",
               i ? ", " : "", res[i].p50, res[i].p99, res[i].max, res[i].lag_p99,
               res[i].late_sends);
    printf("]}}\n");
}

static void print(const rt_opts *o, const char *url, bool own, const rt_result *res)
{
    if (o->json) {
        print_json(o, url, own, res);
        return;
    }
    printf("lacuna bench --roundtrip: %d run%s of %ld frames of %d beams at %.0f Hz to %s "
           "(first %d of each not counted)\n", o->runs, o->runs > 1 ? "s" : "", res[0].sent,
           o->beams, o->rate, own ? "its own lacuna serve on loopback" : url, WARMUP);
    printf("  run  answered  achieved Hz  send to setpoint p50 / p99 / max (us)  "
           "client wake lag p99 (us)\n");
    for (int i = 0; i < o->runs; i++)
        printf("  %3d  %8ld  %11.1f  %10.1f / %8.1f / %8.1f  %24.1f\n", i + 1,
               res[i].answered, res[i].achieved_hz, res[i].p50, res[i].p99, res[i].max,
               res[i].lag_p99);
    if (o->runs > 1) {
        double v[RUNS_MAX];
        printf("  median of the runs: p50 %.1f us, p99 %.1f us, wake lag p99 %.1f us\n",
               median_of(res, o->runs, offsetof(rt_result, p50), v),
               median_of(res, o->runs, offsetof(rt_result, p99), v),
               median_of(res, o->runs, offsetof(rt_result, lag_p99), v));
    }
    printf("  wake lag: how late this client woke to send against its schedule (the machine's\n"
           "  scheduling, the server's stalls come from the same machine)\n");
}

int lc_bench_roundtrip(int argc, char **argv)
{
    rt_opts o;
    int rc = parse(argc, argv, &o);
    if (rc)
        return rc;
    static char token[LC_WIRE_TOKEN_MAX + 2];
    if (o.token_file && (rc = lc_file_read_token("bench", o.token_file, LC_WIRE_TOKEN_MAX, token,
                                                     sizeof token)))
        return rc;
    child c = {0};
    if (!o.connect && (rc = start_server(&o, &c)))
        return rc;
    /* Wake on time: the default timer slack lets a sleep overrun by 50 us,
     * which would count as the machine's lag (the server keeps its own). */
    (void)prctl(PR_SET_TIMERSLACK, 1UL, 0UL, 0UL, 0UL);
    rt_run r = {0};
    lc_wire_text_init(&r.text, NULL);
    lc_wire_buffers_init(&r.buf, NULL);
    rt_result res[RUNS_MAX] = {{0}};
    const char *url = o.connect ? o.connect : c.url;
    int ok = prepare(&r, &o);
    for (int i = 0; i < o.runs && ok == 0; i++) {
        if (isatty(STDERR_FILENO))
            fprintf(stderr, "lacuna bench: round trip, run %d of %d, %.1f s...\n", i + 1,
                    o.runs, o.seconds);
        ok = run(&r, &o, url, token, i, &res[i]);
        if (ok == 0 && res[i].answered < res[i].sent) {
            snprintf(r.why, sizeof r.why, "%ld of %ld frames were not answered",
                     res[i].sent - res[i].answered, res[i].sent);
            ok = -1;
        }
    }
    lc_wsclient_close(r.ws, 1.0);
    stop_server(&c);
    if (ok == 0)
        print(&o, url, !o.connect, res);
    else
        rc = lc_cli_fail("bench", "round trip to %s: %s", url, r.why);
    lc_wire_text_free(&r.text);
    lc_wire_buffers_free(&r.buf);
    free(r.sent_us);
    free(r.rtt_us);
    free(r.lag_us);
    free(r.msg);
    free(r.tail);
    return rc;
}
