/*
 * session.c - the per-frame step (see session.h): ingest, segment, hull,
 * grow, region, target, patrol, setpoint. One function for every caller.
 *
 * Ownership: the session owns every buffer (grown through its lc_alloc) and
 * the qhull context; a result's pointers point into them and stay valid
 * until the next step or lc_session_free.
 */
#include "session.h"

#include <stdlib.h>
#include <string.h>

#include "grow.h"
#include "hull.h"

struct lc_session {
    lc_alloc alloc;
    lc_robot robot;
    lc_plan_config cfg;
    lc_route route;
    lc_patrol patrol;
    lc_setpoint last;
    lc_clock clock;
    lc_hull_ctx *hull;
    lc_grow_rule grow_rule; /* cfg.grow_step's rotations, computed once */
    lc_cloud cloud;
    lc_segment_ws seg;
    lc_polyset obstacles, grown;
    lc_vec2 *gather;
    int cap_gather;
    lc_region region;
    lc_region_ws rws;
    lc_halfspace *motion_h; /* the region as the motion law sees it (drive) */
    int cap_motion_h;
};

static const char *const stage_names[LC_STAGE_COUNT] = {
    "ingest", "segment", "hull", "grow", "region", "ellipse", "target", "setpoint",
};

const char *lc_stage_name(lc_stage stage)
{
    return stage >= 0 && stage < LC_STAGE_COUNT ? stage_names[stage] : "unknown";
}

void lc_plan_config_default(lc_plan_config *cfg)
{
    memset(cfg, 0, sizeof *cfg);
    lc_ingest_config_default(&cfg->ingest);
    lc_segment_config_default(&cfg->segment);
    cfg->hull_small_max = -1; /* the hull module's own measured default */
    cfg->grow_step = LC_GROW_DEFAULT_STEP;
    lc_region_config_default(&cfg->region);
    lc_ellipse_opts_default(&cfg->ellipse);
    lc_motion_params_default(&cfg->motion);
    cfg->standoff = 0.04;
}

lc_session *lc_session_new(const lc_robot *robot, const lc_plan_config *cfg,
                           const lc_alloc *alloc)
{
    if (!alloc)
        alloc = lc_alloc_default();
    lc_session *s = alloc->realloc(alloc->data, NULL, sizeof *s);
    if (!s)
        return NULL;
    memset(s, 0, sizeof *s);
    s->alloc = *alloc;
    lc_cloud_init(&s->cloud, &s->alloc);
    lc_segment_ws_init(&s->seg, &s->alloc);
    lc_polyset_init(&s->obstacles, &s->alloc);
    lc_polyset_init(&s->grown, &s->alloc);
    lc_region_init(&s->region, &s->alloc);
    lc_region_ws_init(&s->rws, &s->alloc);
    if (robot)
        s->robot = *robot;
    else
        lc_robot_default(&s->robot);
    if (cfg)
        s->cfg = *cfg;
    else
        lc_plan_config_default(&s->cfg);
    lc_route_default(&s->route);
    lc_patrol_reset(&s->patrol);
    s->hull = lc_hull_new(&s->alloc);
    if (!s->hull) {
        alloc->realloc(alloc->data, s, 0);
        return NULL;
    }
    if (!(s->cfg.grow_step > 0 && s->cfg.grow_step <= 0.5 * LC_PI) ||
        lc_grow_rule_init(&s->grow_rule, s->cfg.grow_step) < 0) {
        s->cfg.grow_step = LC_GROW_DEFAULT_STEP;
        lc_grow_rule_init(&s->grow_rule, s->cfg.grow_step);
    }
    if (s->cfg.hull_small_max >= 0)
        lc_hull_set_small_max(s->hull, s->cfg.hull_small_max);
    return s;
}

void lc_session_free(lc_session *s)
{
    if (!s)
        return;
    const lc_alloc *a = &s->alloc;
    lc_hull_free(s->hull);
    lc_cloud_free(&s->cloud);
    lc_segment_ws_free(&s->seg);
    lc_polyset_free(&s->obstacles);
    lc_polyset_free(&s->grown);
    LC_RELEASE(a, s->gather, s->cap_gather);
    LC_RELEASE(a, s->motion_h, s->cap_motion_h);
    lc_region_free(&s->region);
    lc_region_ws_free(&s->rws);
    lc_alloc keep = s->alloc;
    keep.realloc(keep.data, s, 0);
}

