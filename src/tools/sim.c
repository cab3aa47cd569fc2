/*
 * sim.c - `lacuna sim`: a closed loop in a scenario's world of polygons.
 *
 * Frame after frame, in time order across the header's sensors (a 40 Hz
 * scanner and a 30 Hz camera interleave, simsensors.h): a ray-cast scan or
 * set of points from the true pose (range noise from --seed), one
 * lc_session_drive, then the robot follows that frame's setpoint exactly
 * (zero-order hold, no slip) until the next frame of any sensor (one
 * control period, 1 / rate, with a single sensor), integrated in substeps
 * of at most 1 ms: the point model moves by its robot-frame
 * velocity rotated into the world (its heading never changes), the unicycle
 * drives the exact arc of (v, w). After every substep the footprint is
 * checked against the world: a disc's clearance is lc_world_distance -
 * radius, a polygon's the least distance between it and the world's
 * polygons (lc_world_polygon_distance, negative when they overlap); a
 * collision is each time the clearance goes below zero.
 *
 * The run ends when the route is done (a looping route: once its last
 * waypoint has been reached, the "lap" event), when the robot has been `blocked`
 * (held: the world is static, it stays so) for BLOCKED_HOLD s without a
 * break (outcome "blocked"), or `too_close` for STUCK_HOLD s (and 1 s
 * more than the route's blocked time) without a break (outcome "stuck":
 * easing out of the margin, a unicycle may first turn round, and that
 * takes a few seconds), or at the time limit (outcome "timeout"; --max-time,
 * else the header's max_time, else 600 s).
 * Success (exit 0) is the header's expectation met without a collision:
 * expect "done" wants the route finished, expect "blocked" wants the run to
 * end blocked (and nothing hit on the way). Stamps are j / rate of each
 * sensor and every frame goes through lc_session_drive (the dt rule of
 * control.h, stored in the --out header), so `--out` gives a file `lacuna
 * replay` reproduces exactly.
 *
 * --connect: the same loop, but each frame goes over the real protocol to a
 * running `lacuna serve` (simlink.h) and the robot follows the setpoint
 * the server sends back; frames leave at the sensor rate in wall-clock
 * time, as a robot's scanner would send them, so a viewer sees the patrol
 * live. compute time is then the round trip (frame sent to setpoint
 * received). --laps N repeats the route N times (0: until interrupted): a
 * looping route just goes on, a finished one starts over from the start
 * pose with the route sent again. SIGINT/SIGTERM end the run cleanly (a
 * normal close, the metrics so far, exit 1).
 */
#include <errno.h>
#include <math.h>
#include <signal.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "clock_mono.h"
#include "file.h"
#include "replay.h"
#include "signals.h"
#include "simlink.h"
#include "simbatch.h"
#include "simsensors.h"
#include "svg.h"
#include "tools.h"
#include "world.h"
#include "wsclient.h"

