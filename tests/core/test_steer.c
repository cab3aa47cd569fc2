/*
 * test_steer.c - the motion policy (steer.h): turning in place, the
 * standoff kept from grown obstacles, sliding, failure handling.
 *
 * References: the rate limit |w - w_last| <= dw_max dt and |w| <= w_max
 * (the robot description's promise, docs/INTERFACES.md); the turn law
 * w = k_alpha alpha (the polar law's heading term with beta = 0, Siegwart,
 * Nourbakhsh, Scaramuzza, Introduction to Autonomous Mobile Robots, 3.6);
 * distances to polygons by closed form (axis-aligned squares). A polygon
 * footprint's braking path is integrated here (Euler, 0.1 ms) and its
 * distance to an obstacle point taken at every step.
 */
#include "testutil.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "footprint.h"
#include "grow.h"
#include "steer.h"

/* A square box [-h, h]^2 about c as a region (no other lines). */
static lc_halfspace box_h[4];
static lc_region box_region(lc_vec2 c, double h)
{
    box_h[0] = (lc_halfspace){{1, 0}, c.x + h};
    box_h[1] = (lc_halfspace){{0, 1}, c.y + h};
    box_h[2] = (lc_halfspace){{-1, 0}, -(c.x - h)};
    box_h[3] = (lc_halfspace){{0, -1}, -(c.y - h)};
    lc_region r;
    memset(&r, 0, sizeof r);
    r.h = box_h;
    r.nh = 4;
    r.ellipse = (lc_ellipse){h, 0, h, c};
    return r;
}

/* The strip x0 <= x <= x1, |y| <= half as a region, its ellipse the one
 * inscribed in it. */
static lc_halfspace strip_h[4];
static lc_region strip_region(double x0, double x1, double half)
{
    strip_h[0] = (lc_halfspace){{1, 0}, x1};
    strip_h[1] = (lc_halfspace){{-1, 0}, -x0};
    strip_h[2] = (lc_halfspace){{0, 1}, half};
    strip_h[3] = (lc_halfspace){{0, -1}, half};
    lc_region r;
    memset(&r, 0, sizeof r);
    r.h = strip_h;
    r.nh = 4;
    r.ellipse = (lc_ellipse){0.5 * (x1 - x0), 0, half, lc_v2(0.5 * (x0 + x1), 0)};
    return r;
}

/* What most drive tests set up: a default robot of the given model, the
 * default motion parameters, the grown obstacles and a workspace. */
typedef struct rig {
    lc_robot robot;
    lc_motion_params mp;
    lc_polyset grown;
    lc_steer_ws ws;
} rig;

static void rig_init(rig *g, lc_model model)
{
    memset(g, 0, sizeof *g);
    lc_robot_default(&g->robot);
    g->robot.model = model;
    lc_motion_params_default(&g->mp);
}

static void rig_free(rig *g)
{
    lc_steer_ws_free(&g->ws);
    lc_polyset_free(&g->grown);
}

/* What lc_steer_drive is given in these tests: standoff 0.04 m, dt 0.05 s,
 * the target also the waypoint. */
static lc_steer_input drive_input(const lc_robot *robot, const lc_motion_params *mp,
                                  const lc_region *r, const lc_polyset *grown, lc_pose pose,
                                  lc_vec2 target, const lc_setpoint *last)
{
    return (lc_steer_input){.robot = robot, .params = mp, .standoff = 0.04, .region = r,
                            .grown = grown, .pose = pose, .target = target,
                            .waypoint = target, .last = last, .dt = 0.05};
}

/* lc_steer_turn_in_place as the session calls it, without obstacles. */
static void turn(const lc_robot *robot, const lc_motion_params *mp, lc_pose pose, lc_vec2 target,
                 const lc_setpoint *last, double dt, lc_setpoint *out)
{
    lc_steer_ws ws;
    lc_steer_ws_init(&ws, NULL);
    lc_steer_input in = {.robot = robot, .params = mp, .pose = pose, .target = target,
                         .last = last, .dt = dt};
    assert_int_equal(lc_steer_turn_in_place(&in, &ws, out), 0);
    lc_steer_ws_free(&ws);
}

