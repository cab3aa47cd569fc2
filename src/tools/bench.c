/*
 * bench.c - `lacuna bench`: how fast the per-frame step is, stage by stage,
 * and how the ellipse solver compares with a general-purpose solver.
 *
 * Frames are ray-cast once, before timing, from synthetic clutter (boxes and
 * walls at fixed seeds), so the figures are the planner's alone. Each case
 * warms its session up first (buffers at their high-water mark), then times
 * every frame with the monotonic clock through the same lc_session_step the
 * server calls. Nothing here asserts a time: the figures are printed.
 *
 * The codec section times what the server does to a scan message before the
 * plan: decoding one 1081-beam scan, through lc_wire_decode (its fast path)
 * with millimetre ranges as scanners report them and with 17-digit ranges,
 * and through the cJSON path alone.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/utsname.h>
#include <unistd.h>

#include "bench_search.h"
#include "cli.h"
#include "clock_mono.h"
#include "codec.h"
#include "codec_fast.h"
#include "ellipse.h"
#include "lc_config.h"
#include "ref_mvie.h"
#include "session.h"
#include "tools.h"
#include "world.h"

static const char usage[] =
    "usage: lacuna bench [--json] [--frames N] [--case NAME] [--quick]\n"
    "\n"
    "Times the per-frame plan on synthetic clutter: 360 to 4320 beams, 10 to 400\n"
    "obstacles, both robot models. For each case: median and p99 per frame (and\n"
    "p99 over the frames the OS did not switch away from: on a shared machine\n"
    "other processes' time slices otherwise decide it), frames per second,\n"
    "per-stage times, inflation rounds per frame, and the frames with no\n"
    "guidance search work apart (median and p99, the OS's switches left out).\n"
    "Then the ellipse solver beside\n"
    "the general-purpose reference solver on the same polygons, the log-log\n"
    "slope of time over beams and over obstacles, and the guidance search on\n"
    "its own: 200 searches over a memory that holds a whole cluttered hall\n"
    "(median, p99, and its share of a frame at the search cadence).\n"
    "\n"
    "  --json       one JSON object on stdout (the default when not a terminal)\n"
    "  --frames N   timed frames per case (default 400); with --case, a fixed\n"
    "               amount of work for instruction counts under callgrind\n"
    "  --case NAME  run only the case of that name (see the list it prints), or\n"
    "               'ellipse' for the solver comparison alone, 'codec' for the\n"
    "               decoding of one 1081-beam scan message alone, 'search' for\n"
    "               the guidance search alone\n"
    "  --quick      a tiny run (for the test suite): two cases, 20 frames\n"
    "\n"
    "lacuna bench --roundtrip [--rate HZ] [--seconds S] [--beams N] [--runs N]\n"
    "             [--connect ws://HOST:PORT/ [--token-file FILE]] [--json]\n"
    "  send to setpoint over the websocket protocol, frames sent on a fixed\n"
    "  schedule (default 1000 Hz, 5 s, 1081-beam scans): p50, p99 and max, and\n"
    "  the client's own wake lag against its schedule (the machine's share: its\n"
    "  stalls hold up the server too). --runs N (1 to 20) repeats it on a new\n"
    "  connection each time and prints every run and the medians.\n"
    "  Without --connect it starts its own `lacuna serve` on loopback.\n";

void lc_bench_help(FILE *out) { fputs(usage, out); }

#define BENCH_FRAME_SETS 8 /* distinct noisy frames cycled through per case */

typedef struct bench_case {
    char name[48];
    int beams, obstacles;
    lc_model model;
    /* results */
    double median, p99, fps, rounds, iterations;
    double p99_kept; /* over the frames the OS did not switch away from */
    int preempted;   /* frames during which this thread was switched out */
    double stage_median[LC_STAGE_COUNT];
    int searches;                   /* searches that ended (each over one frame or more) */
    double median_quiet, p99_quiet; /* over the frames with no search work that the OS
                                       did not switch away from */
} bench_case;

typedef struct bench_opts {
    bool json, quick;
    int frames;
    const char *only;
} bench_opts;

