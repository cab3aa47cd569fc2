/*
 * session_space.c - the frame's obstacles into the robot's configuration
 * space: convex hulls of the segmented pieces, each grown by the disc's
 * clearance (grow.h) or summed with a polygon footprint at the frame's
 * heading (footprint.h), the frontier of unknown space grown a memory
 * cell's reach more. Part of the per-frame step (session.c).
 */
#include "session_int.h"

#include <math.h>
#include <string.h>

#include "footprint.h"

/* The hull of every piece of seg (over cloud) appended to out, each with
 * src = src0 + its piece index; 0 or -1. */
int lc_session_hull_pieces(lc_session *s, const lc_cloud *cloud, const lc_segment_ws *seg,
                           lc_polyset *out, int src0)
{
    for (int k = 0; k < seg->n_pieces; k++) {
        int start = seg->piece_start[k], n = seg->piece_count[k];
        if (LC_GROW(&s->alloc, s->gather, s->cap_gather, n) < 0 ||
            lc_polyset_reserve(out, n) < 0)
            return -1;
        for (int i = 0; i < n; i++)
            s->gather[i] = cloud->world[seg->order[start + i]];
        int m = lc_hull_compute(s->hull, s->gather, n, out->v + out->nv);
        if (m == -1)
            return -1;
        if (m <= 0)
            continue; /* finite input by construction: no other failure is expected */
        if (lc_polyset_commit(out, m, src0 + k) < 0)
            return -1;
    }
    return 0;
}

/* Each polygon of set [from, set->np) grown by r, appended to s->grown
 * with src = src0 + its index in set (src0 < 0: src0 - index). */
static int grow_set(lc_session *s, const lc_polyset *set, int from, double r, int src0)
{
    for (int j = from; j < set->np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(set, j, &n);
        int cap = n + s->grow_rule.extra; /* lc_grow_max_vertices */
        if (lc_polyset_reserve(&s->grown, cap) < 0)
            return -1;
        int m = lc_grow_polygon_rule(v, n, r, &s->grow_rule, s->grown.v + s->grown.nv, cap);
        int src = src0 >= 0 ? src0 + j : src0 - j;
        if (m > 0 && lc_polyset_commit(&s->grown, m, src) < 0)
            return -1;
    }
    return 0;
}

/* Half a cell's diagonal: an unknown cell is a square, not its centre. */
static double cell_reach(const lc_session *s)
{
    return s->mem ? 0.5 * sqrt(2.0) * s->cfg.memory.cell : 0.0;
}

/*
 * The polygon footprint grown by r (>= 0) into s->body, conservatively as
 * grow.h grows obstacles, then turned to yaw and reflected through the
 * centre: what an obstacle is summed with to be configuration space at
 * that heading. Its vertex count, or -1 when out of memory.
 */
static int place_body(lc_session *s, double r, double yaw)
{
    const lc_robot *rb = &s->robot;
    int cap = rb->n_footprint + s->grow_rule.extra; /* lc_grow_max_vertices */
    if (LC_GROW(&s->alloc, s->body, s->cap_body, cap) < 0)
        return -1;
    int n = rb->n_footprint;
    if (r > 0)
        n = lc_grow_polygon_rule(rb->footprint, n, r, &s->grow_rule, s->body, cap);
    else
        memcpy(s->body, rb->footprint, sizeof *s->body * (size_t)n);
    if (n < 0)
        return -1; /* a valid footprint always grows */
    lc_footprint_place(s->body, n, yaw, true, s->body);
    return n;
}

/* Each polygon of set summed with the footprint grown by r at heading yaw
 * (lc_minkowski_sum), appended to s->grown as grow_set appends. A piece the
 * sum refuses (not visibly convex) is grown by the disc that holds the
 * footprint instead, which holds its sum too. */
static int sum_set(lc_session *s, const lc_polyset *set, double r, double yaw, int src0)
{
    int nb = place_body(s, r, yaw);
    if (nb < 0)
        return -1;
    for (int j = 0; j < set->np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(set, j, &n);
        int cap = lc_minkowski_max_vertices(n, nb), disc = n + s->grow_rule.extra;
        cap = cap > disc ? cap : disc;
        if (lc_polyset_reserve(&s->grown, cap) < 0)
            return -1;
        lc_vec2 *out = s->grown.v + s->grown.nv;
        int m = lc_minkowski_sum(v, n, s->body, nb, out, cap);
        if (m < 0)
            m = lc_grow_polygon_rule(v, n, s->robot.radius + r, &s->grow_rule, out, cap);
        int src = src0 >= 0 ? src0 + j : src0 - j;
        if (m > 0 && lc_polyset_commit(&s->grown, m, src) < 0)
            return -1;
    }
    return 0;
}

/*
 * The obstacles, seen now or remembered (where their returns fell), grown
 * by radius + margin; the frontier of the unknown (not obstacles: their
 * src is -1 - index) by half a cell's diagonal more: an unknown cell is a
 * square, not its centre. A polygon footprint: configuration space at the
 * frame's heading, each piece summed with the reflected footprint grown by
 * the margin (and the half diagonal) instead.
 */
int lc_session_grow_obstacles(lc_session *s, double yaw)
{
    lc_polyset_clear(&s->grown);
    if (lc_robot_has_footprint(&s->robot)) {
        double m = s->robot.margin;
        if (sum_set(s, &s->obstacles, m, yaw, 0) < 0 ||
            sum_set(s, &s->frontier, m + cell_reach(s), yaw, -1) < 0)
            return -1;
        return 0;
    }
    double r = lc_robot_clearance(&s->robot);
    if (grow_set(s, &s->obstacles, 0, r, 0) < 0 ||
        grow_set(s, &s->frontier, 0, r + cell_reach(s), -1) < 0)
        return -1;
    return 0;
}

