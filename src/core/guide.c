/*
 * guide.c - guidance by A* over the remembered space (see guide.h).
 *
 * The search grid is laid on the memory's window at each search (its
 * origin follows the window), `n` cells of `cell` metres a side. Cells are
 * classified lazily, once per search, from the memory: closed within the
 * clearance R of an occupied cell, "soft" within R + soft, and unknown when
 * the memory does not know the cell under their centre. A waypoint outside
 * the window is a goal node of its own, reached from the cells of the
 * window's border at the unknown-space cost of the straight line: the path
 * leaves the window where the rest of the way looks cheapest.
 */
#include "guide_int.h"

#include "follow.h"
#include "recall.h"

#include <float.h>
#include <stdint.h>
#include <string.h>

enum {
    CLS_TODO = 0, /* not classified in this search */
    CLS_FREE = 1,
    CLS_SOFT = 2,
    CLS_CLOSED = 3,
    CLS_TIGHT = 4, /* soft, and within TIGHT of the clearance */
    CLS_UNKNOWN = 0x10, /* or'ed: the memory does not know the cell */
    CLS_BODY_UNKNOWN = 0x20, /* or'ed: the robot there would stand partly in unknown space */
    CLS_BODY_DONE = 0x40,    /* or'ed: CLS_BODY_UNKNOWN is decided */
};

enum { ST_OPEN = 1, ST_DONE = 2 };

#define LOS_STEP 1.0 /* memory cells between line-of-sight samples */


/* A gap that leaves the robot's centre less than 2 TIGHT of room is one the
 * region can barely hold the robot in (a needle of a region, a crawl): its
 * cells cost TIGHT_COST times their length, so that a way round of up to
 * a few metres is taken instead, and the gap only when there is none. */
#define TIGHT 0.05     /* m */
#define TIGHT_COST 8.0

/* A path that passes nearer a remembered return than this share of the
 * clearance goes through an obstacle, not past it: priced now (to weigh it
 * against a new one), it has no cost at all. */
#define THROUGH 0.5


void lc_guide_config_default(lc_guide_config *cfg)
{
    *cfg = (lc_guide_config){.enabled = true,
                             .cell = 0.1,
                             .every = 10,
                             .travel = 0.5,
                             .unknown_cost = 2.0,
                             .soft = 0.6,
                             .soft_cost = 2.0,
                             .hysteresis = 0.15,
                             .check_ahead = 3.0,
                             .stall = 4.0,
                             .greed = 2.0,
                             .blind_cost = 25.0,
                             .slice = 0};
}

int lc_guide_config_check(const lc_guide_config *cfg, const char **field)
{
    const char *bad = NULL;
    if (!(cfg->cell >= 0.02 && cfg->cell <= 1.0))
        bad = "cell";
    else if (!(cfg->every >= 1 && cfg->every <= 10000))
        bad = "every";
    else if (!(cfg->travel >= 0 && cfg->travel <= 100))
        bad = "travel";
    else if (!(cfg->unknown_cost >= 1 && cfg->unknown_cost <= 100))
        bad = "unknown_cost";
    else if (!(cfg->soft >= 0 && cfg->soft <= 5))
        bad = "soft";
    else if (!(cfg->soft_cost >= 1 && cfg->soft_cost <= 100))
        bad = "soft_cost";
    else if (!(cfg->hysteresis >= 0 && cfg->hysteresis < 1))
        bad = "hysteresis";
    else if (!(cfg->check_ahead >= 0 && cfg->check_ahead <= 100))
        bad = "check_ahead";
    else if (!(cfg->stall >= 0 && cfg->stall <= 3600))
        bad = "stall";
    else if (!(cfg->greed >= 1 && cfg->greed <= 10))
        bad = "greed";
    else if (!(cfg->blind_cost >= 1 && cfg->blind_cost <= 100))
        bad = "blind_cost";
    else if (!(cfg->slice >= 0 && cfg->slice <= 100000000))
        bad = "slice";
    if (field)
        *field = bad;
    return bad ? -1 : 0;
}

static void *take(const lc_alloc *a, size_t bytes)
{
    void *p = a->realloc(a->data, NULL, bytes);
    if (p)
        memset(p, 0, bytes);
    return p;
}

lc_guide *lc_guide_new(const lc_guide_config *cfg, const lc_memory_config *mem_cfg,
                       const lc_alloc *alloc)
{
    if (!alloc)
        alloc = lc_alloc_default();
    if (!cfg || !mem_cfg || lc_guide_config_check(cfg, NULL) < 0 ||
        lc_memory_config_check(mem_cfg, NULL) < 0)
        return NULL;
    int n = (int)ceil(lc_memory_side(mem_cfg) * mem_cfg->cell / cfg->cell - 1e-9);
    if (n < 4 || n > 4096)
        return NULL;
    lc_guide *g = take(alloc, sizeof *g);
    if (!g)
        return NULL;
    g->alloc = *alloc;
    g->cfg = *cfg;
    g->mem_cell = mem_cfg->cell;
    g->n = n;
    size_t cells = (size_t)n * (size_t)n + 1;
    g->g = take(alloc, cells * sizeof *g->g);
    g->f = take(alloc, cells * sizeof *g->f);
    g->parent = take(alloc, cells * sizeof *g->parent);
    g->state = take(alloc, cells);
    g->cls = take(alloc, cells);
    g->heap = take(alloc, cells * sizeof *g->heap);
    g->pos = take(alloc, cells * sizeof *g->pos);
    g->raw = take(alloc, cells * sizeof *g->raw);
    g->bn = (n + BUCKET - 1) / BUCKET;
    size_t buckets = (size_t)g->bn * (size_t)g->bn;
    g->b_first = take(alloc, buckets * sizeof *g->b_first);
    g->b_count = take(alloc, buckets * sizeof *g->b_count);
    g->b_done = take(alloc, buckets);
    if (!g->g || !g->f || !g->parent || !g->state || !g->cls || !g->heap || !g->pos || !g->raw ||
        !g->b_first || !g->b_count || !g->b_done) {
        lc_guide_free(g);
        return NULL;
    }
    return g;
}

