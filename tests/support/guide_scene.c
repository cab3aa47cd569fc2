/*
 * guide_scene.c - the scenes of the guidance tests (see guide_scene.h).
 */
#include "guide_scene.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "testutil.h"

#include "ingest.h"

#define BEAMS 2880

void scene_memory_config(lc_memory_config *mc)
{
    lc_memory_config_default(mc);
    mc->size = 16; /* a window of 8 m either side, moved once 4 m off */
    mc->reach = 20;
    mc->hold_free = mc->hold_occupied = 300;
}

lc_memory *scene_new_memory(void)
{
    lc_memory_config mc;
    scene_memory_config(&mc);
    lc_memory *m = lc_memory_new(&mc, NULL);
    assert_non_null(m);
    return m;
}

lc_guide *scene_new_guide(const lc_guide_config *gc, const lc_alloc *alloc)
{
    lc_memory_config mc;
    scene_memory_config(&mc);
    lc_guide *g = lc_guide_new(gc, &mc, alloc);
    assert_non_null(g);
    return g;
}

void scene_see(lc_memory *m, const lc_world *w, lc_vec2 at, double stamp, double range_max)
{
    double ranges[BEAMS];
    lc_sensor s;
    lc_sensor_default(&s);
    s.beams = BEAMS;
    s.fov = 2.0 * LC_PI;
    s.range_min = 0.01;
    s.range_max = range_max;
    s.mount = (lc_pose){0, 0, 0};
    lc_pose pose = {at.x, at.y, 0};
    lc_world_scan(w, pose, &s, NULL, ranges);
    lc_frame f = {.kind = LC_FRAME_SCAN, .seq = 1, .stamp = stamp, .has_mount = true,
                  .pose = pose, .angle_start = lc_sensor_beam_angle(&s, 0),
                  .angle_step = lc_sensor_angle_step(&s), .range_min = s.range_min,
                  .range_max = s.range_max, .ranges = ranges, .n_ranges = BEAMS};
    lc_cloud cloud;
    lc_cloud_init(&cloud, NULL);
    lc_ingest_config ic;
    lc_ingest_config_default(&ic);
    assert_true(lc_ingest(&f, &ic, &cloud) >= 0);
    assert_int_equal(lc_memory_update(m, &f, &cloud, 0.0), 0);
    lc_cloud_free(&cloud);
}

lc_memory *scene_memory_of(const lc_world *w, const lc_vec2 *from, int n)
{
    lc_memory *m = scene_new_memory();
    for (int k = 0; k < n; k++)
        scene_see(m, w, from[k], 1.0 + k, 12.0);
    return m;
}

void scene_wall(lc_world *w, lc_vec2 a, lc_vec2 b)
{
    lc_vec2 v[2] = {a, b};
    assert_true(lc_world_add(w, v, 2) >= 0);
}

void scene_post(lc_world *w, lc_vec2 c, double r)
{
    lc_vec2 v[16];
    for (int k = 0; k < 16; k++)
        v[k] = lc_add(c, lc_scale(lc_unit_angle(k * LC_PI / 8), r));
    assert_true(lc_world_add(w, v, 16) >= 0);
}

const lc_guide_path *scene_step(lc_guide *g, const lc_memory *m, lc_vec2 robot, lc_vec2 wp,
                                double tolerance, lc_guide_info *info)
{
    const lc_guide_path *p = NULL;
    assert_int_equal(lc_guide_update(g, m, robot, wp, SCENE_CLEAR, tolerance, &p, info), 0);
    assert_non_null(p);
    return p;
}

bool scene_same(lc_vec2 a, lc_vec2 b)
{
    return a.x == b.x && a.y == b.y;
}

void scene_init(scene *s)
{
    memset(s, 0, sizeof *s);
    lc_world_init(&s->w);
    lc_guide_config_default(&s->gc);
}

void scene_ready(scene *s, const lc_vec2 *from, int n)
{
    s->m = scene_memory_of(&s->w, from, n);
    s->g = scene_new_guide(&s->gc, NULL);
}

void scene_open(scene *s)
{
    scene_init(s);
    lc_vec2 at = lc_v2(0, 0);
    scene_ready(s, &at, 1);
}

void scene_guide(scene *s)
{
    lc_guide_free(s->g);
    s->g = scene_new_guide(&s->gc, NULL);
}

const lc_guide_path *scene_update(scene *s, lc_vec2 robot, lc_vec2 wp, double tolerance)
{
    return scene_step(s->g, s->m, robot, wp, tolerance, &s->info);
}