static void run_case(bench_case *c, const bench_opts *o)
{
    lc_world w;
    lc_bench_clutter(&w, c->obstacles, 1000u + (uint64_t)c->obstacles);
    lc_sensor s;
    lc_sensor_default(&s);
    s.beams = c->beams;
    s.range_max = 10.0;
    double *ranges = malloc(sizeof *ranges * (size_t)c->beams * BENCH_FRAME_SETS);
    lc_sim_rng rng = {77};
    for (int k = 0; k < BENCH_FRAME_SETS; k++)
        lc_world_scan(&w, (lc_pose){0.01 * k, 0, 0.02 * k}, &s, &rng, ranges + k * c->beams);
    lc_robot robot;
    lc_robot_default(&robot);
    robot.model = c->model;
    /* the bench's robot does not drive its setpoints (its frames are set
     * round a small loop), so a stall means nothing here: the stall watch
     * is off, and guidance searches at its periodic cadence (a search
     * after a stall runs whole in one frame: guide.h `slice`) */
    lc_plan_config pc;
    lc_plan_config_default(&pc);
    pc.guide.stall = 0;
    lc_session *ses = lc_session_new(&robot, &pc, NULL);
    lc_session_set_goal(ses, lc_v2(8, 3));
    lc_session_set_clock(ses, lc_mono_clock());
    int frames = o->frames, warm = o->quick ? 5 : 50;
    double *t = malloc(sizeof *t * (size_t)frames * (LC_STAGE_COUNT + 2));
    double *kept = t + frames * (LC_STAGE_COUNT + 1), rounds = 0, iters = 0;
    int nkept = 0, nquiet = 0;
    double *quiet = malloc(sizeof *quiet * (size_t)frames);
    lc_plan_result r;
    for (int i = -warm; i < frames; i++) {
        int k = (i + warm) % BENCH_FRAME_SETS;
        lc_frame f = {.kind = LC_FRAME_SCAN, .seq = i, .stamp = 0.05 * (i + warm),
                      .pose = {0.01 * k, 0, 0.02 * k}, .angle_start = lc_sensor_beam_angle(&s, 0),
                      .angle_step = lc_sensor_angle_step(&s), .range_min = s.range_min,
                      .range_max = s.range_max, .ranges = ranges + k * c->beams,
                      .n_ranges = c->beams};
        long sw = lc_bench_switches();
        double t0 = lc_mono_us();
        lc_session_step(ses, &f, 0.05, &r);
        double dt = lc_mono_us() - t0;
        if (i < 0)
            continue;
        t[i] = dt;
        bool whole = lc_bench_switches() == sw;
        if (whole)
            kept[nkept++] = dt;
        if (r.guide.searched)
            c->searches++;
        if (r.guide.expanded == 0 && !r.guide.searched && whole)
            quiet[nquiet++] = dt; /* no search work at all this frame */
        for (int st = 0; st < LC_STAGE_COUNT; st++)
            t[frames * (st + 1) + i] = r.stage_us[st];
        rounds += r.region ? r.region->rounds : 0;
        iters += r.ellipse_iterations;
    }
    c->median = lc_bench_quantile(t, frames, 0.5);
    c->p99 = lc_bench_quantile(t, frames, 0.99);
    c->p99_kept = nkept ? lc_bench_quantile(kept, nkept, 0.99) : NAN;
    c->median_quiet = nquiet ? lc_bench_quantile(quiet, nquiet, 0.5) : NAN;
    c->p99_quiet = nquiet ? lc_bench_quantile(quiet, nquiet, 0.99) : NAN;
    free(quiet);
    c->preempted = frames - nkept;
    c->fps = c->median > 0 ? 1e6 / c->median : 0;
    c->rounds = rounds / frames;
    c->iterations = iters / frames;
    for (int st = 0; st < LC_STAGE_COUNT; st++)
        c->stage_median[st] = lc_bench_quantile(t + frames * (st + 1), frames, 0.5);
    free(t);
    free(ranges);
    lc_session_free(ses);
    lc_world_free(&w);
}

/* Random bounded convex polygon as halfspaces: tangents of an ellipse at n
 * sorted angles with no gap of pi or more (every one non-redundant). */