static const char usage[] =
    "usage: lacuna sim FILE [--model point|unicycle] [--seed N] [--out FILE]\n"
    "                  [--svg FILE] [--json] [--max-time S]\n"
    "       lacuna sim FILE --connect ws://HOST:PORT/ [--token-file FILE]\n"
    "                  [--name NAME] [--laps N] [--model M] [--seed N] [--svg FILE]\n"
    "       lacuna sim FILE... | DIR [--jobs N] [--model point|unicycle|both]\n"
    "                  [--svg-dir DIR] [--json] [--seed N] [--seeds K]\n"
    "                  [--max-time S]\n"
    "\n"
    "Closed loop in the world of the scenario FILE: a ray-cast scanner (its\n"
    "header's sensor), or each of its sensors at its own rate (\"sensors\": scans,\n"
    "or rays returned as points; their frames in time order, each naming its\n"
    "sensor, the robot description listing them), the robot following each\n"
    "setpoint exactly until the next frame (1 ms substeps), the patrol route of\n"
    "the header.\n"
    "\n"
    "  --model M      override the header's robot model (point or unicycle)\n"
    "  --seed N       seed of the range noise (default 1)\n"
    "  --max-time S   stop after S simulated seconds (default: the header's\n"
    "                 max_time, else 600)\n"
    "  --out FILE     write the run as a scenario that `lacuna replay`\n"
    "                 reproduces exactly\n"
    "  --svg FILE     render the run\n"
    "  --json         JSON on stdout even on a terminal\n"
    "\n"
    "  --connect URL  have a running `lacuna serve` plan instead: the frames go\n"
    "                 over the websocket protocol at the sensor rate (real time)\n"
    "                 and the robot follows the setpoints the server sends back;\n"
    "                 open the server's viewer page to watch\n"
    "  --token-file F the robot token the server wants (its --token-file)\n"
    "  --name NAME    robot name on the server (default: the file's name)\n"
    "  --laps N       with --connect: drive the route N times, 0 until\n"
    "                 interrupted (default 1)\n"
    "  --timeout S    with --connect: longest wait for a setpoint (default 2)\n"
    "\n"
    "  Several FILEs or a DIR (its *.jsonl files at any depth, sorted): a batch,\n"
    "  each run a `lacuna sim FILE --json` of its own, and a table per family\n"
    "  (the header's \"family\") and model: runs, done, collisions, blocked, other\n"
    "  outcomes, median time and median time / (shortest_path / v_max) of the\n"
    "  runs done, and the share done with its 95 % interval (done_95%: 51 of 60\n"
    "  is 74-92, so a few runs more or less in a suite of 60 worlds tell two\n"
    "  settings apart only by chance). The table is printed even when stdout is\n"
    "  not a terminal.\n"
    "  --jobs N       runs at once (default: the number of online CPUs)\n"
    "  --model M      point, unicycle or both (default: each header's model)\n"
    "  --seeds K      run each world and model K times, with the range noise\n"
    "                 seeds N, N + 1, ... N + K - 1 (N: --seed; default K 1)\n"
    "  --svg-dir DIR  an SVG of each run that failed, DIR/NAME.MODEL.svg\n"
    "                 (DIR/NAME.MODEL.seedS.svg with --seeds)\n"
    "  --json         one object instead: \"groups\" and \"totals\" with the\n"
    "                 table's figures, \"runs\" with file, family, model, outcome,\n"
    "                 seed, ok, collisions, sim_time, shortest_path and ratio of\n"
    "                 each run; done_low and done_high bound the share done\n"
    "  A batch exits 0 when every run met its header's expectation without a\n"
    "  collision, 1 otherwise.\n"
    "\n"
    "stdout: {\"done\":b,\"waypoints_reached\":n,\"collisions\":n,\n"
    "\"min_clearance\":m,\"path_length\":m,\"sim_time\":s,\"frames\":n,...}\n"
    "exit status: 0 when the route was done (a looping route once round)\n"
    "without a collision, 1 otherwise, 2 bad usage or file. \"ok\" in the\n"
    "output says whether the header's expectation was met (expect \"done\",\n"
    "the default, or \"blocked\": the run ended blocked without a collision).\n"
    "With --connect, round_trip_us replaces compute_us, and the exit is 1 also\n"
    "when the server cannot be reached or refuses a message, or on Ctrl-C.\n";

void lc_sim_help(FILE *out) { fputs(usage, out); }

#define SUBSTEP_MAX 0.001 /* s */
#define BLOCKED_HOLD 3.0  /* s */
#define STUCK_HOLD 10.0   /* s */
#define DEFAULT_MAX_TIME 600.0

typedef struct sim_opts {
    const char *file, *out, *svg;
    bool json, has_model;
    lc_model model;
    uint64_t seed;
    double max_time; /* 0: from the header */
    const char *connect, *token_file, *name;
    long laps;        /* with connect: 0 = until interrupted */
    double timeout_s; /* with connect */
} sim_opts;

/* stuck: `too_close` without a break for STUCK_HOLD s. */
typedef enum outcome { OUT_DONE = 0, OUT_BLOCKED, OUT_STUCK, OUT_TIMEOUT, OUT_INTERRUPTED } outcome;
static const char *const outcome_names[] = {"done", "blocked", "stuck", "timeout",
                                            "interrupted"};

typedef struct sim_metrics {
    outcome end;
    int reached, collisions;
    bool lapped; /* a looping route came round once */
    long laps;   /* routes finished (--connect --laps) */
    long frames;
    double min_clearance, path_length, sim_time;
    double *us;  /* per-frame compute time */
    int cap_us;
    long states[LC_STATE_COUNT];
    long limits[LC_LIMIT_COUNT];
} sim_metrics;

