/*
 * steer.c - the motion policy (see steer.h).
 *
 * The setpoint is held for a whole control period before the next one can
 * brake, so braking room is judged with at least dt of latency: then the
 * promise "can stop inside the region" holds from step to step.
 */
#include "steer.h"

#include <string.h>

#include "footprint.h"

void lc_steer_ws_init(lc_steer_ws *ws, const lc_alloc *alloc)
{
    *ws = (lc_steer_ws){.alloc = alloc};
}

void lc_steer_ws_free(lc_steer_ws *ws)
{
    LC_RELEASE(ws->alloc, ws->h, ws->cap_h);
    LC_RELEASE(ws->alloc, ws->hw, ws->cap_hw);
    LC_RELEASE(ws->alloc, ws->near, ws->cap_near);
}

/*
 * Distance from c to the bounding box of v[0..n): a lower bound of the
 * distance to the polygon for the price of a min/max pass (most obstacles
 * lie beyond the robot's reach; the exact distance to each was a tenth of
 * a bench frame's instructions).
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

/* A unit direction from c toward the nearest point of v[0..n). */
static lc_vec2 toward(const lc_vec2 *v, int n, lc_vec2 c)
{
    lc_vec2 q;
    lc_convex_distance(v, n, c, &q);
    lc_vec2 a = lc_sub(q, c);
    double l = lc_len(a);
    return l > 0 ? lc_scale(a, 1.0 / l) : lc_v2(1, 0);
}

/*
 * The lines that keep a turning footprint off the obstacles near it: for
 * each obstacle within reach, the line separating it from the footprint,
 * pulled in to the margin from it, or to where the footprint is when it is
 * nearer (a turn may then come no nearer). An obstacle that overlaps the
 * footprint gets the footprint's own supporting line toward it. The
 * pieces of obs count pad larger. Appended to ws->hw after n lines; the
 * count, or -1 when out of memory.
 */
static int turn_lines_of(const lc_steer_input *in, lc_steer_ws *ws, const lc_vec2 *body, int nb,
                         const lc_polyset *obs, double pad, int n)
{
    lc_vec2 c = lc_v2(in->pose.x, in->pose.y);
    double m = in->robot->margin, reach = in->robot->radius + m + pad;
    if (!obs || obs->np == 0)
        return n;
    if (LC_GROW(ws->alloc, ws->hw, ws->cap_hw, n + obs->np) < 0)
        return -1;
    for (int j = 0; j < obs->np; j++) {
        int nv;
        const lc_vec2 *pv = lc_polyset_at(obs, j, &nv);
        if (box_distance(pv, nv, c) > reach)
            continue;
        lc_halfspace h;
        double gap = lc_convex_separate(body, nb, pv, nv, &h) - pad;
        if (gap < 0) {
            lc_vec2 a = toward(pv, nv, c);
            h = (lc_halfspace){a, lc_footprint_support(body, nb, a)};
            ws->hw[n++] = h;
            continue;
        }
        ws->hw[n++] = (lc_halfspace){h.a, h.b - pad - lc_min(m, gap)};
    }
    return n;
}

static int turn_lines(const lc_steer_input *in, lc_steer_ws *ws, const lc_vec2 *body, int nb)
{
    int n = turn_lines_of(in, ws, body, nb, in->obstacles, 0.0, 0);
    return n < 0 ? -1 : turn_lines_of(in, ws, body, nb, in->frontier, in->frontier_pad, n);
}

/* The braked turn of w keeps the footprint within the turn lines. */
static bool turn_allowed(const lc_steer_input *in, const lc_motion_params *mp,
                         const lc_halfspace *h, int n, double w)
{
    lc_region r = {.h = (lc_halfspace *)h, .nh = n};
    return n == 0 || lc_motion_body_margin(in->robot, mp, &r, in->pose, 0.0, w) >= -1e-9;
}

