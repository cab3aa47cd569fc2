/*
 * codec_view.c - the two encoders that show a planning step rather than
 * carry a command (see codec.h): the view message the server broadcasts to
 * viewers, and the `lacuna plan` result.
 *
 * Both write the same step geometry (obstacles, grown obstacles, region,
 * ellipse, target, goal, kept points, clearance). A plan result is exact;
 * a view rounds its geometry to LC_WIRE_VIEW_DECIMALS to stay small, and
 * writes null for what it does not have yet (no frame, no route, nothing
 * sent).
 *
 * A view also says what the viewer explains in words: whether the robot's
 * link is up, why it is blocked, guidance's way ahead (and whether it is a
 * detour) and, when asked, the occupied cells it remembers near it, as runs
 * along rows of the memory's lattice (a wall along a row is one run; a
 * bounded count of them keeps the message small).
 */
#include "codec_encode.h"
#include "json_write.h"

#include <math.h>

#include "follow.h"
#include "patrol.h"

/* The kept points, flat [x0, y0, x1, y1, ...]. */
static void w_cloud(lc_wire_text *t, const lc_cloud *c, int decimals)
{
    lc_jw_open(t, '[');
    for (int i = 0; c && i < c->n; i++) {
        lc_jw_num(t, c->world[i].x, decimals);
        lc_jw_num(t, c->world[i].y, decimals);
    }
    lc_jw_close(t, ']');
}

static void w_region(lc_wire_text *t, const lc_region *r, int decimals)
{
    lc_jw_open(t, '{');
    lc_jw_key(t, "halfspaces");
    lc_jw_open(t, '[');
    for (int i = 0; i < r->nh; i++) {
        double h[3] = {r->h[i].a.x, r->h[i].a.y, r->h[i].b};
        lc_jw_doubles(t, h, 3, decimals);
    }
    lc_jw_close(t, ']');
    lc_jw_key(t, "vertices");
    lc_jw_vec2_list(t, r->v, r->nv, decimals);
    lc_jw_close(t, '}');
}

/* E = {L u + d : |u| <= 1}; L is symmetric. */
static void w_ellipse(lc_wire_text *t, const lc_ellipse *e, int decimals)
{
    double row0[2] = {e->l11, e->l12}, row1[2] = {e->l12, e->l22};
    lc_jw_open(t, '{');
    lc_jw_key(t, "center");
    lc_jw_vec2(t, e->d, decimals);
    lc_jw_key(t, "matrix");
    lc_jw_open(t, '[');
    lc_jw_doubles(t, row0, 2, decimals);
    lc_jw_doubles(t, row1, 2, decimals);
    lc_jw_close(t, ']');
    lc_jw_close(t, '}');
}

static void kv_region_ellipse(lc_wire_text *t, const lc_region *r, int decimals)
{
    lc_jw_key(t, "region");
    if (r)
        w_region(t, r, decimals);
    else
        lc_jw_null(t);
    lc_jw_key(t, "ellipse");
    if (r)
        w_ellipse(t, &r->ellipse, decimals);
    else
        lc_jw_null(t);
}

static void kv_point_or_null(lc_wire_text *t, const char *k, bool has, lc_vec2 p, int decimals)
{
    lc_jw_key(t, k);
    if (has)
        lc_jw_vec2(t, p, decimals);
    else
        lc_jw_null(t);
}

static void w_events(lc_wire_text *t, const lc_event *ev, int n)
{
    lc_jw_open(t, '[');
    for (int i = 0; i < n && i < LC_PATROL_MAX_EVENTS; i++) {
        lc_jw_open(t, '{');
        lc_wire_kv_event(t, &ev[i]);
        lc_jw_close(t, '}');
    }
    lc_jw_close(t, ']');
}

static void w_timing(lc_wire_text *t, const lc_plan_result *r)
{
    lc_jw_open(t, '{');
    lc_jw_kv_num(t, "total", r->total_us, LC_WIRE_TIMING_DECIMALS);
    for (int s = 0; s < LC_STAGE_COUNT; s++) {
        const char *name = lc_stage_name((lc_stage)s);
        if (name)
            lc_jw_kv_num(t, name, r->stage_us[s], LC_WIRE_TIMING_DECIMALS);
    }
    lc_jw_close(t, '}');
}

/* What plan results and views share: the geometry of one step. */
static void w_step_geometry(lc_wire_text *t, const lc_plan_result *r, int decimals)
{
    lc_jw_key(t, "obstacles");
    lc_jw_polyset(t, r->obstacles, decimals);
    lc_jw_key(t, "grown");
    lc_jw_polyset(t, r->grown, decimals);
    kv_region_ellipse(t, r->region, decimals);
    kv_point_or_null(t, "target", r->has_target, r->target, decimals);
    kv_point_or_null(t, "goal", r->has_waypoint, r->waypoint, decimals);
    lc_jw_key(t, "points");
    w_cloud(t, r->cloud, decimals);
    lc_jw_kv_num(t, "clearance", r->clearance, decimals);
}

