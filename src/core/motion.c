/*
 * motion.c - one control step for the point-mass and the unicycle model.
 *
 * Frames: pose, region and target are in the world frame; setpoints (last
 * and out) in the robot frame of the current pose (the point model's `last`
 * is taken as the robot's present velocity in that frame). Units SI. The
 * other model's fields of a setpoint are left zero.
 *
 * The braking promise. A setpoint is "safe" when the robot, starting now at
 * pose with the setpoint's velocity, holding it for params->latency and then
 * decelerating at robot->a_max to rest, keeps its centre inside the region:
 *   point:    along the straight line of the velocity, over
 *             lc_stopping_distance(|v|, latency, a_max);
 *   unicycle: when the robot can hold the curvature k = w / v while braking
 *             (|k| a_max <= dw_max): along that arc, over the same path
 *             length, checked exactly per halfspace (lc_motion_arc_margin);
 *             otherwise v and w fall at their full rates, the curvature only
 *             grows, and the path stays in the disc of radius 1 / |k|
 *             tangent at the pose (Tait-Kneser) and within its length of
 *             the pose: each line is checked against the nearer of the
 *             two discs instead.
 *   Both with LC_MOTION_EPS of rounding slack.
 * What the step guarantees:
 *   - every rate limit holds against `last` (|dv| <= a_max dt as a vector for
 *     the point model; |dv| <= a_max dt and |dw| <= dw_max dt for the
 *     unicycle), and so do |v| <= v_max, |w| <= w_max and "no reversing",
 *     always: from a `last` beyond them (a plan request's velocity, a robot
 *     description lowered mid-run) the step starts from `last` clamped to
 *     them, and the rate limits and the promises below hold from there;
 *   - point: the setpoint is safe whenever the maximal deceleration of `last`
 *     (same direction, speed |last| - a_max dt, or rest) is safe; in
 *     particular whenever `last` itself is safe here, since a slower velocity
 *     in the same direction is always safe when a faster one is;
 *   - unicycle: the setpoint is safe whenever the speed of the v window
 *     closest to 0 is safe with one of the w tried with it (the rate-limited
 *     w, both ways of braking on from `last`, 9 samples of the w window);
 *     in particular whenever `last` was
 *     safe and the region has not changed, and always when the robot can
 *     come to rest within one step (|v_last| <= a_max dt), since turning in
 *     place does not move the centre;
 *   - otherwise no setpoint within the rate limits is known to be safe and
 *     the step brakes as hard as the rate limit allows (speed |last| -
 *     a_max dt in the direction already travelled; the unicycle also picks
 *     the candidate w whose braking path leaves the region least), with
 *     limit "braking".
 *   Recursion: a robot that holds each setpoint for dt and then gets the
 *   next one keeps these promises from step to step exactly when
 *   params->latency >= dt (for a straight or constant-curvature brake,
 *   holding v for dt instead of braking costs v dt - v^2 / (2 a_max) of
 *   room, at most a_max dt^2 / 2); with latency 0 the centre can end up to
 *   a_max dt^2 / 2 beyond the promised stop (0.6 mm at the defaults).
 * Within those limits the step is the best it finds: the requested
 * velocity when safe, else the safe point closest to it on a search line
 * toward the maximal deceleration (bisection; always a verified-safe point,
 * not necessarily the global optimum of the non-convex safe set).
 *
 * A unicycle with a polygon footprint (lc_motion_unicycle_body) is checked
 * as a body in a workspace region instead: "safe" is the footprint's
 * vertices inside every line along the braking path (body_margin: exact
 * per vertex and line on an arc, since a rigid body on a circle turns about
 * its centre of rotation; at rest it turns about its own centre by the
 * heading change braking w takes; the Tait-Kneser case is bounded by the
 * disc plus the footprint turned over that change). Turning in place moves
 * a body, so the guarantee from rest needs the braked turn to fit; a large
 * heading error turns in place only where the whole turn fits (after
 * braking straight), else the law's own arc, or straight on, takes it to
 * where it can turn (body_turn_policy, body_straight).
 *
 * Unicycle reference heading: the waypoint's final heading is free, so the
 * polar law's goal frame is aligned with the bearing from robot to target.
 * Then beta = 0 and w = k_alpha alpha; the reduced system (rho, alpha) is
 * locally exponentially stable for k_rho > 0 and k_alpha - k_rho > 0 (the
 * textbook conditions without the one on beta), and the robot arrives
 * heading straight at the target. A target on the way on (the path goes on
 * past it) may ask for a heading there (params->has_heading): the goal
 * frame then has that heading, beta = heading - bearing (the textbook
 * law's k_beta < 0 swings the approach onto the line the path leaves
 * along), held within LC_MOTION_BETA_MAX so that the swing stays a nudge.
 * The law's w is held to the rate from which the turn can stop on the
 * heading it steers to (turn_stop, of w / k_alpha). When v_max or w_max
 * saturates, the law's curvature w / v is kept by lowering v, so the robot
 * never circles a target inside its turning circle.
 */
#include "motion.h"