void lc_session_set_robot(lc_session *s, const lc_robot *robot) { s->robot = *robot; }
const lc_robot *lc_session_robot(const lc_session *s) { return &s->robot; }
const lc_route *lc_session_route(const lc_session *s) { return &s->route; }
const lc_plan_config *lc_session_config(const lc_session *s) { return &s->cfg; }

void lc_session_set_route(lc_session *s, const lc_route *route)
{
    s->route = *route;
    lc_patrol_reset(&s->patrol);
}

void lc_session_set_clock(lc_session *s, const lc_clock *clock)
{
    if (clock)
        s->clock = *clock;
    else
        memset(&s->clock, 0, sizeof s->clock);
}

void lc_session_set_velocity(lc_session *s, const lc_setpoint *last) { s->last = *last; }

void lc_session_set_goal(lc_session *s, lc_vec2 goal_world)
{
    double tol = s->route.tolerance;
    lc_route_default(&s->route);
    s->route.tolerance = tol > 0 ? tol : s->route.tolerance;
    s->route.waypoints[0] = goal_world;
    s->route.count = 1;
    lc_patrol_reset(&s->patrol);
}

/* Hull of every piece into s->obstacles; 0 or -1. */
static int hull_pieces(lc_session *s)
{
    lc_polyset_clear(&s->obstacles);
    for (int k = 0; k < s->seg.n_pieces; k++) {
        int start = s->seg.piece_start[k], n = s->seg.piece_count[k];
        if (LC_GROW(&s->alloc, s->gather, s->cap_gather, n) < 0 ||
            lc_polyset_reserve(&s->obstacles, n) < 0)
            return -1;
        for (int i = 0; i < n; i++)
            s->gather[i] = s->cloud.world[s->seg.order[start + i]];
        int m = lc_hull_compute(s->hull, s->gather, n, s->obstacles.v + s->obstacles.nv);
        if (m == -1)
            return -1;
        if (m <= 0)
            continue; /* finite input by construction: no other failure is expected */
        if (lc_polyset_commit(&s->obstacles, m, k) < 0)
            return -1;
    }
    return 0;
}

static int grow_obstacles(lc_session *s)
{
    double r = lc_robot_clearance(&s->robot);
    lc_polyset_clear(&s->grown);
    for (int j = 0; j < s->obstacles.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&s->obstacles, j, &n);
        int cap = n + s->grow_rule.extra; /* lc_grow_max_vertices */
        if (lc_polyset_reserve(&s->grown, cap) < 0)
            return -1;
        int m = lc_grow_polygon_rule(v, n, r, &s->grow_rule, s->grown.v + s->grown.nv, cap);
        if (m > 0 && lc_polyset_commit(&s->grown, m, j) < 0)
            return -1;
    }
    return 0;
}

static double window_half_side(const lc_session *s, const lc_frame *f)
{
    const lc_region_config *rc = &s->cfg.region;
    if (rc->window > 0)
        return rc->window;
    double range = f->kind == LC_FRAME_SCAN ? f->range_max : s->cfg.ingest.range_cap;
    return range > 0 && range < rc->window_max ? range : rc->window_max;
}

static double nearest_clearance(const lc_session *s, lc_vec2 c)
{
    double best2 = INFINITY; /* sqrt is monotone: the root of the least square */
    for (int i = 0; i < s->cloud.n; i++)
        best2 = lc_min(best2, lc_len2(lc_sub(s->cloud.world[i], c)));
    return sqrt(best2) - s->robot.radius;
}

