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
 * reads, and the bucket grid is rebuilt each search at a ninth of the
 * cost of one bucket per search cell (a quarter of a search, measured). */
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
    /* the remembered obstacles of the current search, bucketed by search
     * cell: the returns of cell k are pts[start[k] .. start[k + 1]) */
    int *start;        /* n * n + 1 */
    uint8_t *occ;      /* n * n: cell k holds a return */
    lc_vec2 *pts, *tmp;
    int *tmp_cell;
    int n_pts, cap_pts, cap_tmp, cap_tmp_cell;
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
};

/* The memory's occupied cells (their returns) bucketed by search cell, for
 * the nearest-obstacle queries of one search; -1 when out of memory. */
int lc_guide_bucket_obstacles(lc_guide *g, const lc_memory *m);

/* The distance from p to the nearest bucketed return within radius
 * (INFINITY when there is none), and that return in *at when not NULL. */
double lc_guide_nearest_at(const lc_guide *g, lc_vec2 p, double radius, lc_vec2 *at);
double lc_guide_nearest(const lc_guide *g, lc_vec2 p, double radius);

/* Some bucketed return lies nearer p than radius (the first found ends the
 * scan). */
bool lc_guide_any_within(const lc_guide *g, lc_vec2 p, double radius);

#endif