#define LC_MOTION_EPS 1e-9       /* m, rounding slack of the braking checks */
#define LC_MOTION_TINY 1e-12     /* m or m/s below which a length or speed is 0 */
#define LC_MOTION_SLIDE 1e-3     /* m, a line this near the robot is one it slides along */
#define LC_SEARCH_COARSE 16      /* samples of the unicycle's v search */
#define LC_SEARCH_BISECT 40      /* bisection steps of either search */
#define LC_FALLBACK_W 8          /* w samples when no safe v exists */

const char *lc_limit_name(lc_limit limit)
{
    static const char *const names[LC_LIMIT_COUNT] = {
        "none", "goal", "top_speed", "braking", "accel", "turning",
        "turn_rate", "too_close", "stale", "blocked", "arrived", "idle",
    };
    if ((int)limit < 0 || limit >= LC_LIMIT_COUNT)
        return "unknown";
    return names[limit];
}

void lc_motion_params_default(lc_motion_params *params)
{
    *params = (lc_motion_params){
        .k_p = 1.0,
        .k_rho = 3.0,   /* textbook gains (Siegwart et al. 3.6), from memory */
        .k_alpha = 8.0,
        .k_beta = -1.5,
        .turn_in_place = 1.0,
        .latency = 0.0,
    };
}

lc_setpoint lc_setpoint_stop(lc_limit why)
{
    return (lc_setpoint){0.0, 0.0, 0.0, 0.0, why};
}

double lc_stopping_distance(double v, double t_r, double a)
{
    double speed = fabs(v);
    if (speed == 0.0)
        return 0.0;
    if (!(a > 0.0))
        return isnan(a) ? NAN : INFINITY;
    return speed * t_r + speed * speed / (2.0 * a);
}

/* The largest speed whose stopping distance (latency t_r, deceleration a) is <= s. */
static double braking_speed(double s, double t_r, double a)
{
    if (!(s > 0.0))
        return 0.0;
    /* Root of v t_r + v^2 / (2a) = s, written without cancellation. */
    return 2.0 * s / (t_r + sqrt(t_r * t_r + 2.0 * s / a));
}

void lc_motion_polar(const lc_motion_params *params, double rho, double alpha,
                     double beta, double *v, double *w)
{
    *v = params->k_rho * rho;
    *w = params->k_alpha * alpha + params->k_beta * beta;
}

static double sinc(double x)
{
    return fabs(x) < 1e-4 ? 1.0 - x * x / 6.0 : sin(x) / x;
}

lc_pose lc_motion_arc(lc_pose pose, double kappa, double s)
{
    /* Chord of length s sinc(kappa s / 2) along the mean heading. */
    double half = 0.5 * kappa * s;
    double chord = s * sinc(half);
    double mid = pose.yaw + half;
    return (lc_pose){pose.x + chord * cos(mid), pose.y + chord * sin(mid),
                     lc_wrap_angle(pose.yaw + kappa * s)};
}

/* x mod 2 pi into [0, 2 pi). */
static double mod_2pi(double x)
{
    double m = fmod(x, 2.0 * LC_PI);
    return m < 0 ? m + 2.0 * LC_PI : m;
}

/*
 * max a.p over the arc: an end, or the interior point where the heading is
 * perpendicular to a with a.p turning from rising to falling (heading
 * psi + pi/2 when turning left, psi - pi/2 when turning right).
 */
static double arc_support(lc_vec2 a, lc_pose pose, double kappa, double s, lc_vec2 end)
{
    lc_vec2 start = {pose.x, pose.y};
    double top = fmax(lc_dot(a, start), lc_dot(a, end));
    double turn = kappa * s;
    if (kappa == 0.0 || turn == 0.0)
        return top;
    double lo = fmin(0.0, turn), hi = fmax(0.0, turn);
    double crit = atan2(a.y, a.x) + (kappa > 0 ? 0.5 * LC_PI : -0.5 * LC_PI);
    double d = lo + mod_2pi(crit - pose.yaw - lo);
    if (d <= hi) {
        lc_pose q = lc_motion_arc(pose, kappa, d / kappa);
        top = fmax(top, lc_dot(a, lc_v2(q.x, q.y)));
    }
    return top;
}

double lc_motion_arc_margin(const lc_region *region, lc_pose pose, double kappa,
                            double s)
{
    if (!isfinite(kappa) || !isfinite(s) || !isfinite(pose.x) || !isfinite(pose.y) ||
        !isfinite(pose.yaw))
        return NAN;
    lc_pose e = lc_motion_arc(pose, kappa, s);
    lc_vec2 end = {e.x, e.y};
    double m = INFINITY;
    for (int i = 0; i < region->nh; i++) {
        double slack = region->h[i].b - arc_support(region->h[i].a, pose, kappa, s, end);
        if (slack < m)
            m = slack;
    }
    return m;
}

static double clampd(double x, double lo, double hi)
{
    return x < lo ? lo : (x > hi ? hi : x);
}

/*
 * The values reachable from c within rate r, inside [lo, hi]. The robot's
 * limits come first: from a value beyond them (a robot description lowered
 * mid-run, a plan request's velocity) the window starts at the nearest
 * limit, so that braking is still possible from there (pinning the window
 * to the limit alone left no slower speed to brake with).
 */
static void rate_window(double c, double r, double lo, double hi, double *wlo, double *whi)
{
    c = clampd(c, lo, hi);
    *wlo = fmax(c - r, lo);
    *whi = fmin(c + r, hi);
}

