/*
 * memory.c - the rolling occupancy grid (see memory.h).
 *
 * Per cell: `seen`, the tick of the last frame that looked at it (its view
 * polygon held the cell's centre, a return fell in it, or the body covered
 * it; 0 never), and `ev`, the see-throughs still needed to clear it (0:
 * free). Ticks are milliseconds of frame stamps since the first frame,
 * made strictly increasing (two frames in one millisecond still get their
 * own tick), so "this frame touched the cell" is seen == now.
 *
 * Storage is a torus: lattice cell (i, j) lives at row j mod n, column
 * i mod n, so the window moves by clearing the rows and columns that come
 * in, never by copying.
 */
#include "memory_int.h"

#include <limits.h>
#include <stdlib.h>
#include <string.h>
#ifdef __SSE2__
#include <emmintrin.h>
#endif

#define PULL_BACK 1.5       /* cells a return's end is pulled back toward the sensor */
#define BACK_TOLERANCE 1.0  /* s a stamp may go back (another sensor's older frame) */
#define TICK_LIMIT 2000000000u /* ticks (ms, 23 days) before the memory starts over */
#define REANCHOR 64         /* beams between exact directions (scan_polygon) */


void lc_memory_config_default(lc_memory_config *cfg)
{
    *cfg = (lc_memory_config){.enabled = true,
                              .cell = 0.05,
                              .size = 20.0,
                              .reach = 6.0,
                              .hold_occupied = 30.0,
                              .hold_free = 90.0,
                              .clear_frames = 2};
}

int lc_memory_config_check(const lc_memory_config *cfg, const char **field)
{
    const char *bad = NULL;
    if (!(cfg->cell >= LC_MEMORY_CELL_MIN && cfg->cell <= LC_MEMORY_CELL_MAX))
        bad = "cell";
    else if (!(cfg->size >= 4 * cfg->cell && cfg->size / cfg->cell <= LC_MEMORY_CELLS_MAX))
        bad = "size";
    else if (!(cfg->reach > 0 && cfg->reach <= 1e3))
        bad = "reach";
    else if (!(cfg->hold_occupied > 0 && cfg->hold_occupied <= LC_MEMORY_HOLD_MAX))
        bad = "hold_occupied";
    else if (!(cfg->hold_free > 0 && cfg->hold_free <= LC_MEMORY_HOLD_MAX))
        bad = "hold_free";
    else if (!(cfg->clear_frames >= 1 && cfg->clear_frames <= 255))
        bad = "clear_frames";
    if (field)
        *field = bad;
    return bad ? -1 : 0;
}

int lc_memory_side(const lc_memory_config *cfg)
{
    return (int)ceil(cfg->size / cfg->cell - 1e-9);
}

size_t lc_memory_grid_bytes(const lc_memory_config *cfg)
{
    size_t n = (size_t)lc_memory_side(cfg);
    return n * n * (sizeof(uint32_t) + sizeof(uint8_t) + sizeof(uint16_t));
}

static void *take(const lc_alloc *a, size_t bytes)
{
    void *p = a->realloc(a->data, NULL, bytes);
    if (p)
        memset(p, 0, bytes);
    return p;
}

lc_memory *lc_memory_new(const lc_memory_config *cfg, const lc_alloc *alloc)
{
    if (!alloc)
        alloc = lc_alloc_default();
    if (!cfg || lc_memory_config_check(cfg, NULL) < 0)
        return NULL;
    lc_memory *m = take(alloc, sizeof *m);
    if (!m)
        return NULL;
    m->alloc = *alloc;
    m->cfg = *cfg;
    m->n = lc_memory_side(cfg);
    m->c = cfg->cell;
    m->inv_c = 1.0 / cfg->cell;
    m->hold_occ = (uint32_t)llround(cfg->hold_occupied * 1000.0);
    m->hold_free = (uint32_t)llround(cfg->hold_free * 1000.0);
    size_t cells = (size_t)m->n * (size_t)m->n;
    m->seen = take(alloc, cells * sizeof *m->seen);
    m->ev = take(alloc, cells * sizeof *m->ev);
    m->at = take(alloc, cells * sizeof *m->at);
    m->row_count = take(alloc, (size_t)(m->n + 1) * sizeof *m->row_count);
    m->bin_range = take(alloc, POINT_BINS * sizeof *m->bin_range);
    if (!m->seen || !m->ev || !m->at || !m->row_count || !m->bin_range) {
        lc_memory_free(m);
        return NULL;
    }
    return m;
}