static int plan_region(lc_session *s, const lc_frame *f, bool has_wp, lc_vec2 wp,
                       lc_plan_result *out)
{
    lc_region_input in = {.grown = &s->grown,
                          .centre = lc_v2(f->pose.x, f->pose.y),
                          .has_waypoint = has_wp,
                          .waypoint = wp,
                          .window = window_half_side(s, f)};
    if (s->cfg.region.blind_line) {
        double fov = f->kind == LC_FRAME_POINTS && s->cfg.region.points_fov > 0
                         ? s->cfg.region.points_fov
                         : s->cloud.fov;
        double view_mid = f->pose.yaw + s->cloud.fov_mid;
        /* A robot that slides sideways must keep its whole footprint in
         * seen space, not only its centre: the view wedge. A unicycle
         * drives along its heading, inside the seen half plane. */
        int n = -1;
        if (s->robot.model == LC_MODEL_POINT) {
            lc_vec2 offset = lc_rotate(lc_v2(f->mount.x, f->mount.y), f->pose.yaw);
            n = lc_region_view_wedge(in.centre, offset, fov, view_mid, s->robot.radius,
                                     in.blind);
        }
        in.n_blind = n >= 0 ? n : lc_region_blind_lines(in.centre, fov, view_mid, has_wp, wp,
                                                        in.blind);
    }
    lc_region_info info;
    int rc = lc_region_inflate(&in, &s->cfg.region, &s->cfg.ellipse, &s->rws, &s->region, &info,
                               &s->clock);
    out->stage_us[LC_STAGE_ELLIPSE] = info.ellipse_us;
    out->ellipse_iterations = info.ellipse_iterations;
    return rc;
}

/*
 * too_close for a unicycle: no translation, but turning in place moves no
 * part of a disc footprint, so it turns toward the target (rate limited)
 * and the sensor gets a new look at the way out.
 */
static void turn_in_place(const lc_session *s, const lc_frame *f, double dt, lc_vec2 target,
                          lc_plan_result *out)
{
    lc_vec2 d = lc_sub(target, lc_v2(f->pose.x, f->pose.y));
    if (s->robot.model != LC_MODEL_UNICYCLE || !(lc_len(d) > 1e-6) || !(dt > 0))
        return;
    double alpha = lc_wrap_angle(atan2(d.y, d.x) - f->pose.yaw);
    double w = s->cfg.motion.k_alpha * alpha, w_max = s->robot.w_max, step = s->robot.dw_max * dt;
    w = w > w_max ? w_max : (w < -w_max ? -w_max : w);
    /* From a last w beyond w_max start at w_max, as the motion laws do. */
    double w0 = s->last.w > w_max ? w_max : (s->last.w < -w_max ? -w_max : s->last.w);
    double lo = w0 - step, hi = w0 + step;
    out->setpoint.w = w < lo ? lo : (w > hi ? hi : w);
}

static void stop_with(lc_plan_result *out, lc_state state, lc_limit limit)
{
    out->state = state;
    out->setpoint = lc_setpoint_stop(limit);
}

/*
 * The setpoint is held for a whole control period before the next one can
 * brake, so braking room is judged with at least dt of latency: then the
 * promise "can stop inside the region" holds from step to step.
 */
/*
 * The region the motion law brakes in: the region, and for each grown
 * obstacle within reach a line across the direction to its nearest point,
 * the standoff short of it, or through the robot when the robot is nearer
 * than that (it may slide along, not come nearer). A robot that stopped or
 * slid exactly on the edge of a grown obstacle would flicker into
 * too_close with range noise, and a corner the scanner had not yet seen
 * would put it inside at once; this keeps it the standoff off. The
 * region's own lines cannot do it: they are placed for area, tangent
 * anywhere on an obstacle, and sliding along one can close in on it. Only
 * the motion sees this region: the region reported is the full one.
 * A unicycle cannot slide: held nearest-point lines left it stuck between
 * pipes (plant_room). It gets the region's own lines moved in by the
 * standoff (held at the robot when nearer), and only within PARK_REACH of
 * where it aims: held lines made a unicycle that skims a long wall at speed
 * stop and start. NULL when out of memory.
 */
#define PARK_REACH 1.0 /* m */

/*
 * Distance from c to the bounding box of v[0..n): a lower bound of the
 * distance to the polygon for the price of a min/max pass. The exact
 * distance to every grown obstacle was 71k of a 1081-beam bench frame's
 * 600k instructions; most obstacles lie beyond the robot's reach.
 */
static double box_distance(const lc_vec2 *v, int n, lc_vec2 c)
{
    double x0 = v[0].x, x1 = v[0].x, y0 = v[0].y, y1 = v[0].y;
    for (int i = 1; i < n; i++) {
        x0 = lc_min(x0, v[i].x);
        x1 = lc_max(x1, v[i].x);
        y0 = lc_min(y0, v[i].y);
        y1 = lc_max(y1, v[i].y);
    }
    double dx = lc_max(0.0, lc_max(x0 - c.x, c.x - x1)), dy = lc_max(0.0, lc_max(y0 - c.y, c.y - y1));
    return sqrt(dx * dx + dy * dy);
}