static bool finite_setpoint(const lc_setpoint *sp, bool point)
{
    return point ? isfinite(sp->vx) && isfinite(sp->vy) : isfinite(sp->v) && isfinite(sp->w);
}

static bool args_ok(const lc_robot *robot, const lc_motion_params *params,
                    const lc_region *region, lc_pose pose, lc_vec2 target,
                    const lc_setpoint *last, double dt, bool point)
{
    if (!robot || !params || !region || region->nh <= 0 || !region->h)
        return false;
    if (!(dt > 0.0) || !isfinite(dt) || !isfinite(pose.x) || !isfinite(pose.y) ||
        !isfinite(pose.yaw) || !lc_vec2_finite(target))
        return false;
    if (last && !finite_setpoint(last, point))
        return false;
    if (!(robot->a_max > 0.0) || !isfinite(robot->a_max) || !(robot->v_max >= 0.0) ||
        !isfinite(robot->v_max))
        return false;
    if (!point && (!(robot->w_max >= 0.0) || !isfinite(robot->w_max) ||
                   !(robot->dw_max >= 0.0) || !isfinite(robot->dw_max)))
        return false;
    return isfinite(params->k_p) && isfinite(params->k_rho) && isfinite(params->k_alpha) &&
           isfinite(params->k_beta) && isfinite(params->turn_in_place) &&
           params->latency >= 0.0 && isfinite(params->latency) &&
           (!params->has_heading || isfinite(params->heading));
}

/* What every step does first: *out becomes a stop; LC_ERR_BAD_INPUT when an
 * argument is unusable. */
static int start_step(const lc_robot *robot, const lc_motion_params *params,
                      const lc_region *region, lc_pose pose, lc_vec2 target,
                      const lc_setpoint *last, double dt, bool point, lc_setpoint *out)
{
    if (!out)
        return LC_ERR_BAD_INPUT;
    *out = lc_setpoint_stop(LC_LIMIT_NONE);
    return args_ok(robot, params, region, pose, target, last, dt, point) ? LC_OK
                                                                          : LC_ERR_BAD_INPUT;
}

/* Path length from speed to rest, latency included. */
static double brake_length(const lc_robot *robot, const lc_motion_params *params, double speed)
{
    return lc_stopping_distance(speed, params->latency, robot->a_max);
}

/* ---- point mass ------------------------------------------------------ */

/* Braking along the world-frame velocity v stays inside, and |v| <= v_max. */
static bool point_safe(const lc_robot *robot, const lc_motion_params *params,
                       const lc_region *region, lc_vec2 p, lc_vec2 v)
{
    double speed = lc_len(v);
    if (speed > robot->v_max * (1.0 + 1e-12) + LC_MOTION_TINY)
        return false;
    if (speed <= LC_MOTION_TINY)
        return lc_region_margin(region, p) >= -LC_MOTION_EPS;
    lc_pose ray = {p.x, p.y, atan2(v.y, v.x)};
    return lc_motion_arc_margin(region, ray, 0.0, brake_length(robot, params, speed)) >=
           -LC_MOTION_EPS;
}

/* Toward the target at min(v_max, k_p d, braking speed), world frame. */
static lc_vec2 point_desired(const lc_robot *robot, const lc_motion_params *params,
                             const lc_region *region, lc_vec2 p, lc_vec2 target,
                             lc_limit *limit)
{
    lc_vec2 d = lc_sub(target, p);
    double dist = lc_len(d);
    if (dist <= LC_MOTION_TINY) {
        *limit = LC_LIMIT_NONE;
        return lc_v2(0, 0);
    }
    lc_vec2 u = lc_scale(d, 1.0 / dist);
    double speed = robot->v_max;
    *limit = LC_LIMIT_TOP_SPEED;
    double goal = params->k_p * dist;
    if (goal < speed) {
        speed = goal;
        *limit = LC_LIMIT_GOAL;
    }
    double room = lc_region_ray_exit(region, p, u);
    double brake = braking_speed(room, params->latency, robot->a_max);
    if (brake < speed) {
        speed = brake;
        *limit = LC_LIMIT_BRAKING;
    }
    return lc_scale(u, fmax(speed, 0.0));
}

/*
 * v_c is not safe: the safe point nearest to it on the line from the
 * maximal deceleration v_m, or v_m itself when even that is not safe.
 */
static lc_vec2 point_fallback(const lc_robot *robot, const lc_motion_params *params,
                              const lc_region *region, lc_vec2 p, lc_vec2 v0,
                              lc_vec2 v_c, double step)
{
    double s0 = lc_len(v0);
    lc_vec2 v_m = s0 > step ? lc_scale(v0, (s0 - step) / s0) : lc_v2(0, 0);
    if (!point_safe(robot, params, region, p, v_m))
        return v_m;
    double lo = 0.0, hi = 1.0;
    for (int i = 0; i < LC_SEARCH_BISECT; i++) {
        double mid = 0.5 * (lo + hi);
        if (point_safe(robot, params, region, p, lc_lerp(v_m, v_c, mid)))
            lo = mid;
        else
            hi = mid;
    }
    return lc_lerp(v_m, v_c, lo);
}

/*
 * v with its components into the lines the robot sits on taken out (twice
 * round, for a corner): sliding along them. A velocity turning a little
 * from one frame to the next (the acceleration limit) would otherwise head
 * a hair into such a line and have no braking room at all.
 */