static void test_turn_in_place(void **state)
{
    (void)state;
    lc_robot robot;
    lc_robot_default(&robot);
    robot.model = LC_MODEL_UNICYCLE; /* w_max 1.0, dw_max 2.0 */
    lc_motion_params mp;
    lc_motion_params_default(&mp);
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out = lc_setpoint_stop(LC_LIMIT_TOO_CLOSE);
    lc_pose pose = {0, 0, 0};
    /* target to the left: k_alpha * pi/2 is far beyond w_max; from rest the
     * rate limit binds: dw_max * dt */
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0.1, &out);
    assert_near(out.w, 2.0 * 0.1, 1e-12);
    assert_true(out.v == 0 && out.limit == LC_LIMIT_TOO_CLOSE);
    /* from w_last = 0.95 the w_max cap binds */
    last.w = 0.95;
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0.1, &out);
    assert_near(out.w, 1.0, 1e-12);
    /* a small heading error: the law itself, k_alpha * alpha */
    last.w = 0;
    turn(&robot, &mp, pose, lc_v2(1, 0.01), &last, 1.0, &out);
    assert_near(out.w, mp.k_alpha * atan2(0.01, 1), 1e-12);
    /* to the right, from a last w beyond w_max (a lowered description) */
    last.w = 5;
    turn(&robot, &mp, pose, lc_v2(0, -1), &last, 0.1, &out);
    assert_near(out.w, 1.0 - 0.2, 1e-12);
    /* nothing for the point model, a target at the robot, dt <= 0, NaN dt */
    out.w = 42;
    robot.model = LC_MODEL_POINT;
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0.1, &out);
    robot.model = LC_MODEL_UNICYCLE;
    turn(&robot, &mp, pose, lc_v2(0, 0), &last, 0.1, &out);
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, 0, &out);
    turn(&robot, &mp, pose, lc_v2(0, 1), &last, NAN, &out);
    assert_true(out.w == 42);
}

/* A point robot next to a grown obstacle (closer than the standoff) may
 * slide along it, never come nearer; the region alone would let it. */
static void test_standoff_point(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_POINT);
    /* a square whose left edge is 0.02 m ahead of the robot */
    const lc_vec2 sq[4] = {{0.02, -1}, {1.02, -1}, {1.02, 1}, {0.02, 1}};
    assert_int_equal(lc_polyset_push(&g.grown, sq, 4, 0), 0);
    lc_region r = box_region(lc_v2(0, 0), 5);
    /* at rest (a robot already moving at it brakes as hard as it may:
     * motion.h's fallback) */
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                    lc_v2(3, 2), &last);
    lc_steer_ws *ws = &g.ws;
    assert_int_equal(lc_steer_drive(&in, ws, &out), 0);
    assert_true(out.vx <= 1e-12); /* no nearer to the obstacle */
    assert_true(out.vy > 0);      /* but along it, toward the target's side */
    /* standoff 0: only the region binds, and it lets the robot go on */
    in.standoff = 0;
    assert_int_equal(lc_steer_drive(&in, ws, &out), 0);
    assert_true(out.vx > 0);
    /* far from everything the standoff changes nothing */
    in.standoff = 0.04;
    in.pose = (lc_pose){-3, 0, 0};
    in.target = in.waypoint = lc_v2(-3, 3);
    lc_setpoint a, b;
    last = lc_setpoint_stop(LC_LIMIT_NONE);
    assert_int_equal(lc_steer_drive(&in, ws, &a), 0);
    in.standoff = 0;
    assert_int_equal(lc_steer_drive(&in, ws, &b), 0);
    assert_true(a.vx == b.vx && a.vy == b.vy && a.limit == b.limit);
    rig_free(&g);
}

