/*
 * bench_search.h - the guidance search's share of `lacuna bench` (bench.c
 * prints it): A* over a memory full of clutter, timed search by search, and
 * the helpers bench.c and it share.
 */
#ifndef LC_BENCH_SEARCH_H
#define LC_BENCH_SEARCH_H

#include <stdint.h>

#include "world.h"

typedef struct lc_bench_search {
    int searches;         /* timed */
    int no_path;          /* of them, answered "no path" */
    double median_us, p99_us, mean_us;
    double p99_kept_us;   /* over the searches the OS did not switch away from */
    int preempted;        /* searches during which it did */
    double expanded;      /* cells expanded, mean per search */
    double window;        /* m, the memory window's side */
    double cadence;       /* frames between periodic searches at top speed */
    double amortised_us;  /* mean_us / cadence: its share of each frame */
} lc_bench_search;

/* Boxes of 0.2-0.8 m over a 20 m square, none within 1.5 m of the origin,
 * inside a walled 22 m hall, at a fixed seed. */
void lc_bench_clutter(lc_world *w, int count, uint64_t seed);

/* Context switches of this thread so far: a span during which it moved
 * was descheduled, and its wall time measures the scheduler. */
long lc_bench_switches(void);

/* Uniform in [lo, hi) from the splitmix64 state *s. */
double lc_bench_uniform(uint64_t *s, double lo, double hi);

/* v[0..n) in ascending order. */
void lc_bench_sort(double *v, int n);

/* The q quantile of v[0..n) (sorts v). */
double lc_bench_quantile(double *v, int n, double q);

/* Fill a robot's memory from 360-degree scans of the clutter all over the
 * hall, then time `searches` searches from the hall's middle to goals in
 * remembered free space. 0, or -1 when out of memory. */
int lc_bench_search_run(lc_bench_search *out, int searches);

#endif
