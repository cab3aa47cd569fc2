/*
 * session.c - the per-frame step (see session.h): ingest, memory (and what
 * it recalls), guidance, segment, hull, grow, region, target, patrol,
 * setpoint; and the frame driver that steps a stream of frames. One
 * function for every caller.
 *
 * Ownership: the session owns every buffer (grown through its lc_alloc) and
 * the qhull context; a result's pointers point into them and stay valid
 * until the next step or lc_session_free.
 */
#include "session_int.h"

#include <stdlib.h>
#include <string.h>

#include "follow.h"
#include "footprint.h"
#include "grow.h"
#include "hull.h"
#include "recall.h"
#include "steer.h"

static const char *const stage_names[LC_STAGE_COUNT] = {
    "ingest", "memory", "guide", "segment", "hull", "grow", "region", "ellipse", "target",
    "setpoint",
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
    lc_memory_config_default(&cfg->memory);
    lc_guide_config_default(&cfg->guide);
    /* a search expands at most this many cells a frame (guide.h): about
     * 70 us on the build machine, so that a frame that searches stays
     * within the 250 us a 1 kHz loop's p99 allows */
    cfg->guide.slice = 100;
    cfg->recall = 4.0;
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
    lc_region_init(&s->region_alt, &s->alloc);
    lc_region_ws_init(&s->rws, &s->alloc);
    lc_segment_ws_init(&s->seg_recall, &s->alloc);
    lc_polyset_init(&s->frontier, &s->alloc);
    lc_recall_init(&s->recall, &s->alloc);
    lc_steer_ws_init(&s->steer, &s->alloc);
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
    lc_control_default(&s->control);
    s->last_reply = (lc_reply){.seq = -1, .waypoint = -1};
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
    if (s->cfg.memory.enabled) {
        s->mem = lc_memory_new(&s->cfg.memory, &s->alloc);
        if (s->mem && s->cfg.guide.enabled)
            s->guide = lc_guide_new(&s->cfg.guide, &s->cfg.memory, &s->alloc);
        if (!s->mem || (s->cfg.guide.enabled && !s->guide)) {
            lc_session_free(s);
            return NULL;
        }
    }
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
    lc_memory_free(s->mem);
    lc_guide_free(s->guide);
    lc_recall_free(&s->recall);
    lc_segment_ws_free(&s->seg_recall);
    lc_polyset_free(&s->frontier);
    lc_polyset_free(&s->obstacles);
    lc_polyset_free(&s->grown);
    LC_RELEASE(a, s->gather, s->cap_gather);
    LC_RELEASE(a, s->body, s->cap_body);
    lc_steer_ws_free(&s->steer);
    lc_region_free(&s->region);
    lc_region_free(&s->region_alt);
    lc_region_ws_free(&s->rws);
    lc_alloc keep = s->alloc;
    keep.realloc(keep.data, s, 0);
}

void lc_session_set_robot(lc_session *s, const lc_robot *robot)
{
    s->robot = *robot;
    memset(s->view_known, 0, sizeof s->view_known); /* its sensors may be others */
}
const lc_robot *lc_session_robot(const lc_session *s) { return &s->robot; }
const lc_route *lc_session_route(const lc_session *s) { return &s->route; }
const lc_plan_config *lc_session_config(const lc_session *s) { return &s->cfg; }

void lc_session_set_route(lc_session *s, const lc_route *route)
{
    s->route = *route;
    lc_patrol_reset(&s->patrol);
    if (s->guide)
        lc_guide_reset(s->guide);
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
    if (s->guide)
        lc_guide_reset(s->guide);
}

/* The region's window: the sensor's range (capped), with memory no larger
 * than the box whose remembered obstacles are taken into account. */
static double window_half_side(const lc_session *s, const lc_frame *f)
{
    const lc_region_config *rc = &s->cfg.region;
    double w = rc->window;
    if (!(w > 0)) {
        double range = f->kind == LC_FRAME_SCAN ? f->range_max : s->cfg.ingest.range_cap;
        w = range > 0 && range < rc->window_max ? range : rc->window_max;
    }
    return s->mem && s->cfg.recall > 0 ? lc_min(w, s->cfg.recall) : w;
}