static void random_polygon(uint64_t *s, lc_halfspace *h, int n)
{
    double ang[64], gap;
    do {
        for (int i = 0; i < n; i++)
            ang[i] = lc_bench_uniform(s, 0, 2 * LC_PI);
        lc_bench_sort(ang, n);
        gap = ang[0] + 2 * LC_PI - ang[n - 1];
        for (int i = 1; i < n; i++)
            gap = fmax(gap, ang[i] - ang[i - 1]);
    } while (gap >= LC_PI - 0.2);
    double a = lc_bench_uniform(s, 0.5, 4), b = lc_bench_uniform(s, 0.5, 4);
    double rot = lc_bench_uniform(s, 0, LC_PI);
    lc_vec2 c = lc_v2(lc_bench_uniform(s, -5, 5), lc_bench_uniform(s, -5, 5));
    for (int i = 0; i < n; i++) {
        lc_vec2 nrm = lc_rotate(lc_v2(cos(ang[i]) / a, sin(ang[i]) / b), rot);
        double l = lc_len(nrm);
        lc_vec2 u = lc_scale(nrm, 1.0 / l);
        h[i] = (lc_halfspace){u, lc_dot(u, c) + 1.0 / l};
    }
}

typedef struct ellipse_cmp {
    int sides, polygons;
    double lacuna_us, reference_us, ratio, max_rel_gap;
    double lacuna_iters;
    int failures; /* lacuna solves that did not succeed */
} ellipse_cmp;

static void run_ellipse(ellipse_cmp *e, int sides, int polygons)
{
    uint64_t s = 4242u + (uint64_t)sides;
    lc_halfspace h[64];
    double scratch[LC_ELLIPSE_SCRATCH(64)], lambda[64];
    double *tl = malloc(sizeof *tl * (size_t)polygons), *tr = malloc(sizeof *tr * (size_t)polygons);
    lc_ellipse_opts opts;
    lc_ellipse_opts_default(&opts);
    e->sides = sides;
    e->polygons = polygons;
    e->max_rel_gap = 0;
    e->lacuna_iters = 0;
    e->failures = 0;
    int nr = 0;
    for (int p = 0; p < polygons; p++) {
        random_polygon(&s, h, sides);
        lc_ellipse mine, ref;
        lc_ellipse_info info;
        const int reps = 50;
        double t0 = lc_mono_us();
        int st = LC_OK;
        for (int k = 0; k < reps; k++)
            st = lc_ellipse_solve(h, sides, NULL, &opts, &mine, lambda, scratch, &info);
        tl[p] = (lc_mono_us() - t0) / reps;
        if (st < 0)
            e->failures++;
        e->lacuna_iters += info.iterations;
        double ld = 0, us = 0;
        if (lc_ref_mvie_available() &&
            lc_ref_mvie_solve(h, sides, &ref, &ld, &us) == LC_REF_MVIE_OK) {
            tr[nr++] = us;
            double mine_ld = lc_ellipse_logdet(&mine);
            double gap = fabs(mine_ld - ld) / fmax(1.0, fabs(ld));
            if (gap > e->max_rel_gap)
                e->max_rel_gap = gap;
        }
    }
    e->lacuna_us = lc_bench_quantile(tl, polygons, 0.5);
    e->reference_us = nr ? lc_bench_quantile(tr, nr, 0.5) : NAN;
    e->ratio = nr ? e->reference_us / e->lacuna_us : NAN;
    e->lacuna_iters /= polygons;
    free(tl);
    free(tr);
}

typedef struct codec_cmp {
    int beams;
    size_t bytes_mm, bytes_full; /* message sizes */
    double fast_mm_us, fast_full_us, cjson_mm_us;
} codec_cmp;

/* Median time of one decode of text (reps times after a warm-up). */
static double time_decode(const char *text, bool slow, int reps, lc_wire_buffers *b)
{
    double *t = malloc(sizeof *t * (size_t)reps);
    size_t len = strlen(text);
    lc_wire_msg probe;
    lc_wire_limits lim;
    lc_wire_limits_default(&lim);
    /* the figure is the fast path's only if the fast path takes this text */
    if (!t || (!slow && !lc_wire_decode_frame_fast(text, len, &lim, b, &probe))) {
        free(t);
        return NAN;
    }
    lc_wire_msg m;
    lc_wire_error err;
    for (int i = -10; i < reps; i++) {
        double t0 = lc_mono_us();
        int rc = slow ? lc_wire_decode_slow(text, len, NULL, b, &m, &err)
                      : lc_wire_decode(text, len, NULL, b, &m, &err);
        double dt = lc_mono_us() - t0;
        if (rc != 0) {
            free(t);
            return NAN;
        }
        if (i >= 0)
            t[i] = dt;
    }
    double med = lc_bench_quantile(t, reps, 0.5);
    free(t);
    return med;
}