static lc_vec2 point_slide(const lc_region *region, lc_vec2 p, lc_vec2 v)
{
    for (int pass = 0; pass < 2; pass++)
        for (int i = 0; i < region->nh; i++) {
            const lc_halfspace *h = &region->h[i];
            double into = lc_dot(h->a, v);
            if (into > 0 && h->b - lc_dot(h->a, p) <= LC_MOTION_SLIDE)
                v = lc_sub(v, lc_scale(h->a, into));
        }
    return v;
}

int lc_motion_point(const lc_robot *robot, const lc_motion_params *params,
                    const lc_region *region, lc_pose pose, lc_vec2 target_world,
                    const lc_setpoint *last, double dt, lc_setpoint *out)
{
    int rc = start_step(robot, params, region, pose, target_world, last, dt, true, out);
    if (rc < 0)
        return rc;
    lc_vec2 p = {pose.x, pose.y};
    lc_vec2 v0 = last ? lc_rotate(lc_v2(last->vx, last->vy), pose.yaw) : lc_v2(0, 0);
    /* From beyond v_max start at v_max (see rate_window): the fallback's
     * braking from there is then checked like any other (scaling an
     * unchecked braking velocity down afterwards left the region). */
    double speed0 = lc_len(v0);
    if (speed0 > robot->v_max)
        v0 = lc_scale(v0, robot->v_max / speed0);
    lc_limit limit;
    lc_vec2 v_des = point_desired(robot, params, region, p, target_world, &limit);
    double step = robot->a_max * dt;
    lc_vec2 dv = lc_sub(v_des, v0);
    double ldv = lc_len(dv);
    lc_vec2 v = v_des;
    if (ldv > step) {
        v = lc_add(v0, lc_scale(dv, step / ldv));
        limit = LC_LIMIT_ACCEL;
    }
    if (!point_safe(robot, params, region, p, v)) {
        /* alternate projections: along the lines it sits on, and within
         * a_max dt of the last setpoint (both convex) */
        lc_vec2 slid = v_des;
        for (int k = 0; k < 8; k++) {
            slid = point_slide(region, p, slid);
            lc_vec2 ds = lc_sub(slid, v0);
            double lds = lc_len(ds);
            if (lds > step)
                slid = lc_add(v0, lc_scale(ds, step / lds));
        }
        v = point_safe(robot, params, region, p, slid)
                ? slid
                : point_fallback(robot, params, region, p, v0, v, step);
        limit = LC_LIMIT_BRAKING;
    }
    /* Rounding only, now that v0 and v_des are within v_max; a step that
     * fell back on braking stays labelled so (it may be one that could not
     * slow at all: a_max dt lost in rounding against the speed) */
    double speed = lc_len(v);
    if (speed > robot->v_max) {
        v = lc_scale(v, robot->v_max / speed);
        if (limit != LC_LIMIT_BRAKING)
            limit = LC_LIMIT_TOP_SPEED;
    }
    lc_vec2 v_robot = lc_rotate(v, -pose.yaw);
    out->vx = v_robot.x;
    out->vy = v_robot.y;
    out->limit = limit;
    return LC_OK;
}

/* ---- unicycle -------------------------------------------------------- */

typedef struct uni_ctx {
    const lc_robot *robot;
    const lc_motion_params *params;
    const lc_region *region; /* for the centre; for a body the workspace */
    lc_pose pose;
    int n_body;              /* 0: the centre is checked, else the footprint */
    lc_vec2 body[LC_FOOTPRINT_MAX]; /* its vertices about the centre, world axes */
    double body_r;           /* their farthest distance from the centre */
} uni_ctx;

static uni_ctx uni_ctx_of(const lc_robot *robot, const lc_motion_params *params,
                          const lc_region *region, lc_pose pose, bool body)
{
    uni_ctx c = {.robot = robot, .params = params, .region = region, .pose = pose};
    if (body && robot->n_footprint > 0) {
        c.n_body = robot->n_footprint;
        lc_footprint_place(robot->footprint, c.n_body, pose.yaw, false, c.body);
        c.body_r = lc_footprint_circumradius(c.body, c.n_body);
    }
    return c;
}

/* ---- the footprint along the braking path ---------------------------- */

/*
 * max of a . R(t) e for t from 0 to turn (either sign), e_end = R(turn) e,
 * |a| = 1: an end, or |e| where R(t) e points along a within the sweep
 * (tested with cross products: the sweep from e to e_end holds a).
 */
static double rot_reach(lc_vec2 a, lc_vec2 e, lc_vec2 e_end, double turn)
{
    double top = lc_max(lc_dot(a, e), lc_dot(a, e_end));
    if (turn < 0) {
        lc_vec2 t = e;
        e = e_end;
        e_end = t;
        turn = -turn;
    }
    bool passes = turn >= 2.0 * LC_PI ||
                  (turn <= LC_PI ? lc_cross(e, a) >= 0 && lc_cross(a, e_end) >= 0
                                 : !(lc_cross(e_end, a) > 0 && lc_cross(a, e) > 0));
    return passes ? lc_max(top, lc_len(e)) : top;
}

/* The body's vertices about pivot q turning by `turn` as the rigid body
 * they belong to: their offsets from q at the start and the end. */