typedef struct sim {
    const sim_opts *o;
    lc_scenario_header *h;
    lc_world world;
    lc_simsensors sensors;
    lc_sim_rng rng;
    lc_session *s;
    lc_pose pose;
    bool in_contact;
    bool hold_blocked; /* a `blocked` frame since the hold began */
    FILE *out;
    lc_wire_text text;
    lc_svg_run svg;
    sim_metrics m;
    lc_simlink *link; /* --connect: the server plans */
    double t0_us;     /* --connect: wall time of frame 0 */
    char why[LC_WIRE_MESSAGE_MAX + 128]; /* why a --connect run failed */
} sim;

/* The link a signal interrupts (one sim per process). */
static lc_simlink *volatile signal_link;
static volatile sig_atomic_t signalled;

static void on_signal(int sig)
{
    (void)sig;
    signalled = 1;
    lc_simlink_interrupt(signal_link);
}

static int parse_value(const char *opt, const char *v, sim_opts *o)
{
    char *end;
    if (strcmp(opt, "--model") == 0) {
        o->has_model = true;
        if (strcmp(v, "point") == 0)
            o->model = LC_MODEL_POINT;
        else if (strcmp(v, "unicycle") == 0)
            o->model = LC_MODEL_UNICYCLE;
        else
            return lc_cli_usage_error("sim", "--model: point or unicycle, not %s", v);
    } else if (strcmp(opt, "--seed") == 0) {
        errno = 0;
        unsigned long long n = strtoull(v, &end, 10);
        if (*v == '\0' || *v == '-' || *end != '\0' || errno)
            return lc_cli_usage_error("sim", "--seed: not a whole number >= 0: %s", v);
        o->seed = n;
    } else if (strcmp(opt, "--max-time") == 0) {
        o->max_time = strtod(v, &end);
        if (*v == '\0' || *end != '\0' || !(o->max_time > 0) || isinf(o->max_time))
            return lc_cli_usage_error("sim", "--max-time: not a number > 0: %s", v);
    } else if (strcmp(opt, "--laps") == 0) {
        errno = 0;
        long n = strtol(v, &end, 10);
        if (*v == '\0' || *end != '\0' || errno || n < 0)
            return lc_cli_usage_error("sim", "--laps: not a whole number >= 0: %s", v);
        o->laps = n;
    } else if (strcmp(opt, "--timeout") == 0) {
        o->timeout_s = strtod(v, &end);
        if (*v == '\0' || *end != '\0' || !(o->timeout_s > 0) || o->timeout_s > 3600)
            return lc_cli_usage_error("sim", "--timeout: not a number of seconds in (0, 3600]: %s",
                                      v);
    } else if (strcmp(opt, "--connect") == 0) {
        o->connect = v;
    } else if (strcmp(opt, "--token-file") == 0) {
        o->token_file = v;
    } else if (strcmp(opt, "--name") == 0) {
        o->name = v;
    } else if (strcmp(opt, "--out") == 0) {
        o->out = v;
    } else {
        o->svg = v;
    }
    return 0;
}

/* Robot names on the wire: [A-Za-z0-9_.-], not starting with '.'. */
static bool valid_name(const char *s)
{
    size_t n = strlen(s);
    if (n == 0 || n > LC_WIRE_NAME_MAX || s[0] == '.')
        return false;
    for (size_t i = 0; i < n; i++)
        if (!(s[i] == '_' || s[i] == '.' || s[i] == '-' || (s[i] >= '0' && s[i] <= '9') ||
              (s[i] >= 'a' && s[i] <= 'z') || (s[i] >= 'A' && s[i] <= 'Z')))
            return false;
    return true;
}

static int check_connect_args(const sim_opts *o)
{
    if (!o->connect) {
        const char *only = o->token_file ? "--token-file"
                           : o->name     ? "--name"
                           : o->laps != 1 ? "--laps"
                                          : NULL;
        if (only)
            return lc_cli_usage_error("sim", "%s needs --connect URL", only);
        return 0;
    }
    lc_ws_url url;
    char why[300];
    if (lc_ws_url_parse(o->connect, &url, why, sizeof why) < 0)
        return lc_cli_usage_error("sim", "--connect: %s", why);
    if (o->out)
        return lc_cli_usage_error("sim", "--out with --connect: the server plans, so record "
                                         "with `lacuna serve --record DIR` instead");
    if (o->name && !valid_name(o->name))
        return lc_cli_usage_error("sim", "--name: 1 to %d of A-Z a-z 0-9 _ . - (not starting "
                                         "with '.'): %s", LC_WIRE_NAME_MAX, o->name);
    return 0;
}