int lc_wire_encode_plan_result(lc_wire_text *t, const lc_plan_result *r, lc_model model)
{
    lc_jw_begin(t);
    w_step_geometry(t, r, -1);
    lc_jw_key(t, "setpoint");
    lc_wire_put_setpoint(t, &r->setpoint, model);
    lc_wire_kv_state(t, r->state);
    lc_wire_kv_limit(t, r->setpoint.limit);
    lc_jw_kv_index(t, "waypoint", r->has_waypoint ? r->waypoint_index : -1);
    lc_jw_key(t, "events");
    w_events(t, r->events, r->n_events);
    lc_jw_kv_int(t, "ellipse_iterations", r->ellipse_iterations);
    lc_jw_key(t, "timing_us");
    w_timing(t, r);
    return lc_jw_end(t);
}

static void w_view_route(lc_wire_text *t, const lc_route *route, int current)
{
    if (!route) {
        lc_jw_null(t);
        return;
    }
    lc_jw_open(t, '{');
    lc_wire_route_common(t, route, LC_WIRE_VIEW_DECIMALS);
    lc_jw_kv_index(t, "current", current);
    lc_jw_close(t, '}');
}

/* State, limit, setpoint and waypoint: what was sent, else what was planned. */
static void w_view_status(lc_wire_text *t, const lc_wire_view *m, lc_model model)
{
    const lc_wire_setpoint *sp = m->setpoint;
    const lc_plan_result *r = m->result;
    if (sp) {
        lc_wire_kv_state(t, sp->state);
        lc_wire_kv_limit(t, sp->sp.limit);
        lc_jw_key(t, "setpoint");
        lc_wire_put_setpoint(t, &sp->sp, model);
        lc_jw_kv_index(t, "waypoint", sp->waypoint);
    } else if (r) {
        lc_wire_kv_state(t, r->state);
        lc_wire_kv_limit(t, r->setpoint.limit);
        lc_jw_key(t, "setpoint");
        lc_wire_put_setpoint(t, &r->setpoint, model);
        lc_jw_kv_index(t, "waypoint", r->has_waypoint ? r->waypoint_index : -1);
    } else {
        lc_wire_kv_state(t, LC_STATE_IDLE);
        lc_wire_kv_limit(t, LC_LIMIT_IDLE);
        lc_jw_key(t, "setpoint");
        lc_jw_null(t);
        lc_jw_kv_index(t, "waypoint", -1);
    }
}

static void w_view_geometry_null(lc_wire_text *t)
{
    static const char *const keys[] = {"obstacles", "grown", "region", "ellipse", "target",
                                       "goal", "points", "clearance"};
    for (size_t i = 0; i < sizeof keys / sizeof keys[0]; i++) {
        lc_jw_key(t, keys[i]);
        lc_jw_null(t);
    }
}

/*
 * Guidance's way from the robot on, and how long it is against the
 * straight line to its goal: longer by more than the patrol's detour
 * length (LC_PATROL_DETOUR), it goes round something (the way ahead is
 * closed, or not known). No path: status no_path and an empty way.
 */
static void w_view_guide(lc_wire_text *t, const lc_guide_path *p, lc_pose pose, int dec)
{
    if (!p || p->status == LC_GUIDE_NONE || (p->status == LC_GUIDE_PATH && p->n < 1)) {
        lc_jw_null(t);
        return;
    }
    lc_vec2 c = lc_v2(pose.x, pose.y);
    bool found = p->status == LC_GUIDE_PATH;
    double to_go = NAN, straight = lc_dist(c, p->goal);
    lc_jw_open(t, '{');
    lc_jw_kv_str(t, "status", found ? "path" : "no_path");
    lc_jw_key(t, "path");
    lc_jw_open(t, '[');
    if (found) {
        lc_guide_ahead(p, c, 0.0, &to_go);
        lc_jw_vec2(t, c, dec);
        for (int i = p->seg + 1; i < p->n; i++)
            lc_jw_vec2(t, p->v[i], dec);
    }
    lc_jw_close(t, ']');
    lc_jw_kv_num(t, "to_go", to_go, dec);
    lc_jw_kv_num(t, "straight", straight, dec);
    lc_jw_kv_bool(t, "detour", found && to_go > straight + LC_PATROL_DETOUR);
    lc_jw_close(t, '}');
}

/* The runs of occupied cells along row j, columns [i0, i1), as [dj, di, n]
 * from the origin (i0, j0); returns how many runs it wrote. */
static int w_memory_row(lc_wire_text *t, const lc_memory *m, long i0, long i1, long j0, long j,
                        int room)
{
    int runs = 0;
    for (long i = i0; i < i1 && runs < room; i++) {
        if (lc_memory_cell(m, i, j) != LC_CELL_OCCUPIED)
            continue;
        long k = i + 1;
        while (k < i1 && lc_memory_cell(m, k, j) == LC_CELL_OCCUPIED)
            k++;
        lc_jw_int(t, j - j0);
        lc_jw_int(t, i - i0);
        lc_jw_int(t, k - i);
        runs++;
        i = k;
    }
    return runs;
}