/* A disc of radius r about c as a 32-gon circumscribed about it (a grown
 * corner). */
static void push_disc(lc_polyset *ps, lc_vec2 c, double r)
{
    lc_vec2 v[32];
    double R = r / cos(LC_PI / 32);
    for (int i = 0; i < 32; i++)
        v[i] = lc_add(c, lc_scale(lc_unit_angle(2 * LC_PI * (i + 0.5) / 32), R));
    assert_int_equal(lc_polyset_push(ps, v, 32, 0), 0);
}

/*
 * The mouth of a gap: two grown corners ahead to either side, 3.3 cm off
 * the robot (a gap 3.3 cm a side wider than the robot with its margin),
 * their nearest points 150 degrees apart. A standoff of 4 cm held at the
 * robot from both left it no way forward; a passage's sides keep a quarter
 * of the width across (1.65 cm) each, so it goes on. Off the middle, it
 * still comes no nearer the side it is within that quarter of (one
 * obstacle alone keeps the full standoff: test_standoff_point).
 */
static void test_standoff_passage(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_POINT);
    lc_vec2 up = {0.1, 0.37}, down = {0.1, -0.37};
    push_disc(&g.grown, up, 0.35);
    push_disc(&g.grown, down, 0.35);
    lc_region r = box_region(lc_v2(0, 0), 5);
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                    lc_v2(3, 0), &last);
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    assert_true(out.vx > 0.02); /* a_max dt = 0.025 from rest */
    /* 2 cm up: 1.4 cm off the upper corner (the quarter is 1.65 cm), not
     * nearer it */
    in.pose.y = 0.02;
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    int nv;
    const lc_vec2 *pv = lc_polyset_at(&g.grown, 0, &nv);
    lc_vec2 q;
    assert_near(lc_convex_distance(pv, nv, lc_v2(0, 0.02), &q), 0.014, 2e-3); /* circumscribed */
    assert_true(lc_dot(lc_sub(q, lc_v2(0, 0.02)), lc_v2(out.vx, out.vy)) <= 1e-12);
    rig_free(&g);
}

/* A unicycle parking in a region 4 cm wide (a gap's), a little askew: the
 * region's sides moved in by the standoff held at the robot left it a line
 * it could not follow; a quarter of the width each leaves it room to go. */
static void test_standoff_passage_unicycle(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_UNICYCLE);
    lc_region r = strip_region(-1, 1, 0.02);
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0.1},
                                    lc_v2(0.6, 0), &last);
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    assert_true(out.v > 0.02); /* a_max dt = 0.025 from rest; was 0 */
    rig_free(&g);
}

/*
 * A unicycle at 0.2 m/s creeping past a crate: the crate's grown side runs
 * 3 cm to its left (inside the standoff), its heading 0.05 rad toward it,
 * its target 0.8 m on. Held at the robot, the line across the crate left
 * no room along the heading and braked it (v 0.175, a_max dt off); with
 * the standoff's lines kept to within PARK_REACH (0.5 m) of the aim it
 * brakes in the region, whose 3 cm hold the braking path (0.05 m at
 * 0.2 m/s: v dt + v^2 / 2 a_max, a closed form; along it the heading
 * closes 0.05 rad x 0.05 m, 2.5 mm of the 3 cm).
 */
static void test_creep_past_crate(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_UNICYCLE);
    const lc_vec2 crate[4] = {{-1, 0.03}, {2, 0.03}, {2, 1}, {-1, 1}};
    assert_int_equal(lc_polyset_push(&g.grown, crate, 4, 0), 0);
    static lc_halfspace h[4];
    h[0] = (lc_halfspace){{1, 0}, 3};
    h[1] = (lc_halfspace){{-1, 0}, 1};
    h[2] = (lc_halfspace){{0, 1}, 0.03};
    h[3] = (lc_halfspace){{0, -1}, 1};
    lc_region r;
    memset(&r, 0, sizeof r);
    r.h = h;
    r.nh = 4;
    r.ellipse = (lc_ellipse){2, 0, 0.5, lc_v2(1, -0.485)};
    lc_setpoint last = {.v = 0.2, .limit = LC_LIMIT_ACCEL}, out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0.05},
                                    lc_v2(0.8, 0), &last);
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    assert_true(out.v > 0.19);
    assert_int_not_equal(out.limit, LC_LIMIT_BRAKING);
    rig_free(&g);
}