typedef struct body_turn {
    lc_vec2 e[LC_FOOTPRINT_MAX], e_end[LC_FOOTPRINT_MAX];
    int n;
    double turn;
} body_turn;

static void body_turn_about(const uni_ctx *c, lc_vec2 q, double turn, body_turn *bt)
{
    lc_vec2 cs = lc_v2(cos(turn), sin(turn)), p = lc_v2(c->pose.x, c->pose.y);
    bt->n = c->n_body;
    bt->turn = turn;
    for (int i = 0; i < c->n_body; i++) {
        lc_vec2 e = lc_sub(lc_add(p, c->body[i]), q);
        bt->e[i] = e;
        bt->e_end[i] = lc_v2(cs.x * e.x - cs.y * e.y, cs.y * e.x + cs.x * e.y);
    }
}

/*
 * Where the centre (or the pivot a body turns about) may be along a braking
 * path: in each of n discs (centre q[i], radius r[i]), so that along a unit
 * normal a it reaches no farther than the least of a . q[i] + r[i].
 */
typedef struct pivot_set {
    lc_vec2 q[2];
    double r[2];
    int n;
} pivot_set;

static pivot_set pivot_at(lc_vec2 q)
{
    return (pivot_set){.q = {q}, .r = {0.0}, .n = 1};
}

static double pivot_reach(const pivot_set *ps, lc_vec2 a)
{
    double reach = INFINITY;
    for (int i = 0; i < ps->n; i++)
        reach = lc_min(reach, lc_dot(a, ps->q[i]) + ps->r[i]);
    return reach;
}

/*
 * Braking without holding the curvature (|w / v| a_max > dw_max): the
 * centre stays in the disc of radius |v / w| tangent to the heading at the
 * pose (Tait-Kneser, see uni_margin), and within the path's length,
 * brake_length(|v|), of the pose. The second disc is the smaller one at low
 * speed: a crawl with a tight turn goes a few millimetres, and the first
 * alone would ask for a disc of 1 / |kappa| beside the robot to be free.
 */
static pivot_set braking_discs(const uni_ctx *c, double v, double w)
{
    double r = v / w; /* signed: centre to the left when positive */
    lc_vec2 p = {c->pose.x, c->pose.y};
    lc_vec2 centre = lc_add(p, lc_scale(lc_v2(-sin(c->pose.yaw), cos(c->pose.yaw)), r));
    return (pivot_set){.q = {centre, p},
                       .r = {fabs(r), brake_length(c->robot, c->params, fabs(v))},
                       .n = 2};
}

/* Least slack of the region's lines over the body turning (as set up in
 * bt) about a pivot that may lie anywhere in ps. */
static double turn_margin(const lc_region *r, const pivot_set *ps, const body_turn *bt)
{
    double m = INFINITY;
    for (int k = 0; k < r->nh; k++) {
        lc_vec2 a = r->h[k].a;
        double top = -INFINITY;
        for (int i = 0; i < bt->n; i++)
            top = lc_max(top, rot_reach(a, bt->e[i], bt->e_end[i], bt->turn));
        m = lc_min(m, r->h[k].b - pivot_reach(ps, a) - top);
    }
    return m;
}

/* Heading change while w falls to 0 at dw_max after the latency (a full
 * turn or more when it cannot fall). */
static double braking_turn(const uni_ctx *c, double w)
{
    double dw = c->robot->dw_max;
    double t = fabs(w) * c->params->latency + (dw > 0 ? w * w / (2.0 * dw) : INFINITY);
    t = w == 0.0 ? 0.0 : lc_min(t, 2.0 * LC_PI);
    return w < 0 ? -t : t;
}

/* Curvature below which an arc is taken as straight, its bend bounded. */
#define LC_MOTION_STRAIGHT 1e-4 /* 1/m */

/*
 * The body's margin along the braking path of (v, w), the centre's cases
 * of uni_margin with the footprint's rotation added:
 *   - at rest (|v| tiny), the body turns about the centre by the heading
 *     change braking w takes;
 *   - holding the curvature, every point of the body turns about the
 *     instantaneous centre of rotation by kappa s (exact per vertex and
 *     line); nearly straight, the straight path plus a bound on the bend
 *     (kappa s^2 / 2 of the centre, |kappa s| body_r of the footprint);
 *   - not holding it, the centre stays in the disc of radius |v / w|
 *     (Tait-Kneser) and within the path's length of the pose
 *     (braking_discs) while the heading turns monotonically by
 *     braking_turn: the body stays in those discs plus the footprint
 *     turned over that range (support functions add), which is checked.
 */