void lc_memory_free(lc_memory *m)
{
    if (!m)
        return;
    lc_alloc a = m->alloc;
    a.realloc(a.data, m->seen, 0);
    a.realloc(a.data, m->ev, 0);
    a.realloc(a.data, m->at, 0);
    a.realloc(a.data, m->row_count, 0);
    a.realloc(a.data, m->bin_range, 0);
    LC_RELEASE(&a, m->poly, m->cap_poly);
    LC_RELEASE(&a, m->xs, m->cap_xs);
    a.realloc(a.data, m, 0);
}

void lc_memory_clear(lc_memory *m)
{
    size_t cells = (size_t)m->n * (size_t)m->n;
    memset(m->seen, 0, cells * sizeof *m->seen);
    memset(m->ev, 0, cells * sizeof *m->ev);
}

/* ------------------------------------------------------------ lattice */

void lc_memory_cell_of(const lc_memory *m, lc_vec2 p, long *i, long *j)
{
    *i = lfloor(p.x * m->inv_c);
    *j = lfloor(p.y * m->inv_c);
}

lc_vec2 lc_memory_cell_centre(const lc_memory *m, long i, long j)
{
    return lc_v2(((double)i + 0.5) * m->c, ((double)j + 0.5) * m->c);
}

lc_memory_window lc_memory_get_window(const lc_memory *m)
{
    return (lc_memory_window){m->i0, m->j0, m->n, m->c};
}

lc_cell_state lc_memory_cell(const lc_memory *m, long i, long j)
{
    return in_window(m, i, j) ? state_at(m, slot(m, i, j)) : LC_CELL_UNKNOWN;
}

lc_cell_state lc_memory_state(const lc_memory *m, lc_vec2 p)
{
    if (!lc_vec2_finite(p))
        return LC_CELL_UNKNOWN;
    long i, j;
    lc_memory_cell_of(m, p, &i, &j);
    return lc_memory_cell(m, i, j);
}

bool lc_memory_touched_now(const lc_memory *m, long i, long j)
{
    return in_window(m, i, j) && m->now != 0 && m->seen[slot(m, i, j)] == m->now;
}

/* ------------------------------------------------------ time and window */

/* The tick of this update; clears the memory on a restarted clock. */
static void advance_clock(lc_memory *m, double stamp)
{
    if (m->now != 0 && (stamp < m->last_stamp - BACK_TOLERANCE ||
                        stamp > m->last_stamp + LC_MEMORY_JUMP)) {
        lc_memory_clear(m);
        m->clears++;
        m->now = 0; /* start the clock over from this stamp */
    }
    if (m->now == 0) {
        m->base = stamp;
        m->now = 1;
        m->last_stamp = stamp;
        return;
    }
    double t = (stamp - m->base) * 1000.0 + 1.0;
    uint32_t tick = t > (double)TICK_LIMIT ? TICK_LIMIT : (t < 1.0 ? 1u : (uint32_t)t);
    m->now = tick > m->now ? tick : m->now + 1;
    if (stamp > m->last_stamp)
        m->last_stamp = stamp;
    if (m->now >= TICK_LIMIT) { /* weeks without a break: start over */
        lc_memory_clear(m);
        m->clears++;
        m->base = stamp;
        m->now = 1;
    }
}

