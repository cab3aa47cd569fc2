/*
 * recall.c - what the memory adds to one frame's plan (see recall.h).
 */
#include "recall.h"

#include <string.h>

void lc_recall_init(lc_recall *r, const lc_alloc *alloc)
{
    memset(r, 0, sizeof *r);
    lc_cloud_init(&r->occupied, alloc);
    lc_cloud_init(&r->frontier, alloc);
}

void lc_recall_free(lc_recall *r)
{
    lc_cloud_free(&r->occupied);
    lc_cloud_free(&r->frontier);
}

static int reset(lc_cloud *c, int n, lc_vec2 origin)
{
    const lc_alloc *alloc = c->alloc;
    c->dropped_invalid = c->dropped_range = c->dropped_self = c->dropped_height = 0;
    c->n = 0;
    c->ordered = true;
    c->angle_step = LC_RECALL_RAY_STEP;
    c->sensor_world = origin;
    c->fov = 2.0 * LC_PI;
    c->fov_mid = 0.0;
    int cw = c->cap, cr = c->cap, cb = c->cap;
    if (LC_GROW(alloc, c->world, cw, n) < 0 || LC_GROW(alloc, c->range, cr, n) < 0 ||
        LC_GROW(alloc, c->bearing, cb, n) < 0)
        return -1;
    c->cap = cw < cr ? (cw < cb ? cw : cb) : (cr < cb ? cr : cb);
    return 0;
}

static void push(lc_cloud *c, lc_vec2 p, double range, double bearing)
{
    c->world[c->n] = p;
    c->range[c->n] = range;
    c->bearing[c->n] = bearing;
    c->n++;
}

/*
 * The memory marks free the space in front of a return only up to 1.5
 * cells short of it (memory.h), so the cell just in front of a remembered
 * obstacle can read unknown: an unknown cell at d with an occupied one
 * within FRONT_CELLS cells behind it on the ray is that obstacle's front,
 * and the obstacle is what the ray meets.
 */
#define FRONT_CELLS 2.0

static void behind_front(const lc_recall_input *in, lc_vec2 dir, double d, lc_cell_state *st,
                         lc_vec2 *cell)
{
    double c = lc_memory_get_window(in->mem).cell, end = fmin(d + FRONT_CELLS * c, in->reach);
    /* march again, the cells entered by t counted free (the unknown ones
     * just met), until an occupied cell, a free one, or FRONT_CELLS on */
    for (double t = d; t < end;) {
        lc_cell_state st2;
        lc_vec2 at;
        double t2 = lc_memory_march(in->mem, in->centre, dir, end, t + 1e-9, &st2, &at);
        if (st2 == LC_CELL_OCCUPIED) {
            *st = st2;
            *cell = at;
            return;
        }
        if (st2 != LC_CELL_UNKNOWN || !(t2 > t))
            return;
        t = t2;
    }
}

int lc_recall_collect(const lc_recall_input *in, lc_recall *out)
{
    out->fov = in->fov;
    out->view_mid = in->view_mid;
    out->rays = out->rays_known = 0;
    double blind = 2.0 * LC_PI - in->fov, a0 = in->view_mid + 0.5 * in->fov;
    int rays = blind > 1e-9 ? (int)ceil(blind / LC_RECALL_RAY_STEP) + 1 : 0;
    if (reset(&out->occupied, rays + 1, in->centre) < 0 ||
        reset(&out->frontier, rays + 1, in->centre) < 0)
        return -1;
    if (!in->mem || rays == 0)
        return 0;
    double step = blind / (rays - 1);
    int first = -1, last = -1;
    for (int k = 0; k < rays; k++) {
        double a = a0 + step * k;
        lc_cell_state st;
        lc_vec2 cell;
        lc_vec2 dir = lc_unit_angle(a);
        double d = lc_memory_march(in->mem, in->centre, dir, in->reach, in->body, &st, &cell);
        if (st == LC_CELL_UNKNOWN && d < in->reach)
            behind_front(in, dir, d, &st, &cell);
        /* a ray known free only to reach, short of near, says nothing of
         * the space within near */
        bool short_ray = st == LC_CELL_FREE && in->reach < in->near;
        if ((st == LC_CELL_UNKNOWN && d < in->near) || short_ray) {
            first = first < 0 ? k : first;
            last = k;
            continue;
        }
        out->rays_known++;
        if (st == LC_CELL_OCCUPIED)
            push(&out->occupied, cell, lc_dist(cell, in->centre), a);
        else if (st == LC_CELL_UNKNOWN)
            push(&out->frontier, cell, lc_dist(cell, in->centre), a);
    }
    out->rays = rays;
    if (first < 0) {
        out->fov = 2.0 * LC_PI;
        return 0;
    }
    /* the cone that stays: rays first..last and the step beyond each (the
     * directions between a known ray and an unknown one are not known) */
    double lo = lc_max(a0 + step * (first - 1), a0), hi = lc_min(a0 + step * (last + 1), a0 + blind);
    out->fov = 2.0 * LC_PI - (hi - lo);
    out->view_mid = lc_wrap_angle(0.5 * (lo + hi) + LC_PI);
    return 0;
}