static double body_margin(const uni_ctx *c, double v, double w)
{
    lc_vec2 p = {c->pose.x, c->pose.y};
    body_turn bt;
    if (fabs(v) <= LC_MOTION_TINY) {
        pivot_set at = pivot_at(p);
        body_turn_about(c, p, braking_turn(c, w), &bt);
        return turn_margin(c->region, &at, &bt);
    }
    double kappa = w / v;
    lc_vec2 left = lc_v2(-sin(c->pose.yaw), cos(c->pose.yaw));
    if (fabs(kappa) * c->robot->a_max > c->robot->dw_max) {
        pivot_set discs = braking_discs(c, v, w);
        /* offsets about p, which may be anywhere in the discs */
        body_turn_about(c, p, braking_turn(c, w), &bt);
        return turn_margin(c->region, &discs, &bt);
    }
    double len = brake_length(c->robot, c->params, fabs(v)), s = v > 0 ? len : -len;
    if (fabs(kappa) <= LC_MOTION_STRAIGHT) {
        lc_vec2 u = lc_v2(cos(c->pose.yaw), sin(c->pose.yaw));
        double bend = fabs(kappa) * s * s / 2.0 + fabs(kappa * s) * c->body_r;
        double m = INFINITY;
        for (int k = 0; k < c->region->nh; k++) {
            lc_vec2 a = c->region->h[k].a;
            double top = lc_dot(a, p) + lc_footprint_support(c->body, c->n_body, a);
            m = lc_min(m, c->region->h[k].b - top - lc_max(0.0, s * lc_dot(a, u)) - bend);
        }
        return m;
    }
    lc_vec2 icr = lc_add(p, lc_scale(left, 1.0 / kappa));
    pivot_set at = pivot_at(icr);
    body_turn_about(c, icr, kappa * s, &bt);
    return turn_margin(c->region, &at, &bt);
}

/*
 * Least margin along the braking path of (v, w). When the robot can hold the
 * curvature w / v while braking (|w / v| a_max <= dw_max) that path is the
 * constant-curvature arc. Otherwise the best it can do is v and w both
 * falling at their full rates; then the curvature only grows, and by the
 * Tait-Kneser theorem (osculating circles of a curve with monotone
 * curvature are nested) the path stays in the disc of radius |v / w|
 * tangent to the heading at the pose; it also stays within its own length
 * of the pose. Each line is checked against the nearer of the two discs'
 * reaches (braking_discs). The latency part runs on the same circle in
 * both cases.
 */
static double uni_margin(const uni_ctx *c, double v, double w)
{
    if (c->n_body > 0)
        return body_margin(c, v, w);
    lc_vec2 p = {c->pose.x, c->pose.y};
    if (fabs(v) <= LC_MOTION_TINY)
        return lc_region_margin(c->region, p);
    double kappa = w / v;
    if (fabs(kappa) * c->robot->a_max > c->robot->dw_max) {
        pivot_set discs = braking_discs(c, v, w);
        double m = INFINITY;
        for (int k = 0; k < c->region->nh; k++)
            m = lc_min(m, c->region->h[k].b - pivot_reach(&discs, c->region->h[k].a));
        return m;
    }
    double len = brake_length(c->robot, c->params, fabs(v));
    return lc_motion_arc_margin(c->region, c->pose, kappa, v > 0 ? len : -len);
}

static bool uni_safe(const uni_ctx *c, double v, double w)
{
    return uni_margin(c, v, w) >= -LC_MOTION_EPS;
}

/* The polar law with the limits on v and w, keeping its curvature. */
double lc_motion_keep_turning(double alpha, double w0)
{
    if (fabs(alpha) > LC_PI - LC_MOTION_TURN_KEEP && fabs(w0) > 1e-3 && alpha * w0 < 0)
        return alpha < 0 ? alpha + 2.0 * LC_PI : alpha - 2.0 * LC_PI;
    return alpha;
}

/*
 * The turn rate from which the heading comes to rest on the bearing,
 * slowing at LC_MOTION_TURN_EASE dw_max: the polar law's w is held to it.
 * The law alone (k_alpha alpha, up to w_max) turns at full rate until a
 * few degrees short, and the turn then takes up to w_max^2 / (2 dw_max) of
 * heading (0.25 rad at the defaults) to stop: it swings past the bearing
 * and back. Where the region is a channel no wider than the robot with a
 * few centimetres, the target a few centimetres ahead (whose bearing moves
 * with the range noise), every swing meets the channel's sides and brakes
 * the robot to a crawl. The fraction was measured on scripts/gaps.py's
 * scenes and the cluttered corridors (docs/DESIGN.md, step 12): a quarter
 * passed the most gaps; the corridors came out alike from a quarter to the
 * whole rate. Not for a polygon footprint: over the families with a
 * 1.0 x 0.5 m footprint, two noise seeds, a unicycle held so arrived in 105
 * and 101 of 140 worlds, one not held in 119 and 118 (113 and 111 before
 * either change). Such a body turns in place only where the whole turn is
 * free and otherwise drives the law's arc to where it can; a held w widens
 * that arc (the likely cause, not traced run by run).
 */
#define LC_MOTION_TURN_EASE 0.25

/*
 * The most a wanted heading at the target turns the polar law's goal
 * frame from the bearing (beta). Measured closed loop with the unicycle,
 * the heading that of the path 0.3 m past the target (session.c drive):
 * on the families' seeds 1-3 (420 runs) 413 done (414 without), the median
 * time over the shortest 1.16 -> 1.09 on cluttered_corridor, 1.31 -> 1.23
 * on dead_end, 1.18 -> 1.10 on l_corridor; seeds 4-5 279 of 280 both,
 * dead_end 1.55 -> 1.47 on seed 4; 240 cluttered runs 232 both (1.17 ->
 * 1.11). Unheld, dead_end went to 1.61, 58 of 60 done (2 ran out of
 * time); held within 0.25 rad it gained about half as much.
 */
