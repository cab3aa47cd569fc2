/*
 * memory_int.h - the rolling occupancy grid's state and its lattice, shared
 * by memory.c (updates) and memory_query.c (the bulk queries). Not part of
 * the core's interface: callers see lc_memory through memory.h.
 */
#ifndef LACUNA_MEMORY_INT_H
#define LACUNA_MEMORY_INT_H

#include "memory.h"

#include <stdint.h>

#define POINT_BINS 360 /* bearing bins of a points frame's view */

struct lc_memory {
    lc_alloc alloc;
    lc_memory_config cfg;
    int n;             /* cells along a side */
    double c;          /* m, cell side */
    double inv_c;      /* 1 / c */
    long i0, j0;       /* window: lattice cells [i0, i0 + n) x [j0, j0 + n) */
    bool placed;       /* the window has been placed (first update) */
    uint32_t *seen;    /* n * n */
    uint8_t *ev;       /* n * n */
    uint16_t *at;      /* n * n: where in an occupied cell its last return fell, x in
                          the low byte, y in the high one, in 256ths of the cell */
    uint32_t now;      /* tick of the last update (0: none yet) */
    double base;       /* stamp of tick 0 */
    double last_stamp;
    uint32_t hold_occ, hold_free; /* ticks */
    int sweep_row;     /* the next stored row the ageing sweep visits */
    long updates, clears;
    /* scan-line scratch, grown to a high-water mark */
    lc_vec2 *poly;
    int cap_poly;
    int *row_count; /* n + 1 */
    double *xs;
    int cap_xs;
    double *bin_range; /* POINT_BINS */
};

/* floor and ceil as integers without a call to the C library (its floor
 * is a call on the baseline x86-64 instruction set, and the fill and the
 * returns take thousands a frame); finite x of magnitude below 2^62. */
static inline long lfloor(double x)
{
    long i = (long)x;
    return i - (x < (double)i);
}

static inline long lceil(double x) { return -lfloor(-x); }

static inline long floor_div(double x, double c) { return lfloor(x / c); }

static inline int wrap(long k, int n)
{
    long r = k % n;
    return (int)(r < 0 ? r + n : r);
}

static inline bool in_window(const lc_memory *m, long i, long j)
{
    return m->placed && i >= m->i0 && i < m->i0 + m->n && j >= m->j0 && j < m->j0 + m->n;
}

static inline size_t slot(const lc_memory *m, long i, long j)
{
    return (size_t)wrap(j, m->n) * (size_t)m->n + (size_t)wrap(i, m->n);
}

static inline lc_cell_state state_at(const lc_memory *m, size_t k)
{
    uint32_t s = m->seen[k];
    if (s == 0 || m->now == 0)
        return LC_CELL_UNKNOWN;
    uint32_t age = m->now - s;
    if (m->ev[k])
        return age <= m->hold_occ ? LC_CELL_OCCUPIED : LC_CELL_UNKNOWN;
    return age <= m->hold_free ? LC_CELL_FREE : LC_CELL_UNKNOWN;
}

/* Where occupied cell (i, j) (stored at k) had its last return. */
static inline lc_vec2 return_at(const lc_memory *m, size_t k, long i, long j)
{
    double fx = ((m->at[k] & 0xff) + 0.5) / 256.0, fy = ((m->at[k] >> 8) + 0.5) / 256.0;
    return lc_v2(((double)i + fx) * m->c, ((double)j + fy) * m->c);
}

#endif