void lc_guide_free(lc_guide *g)
{
    if (!g)
        return;
    lc_alloc a = g->alloc;
    void *bufs[] = {g->g, g->f, g->parent, g->state, g->cls, g->heap, g->pos, g->raw,
                    g->b_first, g->b_count, g->b_done};
    for (size_t i = 0; i < sizeof bufs / sizeof bufs[0]; i++)
        a.realloc(a.data, bufs[i], 0);
    LC_RELEASE(&a, g->pts, g->cap_pts);
    a.realloc(a.data, g, 0);
}

void lc_guide_reset(lc_guide *g)
{
    g->job = 0;
    g->path.status = LC_GUIDE_NONE;
    g->path.n = 0;
    g->has_goal = false;
    g->doubt = false;
    g->n_refused = g->next_refused = 0;
}

void lc_guide_refuse(lc_guide *g, lc_vec2 at, double radius)
{
    if (!lc_vec2_finite(at) || !(radius > 0))
        return;
    g->refused[g->next_refused] = at;
    g->refused_r[g->next_refused] = radius;
    g->next_refused = (g->next_refused + 1) % LC_GUIDE_REFUSED;
    if (g->n_refused < LC_GUIDE_REFUSED)
        g->n_refused++;
    g->search_now = true;
}

bool lc_guide_doubt_ahead(const lc_guide *g, const lc_memory *m, const lc_guide_path *p,
                          lc_vec2 c, double from, double upto, double clearance, lc_vec2 *at)
{
    if (p->status != LC_GUIDE_PATH || p->n < 2 || !(upto >= from))
        return false;
    double step = g->mem_cell;
    int k = (int)ceil((upto - from) / step);
    for (int i = 0; i <= k; i++) {
        lc_vec2 q = lc_guide_ahead(p, c, fmin(from + i * step, upto), NULL);
        if (lc_memory_state(m, q) == LC_CELL_UNKNOWN ||
            lc_memory_nearest(m, q, clearance + TIGHT) < clearance + TIGHT) {
            *at = q;
            return true;
        }
        if (lc_dist(q, p->v[p->n - 1]) < 1e-9)
            break; /* the path's end */
    }
    return false;
}

/* p lies in a refused spot; a spot that (with the escape) holds the robot
 * no longer counts: the robot has got there after all. */
static bool refused_at(const lc_guide *g, lc_vec2 start, double escape, lc_vec2 p)
{
    for (int i = 0; i < g->n_refused; i++)
        if (lc_dist(p, g->refused[i]) < g->refused_r[i] &&
            lc_dist(start, g->refused[i]) >= g->refused_r[i] + escape)
            return true;
    return false;
}

/* ----------------------------------------------------------------- sight */

/* The search's steps: 4 straight, then 4 diagonal. */
static const int du[8] = {1, -1, 0, 0, 1, 1, -1, -1}, dv[8] = {0, 0, 1, -1, 1, -1, 1, -1};

void lc_guide_set_sight(lc_guide *g, const lc_guide_sight *sight)
{
    g->sight.n = 0;
    if (!sight)
        return;
    for (int i = 0; i < sight->n && i < LC_GUIDE_SIGHTS; i++) {
        if (!(isfinite(sight->mid[i]) && sight->half[i] >= 0))
            continue;
        if (sight->half[i] >= LC_PI) { /* all round */
            g->sight.n = 0;
            return;
        }
        g->sight.mid[g->sight.n] = sight->mid[i];
        g->sight.half[g->sight.n] = sight->half[i];
        g->sight.n++;
    }
    if (g->sight.n == 0 && sight->n > 0) { /* nothing usable: looks nowhere */
        g->sight.mid[0] = 0.0;
        g->sight.half[0] = -1.0;
        g->sight.n = 1;
    }
}

/* Can the robot look along world direction dir? */
static bool can_look(const lc_guide *g, double dir)
{
    if (g->sight.n == 0)
        return true;
    for (int i = 0; i < g->sight.n; i++)
        if (fabs(lc_wrap_angle(dir - g->sight.mid[i])) <= g->sight.half[i])
            return true;
    return false;
}

/* Is the way from a to b one the robot cannot look along? */
static bool blind_toward(const lc_guide *g, lc_vec2 a, lc_vec2 b)
{
    return g->sight.n > 0 && lc_dist(a, b) > 0 && !can_look(g, atan2(b.y - a.y, b.x - a.x));
}

/* ------------------------------------------------------------------ grid */

static lc_vec2 centre_of(const lc_guide *g, int k)
{
    return lc_v2(g->x0 + ((k % g->n) + 0.5) * g->cfg.cell, g->y0 + ((k / g->n) + 0.5) * g->cfg.cell);
}

static int cell_of(const lc_guide *g, lc_vec2 p)
{
    double u = floor((p.x - g->x0) / g->cfg.cell), v = floor((p.y - g->y0) / g->cfg.cell);
    if (!(u >= 0 && u < g->n && v >= 0 && v < g->n))
        return -1;
    return (int)v * g->n + (int)u;
}

/* ------------------------------------------------ obstacles of a search */

typedef struct search_ctx {
    const lc_memory *m;
    double R;        /* m, clearance */
    lc_vec2 start;
    double escape;   /* m, closed cells this near the start are passable */
    double graze;    /* m, how far into the clearance a path ahead may be found before
                        it counts as closed (half a memory cell: cells flicker at the
                        edge of the clearance as they are seen again) */
    bool blind[8];   /* the search's step directions the robot cannot look along */
} search_ctx;

