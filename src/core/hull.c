/*
 * hull.c - convex hulls of small planar point sets (see hull.h).
 *
 * Invariants: output vertices are input points copied bit for bit (never
 * recomputed), counter-clockwise, without repeats or collinear vertices.
 * Units are whatever the caller's points carry (metres in the pipeline).
 *
 * qhull: one qhT lives inside the context for its whole life (qh_zero once,
 * qh_memfreeshort at the end). Per call: qh_new_qhull, the facet-ring walk,
 * qh_freeqhull(!qh_ALL). qhull's short-memory pools therefore stay warm
 * between calls. Measured with valgrind over 100 and 200 calls of 32 points:
 * about 4 mallocs (11 kB) per call this way against 8 mallocs (134 kB, the
 * initial short-memory buffer every time) when qh_memfreeshort runs per call;
 * the time is the same within 1 us either way. Those mallocs inside
 * qh_new_qhull are qhull's own and are accepted; lacuna's buffers (qhull's
 * coordinates, the small path's sorted copy and chain) grow through the
 * context's lc_alloc and nothing is allocated by lacuna once warm.
 *
 * qhull never writes to the terminal: its error file is an open_memstream
 * kept for the context's life (rewound before each call, so it holds at most
 * one message), output file NULL. After a failed qh_new_qhull only
 * qh_freeqhull runs (it does not throw); any other qhull call on a failed
 * result could reach qhull's exit().
 *
 * Coordinates handed to qhull are relative to the bounding-box centre:
 * qhull's roundoff scales with the largest coordinate, and with a 1e6 m
 * offset it declared 1e-9 m-wide slivers flat that it accepts near the
 * origin. Near the origin it failed on relative widths up to about 1e-13
 * (4 of 1200 random slivers; 0 of 1200 at 1e-12), so the collinearity filter
 * below uses 1e-10, a hundredfold margin.
 *
 * The small path is Andrew's monotone chain with an orientation test that
 * keeps a turn only when its sign is certain (Shewchuk's error bound for the
 * plain 2x2 determinant); uncertain turns count as collinear and are dropped,
 * so every kept vertex is a certified strict left turn.
 *
 * Default small_max, measured on this machine (2 shared cores, gcc -O2,
 * medians of 4000 random sets per size, half uniform in a unit square, half
 * on a unit circle, 3..8 m from the origin; the two entry points
 * lc_hull_compute_qhull and lc_hull_compute_small of this file, so qhull's
 * figure includes centring its coordinates; insertion sort up to 64 points,
 * qsort above):
 *
 *     n    qhull path (us)   small path (us)   ratio
 *     3        12.4              0.07           180x
 *     4        13.1              0.11           120x
 *     8        16.1              0.26            62x
 *    16        21.2              0.59            36x
 *    32        31.1              1.31            24x
 *    64        54.2              3.15            17x
 *   128       102.6             10.6             10x
 *
 * qhull's set-up dominates every size measured, so there is no break-even
 * point: the limit is where qhull's robustness (facet merging on dense,
 * noisy clusters) is wanted over speed. 64 covers the typical scan piece
 * while the chain's insertion sort stays short; larger pieces go to qhull.
 * Measured again after the chain learnt to sort along the longer axis (same
 * method, a busier machine): qhull 17.2 / 22.2 / 24.2 / 34.2 / 56.5 / 105 us
 * against 0.08 / 0.31 / 0.68 / 1.5 / 3.5 / 11 us for 3 / 8 / 16 / 32 / 64 /
 * 128 points: the decision stands. Segmentation caps pieces at 64 points
 * (lc_segment_config.max_piece), so the bench's frames never reach qhull; a
 * 1081-beam frame's 47 hulls cost about 10 us in all.
 */
#include "hull.h"

#include <float.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <libqhull_r/qhull_ra.h>

#define LC_HULL_DEFAULT_SMALL_MAX 64

/* Max distance from the chord, relative to the chord's length, below which a
 * point set counts as collinear (see the qhull measurement above). */