static void clear_column(lc_memory *m, long i)
{
    int col = wrap(i, m->n);
    for (int r = 0; r < m->n; r++) {
        size_t k = (size_t)r * (size_t)m->n + (size_t)col;
        m->seen[k] = 0;
        m->ev[k] = 0;
    }
}

static void clear_row(lc_memory *m, long j)
{
    size_t k = (size_t)wrap(j, m->n) * (size_t)m->n;
    memset(m->seen + k, 0, (size_t)m->n * sizeof *m->seen);
    memset(m->ev + k, 0, (size_t)m->n * sizeof *m->ev);
}

/* The window's origin along one axis for a robot in cell r: moved no
 * further than brings the robot back within slack of the centre, so that
 * what lies behind a robot driving on stays in memory as long as the
 * window can hold it (a route that doubles back drives through it again). */
static long axis_origin(long o, long r, long half, long slack)
{
    long d = r - (o + half);
    if (d > slack)
        return r - half - slack;
    if (d < -slack)
        return r - half + slack;
    return o;
}

/* Where the window goes for a robot at centre: first centred on it; once
 * the robot is more than a quarter side off the centre along an axis,
 * moved along it by as little as brings it back to a quarter side: a
 * quarter side at least ahead of a robot driving on, three quarters
 * behind it. */
static void window_for(const lc_memory *m, lc_vec2 centre, long *ni, long *nj)
{
    long ri, rj;
    lc_memory_cell_of(m, centre, &ri, &rj);
    long half = m->n / 2;
    if (!m->placed) {
        *ni = ri - half;
        *nj = rj - half;
        return;
    }
    long slack = m->n / 4;
    *ni = axis_origin(m->i0, ri, half, slack);
    *nj = axis_origin(m->j0, rj, half, slack);
}

/* Move the window to lattice origin (ni, nj), clearing what comes in. */
static void move_window(lc_memory *m, long ni, long nj)
{
    if (m->placed && ni == m->i0 && nj == m->j0)
        return;
    if (!m->placed || labs(ni - m->i0) >= m->n || labs(nj - m->j0) >= m->n) {
        lc_memory_clear(m);
    } else {
        for (long i = ni; i < ni + m->n; i++)
            if (i < m->i0 || i >= m->i0 + m->n)
                clear_column(m, i);
        for (long j = nj; j < nj + m->n; j++)
            if (j < m->j0 || j >= m->j0 + m->n)
                clear_row(m, j);
    }
    m->i0 = ni;
    m->j0 = nj;
    m->placed = true;
}

/* ----------------------------------------------------- the view polygon */

static int poly_room(lc_memory *m, int need)
{
    return LC_GROW(&m->alloc, m->poly, m->cap_poly, need);
}

/*
 * A scan's view: the sensor, then each beam's end pulled back by
 * PULL_BACK cells (a beam without a return: min(far, reach)), capped at
 * reach. A scan of a full turn has no apex.
 */
static int scan_polygon(lc_memory *m, const lc_frame *f, lc_vec2 sensor)
{
    int n = f->n_ranges;
    bool full = fabs(f->angle_step) * n >= 2.0 * LC_PI - 1e-9;
    if (poly_room(m, n + 1) < 0)
        return -1;
    int k = 0;
    if (!full)
        m->poly[k++] = sensor;
    double reach = m->cfg.reach, back = PULL_BACK * m->c;
    double far = isfinite(f->range_max) ? lc_min(f->range_max, reach) : reach;
    double yaw = f->pose.yaw + f->mount.yaw;
    /* beam directions by rotation from one to the next, re-anchored every
     * REANCHOR beams (one sincos per 64 beams, round-off below 1e-14 rad) */
    lc_vec2 u = lc_v2(1, 0), rot = lc_unit_angle(f->angle_step);
    for (int i = 0; i < n; i++) {
        if (i % REANCHOR == 0)
            u = lc_unit_angle(yaw + f->angle_start + f->angle_step * i);
        else
            u = lc_v2(rot.x * u.x - rot.y * u.y, rot.y * u.x + rot.x * u.y);
        double r = f->ranges[i];
        double free = isfinite(r) && r >= f->range_min && r <= f->range_max ? r - back : far;
        free = lc_max(0.0, lc_min(free, reach));
        m->poly[k++] = lc_add(sensor, lc_scale(u, free));
    }
    return k;
}