/*
 * Closed: nearer a remembered return than the clearance less half a search
 * cell. A passage just wide enough for the robot (the worlds a robot meets
 * are no kinder) may hold no cell centre a full clearance from both sides
 * on a grid of `cell`; the search errs on the open side by that half cell,
 * such a gap costs TIGHT_COST, and the region, which keeps the exact
 * clearance from what is seen, decides whether the robot passes (refused
 * after a stall when it does not).
 */
static double closed_within(const lc_guide *g, const search_ctx *c)
{
    return c->R - 0.5 * g->cfg.cell;
}

/* A point's class from the memory: closed, soft or free, and unknown. */
static int classify_point(lc_guide *g, const search_ctx *c, lc_vec2 p)
{
    if (refused_at(g, c->start, c->escape, p))
        return CLS_CLOSED;
    /* the nearest return within the tight band, else whether any lies
     * within the soft one (the wider query stops at its first) */
    double d = lc_guide_nearest(g, p, c->R + TIGHT);
    int cls = d < closed_within(g, c)                         ? CLS_CLOSED
              : d < c->R + TIGHT                              ? CLS_TIGHT
              : lc_guide_any_within(g, p, c->R + g->cfg.soft) ? CLS_SOFT
                                                              : CLS_FREE;
    if (lc_memory_state(c->m, p) == LC_CELL_UNKNOWN)
        cls |= CLS_UNKNOWN;
    return cls;
}

/*
 * Would the robot about p reach into space the memory does not know? Its
 * centre, eight points on the rim of its disc (the clearance) and sixteen
 * on the circle out to the region's horizon (lc_recall_near: the
 * clearance and two memory cells more), inside which the region keeps a
 * robot that cannot turn out of every direction it has not seen (recall.h).
 * By the rim alone a patch never seen a few centimetres past it let a path
 * end where the region never lets the robot go. Measured with the point
 * model (docs/DESIGN.md, step 6): on the double-back worlds it stopped 1
 * to 8 cm outside a waypoint's tolerance, the waypoint in its blind
 * sector, and was blocked there. Read as the region reads it instead
 * (rays to the first cell not known free, a return ending a ray as known,
 * only in the directions the robot cannot look along) it did no better
 * over the families: the circle, which also counts the unseen far side of
 * a wall, errs on the side of looking first.
 */
static bool body_unknown_at(const lc_guide *g, const search_ctx *c, lc_vec2 p)
{
    static const double dir[16][2] = {
        {1, 0},
        {0.92387953251128674, 0.38268343236508978},
        {M_SQRT1_2, M_SQRT1_2},
        {0.38268343236508978, 0.92387953251128674},
        {0, 1},
        {-0.38268343236508978, 0.92387953251128674},
        {-M_SQRT1_2, M_SQRT1_2},
        {-0.92387953251128674, 0.38268343236508978},
        {-1, 0},
        {-0.92387953251128674, -0.38268343236508978},
        {-M_SQRT1_2, -M_SQRT1_2},
        {-0.38268343236508978, -0.92387953251128674},
        {0, -1},
        {0.38268343236508978, -0.92387953251128674},
        {M_SQRT1_2, -M_SQRT1_2},
        {0.92387953251128674, -0.38268343236508978}};
    if (lc_memory_state(c->m, p) == LC_CELL_UNKNOWN)
        return true;
    for (int i = 0; i < 16; i += 2) /* the rim, every 45 degrees */
        if (lc_memory_state(c->m, lc_v2(p.x + c->R * dir[i][0], p.y + c->R * dir[i][1])) ==
            LC_CELL_UNKNOWN)
            return true;
    double horizon = lc_recall_near(c->R, g->mem_cell);
    for (int i = 0; i < 16; i++)
        if (lc_memory_state(c->m, lc_v2(p.x + horizon * dir[i][0], p.y + horizon * dir[i][1])) ==
            LC_CELL_UNKNOWN)
            return true;
    return false;
}

static int cls_at(lc_guide *g, const search_ctx *c, int k);

/* A step into cell k that the robot cannot look along (c->blind) goes
 * where it cannot see when its body there reaches into unknown space. */
static bool body_unknown(lc_guide *g, const search_ctx *c, int k)
{
    int cls = cls_at(g, c, k);
    if (cls & CLS_UNKNOWN)
        return true;
    if (!(cls & CLS_BODY_DONE)) {
        cls |= CLS_BODY_DONE | (body_unknown_at(g, c, centre_of(g, k)) ? CLS_BODY_UNKNOWN : 0);
        g->cls[k] = (uint8_t)cls;
    }
    return cls & CLS_BODY_UNKNOWN;
}

static int cls_at(lc_guide *g, const search_ctx *c, int k)
{
    if (g->cls[k] == CLS_TODO) {
        lc_vec2 p = centre_of(g, k);
        int cls = classify_point(g, c, p);
        if ((cls & 0x0f) == CLS_CLOSED && lc_dist(p, c->start) <= c->escape)
            cls = (cls & CLS_UNKNOWN) | CLS_TIGHT; /* the robot stands here: let it out */
        g->cls[k] = (uint8_t)cls;
    }
    return g->cls[k];
}

static double factor(const lc_guide *g, int cls)
{
    int k = cls & 0x0f;
    double f = k == CLS_TIGHT ? TIGHT_COST : (k == CLS_SOFT ? g->cfg.soft_cost : 1.0);
    return cls & CLS_UNKNOWN ? f * g->cfg.unknown_cost : f;
}

/* ------------------------------------------------------------------ heap */

static bool heap_less(const lc_guide *g, int a, int b)
{
    return g->f[a] < g->f[b] || (g->f[a] == g->f[b] && a < b); /* ties: deterministic */
}