#define LC_HULL_FLAT_REL 1e-10

/* Pieces up to this size are sorted by insertion (faster than qsort here up
 * to at least 128 points on random input), larger ones by qsort. */
#define LC_HULL_INSERTION_MAX 64

/* Shewchuk's ccwerrboundA: |det| above this times the sum of the two
 * products' magnitudes gives det's sign exactly. */
#define LC_CCW_ERRBOUND ((3.0 + 16.0 * (DBL_EPSILON / 2)) * (DBL_EPSILON / 2))

struct lc_hull_ctx {
    lc_alloc alloc;
    qhT qh;
    FILE *errlog;   /* qhull's messages: an open_memstream, never the terminal */
    char *errbuf;   /* the stream's buffer, owned by the C library */
    size_t errlen;
    char cmd[8];    /* qh_new_qhull takes a non-const command string */
    char message[160];
    double *coords; /* qhull's input, x y interleaved, centred */
    int cap_coords;
    lc_vec2 *sorted;
    int cap_sorted;
    lc_vec2 *chain;
    int cap_chain;
    int small_max;
    lc_hull_stats stats;
};

lc_hull_ctx *lc_hull_new(const lc_alloc *alloc)
{
    if (!alloc)
        alloc = lc_alloc_default();
    lc_hull_ctx *ctx = alloc->realloc(alloc->data, NULL, sizeof *ctx);
    if (!ctx)
        return NULL;
    memset(ctx, 0, sizeof *ctx);
    ctx->alloc = *alloc;
    ctx->errlog = open_memstream(&ctx->errbuf, &ctx->errlen);
    if (!ctx->errlog) {
        alloc->realloc(alloc->data, ctx, 0);
        return NULL;
    }
    qh_zero(&ctx->qh, ctx->errlog);
    strcpy(ctx->cmd, "qhull");
    ctx->small_max = LC_HULL_DEFAULT_SMALL_MAX;
    return ctx;
}

void lc_hull_free(lc_hull_ctx *ctx)
{
    if (!ctx)
        return;
    int curlong, totlong;
    qh_memfreeshort(&ctx->qh, &curlong, &totlong);
    fclose(ctx->errlog);
    free(ctx->errbuf); /* allocated by open_memstream, i.e. the C library */
    LC_RELEASE(&ctx->alloc, ctx->coords, ctx->cap_coords);
    LC_RELEASE(&ctx->alloc, ctx->sorted, ctx->cap_sorted);
    LC_RELEASE(&ctx->alloc, ctx->chain, ctx->cap_chain);
    lc_alloc a = ctx->alloc;
    a.realloc(a.data, ctx, 0);
}

void lc_hull_set_small_max(lc_hull_ctx *ctx, int small_max)
{
    ctx->small_max = small_max < 0 ? 0 : small_max;
}

int lc_hull_small_max(const lc_hull_ctx *ctx) { return ctx->small_max; }

const lc_hull_stats *lc_hull_get_stats(const lc_hull_ctx *ctx) { return &ctx->stats; }

const char *lc_hull_last_message(const lc_hull_ctx *ctx) { return ctx->message; }

static bool all_finite(const lc_vec2 *pts, int n)
{
    for (int i = 0; i < n; i++)
        if (!lc_vec2_finite(pts[i]))
            return false;
    return true;
}

static void bounding_box(const lc_vec2 *pts, int n, lc_vec2 *lo, lc_vec2 *hi)
{
    *lo = *hi = pts[0];
    for (int i = 1; i < n; i++) {
        lo->x = lc_min(lo->x, pts[i].x);
        lo->y = lc_min(lo->y, pts[i].y);
        hi->x = lc_max(hi->x, pts[i].x);
        hi->y = lc_max(hi->y, pts[i].y);
    }
}

/* The first points with the least and greatest x and y: one pass for the
 * bounding box and the extremes along either axis. */
typedef struct extremes {
    int xmin, xmax, ymin, ymax;
} extremes;

