/*
 * guide_int.h - guidance's state, shared by guide.c (the search, the path,
 * the cadence) and guide_buckets.c (the remembered returns bucketed for
 * nearest queries). Not part of the core's interface: callers see
 * lc_guide through guide.h.
 */
#ifndef LACUNA_GUIDE_INT_H
#define LACUNA_GUIDE_INT_H

#include "guide.h"

#include <stdint.h>

/* Search cells along a side of a bucket of remembered returns: a bucket of
 * 0.3 m holds the returns a nearest query around a cell looks at in a few
 * reads. Buckets are filled from the memory as the search's queries reach
 * them (guide_buckets.c). */
#define BUCKET 3

struct lc_guide {
    lc_alloc alloc;
    lc_guide_config cfg;
    double mem_cell;
    int n;             /* search cells along a side */
    double x0, y0;     /* world corner of the grid of the current search */
    float *g;          /* n * n + 1: the last one is the outside goal */
    int *parent;
    uint8_t *state, *cls;
    int *heap, *pos;   /* indexed binary heap by f */
    float *f;
    int heap_n;
    int *raw;          /* the search's path, cell by cell, goal first */
    /* the remembered returns of the current search, bucketed by BUCKET
     * search cells a side: bucket k's are pts[b_first[k] .. + b_count[k])
     * once b_done[k] (filled when a query first reaches it) */
    const lc_memory *mem;
    int *b_first, *b_count; /* bn * bn */
    uint8_t *b_done;        /* bn * bn */
    lc_vec2 *pts;
    int n_pts, cap_pts;
    bool bucket_failed;     /* out of memory filling a bucket: the search fails */
    int bn;            /* buckets along a side (BUCKET search cells each) */
    lc_guide_path path, cand;
    long frame, last_search, searches;
    lc_vec2 searched_at; /* the robot at the last search */
    bool has_goal;
    lc_vec2 goal;
    lc_vec2 refused[LC_GUIDE_REFUSED]; /* spots the robot could not get past */
    double refused_r[LC_GUIDE_REFUSED];
    int n_refused, next_refused;
    bool search_now;
    bool doubt;        /* the last search found no way where the path is */
    lc_guide_sight sight; /* where the robot can look (n == 0: everywhere) */
    /* the search under way (guide.c, sliced over frames by cfg.slice) */
    int job;              /* its run (JOB_MAIN ...), 0: none */
    bool job_fresh;       /* that run's A* not begun yet */
    bool job_new_goal;    /* started for a new goal */
    bool job_sliced;      /* periodic, along a path open ahead: sliced */
    lc_vec2 job_start, job_goal; /* the robot and the waypoint when it started */
    double job_R, job_reach;
    bool job_blind[8];
    int job_expanded;
    int job_end;          /* JOB_FINISH: the search's end, built on the next frame */
    bool job_round_edge;
    /* a way found within the window that costs more than a way round its
     * edge might (guide.c `edge_may_pay`): built at once, kept here while
     * the way round is sought, and the search's answer unless that costs
     * less */
    bool job_has_alt, job_use_alt;
    int job_alt_end;
    double job_alt_cost;
    lc_guide_path alt;
};

/* A new search over memory m: every bucket to be filled again. */
void lc_guide_bucket_obstacles(lc_guide *g, const lc_memory *m);

/* The distance from p to the nearest bucketed return within radius
 * (INFINITY when there is none), and that return in *at when not NULL. */
double lc_guide_nearest_at(lc_guide *g, lc_vec2 p, double radius, lc_vec2 *at);
double lc_guide_nearest(lc_guide *g, lc_vec2 p, double radius);

/* Some bucketed return lies nearer p than radius (the first found ends the
 * scan). */
bool lc_guide_any_within(lc_guide *g, lc_vec2 p, double radius);

#endif