/*
 * A points frame's view: the nearest kept point of each 1-degree bearing
 * bin, pulled back; a bin without a point ends at the sensor (nothing is
 * known to be free there), unless points lie within POINT_GAP bins on both
 * sides (sparse points, not a gap in the view): then the nearer of those.
 */
#define POINT_GAP 3

static void fill_point_gaps(double *r)
{
    double was[POINT_BINS];
    memcpy(was, r, sizeof was);
    for (int b = 0; b < POINT_BINS; b++) {
        if (isfinite(was[b]))
            continue;
        double left = INFINITY, right = INFINITY;
        for (int k = 1; k <= POINT_GAP && !isfinite(left); k++)
            left = was[(b - k + POINT_BINS) % POINT_BINS];
        for (int k = 1; k <= POINT_GAP && !isfinite(right); k++)
            right = was[(b + k) % POINT_BINS];
        if (isfinite(left) && isfinite(right))
            r[b] = lc_min(left, right);
    }
}

static int points_polygon(lc_memory *m, const lc_frame *f, const lc_cloud *cloud, lc_vec2 sensor)
{
    for (int b = 0; b < POINT_BINS; b++)
        m->bin_range[b] = INFINITY;
    for (int i = 0; i < cloud->n; i++) {
        double a = lc_wrap_angle(cloud->bearing[i]) + LC_PI;
        int b = (int)(a * POINT_BINS / (2.0 * LC_PI));
        b = b < POINT_BINS ? b : POINT_BINS - 1;
        m->bin_range[b] = lc_min(m->bin_range[b], cloud->range[i]);
    }
    fill_point_gaps(m->bin_range);
    if (poly_room(m, POINT_BINS) < 0)
        return -1;
    double back = PULL_BACK * m->c, yaw = f->pose.yaw + f->mount.yaw;
    for (int b = 0; b < POINT_BINS; b++) {
        double r = m->bin_range[b];
        double free = isfinite(r) ? lc_max(0.0, lc_min(r - back, m->cfg.reach)) : 0.0;
        double a = (b + 0.5) * (2.0 * LC_PI / POINT_BINS) - LC_PI;
        m->poly[b] = lc_add(sensor, lc_scale(lc_unit_angle(yaw + a), free));
    }
    return POINT_BINS;
}

/* The x where an edge from p with slope dx/dy crosses the height y. */
static inline double cross_x(lc_vec2 p, double slope, double y)
{
    return p.x + (y - p.y) * slope;
}

/* Rows [ja, jb) of a window starting at row j0 whose centre line the edge
 * crosses, half open in y as the even-odd rule wants. */
static void edge_rows(const lc_memory *m, long j0, lc_vec2 p, lc_vec2 q, long *ja, long *jb)
{
    double lo = lc_min(p.y, q.y), hi = lc_max(p.y, q.y);
    long a = lceil(lo * m->inv_c - 0.5), b = lceil(hi * m->inv_c - 0.5);
    *ja = a > j0 ? a : j0;
    *jb = b < j0 + m->n ? b : j0 + m->n;
}

/* Count each row's crossings for a window at row j0 and make room for
 * them (row_count[r] becomes the start of row r). -1: out of memory. */