/* A scan of an invented room with ranges written two ways: rounded to the
 * millimetre (the encoder then prints at most 4 decimals) and in full. */
static void run_codec(codec_cmp *c, int beams, int reps)
{
    double *full = malloc(sizeof *full * (size_t)beams), *mm = malloc(sizeof *mm * (size_t)beams);
    double step = 1.5 * LC_PI / (beams - 1);
    for (int i = 0; i < beams; i++) {
        double a = -0.75 * LC_PI + i * step;
        full[i] = 4.0 + 0.4 * sin(5.0 * a) + 0.013 * sin(37.0 * i);
        mm[i] = round(full[i] * 1000.0) / 1000.0;
    }
    lc_frame f = {.kind = LC_FRAME_SCAN, .seq = 1, .stamp = 12.5, .angle_start = -0.75 * LC_PI,
                  .angle_step = step, .range_min = 0.05, .range_max = 30.0,
                  .n_ranges = beams};
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    lc_wire_buffers b;
    lc_wire_buffers_init(&b, NULL);
    *c = (codec_cmp){.beams = beams, .fast_mm_us = NAN, .fast_full_us = NAN, .cjson_mm_us = NAN};
    f.ranges = mm;
    if (lc_wire_encode_frame(&t, &f) == 0) {
        c->bytes_mm = (size_t)t.len;
        c->fast_mm_us = time_decode(t.s, false, reps, &b);
        c->cjson_mm_us = time_decode(t.s, true, reps, &b);
    }
    f.ranges = full;
    if (lc_wire_encode_frame(&t, &f) == 0) {
        c->bytes_full = (size_t)t.len;
        c->fast_full_us = time_decode(t.s, false, reps, &b);
    }
    lc_wire_buffers_free(&b);
    lc_wire_text_free(&t);
    free(full);
    free(mm);
}

/* Least-squares slope of log(y) over log(x). */
static double loglog_slope(const double *x, const double *y, int n)
{
    double sx = 0, sy = 0, sxx = 0, sxy = 0;
    for (int i = 0; i < n; i++) {
        double lx = log(x[i]), ly = log(y[i]);
        sx += lx; sy += ly; sxx += lx * lx; sxy += lx * ly;
    }
    return (n * sxy - sx * sy) / (n * sxx - sx * sx);
}

static void machine(char *buf, size_t n)
{
    FILE *f = fopen("/proc/cpuinfo", "r");
    char line[256];
    snprintf(buf, n, "unknown");
    while (f && fgets(line, sizeof line, f)) {
        if (strncmp(line, "model name", 10) == 0) {
            char *p = strchr(line, ':');
            if (p) {
                p += 2;
                p[strcspn(p, "\n")] = '\0';
                snprintf(buf, n, "%s, %ld cores", p, sysconf(_SC_NPROCESSORS_ONLN));
            }
            break;
        }
    }
    if (f)
        fclose(f);
}

static int build_cases(bench_case *c, const bench_opts *o)
{
    int n = 0;
    if (o->quick) {
        c[n++] = (bench_case){.name = "quick-360-10-point", .beams = 360, .obstacles = 10};
        c[n++] = (bench_case){.name = "quick-360-10-unicycle", .beams = 360, .obstacles = 10,
                              .model = LC_MODEL_UNICYCLE};
        return n;
    }
    static const int beams[] = {360, 720, 1081, 2160, 4320};
    static const int obstacles[] = {10, 25, 50, 100, 200, 400};
    for (size_t i = 0; i < sizeof beams / sizeof *beams; i++) {
        snprintf(c[n].name, sizeof c[n].name, "beams-%d", beams[i]);
        c[n].beams = beams[i];
        c[n].obstacles = 40;
        c[n++].model = LC_MODEL_POINT;
    }
    for (size_t i = 0; i < sizeof obstacles / sizeof *obstacles; i++) {
        snprintf(c[n].name, sizeof c[n].name, "obstacles-%d", obstacles[i]);
        c[n].beams = 1081;
        c[n].obstacles = obstacles[i];
        c[n++].model = LC_MODEL_POINT;
    }
    c[n++] = (bench_case){.name = "unicycle-1081-40", .beams = 1081, .obstacles = 40,
                          .model = LC_MODEL_UNICYCLE};
    return n;
}

