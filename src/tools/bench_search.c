/*
 * bench_search.c - the guidance search's cost (bench_search.h).
 *
 * A robot scans the clutter of bench.c's hall all round from 25 places on
 * a grid over it, so that its memory's default window holds the whole
 * hall: what a robot that has patrolled a busy site remembers. Then the
 * guidance search (guide.h) runs from the hall's middle to goals drawn at
 * a fixed seed in remembered free space, each a new goal (a search of its
 * own), timed with the monotonic clock. The per-frame figures of bench.c
 * include a search only on the frames the cadence calls one; this is the
 * cost of one, and its share of every frame when the robot drives at top
 * speed (a search each `travel` metres).
 */
#include "bench_search.h"

#include <math.h>
#include <stdlib.h>
#include <sys/resource.h>

#include "clock_mono.h"
#include "guide.h"
#include "session.h"

static uint64_t mix(uint64_t *s)
{
    uint64_t z = (*s += 0x9e3779b97f4a7c15ull);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
}

double lc_bench_uniform(uint64_t *s, double lo, double hi)
{
    return lo + (hi - lo) * ((double)(mix(s) >> 11) * 0x1.0p-53);
}

void lc_bench_clutter(lc_world *w, int count, uint64_t seed)
{
    lc_world_init(w);
    uint64_t s = seed;
    for (int k = 0; k < count;) {
        double x = lc_bench_uniform(&s, -10, 10), y = lc_bench_uniform(&s, -10, 10);
        if (x * x + y * y < 1.5 * 1.5)
            continue;
        double a = lc_bench_uniform(&s, 0.2, 0.8), b = lc_bench_uniform(&s, 0.2, 0.8);
        lc_vec2 v[4] = {{x, y}, {x + a, y}, {x + a, y + b}, {x, y + b}};
        lc_world_add(w, v, 4);
        k++;
    }
    lc_vec2 hall[4] = {{-11, -11}, {11, -11}, {11, 11}, {-11, 11}};
    for (int i = 0; i < 4; i++) {
        lc_vec2 seg[2] = {hall[i], hall[(i + 1) % 4]};
        lc_world_add(w, seg, 2);
    }
}

long lc_bench_switches(void)
{
    struct rusage u;
    return getrusage(RUSAGE_THREAD, &u) == 0 ? u.ru_nvcsw + u.ru_nivcsw : 0;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

void lc_bench_sort(double *v, int n) { qsort(v, (size_t)n, sizeof *v, cmp_double); }

double lc_bench_quantile(double *v, int n, double q)
{
    lc_bench_sort(v, n);
    int k = (int)(q * (n - 1) + 0.5);
    return v[k < 0 ? 0 : (k >= n ? n - 1 : k)];
}

#define GRID 5 /* places per side the robot scans from */

/* The session's memory after scanning the hall from GRID x GRID places,
 * the last one the middle. */
static const lc_memory *fill(lc_session *ses, const lc_world *w, double *ranges)
{
    lc_sensor s;
    lc_sensor_default(&s);
    s.beams = 1440;
    s.fov = 2 * LC_PI;
    s.range_max = 10.0;
    lc_sim_rng rng = {91};
    lc_plan_result r = {0};
    int k = 0;
    for (int i = 0; i <= GRID * GRID; i++, k++) {
        /* the grid, then the middle once more (the window centred there) */
        lc_pose pose = i < GRID * GRID ? (lc_pose){-8 + 16.0 * (i % GRID) / (GRID - 1),
                                                   -8 + 16.0 * (i / GRID) / (GRID - 1), 0}
                                       : (lc_pose){0, 0, 0};
        lc_world_scan(w, pose, &s, &rng, ranges);
        lc_frame f = {.kind = LC_FRAME_SCAN, .seq = k, .stamp = 0.05 * k, .pose = pose,
                      .angle_start = lc_sensor_beam_angle(&s, 0),
                      .angle_step = lc_sensor_angle_step(&s), .range_min = s.range_min,
                      .range_max = s.range_max, .ranges = ranges, .n_ranges = s.beams};
        if (lc_session_step(ses, &f, 0.05, &r) < 0)
            return NULL;
    }
    return r.memory;
}

int lc_bench_search_run(lc_bench_search *out, int searches)
{
    *out = (lc_bench_search){0};
    lc_world w;
    lc_bench_clutter(&w, 100, 1100u);
    lc_robot robot;
    lc_robot_default(&robot);
    lc_plan_config cfg;
    lc_plan_config_default(&cfg);
    lc_session *ses = lc_session_new(&robot, &cfg, NULL);
    double *ranges = malloc(sizeof *ranges * 1440);
    double *t = malloc(sizeof *t * 2 * (size_t)(searches > 0 ? searches : 1));
    double *kept = t ? t + (searches > 0 ? searches : 1) : NULL;
    int nkept = 0;
    lc_guide *g = lc_guide_new(&cfg.guide, &cfg.memory, NULL);
    const lc_memory *m = ses && ranges && t && g ? fill(ses, &w, ranges) : NULL;
    int rc = -1;
    if (m) {
        uint64_t seed = 2024;
        double expanded = 0, sum = 0;
        int n = 0;
        while (n < searches) {
            lc_vec2 goal = {lc_bench_uniform(&seed, -9.5, 9.5), lc_bench_uniform(&seed, -9.5, 9.5)};
            if (lc_memory_state(m, goal) != LC_CELL_FREE ||
                lc_memory_nearest(m, goal, 1.0) < 0.5)
                continue; /* a goal a robot could be sent to */
            const lc_guide_path *p;
            lc_guide_info info;
            long sw = lc_bench_switches();
            double t0 = lc_mono_us();
            if (lc_guide_update(g, m, lc_v2(0, 0), goal, lc_robot_clearance(&robot), 0.3, &p,
                                &info) < 0)
                break;
            t[n] = lc_mono_us() - t0;
            if (lc_bench_switches() == sw)
                kept[nkept++] = t[n];
            sum += t[n];
            expanded += info.expanded;
            out->no_path += p->status != LC_GUIDE_PATH;
            n++;
        }
        if (n == searches && n > 0) {
            out->searches = n;
            out->mean_us = sum / n;
            out->expanded = expanded / n;
            out->median_us = lc_bench_quantile(t, n, 0.5);
            out->p99_us = lc_bench_quantile(t, n, 0.99);
            out->preempted = n - nkept;
            out->p99_kept_us = nkept ? lc_bench_quantile(kept, nkept, 0.99) : out->p99_us;
            out->window = cfg.memory.size;
            /* at top speed and 20 Hz: a search each `travel` metres, and
             * never more often than each `every` frames */
            out->cadence = fmax(cfg.guide.every, cfg.guide.travel / (robot.v_max * 0.05));
            out->amortised_us = out->mean_us / out->cadence;
            rc = 0;
        }
    }
    lc_guide_free(g);
    free(t);
    free(ranges);
    lc_session_free(ses);
    lc_world_free(&w);
    return rc;
}