#define LC_MOTION_BETA_MAX 0.5 /* rad */

static double turn_stop(const lc_robot *robot, double alpha)
{
    return sqrt(2.0 * LC_MOTION_TURN_EASE * robot->dw_max * fabs(alpha));
}

/* The polar law toward target with the limits on v and w; *alpha the
 * heading error it steers by. in_place: a large error turns in place (else
 * the law's own arc, its curvature kept). */
static lc_limit uni_desired(const uni_ctx *c, lc_vec2 target, double w0, bool in_place,
                            double *v_d, double *w_d, double *alpha_out)
{
    const lc_robot *robot = c->robot;
    lc_vec2 d = lc_sub(target, lc_v2(c->pose.x, c->pose.y));
    double rho = lc_len(d);
    *v_d = *w_d = 0.0;
    if (rho <= LC_MOTION_TINY)
        return LC_LIMIT_NONE;
    double bearing = atan2(d.y, d.x);
    double alpha = lc_motion_keep_turning(lc_wrap_angle(bearing - c->pose.yaw), w0);
    double dir = 1.0;
    if (robot->reverse && fabs(alpha) > 0.5 * LC_PI) {
        dir = -1.0;                         /* drive the rear at the target */
        alpha = lc_wrap_angle(alpha + LC_PI);
    }
    *alpha_out = alpha;
    double beta = 0.0; /* goal frame along the bearing: see the file comment */
    if (c->params->has_heading && dir > 0)
        beta = clampd(lc_wrap_angle(c->params->heading - bearing), -LC_MOTION_BETA_MAX,
                      LC_MOTION_BETA_MAX);
    double v_law, w_law;
    lc_motion_polar(c->params, rho, alpha, beta, &v_law, &w_law);
    if (c->n_body == 0) {
        double steer = beta != 0.0 && c->params->k_alpha > 0 ? w_law / c->params->k_alpha : alpha;
        double w_stop = turn_stop(robot, steer);
        w_law = clampd(w_law, -w_stop, w_stop);
    }
    if (in_place && fabs(alpha) > c->params->turn_in_place) {
        *w_d = clampd(w_law, -robot->w_max, robot->w_max);
        return LC_LIMIT_TURNING;
    }
    double speed = robot->v_max;
    lc_limit limit = LC_LIMIT_TOP_SPEED;
    if (v_law < speed) {
        speed = v_law;
        limit = LC_LIMIT_GOAL;
    }
    if (!(speed > 0.0)) {
        *w_d = clampd(w_law, -robot->w_max, robot->w_max);
        return limit;
    }
    double kappa = w_law / speed;
    if (fabs(kappa) * speed > robot->w_max) {
        speed = robot->w_max / fabs(kappa);
        limit = LC_LIMIT_TURN_RATE;
    }
    *v_d = dir * speed;
    *w_d = clampd(kappa * speed, -robot->w_max, robot->w_max);
    return limit;
}

/*
 * (v_c, w) is not safe: the largest safe v from v_c toward v_stop (coarse
 * scan, then bisection between the last unsafe and the first safe sample).
 * Returns false when no sample is safe.
 */
static bool uni_slow(const uni_ctx *c, double v_c, double v_stop, double w, double *v)
{
    if (v_c == v_stop)
        return false;
    double prev = v_c;
    for (int k = 1; k <= LC_SEARCH_COARSE; k++) {
        double vk = v_c + (v_stop - v_c) * k / LC_SEARCH_COARSE;
        if (k == LC_SEARCH_COARSE)
            vk = v_stop;
        if (!uni_safe(c, vk, w)) {
            prev = vk;
            continue;
        }
        double bad = prev, good = vk;
        for (int i = 0; i < LC_SEARCH_BISECT; i++) {
            double mid = 0.5 * (bad + good);
            if (uni_safe(c, mid, w))
                good = mid;
            else
                bad = mid;
        }
        *v = good;
        return true;
    }
    return false;
}

/*
 * No safe v: the w of the window whose braking path at v leaves the region
 * least (the safe one nearest to w when there are several). The candidates
 * include the two ways of braking on from the last setpoint (w0 v / v0, which
 * keeps its curvature, and the window end nearest 0), so that a last setpoint
 * that was safe always has a safe successor.
 */
static double uni_best_w(const uni_ctx *c, double v, double w, double v0, double w0,
                         double wlo, double whi)
{
    double cand[LC_FALLBACK_W + 3];
    int n = 0;
    for (int j = 0; j <= LC_FALLBACK_W; j++)
        cand[n++] = wlo + (whi - wlo) * j / LC_FALLBACK_W;
    cand[n++] = clampd(0.0, wlo, whi);
    if (v0 != 0.0)
        cand[n++] = clampd(w0 * v / v0, wlo, whi);
    double best = w, best_m = uni_margin(c, v, w);
    for (int j = 0; j < n; j++) {
        double m = uni_margin(c, v, cand[j]);
        bool best_safe = best_m >= -LC_MOTION_EPS;
        if (!best_safe ? m > best_m
                       : (m >= -LC_MOTION_EPS && fabs(cand[j] - w) < fabs(best - w))) {
            best = cand[j];
            best_m = m;
        }
    }
    return best;
}

/* The body turned in place by alpha (the whole turn to face the target)
 * stays in the region. */