static void print_num(double x)
{
    if (isfinite(x))
        printf("%.3f", x);
    else
        printf("null");
}

static void print_json(const bench_case *c, int n, const ellipse_cmp *e, int ne, double slope_b,
                       double slope_o, const codec_cmp *cd, const lc_bench_search *sr,
                       const char *mach)
{
    printf("{\"machine\": \"%s\", \"build\": \"%s\", \"sanitize\": \"%s\",\n \"cases\": [", mach,
           LC_BUILD_TYPE, LC_BUILD_SANITIZE);
    for (int i = 0; i < n; i++) {
        printf("%s\n  {\"name\": \"%s\", \"beams\": %d, \"obstacles\": %d, \"model\": \"%s\", "
               "\"median_us\": %.2f, \"p99_us\": %.2f, \"p99_unpreempted_us\": %.2f, "
               "\"preempted\": %d, \"fps\": %.0f, \"rounds\": %.2f, "
               "\"ellipse_iterations\": %.1f, \"searches\": %d, "
               "\"median_no_search_us\": %.2f, \"p99_no_search_us\": %.2f, \"stages\": {",
               i ? "," : "", c[i].name, c[i].beams, c[i].obstacles,
               c[i].model == LC_MODEL_UNICYCLE ? "unicycle" : "point", c[i].median, c[i].p99,
               isfinite(c[i].p99_kept) ? c[i].p99_kept : c[i].p99, c[i].preempted, c[i].fps,
               c[i].rounds, c[i].iterations, c[i].searches, c[i].median_quiet, c[i].p99_quiet);
        for (int s = 0; s < LC_STAGE_COUNT; s++)
            printf("%s\"%s\": %.2f", s ? ", " : "", lc_stage_name((lc_stage)s), c[i].stage_median[s]);
        printf("}}");
    }
    printf("],\n \"slope_beams\": ");
    print_num(slope_b);
    printf(", \"slope_obstacles\": ");
    print_num(slope_o);
    printf(",\n \"ellipse\": {");
    const ellipse_cmp *w = NULL;
    for (int i = 0; i < ne; i++)
        if (!w || e[i].sides == 16)
            w = &e[i];
    if (w) {
        printf("\"sides\": %d, \"lacuna_us\": %.3f, ", w->sides, w->lacuna_us);
        if (isfinite(w->reference_us))
            printf("\"reference_us\": %.1f, \"ratio\": %.1f, \"max_rel_gap\": %.3g, ",
                   w->reference_us, w->ratio, w->max_rel_gap);
        else
            printf("\"reference_us\": null, \"ratio\": null, \"max_rel_gap\": null, ");
        printf("\"reference\": \"%s\", \"by_sides\": [", lc_ref_mvie_name());
        for (int i = 0; i < ne; i++) {
            printf("%s{\"sides\": %d, \"polygons\": %d, \"lacuna_us\": %.3f, \"iterations\": %.1f, ",
                   i ? ", " : "", e[i].sides, e[i].polygons, e[i].lacuna_us, e[i].lacuna_iters);
            if (isfinite(e[i].reference_us))
                printf("\"reference_us\": %.1f, \"ratio\": %.1f, \"max_rel_gap\": %.3g}",
                       e[i].reference_us, e[i].ratio, e[i].max_rel_gap);
            else
                printf("\"reference_us\": null, \"ratio\": null, \"max_rel_gap\": null}");
        }
        printf("]");
    }
    printf("}");
    if (cd) {
        printf(",\n \"codec\": {\"beams\": %d, \"bytes_mm\": %zu, \"bytes_full\": %zu, "
               "\"decode_mm_us\": ", cd->beams, cd->bytes_mm, cd->bytes_full);
        print_num(cd->fast_mm_us);
        printf(", \"decode_full_us\": ");
        print_num(cd->fast_full_us);
        printf(", \"decode_mm_cjson_us\": ");
        print_num(cd->cjson_mm_us);
        printf("}");
    }
    if (sr)
        printf(",\n \"search\": {\"searches\": %d, \"no_path\": %d, \"window_m\": %.1f, "
               "\"median_us\": %.2f, \"p99_us\": %.2f, \"p99_unpreempted_us\": %.2f, "
               "\"preempted\": %d, \"mean_us\": %.2f, "
               "\"expanded\": %.0f, \"cadence_frames\": %.1f, \"amortised_us\": %.2f}",
               sr->searches, sr->no_path, sr->window, sr->median_us, sr->p99_us,
               sr->p99_kept_us, sr->preempted, sr->mean_us,
               sr->expanded, sr->cadence, sr->amortised_us);
    printf("}\n");
}