static void heap_up(lc_guide *g, int i)
{
    int k = g->heap[i];
    while (i > 0 && heap_less(g, k, g->heap[(i - 1) / 2])) {
        g->heap[i] = g->heap[(i - 1) / 2];
        g->pos[g->heap[i]] = i;
        i = (i - 1) / 2;
    }
    g->heap[i] = k;
    g->pos[k] = i;
}

static void heap_down(lc_guide *g, int i)
{
    int k = g->heap[i];
    for (;;) {
        int c = 2 * i + 1;
        if (c >= g->heap_n)
            break;
        if (c + 1 < g->heap_n && heap_less(g, g->heap[c + 1], g->heap[c]))
            c++;
        if (!heap_less(g, g->heap[c], k))
            break;
        g->heap[i] = g->heap[c];
        g->pos[g->heap[i]] = i;
        i = c;
    }
    g->heap[i] = k;
    g->pos[k] = i;
}

/* Open k with cost gk and estimate h, or lower its cost. */
static void relax(lc_guide *g, int k, int from, double gk, double h)
{
    if (g->state[k] == ST_DONE || (g->state[k] == ST_OPEN && !(gk < g->g[k])))
        return;
    g->g[k] = (float)gk;
    g->f[k] = (float)(gk + h);
    g->parent[k] = from;
    if (g->state[k] == ST_OPEN) {
        heap_up(g, g->pos[k]);
        return;
    }
    g->state[k] = ST_OPEN;
    g->heap[g->heap_n] = k;
    heap_up(g, g->heap_n++);
}

static int pop(lc_guide *g)
{
    int top = g->heap[0];
    g->heap[0] = g->heap[--g->heap_n];
    if (g->heap_n > 0) {
        g->pos[g->heap[0]] = 0;
        heap_down(g, 0);
    }
    g->state[top] = ST_DONE;
    return top;
}

/* ---------------------------------------------------------------- search */

static double octile(lc_vec2 a, lc_vec2 b)
{
    double dx = fabs(a.x - b.x), dy = fabs(a.y - b.y);
    return fmax(dx, dy) + (sqrt(2.0) - 1.0) * fmin(dx, dy);
}

static bool on_border(const lc_guide *g, int k)
{
    int u = k % g->n, v = k / g->n;
    return u == 0 || v == 0 || u == g->n - 1 || v == g->n - 1;
}

/*
 * A* from the robot's cell. The goal: a passable cell within `reach` of
 * the goal point when it lies in the grid (and not `via_edge`), else the
 * outside node (index n * n) through the border, a step out costing
 * unknown_cost times the straight way on to the goal point. astar_begin
 * opens the start (-1 when it lies off the grid); astar_run expands at
 * most `budget` cells (0: no limit) and returns the goal's index, -1 (no
 * path) or ASTAR_PAUSED, to be run on with the same arguments.
 */
#define ASTAR_PAUSED (-2)

static double astar_slack(const lc_guide *g, lc_vec2 goal, double reach, bool via_edge)
{
    /* The search ends anywhere within reach of the goal: the octile
     * distance less what it may overstate that by (octile / Euclidean is at
     * most sqrt(4 - 2 sqrt 2)) keeps the heuristic admissible. */
    bool inside = !via_edge && cell_of(g, goal) >= 0;
    return inside ? sqrt(4.0 - 2.0 * sqrt(2.0)) * reach : 0.0;
}

static int astar_begin(lc_guide *g, const search_ctx *c, lc_vec2 goal, double reach,
                       bool via_edge)
{
    size_t cells = (size_t)g->n * (size_t)g->n + 1;
    memset(g->state, 0, cells);
    memset(g->cls, 0, cells);
    g->heap_n = 0;
    int s = cell_of(g, c->start);
    if (s < 0)
        return -1;
    double slack = astar_slack(g, goal, reach, via_edge);
    relax(g, s, -1, 0.0, g->cfg.greed * fmax(0.0, octile(centre_of(g, s), goal) - slack));
    return 0;
}

static int astar_run(lc_guide *g, const search_ctx *c, lc_vec2 goal, double reach, bool via_edge,
                     int budget, int *expanded)
{
    int n = g->n, total = n * n, outside = total;
    *expanded = 0;
    bool inside = !via_edge && cell_of(g, goal) >= 0;
    double w = g->cfg.greed, slack = astar_slack(g, goal, reach, via_edge);
    double step = g->cfg.cell;
    while (g->heap_n > 0) {
        if (budget > 0 && *expanded >= budget)
            return ASTAR_PAUSED;
        int k = pop(g);
        if (k == outside)
            return k;
        (*expanded)++;
        lc_vec2 p = centre_of(g, k);
        if (inside && lc_dist(p, goal) <= reach)
            return k;
        if (!inside && on_border(g, k)) /* leave the window toward the goal */
            relax(g, outside, k, g->g[k] + g->cfg.unknown_cost * lc_dist(p, goal), 0.0);
        int u = k % n, v = k / n;
        bool open[4] = {false, false, false, false};
        for (int d = 0; d < 8; d++) {
            int uu = u + du[d], vv = v + dv[d];
            if (uu < 0 || vv < 0 || uu >= n || vv >= n)
                continue;
            if (d >= 4 && !(open[d < 6 ? 0 : 1] && open[(d & 1) ? 3 : 2]))
                continue; /* no cutting a closed corner */
            int q = vv * n + uu, cls = cls_at(g, c, q);
            if ((cls & 0x0f) == CLS_CLOSED)
                continue;
            if (d < 4)
                open[d] = true;
            double len = d < 4 ? step : step * sqrt(2.0);
            double f = factor(g, cls);
            if (c->blind[d] && body_unknown(g, c, q))
                f *= g->cfg.blind_cost;
            relax(g, q, k, g->g[k] + len * f,
                  w * fmax(0.0, octile(centre_of(g, q), goal) - slack));
        }
    }
    return -1;
}

/* ------------------------------------------------------------ the path */