/*
 * The occupied cells within LC_WIRE_VIEW_MEMORY_REACH of the robot: cell
 * side, the origin's lattice index (cell (i, j) covers [i c, (i+1) c) x
 * [j c, (j+1) c)), runs [dj, di, n, ...] taken row by row outward from the
 * robot's row, and whether they all fit (LC_WIRE_VIEW_MEMORY_RUNS).
 */
static void w_view_memory(lc_wire_text *t, const lc_memory *m, lc_pose pose)
{
    lc_memory_window w = lc_memory_get_window(m);
    long ic, jc;
    lc_memory_cell_of(m, lc_v2(pose.x, pose.y), &ic, &jc);
    long reach = (long)ceil(LC_WIRE_VIEW_MEMORY_REACH / w.cell);
    long i0 = ic - reach, i1 = ic + reach + 1, j0 = jc - reach;
    lc_jw_open(t, '{');
    lc_jw_kv_num(t, "cell", w.cell, -1);
    lc_jw_key(t, "origin");
    lc_jw_open(t, '[');
    lc_jw_int(t, i0);
    lc_jw_int(t, j0);
    lc_jw_close(t, ']');
    lc_jw_key(t, "runs");
    lc_jw_open(t, '[');
    int runs = 0;
    bool complete = true;
    for (long d = 0; d <= reach && complete; d++) {
        for (int side = 0; side < (d ? 2 : 1) && complete; side++) {
            int room = LC_WIRE_VIEW_MEMORY_RUNS - runs;
            runs += w_memory_row(t, m, i0, i1, j0, side ? jc - d : jc + d, room);
            complete = runs < LC_WIRE_VIEW_MEMORY_RUNS;
        }
    }
    lc_jw_close(t, ']');
    lc_jw_kv_bool(t, "complete", complete);
    lc_jw_close(t, '}');
}

/* What the panel explains: the link, why blocked, the way ahead, the memory. */
static void w_view_explain(lc_wire_text *t, const lc_wire_view *m)
{
    const lc_plan_result *r = m->result;
    lc_jw_kv_str(t, "link", m->link_down ? "down" : "up");
    lc_jw_key(t, "blocked");
    if (m->blocked > LC_BLOCK_NONE && m->blocked < LC_BLOCK_REASON_COUNT)
        lc_jw_str(t, lc_block_reason_name(m->blocked));
    else
        lc_jw_null(t);
    lc_jw_key(t, "guide");
    w_view_guide(t, r && r->has_waypoint ? r->path : NULL, m->pose, LC_WIRE_VIEW_DECIMALS);
    if (m->with_memory && r && r->memory) {
        lc_jw_key(t, "memory");
        w_view_memory(t, r->memory, m->pose);
    }
}

int lc_wire_encode_view(lc_wire_text *t, const lc_wire_view *m)
{
    const int dec = LC_WIRE_VIEW_DECIMALS;
    lc_model model = m->desc ? m->desc->model : LC_MODEL_POINT;
    lc_jw_begin(t);
    lc_jw_kv_str(t, "type", "view");
    lc_jw_kv_str(t, "robot", m->robot ? m->robot : "");
    lc_jw_key(t, "seq");
    if (m->seq >= 0)
        lc_jw_int(t, m->seq);
    else
        lc_jw_null(t);
    lc_jw_kv_num(t, "stamp", m->result ? m->stamp : NAN, -1);
    lc_wire_kv_model(t, model);
    lc_jw_kv_num(t, "radius", m->desc ? m->desc->radius : NAN, dec);
    if (m->desc && m->desc->n_footprint > 0) { /* the polygon drawn instead of the disc */
        lc_jw_key(t, "footprint");
        lc_jw_vec2_list(t, m->desc->footprint, m->desc->n_footprint, dec);
    }
    lc_jw_kv_num(t, "margin", m->desc ? m->desc->margin : NAN, dec);
    /* the limits the panel's "why this speed" names */
    lc_jw_kv_num(t, "v_max", m->desc ? m->desc->v_max : NAN, dec);
    lc_jw_kv_num(t, "a_max", m->desc ? m->desc->a_max : NAN, dec);
    lc_jw_kv_num(t, "w_max", m->desc ? m->desc->w_max : NAN, dec);
    lc_jw_kv_num(t, "dw_max", m->desc ? m->desc->dw_max : NAN, dec);
    lc_jw_kv_num(t, "plan_us", m->plan_us > 0 ? m->plan_us : NAN, 1);
    lc_jw_kv_num(t, "plan_max_us", m->plan_max_us > 0 ? m->plan_max_us : NAN, 1);
    lc_jw_key(t, "pose");
    if (m->result)
        lc_jw_pose(t, m->pose, dec);
    else
        lc_jw_null(t);
    w_view_status(t, m, model);
    lc_jw_key(t, "route");
    int current = -1;
    if (m->setpoint)
        current = m->setpoint->waypoint;
    else if (m->result && m->result->has_waypoint)
        current = m->result->waypoint_index;
    w_view_route(t, m->route, current);
    if (m->result)
        w_step_geometry(t, m->result, dec);
    else
        w_view_geometry_null(t);
    w_view_explain(t, m);
    return lc_jw_end(t);
}