static int parse_args(int argc, char **argv, sim_opts *o)
{
    *o = (sim_opts){.seed = 1, .laps = 1, .timeout_s = 2.0};
    static const char *const valued[] = {"--model", "--seed",       "--max-time", "--out",
                                         "--svg",   "--connect",    "--token-file",
                                         "--name",  "--laps",       "--timeout"};
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        bool known = false;
        for (size_t k = 0; k < sizeof valued / sizeof valued[0]; k++)
            known = known || strcmp(a, valued[k]) == 0;
        if (strcmp(a, "--json") == 0) {
            o->json = true;
        } else if (known) {
            if (i + 1 >= argc)
                return lc_cli_usage_error("sim", "%s needs a value", a);
            int rc = parse_value(a, argv[++i], o);
            if (rc)
                return rc;
        } else if (a[0] == '-' && a[1] != '\0') {
            return lc_cli_usage_error("sim", "unknown option %s (see --help)", a);
        } else if (o->file) {
            return lc_cli_usage_error("sim", "one scenario FILE only");
        } else {
            o->file = a;
        }
    }
    if (!o->file)
        return lc_cli_usage_error("sim", "no scenario FILE (see --help)");
    return check_connect_args(o);
}

/* ----------------------------------------------------------- the loop */

static double clearance_at(const sim *sm, lc_pose p)
{
    const lc_robot *r = &sm->h->robot;
    if (lc_robot_has_footprint(r)) {
        lc_vec2 foot[LC_FOOTPRINT_MAX];
        return lc_world_polygon_distance(&sm->world, foot, lc_robot_place_footprint(r, p, foot));
    }
    return lc_world_distance(&sm->world, lc_v2(p.x, p.y)) - r->radius;
}

static void check_contact(sim *sm)
{
    double c = clearance_at(sm, sm->pose);
    sm->m.min_clearance = fmin(sm->m.min_clearance, c);
    if (c < 0 && !sm->in_contact)
        sm->m.collisions++;
    sm->in_contact = c < 0;
}

/* The robot follows sp for `period` seconds. */
static void integrate(sim *sm, const lc_setpoint *sp, double period)
{
    int n = (int)ceil(period / SUBSTEP_MAX - 1e-9);
    n = n < 1 ? 1 : n;
    double h = period / n;
    bool uni = sm->h->robot.model == LC_MODEL_UNICYCLE;
    for (int i = 0; i < n; i++) {
        if (uni && sp->v != 0) {
            sm->pose = lc_motion_arc(sm->pose, sp->w / sp->v, sp->v * h);
        } else if (uni) {
            sm->pose.yaw += sp->w * h;
        } else {
            lc_vec2 d = lc_rotate(lc_v2(sp->vx * h, sp->vy * h), sm->pose.yaw);
            sm->pose.x += d.x;
            sm->pose.y += d.y;
        }
        sm->m.path_length += (uni ? fabs(sp->v) : hypot(sp->vx, sp->vy)) * h;
        check_contact(sm);
    }
    sm->pose.yaw = lc_wrap_angle(sm->pose.yaw);
}

static int record(sim *sm, const lc_frame *f, const lc_plan_result *res, const lc_reply *sp)
{
    if (!sm->out)
        return 0;
    if (lc_wire_encode_frame(&sm->text, f) < 0 || lc_replay_put_line(sm->out, &sm->text) < 0 ||
        lc_wire_encode_setpoint(&sm->text, sp) < 0 ||
        lc_replay_put_line(sm->out, &sm->text) < 0)
        return -1;
    for (int i = 0; i < res->n_events; i++) {
        lc_wire_event ev = {.ev = res->events[i], .seq = f->seq};
        if (lc_wire_encode_event(&sm->text, &ev) < 0 || lc_replay_put_line(sm->out, &sm->text) < 0)
            return -1;
    }
    return 0;
}

static void count_events(sim *sm, const lc_plan_result *res)
{
    sim_metrics *m = &sm->m;
    for (int i = 0; i < res->n_events; i++) {
        m->reached += res->events[i].kind == LC_EVENT_REACHED;
        m->lapped = m->lapped || res->events[i].kind == LC_EVENT_LAP;
    }
}