static const lc_region *motion_region(lc_session *s, lc_vec2 c, lc_vec2 aim, lc_region *out)
{
    const lc_region *r = &s->region;
    double standoff = s->cfg.standoff;
    if (!(standoff > 0) || (s->robot.model == LC_MODEL_UNICYCLE && lc_dist(c, aim) > PARK_REACH))
        return r;
    if (LC_GROW(&s->alloc, s->motion_h, s->cap_motion_h, r->nh + s->grown.np) < 0)
        return NULL;
    int n = r->nh;
    if (s->robot.model == LC_MODEL_UNICYCLE) {
        /* parking: the region's lines moved in, held at the robot */
        for (int i = 0; i < n; i++) {
            double slack = r->h[i].b - lc_dot(r->h[i].a, c);
            s->motion_h[i] = (lc_halfspace){r->h[i].a,
                                            r->h[i].b - lc_min(standoff, lc_max(slack, 0.0))};
        }
        *out = *r;
        out->h = s->motion_h;
        return out;
    }
    memcpy(s->motion_h, r->h, sizeof *r->h * (size_t)n);
    /* farther than the robot can go before it stops, no line can bind */
    double v = s->robot.v_max, reach = standoff + v * v / (2 * s->robot.a_max) + v;
    for (int j = 0; j < s->grown.np; j++) {
        int nv;
        const lc_vec2 *pv = lc_polyset_at(&s->grown, j, &nv);
        if (box_distance(pv, nv, c) > reach)
            continue; /* the exact distance is at least this */
        lc_vec2 q;
        double d = lc_convex_distance(pv, nv, c, &q);
        if (!(d > 1e-9) || d > reach)
            continue; /* inside: too_close, decided elsewhere */
        lc_vec2 a = lc_scale(lc_sub(q, c), 1.0 / d);
        s->motion_h[n++] = (lc_halfspace){a, lc_dot(a, q) - lc_min(standoff, d)};
    }
    *out = *r;
    out->h = s->motion_h;
    out->nh = n;
    return out;
}

/*
 * Where the robot heads: the target, or, when the target is the waypoint's
 * projection onto the region's edge, a point standoff further in, toward
 * the ellipse centre (inside by convexity), so that it stops by the goal
 * term rather than by the braking room of the motion region.
 */
static lc_vec2 aim_point(const lc_session *s, lc_vec2 target, lc_vec2 waypoint)
{
    lc_vec2 in = lc_sub(s->region.ellipse.d, target);
    double len = lc_len(in);
    if (!(s->cfg.standoff > 0) || lc_dist(target, waypoint) <= 1e-9 || !(len > 1e-9))
        return target;
    return lc_add(target, lc_scale(in, lc_min(s->cfg.standoff, len) / len));
}

/*
 * The aim pulled back onto the lines of the motion region the robot sits
 * on (twice round, for a corner), so that it slides along them: heading a
 * hair into one (such lines tilt a little from frame to frame) would find
 * no braking room at all and freeze the robot there.
 */
#define SLIDE_SLACK 1e-3 /* m: a line this near the robot is one it sits on */

static lc_vec2 slide_aim(const lc_region *mr, lc_vec2 c, lc_vec2 aim)
{
    for (int pass = 0; pass < 2; pass++)
        for (int i = 0; i < mr->nh; i++) {
            const lc_halfspace *h = &mr->h[i];
            double over = lc_dot(h->a, aim) - h->b;
            if (h->b - lc_dot(h->a, c) <= SLIDE_SLACK && over > 0)
                aim = lc_sub(aim, lc_scale(h->a, over));
        }
    return aim;
}

static void drive(lc_session *s, const lc_frame *f, double dt, lc_plan_result *out)
{
    lc_motion_params mp = s->cfg.motion;
    mp.latency = fmax(mp.latency, dt);
    lc_vec2 aim = aim_point(s, out->target, out->waypoint);
    lc_region shrunk;
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    const lc_region *mr = motion_region(s, c, aim, &shrunk);
    if (mr && mr != &s->region)
        aim = slide_aim(mr, c, aim);
    int rc = !mr                                  ? -1
             : s->robot.model == LC_MODEL_UNICYCLE ? lc_motion_unicycle(&s->robot, &mp, mr, f->pose,
                                                                       aim, &s->last, dt,
                                                                       &out->setpoint)
                                                   : lc_motion_point(&s->robot, &mp, mr, f->pose, aim,
                                                                     &s->last, dt, &out->setpoint);
    if (rc < 0)
        out->setpoint = lc_setpoint_stop(LC_LIMIT_NONE);
}