static int count_crossings(lc_memory *m, int nv, long j0)
{
    int n = m->n;
    memset(m->row_count, 0, (size_t)(n + 1) * sizeof *m->row_count);
    for (int e = 0; e < nv; e++) {
        lc_vec2 p = m->poly[e], q = m->poly[e + 1 == nv ? 0 : e + 1];
        if (p.y == q.y)
            continue;
        long ja, jb;
        edge_rows(m, j0, p, q, &ja, &jb);
        for (long j = ja; j < jb; j++)
            m->row_count[j - j0 + 1]++;
    }
    for (int r = 0; r < n; r++)
        m->row_count[r + 1] += m->row_count[r];
    return LC_GROW(&m->alloc, m->xs, m->cap_xs, m->row_count[n] + 1);
}

/* The crossings into xs, row by row (the window is in place). */
static void fill_crossings(lc_memory *m, int nv)
{
    /* row_count[r] runs from the start of row r to its end as it fills */
    for (int e = 0; e < nv; e++) {
        lc_vec2 p = m->poly[e], q = m->poly[e + 1 == nv ? 0 : e + 1];
        if (p.y == q.y)
            continue;
        long ja, jb;
        edge_rows(m, m->j0, p, q, &ja, &jb);
        double slope = (q.x - p.x) / (q.y - p.y);
        for (long j = ja; j < jb; j++)
            m->xs[m->row_count[j - m->j0]++] = cross_x(p, slope, ((double)j + 0.5) * m->c);
    }
    /* the ends moved one row down: shift back to starts */
    for (int r = m->n; r > 0; r--)
        m->row_count[r] = m->row_count[r - 1];
    m->row_count[0] = 0;
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* A row's crossings in order: insertion sort for the few a row usually
 * has, the C library's for a jagged view's many. */
static void sort_doubles(double *v, int n)
{
    if (n > 24) {
        qsort(v, (size_t)n, sizeof *v, cmp_double);
        return;
    }
    for (int i = 1; i < n; i++) {
        double t = v[i];
        int k = i;
        for (; k > 0 && v[k - 1] > t; k--)
            v[k] = v[k - 1];
        v[k] = t;
    }
}

/*
 * Seen now, one see-through off the evidence: stored cells [a, b) of a row.
 * Most of an update's time is here (tens of thousands of cells a frame):
 * sixteen cells a step with SSE2 where the compiler has it (a saturating
 * byte subtraction and four stores of the tick), the same in plain C
 * otherwise.
 */
static void see_through(lc_memory *m, size_t a, size_t b)
{
    uint32_t now = m->now;
    uint32_t *seen = m->seen;
    uint8_t *ev = m->ev;
    size_t k = a;
#ifdef __SSE2__
    __m128i one = _mm_set1_epi8(1), tick = _mm_set1_epi32((int)now);
    for (; k + 16 <= b; k += 16) {
        __m128i v = _mm_loadu_si128((const __m128i *)(ev + k));
        _mm_storeu_si128((__m128i *)(ev + k), _mm_subs_epu8(v, one));
        _mm_storeu_si128((__m128i *)(seen + k), tick);
        _mm_storeu_si128((__m128i *)(seen + k + 4), tick);
        _mm_storeu_si128((__m128i *)(seen + k + 8), tick);
        _mm_storeu_si128((__m128i *)(seen + k + 12), tick);
    }
#endif
    for (; k < b; k++) {
        seen[k] = now;
        ev[k] = (uint8_t)(ev[k] - (ev[k] != 0));
    }
}

/* Lattice cells [ia, ib) of row j (inside the window) seen through. */
static void see_span(lc_memory *m, long j, long ia, long ib)
{
    if (ia < m->i0)
        ia = m->i0;
    if (ib > m->i0 + m->n)
        ib = m->i0 + m->n;
    if (ia >= ib)
        return;
    size_t row = (size_t)wrap(j, m->n) * (size_t)m->n;
    int ca = wrap(ia, m->n);
    long len = ib - ia;
    if (ca + len <= m->n) {
        see_through(m, row + (size_t)ca, row + (size_t)ca + (size_t)len);
    } else {
        see_through(m, row + (size_t)ca, row + (size_t)m->n);
        see_through(m, row, row + (size_t)(ca + len - m->n));
    }
}

/* Every cell whose centre the polygon holds (even-odd rule). */
static void fill_polygon(lc_memory *m)
{
    for (int r = 0; r < m->n; r++) {
        int a = m->row_count[r], b = m->row_count[r + 1];
        sort_doubles(m->xs + a, b - a);
        long j = m->j0 + r;
        for (int k = a; k + 1 < b; k += 2) {
            long ia = lceil(m->xs[k] * m->inv_c - 0.5), ib = lceil(m->xs[k + 1] * m->inv_c - 0.5);
            see_span(m, j, ia, ib);
        }
    }
}

/* ---------------------------------------------------------------- update */

/* A share in [0, 1) of a cell in 256ths (rounding keeps it in range). */
static uint16_t fraction(double f)
{
    int q = (int)(f * 256.0);
    return (uint16_t)(q < 0 ? 0 : (q > 255 ? 255 : q));
}

static void mark_returns(lc_memory *m, const lc_cloud *cloud)
{
    uint8_t full = (uint8_t)m->cfg.clear_frames;
    for (int p = 0; p < cloud->n; p++) {
        long i, j;
        lc_memory_cell_of(m, cloud->world[p], &i, &j);
        if (!in_window(m, i, j))
            continue;
        size_t k = slot(m, i, j);
        m->ev[k] = full;
        m->seen[k] = m->now;
        m->at[k] = fraction(cloud->world[p].x * m->inv_c - (double)i) |
                   (uint16_t)(fraction(cloud->world[p].y * m->inv_c - (double)j) << 8);
    }
}

/* The robot's own disc (body NULL), or the convex polygon body[0..n) in
 * the disc (centre, radius) about it: free, seen now. */
/* The lattice cells [ia, ib] x [ja, jb] of the disc's bounding box, cut to
 * the window (a huge radius must not loop over cells the window does not
 * hold). */
static void disc_box(const lc_memory *m, lc_vec2 centre, double radius, long *ia, long *ib,
                     long *ja, long *jb)
{
    double x0 = (double)m->i0 * m->c, y0 = (double)m->j0 * m->c, side = (double)m->n * m->c;
    *ia = floor_div(lc_min(lc_max(centre.x - radius, x0), x0 + side), m->c);
    *ib = floor_div(lc_min(lc_max(centre.x + radius, x0), x0 + side), m->c);
    *ja = floor_div(lc_min(lc_max(centre.y - radius, y0), y0 + side), m->c);
    *jb = floor_div(lc_min(lc_max(centre.y + radius, y0), y0 + side), m->c);
}

static void mark_body(lc_memory *m, lc_vec2 centre, double radius, const lc_vec2 *body, int n)
{
    if (!(radius > 0))
        return;
    long ia, ib, ja, jb;
    disc_box(m, centre, radius, &ia, &ib, &ja, &jb);
    for (long j = ja; j <= jb; j++)
        for (long i = ia; i <= ib; i++) {
            if (!in_window(m, i, j))
                continue;
            lc_vec2 cc = lc_memory_cell_centre(m, i, j);
            if (lc_dist(cc, centre) > radius || (body && !lc_convex_contains(body, n, cc, 0.0)))
                continue;
            size_t k = slot(m, i, j);
            m->ev[k] = 0;
            m->seen[k] = m->now;
        }
}

void lc_memory_mark_body(lc_memory *m, const lc_vec2 *body, int n)
{
    if (!m->placed || n < 3)
        return;
    lc_vec2 c = body[0];
    for (int i = 1; i < n; i++)
        c = lc_add(c, body[i]);
    c = lc_scale(c, 1.0 / n);
    double r = 0;
    for (int i = 0; i < n; i++)
        r = lc_max(r, lc_dist(c, body[i]));
    if (lc_vec2_finite(c) && isfinite(r))
        mark_body(m, c, r, body, n);
}

void lc_memory_keep_near(lc_memory *m, lc_vec2 centre, double radius)
{
    if (!m->placed || m->now < 2 || !lc_vec2_finite(centre) || !(radius > 0) ||
        !isfinite(radius))
        return;
    long ia, ib, ja, jb;
    disc_box(m, centre, radius, &ia, &ib, &ja, &jb);
    uint32_t renew = m->now - 1;
    for (long j = ja; j <= jb; j++)
        for (long i = ia; i <= ib; i++) {
            if (!in_window(m, i, j))
                continue;
            size_t k = slot(m, i, j);
            if (!m->ev[k] || m->seen[k] == 0 || m->seen[k] >= renew ||
                m->now - m->seen[k] > m->hold_occ)
                continue;
            if (lc_dist(lc_memory_cell_centre(m, i, j), centre) <= radius)
                m->seen[k] = renew;
        }
}

/*
 * Occupied cells whose hold has run out lose their evidence, SWEEP_ROWS
 * stored rows an update (the whole window every n / SWEEP_ROWS updates),
 * so that for the fast queries below ev != 0 means occupied (a forgotten
 * cell may count as occupied there until the sweep passes: the safe side).
 * lc_memory_cell and lc_memory_state judge the age exactly.
 */
#define SWEEP_ROWS 8

static void sweep(lc_memory *m)
{
    for (int r = 0; r < SWEEP_ROWS; r++) {
        size_t row = (size_t)m->sweep_row * (size_t)m->n;
        for (int k = 0; k < m->n; k++)
            if (m->ev[row + (size_t)k] && m->now - m->seen[row + (size_t)k] > m->hold_occ) {
                /* forgotten: unknown, not free (its free evidence is as
                 * old as the return, and the return said occupied) */
                m->ev[row + (size_t)k] = 0;
                m->seen[row + (size_t)k] = 0;
            }
        m->sweep_row = m->sweep_row + 1 == m->n ? 0 : m->sweep_row + 1;
    }
}

int lc_memory_update(lc_memory *m, const lc_frame *f, const lc_cloud *cloud,
                     double body_radius)
{
    lc_vec2 centre = lc_v2(f->pose.x, f->pose.y);
    if (!lc_vec2_finite(centre) || !isfinite(f->stamp))
        return 0;
    lc_vec2 sensor = lc_pose_apply(f->pose, lc_v2(f->mount.x, f->mount.y));
    int nv = f->kind == LC_FRAME_SCAN ? scan_polygon(m, f, sensor)
                                      : points_polygon(m, f, cloud, sensor);
    long ni, nj;
    window_for(m, centre, &ni, &nj);
    if (nv < 0 || count_crossings(m, nv, nj) < 0)
        return -1;
    /* the scratch is ready: from here on nothing can fail */
    advance_clock(m, f->stamp);
    move_window(m, ni, nj);
    fill_crossings(m, nv);
    fill_polygon(m);
    mark_returns(m, cloud);
    mark_body(m, centre, body_radius, NULL, 0);
    sweep(m);
    m->updates++;
    return 0;
}

void lc_memory_get_stats(const lc_memory *m, lc_memory_stats *out)
{
    memset(out, 0, sizeof *out);
    size_t cells = (size_t)m->n * (size_t)m->n;
    for (size_t k = 0; k < cells; k++) {
        lc_cell_state s = m->placed ? state_at(m, k) : LC_CELL_UNKNOWN;
        out->occupied += s == LC_CELL_OCCUPIED;
        out->free += s == LC_CELL_FREE;
        out->unknown += s == LC_CELL_UNKNOWN;
    }
    out->bytes = sizeof *m + cells * (sizeof *m->seen + sizeof *m->ev + sizeof *m->at) +
                 (size_t)(m->n + 1) * sizeof *m->row_count + POINT_BINS * sizeof *m->bin_range +
                 (size_t)m->cap_poly * sizeof *m->poly + (size_t)m->cap_xs * sizeof *m->xs;
    out->updates = m->updates;
    out->clears = m->clears;
}