static void count(sim *sm, const lc_plan_result *res)
{
    sim_metrics *m = &sm->m;
    if (LC_GROW(NULL, m->us, m->cap_us, (int)m->frames + 1) == 0)
        m->us[m->frames] = res->total_us;
    m->frames++;
    if (res->state >= 0 && res->state < LC_STATE_COUNT)
        m->states[res->state]++;
    if (res->setpoint.limit >= 0 && res->setpoint.limit < LC_LIMIT_COUNT)
        m->limits[res->setpoint.limit]++;
    count_events(sm, res);
}

/*
 * The plan of frame f: from the local session, or over --connect from the
 * server (paced: frame k leaves at t0 + k periods of wall time). 0, -1 out
 * of memory, -3 the link failed or was interrupted (sm->why).
 */
static int plan(sim *sm, const lc_frame *f, lc_plan_result *res, lc_reply *reply)
{
    if (!sm->link)
        return lc_session_drive(sm->s, f, res, reply) < 0 ? -1 : 0;
    double at = sm->t0_us + f->stamp * 1e6;
    if (lc_simlink_idle(sm->link, at, sm->why, sizeof sm->why) < 0 ||
        lc_simlink_step(sm->link, f, res, reply, sm->why, sizeof sm->why) < 0)
        return -3;
    return 0;
}

/*
 * The route was finished (once round, for a looping one): 1 when the run
 * ends, 0 to drive it again (--connect --laps), -3 when the link failed.
 */
static int route_finished(sim *sm, bool looping)
{
    sm->m.laps++;
    if (!sm->link || (sm->o->laps > 0 && sm->m.laps >= sm->o->laps))
        return 1;
    sm->m.lapped = false;
    if (looping)
        return 0; /* the patrol goes on round the loop */
    sm->pose = sm->h->start;
    sm->in_contact = false;
    return lc_simlink_send_route(sm->link, &sm->h->route, sm->why, sizeof sm->why) < 0 ? -3 : 0;
}

/* One frame and the time until the next; 1 when the run ends, 0 to go on,
 * <0 on failure. */
/* How long too_close may last before the run is stuck: STUCK_HOLD, and
 * longer than the route's blocked time, which runs on while the robot is
 * held (the patrol then blocks it: outcome "blocked"). */
static double stuck_hold(const sim *sm)
{
    double bt = sm->h->route.blocked_time;
    return bt > 0 && isfinite(bt) ? fmax(STUCK_HOLD, bt + 1.0) : STUCK_HOLD;
}

static int period_step(sim *sm, double *blocked_since)
{
    double stamp, next;
    int k = lc_simsensors_next(&sm->sensors, &stamp);
    lc_frame f = lc_simsensors_frame(&sm->sensors, &sm->world, sm->pose, &sm->rng);
    /* the time to the next frame: 0 when another sensor's shares the stamp;
     * 1 / rate between a sensor's own frames, exactly the period of the
     * single-sensor loop (the stamps' difference may be an ulp off) */
    double period = lc_simsensors_next(&sm->sensors, &next) == k
                        ? 1.0 / sm->sensors.s[k].rays.rate
                        : next - stamp;
    lc_plan_result res;
    lc_reply reply;
    int rc = plan(sm, &f, &res, &reply);
    if (rc < 0)
        return rc;
    count(sm, &res);
    if (sm->o->svg)
        lc_svg_run_add(&sm->svg, &f, &res, clearance_at(sm, f.pose));
    if (record(sm, &f, &res, &reply) < 0)
        return -2;
    sm->m.sim_time = stamp;
    if (res.state == LC_STATE_DONE || sm->m.lapped) {
        if ((rc = route_finished(sm, res.state != LC_STATE_DONE)) != 0) {
            sm->m.end = OUT_DONE;
            return rc;
        }
        *blocked_since = -1;
        if (res.state == LC_STATE_DONE)
            return 0; /* back at the start: no setpoint to follow */
    }
    if (res.state == LC_STATE_BLOCKED || res.state == LC_STATE_TOO_CLOSE) {
        if (*blocked_since < 0) {
            *blocked_since = stamp;
            sm->hold_blocked = false;
        }
        sm->hold_blocked = sm->hold_blocked || res.state == LC_STATE_BLOCKED;
        if (stamp - *blocked_since >= (sm->hold_blocked ? BLOCKED_HOLD : stuck_hold(sm))) {
            sm->m.end = sm->hold_blocked ? OUT_BLOCKED : OUT_STUCK;
            return 1;
        }
    } else {
        *blocked_since = -1;
    }
    integrate(sm, &res.setpoint, period);
    sm->m.sim_time = stamp + period;
    return 0;
}