/* Is the segment [a, b] clear of obstacles by the clearance and half the
 * soft margin (samples every LOS_STEP memory cells)? A shortcut that grazes
 * an obstacle at the bare clearance would lead the robot along the edge of
 * its region, where the region's lines cut the path off at once. */
static bool line_of_sight(lc_guide *g, const search_ctx *c, lc_vec2 a, lc_vec2 b,
                          bool known)
{
    double len = lc_dist(a, b), step = LOS_STEP * g->mem_cell;
    double keep = c->R + 0.5 * g->cfg.soft;
    /* along a way the robot cannot look, its body stays in known space */
    bool blind = blind_toward(g, a, b);
    known = known || blind;
    int k = (int)ceil(len / step);
    for (int i = 1; i <= k; i++) {
        lc_vec2 p = lc_lerp(a, b, (double)i / k);
        if ((refused_at(g, c->start, c->escape, p) || lc_guide_nearest(g, p, keep) < keep) &&
            lc_dist(p, c->start) > c->escape)
            return false;
        if (blind && body_unknown_at(g, c, p))
            return false;
    }
    if (known && len > 0) {
        /* every cell the segment crosses known (the exact traversal: a
         * corner of unknown space between two samples counts too) */
        lc_cell_state st;
        lc_vec2 at;
        double t = lc_memory_march(c->m, a, lc_scale(lc_sub(b, a), 1.0 / len), len, 0.0, &st, &at);
        /* a cell the segment only touches at its end is not crossed */
        if (t < len - 1e-9 * fmax(1.0, len) && st == LC_CELL_UNKNOWN)
            return false;
    }
    return true;
}

/*
 * The search's way as points: k = 0 the robot, then its cells in order
 * (not the robot's own, not the outside node), the goal point last (k =
 * count - 1). raw[] holds the cells goal first, the robot's cell at
 * raw[n_raw - 1].
 */
typedef struct way_points {
    const lc_guide *g;
    lc_vec2 start, goal;
    int n_raw, first_cell, count;
} way_points;

static lc_vec2 way_point(const way_points *w, int k)
{
    if (k == 0)
        return w->start;
    if (k == w->count - 1)
        return w->goal;
    return centre_of(w->g, w->g->raw[w->n_raw - 1 - k]);
}

/* The raw cell path into cand as a polyline shortened where the straight
 * line is clear: from each anchor, the farthest point in sight (the goal
 * first, then by halving). */
/*
 * A vertex of the path that lies within the soft margin of a return moved
 * up the distance to the returns, CENTRE_STEP at a time while that
 * distance grows: through a gap it comes to the gap's middle, a cell's
 * width off where the grid put it. The region is seeded along the path: in
 * a gap barely wider than the robot, only a path down its middle leaves a
 * seed a region can grow along.
 */
#define CENTRE_STEP 0.01 /* m */
#define CENTRE_STEPS 10

static lc_vec2 centre_point(lc_guide *g, const search_ctx *c, lc_vec2 v)
{
    double reach = c->R + g->cfg.soft;
    lc_vec2 q;
    double d = lc_guide_nearest_at(g, v, reach, &q);
    for (int i = 0; i < CENTRE_STEPS && d < reach && d > 1e-9; i++) {
        lc_vec2 moved = lc_add(v, lc_scale(lc_sub(v, q), CENTRE_STEP / d));
        lc_vec2 q2;
        double d2 = lc_guide_nearest_at(g, moved, reach, &q2);
        if (!(d2 > d))
            break;
        v = moved;
        d = d2;
        q = q2;
    }
    return v;
}

static void build_path(lc_guide *g, const search_ctx *c, int end, lc_vec2 goal, double cost)
{
    int n_raw = 0, total = g->n * g->n;
    for (int k = end; k >= 0 && n_raw < total + 1; k = g->parent[k])
        g->raw[n_raw++] = k;
    int cells = n_raw - 1 - (end == total ? 1 : 0); /* after the robot's, before the end */
    way_points w = {g, c->start, goal, n_raw, 0, cells + 2};
    lc_guide_path *p = &g->cand;
    p->n = 0;
    p->status = LC_GUIDE_PATH;
    p->goal = goal;
    p->projected = end == total;
    p->cost = cost;
    p->found_at = g->frame;
    p->seg = 0;
    p->v[p->n++] = c->start;
    /* unknown[k]: the way's cells before way point k the search took
     * through unknown space (the heap's positions are free after the
     * search): a shortcut may cross unknown space only where they did, for
     * the search went round it where it could */
    int *unknown = g->pos;
    unknown[0] = 0;
    for (int k = 1; k < w.count; k++)
        unknown[k] = unknown[k - 1] +
                     (k < w.count - 1 && (g->cls[g->raw[w.n_raw - 1 - k]] & CLS_UNKNOWN) ? 1 : 0);
    int a = 0, last = w.count - 1;
    while (a < last && p->n < LC_GUIDE_PATH_MAX) {
        int lo = a + 1, hi = last;
        lc_vec2 from = way_point(&w, a);
        if (line_of_sight(g, c, from, way_point(&w, hi), unknown[hi] == unknown[a])) {
            lo = hi;
        } else {
            while (hi - lo > 1) { /* lo in sight (a neighbour), hi not */
                int mid = (lo + hi) / 2;
                if (line_of_sight(g, c, from, way_point(&w, mid), unknown[mid] == unknown[a]))
                    lo = mid;
                else
                    hi = mid;
            }
        }
        a = p->n == LC_GUIDE_PATH_MAX - 1 ? last : lo; /* room for the goal at the end */
        p->v[p->n++] = way_point(&w, a);
    }
    for (int k = 1; k + 1 < p->n; k++)
        p->v[k] = centre_point(g, c, p->v[k]);
    p->length = 0;
    for (int k = 1; k < p->n; k++)
        p->length += lc_dist(p->v[k - 1], p->v[k]);
}