static void print_text(const bench_case *c, int n, const ellipse_cmp *e, int ne, double slope_b,
                       double slope_o, const codec_cmp *cd, const lc_bench_search *sr,
                       const char *mach)
{
    printf("lacuna bench - %s, %s build%s%s\n\n", mach, LC_BUILD_TYPE,
           strcmp(LC_BUILD_SANITIZE, "none") ? ", sanitizers " : "",
           strcmp(LC_BUILD_SANITIZE, "none") ? LC_BUILD_SANITIZE : "");
    if (n > 0) {
        printf("%-22s %6s %5s %9s %9s %9s %7s %6s  stages (median us)\n", "case", "beams",
               "obst", "median us", "p99 us", "p99 kept", "fps", "rounds");
        for (int i = 0; i < n; i++) {
            printf("%-22s %6d %5d %9.1f %9.1f %9.1f %7.0f %6.2f ", c[i].name, c[i].beams,
                   c[i].obstacles, c[i].median, c[i].p99, c[i].p99_kept, c[i].fps, c[i].rounds);
            for (int s = 0; s < LC_STAGE_COUNT; s++)
                printf(" %s %.1f", lc_stage_name((lc_stage)s), c[i].stage_median[s]);
            printf("\n");
        }
        printf("(p99 kept: over the frames during which the OS did not switch this thread out)\n");
        printf("\n%-22s %9s %12s %12s\n", "case", "searches", "median quiet", "p99 quiet");
        for (int i = 0; i < n; i++)
            printf("%-22s %9d %12.1f %12.1f\n", c[i].name, c[i].searches, c[i].median_quiet,
                   c[i].p99_quiet);
        printf("(quiet: the frames on which guidance did not search and the OS did not\n"
               " switch this thread out; the robot barely moves\n"
               " here, so it searches every %d frames, the cadence of a robot that stays put)\n",
               10 * 10);
    }
    if (isfinite(slope_b) || isfinite(slope_o))
        printf("\nlog-log slope of the median: over beams %.2f, over obstacles %.2f\n", slope_b,
               slope_o);
    if (ne > 0) {
        printf("\nellipse solver (median per solve, cold start) vs %s:\n", lc_ref_mvie_name());
        if (!lc_ref_mvie_available())
            printf("  the reference solver is absent from this build (Ipopt not found at build "
                   "time)\n");
    }
    for (int i = 0; i < ne; i++) {
        printf("  %2d sides: lacuna %.2f us (%.1f iterations)", e[i].sides, e[i].lacuna_us,
               e[i].lacuna_iters);
        if (isfinite(e[i].reference_us))
            printf(", reference %.0f us, %.0fx faster, largest relative log det gap %.2g",
                   e[i].reference_us, e[i].ratio, e[i].max_rel_gap);
        printf("\n");
    }
    if (sr)
        printf("\nguidance search over a %.0f m window of remembered clutter (%d searches, %d "
               "without a way):\n  median %.1f us, p99 %.1f us (%.1f kept), mean %.1f us, %.0f "
               "cells expanded on average;\n  one search each %.1f frames at top speed: %.1f us "
               "a frame amortised\n",
               sr->window, sr->searches, sr->no_path, sr->median_us, sr->p99_us,
               sr->p99_kept_us, sr->mean_us,
               sr->expanded, sr->cadence, sr->amortised_us);
    if (cd)
        printf("\ndecoding one %d-beam scan message (median per decode):\n"
               "  millimetre distances (%zu bytes): %.1f us; the cJSON path alone %.1f us\n"
               "  17-digit distances (%zu bytes):   %.1f us\n",
               cd->beams, cd->bytes_mm, cd->fast_mm_us, cd->cjson_mm_us, cd->bytes_full,
               cd->fast_full_us);
}