static int run_loop(sim *sm, double max_time)
{
    double blocked_since = -1, stamp;
    sm->m.end = OUT_TIMEOUT;
    check_contact(sm);
    double t_start = lc_mono_us(), t_progress = 0;
    while (lc_simsensors_next(&sm->sensors, &stamp), stamp <= max_time) {
        int rc = period_step(sm, &blocked_since);
        if (rc == -1)
            return lc_cli_fail("sim", "out of memory");
        if (rc == -2)
            return lc_cli_fail("sim", "cannot write %s", sm->o->out);
        if (rc == -3 && signalled) {
            sm->m.end = OUT_INTERRUPTED;
            return 0;
        }
        if (rc == -3)
            return lc_cli_fail("sim", "%s: %s", sm->o->connect, sm->why);
        if (rc == 1)
            break;
        double now = lc_mono_us();
        /* --connect runs in real time: the viewer page is its progress */
        if (!sm->link && isatty(STDERR_FILENO) && now - t_start > 1e6 &&
            now - t_progress > 5e5) {
            t_progress = now;
            fprintf(stderr, "\rlacuna sim: %.1f s simulated", sm->m.sim_time);
        }
    }
    if (t_progress > 0)
        fputc('\n', stderr);
    if (sm->m.end == OUT_TIMEOUT && blocked_since >= 0)
        sm->m.end = sm->hold_blocked ? OUT_BLOCKED : OUT_STUCK;
    return 0;
}

/* -------------------------------------------------------------- output */

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Nearest-rank percentile of sorted v[0..n). */
static double percentile(const double *v, long n, double q)
{
    if (n <= 0)
        return NAN;
    long i = (long)ceil(q * (double)n) - 1;
    return v[i < 0 ? 0 : (i >= n ? n - 1 : i)];
}

static bool success(const sim *sm)
{
    outcome want = sm->h->expect == LC_EXPECT_BLOCKED ? OUT_BLOCKED : OUT_DONE;
    return sm->m.end == want && sm->m.collisions == 0;
}

static void print_counts(const long *counts, int n, const char *(*name)(int))
{
    bool first = true;
    putchar('{');
    for (int i = 0; i < n; i++) {
        if (!counts[i])
            continue;
        printf("%s\"%s\":%ld", first ? "" : ",", name(i), counts[i]);
        first = false;
    }
    putchar('}');
}

static const char *state_name(int i) { return lc_state_name((lc_state)i); }
static const char *limit_name(int i) { return lc_limit_name((lc_limit)i); }

static const char *num6(char *buf, double x)
{
    lc_wire_format_number(buf, x, 6);
    return buf;
}

static void print_json(const sim *sm, double med, double p99, double max)
{
    const sim_metrics *m = &sm->m;
    char a[LC_WIRE_NUMBER_MAX], b[LC_WIRE_NUMBER_MAX], c[LC_WIRE_NUMBER_MAX];
    printf("{\"done\":%s,\"waypoints_reached\":%d,\"collisions\":%d,\"min_clearance\":%s,"
           "\"path_length\":%s,\"sim_time\":%s,\"frames\":%ld,",
           m->end == OUT_DONE ? "true" : "false", m->reached, m->collisions,
           num6(a, m->min_clearance), num6(b, m->path_length), num6(c, m->sim_time), m->frames);
    printf("\"outcome\":\"%s\",\"expect\":\"%s\",\"ok\":%s,\"model\":\"%s\",\"seed\":%llu,",
           outcome_names[m->end], lc_scenario_expect_name(sm->h->expect),
           success(sm) ? "true" : "false",
           sm->h->robot.model == LC_MODEL_UNICYCLE ? "unicycle" : "point",
           (unsigned long long)sm->o->seed);
    if (sm->o->connect)
        printf("\"laps\":%ld,\"round_trip_us\":", m->laps);
    else
        printf("\"compute_us\":");
    printf("{\"median\":%s,\"p99\":%s,\"max\":%s},\"states\":", num6(a, med), num6(b, p99),
           num6(c, max));
    print_counts(m->states, LC_STATE_COUNT, state_name);
    printf(",\"limits\":");
    print_counts(m->limits, LC_LIMIT_COUNT, limit_name);
    printf("}\n");
}