/* What the rest of path p costs now from `from`, sampled every search
 * cell. A closed sample costs as the search's dearest step would (a path
 * found closed ahead is replaced anyway, by blocked_ahead): the robot that
 * has come close to a corner its path rounds does not drop the path for
 * every cell its clearance now touches. */
static double cost_now(lc_guide *g, const search_ctx *c, const lc_guide_path *p,
                       lc_vec2 from, int seg)
{
    lc_vec2 q = lc_follow_nearest(p, from, &seg);
    double cost = 0.0, step = g->cfg.cell;
    lc_vec2 a = from;
    for (int k = seg; k <= p->n - 1; k++) {
        lc_vec2 b = k == seg ? q : p->v[k];
        double len = lc_dist(a, b), blind = blind_toward(g, a, b) ? g->cfg.blind_cost : 1.0;
        int m = (int)ceil(len / step);
        for (int i = 1; i <= m; i++) {
            lc_vec2 s = lc_lerp(a, b, (double)i / m);
            if (cell_of(g, s) < 0) { /* outside the window: unknown */
                cost += len / m * g->cfg.unknown_cost;
                continue;
            }
            int cls = classify_point(g, c, s);
            if ((cls & 0x0f) == CLS_CLOSED) {
                /* through an obstacle (a wall seen since across the way,
                 * its far end a dead end): no way at all; else a graze
                 * (cells flicker at the clearance's edge), priced tight */
                if (lc_dist(s, c->start) > c->escape &&
                    lc_guide_nearest(g, s, c->R) < THROUGH * c->R)
                    return INFINITY;
                cls = (cls & CLS_UNKNOWN) | CLS_TIGHT;
            }
            bool unseen = blind > 1.0 && ((cls & CLS_UNKNOWN) || body_unknown_at(g, c, s));
            cost += len / m * factor(g, cls) * (unseen ? blind : 1.0);
        }
        a = b;
    }
    /* a way that ends short of its goal (round the window's edge): the
     * rest is unknown */
    if (p->n > 0)
        cost += lc_dist(p->v[p->n - 1], p->goal) * g->cfg.unknown_cost;
    return cost;
}

/* Is an obstacle within the clearance of the followed path's next
 * check_ahead metres (AHEAD_CLOSED), or else does it cross a refused spot
 * (AHEAD_REFUSED: the search let it through one, the refusals forgotten or
 * the robot let out of its clearance; searched again at the periodic
 * cadence, not every frame)? */
enum { AHEAD_OPEN = 0, AHEAD_CLOSED, AHEAD_REFUSED };

static int blocked_ahead(const lc_guide *g, const search_ctx *c, lc_vec2 from)
{
    bool refused = false;
    const lc_guide_path *p = &g->path;
    int seg = p->seg;
    lc_vec2 q = lc_follow_nearest(p, from, &seg);
    double walked = 0.0, step = g->cfg.cell;
    lc_vec2 a = q;
    for (int k = seg + 1; k < p->n && walked < g->cfg.check_ahead; k++) {
        lc_vec2 b = p->v[k];
        double len = lc_dist(a, b);
        int m = (int)ceil(len / step);
        for (int i = 1; i <= m && walked < g->cfg.check_ahead; i++) {
            lc_vec2 s = lc_lerp(a, b, (double)i / m);
            walked += len / m;
            if (lc_dist(s, c->start) <= c->escape)
                continue;
            if (lc_memory_nearest(c->m, s, c->R) < closed_within(g, c) - c->graze)
                return AHEAD_CLOSED;
            if (refused_at(g, c->start, c->escape, s))
                refused = true;
        }
        a = b;
    }
    return refused ? AHEAD_REFUSED : AHEAD_OPEN;
}

static void place_grid(lc_guide *g, const lc_memory *m)
{
    lc_memory_window w = lc_memory_get_window(m);
    g->x0 = (double)w.i0 * w.cell;
    g->y0 = (double)w.j0 * w.cell;
}

/*
 * A search is a chain of A* runs (each a JOB_ phase): the main one; with
 * the refused spots forgotten when they closed every way; with the robot
 * let out of its whole clearance; then, for a waypoint in the window, one
 * from the waypoint to the window's edge and, when that finds it, the
 * robot's to the edge (the way round it). With cfg.slice, the main run
 * expands at most that many cells a frame and goes on from where it
 * stopped on the frames after (counted in cells: replay stays exact; the
 * cells classified meanwhile read the memory as it is then), for at most
 * SLICES_MAX frames; the path is built on a frame of its own.
 */
enum { JOB_NONE = 0, JOB_MAIN, JOB_FORGET, JOB_WIDE, JOB_BACK, JOB_EDGE, JOB_FINISH };

static search_ctx job_ctx(const lc_guide *g, const lc_memory *m)
{
    search_ctx c = {m, g->job_R, g->job_start, 1.5 * g->cfg.cell, 0.5 * g->mem_cell, {false}};
    if (g->job == JOB_BACK) { /* from the waypoint, which needs no sight */
        c.start = g->job_goal;
        return c;
    }
    memcpy(c.blind, g->job_blind, sizeof c.blind);
    if (g->job == JOB_WIDE) /* the robot may stand where its cells read
                             * closed (a gap it is in, range noise on the
                             * cells beside it) */
        c.escape = fmax(c.escape, c.R + g->cfg.cell);
    return c;
}