/*
 * A unicycle at a gap's mouth (in.at_mouth: the region's target was at the
 * robot, it heads for a step along the path 1 m on): the region ends 3 cm
 * ahead at a grown obstacle, the robot at rest facing it. Braking in the
 * region alone lets it start at a_max dt = 0.025 m/s (its braking path
 * 0.025 dt + 0.025^2 / 2 a_max, under 2 mm of the 3 cm: a closed form);
 * with the standoff (4 cm) the edge is held at the robot and it stays.
 * Without the flag the aim 1 m on is beyond PARK_REACH, as before.
 */
static void test_mouth_standoff(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_UNICYCLE);
    const lc_vec2 block[4] = {{0.03, -1}, {1, -1}, {1, 1}, {0.03, 1}};
    assert_int_equal(lc_polyset_push(&g.grown, block, 4, 0), 0);
    lc_region r = strip_region(-1.97, 0.03, 1);
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                    lc_v2(1, 0), &last);
    in.waypoint = lc_v2(3, 0);
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    assert_near(out.v, 0.025, 1e-9);
    in.at_mouth = true;
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    assert_true(fabs(out.v) <= 1e-12);
    rig_free(&g);
}

/*
 * A target 3 cm ahead on the region's far side, the ellipse centre 1.8 m
 * behind and to the left (a gap's mouth: the region a wedge whose apex
 * holds the robot, its ellipse in the room behind), the waypoint farther
 * on. Pulled the standoff (4 cm) toward the centre, the aim lay at 99
 * degrees off the heading: the unicycle turned away from the gap, the
 * point model backed off from it. A target this near is aimed at itself
 * (here it is slid back onto the braking line the robot sits on, at the
 * robot): neither moves away from it.
 */
/*
 * A target on the way on (in.on_way, the path goes on past it): the point
 * model heads for it at the goal gain LC_STEER_WAY_GAIN (3 /s), not k_p (1
 * /s), which is there to stop it at the waypoint. In a 20 m box (braking
 * does not bind), no standoff, the target 0.2 m ahead, the last velocity
 * already the answer (the acceleration limit does not bind): vx = 1 x 0.2
 * toward the waypoint itself, 3 x 0.2 toward a target on the way on (the
 * point law's closed form, motion.c point_desired); 1.5 m ahead, v_max
 * either way.
 */
static void test_way_gain(void **state)
{
    (void)state;
    const double dist[] = {0.2, 0.2, 1.5, 1.5};
    for (int k = 0; k < 4; k++) {
        bool on_way = k % 2 == 1;
        rig g;
        rig_init(&g, LC_MODEL_POINT);
        lc_region r = box_region(lc_v2(0, 0), 10);
        double want = fmin(g.robot.v_max, (on_way ? 3.0 : g.mp.k_p) * dist[k]);
        lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
        last.vx = want;
        lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                        lc_v2(dist[k], 0), &last);
        in.standoff = 0;
        if (on_way) {
            in.waypoint = lc_v2(8, 0);
            in.on_way = true;
            in.heading = 0;
        }
        assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
        assert_near(out.vx, want, 1e-9);
        assert_near(out.vy, 0.0, 1e-12);
        assert_int_equal(out.limit, want < g.robot.v_max ? LC_LIMIT_GOAL : LC_LIMIT_TOP_SPEED);
        rig_free(&g);
    }
}