static bool body_turn_free(const uni_ctx *c, double alpha)
{
    lc_vec2 p = {c->pose.x, c->pose.y};
    body_turn bt;
    pivot_set at = pivot_at(p);
    body_turn_about(c, p, alpha, &bt);
    return turn_margin(c->region, &at, &bt) >= -LC_MOTION_EPS;
}

/*
 * A body with its target far off its heading turns in place only where the
 * whole turn is free (its swept area, exact, in the workspace); it brakes
 * straight first, since turning while it still rolls swings it off the line
 * it came along, and in a corridor it only just turns round in, that line
 * is where it fits. Where the turn is not free (a long robot in a doorway)
 * it drives the polar law's arc instead, or on straight as far as that is
 * safe (body_straight), to where it can turn.
 */
static lc_limit body_turn_policy(const uni_ctx *c, lc_vec2 target, double v0, double w0,
                                 double dt, double alpha, double *v_d, double *w_d)
{
    if (!body_turn_free(c, alpha))
        return uni_desired(c, target, w0, false, v_d, w_d, &alpha);
    if (fabs(v0) > c->robot->a_max * dt)
        *w_d = 0.0;
    return LC_LIMIT_TURNING;
}

/*
 * A body that may not turn where it is (turning swings its corners: into
 * unseen space behind it, toward a wall beside it) may still drive on
 * straight: the w of the window nearest 0 with the largest safe v up to
 * v_c. False (nothing changed) for a centre, or when that is not safe
 * either.
 */
static bool body_straight(const uni_ctx *c, double v_c, double v_stop, double wlo, double whi,
                          double *v, double *w)
{
    double ws = clampd(0.0, wlo, whi);
    if (c->n_body == 0)
        return false;
    if (uni_safe(c, v_c, ws)) {
        *v = v_c;
        *w = ws;
        return true;
    }
    if (!uni_slow(c, v_c, v_stop, ws, v))
        return false;
    *w = ws;
    return true;
}

static int unicycle_step(const lc_robot *robot, const lc_motion_params *params,
                         const lc_region *region, lc_pose pose, lc_vec2 target_world,
                         const lc_setpoint *last, double dt, bool body, lc_setpoint *out)
{
    int rc = start_step(robot, params, region, pose, target_world, last, dt, false, out);
    if (rc < 0)
        return rc;
    uni_ctx c = uni_ctx_of(robot, params, region, pose, body);
    double v0 = last ? last->v : 0.0, w0 = last ? last->w : 0.0;
    double v_d, w_d, alpha;
    lc_limit limit = uni_desired(&c, target_world, w0, true, &v_d, &w_d, &alpha);
    if (c.n_body > 0 && limit == LC_LIMIT_TURNING)
        limit = body_turn_policy(&c, target_world, v0, w0, dt, alpha, &v_d, &w_d);

    double vlo, vhi, wlo, whi;
    rate_window(v0, robot->a_max * dt, robot->reverse ? -robot->v_max : 0.0, robot->v_max,
                &vlo, &vhi);
    rate_window(w0, robot->dw_max * dt, -robot->w_max, robot->w_max, &wlo, &whi);
    double v = clampd(v_d, vlo, vhi), w = clampd(w_d, wlo, whi);
    if (limit != LC_LIMIT_TURNING) {
        if (v != v_d)
            limit = LC_LIMIT_ACCEL;
        else if (w != w_d)
            limit = LC_LIMIT_TURN_RATE;
    }
    if (!uni_safe(&c, v, w)) {
        double v_stop = clampd(0.0, vlo, vhi);
        limit = LC_LIMIT_BRAKING;
        if (!uni_slow(&c, v, v_stop, w, &v) && !body_straight(&c, v, v_stop, wlo, whi, &v, &w)) {
            v = v_stop;
            w = uni_best_w(&c, v, w, v0, w0, wlo, whi);
        }
    }
    out->v = v;
    out->w = w;
    out->limit = limit;
    return LC_OK;
}

int lc_motion_unicycle(const lc_robot *robot, const lc_motion_params *params,
                       const lc_region *region, lc_pose pose, lc_vec2 target_world,
                       const lc_setpoint *last, double dt, lc_setpoint *out)
{
    return unicycle_step(robot, params, region, pose, target_world, last, dt, false, out);
}

int lc_motion_unicycle_body(const lc_robot *robot, const lc_motion_params *params,
                            const lc_region *workspace, lc_pose pose, lc_vec2 target_world,
                            const lc_setpoint *last, double dt, lc_setpoint *out)
{
    if (!robot || robot->n_footprint <= 0) {
        if (out)
            *out = lc_setpoint_stop(LC_LIMIT_NONE);
        return LC_ERR_BAD_INPUT;
    }
    return unicycle_step(robot, params, workspace, pose, target_world, last, dt, true, out);
}

double lc_motion_body_margin(const lc_robot *robot, const lc_motion_params *params,
                             const lc_region *workspace, lc_pose pose, double v, double w)
{
    if (!robot || !params || !workspace || !isfinite(v) || !isfinite(w) || !isfinite(pose.x) ||
        !isfinite(pose.y) || !isfinite(pose.yaw))
        return NAN;
    uni_ctx c = uni_ctx_of(robot, params, workspace, pose, true);
    return uni_margin(&c, v, w);
}