void scene_free(scene *s)
{
    lc_guide_free(s->g);
    lc_memory_free(s->m);
    lc_world_free(&s->w);
}

/* The least distance from the segment [a, b] to a remembered return. */
typedef struct seg_ctx {
    lc_vec2 a, b;
    double d;
} seg_ctx;

static int seg_one(void *data, lc_vec2 p)
{
    seg_ctx *c = data;
    c->d = fmin(c->d, lc_segment_distance(p, c->a, c->b, NULL));
    return 0;
}

double scene_path_clearance(const lc_memory *m, const lc_guide_path *p)
{
    double d = INFINITY;
    for (int k = 0; k + 1 < p->n; k++) {
        seg_ctx c = {p->v[k], p->v[k + 1], INFINITY};
        lc_memory_each_occupied(m, seg_one, &c);
        d = fmin(d, c.d);
    }
    return d;
}

double scene_crossing_y(const lc_guide_path *p, double x)
{
    for (int k = 0; k + 1 < p->n; k++) {
        lc_vec2 a = p->v[k], b = p->v[k + 1];
        if ((a.x - x) * (b.x - x) <= 0 && a.x != b.x)
            return a.y + (b.y - a.y) * (x - a.x) / (b.x - a.x);
    }
    return NAN;
}


/* ------------------------------------------------ the Dijkstra oracle */

/* The returns sorted by x, for the classification by brute force. */
typedef struct returns {
    lc_vec2 *p;
    int n, cap;
} returns;

static int ret_one(void *data, lc_vec2 p)
{
    returns *r = data;
    if (r->n == r->cap) {
        r->cap = r->cap ? 2 * r->cap : 1024;
        r->p = realloc(r->p, (size_t)r->cap * sizeof *r->p);
        assert_non_null(r->p);
    }
    r->p[r->n++] = p;
    return 0;
}

static int by_x(const void *a, const void *b)
{
    double xa = ((const lc_vec2 *)a)->x, xb = ((const lc_vec2 *)b)->x;
    return xa < xb ? -1 : xa > xb;
}

/* The least distance from q to a return within radius, else INFINITY
 * (every return whose x is within radius, by bisection on the sort). */
static double nearest_return(const returns *r, lc_vec2 q, double radius)
{
    int lo = 0, hi = r->n;
    while (lo < hi) {
        int mid = (lo + hi) / 2;
        if (r->p[mid].x < q.x - radius)
            lo = mid + 1;
        else
            hi = mid;
    }
    double best = radius * radius;
    bool found = false;
    for (int i = lo; i < r->n && r->p[i].x <= q.x + radius; i++) {
        double d2 = lc_len2(lc_sub(r->p[i], q));
        if (d2 < best) {
            best = d2;
            found = true;
        }
    }
    return found ? sqrt(best) : INFINITY;
}

typedef struct heap_item {
    double key;
    int k;
} heap_item;

typedef struct min_heap {
    heap_item *a;
    int n, cap;
} min_heap;

static void heap_push(min_heap *h, double key, int k)
{
    if (h->n == h->cap) {
        h->cap = h->cap ? 2 * h->cap : 4096;
        h->a = realloc(h->a, (size_t)h->cap * sizeof *h->a);
        assert_non_null(h->a);
    }
    int i = h->n++;
    while (i > 0 && h->a[(i - 1) / 2].key > key) {
        h->a[i] = h->a[(i - 1) / 2];
        i = (i - 1) / 2;
    }
    h->a[i] = (heap_item){key, k};
}

static heap_item heap_pop(min_heap *h)
{
    heap_item top = h->a[0], last = h->a[--h->n];
    int i = 0;
    for (;;) {
        int c = 2 * i + 1;
        if (c >= h->n)
            break;
        if (c + 1 < h->n && h->a[c + 1].key < h->a[c].key)
            c++;
        if (!(h->a[c].key < last.key))
            break;
        h->a[i] = h->a[c];
        i = c;
    }
    if (h->n > 0)
        h->a[i] = last;
    return top;
}

enum { O_FREE, O_SOFT, O_TIGHT, O_CLOSED };