static void test_near_target_aim(void **state)
{
    (void)state;
    for (int m = 0; m < 2; m++) {
        rig g;
        rig_init(&g, m ? LC_MODEL_UNICYCLE : LC_MODEL_POINT);
        lc_region r = strip_region(-3, 0.03, 1);
        r.ellipse.d = lc_v2(-1.5, 1.0);
        lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE), out;
        lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                        lc_v2(0.03, 0), &last);
        in.waypoint = lc_v2(5, 0);
        assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
        if (m) {
            assert_true(fabs(out.w) < 1e-9); /* was 0.1 (dw_max dt), turning */
            assert_int_not_equal(out.limit, LC_LIMIT_TURNING);
        } else {
            assert_true(out.vx > -1e-9);     /* was backing off */
            assert_true(fabs(out.vy) < 1e-9);
        }
        rig_free(&g);
    }
}

/*
 * A point robot at full speed down an aisle between two crates whose
 * grown corners lie 0.3 m ahead, 0.15 m to either side (0.335 m off,
 * diagonally): the region is the strip between them, 5 m long. Lines at
 * the standoff across the direction to each corner left 0.33 m of room
 * ahead and braked it; the region's own lines moved in keep it at v_max,
 * as braking within the strip allows (v dt + v^2 / 2 a_max = 0.68 m of
 * the 4.96 m ahead: a closed form).
 */
static void test_aisle_speed(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_POINT);
    const lc_vec2 up[4] = {{0.3, 0.15}, {1.3, 0.15}, {1.3, 1.15}, {0.3, 1.15}};
    const lc_vec2 down[4] = {{0.3, -1.15}, {1.3, -1.15}, {1.3, -0.15}, {0.3, -0.15}};
    assert_int_equal(lc_polyset_push(&g.grown, up, 4, 0), 0);
    assert_int_equal(lc_polyset_push(&g.grown, down, 4, 0), 0);
    lc_region r = strip_region(-1, 5, 0.15);
    lc_setpoint last = {.vx = g.robot.v_max, .limit = LC_LIMIT_TOP_SPEED}, out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                    lc_v2(4, 0), &last);
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), 0);
    assert_near(out.vx, g.robot.v_max, 1e-9);
    assert_near(out.vy, 0.0, 1e-9);
    assert_int_not_equal(out.limit, LC_LIMIT_BRAKING);
    rig_free(&g);
}

static void *refuse(void *data, void *p, size_t n)
{
    (void)data;
    if (n == 0)
        free(p);
    return NULL;
}

/* Out of memory: -1 and a stop, never a stale velocity. */
static void test_no_memory(void **state)
{
    (void)state;
    rig g;
    rig_init(&g, LC_MODEL_POINT);
    const lc_vec2 sq[4] = {{1, -1}, {2, -1}, {2, 1}, {1, 1}};
    lc_polyset_push(&g.grown, sq, 4, 0);
    lc_region r = box_region(lc_v2(0, 0), 5);
    lc_setpoint last = {.vx = 0.3}, out;
    lc_steer_input in = drive_input(&g.robot, &g.mp, &r, &g.grown, (lc_pose){0, 0, 0},
                                    lc_v2(0, 3), &last);
    lc_alloc none = {refuse, NULL};
    lc_steer_ws_init(&g.ws, &none);
    assert_int_equal(lc_steer_drive(&in, &g.ws, &out), -1);
    assert_true(out.vx == 0 && out.vy == 0 && out.limit == LC_LIMIT_NONE);
    rig_free(&g);
}

/* ---- a polygon footprint --------------------------------------------- */

/* Least distance from the footprint of r at pose to the point o. */
static double body_gap(const lc_robot *r, lc_pose pose, lc_vec2 o)
{
    lc_vec2 v[LC_FOOTPRINT_MAX];
    int n = lc_robot_place_footprint(r, pose, v);
    return lc_convex_distance(v, n, o, NULL);
}