int lc_steer_turn_in_place(const lc_steer_input *in, lc_steer_ws *ws, lc_setpoint *out)
{
    const lc_robot *robot = in->robot;
    lc_pose pose = in->pose;
    lc_vec2 d = lc_sub(in->target, lc_v2(pose.x, pose.y));
    if (robot->model != LC_MODEL_UNICYCLE || !(lc_len(d) > 1e-6) || !(in->dt > 0))
        return 0;
    const lc_setpoint *last = in->last;
    double alpha = lc_motion_keep_turning(lc_wrap_angle(atan2(d.y, d.x) - pose.yaw), last->w);
    double w = in->params->k_alpha * alpha, w_max = robot->w_max, step = robot->dw_max * in->dt;
    w = w > w_max ? w_max : (w < -w_max ? -w_max : w);
    /* From a last w beyond w_max start at w_max, as the motion laws do. */
    double w0 = last->w > w_max ? w_max : (last->w < -w_max ? -w_max : last->w);
    double lo = w0 - step, hi = w0 + step;
    w = w < lo ? lo : (w > hi ? hi : w);
    if (lc_robot_has_footprint(robot)) {
        lc_vec2 body[LC_FOOTPRINT_MAX];
        int nb = lc_robot_place_footprint(robot, pose, body);
        int n = turn_lines(in, ws, body, nb);
        if (n < 0)
            return -1;
        lc_motion_params mp = *in->params;
        mp.latency = fmax(mp.latency, in->dt);
        if (!turn_allowed(in, &mp, ws->hw, n, w))
            w = lo > 0 ? lo : (hi < 0 ? hi : 0.0); /* brake the turn */
    }
    out->w = w;
    return 0;
}

/*
 * The region the motion law brakes in: the region's own lines moved in by
 * the standoff, or held at the robot when it is nearer (it may slide
 * along, not come nearer), and for each grown obstacle already within the
 * standoff a line across the direction to its nearest point, held at the
 * robot. A robot that stopped or slid exactly on the edge of a grown
 * obstacle would flicker into too_close with range noise, and a corner the
 * scanner had not yet seen would put it inside at once; this keeps it the
 * standoff off. The held nearest-point lines are needed as well: the
 * region's lines are placed for area, tangent anywhere on an obstacle, and
 * from frame to frame sliding along them can close in on it (a unicycle
 * rounding a wall's end came within 3 mm of its grown shape, where range
 * noise made it too_close).
 *
 * Lines at the standoff across the direction to every grown obstacle
 * within braking reach, as the point model once had, cut the room ahead
 * to the few decimetres between the obstacles on either side and made it
 * brake through every aisle: over the world families it took 1.46 times
 * the shortest time (median), against 1.17 with the region's lines.
 *
 * A unicycle gets these lines only within PARK_REACH of where it aims:
 * held lines made one that skims a long wall at speed stop and start
 * (it cannot slide sideways off them). In clutter the region often ends
 * within a metre, and with a reach of 1 m a unicycle creeping past a crate
 * (its heading a little toward it, the held line across it) braked to a
 * stand again and again until its stall watch gave the way up. Measured
 * with two noise seeds on 120 cluttered worlds (of them, done: 209 of 240
 * at 1 m, 215 at 0.7, 212 at 0.5, 219 at 0.3), on 60 whose passages all
 * leave 5 cm a side (114, 115, 118, 116 of 120) and on 40 one-gap scenes
 * at 3 cm a side (33, 33, 37, 32): over the three, 356, 363, 367, 367
 * of 400, and 0.5 m keeps the lines over more of the last stretch to a
 * goal than 0.3 does. The world families' seeds 1-3 gave 409 of 420 at
 * 0.5 against 410 at 1 m.
 *
 * A unicycle at a gap's mouth (in->at_mouth: its region's target at its
 * centre, it heads for a step along the path beyond) keeps the lines
 * whatever its aim: without them it crept on to the region's edge where
 * the gap narrowed to the robot's width with its margin, sat on the grown
 * obstacles, went too_close with range noise and, when its stall watch
 * gave the gap up, could not leave (traced in cluttered_corridor seed 3,
 * world 18: 70 s turning back and forth in a region 3 cm wide). The
 * passage's share below still lets it through a gap it fits. Disc
 * unicycles, seeds 1-7 (980 runs) and 120 cluttered worlds x 2 noise
 * seeds: measured in docs/DESIGN.md, step 12. Only the motion sees this
 * region: the region reported is the full one. NULL when out of memory.
 */