static void print_human(const sim *sm, double med, double p99)
{
    const sim_metrics *m = &sm->m;
    printf("%s (%s robot, seed %llu): %s, expected %s -> %s\n", sm->o->file,
           sm->h->robot.model == LC_MODEL_UNICYCLE ? "unicycle" : "point",
           (unsigned long long)sm->o->seed, outcome_names[m->end],
           lc_scenario_expect_name(sm->h->expect), success(sm) ? "ok" : "FAILED");
    printf("  waypoints reached %d of %d, collisions %d, min clearance %.3f m\n", m->reached,
           sm->h->route.count, m->collisions, m->min_clearance);
    printf("  path %.2f m in %.2f s, %ld frames, %s per frame median %.1f us, p99 %.1f us\n",
           m->path_length, m->sim_time, m->frames,
           sm->o->connect ? "round trip" : "compute", med, p99);
    if (sm->o->connect)
        printf("  planned by %s, laps %ld\n", sm->o->connect, m->laps);
}

static void print_result(sim *sm)
{
    sim_metrics *m = &sm->m;
    qsort(m->us, (size_t)m->frames, sizeof m->us[0], cmp_double);
    double med = percentile(m->us, m->frames, 0.5), p99 = percentile(m->us, m->frames, 0.99);
    double max = m->frames ? m->us[m->frames - 1] : NAN;
    if (lc_replay_want_json(sm->o->json))
        print_json(sm, med, p99, max);
    else
        print_human(sm, med, p99);
}

static int write_svg(sim *sm)
{
    FILE *f = fopen(sm->o->svg, "w");
    if (!f)
        return lc_cli_fail("sim", "cannot write %s: %s", sm->o->svg, strerror(errno));
    lc_svg_scene scene = {.title = sm->h->description[0] ? sm->h->description : sm->o->file,
                          .world = &sm->world.polys,
                          .route = &sm->h->route,
                          .radius = sm->h->robot.radius,
                          .footprint = sm->h->robot.footprint,
                          .n_footprint = sm->h->robot.n_footprint};
    int rc = lc_svg_write(f, &sm->svg, &scene);
    if (fclose(f) != 0 || rc < 0)
        return lc_cli_fail("sim", "cannot write %s", sm->o->svg);
    return 0;
}

/* ------------------------------------------------------------- set-up */

static int check_header(const sim_opts *o, lc_scenario_header *h)
{
    if (!h->has_world)
        return lc_cli_usage_error("sim", "%s: the header has no world", o->file);
    if (!h->has_start)
        return lc_cli_usage_error("sim", "%s: the header has no start pose", o->file);
    if (!h->has_route || h->route.count == 0)
        return lc_cli_usage_error("sim", "%s: the header has no route", o->file);
    if (o->has_model)
        h->robot.model = o->model;
    h->has_robot = true;
    /* the default sensor when none is given; written with --out */
    h->has_sensor = h->n_sensors == 0;
    lc_simsensors_describe(h, &h->robot);
    return 0;
}

static int open_outputs(sim *sm)
{
    if (!sm->o->out)
        return 0;
    sm->out = fopen(sm->o->out, "w");
    if (!sm->out || lc_replay_put_header(sm->out, sm->h) < 0)
        return lc_cli_fail("sim", "cannot write %s", sm->o->out);
    return 0;
}

/* The default robot name: the scenario file's base name, made wire-safe. */
static void name_from_file(const char *path, char *out, size_t n)
{
    const char *b = strrchr(path, '/');
    b = b ? b + 1 : path;
    size_t k = 0;
    for (; b[k] && b[k] != '.' && k + 1 < n && k < LC_WIRE_NAME_MAX; k++) {
        char c = b[k];
        bool ok = c == '_' || c == '-' || (c >= '0' && c <= '9') || (c >= 'a' && c <= 'z') ||
                  (c >= 'A' && c <= 'Z');
        out[k] = ok ? c : '-';
    }
    out[k] = '\0';
    if (k == 0)
        snprintf(out, n, "sim");
}

static void catch_signals(lc_simlink *link)
{
    static const int sigs[] = {SIGINT, SIGTERM};
    signal_link = link;
    lc_signals_catch(on_signal, sigs, 2);
}