/* The frame's view: fov (rad) about the world direction mid; a points
 * sensor's own fov, else the configured one, else judged from the points. */
static void frame_view(const lc_session *s, const lc_frame *f, double *fov, double *mid)
{
    const lc_sensor_desc *sd = lc_robot_sensor(&s->robot, f);
    double pfov = sd && sd->fov > 0 ? sd->fov : s->cfg.region.points_fov;
    *fov = f->kind == LC_FRAME_POINTS && pfov > 0 ? pfov : s->cloud.fov;
    *mid = f->pose.yaw + s->cloud.fov_mid;
}

/*
 * The frame as the plan sees it: from the robot's sensor of that name, the
 * mount when the frame has none of its own; the height band narrowed to the
 * sensor's.
 */
static lc_frame resolve_frame(const lc_session *s, const lc_frame *f, lc_ingest_config *icfg)
{
    lc_frame fr = *f;
    const lc_sensor_desc *sd = lc_robot_sensor(&s->robot, f);
    if (sd && !f->has_mount)
        fr.mount = sd->mount;
    if (sd) { /* the narrower band wins */
        icfg->z_min = fmax(icfg->z_min, sd->z_min);
        icfg->z_max = fmin(icfg->z_max, sd->z_max);
    }
    return fr;
}

/*
 * The memory: this frame into it, then what it adds to the plan
 * (recall.h): remembered obstacles appended to s->obstacles, the frontier
 * into s->frontier, the view widened where the memory knows the space near
 * the robot. Nothing without memory. 0 or -1 (out of memory).
 */
/* m beyond a polygon robot's circumscribed radius and margin within which
 * remembered obstacles are kept while it is near them (lc_memory_keep_near):
 * a turn on the spot and a braking arc's swing stay within it. */
#define LC_SESSION_KEEP_NEAR 0.3

static int remember(lc_session *s, const lc_frame *f, lc_plan_result *out)
{
    frame_view(s, f, &out->view_fov, &out->view_mid);
    const lc_sensor_desc *sd = lc_robot_sensor(&s->robot, f);
    int k = sd ? (int)(sd - s->robot.sensors) : 0;
    s->view_known[k] = true;
    s->view_fov[k] = out->view_fov;
    s->view_rel[k] = lc_wrap_angle(out->view_mid - f->pose.yaw);
    lc_polyset_clear(&s->frontier);
    if (!s->mem)
        return 0;
    /* the body is free: a polygon's cells, else the disc's */
    bool poly = lc_robot_has_footprint(&s->robot);
    if (lc_memory_update(s->mem, f, &s->cloud, poly ? 0.0 : s->robot.radius) < 0)
        return -1;
    if (poly) {
        lc_vec2 body[LC_FOOTPRINT_MAX];
        lc_memory_mark_body(s->mem, body, lc_robot_place_footprint(&s->robot, f->pose, body));
        /* what it would turn into stays remembered while it is that near */
        lc_memory_keep_near(s->mem, lc_v2(f->pose.x, f->pose.y),
                            lc_robot_clearance(&s->robot) + LC_SESSION_KEEP_NEAR);
    }
    out->memory = s->mem;
    double cell = s->cfg.memory.cell;
    lc_recall_input in = {.mem = s->mem,
                          .centre = lc_v2(f->pose.x, f->pose.y),
                          .body = lc_robot_inradius(&s->robot),
                          .fov = out->view_fov,
                          .view_mid = out->view_mid,
                          .reach = s->cfg.recall,
                          .near = lc_recall_near(lc_robot_clearance(&s->robot), cell)};
    if (lc_recall_collect(&in, &s->recall) < 0 ||
        lc_segment(&s->recall.occupied, &s->cfg.segment, &s->seg_recall) < 0 ||
        lc_session_hull_pieces(s, &s->recall.occupied, &s->seg_recall, &s->obstacles, 0) < 0 ||
        lc_segment(&s->recall.frontier, &s->cfg.segment, &s->seg_recall) < 0 ||
        lc_session_hull_pieces(s, &s->recall.frontier, &s->seg_recall, &s->frontier, 0) < 0)
        return -1;
    if (s->cfg.region.blind_line) {
        out->view_fov = s->recall.fov;
        out->view_mid = s->recall.view_mid;
    }
    return 0;
}