#define PARK_REACH 0.5 /* m */
/*
 * Between two grown obstacles whose nearest points lie on opposite sides
 * (their directions more than 120 degrees apart: a gap, a narrow aisle),
 * the free width across is about the sum of the two distances, and a
 * standoff of nearly half of it left the robot nowhere to go: at the mouth
 * of a gap the two nearest points lie ahead to either side, and lines held
 * at the robot shut every way forward (a gap 3 cm a side wider than the
 * robot with its margin, its sides seen without noise, held a point robot
 * at its mouth for good). There each keeps at most a quarter of that
 * width: the middle half of the gap is the robot's.
 */
#define PASSAGE_COS -0.5   /* cos 120 degrees */
#define PASSAGE_SHARE 0.25

/* Line i of h[0..n) (its distance from the robot near[i]) keeps at most
 * keep, and at most its share of a passage with a line on the opposite
 * side. */
static double passage_keep(const lc_halfspace *h, const double *near, int n, int i, double keep)
{
    for (int k = 0; k < n; k++)
        if (k != i && lc_dot(h[i].a, h[k].a) < PASSAGE_COS)
            keep = lc_min(keep, PASSAGE_SHARE * (near[i] + near[k]));
    return keep;
}

/*
 * Lines across the direction to the nearest point of each grown obstacle
 * already within the standoff, appended to ws->h from index n: held at the
 * robot (it may slide along, not come nearer), a passage's side by at most
 * its share of the width. Returns the new count, or -1 when out of memory.
 */
static int held_lines(const lc_steer_input *in, lc_steer_ws *ws, lc_vec2 c, int n)
{
    if (LC_GROW(ws->alloc, ws->near, ws->cap_near, in->grown->np) < 0)
        return -1;
    double reach = in->standoff;
    int first = n;
    for (int j = 0; j < in->grown->np; j++) {
        int nv;
        const lc_vec2 *pv = lc_polyset_at(in->grown, j, &nv);
        if (box_distance(pv, nv, c) > reach)
            continue; /* the exact distance is at least this */
        lc_vec2 q;
        double d = lc_convex_distance(pv, nv, c, &q);
        if (!(d > 1e-9) || d > reach)
            continue; /* inside: too_close, decided elsewhere */
        lc_vec2 a = lc_scale(lc_sub(q, c), 1.0 / d);
        ws->near[n - first] = d;
        ws->h[n++] = (lc_halfspace){a, lc_dot(a, q)}; /* at the obstacle, moved in below */
    }
    for (int i = first; i < n; i++)
        ws->h[i].b -= passage_keep(ws->h + first, ws->near, n - first, i - first,
                                   ws->near[i - first]);
    return n;
}

static const lc_region *motion_region(const lc_steer_input *in, lc_steer_ws *ws, lc_vec2 c,
                                      lc_vec2 aim, lc_region *out)
{
    const lc_region *r = in->region;
    const lc_robot *robot = in->robot;
    double standoff = in->standoff;
    if (!(standoff > 0) ||
        (robot->model == LC_MODEL_UNICYCLE && lc_dist(c, aim) > PARK_REACH && !in->at_mouth))
        return r;
    int n = r->nh;
    if (LC_GROW(ws->alloc, ws->h, ws->cap_h, n + in->grown->np) < 0 ||
        LC_GROW(ws->alloc, ws->near, ws->cap_near, n) < 0)
        return NULL;
    /* the region's lines moved in, held at the robot, a passage's by at
     * most its share */
    for (int i = 0; i < n; i++)
        ws->near[i] = lc_max(r->h[i].b - lc_dot(r->h[i].a, c), 0.0);
    for (int i = 0; i < n; i++) {
        double keep = passage_keep(r->h, ws->near, n, i, lc_min(standoff, ws->near[i]));
        ws->h[i] = (lc_halfspace){r->h[i].a, r->h[i].b - keep};
    }
    /* and no nearer an obstacle already within the standoff: the region's
     * lines are tangent anywhere on it, and a unicycle rounding a wall's
     * end came within 3 mm of its grown shape, where range noise made it
     * too_close */
    n = held_lines(in, ws, c, n);
    if (n < 0)
        return NULL;
    *out = *r;
    out->h = ws->h;
    out->nh = n;
    return out;
}