/* The route-level decision for this frame, and the target it implies. */
static void decide(lc_session *s, const lc_frame *f, double dt, lc_plan_result *out)
{
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    lc_state st = lc_patrol_update(&s->patrol, &s->route, c, out->target, f->stamp, out->events,
                                   &out->n_events);
    out->has_waypoint = lc_patrol_waypoint(&s->patrol, &s->route, &out->waypoint);
    out->waypoint_index = s->patrol.current;
    if (out->has_waypoint) {
        out->target = lc_region_project(&s->region, out->waypoint);
        out->has_target = true;
    }
    out->state = st;
    switch (st) {
    case LC_STATE_IDLE:
        stop_with(out, st, LC_LIMIT_IDLE);
        return;
    case LC_STATE_DONE:
        stop_with(out, st, LC_LIMIT_ARRIVED);
        return;
    case LC_STATE_BLOCKED:
        stop_with(out, st, LC_LIMIT_BLOCKED);
        return;
    default:
        break;
    }
    if (out->has_target)
        drive(s, f, dt, out);
    else
        stop_with(out, st, LC_LIMIT_ARRIVED);
}

static void stamp_stage(lc_session *s, lc_plan_result *out, lc_stage stage, double *t)
{
    double now = lc_clock_now(&s->clock);
    out->stage_us[stage] += now - *t;
    *t = now;
}

int lc_session_step(lc_session *s, const lc_frame *frame, double dt, lc_plan_result *out)
{
    memset(out, 0, sizeof *out);
    out->cloud = &s->cloud;
    out->obstacles = &s->obstacles;
    out->grown = &s->grown;
    out->state = LC_STATE_IDLE;
    out->setpoint = lc_setpoint_stop(LC_LIMIT_NONE);
    double t_start = lc_clock_now(&s->clock), t = t_start;

    lc_ingest_config icfg = s->cfg.ingest;
    if (!(icfg.self_radius > 0))
        icfg.self_radius = s->robot.radius;
    icfg.z_min = fmax(icfg.z_min, s->robot.z_min); /* the narrower band wins */
    icfg.z_max = fmin(icfg.z_max, s->robot.z_max);
    if (lc_ingest(frame, &icfg, &s->cloud) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_INGEST, &t);
    if (lc_segment(&s->cloud, &s->cfg.segment, &s->seg) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_SEGMENT, &t);
    if (hull_pieces(s) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_HULL, &t);
    if (grow_obstacles(s) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_GROW, &t);

    lc_vec2 c = lc_v2(frame->pose.x, frame->pose.y), wp = c;
    bool has_wp = lc_patrol_waypoint(&s->patrol, &s->route, &wp);
    int rc = plan_region(s, frame, has_wp, wp, out);
    stamp_stage(s, out, LC_STAGE_REGION, &t);
    out->stage_us[LC_STAGE_REGION] -= out->stage_us[LC_STAGE_ELLIPSE];
    if (rc == LC_ERR_NO_MEMORY)
        return -1;
    out->clearance = nearest_clearance(s, c);
    if (rc == LC_OK || rc == LC_REGION_TOO_CLOSE) {
        out->region = &s->region;
        out->target = has_wp ? lc_region_project(&s->region, wp) : c;
        out->has_target = has_wp;
    }
    stamp_stage(s, out, LC_STAGE_TARGET, &t);

    if (rc != LC_OK) {
        /* Centre inside a grown obstacle, or no region holds it: no translation. */
        out->has_waypoint = has_wp;
        out->waypoint = wp;
        out->waypoint_index = s->patrol.current;
        stop_with(out, LC_STATE_TOO_CLOSE, LC_LIMIT_TOO_CLOSE);
        if (out->has_target)
            turn_in_place(s, frame, dt, out->target, out);
    } else {
        decide(s, frame, dt, out);
    }
    s->last = out->setpoint;
    stamp_stage(s, out, LC_STAGE_SETPOINT, &t);
    out->total_us = lc_clock_now(&s->clock) - t_start;
    return 0;
}