/*
 * The distance from the footprint to the nearest kept return. A polygon:
 * only returns no farther from the centre than the nearest one plus the
 * circumscribed less the inscribed radius can be nearer the polygon.
 */
static double nearest_clearance(const lc_session *s, lc_pose pose)
{
    lc_vec2 c = lc_v2(pose.x, pose.y);
    double best2 = INFINITY; /* sqrt is monotone: the root of the least square */
    for (int i = 0; i < s->cloud.n; i++)
        best2 = lc_min(best2, lc_len2(lc_sub(s->cloud.world[i], c)));
    if (!lc_robot_has_footprint(&s->robot) || !(best2 < INFINITY))
        return sqrt(best2) - s->robot.radius;
    lc_vec2 body[LC_FOOTPRINT_MAX];
    int n = lc_robot_place_footprint(&s->robot, pose, body);
    double near = sqrt(best2) + s->robot.radius - lc_robot_inradius(&s->robot), best = INFINITY;
    for (int i = 0; i < s->cloud.n; i++)
        if (lc_len2(lc_sub(s->cloud.world[i], c)) <= near * near)
            best = lc_min(best, lc_convex_distance(body, n, s->cloud.world[i], NULL));
    return best;
}

static int plan_region(lc_session *s, const lc_frame *f, bool has_wp, lc_vec2 wp, bool seeded,
                       lc_region *dst, lc_plan_result *out)
{
    lc_region_input in = {.grown = &s->grown,
                          .centre = lc_v2(f->pose.x, f->pose.y),
                          .has_waypoint = has_wp && seeded,
                          .waypoint = wp,
                          .has_bend = has_wp && seeded && s->has_bend,
                          .bend = s->bend,
                          .window = window_half_side(s, f)};
    if (s->cfg.region.blind_line) {
        double fov = out->view_fov, view_mid = out->view_mid;
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
    int rc = lc_region_inflate(&in, &s->cfg.region, &s->cfg.ellipse, &s->rws, dst, &info,
                               &s->clock);
    out->stage_us[LC_STAGE_ELLIPSE] += info.ellipse_us;
    out->ellipse_iterations += info.ellipse_iterations;
    return rc;
}

static void stop_with(lc_plan_result *out, lc_state state, lc_limit limit)
{
    out->state = state;
    out->setpoint = lc_setpoint_stop(limit);
}

/* What the motion policy is given this frame (steer.h). */
static lc_steer_input steer_input(const lc_session *s, const lc_frame *f, double dt,
                                  const lc_plan_result *out)
{
    return (lc_steer_input){.robot = &s->robot,
                            .params = &s->cfg.motion,
                            .standoff = s->cfg.standoff,
                            .region = &s->region,
                            .grown = &s->grown,
                            .obstacles = &s->obstacles,
                            .frontier = &s->frontier,
                            .frontier_pad = s->mem ? 0.5 * sqrt(2.0) * s->cfg.memory.cell : 0.0,
                            .pose = f->pose,
                            .target = out->target,
                            .waypoint = out->waypoint,
                            .last = &s->last,
                            .dt = dt};
}

/*
 * A target on the way on (the path goes on past it, not the waypoint), when
 * the path goes on at least LC_SESSION_HEADING_MIN: the point model heads
 * for it without slowing for it (steer.c LC_STEER_WAY_GAIN); a unicycle
 * asks for the heading of the path LC_SESSION_HEADING_AHEAD past it, so
 * that it comes to a corner or a gap's mouth already turning onto the way
 * it leaves along (motion.c, LC_MOTION_BETA_MAX, says how much).
 */
#define LC_SESSION_HEADING_AHEAD 0.3 /* m */
#define LC_SESSION_HEADING_MIN 0.1   /* m */

static void way_on(const lc_plan_result *out, lc_steer_input *in)
{
    if (!out->path || out->path->status != LC_GUIDE_PATH ||
        lc_dist(in->target, out->waypoint) <= 1e-9)
        return;
    lc_vec2 on = lc_guide_ahead(out->path, in->target, LC_SESSION_HEADING_AHEAD, NULL);
    if (!(lc_dist(on, in->target) > LC_SESSION_HEADING_MIN))
        return;
    in->on_way = true;
    in->heading = atan2(on.y - in->target.y, on.x - in->target.x);
}

/*
 * A target this near the robot's centre gives the motion law nothing to do:
 * the path leaves the region at the robot. The robot heads for the way on
 * instead, a goal step along the path (`seek`), still braking in the
 * region. A unicycle turns to face it, as it does when held in the margin,
 * and what it then sees re-plans the way (the path may leave into space
 * behind it that its scanner never saw). The point model slides along the
 * region's lines it sits on (steer.c slide_aim) toward the way on: at a
 * gap's mouth, where the region is a wedge with the robot at its apex, that
 * takes it to the gap's middle line, from where the region reaches in.
 * Not a point model with a polygon footprint: among gaps its body does not
 * fit through it kept on trying, and `blocked` became wandering
 * (tests/tools/untuned/footprint_crates ran to its 200 s limit, where it
 * had ended blocked at 146 s; over the 140 family worlds with a 1.0 x 0.5 m
 * footprint, 97 arrived and 17 ran out of time, against 93 and 9).
 */
#define LC_SESSION_AT_ROBOT 0.02 /* m */

/*
 * The setpoint toward out->target, or toward *seek (the goal step along the
 * path this frame follows; NULL: none) when the target is at the robot;
 * toward a target on the way on as way_on says.
 * A polygon footprint that the motion law brakes to a stand while its
 * target wants a turn in place may still turn where the turn clears every
 * obstacle and the frontier by the margin (lc_steer_turn_in_place says
 * why the workspace region can stop it there).
 */
static void drive(lc_session *s, const lc_frame *f, double dt, const lc_vec2 *seek,
                  lc_plan_result *out)
{
    lc_steer_input in = steer_input(s, f, dt, out);
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    bool may_seek = s->robot.model == LC_MODEL_UNICYCLE || !lc_robot_has_footprint(&s->robot);
    if (seek && may_seek && lc_dist(in.target, c) < LC_SESSION_AT_ROBOT &&
        lc_dist(*seek, c) >= LC_SESSION_AT_ROBOT) {
        in.target = *seek;
        /* a polygon body has its own way out of a gap (the workspace
         * region and the turn in place below); measured, the lines cost
         * it runs (116 of 140 family worlds, against 120) */
        in.at_mouth = !lc_robot_has_footprint(&s->robot);
    } else if (seek)
        way_on(out, &in);
    if (lc_steer_drive(&in, &s->steer, &out->setpoint) < 0)
        return;
    lc_setpoint *sp = &out->setpoint;
    if (s->robot.model != LC_MODEL_UNICYCLE || !lc_robot_has_footprint(&s->robot) ||
        sp->limit != LC_LIMIT_BRAKING || sp->v != 0.0)
        return;
    lc_vec2 d = lc_sub(in.target, lc_v2(f->pose.x, f->pose.y));
    double alpha = lc_wrap_angle(atan2(d.y, d.x) - f->pose.yaw);
    if (!(lc_len(d) > 1e-6) || !(fabs(alpha) > s->cfg.motion.turn_in_place))
        return;
    lc_setpoint turn = *sp;
    if (lc_steer_turn_in_place(&in, &s->steer, &turn) == 0 && turn.w != 0.0) {
        turn.limit = LC_LIMIT_TURNING;
        *sp = turn;
    }
}

/* The clearance guidance keeps, from remembered cells' centres: the
 * robot's. The region keeps exact clearance from what is seen; guidance
 * only finds the way (guide.h says how it errs on the open side), and a
 * way the robot cannot follow is given up when no progress follows. A
 * polygon footprint: its inscribed radius (optimistic, so that a doorway a
 * long robot passes lengthwise is searched through; the region and the
 * motion keep the whole footprint clear). */
static double guide_clearance(const lc_session *s)
{
    return lc_robot_inradius(&s->robot) + s->robot.margin;
}

/*
 * Where the robot can look (lc_guide_set_sight): a unicycle turns to face
 * its way, so everywhere; the point model never turns, so its sensors'
 * views at the frame's heading, each narrowed by LC_SESSION_SIGHT_MARGIN:
 * the robot's disc entering unknown space along a view's very edge has its
 * side outside the view.
 */
#define LC_SESSION_SIGHT_MARGIN (LC_PI / 6)

/* Has every sensor the robot names (or its one unnamed sensor) sent a frame? */
static bool all_sensors_heard(const lc_session *s, int count)
{
    for (int k = 0; k < count; k++)
        if (!s->view_known[k])
            return false;
    return true;
}

static void set_sight(lc_session *s, double yaw)
{
    int count = s->robot.n_sensors > 1 ? s->robot.n_sensors : 1;
    count = count < LC_SENSORS_MAX ? count : LC_SENSORS_MAX;
    /* a sensor not heard from yet may look anywhere */
    if (s->robot.model != LC_MODEL_POINT || !all_sensors_heard(s, count)) {
        lc_guide_set_sight(s->guide, NULL);
        return;
    }
    lc_guide_sight sight = {.n = count};
    for (int k = 0; k < count; k++) {
        double fov = s->view_fov[k];
        sight.mid[k] = lc_wrap_angle(yaw + s->view_rel[k]);
        sight.half[k] = fov >= 2.0 * LC_PI - 1e-9 ? LC_PI
                                                 : fmax(0.0, 0.5 * fov - LC_SESSION_SIGHT_MARGIN);
    }
    lc_guide_set_sight(s->guide, &sight);
}

/*
 * Guidance for this frame: the path to wp, and the point a goal_step
 * along it that the region reaches toward (*seek; wp without a path). Fills
 * out->path and what the patrol will be told of the way.
 */
#define LC_SESSION_BEND_NEAR 0.1 /* m: a bend nearer the robot seeds nothing */

static int guide_frame(lc_session *s, lc_pose pose, lc_vec2 wp, lc_vec2 *seek,
                       lc_patrol_way *way, lc_plan_result *out)
{
    lc_vec2 c = lc_v2(pose.x, pose.y);
    *seek = wp;
    memset(way, 0, sizeof *way);
    s->has_bend = false;
    if (!s->guide)
        return 0;
    set_sight(s, pose.yaw);
    const lc_guide_path *p;
    if (lc_guide_update(s->guide, s->mem, c, wp, guide_clearance(s), s->route.tolerance, &p,
                        &out->guide) < 0)
        return -1;
    out->path = p;
    way->no_path = p->status == LC_GUIDE_NO_PATH;
    way->new_way = out->guide.replaced;
    if (p->status != LC_GUIDE_PATH)
        return 0;
    way->guided = true;
    *seek = lc_guide_ahead(p, c, s->cfg.region.goal_step, &way->to_go);
    s->has_bend = lc_guide_bend_ahead(p, c, s->cfg.region.goal_step, LC_SESSION_BEND_NEAR, &s->bend);
    return 0;
}

/*
 * The region reaches toward a point along the path (the goal seed); where
 * the path turns through a narrow gap that seed can give a needle of a
 * region along the seed's line that the path leaves at once (a unicycle
 * in a doorway, off the path's line, was held there for good). When the
 * target is that near, the path is first followed just inside the
 * region's edge (hug_path); if the target is still that near, the region
 * is inflated again from the robot alone, and kept when the path's target
 * in it (hugged too) lies farther along the path. In that order: at a
 * gap's mouth the unseeded region is the room behind the robot, and taken
 * for a target a hair farther along than the seeded region's unhugged one,
 * it alternated with the gap from frame to frame and a unicycle turned
 * back and forth there until blocked (tests/tools/regress/crate_gap).
 */
#define LC_SESSION_SHORT_REACH 0.25 /* m */

static void retry_unseeded(lc_session *s, const lc_frame *f, lc_vec2 seek, lc_patrol_way *way,
                           lc_plan_result *out)
{
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    if (plan_region(s, f, true, seek, false, &s->region_alt, out) != LC_OK)
        return;
    double rest, hug_rest;
    lc_vec2 target = lc_follow_target(&s->region_alt, out->path, c, &rest), hug;
    if (lc_dist(target, c) < LC_SESSION_SHORT_REACH &&
        lc_follow_hug(&s->region_alt, out->path, c, target, &hug, &hug_rest)) {
        target = hug;
        rest = hug_rest;
    }
    if (!(rest < way->to_go_target - 1e-9))
        return;
    lc_region t = s->region;
    s->region = s->region_alt;
    s->region_alt = t;
    out->target = target;
    way->to_go_target = rest;
}

/* A path along the very edge of the region: followed just inside it
 * (follow.h). */
static void hug_path(const lc_region *r, const lc_guide_path *p, lc_vec2 c, lc_patrol_way *way,
                     lc_plan_result *out)
{
    lc_vec2 t;
    double rest;
    if (lc_follow_hug(r, p, c, out->target, &t, &rest)) {
        out->target = t;
        way->to_go_target = rest;
    }
}

/*
 * A robot that makes no progress along its path for the guide's stall time
 * cannot get past where the path leaves its region (a gap the memory's
 * cells make look wide enough, a corner it cannot round): that spot is
 * refused and guidance looks for another way (the only way is taken again
 * when there is no other: guide.h). Progress here is at least
 * LC_SESSION_STALL_PROGRESS along the path (a crawl through a gap is a
 * stall too). A way round (longer by more than LC_PATROL_DETOUR) starts
 * the watch over, as it does the patrol's.
 */
#define LC_SESSION_STALL_PROGRESS 0.3 /* m along the path per stall time, at least */
#define LC_SESSION_DOUBT_AHEAD 2.0    /* m past the region searched for a doubtful spot */

static void watch_stall(lc_session *s, double stamp, lc_patrol_way *way, lc_vec2 c,
                        lc_vec2 target)
{
    if (!way->guided || !(s->cfg.guide.stall > 0)) {
        s->stall_on = false;
        return;
    }
    bool detour = way->new_way && way->to_go > s->stall_best + LC_PATROL_DETOUR;
    if (!s->stall_on || s->stall_wp != s->patrol.current || detour ||
        way->to_go < s->stall_best - lc_max(s->route.progress, LC_SESSION_STALL_PROGRESS)) {
        s->stall_on = true;
        s->stall_wp = s->patrol.current;
        s->stall_best = way->to_go;
        s->stall_stamp = stamp;
    } else if (lc_robot_has_footprint(&s->robot) && s->last.limit == LC_LIMIT_TURNING) {
        /* a polygon unicycle brakes straight, then turns in place, before
         * it heads back along its path (motion.c): not a stall */
        s->stall_stamp = stamp;
    } else if (stamp - s->stall_stamp >= s->cfg.guide.stall) {
        /* where the path turns doubtful past the region (unknown space, a
         * tight gap) within LC_SESSION_DOUBT_AHEAD, else where it leaves
         * the region; never so near that the refused disc would hold the
         * robot itself */
        double r = guide_clearance(s);
        double ahead = lc_max(lc_dist(c, target), r + 0.2);
        lc_vec2 spot;
        if (!lc_guide_doubt_ahead(s->guide, s->mem, s->path_ref, c, ahead,
                                  ahead + LC_SESSION_DOUBT_AHEAD, r, &spot))
            spot = lc_guide_ahead(s->path_ref, c, ahead, NULL);
        lc_guide_refuse(s->guide, spot, r);
        way->gave_up = true;
        s->stall_best = way->to_go;
        s->stall_stamp = stamp;
    }
}

/* The route-level decision for this frame, and the target it implies. */
static void decide(lc_session *s, const lc_frame *f, double dt, const lc_patrol_way *way,
                   lc_vec2 seek, lc_plan_result *out)
{
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    int before = s->patrol.current;
    lc_state st = lc_patrol_update_way(&s->patrol, &s->route, c, out->target, way, f->stamp,
                                       out->events, &out->n_events);
    out->has_waypoint = lc_patrol_waypoint(&s->patrol, &s->route, &out->waypoint);
    out->waypoint_index = s->patrol.current;
    if (out->has_waypoint && (!way->guided || s->patrol.current != before)) {
        /* no path to this waypoint (yet): its closest point in the region */
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
        drive(s, f, dt, way->guided && s->patrol.current == before ? &seek : NULL, out);
    else
        stop_with(out, st, LC_LIMIT_ARRIVED);
}

/*
 * A frame in which the robot is held in the margin (too_close): the
 * patrol's clock runs on, so that a robot that can neither ease out nor
 * turn is blocked (no_progress) after the route's blocked time and the
 * route's policy acts, as when it cannot move on; it may also arrive there.
 * Returns true when the patrol stopped the robot (blocked or done, *out
 * filled); else updates *has_wp and *wp to the patrol's waypoint.
 */
static bool held_patrol(lc_session *s, const lc_frame *f, const lc_patrol_way *way, bool *has_wp,
                        lc_vec2 *wp, lc_plan_result *out)
{
    lc_vec2 c = lc_v2(f->pose.x, f->pose.y);
    /* a way round found, or a way given up, meanwhile does not start the
     * count over until the robot is free again (patrol.h) */
    lc_patrol_way held = *way;
    held.held = true;
    lc_state st = lc_patrol_update_way(&s->patrol, &s->route, c, out->has_target ? out->target : c,
                                       &held, f->stamp, out->events, &out->n_events);
    *has_wp = lc_patrol_waypoint(&s->patrol, &s->route, wp);
    if (st != LC_STATE_BLOCKED && st != LC_STATE_DONE)
        return false;
    out->has_waypoint = *has_wp;
    out->waypoint = *wp;
    out->waypoint_index = s->patrol.current;
    stop_with(out, st, st == LC_STATE_BLOCKED ? LC_LIMIT_BLOCKED : LC_LIMIT_ARRIVED);
    return true;
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
    lc_polyset_clear(&s->obstacles);
    lc_polyset_clear(&s->grown);
    out->state = LC_STATE_IDLE;
    out->setpoint = lc_setpoint_stop(LC_LIMIT_NONE);
    double t_start = lc_clock_now(&s->clock), t = t_start;

    lc_ingest_config icfg = s->cfg.ingest;
    if (!(icfg.self_radius > 0)) /* a polygon: what surely is its body */
        icfg.self_radius = lc_robot_inradius(&s->robot);
    icfg.z_min = fmax(icfg.z_min, s->robot.z_min); /* the narrower band wins */
    icfg.z_max = fmin(icfg.z_max, s->robot.z_max);
    lc_frame resolved = resolve_frame(s, frame, &icfg);
    frame = &resolved;
    if (lc_ingest(frame, &icfg, &s->cloud) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_INGEST, &t);
    if (lc_segment(&s->cloud, &s->cfg.segment, &s->seg) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_SEGMENT, &t);
    if (lc_session_hull_pieces(s, &s->cloud, &s->seg, &s->obstacles, 0) < 0)
        return -1;
    out->n_seen = s->obstacles.np;
    stamp_stage(s, out, LC_STAGE_HULL, &t);
    if (remember(s, frame, out) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_MEMORY, &t);
    if (lc_session_grow_obstacles(s, frame->pose.yaw) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_GROW, &t);

    lc_vec2 c = lc_v2(frame->pose.x, frame->pose.y), wp = c, seek = c;
    bool has_wp = lc_patrol_waypoint(&s->patrol, &s->route, &wp);
    lc_patrol_way way = {0};
    if (has_wp && guide_frame(s, frame->pose, wp, &seek, &way, out) < 0)
        return -1;
    stamp_stage(s, out, LC_STAGE_GUIDE, &t);
    out->stage_us[LC_STAGE_ELLIPSE] = 0.0;
    out->ellipse_iterations = 0;
    int rc = plan_region(s, frame, has_wp, seek, true, &s->region, out);
    stamp_stage(s, out, LC_STAGE_REGION, &t);
    out->stage_us[LC_STAGE_REGION] -= out->stage_us[LC_STAGE_ELLIPSE];
    if (rc == LC_ERR_NO_MEMORY)
        return -1;
    out->clearance = nearest_clearance(s, frame->pose);
    if (rc == LC_OK || rc == LC_REGION_TOO_CLOSE) {
        out->region = &s->region;
        out->target = has_wp ? lc_region_project(&s->region, wp) : c;
        out->has_target = has_wp;
        if (has_wp && way.guided) {
            out->target = lc_follow_target(&s->region, out->path, c, &way.to_go_target);
            if (rc == LC_OK && lc_dist(out->target, c) < LC_SESSION_SHORT_REACH)
                hug_path(&s->region, out->path, c, &way, out);
            if (rc == LC_OK && lc_dist(out->target, c) < LC_SESSION_SHORT_REACH)
                retry_unseeded(s, frame, seek, &way, out);
            s->path_ref = out->path;
            watch_stall(s, frame->stamp, &way, c, out->target);
        }
    }
    stamp_stage(s, out, LC_STAGE_TARGET, &t);

    if (rc != LC_OK && has_wp && held_patrol(s, frame, &way, &has_wp, &wp, out)) {
        s->easing = false; /* blocked or done while held in the margin: stopped */
    } else if (rc != LC_OK) {
        /* Centre inside a grown obstacle, or no region holds it: no translation. */
        out->has_waypoint = has_wp;
        out->waypoint = wp;
        out->waypoint_index = s->patrol.current;
        stop_with(out, LC_STATE_TOO_CLOSE, LC_LIMIT_TOO_CLOSE);
        lc_steer_input in = steer_input(s, frame, dt, out);
        /* coming in, the robot stops translating at once (as it always
         * has; a turn goes on, rate limited); easing out starts there */
        lc_setpoint rest = lc_setpoint_stop(LC_LIMIT_TOO_CLOSE);
        rest.w = s->last.w;
        if (!s->easing)
            in.last = &rest;
        int eased = rc == LC_REGION_TOO_CLOSE && out->has_target
                        ? lc_steer_ease_out(&in, &s->steer, &out->setpoint)
                        : 0;
        if (eased > 0 && !s->easing)
            /* its first frame is a step from rest, not from the last
             * setpoint: the stop coming in is what bounds it */
            out->setpoint.limit = LC_LIMIT_TOO_CLOSE;
        s->easing = eased > 0;
        if (eased < 0)
            return -1;
        /* the turn faces the way on: a goal step along the path when
         * guided (the path's exit from the region can be the centre) */
        if (eased == 0 && out->has_target) {
            in.last = &s->last;
            in.target = way.guided ? seek : out->target;
            if (lc_steer_turn_in_place(&in, &s->steer, &out->setpoint) < 0)
                return -1;
        }
    } else {
        s->easing = false;
        decide(s, frame, dt, &way, seek, out);
    }
    s->last = out->setpoint;
    stamp_stage(s, out, LC_STAGE_SETPOINT, &t);
    out->total_us = lc_clock_now(&s->clock) - t_start;
    return 0;
}

/* ------------------------------------------------------- frame driver */

void lc_session_set_control(lc_session *s, const lc_control *control) { s->control = *control; }
const lc_control *lc_session_control(const lc_session *s) { return &s->control; }

int lc_session_drive(lc_session *s, const lc_frame *frame, lc_plan_result *out,
                     lc_reply *reply)
{
    double dt;
    if (s->driven && !s->resting && frame->stamp == s->prev_stamp) {
        /* A frame stamped like the one before (another sensor's, taken at
         * the same instant) revises that frame's setpoint: the same start
         * and period, so that two answers at one instant never add up to
         * two periods' change of velocity. */
        s->last = s->before;
        dt = s->before_dt;
    } else {
        dt = lc_control_dt(&s->control, !s->driven, s->prev_stamp, frame->stamp);
        if (s->resting) {
            s->last = lc_setpoint_stop(LC_LIMIT_STALE);
            s->resting = false;
        }
        s->before = s->last;
        s->before_dt = dt;
    }
    int rc = lc_session_step(s, frame, dt, out);
    s->driven = true;
    s->prev_stamp = frame->stamp;
    s->last_reply = (lc_reply){.seq = frame->seq,
                               .stamp = frame->stamp,
                               .model = s->robot.model,
                               .sp = out->setpoint,
                               .state = out->state,
                               .waypoint = out->has_waypoint ? out->waypoint_index : -1,
                               .valid_ms = lc_control_valid_ms(&s->control, dt)};
    *reply = s->last_reply;
    return rc;
}

void lc_session_stop(lc_session *s, lc_state state, lc_limit limit, lc_reply *out)
{
    s->resting = true;
    if (!out)
        return;
    *out = s->last_reply;
    if (!s->driven) /* no reply to keep the valid_ms of: the first frame's */
        out->valid_ms = lc_control_valid_ms(&s->control, s->control.first_dt);
    out->model = s->robot.model;
    out->sp = lc_setpoint_stop(limit);
    out->state = state;
}