/*
 * Where the robot heads: the target, or, when the target is the waypoint's
 * projection onto the region's edge, a point standoff further in, toward
 * the ellipse centre (inside by convexity), so that it stops by the goal
 * term rather than by the braking room of the motion region.
 *
 * Not a target within AIM_NEAR standoffs of the robot: pulled toward the
 * centre it can land beside or behind the robot. In a gap the region is
 * often a wedge whose apex holds the robot and its target a few
 * centimetres on, its ellipse in the room behind; every such frame aimed
 * the robot back, a unicycle turned away from the gap (and, turning,
 * kept on: lc_motion_keep_turning) until its stall watch refused the gap.
 * Measured on a wall with one gap 3 cm a side wider than the robot with
 * its margin (1 cm range noise; offsets 0, 0.8 and 1.6 m, walls 0.1 and
 * 0.5 m thick, 4 noise seeds, 24 runs): the unicycle passed 8, now 22; the
 * point model 17, now 19. Within AIM_NEAR the pull would turn the bearing
 * by more than asin(1 / AIM_NEAR), 14 degrees.
 */
#define AIM_NEAR 4.0 /* standoffs */

static lc_vec2 aim_point(const lc_steer_input *in)
{
    lc_vec2 to_centre = lc_sub(in->region->ellipse.d, in->target);
    double len = lc_len(to_centre);
    lc_vec2 c = lc_v2(in->pose.x, in->pose.y);
    if (!(in->standoff > 0) || lc_dist(in->target, in->waypoint) <= 1e-9 || !(len > 1e-9) ||
        lc_dist(in->target, c) < AIM_NEAR * in->standoff)
        return in->target;
    return lc_add(in->target, lc_scale(to_centre, lc_min(in->standoff, len) / len));
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

/* Some line of r keeps all of v[0..n) out (on or beyond it). */
static bool kept_out(const lc_region *r, const lc_vec2 *v, int n)
{
    for (int k = 0; k < r->nh; k++) {
        int i = 0;
        while (i < n && lc_dot(r->h[k].a, v[i]) >= r->h[k].b - 1e-12)
            i++;
        if (i == n)
            return true;
    }
    return false;
}

/* The line h for the centre moved out by the footprint's reach along it. */
static lc_halfspace for_body(lc_halfspace h, const lc_vec2 *off, int n)
{
    return (lc_halfspace){h.a, h.b + lc_footprint_support(off, n, h.a)};
}

/*
 * The workspace region of a unicycle with a polygon footprint (see
 * lc_steer_drive): mr's lines and the separating lines of the grown
 * obstacles within reach that none of them keeps out, each moved out by
 * the footprint at the pose's heading. Reach: the longest braking path
 * (or the widest Tait-Kneser disc) and the circumscribed radius; an
 * obstacle farther than that from the centre (grown, it lies farther than
 * the obstacle itself: the centre is inside the footprint) no body on a
 * braking path can meet. NULL when out of memory.
 */
static const lc_region *workspace_region(const lc_steer_input *in, double latency,
                                         lc_steer_ws *ws, const lc_region *mr, lc_region *out)
{
    const lc_robot *robot = in->robot;
    const lc_region *r = in->region;
    lc_vec2 c = lc_v2(in->pose.x, in->pose.y), off[LC_FOOTPRINT_MAX];
    int nb = robot->n_footprint;
    lc_footprint_place(robot->footprint, nb, in->pose.yaw, false, off);
    double v = robot->v_max, path = lc_stopping_distance(v, latency, robot->a_max);
    double disc = robot->dw_max > 0 ? 2.0 * robot->a_max / robot->dw_max : INFINITY;
    double reach = lc_max(path, disc) + robot->radius + 1e-6;
    if (LC_GROW(ws->alloc, ws->hw, ws->cap_hw, mr->nh + in->grown->np) < 0)
        return NULL;
    int n = 0;
    for (int k = 0; k < mr->nh; k++)
        ws->hw[n++] = for_body(mr->h[k], off, nb);
    for (int j = 0; j < in->grown->np; j++) {
        int nv;
        const lc_vec2 *pv = lc_polyset_at(in->grown, j, &nv);
        if (box_distance(pv, nv, c) > reach || kept_out(mr, pv, nv))
            continue;
        lc_halfspace h;
        if (lc_convex_separate(r->v, r->nv, pv, nv, &h) < 0) {
            /* the region holds part of it (it should not): the body may
             * not move toward it at all */
            lc_vec2 a = toward(pv, nv, c);
            h = (lc_halfspace){a, lc_dot(a, c)};
        }
        ws->hw[n++] = for_body(h, off, nb);
    }
    *out = (lc_region){.h = ws->hw, .nh = n};
    return out;
}

int lc_steer_workspace(const lc_steer_input *in, lc_steer_ws *ws, lc_region *out)
{
    if (!lc_robot_has_footprint(in->robot) || !in->region || !in->grown)
        return -1;
    double latency = fmax(in->params->latency, in->dt);
    return workspace_region(in, latency, ws, in->region, out) ? 0 : -1;
}

/*
 * The point model's goal gain toward a target on the way on: the goal term
 * (k_p times the distance, 1 /s) is there to stop the robot at the
 * waypoint; short of it, where the path goes on, braking in the region is
 * what must slow it, and at k_p it slowed for every target the region's
 * edge put in its way. Measured (point model; done, and the median time
 * over the shortest of the runs done), at k_p and now: the families'
 * seeds 1-3, 417 and 418 of 420, 1.17 -> 1.16, dead_end 1.34 -> 1.28;
 * seeds 4-5, 278 and 280 of 280, 1.19 -> 1.18, dead_end 1.43 -> 1.40;
 * seed 1 without range noise, 140 both, 1.14 -> 1.13; with 2 cm, 136
 * both, 1.20 -> 1.19 (dead_end 1.35 -> 1.39); seeds 6-7, 278 both, 1.17
 * -> 1.16. The unicycle's law has its own gain (k_rho, 3).
 */
#define LC_STEER_WAY_GAIN 3.0 /* 1/s */

int lc_steer_drive(const lc_steer_input *in, lc_steer_ws *ws, lc_setpoint *out)
{
    lc_motion_params mp = *in->params;
    mp.latency = fmax(mp.latency, in->dt);
    mp.has_heading = in->on_way;
    mp.heading = in->heading;
    if (in->on_way && in->robot->model == LC_MODEL_POINT)
        mp.k_p = fmax(mp.k_p, LC_STEER_WAY_GAIN);
    lc_vec2 aim = aim_point(in);
    lc_region shrunk;
    lc_vec2 c = lc_v2(in->pose.x, in->pose.y);
    const lc_region *mr = motion_region(in, ws, c, aim, &shrunk);
    if (mr && mr != in->region)
        aim = slide_aim(mr, c, aim);
    bool uni = in->robot->model == LC_MODEL_UNICYCLE;
    bool body = uni && lc_robot_has_footprint(in->robot);
    lc_region work;
    const lc_region *wr = mr && body ? workspace_region(in, mp.latency, ws, mr, &work) : NULL;
    int rc = !mr || (body && !wr) ? -1
             : body ? lc_motion_unicycle_body(in->robot, &mp, wr, in->pose, aim, in->last, in->dt, out)
             : uni  ? lc_motion_unicycle(in->robot, &mp, mr, in->pose, aim, in->last, in->dt, out)
                    : lc_motion_point(in->robot, &mp, mr, in->pose, aim, in->last, in->dt, out);
    if (rc < 0)
        *out = lc_setpoint_stop(LC_LIMIT_NONE);
    return rc < 0 ? -1 : 0;
}

/*
 * Easing out of the margin. A robot whose centre has come inside grown
 * obstacles by less than the margin (the body itself clear of them: a
 * region that changed under it, a box pushed near) may move away from
 * them: the region (inflated without them) with, for each, a line through
 * the centre across the way out of it (the nearest point of its border),
 * at most LC_STEER_EASE_SPEED, heading straight out (LC_STEER_EASE_AIM
 * ahead along the sum of the ways out). Deeper in (the body within the margin of a
 * return, or no way out of one that is not into another), nothing.
 */
#define LC_STEER_EASE_AIM 0.5 /* m */

int lc_steer_ease_out(const lc_steer_input *in, lc_steer_ws *ws, lc_setpoint *out)
{
    const lc_region *r = in->region;
    lc_vec2 c = lc_v2(in->pose.x, in->pose.y);
    /* a unicycle's body turns as it eases out: the centre's law does not
     * keep its corners clear (it turns in place where that is free) */
    if (in->robot->model == LC_MODEL_UNICYCLE && lc_robot_has_footprint(in->robot))
        return 0;
    int held = 0;
    for (int j = 0; j < in->grown->np; j++) {
        int nv;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &nv);
        if (nv >= 3 && lc_convex_contains(v, nv, c, 0.0))
            held++;
    }
    if (held == 0)
        return 0;
    if (LC_GROW(ws->alloc, ws->h, ws->cap_h, r->nh + held) < 0)
        return -1;
    memcpy(ws->h, r->h, sizeof *r->h * (size_t)r->nh);
    int n = r->nh;
    lc_vec2 out_dir = lc_v2(0, 0);
    for (int j = 0; j < in->grown->np; j++) {
        int nv;
        const lc_vec2 *v = lc_polyset_at(in->grown, j, &nv);
        if (nv < 3 || !lc_convex_contains(v, nv, c, 0.0))
            continue;
        double depth = INFINITY;
        lc_vec2 exit = c;
        for (int i = 0; i < nv; i++) {
            lc_vec2 q;
            double d = lc_segment_distance(c, v[i], v[(i + 1) % nv], &q);
            if (d < depth) {
                depth = d;
                exit = q;
            }
        }
        if (!(depth < in->robot->margin) || !(depth > 1e-9))
            return 0; /* the body itself is within the margin, or no way out */
        lc_vec2 a = lc_scale(lc_sub(exit, c), 1.0 / depth);
        ws->h[n++] = (lc_halfspace){lc_scale(a, -1.0), -lc_dot(a, c)};
        out_dir = lc_add(out_dir, a);
    }
    double len = lc_len(out_dir);
    if (!(len > 1e-9))
        return 0; /* held from opposite sides: no way out */
    lc_region mr = *r;
    mr.h = ws->h;
    mr.nh = n;
    lc_robot slow = *in->robot;
    slow.v_max = lc_min(slow.v_max, LC_STEER_EASE_SPEED);
    lc_motion_params mp = *in->params;
    mp.latency = fmax(mp.latency, in->dt);
    /* out first, the way the obstacles' borders are nearest: the target
     * may lie past them (a unicycle turned toward it could not move) */
    lc_vec2 aim = slide_aim(&mr, c, lc_add(c, lc_scale(out_dir, LC_STEER_EASE_AIM / len)));
    int rc = slow.model == LC_MODEL_UNICYCLE
                 ? lc_motion_unicycle(&slow, &mp, &mr, in->pose, aim, in->last, in->dt, out)
                 : lc_motion_point(&slow, &mp, &mr, in->pose, aim, in->last, in->dt, out);
    if (rc < 0) {
        *out = lc_setpoint_stop(LC_LIMIT_NONE);
        return -1;
    }
    return 1;
}