static extremes find_extremes(const lc_vec2 *pts, int n)
{
    extremes e = {0, 0, 0, 0};
    for (int i = 1; i < n; i++) {
        e.xmin = pts[i].x < pts[e.xmin].x ? i : e.xmin;
        e.xmax = pts[i].x > pts[e.xmax].x ? i : e.xmax;
        e.ymin = pts[i].y < pts[e.ymin].y ? i : e.ymin;
        e.ymax = pts[i].y > pts[e.ymax].y ? i : e.ymax;
    }
    return e;
}

/*
 * The degenerate cases: writes 1 point (all equal) or the 2 extreme points
 * (collinear within LC_HULL_FLAT_REL, or two distinct points) and returns
 * the count; returns 0 when the set spans an area. n >= 1. *along_x tells
 * whether the set is at least as wide as it is tall.
 */
static int degenerate_hull(const lc_vec2 *pts, int n, lc_vec2 *out, bool *along_x)
{
    extremes e = find_extremes(pts, n);
    double w = pts[e.xmax].x - pts[e.xmin].x, h = pts[e.ymax].y - pts[e.ymin].y;
    *along_x = w >= h;
    if (w == 0 && h == 0) {
        out[0] = pts[0];
        return 1;
    }
    lc_vec2 a = pts[*along_x ? e.xmin : e.ymin];
    lc_vec2 u = lc_sub(pts[*along_x ? e.xmax : e.ymax], a);
    double limit = LC_HULL_FLAT_REL * lc_len2(u); /* |cross| / |u| <= rel |u| */
    int imin = 0, imax = 0;
    double tmin = INFINITY, tmax = -INFINITY;
    for (int i = 0; i < n; i++) {
        lc_vec2 d = lc_sub(pts[i], a);
        if (fabs(lc_cross(u, d)) > limit)
            return 0;
        double t = lc_dot(u, d);
        if (t < tmin) {
            tmin = t;
            imin = i;
        }
        if (t > tmax) {
            tmax = t;
            imax = i;
        }
    }
    out[0] = pts[imin];
    out[1] = pts[imax];
    return 2;
}

/* ---- small path: Andrew's monotone chain ---------------------------------- */

/*
 * The chain's order: by x then y, or for a set taller than wide by y then
 * -x, i.e. by x then y after a quarter turn clockwise (a rotation, so the
 * orientation tests and the hull's counter-clockwise order are unchanged).
 * Comparisons only, no arithmetic: the order is exact. Along the longer
 * axis a scan piece comes nearly sorted (in beam order, or reversed), where
 * sorting by x a piece seen along y would meet its range noise in x first.
 */
static int lex_compare(lc_vec2 p, lc_vec2 q)
{
    if (p.x != q.x)
        return p.x < q.x ? -1 : 1;
    return (p.y > q.y) - (p.y < q.y);
}

static int turned_compare(lc_vec2 p, lc_vec2 q)
{
    if (p.y != q.y)
        return p.y < q.y ? -1 : 1;
    return (p.x < q.x) - (p.x > q.x);
}

static int order_compare(lc_vec2 p, lc_vec2 q, bool along_x)
{
    return along_x ? lex_compare(p, q) : turned_compare(p, q);
}

static int lex_compare_qsort(const void *a, const void *b)
{
    return lex_compare(*(const lc_vec2 *)a, *(const lc_vec2 *)b);
}

static int turned_compare_qsort(const void *a, const void *b)
{
    return turned_compare(*(const lc_vec2 *)a, *(const lc_vec2 *)b);
}

/* Sorts the copy in v of pts[0..n); a run that goes the wrong way is copied
 * reversed first, so that insertion sort meets it nearly sorted. */