/* The next run after `job` ended with `end`; 0 when the search is over. */
static int job_next(lc_guide *g, int end)
{
    switch (g->job) {
    case JOB_MAIN:
        if (end >= 0)
            return 0;
        if (g->n_refused > 0) {
            /* the refused spots closed every way: they were the only
             * ones, so forget them and take the way the robot could not
             * follow rather than give up on the waypoint */
            g->n_refused = g->next_refused = 0;
            return JOB_FORGET;
        }
        return JOB_WIDE;
    case JOB_FORGET:
        return end >= 0 ? 0 : JOB_WIDE;
    case JOB_WIDE:
        /* the waypoint in the window and no way to it within: the way may
         * leave the window and come back (a corridor the window's edge
         * cuts off). When the waypoint's side of what is known reaches the
         * edge too (a search from it finds the border; a waypoint enclosed
         * in the window does not), the robot heads out through its own
         * side's edge toward it */
        return end < 0 && cell_of(g, g->job_goal) >= 0 ? JOB_BACK : 0;
    case JOB_BACK:
        return end >= 0 ? JOB_EDGE : 0;
    default:
        return 0;
    }
}

/*
 * A way found to a waypoint inside the window may cost more than a way
 * round the window's edge would: a corridor the edge cuts off, the
 * waypoint just inside the edge beyond it, while the way found within
 * crosses unknown space the robot cannot look into. The runs from the
 * waypoint to the edge and the robot's to it (JOB_BACK, JOB_EDGE) cost up
 * to two searches more; they are run when the way found costs more than
 * unknown_cost times the least any way round could (the straight line to
 * a border cell and unknown_cost times the straight line on to the
 * waypoint): a way within that dear crosses space the robot cannot see
 * (such a way cost 140-190 where the least way round was 12), while one
 * through clutter to a waypoint near the edge costs a few times the
 * straight line (the bench's hall, 200 searches: at the bare least way
 * round a search's mean cost was 0.76 ms, its p99 3.8 ms; with the factor,
 * 0.27 and 0.81 ms, as without the way round).
 */
static bool edge_may_pay(const lc_guide *g, double cost)
{
    if (cell_of(g, g->job_goal) < 0)
        return false; /* outside the window: the edge is the way already */
    double least = INFINITY;
    for (int i = 0; i < g->n; i++)
        for (int side = 0; side < 4; side++) {
            int u = side < 2 ? i : (side == 2 ? 0 : g->n - 1);
            int v = side < 2 ? (side == 0 ? 0 : g->n - 1) : i;
            lc_vec2 b = centre_of(g, v * g->n + u);
            least = fmin(least, lc_dist(g->job_start, b) +
                                    g->cfg.unknown_cost * lc_dist(b, g->job_goal));
        }
    return cost > g->cfg.unknown_cost * least;
}

/* The goal point of a way that ends at cell `end` (or the outside node):
 * the waypoint when that is within reach. */
static lc_vec2 way_goal(const lc_guide *g, int end, bool round_edge)
{
    lc_vec2 goal_pt = round_edge            ? centre_of(g, g->parent[end])
                      : end == g->n * g->n ? g->job_goal
                                           : centre_of(g, end);
    return lc_dist(goal_pt, g->job_goal) <= g->job_reach ? g->job_goal : goal_pt;
}

#define SLICES_MAX 20 /* a main run still going after this many slices runs whole */

/* Runs the search on, at most `budget` cells (0: no limit). true when it
 * is over: *end the goal's index or -1, *round_edge whether the way goes
 * round the window's edge. */
static bool job_run(lc_guide *g, const lc_memory *m, int budget, int *end, bool *round_edge)
{
    int used = 0;
    if (g->job == JOB_FINISH) {
        *end = g->job_end;
        *round_edge = g->job_round_edge;
        g->job = JOB_NONE;
        return true;
    }
    for (;;) {
        search_ctx c = job_ctx(g, m);
        bool back = g->job == JOB_BACK, edge = back || g->job == JOB_EDGE;
        lc_vec2 goal = back ? g->job_start : g->job_goal;
        double reach = back ? 0.0 : g->job_reach;
        /* sliced: the main run, up to SLICES_MAX slices; the runs after
         * it (no way found: rare, and the verdict should not wait) and a
         * main run that long go whole */
        bool sliced = budget > 0 && g->job == JOB_MAIN && g->job_expanded < SLICES_MAX * budget;
        if (sliced && used >= budget)
            return false;
        int r = -1, more = 0;
        if (!g->job_fresh || astar_begin(g, &c, goal, reach, edge) == 0) {
            g->job_fresh = false;
            r = astar_run(g, &c, goal, reach, edge, sliced ? budget - used : 0, &more);
        }
        g->job_fresh = false;
        used += more;
        g->job_expanded += more;
        if (r == ASTAR_PAUSED)
            return false;
        int next = job_next(g, r);
        if (next == 0 && r >= 0 && !edge && !g->job_has_alt && edge_may_pay(g, g->g[r])) {
            /* keep this way (built now: the runs after it reuse the
             * search's cells) and look round the edge */
            build_path(g, &c, r, way_goal(g, r, false), g->g[r]);
            g->alt = g->cand;
            g->job_has_alt = true;
            g->job_alt_end = r;
            g->job_alt_cost = g->g[r];
            next = JOB_BACK;
        }
        if (next == 0 && g->job_has_alt &&
            !(g->job == JOB_EDGE && r >= 0 && g->g[r] < g->job_alt_cost)) {
            g->job_use_alt = true; /* no way round, or none cheaper */
            r = g->job_alt_end;
        }
        if (next == 0) {
            *end = r;
            *round_edge = g->job == JOB_EDGE && r >= 0 && !g->job_use_alt;
            if (budget > 0 && used > 0) {
                /* sliced: the path is built on the next frame, which
                 * does that alone (it costs about as much as a slice) */
                g->job = JOB_FINISH;
                g->job_end = r;
                g->job_round_edge = *round_edge;
                return false;
            }
            g->job = JOB_NONE;
            return true;
        }
        g->job = next;
        g->job_fresh = true;
    }
}