static int parse(int argc, char **argv, bench_opts *o)
{
    *o = (bench_opts){.json = !isatty(STDOUT_FILENO), .frames = 400};
    for (int i = 1; i < argc; i++) {
        if (strcmp(argv[i], "--json") == 0)
            o->json = true;
        else if (strcmp(argv[i], "--quick") == 0)
            o->quick = true;
        else if (strcmp(argv[i], "--frames") == 0 && i + 1 < argc) {
            char *end;
            long v = strtol(argv[++i], &end, 10);
            if (*end || v < 1 || v > 10000000)
                return lc_cli_usage_error("bench", "--frames: '%s' is not a count of 1 or more",
                                          argv[i]);
            o->frames = (int)v;
        } else if (strcmp(argv[i], "--case") == 0 && i + 1 < argc)
            o->only = argv[++i];
        else
            return lc_cli_usage_error("bench", "unknown option '%s' (see lacuna bench --help)",
                                      argv[i]);
    }
    if (o->quick && o->frames == 400)
        o->frames = 20;
    return 0;
}

int lc_tool_bench(int argc, char **argv)
{
    for (int i = 1; i < argc; i++)
        if (strcmp(argv[i], "--roundtrip") == 0)
            return lc_bench_roundtrip(argc, argv);
    bench_opts o;
    int rc = parse(argc, argv, &o);
    if (rc)
        return rc;
    bench_case cases[32];
    int n = build_cases(cases, &o), kept = 0;
    bool progress = isatty(STDERR_FILENO);
    for (int i = 0; i < n; i++) {
        if (o.only && strcmp(o.only, cases[i].name) != 0)
            continue;
        if (progress)
            fprintf(stderr, "\rlacuna bench: case %d of %d (%s)...        ", i + 1, n, cases[i].name);
        run_case(&cases[i], &o);
        cases[kept++] = cases[i];
    }
    if (progress)
        fprintf(stderr, "\r%60s\r", "");
    if (o.only && kept == 0 && strcmp(o.only, "ellipse") != 0 && strcmp(o.only, "codec") != 0 &&
        strcmp(o.only, "search") != 0) {
        fprintf(stderr, "lacuna bench: no case named '%s'; the cases:", o.only);
        for (int i = 0; i < n; i++)
            fprintf(stderr, " %s", cases[i].name);
        fprintf(stderr, " ellipse codec search\n");
        return LC_EXIT_USAGE;
    }
    double xb[8], yb[8], xo[8], yo[8];
    int nb = 0, no = 0;
    for (int i = 0; i < kept; i++) {
        if (strncmp(cases[i].name, "beams-", 6) == 0) {
            xb[nb] = cases[i].beams;
            yb[nb++] = cases[i].median;
        } else if (strncmp(cases[i].name, "obstacles-", 10) == 0) {
            xo[no] = cases[i].obstacles;
            yo[no++] = cases[i].median;
        }
    }
    double slope_b = nb >= 2 ? loglog_slope(xb, yb, nb) : NAN;
    double slope_o = no >= 2 ? loglog_slope(xo, yo, no) : NAN;
    ellipse_cmp e[4];
    static const int sides[] = {4, 8, 16, 32};
    bool ellipse_only = o.only && strcmp(o.only, "ellipse") == 0;
    int ne = o.only && !ellipse_only ? 0 : (o.quick ? 1 : 4);
    for (int i = 0; i < ne; i++)
        run_ellipse(&e[i], o.quick ? 8 : sides[i], o.quick ? 10 : 200);
    codec_cmp cd;
    bool codec = !o.only || strcmp(o.only, "codec") == 0;
    if (codec)
        run_codec(&cd, 1081, o.quick ? 20 : 400);
    lc_bench_search sr;
    bool search = !o.only || strcmp(o.only, "search") == 0;
    if (search && lc_bench_search_run(&sr, o.quick ? 5 : 200) < 0) {
        fprintf(stderr, "lacuna bench: out of memory in the search bench\n");
        return LC_EXIT_FAIL;
    }
    char mach[200];
    machine(mach, sizeof mach);
    if (o.json)
        print_json(cases, kept, e, ne, slope_b, slope_o, codec ? &cd : NULL,
                   search ? &sr : NULL, mach);
    else
        print_text(cases, kept, e, ne, slope_b, slope_o, codec ? &cd : NULL,
                   search ? &sr : NULL, mach);
    return fflush(stdout) == 0 ? LC_EXIT_OK : LC_EXIT_FAIL;
}