/*
 * The least cost from the robot's cell to a cell whose centre lies within
 * reach of the goal, over the grid guide.h lays on the memory's window
 * (`cell` metres, the window's corner), 8-connected, no closed corner cut,
 * a step costing its length times: 8 within R + 5 cm of a return (tight),
 * soft_cost within R + soft, unknown_cost more where the memory does not
 * know the centre; closed nearer than R less half a cell, but tight within
 * 1.5 cells of the robot. A goal outside the grid is a node of its own,
 * reached from each border cell at unknown_cost times the straight line
 * (docs/DESIGN.md, "Guidance"). Plain Dijkstra (Dijkstra 1959), INFINITY
 * when no goal is reached.
 */
double scene_least_cost(const lc_memory *m, const lc_guide_config *gc, double R, lc_vec2 start,
                        lc_vec2 goal, double reach)
{
    lc_memory_window w = lc_memory_get_window(m);
    int n = (int)ceil(w.n * w.cell / gc->cell - 1e-9), outside = n * n;
    double x0 = (double)w.i0 * w.cell, y0 = (double)w.j0 * w.cell, c = gc->cell;
    returns r = {0};
    lc_memory_each_occupied(m, ret_one, &r);
    if (r.n > 1)
        qsort(r.p, (size_t)r.n, sizeof *r.p, by_x);
    size_t cells = (size_t)n * (size_t)n + 1;
    unsigned char *cls = malloc(cells), *unknown = malloc(cells), *done = calloc(cells, 1);
    double *g = malloc(cells * sizeof *g);
    assert_true(cls && unknown && done && g);
    for (int k = 0; k < n * n; k++) {
        lc_vec2 p = lc_v2(x0 + (k % n + 0.5) * c, y0 + (k / n + 0.5) * c);
        double d = nearest_return(&r, p, R + gc->soft);
        cls[k] = d < R - 0.5 * c ? O_CLOSED : d < R + 0.05 ? O_TIGHT : d < R + gc->soft ? O_SOFT
                                                                                      : O_FREE;
        if (cls[k] == O_CLOSED && lc_dist(p, start) <= 1.5 * c)
            cls[k] = O_TIGHT;
        unknown[k] = lc_memory_state(m, p) == LC_CELL_UNKNOWN;
        g[k] = INFINITY;
    }
    g[outside] = INFINITY;
    bool inside = goal.x >= x0 && goal.x < x0 + n * c && goal.y >= y0 && goal.y < y0 + n * c;
    int su = (int)floor((start.x - x0) / c), sv = (int)floor((start.y - y0) / c);
    assert_true(su >= 0 && su < n && sv >= 0 && sv < n);
    min_heap h = {0};
    g[sv * n + su] = 0;
    heap_push(&h, 0, sv * n + su);
    double best = INFINITY;
    static const int du[8] = {1, -1, 0, 0, 1, 1, -1, -1}, dv[8] = {0, 0, 1, -1, 1, -1, 1, -1};
    while (h.n > 0) {
        heap_item it = heap_pop(&h);
        int k = it.k;
        if (done[k] || it.key > g[k])
            continue;
        done[k] = 1;
        if (k == outside) {
            best = g[k];
            break;
        }
        int u = k % n, v = k / n;
        lc_vec2 p = lc_v2(x0 + (u + 0.5) * c, y0 + (v + 0.5) * c);
        if (inside && lc_dist(p, goal) <= reach) {
            best = g[k];
            break;
        }
        if (!inside && (u == 0 || v == 0 || u == n - 1 || v == n - 1) &&
            g[k] + gc->unknown_cost * lc_dist(p, goal) < g[outside]) {
            g[outside] = g[k] + gc->unknown_cost * lc_dist(p, goal);
            heap_push(&h, g[outside], outside);
        }
        for (int d = 0; d < 8; d++) {
            int uu = u + du[d], vv = v + dv[d];
            if (uu < 0 || vv < 0 || uu >= n || vv >= n || cls[vv * n + uu] == O_CLOSED)
                continue;
            if (d >= 4) { /* both cells beside the corner open */
                int a = v * n + uu, b = vv * n + u;
                if (cls[a] == O_CLOSED || cls[b] == O_CLOSED)
                    continue;
            }
            int q = vv * n + uu;
            double f = cls[q] == O_TIGHT ? 8.0 : cls[q] == O_SOFT ? gc->soft_cost : 1.0;
            f *= unknown[q] ? gc->unknown_cost : 1.0;
            double gq = g[k] + (d < 4 ? c : c * sqrt(2.0)) * f;
            if (gq < g[q]) {
                g[q] = gq;
                heap_push(&h, gq, q);
            }
        }
    }
    free(h.a);
    free(r.p);
    free(cls);
    free(unknown);
    free(done);
    free(g);
    return best;
}