int lc_guide_update(lc_guide *g, const lc_memory *m, lc_vec2 robot, lc_vec2 waypoint,
                    double clearance, double tolerance, const lc_guide_path **out,
                    lc_guide_info *info)
{
    lc_guide_info local;
    if (!info)
        info = &local;
    memset(info, 0, sizeof *info);
    *out = &g->path;
    g->frame++;
    if (!lc_vec2_finite(waypoint) || !lc_vec2_finite(robot)) {
        /* no way to or from nowhere; the next finite waypoint is a new goal */
        g->path = (lc_guide_path){.status = LC_GUIDE_NO_PATH, .goal = waypoint,
                                  .found_at = g->frame};
        g->has_goal = false;
        g->doubt = false;
        g->job = JOB_NONE;
        return 0;
    }
    search_ctx c = {m, clearance, robot, 1.5 * g->cfg.cell, 0.5 * g->mem_cell, {false}};
    for (int d = 0; d < 8 && g->sight.n > 0; d++) /* everywhere: none blind */
        c.blind[d] = !can_look(g, atan2((double)dv[d], (double)du[d]));
    bool new_goal = !g->has_goal || lc_dist(waypoint, g->goal) > 1e-9;
    if (new_goal) {
        g->n_refused = g->next_refused = 0;
        g->job = JOB_NONE; /* a search for the old goal is dropped */
    }
    long since = g->frame - g->last_search;
    bool due = since >= g->cfg.every && (lc_dist(robot, g->searched_at) >= g->cfg.travel ||
                                         since >= 10L * g->cfg.every || g->doubt);
    int ahead = AHEAD_OPEN;
    if (g->path.status == LC_GUIDE_PATH && !new_goal) {
        lc_follow_nearest(&g->path, robot, &g->path.seg);
        ahead = blocked_ahead(g, &c, robot);
        info->blocked_ahead = ahead != AHEAD_OPEN;
    }
    bool doubting = g->doubt && since < g->cfg.every; /* waiting to search again */
    if (g->job == JOB_NONE &&
        (new_goal || due || g->search_now || g->path.status != LC_GUIDE_PATH ||
         (ahead == AHEAD_CLOSED && !doubting) ||
         (ahead == AHEAD_REFUSED && since >= g->cfg.every))) {
        /* only a periodic search along a path still open ahead is
         * sliced: the first for a waypoint (till it ends the robot would
         * head straight for it), one after a stall, for a path found
         * closed ahead or with no path run whole */
        g->job_sliced = !new_goal && !g->search_now && !g->doubt &&
                        g->path.status == LC_GUIDE_PATH && ahead == AHEAD_OPEN;
        g->search_now = false;
        place_grid(g, m);
        lc_guide_bucket_obstacles(g, m);
        g->job = JOB_MAIN;
        g->job_fresh = true;
        g->job_new_goal = new_goal;
        g->job_start = robot;
        g->job_goal = waypoint;
        g->job_R = clearance;
        /* at least half a cell's diagonal: every point has a cell centre
         * that near */
        g->job_reach = fmax(tolerance, 0.5 * sqrt(2.0) * g->cfg.cell + 1e-9);
        memcpy(g->job_blind, c.blind, sizeof c.blind);
        g->job_expanded = 0;
        g->job_has_alt = g->job_use_alt = false;
        g->has_goal = true;
        g->goal = waypoint;
    }
    if (g->job != JOB_NONE) {
        int end = -1, before = g->job_expanded;
        int budget = g->job_sliced ? g->cfg.slice : 0;
        bool round_edge = false, over = job_run(g, m, budget, &end, &round_edge);
        info->expanded = g->job_expanded - before;
        if (g->bucket_failed) {
            g->job = JOB_NONE;
            return -1; /* out of memory: obstacles were missed */
        }
        info->searching = !over;
        if (!over) {
            info->searches = g->searches;
            return 0;
        }
        new_goal = g->job_new_goal;
        c.start = g->job_start;
        info->searched = true;
        g->searches++;
        g->last_search = g->frame;
        g->searched_at = g->job_start;
        if (end < 0 && !new_goal && g->path.status == LC_GUIDE_PATH && !g->doubt) {
            /* no way now, where there was one: said only when the next
             * search (`every` frames on) agrees; the old path meanwhile */
            g->doubt = true;
        } else if (end < 0) {
            g->doubt = false;
            g->cand.status = LC_GUIDE_NO_PATH;
            g->cand.n = 0;
            g->cand.goal = waypoint;
            g->cand.found_at = g->frame;
            g->cand.seg = 0;
            g->path = g->cand;
        } else {
            g->doubt = false;
            if (g->job_use_alt) {
                g->cand = g->alt; /* built when it was found */
            } else {
                /* round the edge: the way ends where it leaves the window
                 * (on to the waypoint is unknown, not a straight line) */
                build_path(g, &c, end, way_goal(g, end, round_edge), g->g[end]);
                if (round_edge)
                    g->cand.goal = waypoint; /* beyond the way's end, unknown */
            }
            /* a way round the window's edge toward a goal now inside it
             * (the window moved on) ends where nothing is: the new
             * search's way replaces it */
            const lc_guide_path *was = &g->path;
            bool stale = was->projected && was->n > 0 && cell_of(g, was->goal) >= 0 &&
                         lc_dist(was->v[was->n - 1], was->goal) > 1e-9;
            /* both ways priced the same way, along their polylines as the
             * memory is now (the search's own cost counts grid steps) */
            double old = !new_goal && g->path.status == LC_GUIDE_PATH && !info->blocked_ahead &&
                                 !stale
                             ? cost_now(g, &c, &g->path, robot, g->path.seg)
                             : INFINITY;
            double now = isfinite(old) ? cost_now(g, &c, &g->cand, robot, 0) : 0.0;
            if (g->bucket_failed)
                return -1;
            if (!(now >= old * (1.0 - g->cfg.hysteresis))) {
                g->path = g->cand;
                info->replaced = true;
            }
        }
    }
    info->searches = g->searches;
    *out = &g->path;
    return 0;
}