/*
 * Least distance from the body to o along the braking path of (v, w) from
 * pose: held for t_r, then v falling at a_max and w with it (curvature
 * kept) or at dw_max; integrated in 0.1 ms Euler steps (the path's own
 * rounding, below 1e-4 m here).
 */
static double brake_gap(const lc_robot *r, double t_r, lc_pose pose, double v, double w,
                        lc_vec2 o)
{
    const double h = 1e-4;
    bool hold = fabs(v) > 1e-12 && fabs(w / v) * r->a_max <= r->dw_max;
    double k = fabs(v) > 1e-12 ? w / v : 0, gap = body_gap(r, pose, o);
    for (double t = 0; t < t_r + 20.0 && (v != 0 || w != 0); t += h) {
        pose.x += v * cos(pose.yaw) * h;
        pose.y += v * sin(pose.yaw) * h;
        pose.yaw += w * h;
        gap = fmin(gap, body_gap(r, pose, o));
        if (t < t_r)
            continue;
        double vn = fabs(v) - r->a_max * h;
        v = vn > 0 ? copysign(vn, v) : 0;
        double wn = fabs(w) - r->dw_max * h;
        w = hold ? k * v : (wn > 0 ? copysign(wn, w) : 0);
    }
    return gap;
}

static lc_robot body_robot(const lc_vec2 *fp, int n)
{
    lc_robot r;
    lc_robot_default(&r);
    r.model = LC_MODEL_UNICYCLE;
    assert_int_equal(lc_robot_set_footprint(&r, fp, n), LC_OK);
    return r;
}

/*
 * The workspace region's extra lines. A diamond footprint (half diagonal
 * 0.3 m) at heading 0 in the region [-2, 0.5]^2; an obstacle point o at
 * (0.72, 0.72). The box summed with the diamond cuts the box's corner
 * along x + y = 1.3, which o lies (1.44 - 1.3) / sqrt 2 = 0.099 m off:
 * grown by the reflected diamond and the margin, o lies off the region
 * (closed form), yet no single line of the box keeps it out, and the
 * box's lines moved out by the diamond's reach (x <= 0.8, y <= 0.8) leave
 * o inside. Driving for the corner from any speed, the body's braking path
 * keeps the margin from o.
 */
