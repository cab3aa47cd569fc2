/*
 * sim.c - `lacuna sim`: a closed loop in a scenario's world of polygons.
 *
 * Each control period (1 / sensor rate): a ray-cast scan from the true pose
 * (range noise from --seed), one lc_session_step, then the robot follows
 * the setpoint exactly (zero-order hold, no slip) for the period, integrated
 * in substeps of at most 1 ms: the point model moves by its robot-frame
 * velocity rotated into the world (its heading never changes), the unicycle
 * drives the exact arc of (v, w). After every substep the footprint disc is
 * checked against the world: clearance = lc_world_distance - radius; a
 * collision is each time the clearance goes below zero.
 *
 * The run ends when the route is done (a looping route: once its last
 * waypoint has been reached, the "lap" event), when the robot has been `blocked`
 * or `too_close` (the session then stops it entirely) for BLOCKED_HOLD s
 * without a break (the world is static: it stays so; outcome "blocked"
 * when a `blocked` frame came in that time, else "stuck"), or at the time limit (outcome "timeout"; --max-time,
 * else the header's max_time, else 600 s).
 * Success (exit 0) is the header's expectation met without a collision:
 * expect "done" wants the route finished, expect "blocked" wants the run to
 * end blocked (and nothing hit on the way). Stamps are k / rate and dt
 * follows replay.h's rule, so `--out` gives a file `lacuna replay`
 * reproduces exactly.
 */
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "replay.h"
#include "svg.h"
#include "world.h"

const char lc_sim_usage[] =
    "usage: lacuna sim FILE [--model point|unicycle] [--seed N] [--out FILE]\n"
    "                  [--svg FILE] [--json] [--max-time S]\n"
    "\n"
    "Closed loop in the world of the scenario FILE: a ray-cast scanner (its\n"
    "header's sensor), the robot following each setpoint exactly for one\n"
    "control period (1 ms substeps), the patrol route of the header.\n"
    "\n"
    "  --model M      override the header's robot model (point or unicycle)\n"
    "  --seed N       seed of the range noise (default 1)\n"
    "  --max-time S   stop after S simulated seconds (default: the header's\n"
    "                 max_time, else 600)\n"
    "  --out FILE     write the run as a scenario that `lacuna replay`\n"
    "                 reproduces exactly\n"
    "  --svg FILE     render the run\n"
    "  --json         JSON on stdout even on a terminal\n"
    "  --connect URL  (drive a running `lacuna serve`): not available yet\n"
    "\n"
    "stdout: {\"done\":b,\"waypoints_reached\":n,\"collisions\":n,\n"
    "\"min_clearance\":m,\"path_length\":m,\"sim_time\":s,\"frames\":n,...}\n"
    "exit status: 0 when the header's expectation is met without a collision\n"
    "(expect \"done\", the default: the route finished, a looping route once\n"
    "round; expect \"blocked\": the run ended blocked), 1 otherwise, 2 bad\n"
    "usage or file.\n";

#define SUBSTEP_MAX 0.001 /* s */
#define BLOCKED_HOLD 3.0  /* s */
#define DEFAULT_MAX_TIME 600.0

typedef struct sim_opts {
    const char *file, *out, *svg;
    bool json, has_model;
    lc_model model;
    uint64_t seed;
    double max_time; /* 0: from the header */
} sim_opts;

/* stuck: `too_close` without a break for BLOCKED_HOLD s (the robot may not move). */
typedef enum outcome { OUT_DONE = 0, OUT_BLOCKED, OUT_STUCK, OUT_TIMEOUT } outcome;
static const char *const outcome_names[] = {"done", "blocked", "stuck", "timeout"};