static void sort_points(lc_vec2 *v, const lc_vec2 *pts, int n, bool along_x)
{
    if (n > LC_HULL_INSERTION_MAX) {
        memcpy(v, pts, sizeof *pts * (size_t)n);
        qsort(v, (size_t)n, sizeof *v, along_x ? lex_compare_qsort : turned_compare_qsort);
        return;
    }
    if (order_compare(pts[0], pts[n - 1], along_x) > 0)
        for (int i = 0; i < n; i++)
            v[i] = pts[n - 1 - i];
    else
        memcpy(v, pts, sizeof *pts * (size_t)n);
    for (int i = 1; i < n; i++) {
        lc_vec2 t = v[i];
        int j = i;
        for (; j > 0 && order_compare(v[j - 1], t, along_x) > 0; j--)
            v[j] = v[j - 1];
        v[j] = t;
    }
}

/* True only when a -> b -> c is certainly a strict left turn. */
static bool certain_left_turn(lc_vec2 a, lc_vec2 b, lc_vec2 c)
{
    double l = (b.x - a.x) * (c.y - a.y), r = (b.y - a.y) * (c.x - a.x);
    return l - r > LC_CCW_ERRBOUND * (fabs(l) + fabs(r));
}

/* Sorts and drops exact repeats in ctx->sorted; returns the distinct count. */
static int sorted_distinct(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, bool along_x)
{
    sort_points(ctx->sorted, pts, n, along_x);
    int m = 1;
    for (int i = 1; i < n; i++)
        if (lex_compare(ctx->sorted[i], ctx->sorted[m - 1]) != 0)
            ctx->sorted[m++] = ctx->sorted[i];
    return m;
}

/* Keeps the first copy of every point of h[0..k); returns the new count. */
static int drop_repeats(lc_vec2 *h, int k)
{
    int w = 0;
    for (int i = 0; i < k; i++) {
        int j = 0;
        while (j < w && lex_compare(h[j], h[i]) != 0)
            j++;
        if (j == w)
            h[w++] = h[i];
    }
    return w;
}

static int monotone_chain(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, bool along_x, lc_vec2 *out)
{
    if (n <= 0)
        return 0;
    if (LC_GROW(&ctx->alloc, ctx->sorted, ctx->cap_sorted, n) < 0 ||
        LC_GROW(&ctx->alloc, ctx->chain, ctx->cap_chain, 2 * n) < 0) /* Andrew's bound */
        return LC_ERR_NO_MEMORY;
    ctx->stats.small_calls++;
    int m = sorted_distinct(ctx, pts, n, along_x);
    const lc_vec2 *s = ctx->sorted;
    lc_vec2 *h = ctx->chain;
    if (m == 1) {
        out[0] = s[0];
        return 1;
    }
    int k = 0;
    for (int i = 0; i < m; i++) { /* lower chain, first to last in the order */
        while (k >= 2 && !certain_left_turn(h[k - 2], h[k - 1], s[i]))
            k--;
        h[k++] = s[i];
    }
    for (int i = m - 2, lower = k + 1; i >= 0; i--) { /* upper chain, back */
        while (k >= lower && !certain_left_turn(h[k - 2], h[k - 1], s[i]))
            k--;
        h[k++] = s[i];
    }
    k--; /* the last point repeats the first */
    if (k > m) /* a point in both chains: impossible with certain turns, but
                * out holds only n points */
        k = drop_repeats(h, k);
    memcpy(out, h, sizeof *out * (size_t)k);
    return k;
}

/* ---- qhull path ------------------------------------------------------------ */

static void record_failure(lc_hull_ctx *ctx, int code, int msgcode)
{
    ctx->stats.errors++;
    ctx->stats.last_error = code;
    ctx->stats.last_message_code = msgcode;
    fflush(ctx->errlog);
    const char *text = ctx->errbuf ? ctx->errbuf : "";
    size_t len = strcspn(text, "\n");
    if (len >= sizeof ctx->message)
        len = sizeof ctx->message - 1;
    memcpy(ctx->message, text, len);
    ctx->message[len] = '\0';
}