static void test_body_workspace_corner(void **state)
{
    (void)state;
    const lc_vec2 diamond[] = {{0.3, 0}, {0, 0.3}, {-0.3, 0}, {0, -0.3}};
    lc_robot robot = body_robot(diamond, 4);
    lc_motion_params mp;
    lc_motion_params_default(&mp);
    lc_vec2 o = lc_v2(0.72, 0.72);
    /* o's configuration-space obstacle at heading 0, as the session grows it */
    lc_vec2 g[64], c[128];
    int ng = lc_grow_polygon(diamond, 4, robot.margin, LC_GROW_DEFAULT_STEP, g, 64);
    assert_true(ng > 4);
    lc_footprint_place(g, ng, 0.0, true, g);
    const lc_vec2 pt[1] = {o};
    int nc = lc_minkowski_sum(pt, 1, g, ng, c, 128);
    assert_true(nc == ng);
    lc_polyset grown = {0}, seen = {0};
    assert_int_equal(lc_polyset_push(&grown, c, nc, 0), 0);
    assert_int_equal(lc_polyset_push(&seen, pt, 1, 0), 0);
    static lc_halfspace h[4];
    static lc_vec2 v[4];
    h[0] = (lc_halfspace){{1, 0}, 0.5};
    h[1] = (lc_halfspace){{0, 1}, 0.5};
    h[2] = (lc_halfspace){{-1, 0}, 2};
    h[3] = (lc_halfspace){{0, -1}, 2};
    v[0] = lc_v2(0.5, -2), v[1] = lc_v2(0.5, 0.5), v[2] = lc_v2(-2, 0.5), v[3] = lc_v2(-2, -2);
    lc_region r = {.h = h, .nh = 4, .v = v, .nv = 4, .ellipse = {1, 0, 1, {-0.75, -0.75}}};
    for (int i = 0; i < nc; i++) /* off the region, by the corner only */
        assert_true(c[i].x > 0.5 || c[i].y > 0.5);
    bool cross_x = false, cross_y = false;
    for (int i = 0; i < nc; i++)
        cross_x |= c[i].x < 0.5, cross_y |= c[i].y < 0.5;
    assert_true(cross_x && cross_y);
    lc_steer_ws ws = {0};
    /* the workspace keeps o a margin out, by a line of its own */
    lc_setpoint rest = lc_setpoint_stop(LC_LIMIT_NONE);
    lc_steer_input w_in = {.robot = &robot, .params = &mp, .region = &r, .grown = &grown,
                           .pose = {0.2, 0.2, 0}, .last = &rest, .dt = 0.05};
    lc_region work;
    assert_int_equal(lc_steer_workspace(&w_in, &ws, &work), 0);
    assert_int_equal(work.nh, 5);
    double out_by = -INFINITY;
    for (int i = 0; i < work.nh; i++)
        out_by = fmax(out_by, lc_dot(work.h[i].a, o) - work.h[i].b);
    assert_true(out_by >= robot.margin - 1e-9);
    assert_near(work.h[0].b, 0.8, 1e-15); /* x <= 0.5 moved out by 0.3 */
    /* a disc robot has none */
    lc_robot disc;
    lc_robot_default(&disc);
    w_in.robot = &disc;
    assert_int_equal(lc_steer_workspace(&w_in, &ws, &work), -1);
    int moved = 0;
    for (int k = 0; k < 40; k++) {
        double v0 = 0.02 * k, w0 = (k % 5 - 2) * 0.2;
        lc_setpoint last = {.v = v0, .w = w0}, out;
        lc_pose pose = {0.2 + 0.005 * k, 0.2, 0.3 * (k % 3 - 1) * 0.1};
        lc_steer_input in = {.robot = &robot, .params = &mp, .standoff = 0.04, .region = &r,
                             .grown = &grown, .obstacles = &seen, .pose = pose,
                             .target = lc_v2(0.5, 0.5), .waypoint = lc_v2(3, 3),
                             .last = &last, .dt = 0.05};
        assert_int_equal(lc_steer_drive(&in, &ws, &out), 0);
        moved += out.v > 0;
        double gap = brake_gap(&robot, 0.05, pose, out.v, out.w, o);
        if (gap < robot.margin - 1e-4)
            fail_msg("case %d: v %g w %g comes %g from the obstacle", k, out.v, out.w, gap);
    }
    assert_true(moved > 20);
    lc_steer_ws_free(&ws);
    lc_polyset_free(&grown);
    lc_polyset_free(&seen);
}

/* The turn-in-place scenes: a 1.0 x 0.5 m body, and a post beyond its
 * front left corner. */
static const lc_vec2 turn_body[4] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
static const lc_vec2 turn_post[4] = {{0.33, 0.47}, {0.37, 0.47}, {0.37, 0.51}, {0.33, 0.51}};

/*
 * 200 steps of 0.05 s of lc_steer_turn_in_place from rest at the origin,
 * heading 0, the default motion parameters, toward target, each within the turn-rate limit; with post,
 * the body keeps `keep` off its corners at every step. The angle turned.
 */