typedef struct sim_metrics {
    outcome end;
    int reached, collisions;
    bool lapped; /* a looping route came round once */
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
    lc_sensor sensor;
    lc_sim_rng rng;
    lc_session *s;
    lc_pose pose;
    bool in_contact;
    bool hold_blocked; /* a `blocked` frame since the hold began */
    double *ranges;
    FILE *out;
    lc_wire_text text;
    lc_svg_run svg;
    sim_metrics m;
} sim;

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
    } else if (strcmp(opt, "--out") == 0) {
        o->out = v;
    } else {
        o->svg = v;
    }
    return 0;
}

static int parse_args(int argc, char **argv, sim_opts *o)
{
    *o = (sim_opts){.seed = 1};
    static const char *const valued[] = {"--model", "--seed", "--max-time", "--out", "--svg"};
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        bool known = false;
        for (size_t k = 0; k < sizeof valued / sizeof valued[0]; k++)
            known = known || strcmp(a, valued[k]) == 0;
        if (strcmp(a, "--json") == 0) {
            o->json = true;
        } else if (strcmp(a, "--connect") == 0 || strcmp(a, "--token-file") == 0) {
            return lc_cli_usage_error("sim", "%s: not available yet (sim runs locally only)", a);
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
    return 0;
}

static void sensor_from_header(const lc_scenario_sensor *in, lc_sensor *out)
{
    *out = (lc_sensor){.beams = in->beams,
                       .fov = in->fov,
                       .range_min = in->range_min,
                       .range_max = in->range_max,
                       .rate = in->rate,
                       .noise = in->noise,
                       .mount = in->mount};
}

/* ----------------------------------------------------------- the loop */

static double clearance_at(const sim *sm, lc_pose p)
{
    return lc_world_distance(&sm->world, lc_v2(p.x, p.y)) - sm->h->robot.radius;
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

static lc_frame make_frame(sim *sm, long k, double stamp)
{
    lc_world_scan(&sm->world, sm->pose, &sm->sensor, &sm->rng, sm->ranges);
    return (lc_frame){.kind = LC_FRAME_SCAN,
                      .seq = k,
                      .stamp = stamp,
                      .pose = sm->pose,
                      .mount = sm->sensor.mount,
                      .angle_start = lc_sensor_beam_angle(&sm->sensor, 0),
                      .angle_step = lc_sensor_angle_step(&sm->sensor),
                      .range_min = sm->sensor.range_min,
                      .range_max = sm->sensor.range_max,
                      .ranges = sm->ranges,
                      .n_ranges = sm->sensor.beams};
}

static int record(sim *sm, const lc_frame *f, const lc_plan_result *res)
{
    if (!sm->out)
        return 0;
    lc_wire_setpoint sp = lc_replay_setpoint(f, res, sm->h->robot.model);
    if (lc_wire_encode_frame(&sm->text, f) < 0 || lc_replay_put_line(sm->out, &sm->text) < 0 ||
        lc_wire_encode_setpoint(&sm->text, &sp) < 0 ||
        lc_replay_put_line(sm->out, &sm->text) < 0)
        return -1;
    for (int i = 0; i < res->n_events; i++) {
        lc_wire_event ev = {.ev = res->events[i], .seq = f->seq};
        if (lc_wire_encode_event(&sm->text, &ev) < 0 || lc_replay_put_line(sm->out, &sm->text) < 0)
            return -1;
    }
    return 0;
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
    for (int i = 0; i < res->n_events; i++) {
        m->reached += res->events[i].kind == LC_EVENT_REACHED;
        m->lapped = m->lapped || res->events[i].kind == LC_EVENT_LAP;
    }
}

/* One control period; 1 when the run ends, 0 to go on, <0 on failure. */
static int period_step(sim *sm, long k, double period, double *blocked_since, double *prev)
{
    double stamp = (double)k / sm->sensor.rate;
    lc_frame f = make_frame(sm, k, stamp);
    double dt = lc_replay_dt(k == 0, *prev, stamp, lc_scenario_first_dt(sm->h));
    *prev = stamp;
    lc_plan_result res;
    if (lc_session_step(sm->s, &f, dt, &res) < 0)
        return -1;
    count(sm, &res);
    if (sm->o->svg)
        lc_svg_run_add(&sm->svg, &f, &res, clearance_at(sm, f.pose));
    if (record(sm, &f, &res) < 0)
        return -2;
    sm->m.sim_time = stamp;
    if (res.state == LC_STATE_DONE || sm->m.lapped) {
        sm->m.end = OUT_DONE;
        return 1;
    }
    if (res.state == LC_STATE_BLOCKED || res.state == LC_STATE_TOO_CLOSE) {
        if (*blocked_since < 0) {
            *blocked_since = stamp;
            sm->hold_blocked = false;
        }
        sm->hold_blocked = sm->hold_blocked || res.state == LC_STATE_BLOCKED;
        if (stamp - *blocked_since >= BLOCKED_HOLD) {
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
    double period = 1.0 / sm->sensor.rate, blocked_since = -1, prev = 0;
    sm->m.end = OUT_TIMEOUT;
    check_contact(sm);
    lc_clock wall = lc_replay_wall_clock();
    double t_start = lc_clock_now(&wall), t_progress = 0;
    for (long k = 0; (double)k / sm->sensor.rate <= max_time; k++) {
        int rc = period_step(sm, k, period, &blocked_since, &prev);
        if (rc == -1)
            return lc_cli_fail("sim", "out of memory");
        if (rc == -2)
            return lc_cli_fail("sim", "cannot write %s", sm->o->out);
        if (rc == 1)
            break;
        double now = lc_clock_now(&wall);
        if (isatty(STDERR_FILENO) && now - t_start > 1e6 && now - t_progress > 5e5) {
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
    printf("\"compute_us\":{\"median\":%s,\"p99\":%s,\"max\":%s},\"states\":", num6(a, med),
           num6(b, p99), num6(c, max));
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
    printf("  path %.2f m in %.2f s, %ld frames, compute per frame median %.1f us, p99 %.1f us\n",
           m->path_length, m->sim_time, m->frames, med, p99);
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
                          .radius = sm->h->robot.radius};
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
    h->has_sensor = true; /* the default sensor when absent; written with --out */
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

static int sim_run(sim *sm)
{
    const lc_scenario_header *h = sm->h;
    sm->world.polys = h->world; /* borrowed: the header frees it */
    sensor_from_header(&h->sensor, &sm->sensor);
    sm->rng.state = sm->o->seed;
    sm->pose = h->start;
    sm->m.min_clearance = INFINITY;
    sm->ranges = calloc((size_t)sm->sensor.beams, sizeof *sm->ranges);
    sm->s = lc_replay_session(h);
    if (!sm->ranges || !sm->s)
        return lc_cli_fail("sim", "out of memory");
    lc_clock wall = lc_replay_wall_clock();
    lc_session_set_clock(sm->s, &wall);
    int rc = open_outputs(sm);
    double max_time = sm->o->max_time > 0 ? sm->o->max_time
                                          : (h->max_time > 0 ? h->max_time : DEFAULT_MAX_TIME);
    if (!rc)
        rc = run_loop(sm, max_time);
    if (sm->out && fclose(sm->out) != 0 && !rc)
        rc = lc_cli_fail("sim", "cannot write %s", sm->o->out);
    if (!rc && sm->o->svg)
        rc = write_svg(sm);
    return rc;
}

int lc_tool_sim(int argc, char **argv)
{
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
            rc = success(&sm) ? LC_EXIT_OK : LC_EXIT_FAIL;
        }
        lc_svg_run_free(&sm.svg);
        lc_wire_text_free(&sm.text);
        lc_session_free(sm.s);
        free(sm.ranges);
        free(sm.m.us);
    }
    lc_scenario_reader_free(&rd);
    lc_scenario_header_free(&h);
    free(text);
    return rc;
}