/* Centred coordinates for qhull in ctx->coords; LC_OK or LC_ERR_NO_MEMORY. */
static int load_coords(lc_hull_ctx *ctx, const lc_vec2 *pts, int n)
{
    if (LC_GROW(&ctx->alloc, ctx->coords, ctx->cap_coords, 2 * n) < 0)
        return LC_ERR_NO_MEMORY;
    lc_vec2 lo, hi;
    bounding_box(pts, n, &lo, &hi);
    lc_vec2 c = lc_scale(lc_add(lo, hi), 0.5);
    for (int i = 0; i < n; i++) {
        ctx->coords[2 * i] = pts[i].x - c.x;
        ctx->coords[2 * i + 1] = pts[i].y - c.y;
    }
    return LC_OK;
}

/*
 * Walks qhull's 2-d facet ring the way qh_printextremes_2d does (facet
 * orientation picks which vertex comes first and which neighbour is next),
 * which gives the vertices counter-clockwise. Returns the count, or
 * LC_ERR_LIBRARY when the ring is not the closed loop of at most n facets it
 * must be.
 */
static int walk_facets(qhT *qh, const lc_vec2 *pts, int n, lc_vec2 *out)
{
    facetT *start = qh->facet_list, *f = start;
    int k = 0;
    do {
        if (!f || k >= n)
            return LC_ERR_LIBRARY;
        bool forward = f->toporient ^ qh_ORIENTclock;
        vertexT *v = forward ? SETfirstt_(f->vertices, vertexT)
                             : SETsecondt_(f->vertices, vertexT);
        int id = v ? qh_pointid(qh, v->point) : -1;
        if (id < 0 || id >= n)
            return LC_ERR_LIBRARY;
        out[k++] = pts[id];
        f = forward ? SETfirstt_(f->neighbors, facetT) : SETsecondt_(f->neighbors, facetT);
    } while (f != start);
    return k;
}

static int qhull_hull(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out)
{
    if (load_coords(ctx, pts, n) < 0)
        return LC_ERR_NO_MEMORY;
    if (ftello(ctx->errlog) > 0)
        fseeko(ctx->errlog, 0, SEEK_SET);
    qhT *qh = &ctx->qh;
    ctx->stats.qhull_calls++;
    int code = qh_new_qhull(qh, 2, n, ctx->coords, False, ctx->cmd, NULL, ctx->errlog);
    int k = code ? LC_ERR_LIBRARY : walk_facets(qh, pts, n, out);
    if (code)
        record_failure(ctx, code, qh->last_errcode); /* read before the free clears it */
    else if (k < 0) {
        record_failure(ctx, qh_ERRqhull, 0);
        k = LC_ERR_LIBRARY;
    }
    qh_freeqhull(qh, !qh_ALL); /* the only qhull call allowed after a failure */
    return k;
}

/* ---- entry points ---------------------------------------------------------- */

int lc_hull_compute_small(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out)
{
    if (!all_finite(pts, n))
        return LC_ERR_BAD_INPUT;
    return monotone_chain(ctx, pts, n, true, out);
}

int lc_hull_compute_qhull(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out)
{
    if (n <= 0)
        return 0;
    if (!all_finite(pts, n))
        return LC_ERR_BAD_INPUT;
    return qhull_hull(ctx, pts, n, out);
}

int lc_hull_compute(lc_hull_ctx *ctx, const lc_vec2 *pts, int n, lc_vec2 *out)
{
    if (n <= 0)
        return 0;
    if (!all_finite(pts, n))
        return LC_ERR_BAD_INPUT;
    bool along_x;
    int k = degenerate_hull(pts, n, out, &along_x);
    if (k > 0)
        return k;
    if (n <= ctx->small_max)
        return monotone_chain(ctx, pts, n, along_x, out);
    k = qhull_hull(ctx, pts, n, out);
    /* An obstacle must not vanish because qhull rejected it: the failure is
     * counted in the stats and the small path answers instead. */
    return k == LC_ERR_LIBRARY ? monotone_chain(ctx, pts, n, along_x, out) : k;
}