static int open_link(sim *sm)
{
    static char token[LC_WIRE_TOKEN_MAX + 2];
    char name[LC_WIRE_NAME_MAX + 1];
    int rc;
    if (sm->o->token_file &&
        (rc = lc_file_read_token("sim", sm->o->token_file, LC_WIRE_TOKEN_MAX, token,
                                  sizeof token)))
        return rc;
    if (sm->o->name)
        snprintf(name, sizeof name, "%s", sm->o->name);
    else
        name_from_file(sm->o->file, name, sizeof name);
    lc_simlink_opts lo = {.url = sm->o->connect,
                          .name = name,
                          .token = sm->o->token_file ? token : NULL,
                          .timeout_s = sm->o->timeout_s};
    sm->link = lc_simlink_open(&lo, &sm->h->robot, &sm->h->route, sm->why, sizeof sm->why);
    if (!sm->link)
        return lc_cli_fail("sim", "%s", sm->why);
    catch_signals(sm->link);
    if (!sm->o->json && isatty(STDERR_FILENO))
        fprintf(stderr, "lacuna sim: robot %s driving through %s (Ctrl-C stops)\n", name,
                sm->o->connect);
    sm->t0_us = lc_mono_us();
    return 0;
}

/* The longest run: --max-time, the header's max_time, the default; with
 * --connect --laps 0 no limit unless --max-time is given. */
static double run_time_limit(const sim *sm)
{
    if (sm->o->max_time > 0)
        return sm->o->max_time;
    if (sm->link && sm->o->laps == 0)
        return INFINITY;
    return sm->h->max_time > 0 ? sm->h->max_time : DEFAULT_MAX_TIME;
}

static int sim_run(sim *sm)
{
    const lc_scenario_header *h = sm->h;
    sm->world.polys = h->world; /* borrowed: the header frees it */
    sm->rng.state = sm->o->seed;
    sm->pose = h->start;
    sm->m.min_clearance = INFINITY;
    sm->s = lc_replay_session(h);
    if (lc_simsensors_init(&sm->sensors, h) < 0 || !sm->s)
        return lc_cli_fail("sim", "out of memory");
    lc_session_set_clock(sm->s, lc_mono_clock());
    int rc = open_outputs(sm);
    if (!rc && sm->o->connect)
        rc = open_link(sm);
    if (!rc)
        rc = run_loop(sm, run_time_limit(sm));
    if (!rc && sm->link) {
        lc_plan_result late = {0}; /* events still in flight after the last setpoint */
        lc_simlink_drain(sm->link, 0.2, &late);
        count_events(sm, &late);
    }
    signal_link = NULL;
    lc_simlink_close(sm->link);
    sm->link = NULL;
    if (sm->out && fclose(sm->out) != 0 && !rc)
        rc = lc_cli_fail("sim", "cannot write %s", sm->o->out);
    if (!rc && sm->o->svg)
        rc = write_svg(sm);
    return rc;
}

int lc_tool_sim(int argc, char **argv)
{
    if (lc_sim_batch_wanted(argc, argv))
        return lc_sim_batch(argc, argv);
    sim_opts o;
    int rc = parse_args(argc, argv, &o);
    if (rc)
        return rc;
    char *text;
    size_t len;
    lc_scenario_reader rd;
    lc_scenario_header h;
    if ((rc = lc_replay_load("sim", o.file, &text, &len, &rd, &h)))
        return rc;
    if ((rc = check_header(&o, &h)) == 0) {
        sim sm = {.o = &o, .h = &h};
        lc_wire_text_init(&sm.text, NULL);
        lc_svg_run_init(&sm.svg, 10);
        rc = sim_run(&sm);
        if (!rc) {
            print_result(&sm);
            /* docs/INTERFACES.md: 0 only for a route done without a collision */
            rc = sm.m.end == OUT_DONE && sm.m.collisions == 0 ? LC_EXIT_OK : LC_EXIT_FAIL;
        }
        lc_svg_run_free(&sm.svg);
        lc_wire_text_free(&sm.text);
        lc_session_free(sm.s);
        lc_simsensors_free(&sm.sensors);
        free(sm.m.us);
    }
    lc_scenario_reader_free(&rd);
    lc_scenario_header_free(&h);
    free(text);
    return rc;
}