static double turn_steps(const lc_robot *robot, lc_steer_ws *ws, const lc_polyset *seen,
                         const lc_polyset *frontier, double pad, lc_vec2 target,
                         const lc_vec2 *post, double keep)
{
    lc_motion_params mp;
    lc_motion_params_default(&mp);
    lc_pose pose = {0, 0, 0};
    lc_setpoint last = lc_setpoint_stop(LC_LIMIT_NONE);
    double turned = 0;
    for (int k = 0; k < 200; k++) {
        lc_setpoint out = lc_setpoint_stop(LC_LIMIT_TOO_CLOSE);
        lc_steer_input in = {.robot = robot, .params = &mp, .obstacles = seen,
                             .frontier = frontier, .frontier_pad = pad, .pose = pose,
                             .target = target, .last = &last, .dt = 0.05};
        assert_int_equal(lc_steer_turn_in_place(&in, ws, &out), 0);
        assert_true(fabs(out.w - last.w) <= robot->dw_max * 0.05 + 1e-12);
        pose.yaw += out.w * 0.05;
        turned += out.w * 0.05;
        last = out;
        for (int i = 0; i < 4 && post; i++)
            assert_true(body_gap(robot, pose, post[i]) >= keep - 1e-9);
    }
    return turned;
}

/*
 * too_close, a polygon footprint: a 1.0 x 0.5 m body with a post beyond
 * its front left corner. Turning left toward a target there would sweep
 * that corner (0.559 m out) through the post: step after step it turns
 * only while the turn keeps the margin, and stops short. Turning right it
 * turns on.
 */
static void test_body_turn_in_place(void **state)
{
    (void)state;
    lc_robot robot = body_robot(turn_body, 4);
    const lc_vec2 *post = turn_post;
    lc_polyset seen = {0};
    assert_int_equal(lc_polyset_push(&seen, post, 4, 0), 0);
    lc_steer_ws ws = {0};
    for (int side = 0; side < 2; side++) {
        double turned = turn_steps(&robot, &ws, &seen, NULL, 0.0, lc_v2(0, side ? -1 : 1),
                                   post, robot.margin);
        if (side == 0)
            assert_true(turned > 0.05 && turned < 0.6); /* stopped short of the post */
        else
            assert_near(turned, -0.5 * LC_PI, 0.05); /* faced its target */
    }
    lc_steer_ws_free(&ws);
    lc_polyset_free(&seen);
}

/*
 * The frontier of unknown space counts as an obstacle for that turn, each
 * piece frontier_pad larger (it stands for unknown cells, squares, by
 * their centres: half a cell's diagonal). The post above given as a piece
 * of frontier instead, nothing seen: the turn left stops short with the
 * body the margin and the pad off the piece; with no frontier it turns on
 * to its target.
 */
static void test_body_turn_frontier(void **state)
{
    (void)state;
    lc_robot robot = body_robot(turn_body, 4);
    const lc_vec2 *post = turn_post;
    const double pad = 0.5 * sqrt(2.0) * 0.05;
    lc_polyset none = {0}, unknown = {0};
    assert_int_equal(lc_polyset_push(&unknown, post, 4, 0), 0);
    lc_steer_ws ws = {0};
    for (int with = 0; with < 2; with++) {
        double turned = turn_steps(&robot, &ws, &none, with ? &unknown : NULL, pad,
                                   lc_v2(0, 1), with ? post : NULL, robot.margin + pad);
        if (with)
            assert_true(turned > 0.05 && turned < 0.6); /* stopped short */
        else
            assert_near(turned, 0.5 * LC_PI, 0.05); /* faced its target */
    }
    lc_steer_ws_free(&ws);
    lc_polyset_free(&unknown);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_turn_in_place),
        cmocka_unit_test(test_way_gain),
        cmocka_unit_test(test_standoff_point),
        cmocka_unit_test(test_standoff_passage),
        cmocka_unit_test(test_standoff_passage_unicycle),
        cmocka_unit_test(test_aisle_speed),
        cmocka_unit_test(test_near_target_aim),
        cmocka_unit_test(test_creep_past_crate),
        cmocka_unit_test(test_mouth_standoff),
        cmocka_unit_test(test_no_memory),
        cmocka_unit_test(test_body_workspace_corner),
        cmocka_unit_test(test_body_turn_in_place),
        cmocka_unit_test(test_body_turn_frontier),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
