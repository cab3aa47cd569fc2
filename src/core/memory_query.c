/*
 * memory_query.c - the rolling occupancy grid's bulk queries (see
 * memory.h): a ray's march to the first cell not known free, the nearest
 * remembered return, every remembered return.
 */
#include "memory_int.h"

#include <math.h>
#include <string.h>


double lc_memory_march(const lc_memory *m, lc_vec2 from, lc_vec2 dir, double max, double body,
                       lc_cell_state *state, lc_vec2 *cell)
{
    *state = LC_CELL_FREE;
    if (!lc_vec2_finite(from) || !lc_vec2_finite(dir) || !(max >= 0))
        return INFINITY;
    if (!m->placed) { /* a memory that has taken no frame knows no cell */
        *state = LC_CELL_UNKNOWN;
        *cell = from;
        return 0.0;
    }
    long i, j;
    lc_memory_cell_of(m, from, &i, &j);
    /* Amanatides and Woo: the ray's t at the next vertical and horizontal
     * cell borders, and the t between borders; the stored row and column
     * follow i and j without a division */
    int si = dir.x > 0 ? 1 : -1, sj = dir.y > 0 ? 1 : -1;
    double bx = (double)(si > 0 ? i + 1 : i) * m->c, by = (double)(sj > 0 ? j + 1 : j) * m->c;
    double tx = dir.x != 0 ? (bx - from.x) / dir.x : INFINITY;
    double ty = dir.y != 0 ? (by - from.y) / dir.y : INFINITY;
    double dtx = dir.x != 0 ? m->c / fabs(dir.x) : INFINITY;
    double dty = dir.y != 0 ? m->c / fabs(dir.y) : INFINITY;
    int col = wrap(i, m->n), row = wrap(j, m->n);
    double t = 0.0; /* where the ray entered cell (i, j) */
    while (t <= max) {
        if (t >= body) {
            lc_cell_state st = in_window(m, i, j)
                                   ? state_at(m, (size_t)row * (size_t)m->n + (size_t)col)
                                   : LC_CELL_UNKNOWN;
            if (st != LC_CELL_FREE) {
                *state = st;
                *cell = st == LC_CELL_OCCUPIED
                            ? return_at(m, (size_t)row * (size_t)m->n + (size_t)col, i, j)
                            : lc_memory_cell_centre(m, i, j);
                return t;
            }
        }
        if (tx < ty) {
            t = tx;
            tx += dtx;
            i += si;
            col += si;
            col = col == m->n ? 0 : (col < 0 ? m->n - 1 : col);
        } else {
            t = ty;
            ty += dty;
            j += sj;
            row += sj;
            row = row == m->n ? 0 : (row < 0 ? m->n - 1 : row);
        }
    }
    return INFINITY;
}

/* Least squared distance from p to an occupied cell centre of stored row
 * `row` (lattice row j), columns [a, b) (lattice column of a: ia). */
static double row_nearest2(const lc_memory *m, size_t row, int a, int b, long ia, long j,
                           lc_vec2 p, double best)
{
    const uint8_t *ev = m->ev + row;
    for (int k = a; k < b; k++) {
        if (k + 8 <= b) {
            uint64_t w;
            memcpy(&w, ev + k, sizeof w);
            if (w == 0) {
                k += 7;
                continue;
            }
        }
        if (ev[k]) {
            lc_vec2 q = return_at(m, row + (size_t)k, ia + (k - a), j);
            best = lc_min(best, lc_len2(lc_sub(q, p)));
        }
    }
    return best;
}

double lc_memory_nearest(const lc_memory *m, lc_vec2 p, double radius)
{
    if (!m->placed || !lc_vec2_finite(p) || !(radius >= 0))
        return INFINITY;
    long ia = floor_div(p.x - radius, m->c), ib = floor_div(p.x + radius, m->c) + 1;
    long ja = floor_div(p.y - radius, m->c), jb = floor_div(p.y + radius, m->c) + 1;
    ia = ia > m->i0 ? ia : m->i0;
    ja = ja > m->j0 ? ja : m->j0;
    ib = ib < m->i0 + m->n ? ib : m->i0 + m->n;
    jb = jb < m->j0 + m->n ? jb : m->j0 + m->n;
    double best = radius * radius;
    bool found = false;
    for (long j = ja; j < jb; j++) {
        size_t row = (size_t)wrap(j, m->n) * (size_t)m->n;
        int ca = wrap(ia, m->n);
        long len = ib - ia;
        if (len <= 0)
            break;
        int end = ca + len <= m->n ? ca + (int)len : m->n;
        double b = row_nearest2(m, row, ca, end, ia, j, p, best);
        if (ca + len > m->n)
            b = row_nearest2(m, row, 0, (int)(ca + len - m->n), ia + (m->n - ca), j, p, b);
        found = found || b < best;
        best = b;
    }
    return found ? sqrt(best) : INFINITY;
}

int lc_memory_each_occupied(const lc_memory *m, int (*fn)(void *data, lc_vec2 p), void *data)
{
    if (!m->placed)
        return 0;
    /* stored column k holds lattice column i0 + (k - s) mod n, s the
     * stored column of i0: no division per cell */
    int s = wrap(m->i0, m->n);
    for (long j = m->j0; j < m->j0 + m->n; j++) {
        size_t row = (size_t)wrap(j, m->n) * (size_t)m->n;
        const uint8_t *ev = m->ev + row;
        for (int k = 0; k < m->n; k++) {
            if (k + 8 <= m->n && (k & 7) == 0) {
                uint64_t w;
                memcpy(&w, ev + k, sizeof w);
                if (w == 0) {
                    k += 7;
                    continue;
                }
            }
            if (!ev[k])
                continue;
            /* stored column k is lattice column i with i = k (mod n) in the window */
            long i = m->i0 + (k >= s ? k - s : k - s + m->n);
            int rc = fn(data, return_at(m, row + (size_t)k, i, j));
            if (rc)
                return rc;
        }
    }
    return 0;
}

int lc_memory_each_occupied_in(const lc_memory *m, lc_vec2 lo, lc_vec2 hi,
                               int (*fn)(void *data, lc_vec2 p), void *data)
{
    if (!m->placed || !(lo.x <= hi.x && lo.y <= hi.y))
        return 0;
    /* the box's cells cut to the window (a box far off stays off it) */
    double span = (double)m->n * m->c;
    double x0 = (double)m->i0 * m->c, y0 = (double)m->j0 * m->c;
    if (!(hi.x >= x0 && lo.x < x0 + span && hi.y >= y0 && lo.y < y0 + span))
        return 0;
    long ia = floor_div(fmax(lo.x, x0), m->c), ib = floor_div(fmin(hi.x, x0 + span), m->c);
    long ja = floor_div(fmax(lo.y, y0), m->c), jb = floor_div(fmin(hi.y, y0 + span), m->c);
    ia = ia < m->i0 ? m->i0 : ia;
    ja = ja < m->j0 ? m->j0 : ja;
    ib = ib >= m->i0 + m->n ? m->i0 + m->n - 1 : ib;
    jb = jb >= m->j0 + m->n ? m->j0 + m->n - 1 : jb;
    for (long j = ja; j <= jb; j++) {
        size_t row = (size_t)wrap(j, m->n) * (size_t)m->n;
        int col = wrap(ia, m->n);
        for (long i = ia; i <= ib; i++, col = col + 1 == m->n ? 0 : col + 1) {
            size_t k = row + (size_t)col;
            if (!m->ev[k])
                continue;
            int rc = fn(data, return_at(m, k, i, j));
            if (rc)
                return rc;
        }
    }
    return 0;
}

