/*
 * test_motion.c - setpoints of the point-mass and unicycle models.
 *
 * Outside references: the stopping-distance check values of docs/REFERENCES.md,
 * the polar point-stabilisation law's linearised system (Siegwart,
 * Nourbakhsh, Scaramuzza, "Introduction to Autonomous Mobile Robots", 2nd
 * ed., 3.6, from memory), closed-form kinematics of constant (v, w) arcs and
 * of constant deceleration. Braking paths are simulated here (straight line
 * in closed form, arcs by RK4), independently of motion.c, on random convex
 * regions built from tangent lines of random ellipses (fixed seeds). A
 * polygon footprint's braking path is simulated the same way, its vertices
 * placed at every sampled pose (rigid motion, closed form).
 */
#include "testutil.h"

#include <complex.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "footprint.h"
#include "motion.h"

#define MAXH 16
#define CASES 1500
#define PATH_TOL 1e-6 /* m, slack for the test's own path simulation */

typedef struct test_region {
    lc_halfspace h[MAXH];
    lc_vec2 v[MAXH];
    lc_region r;
} test_region;

static void region_finish(test_region *t, int n)
{
    memset(&t->r, 0, sizeof t->r);
    t->r.h = t->h;
    t->r.nh = t->r.cap_h = n;
    t->r.v = t->v;
    t->r.nv = t->r.cap_v = n;
    /* vertex i between lines i and i + 1 (normals CCW) */
    for (int i = 0; i < n; i++) {
        lc_halfspace p = t->h[i], q = t->h[(i + 1) % n];
        double det = p.a.x * q.a.y - p.a.y * q.a.x;
        t->v[i] = lc_v2((p.b * q.a.y - p.a.y * q.b) / det, (p.a.x * q.b - p.b * q.a.x) / det);
    }
}

static void make_box(test_region *t, double x0, double y0, double x1, double y1)
{
    t->h[0] = (lc_halfspace){{1, 0}, x1};
    t->h[1] = (lc_halfspace){{0, 1}, y1};
    t->h[2] = (lc_halfspace){{-1, 0}, -x0};
    t->h[3] = (lc_halfspace){{0, -1}, -y0};
    region_finish(t, 4);
}

static int cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Tangent lines of a random ellipse at sorted parameters with gaps < pi. */
static void make_random_region(lc_rng *rng, test_region *t)
{
    int n = 3 + (int)(lc_rng_next(rng) % 10);
    double ax = lc_rng_uniform(rng, 0.3, 4.0), ay = lc_rng_uniform(rng, 0.15, 4.0);
    double rot = lc_rng_uniform(rng, -LC_PI, LC_PI);
    lc_vec2 c = lc_v2(lc_rng_uniform(rng, -5, 5), lc_rng_uniform(rng, -5, 5));
    double ts[MAXH];
    for (;;) {
        for (int i = 0; i < n; i++)
            ts[i] = lc_rng_uniform(rng, 0, 2 * LC_PI);
        qsort(ts, n, sizeof ts[0], cmp_double);
        double gap = ts[0] + 2 * LC_PI - ts[n - 1];
        for (int i = 1; i < n; i++)
            gap = fmax(gap, ts[i] - ts[i - 1]);
        if (gap < LC_PI * 0.95)
            break;
    }
    for (int i = 0; i < n; i++) {
        lc_vec2 q = lc_add(c, lc_rotate(lc_v2(ax * cos(ts[i]), ay * sin(ts[i])), rot));
        lc_vec2 nrm = lc_rotate(lc_v2(cos(ts[i]) / ax, sin(ts[i]) / ay), rot);
        nrm = lc_scale(nrm, 1.0 / lc_len(nrm));
        t->h[i] = (lc_halfspace){nrm, lc_dot(nrm, q)};
    }
    region_finish(t, n);
}

/* The test's own margin: least slack over the halfspaces. */
static double margin_of(const test_region *t, lc_vec2 p)
{
    double m = INFINITY;
    for (int i = 0; i < t->r.nh; i++)
        m = fmin(m, t->h[i].b - lc_dot(t->h[i].a, p));
    return m;
}

static bool sample_inside(lc_rng *rng, const test_region *t, double min_margin, lc_vec2 *p)
{
    double x0 = INFINITY, y0 = INFINITY, x1 = -INFINITY, y1 = -INFINITY;
    for (int i = 0; i < t->r.nv; i++) {
        x0 = fmin(x0, t->v[i].x), x1 = fmax(x1, t->v[i].x);
        y0 = fmin(y0, t->v[i].y), y1 = fmax(y1, t->v[i].y);
    }
    for (int k = 0; k < 2000; k++) {
        lc_vec2 q = lc_v2(lc_rng_uniform(rng, x0, x1), lc_rng_uniform(rng, y0, y1));
        if (margin_of(t, q) > min_margin) {
            *p = q;
            return true;
        }
    }
    return false;
}

/* Own ray exit from p along unit u (closed form per halfspace). */
static double ray_room(const test_region *t, lc_vec2 p, lc_vec2 u)
{
    double s = INFINITY;
    for (int i = 0; i < t->r.nh; i++) {
        double rate = lc_dot(t->h[i].a, u);
        if (rate > 0)
            s = fmin(s, (t->h[i].b - lc_dot(t->h[i].a, p)) / rate);
    }
    return s;
}

/*
 * Least margin along the straight braking path from p with world velocity
 * v: constant speed for latency t_r, then deceleration a to rest
 * (closed form x(t) = |v| t - a t^2 / 2), sampled densely.
 */
static double point_brake_margin(const test_region *t, lc_vec2 p, lc_vec2 v, double a,
                                 double t_r)
{
    double speed = lc_len(v);
    if (speed == 0)
        return margin_of(t, p);
    lc_vec2 u = lc_scale(v, 1.0 / speed);
    double m = INFINITY, tb = speed / a;
    for (int k = 0; k <= 400; k++) {
        double tt = tb * k / 400.0;
        double s = speed * t_r + speed * tt - 0.5 * a * tt * tt;
        m = fmin(m, margin_of(t, lc_add(p, lc_scale(u, s))));
    }
    for (int k = 0; k <= 50; k++)
        m = fmin(m, margin_of(t, lc_add(p, lc_scale(u, speed * t_r * k / 50.0))));
    return m;
}

typedef struct ustate {
    double x, y, th;
} ustate;

static ustate uderiv(ustate s, double v, double w)
{
    return (ustate){v * cos(s.th), v * sin(s.th), w};
}

/* One RK4 step of the unicycle with v(t), w(t) linear in time over [t, t + h]. */
static ustate rk4(ustate s, double v_a, double w_a, double v_b, double w_b, double h)
{
    double v_m = 0.5 * (v_a + v_b), w_m = 0.5 * (w_a + w_b);
    ustate k1 = uderiv(s, v_a, w_a);
    ustate s2 = {s.x + 0.5 * h * k1.x, s.y + 0.5 * h * k1.y, s.th + 0.5 * h * k1.th};
    ustate k2 = uderiv(s2, v_m, w_m);
    ustate s3 = {s.x + 0.5 * h * k2.x, s.y + 0.5 * h * k2.y, s.th + 0.5 * h * k2.th};
    ustate k3 = uderiv(s3, v_m, w_m);
    ustate s4 = {s.x + h * k3.x, s.y + h * k3.y, s.th + h * k3.th};
    ustate k4 = uderiv(s4, v_b, w_b);
    return (ustate){s.x + h / 6 * (k1.x + 2 * k2.x + 2 * k3.x + k4.x),
                    s.y + h / 6 * (k1.y + 2 * k2.y + 2 * k3.y + k4.y),
                    s.th + h / 6 * (k1.th + 2 * k2.th + 2 * k3.th + k4.th)};
}

/*
 * Least margin along the unicycle's braking path, integrated by RK4: (v, w)
 * held for t_r, then v falls at a_max to 0 and either w = (w / v) v(t)
 * (constant curvature, when |w / v| a_max <= dw_max lets the robot hold it)
 * or w falls at dw_max (both at full rate: the best the robot can do).
 */
static double uni_brake_margin_n(const test_region *t, lc_pose pose, double v, double w,
                                 const lc_robot *r, double t_r, int n)
{
    ustate s = {pose.x, pose.y, pose.yaw};
    double m = margin_of(t, lc_v2(s.x, s.y));
    if (fabs(v) < 1e-12)
        return m;
    for (int k = 0; k < n && t_r > 0; k++) {
        s = rk4(s, v, w, v, w, t_r / n);
        m = fmin(m, margin_of(t, lc_v2(s.x, s.y)));
    }
    double tb = fabs(v) / r->a_max, h = tb / n, k_w = w / v;
    bool hold = fabs(k_w) * r->a_max <= r->dw_max;
    for (int k = 0; k < n; k++) {
        double ta = tb * k / n, tc = tb * (k + 1) / n;
        double va = v * (1 - ta / tb), vb = v * (1 - tc / tb);
        double wa = hold ? k_w * va : copysign(fmax(fabs(w) - r->dw_max * ta, 0), w);
        double wb = hold ? k_w * vb : copysign(fmax(fabs(w) - r->dw_max * tc, 0), w);
        s = rk4(s, va, wa, vb, wb, h);
        m = fmin(m, margin_of(t, lc_v2(s.x, s.y)));
    }
    return m;
}

static double uni_brake_margin(const test_region *t, lc_pose pose, double v, double w,
                               const lc_robot *r, double t_r)
{
    return uni_brake_margin_n(t, pose, v, w, r, t_r, 300);
}

static lc_robot robot_default_of(lc_model model)
{
    lc_robot r;
    lc_robot_default(&r);
    r.model = model;
    return r;
}

/* What the example tests drive in: a default robot of the model, the
 * default parameters and a 20 m box about the origin (braking binds only
 * near its walls). */
static void example_setup(lc_model model, lc_robot *r, lc_motion_params *p, test_region *t)
{
    *r = robot_default_of(model);
    lc_motion_params_default(p);
    make_box(t, -10, -10, 10, 10);
}

/* ---- names, defaults ------------------------------------------------- */

static void test_limit_names(void **state)
{
    (void)state;
    /* motion.h's comments (docs/INTERFACES.md's `limit` values) */
    static const char *const want[] = {"none", "goal", "top_speed", "braking", "accel",
                                       "turning", "turn_rate", "too_close", "stale",
                                       "blocked", "arrived", "idle"};
    assert_int_equal(LC_LIMIT_COUNT, 12);
    for (int i = 0; i < LC_LIMIT_COUNT; i++)
        assert_string_equal(lc_limit_name((lc_limit)i), want[i]);
    assert_string_equal(lc_limit_name(LC_LIMIT_COUNT), "unknown");
    assert_string_equal(lc_limit_name((lc_limit)-1), "unknown");
}

static void test_defaults(void **state)
{
    (void)state;
    lc_motion_params p;
    lc_motion_params_default(&p);
    /* textbook gains (Siegwart et al. 3.6, from memory) */
    assert_near(p.k_rho, 3.0, 0);
    assert_near(p.k_alpha, 8.0, 0);
    assert_near(p.k_beta, -1.5, 0);
    assert_near(p.k_p, 1.0, 0);
    assert_near(p.turn_in_place, 1.0, 0);
    assert_near(p.latency, 0.0, 0);
    lc_setpoint s = lc_setpoint_stop(LC_LIMIT_STALE);
    assert_true(s.vx == 0 && s.vy == 0 && s.v == 0 && s.w == 0);
    assert_int_equal(s.limit, LC_LIMIT_STALE);
}

/* ---- stopping distance: docs/REFERENCES.md check values -------------------- */

static void test_stopping_distance(void **state)
{
    (void)state;
    /* docs/REFERENCES.md "Facts of the trade": d = v t_r + v^2 / (2 a) */
    assert_near(lc_stopping_distance(1.0, 0.1, 1.0), 0.60, 1e-12);
    assert_near(lc_stopping_distance(1.5, 0.2, 1.0), 1.425, 1e-12);
    /* closed form v^2 / (2a), no latency; a reverse speed is a speed */
    assert_near(lc_stopping_distance(0.8, 0.0, 0.5), 0.64, 1e-12);
    assert_near(lc_stopping_distance(-0.8, 0.0, 0.5), 0.64, 1e-12);
    assert_near(lc_stopping_distance(0.0, 0.3, 0.5), 0.0, 0);
    /* degenerate: no deceleration never stops, NaN stays NaN */
    assert_true(isinf(lc_stopping_distance(1.0, 0.1, 0.0)));
    assert_true(isinf(lc_stopping_distance(1.0, 0.1, -1.0)));
    assert_true(isnan(lc_stopping_distance(NAN, 0.1, 1.0)));
    assert_true(isnan(lc_stopping_distance(1.0, 0.1, NAN)));
}

/* ---- the polar law: textbook stability -------------------------------- */

/* Textbook closed loop in (rho, alpha, beta) (Siegwart et al. 3.6, from memory). */
static void polar_rates(const lc_motion_params *p, const double x[3], double dx[3])
{
    double v, w;
    lc_motion_polar(p, x[0], x[1], x[2], &v, &w);
    dx[0] = -v * cos(x[1]);
    dx[1] = v * sin(x[1]) / x[0] - w;
    dx[2] = -v * sin(x[1]) / x[0];
}

static void test_polar_linearisation(void **state)
{
    (void)state;
    lc_motion_params p;
    lc_motion_params_default(&p);
    /* Local exponential stability conditions (Siegwart et al. 3.6, from memory). */
    assert_true(p.k_rho > 0);
    assert_true(p.k_beta < 0);
    assert_true(p.k_alpha - p.k_rho > 0);

    /* The textbook's linearised system matrix about alpha = beta = 0. */
    double A[3][3] = {{-p.k_rho, 0, 0},
                      {0, -(p.k_alpha - p.k_rho), -p.k_beta},
                      {0, -p.k_rho, 0}};
    /* Our law in the textbook's kinematics, differentiated numerically at
     * (rho, 0, 0): must give the same matrix (v / rho = k_rho cancels rho). */
    double x0[3] = {0.7, 0, 0}, h = 1e-6;
    for (int j = 0; j < 3; j++) {
        double xp[3] = {x0[0], x0[1], x0[2]}, xm[3] = {x0[0], x0[1], x0[2]};
        xp[j] += h, xm[j] -= h;
        double fp[3], fm[3];
        polar_rates(&p, xp, fp);
        polar_rates(&p, xm, fm);
        for (int i = 0; i < 3; i++)
            assert_near((fp[i] - fm[i]) / (2 * h), A[i][j], 1e-6);
    }

    /* Characteristic polynomial l^3 + c2 l^2 + c1 l + c0 of A, generically. */
    double tr = A[0][0] + A[1][1] + A[2][2];
    double m2 = (A[0][0] * A[1][1] - A[0][1] * A[1][0]) +
                (A[0][0] * A[2][2] - A[0][2] * A[2][0]) +
                (A[1][1] * A[2][2] - A[1][2] * A[2][1]);
    double det = A[0][0] * (A[1][1] * A[2][2] - A[1][2] * A[2][1]) -
                 A[0][1] * (A[1][0] * A[2][2] - A[1][2] * A[2][0]) +
                 A[0][2] * (A[1][0] * A[2][1] - A[1][1] * A[2][0]);
    double c2 = -tr, c1 = m2, c0 = -det;
    /* By hand for (3, 8, -1.5): (l + 3)(l^2 + 5 l + 4.5) = l^3 + 8 l^2 + 19.5 l + 13.5 */
    assert_near(c2, 8.0, 1e-12);
    assert_near(c1, 19.5, 1e-12);
    assert_near(c0, 13.5, 1e-12);
    /* Routh-Hurwitz for a cubic: all roots in the left half-plane iff
     * c2 > 0, c0 > 0 and c2 c1 > c0 (common practice). */
    assert_true(c2 > 0 && c0 > 0 && c2 * c1 > c0);

    /* Roots by Durand-Kerner iteration. */
    double complex z[3] = {0.4 + 0.9 * I, cpow(0.4 + 0.9 * I, 2), cpow(0.4 + 0.9 * I, 3)};
    for (int it = 0; it < 500; it++) {
        for (int i = 0; i < 3; i++) {
            double complex num = ((z[i] + c2) * z[i] + c1) * z[i] + c0, den = 1;
            for (int j = 0; j < 3; j++)
                if (j != i)
                    den *= z[i] - z[j];
            z[i] -= num / den;
        }
    }
    /* By hand: l = -3 and l = (-5 +- sqrt(7)) / 2 = -1.177124, -3.822876. */
    double want[3] = {-3.0, (-5 + sqrt(7.0)) / 2, (-5 - sqrt(7.0)) / 2};
    assert_near(want[1], -1.177124, 1e-6);
    assert_near(want[2], -3.822876, 1e-6);
    for (int i = 0; i < 3; i++) {
        assert_true(creal(z[i]) < 0);
        double best = INFINITY;
        for (int j = 0; j < 3; j++)
            best = fmin(best, cabs(z[i] - want[j]));
        assert_true(best < 1e-9);
    }
}

/*
 * The full law (beta != 0) drives a unicycle to a goal pose with a given
 * heading from start points all around it (Siegwart et al. 3.6: the closed
 * loop converges; their figure shows such a ring of starts, from memory).
 */
static void test_polar_converges_to_pose(void **state)
{
    (void)state;
    lc_motion_params p;
    lc_motion_params_default(&p);
    for (int k = 0; k < 8; k++) {
        double ang = k * LC_PI / 4;
        ustate s = {cos(ang), sin(ang), ang + LC_PI + 0.3}; /* facing the goal, 0.3 off */
        double h = 1e-3;
        for (int it = 0; it < 12000; it++) {
            double rho = hypot(s.x, s.y);
            if (rho < 1e-9)
                break;
            double alpha = lc_wrap_angle(atan2(-s.y, -s.x) - s.th);
            double beta = lc_wrap_angle(-s.th - alpha); /* goal heading 0 */
            double v, w;
            lc_motion_polar(&p, rho, alpha, beta, &v, &w);
            s = rk4(s, v, w, v, w, h);
        }
        assert_true(hypot(s.x, s.y) < 1e-3);
        assert_near(lc_wrap_angle(s.th), 0.0, 1e-2);
    }
}

/* ---- arcs: closed form ------------------------------------------------ */

static void test_arc_closed_form(void **state)
{
    (void)state;
    /* constant v, w from the origin heading +x:
     * x = v/w sin(w t), y = v/w (1 - cos(w t)), heading w t (closed form) */
    static const double cases[][3] = {{0.5, 1.0, 1.3},  {0.8, -0.7, 2.0}, {-0.4, 0.9, 1.0},
                                      {1.0, 1e-3, 2.0}, {0.3, 2.0, 5.0},  {-0.6, -1.2, 0.7},
                                      {0.2, 4.0, 3.0}};
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double v = cases[i][0], w = cases[i][1], t = cases[i][2];
        double x = v / w * sin(w * t), y = v / w * (1 - cos(w * t));
        lc_pose q = lc_motion_arc((lc_pose){0, 0, 0}, w / v, v * t);
        assert_near(q.x, x, 1e-12);
        assert_near(q.y, y, 1e-12);
        assert_near(lc_wrap_angle(q.yaw - w * t), 0.0, 1e-12);
        /* from any pose: the same arc moved rigidly */
        lc_pose start = {1.5, -2.0, 0.8};
        lc_pose r = lc_motion_arc(start, w / v, v * t);
        lc_vec2 e = lc_pose_apply(start, lc_v2(x, y));
        assert_near(r.x, e.x, 1e-12);
        assert_near(r.y, e.y, 1e-12);
    }
    /* straight and nearly straight: x = v t (closed form) */
    lc_pose q = lc_motion_arc((lc_pose){1, 2, LC_PI / 2}, 0.0, 3.0);
    assert_near(q.x, 1.0, 1e-12);
    assert_near(q.y, 5.0, 1e-12);
    q = lc_motion_arc((lc_pose){0, 0, 0}, 1e-14, 3.0);
    assert_near(q.x, 3.0, 1e-12);
    assert_near(q.y, 0.5e-14 * 9.0, 1e-15); /* y ~ kappa s^2 / 2 */
    q = lc_motion_arc((lc_pose){0, 0, 0}, 2.0, 0.0);
    assert_near(q.x, 0.0, 0);
    assert_near(q.y, 0.0, 0);
}

/* The exact arc margin against the arc sampled densely in closed form. */
static void test_arc_margin_dense(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 0xa5c);
    test_region t;
    for (int c = 0; c < 2000; c++) {
        make_random_region(&rng, &t);
        lc_vec2 p;
        if (!sample_inside(&rng, &t, 0.0, &p))
            continue;
        lc_pose pose = {p.x, p.y, lc_rng_uniform(&rng, -LC_PI, LC_PI)};
        double kappa = c % 7 == 0 ? 0.0 : lc_rng_uniform(&rng, -6, 6);
        double s = lc_rng_uniform(&rng, -4, 4);
        double exact = lc_motion_arc_margin(&t.r, pose, kappa, s);
        const int n = 4000;
        double dense = INFINITY;
        for (int k = 0; k <= n; k++) {
            double sig = s * k / n;
            /* closed form in the start frame: (sin(k s)/k, (1 - cos(k s))/k) */
            lc_vec2 loc = kappa == 0 ? lc_v2(sig, 0)
                                     : lc_v2(sin(kappa * sig) / kappa,
                                             (1 - cos(kappa * sig)) / kappa);
            dense = fmin(dense, margin_of(&t, lc_pose_apply(pose, loc)));
        }
        assert_true(exact <= dense + 1e-9);
        assert_true(exact >= dense - fabs(s) / n - 1e-9);
    }
    /* no halfspaces: nothing to leave */
    lc_region empty = {0};
    assert_true(isinf(lc_motion_arc_margin(&empty, (lc_pose){0, 0, 0}, 1.0, 1.0)));
    /* not finite: NaN, never "safe" */
    make_box(&t, -1, -1, 1, 1);
    assert_true(isnan(lc_motion_arc_margin(&t.r, (lc_pose){0, 0, 0}, NAN, 1.0)));
    assert_true(isnan(lc_motion_arc_margin(&t.r, (lc_pose){0, 0, 0}, 1.0, INFINITY)));
    assert_true(isnan(lc_motion_arc_margin(&t.r, (lc_pose){0, NAN, 0}, 1.0, 1.0)));
    /* a half turn of radius 0.5 from the origin heading +x reaches y = 1:
     * margin to the box top y <= 1 is 0 (closed form: diameter 1) */
    assert_near(lc_motion_arc_margin(&t.r, (lc_pose){0, 0, 0}, 2.0, LC_PI / 2), 0.0, 1e-12);
    /* a quarter turn of radius 1 reaches (1, 1): margin 0 to both x, y <= 1 */
    assert_near(lc_motion_arc_margin(&t.r, (lc_pose){0, 0, 0}, 1.0, LC_PI / 2), 0.0, 1e-12);
    /* the interior extreme: a 3/4 turn of radius 0.5 from (0, -0.5) heading +x
     * passes x = 0.5 (rightmost point) mid-arc: margin 0.5 to x <= 1, the
     * ends and every other side being 1.5 away */
    make_box(&t, -2, -2, 1, 2);
    assert_near(lc_motion_arc_margin(&t.r, (lc_pose){0, -0.5, 0}, 2.0, 0.75 * LC_PI), 0.5,
                1e-12);
}

/* ---- point model: worked examples ------------------------------------ */

static int point_step(const lc_robot *r, const lc_motion_params *p, const test_region *t,
                      lc_pose pose, lc_vec2 target, lc_vec2 last, double dt, lc_setpoint *out)
{
    lc_setpoint l = lc_setpoint_stop(LC_LIMIT_NONE);
    l.vx = last.x, l.vy = last.y;
    return lc_motion_point(r, p, &t->r, pose, target, &l, dt, out);
}

static void test_point_examples(void **state)
{
    (void)state;
    lc_robot r;
    lc_motion_params p;
    test_region t;
    lc_setpoint out;
    example_setup(LC_MODEL_POINT, &r, &p, &t);

    /* far target at steady top speed */
    assert_int_equal(point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), lc_v2(0.8, 0),
                                0.05, &out), 0);
    assert_near(out.vx, 0.8, 1e-12);
    assert_near(out.vy, 0.0, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TOP_SPEED);
    /* from rest: a_max dt toward the target */
    point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(3, 4), lc_v2(0, 0), 0.05, &out);
    assert_near(out.vx, 0.025 * 0.6, 1e-12);
    assert_near(out.vy, 0.025 * 0.8, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_ACCEL);
    /* close: the proportional term k_p d */
    point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.3, 0), lc_v2(0.3, 0), 0.05, &out);
    assert_near(out.vx, 0.3, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_GOAL);
    /* at the target and at rest: nothing asked */
    point_step(&r, &p, &t, (lc_pose){1, 1, 0}, lc_v2(1, 1), lc_v2(0, 0), 0.05, &out);
    assert_true(out.vx == 0 && out.vy == 0);
    assert_int_equal(out.limit, LC_LIMIT_NONE);
    /* robot frame: yaw pi/2, target world +y is robot +x */
    point_step(&r, &p, &t, (lc_pose){0, 0, LC_PI / 2}, lc_v2(0, 5), lc_v2(0.8, 0), 0.05, &out);
    assert_near(out.vx, 0.8, 1e-12);
    assert_near(out.vy, 0.0, 1e-12);
    /* NULL last is at rest */
    assert_int_equal(lc_motion_point(&r, &p, &t.r, (lc_pose){0, 0, 0}, lc_v2(1, 0), NULL, 0.05,
                                     &out), 0);
    assert_near(out.vx, 0.025, 1e-12);

    /* braking: wall 0.55 ahead, v = sqrt(2 a s) (constant deceleration closed form) */
    make_box(&t, -1, -1, 0.55, 1);
    p.k_p = 5.0;
    point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.5, 0), lc_v2(0.74, 0), 1.0, &out);
    assert_near(out.vx, sqrt(2 * 0.5 * 0.55), 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    /* with latency 0.2 s: v t_r + v^2 / (2a) = s, the docs/REFERENCES.md formula */
    p.latency = 0.2;
    point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.5, 0), lc_v2(0.6, 0), 1.0, &out);
    assert_near(lc_stopping_distance(out.vx, 0.2, 0.5), 0.55, 1e-12);
    assert_near(out.vx, 0.5 * (-0.2 + sqrt(0.04 + 2 * 0.55 / 0.5)), 1e-12);
    p.latency = 0;

    /* the region shrank under a fast robot: brake at a_max in its direction */
    make_box(&t, -1, -1, 0.2, 1);
    point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.1, 0), lc_v2(0.8, 0), 0.05, &out);
    assert_near(out.vx, 0.8 - 0.025, 1e-12);
    assert_near(out.vy, 0.0, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    /* The safe set of velocities is not convex: from v0 = (2, 0.149), safe
     * under a wall 0.3 away (0.149 |v0| <= 2 a 0.3), the full step toward
     * the safe v_des = (0, sqrt(2 a 0.3)) crosses unsafe velocities. The
     * result stays within the step and keeps the promise. */
    make_box(&t, -20, -20, 20, 0.3);
    lc_robot fast = r;
    fast.v_max = 2.5;
    point_step(&fast, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0, 0.29), lc_v2(2, 0.149), 2.0, &out);
    double m = point_brake_margin(&t, lc_v2(0, 0), lc_v2(out.vx, out.vy), 0.5, 0);
    assert_true(m >= -PATH_TOL);
    assert_true(hypot(out.vx - 2, out.vy - 0.149) <= 1.0 + 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    assert_true(out.vy > 0.149); /* it did turn toward the target */
}

static void test_point_degenerate(void **state)
{
    (void)state;
    lc_robot r = robot_default_of(LC_MODEL_POINT);
    lc_motion_params p;
    lc_motion_params_default(&p);
    test_region t;
    make_box(&t, -1, -1, 1, 1);
    lc_setpoint out, last = lc_setpoint_stop(LC_LIMIT_NONE);
    lc_pose pose = {0, 0, 0};
    lc_vec2 tg = {0.5, 0};
    const double bad[] = {0.0, -0.05, NAN, INFINITY, -INFINITY};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        last.vx = 0.3;
        assert_int_equal(lc_motion_point(&r, &p, &t.r, pose, tg, &last, bad[i], &out),
                         LC_ERR_BAD_INPUT);
        assert_true(out.vx == 0 && out.vy == 0 && out.v == 0 && out.w == 0);
    }
    assert_int_equal(lc_motion_point(&r, &p, &t.r, (lc_pose){NAN, 0, 0}, tg, &last, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_motion_point(&r, &p, &t.r, (lc_pose){0, 0, INFINITY}, tg, &last, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_motion_point(&r, &p, &t.r, pose, lc_v2(NAN, 0), &last, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    last.vy = NAN;
    assert_int_equal(lc_motion_point(&r, &p, &t.r, pose, tg, &last, 0.05, &out), LC_ERR_BAD_INPUT);
    assert_true(out.vx == 0 && out.vy == 0);
    last.vy = 0;
    lc_region empty = {0};
    assert_int_equal(lc_motion_point(&r, &p, &empty, pose, tg, &last, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_motion_point(NULL, &p, &t.r, pose, tg, &last, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_motion_point(&r, NULL, &t.r, pose, tg, &last, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(lc_motion_point(&r, &p, NULL, pose, tg, &last, 0.05, &out), LC_ERR_BAD_INPUT);
    assert_int_equal(lc_motion_point(&r, &p, &t.r, pose, tg, &last, 0.05, NULL), LC_ERR_BAD_INPUT);
    lc_robot r0 = r;
    r0.a_max = 0;
    assert_int_equal(lc_motion_point(&r0, &p, &t.r, pose, tg, &last, 0.05, &out), LC_ERR_BAD_INPUT);
    r0 = r;
    r0.v_max = NAN;
    assert_int_equal(lc_motion_point(&r0, &p, &t.r, pose, tg, &last, 0.05, &out), LC_ERR_BAD_INPUT);
    lc_motion_params p0 = p;
    p0.latency = -1;
    assert_int_equal(lc_motion_point(&r, &p0, &t.r, pose, tg, &last, 0.05, &out), LC_ERR_BAD_INPUT);

    /* v_max 0: no motion, still valid */
    r0 = r;
    r0.v_max = 0;
    assert_int_equal(lc_motion_point(&r0, &p, &t.r, pose, tg, NULL, 0.05, &out), 0);
    assert_true(out.vx == 0 && out.vy == 0);
    /* centre outside the region: no safe motion, brakes */
    last.vx = 0.01;
    assert_int_equal(lc_motion_point(&r, &p, &t.r, (lc_pose){1.5, 0, 0}, tg, &last, 0.05, &out), 0);
    assert_true(out.vx == 0 && out.vy == 0);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    /* huge coordinates: finite and inside */
    make_box(&t, 1e9 - 2, 1e9 - 2, 1e9 + 2, 1e9 + 2);
    assert_int_equal(lc_motion_point(&r, &p, &t.r, (lc_pose){1e9, 1e9, 0.3},
                                     lc_v2(1e9 + 1, 1e9), NULL, 0.05, &out), 0);
    assert_true(isfinite(out.vx) && isfinite(out.vy));
    assert_near(hypot(out.vx, out.vy), 0.025, 1e-9);
}

/* ---- point model: properties on random regions ----------------------- */

static void random_point_robot(lc_rng *rng, lc_robot *r, lc_motion_params *p, double *dt)
{
    *r = robot_default_of(LC_MODEL_POINT);
    r->v_max = lc_rng_uniform(rng, 0.3, 1.5);
    r->a_max = lc_rng_uniform(rng, 0.3, 2.0);
    lc_motion_params_default(p);
    p->k_p = lc_rng_uniform(rng, 0.5, 3.0);
    *dt = lc_rng_uniform(rng, 0.01, 0.2);
    p->latency = lc_rng_next(rng) % 3 == 0 ? *dt : 0.0;
}

static void test_point_properties(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 20240601);
    test_region t;
    int cases = 0, fallback = 0, from_rest = 0;
    while (cases < CASES) {
        make_random_region(&rng, &t);
        lc_vec2 p0, tg;
        if (!sample_inside(&rng, &t, 1e-6, &p0) || !sample_inside(&rng, &t, 0.0, &tg))
            continue;
        if (cases % 10 == 0)
            tg = lc_region_project(&t.r, lc_add(tg, lc_v2(20, 0))); /* on the boundary */
        if (cases % 25 == 0)
            tg = p0;
        cases++;
        lc_robot r;
        lc_motion_params prm;
        double dt;
        random_point_robot(&rng, &r, &prm, &dt);
        lc_pose pose = {p0.x, p0.y, lc_rng_uniform(&rng, -LC_PI, LC_PI)};
        double sp = r.v_max * sqrt(lc_rng_uniform(&rng, 0, 1)), ang = lc_rng_uniform(&rng, -LC_PI, LC_PI);
        lc_vec2 last_r = lc_v2(sp * cos(ang), sp * sin(ang));
        lc_setpoint out;
        assert_int_equal(point_step(&r, &prm, &t, pose, tg, last_r, dt, &out), 0);
        lc_vec2 o = lc_v2(out.vx, out.vy);
        assert_true(lc_vec2_finite(o));
        assert_true(lc_len(o) <= r.v_max * (1 + 1e-9));
        assert_true(lc_dist(o, last_r) <= r.a_max * dt * (1 + 1e-9) + 1e-12);

        /* braking promise, simulated here: safe whenever the maximal
         * deceleration of last is safe; otherwise exactly that deceleration */
        lc_vec2 o_w = lc_rotate(o, pose.yaw), l_w = lc_rotate(last_r, pose.yaw);
        double step = r.a_max * dt, sl = lc_len(l_w);
        lc_vec2 v_m = sl > step ? lc_scale(l_w, (sl - step) / sl) : lc_v2(0, 0);
        bool vm_safe = point_brake_margin(&t, p0, v_m, r.a_max, prm.latency) >= -PATH_TOL;
        double m = point_brake_margin(&t, p0, o_w, r.a_max, prm.latency);
        if (m < -PATH_TOL) {
            fallback++;
            assert_false(vm_safe);
            assert_true(lc_dist(o_w, v_m) < 1e-9);
            assert_int_equal(out.limit, LC_LIMIT_BRAKING);
        }

        /* from rest, toward the target at min(a dt, v_max, k_p d, braking speed),
         * the last from the constant-deceleration closed form s = v t_r + v^2/(2a) */
        assert_int_equal(point_step(&r, &prm, &t, pose, tg, lc_v2(0, 0), dt, &out), 0);
        lc_vec2 d = lc_sub(tg, p0);
        double dist = lc_len(d);
        if (dist > 0.05 && margin_of(&t, p0) > 1e-3) {
            from_rest++;
            lc_vec2 u = lc_scale(d, 1 / dist);
            double s = ray_room(&t, p0, u), tr = prm.latency, a = r.a_max;
            double vb = a * (-tr + sqrt(tr * tr + 2 * s / a));
            double want = fmin(fmin(step, r.v_max), fmin(prm.k_p * dist, vb));
            lc_vec2 ow = lc_rotate(lc_v2(out.vx, out.vy), pose.yaw);
            assert_near(lc_len(ow), want, 1e-9);
            assert_true(lc_len(ow) > 0);
            assert_true(lc_dot(ow, u) > 0);
            assert_near(lc_cross(ow, u), 0.0, 1e-12);
        }
    }
    print_message("point: %d cases, %d with no safe setpoint in reach (max deceleration), "
                  "%d from rest toward the target\n", cases, fallback, from_rest);
    assert_true(from_rest > CASES / 2);
}

/* Shrink the region about the robot: a wall came closer while it moved. */
static void shrink_about(test_region *t, lc_pose pose, lc_vec2 *target)
{
    for (int i = 0; i < t->r.nh; i++) {
        double c = lc_dot(t->h[i].a, lc_v2(pose.x, pose.y));
        t->h[i].b = c + 0.3 * (t->h[i].b - c);
    }
    region_finish(t, t->r.nh);
    *target = lc_region_project(&t->r, *target);
}

/* Closed-loop counts: episodes that had to brake at a_max, by kind. */
typedef struct loop_stats {
    int episodes, steps, shrink_brakes, hold_brakes, latency_brakes;
} loop_stats;

/*
 * After a step without a fallback so far: the centre is inside, up to
 * a_max dt^2 / 2 when the latency does not cover the hold (see motion.c).
 */
static void check_still_inside(const test_region *t, lc_pose pose, const lc_robot *r,
                               const lc_motion_params *prm, double dt)
{
    double out_max = prm->latency >= dt ? 0.0 : 0.5 * r->a_max * dt * dt;
    /* 1e-8: motion.c's 1e-9 slack plus the rounding of this integration */
    assert_true(margin_of(t, lc_v2(pose.x, pose.y)) >= -out_max - 1e-8);
}

static void count_brake(loop_stats *st, bool shrink, const lc_motion_params *prm, double dt)
{
    if (shrink)
        st->shrink_brakes++;
    else if (prm->latency >= dt)
        st->latency_brakes++;
    else
        st->hold_brakes++;
}

/*
 * Closed loop: the robot follows each setpoint for dt (zero-order hold);
 * in half the episodes the region shrinks about the robot halfway, in the
 * others the target is often on the boundary with a high gain, so that the
 * braking term binds all the way in. Rate limits hold between consecutive
 * setpoints, speed <= v_max, each setpoint is safe or the maximal
 * deceleration, and with latency = dt and a fixed region none is ever
 * needed (the promise carries over from step to step).
 */
static void test_point_closed_loop(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 77);
    test_region t;
    loop_stats st = {0};
    while (st.episodes < 200) {
        make_random_region(&rng, &t);
        lc_vec2 p, tg;
        if (!sample_inside(&rng, &t, 1e-3, &p) || !sample_inside(&rng, &t, 0.0, &tg))
            continue;
        st.episodes++;
        lc_robot r;
        lc_motion_params prm;
        double dt;
        random_point_robot(&rng, &r, &prm, &dt);
        bool shrink = st.episodes % 2 == 0;
        if (!shrink) {
            prm.k_p = lc_rng_uniform(&rng, 1, 20);
            if (st.episodes % 4 == 1)
                tg = lc_region_project(&t.r, lc_add(tg, lc_v2(30, 10)));
        }
        lc_pose pose = {p.x, p.y, lc_rng_uniform(&rng, -LC_PI, LC_PI)};
        lc_vec2 last = lc_v2(0, 0);
        bool fell_back = false;
        for (int k = 0; k < 120; k++, st.steps++) {
            if (shrink && k == 60)
                shrink_about(&t, pose, &tg);
            lc_setpoint out;
            assert_int_equal(point_step(&r, &prm, &t, pose, tg, last, dt, &out), 0);
            lc_vec2 o = lc_v2(out.vx, out.vy);
            assert_true(lc_len(o) <= r.v_max * (1 + 1e-9));
            assert_true(lc_dist(o, last) <= r.a_max * dt * (1 + 1e-9) + 1e-12);
            lc_vec2 ow = lc_rotate(o, pose.yaw), pw = lc_v2(pose.x, pose.y);
            if (point_brake_margin(&t, pw, ow, r.a_max, prm.latency) < -PATH_TOL) {
                if (!fell_back)
                    count_brake(&st, shrink, &prm, dt);
                fell_back = true;
                assert_int_equal(out.limit, LC_LIMIT_BRAKING);
                lc_vec2 lw = lc_rotate(last, pose.yaw);
                double sl = lc_len(lw), step = r.a_max * dt;
                lc_vec2 v_m = sl > step ? lc_scale(lw, (sl - step) / sl) : lc_v2(0, 0);
                assert_true(lc_dist(ow, v_m) < 1e-9);
            }
            pose.x += ow.x * dt, pose.y += ow.y * dt;
            if (!fell_back)
                check_still_inside(&t, pose, &r, &prm, dt);
            last = o;
        }
    }
    print_message("point closed loop: %d episodes, %d steps; episodes braking at a_max: "
                  "%d after a shrink, %d with latency 0, %d with latency dt\n",
                  st.episodes, st.steps, st.shrink_brakes, st.hold_brakes, st.latency_brakes);
    assert_true(st.shrink_brakes > 0); /* the shrink did force some */
    assert_int_equal(st.latency_brakes, 0);
}

/* ---- unicycle --------------------------------------------------------- */

/* One step from the last setpoint (v0, w0): the centre's law, or the body's. */
static int step_from(bool body, const lc_robot *r, const lc_motion_params *p,
                     const test_region *t, lc_pose pose, lc_vec2 target, double v0, double w0,
                     double dt, lc_setpoint *out)
{
    lc_setpoint l = lc_setpoint_stop(LC_LIMIT_NONE);
    l.v = v0, l.w = w0;
    return body ? lc_motion_unicycle_body(r, p, &t->r, pose, target, &l, dt, out)
                : lc_motion_unicycle(r, p, &t->r, pose, target, &l, dt, out);
}

static int uni_step(const lc_robot *r, const lc_motion_params *p, const test_region *t,
                    lc_pose pose, lc_vec2 target, double v0, double w0, double dt,
                    lc_setpoint *out)
{
    return step_from(false, r, p, t, pose, target, v0, w0, dt, out);
}

/*
 * A heading wanted at the target (params->has_heading): the polar law's
 * goal frame turned to it, beta = heading - bearing held within 0.5 rad
 * (motion.c LC_MOTION_BETA_MAX), w = k_alpha alpha + k_beta beta (Siegwart
 * et al. 3.6, the gains from memory), held to the rate from which the turn
 * stops on w / k_alpha, slowing at dw_max / 4 (closed form as in
 * test_unicycle_examples). The robot at the origin faces a far target
 * straight ahead (alpha = 0), at v_max, its last w already the answer (the
 * rate limit does not bind). A way on to the right (heading -0.3) swings
 * it left first (k_beta < 0: the approach comes onto the line the way
 * leaves along, from its far side); -1.2 and -pi/2 are held to 0.5 alike;
 * no heading, or one along the bearing, leaves w = 0.
 */
static void test_unicycle_heading(void **state)
{
    (void)state;
    lc_robot r;
    lc_motion_params p;
    test_region t;
    lc_setpoint out;
    example_setup(LC_MODEL_UNICYCLE, &r, &p, &t);
    const double heading[] = {-0.3, 0.3, -1.2, -LC_PI / 2, 0.0};
    for (int k = 0; k < 5; k++) {
        p.has_heading = true;
        p.heading = heading[k];
        double beta = fmax(-0.5, fmin(0.5, heading[k]));
        double w_law = p.k_beta * beta;
        double w_stop = sqrt(2.0 * 0.25 * r.dw_max * fabs(w_law / p.k_alpha));
        double w = w_law > 0 ? fmin(w_law, w_stop) : fmax(w_law, -w_stop);
        uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), 0.8, w, 0.05, &out);
        assert_near(out.w, w, 1e-12);
        assert_near(out.v, 0.8, 1e-12);
        if (heading[k] < 0)
            assert_true(out.w > 0.0);
        else if (heading[k] > 0)
            assert_true(out.w < 0.0);
        else
            assert_near(out.w, 0.0, 0);
    }
    lc_setpoint held;
    p.heading = -1.2;
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), 0.8, out.w, 0.05, &held);
    p.heading = -LC_PI / 2;
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), 0.8, out.w, 0.05, &out);
    assert_near(out.w, held.w, 0);
    p.has_heading = false;
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), 0.8, 0.0, 0.05, &out);
    assert_near(out.w, 0.0, 0);
    /* a heading that is not a number is refused */
    p.has_heading = true;
    p.heading = NAN;
    assert_int_equal(uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), 0.8, 0.0, 0.05, &out),
                     LC_ERR_BAD_INPUT);
}

static void test_unicycle_examples(void **state)
{
    (void)state;
    lc_robot r;
    lc_motion_params p;
    test_region t;
    lc_setpoint out;
    example_setup(LC_MODEL_UNICYCLE, &r, &p, &t);

    /* straight ahead, far, at speed: v_max, w = 0 */
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), 0.8, 0, 0.05, &out);
    assert_near(out.v, 0.8, 1e-12);
    assert_near(out.w, 0.0, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TOP_SPEED);
    /* close: v = k_rho rho (polar law) */
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.1, 0), 0.3, 0, 0.05, &out);
    assert_near(out.v, 0.3, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_GOAL);
    /* heading error 0.5 far away: w = k_alpha alpha = 4, held to the rate
     * from which the turn stops on the bearing slowing at dw_max / 4:
     * w^2 / (2 dw_max / 4) = alpha, w = sqrt(0.5) (uniform deceleration,
     * closed form); v_max on the way */
    lc_vec2 tg = lc_v2(5 * cos(0.5), 5 * sin(0.5));
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, tg, 0.8, 0.7, 0.05, &out);
    assert_near(out.w, sqrt(0.5), 1e-12);
    assert_near(out.v, 0.8, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TOP_SPEED);
    /* the same with w_max 0.5 below that: the curvature sqrt(0.5) / 0.8 is
     * kept, so v = w_max 0.8 / sqrt(0.5) */
    lc_robot slow_turn = r;
    slow_turn.w_max = 0.5;
    uni_step(&slow_turn, &p, &t, (lc_pose){0, 0, 0}, tg, 0.55, 0.5, 0.05, &out);
    assert_near(out.w, 0.5, 1e-12);
    assert_near(out.v, 0.5 * 0.8 / sqrt(0.5), 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TURN_RATE);
    /* target behind-left: turn in place, w rising at dw_max dt */
    tg = lc_v2(2 * cos(2.0), 2 * sin(2.0));
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, tg, 0, 0, 0.05, &out);
    assert_near(out.v, 0.0, 0);
    assert_near(out.w, 0.1, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TURNING);
    /* reversing allowed: the rear faces a target behind (alpha_rear = 2.4 - pi) */
    r.reverse = true;
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, tg, 0, 0, 0.05, &out);
    assert_int_equal(out.limit, LC_LIMIT_TURNING); /* alpha_rear = 2 - pi, still > 1 */
    tg = lc_v2(2 * cos(2.4), 2 * sin(2.4));
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, tg, 0, 0, 0.05, &out);
    assert_near(out.v, -0.025, 1e-12);
    assert_true(out.w < 0);
    r.reverse = false;

    /* braking: wall 0.3 ahead, straight: v = sqrt(2 a s) (closed form) */
    make_box(&t, -10, -10, 0.3, 10);
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.29, 0), 0.55, 0, 0.05, &out);
    assert_near(out.v, sqrt(2 * 0.5 * 0.3), 2e-9);
    assert_near(out.w, 0.0, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    /* no safe speed in reach: brake at a_max */
    make_box(&t, -10, -10, 0.1, 10);
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.05, 0), 0.8, 0, 0.05, &out);
    assert_near(out.v, 0.775, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    /* ... turning away from the wall where the w window allows it */
    make_box(&t, -10, -10, 10, 0.2);
    uni_step(&r, &p, &t, (lc_pose){0, 0, 0.6}, lc_v2(0.1, 0.15), 0.8, 0.0, 0.05, &out);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    assert_near(out.v, 0.775, 1e-12);
    assert_near(out.w, -0.1, 1e-12);

    /* degenerate */
    make_box(&t, -1, -1, 1, 1);
    assert_int_equal(uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.5, 0), 0.2, 0, 0.0, &out),
                     LC_ERR_BAD_INPUT);
    assert_true(out.v == 0 && out.w == 0);
    assert_int_equal(uni_step(&r, &p, &t, (lc_pose){0, 0, NAN}, lc_v2(0.5, 0), 0.2, 0, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_int_equal(uni_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.5, 0), 0.2, INFINITY, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    assert_true(out.v == 0 && out.w == 0);
    lc_robot r0 = r;
    r0.dw_max = NAN;
    assert_int_equal(uni_step(&r0, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.5, 0), 0, 0, 0.05, &out),
                     LC_ERR_BAD_INPUT);
    lc_region empty = {0};
    assert_int_equal(lc_motion_unicycle(&r, &p, &empty, (lc_pose){0, 0, 0}, lc_v2(1, 0), NULL,
                                        0.05, &out), LC_ERR_BAD_INPUT);
    /* at the target, at rest */
    assert_int_equal(lc_motion_unicycle(&r, &p, &t.r, (lc_pose){0.2, 0.2, 1}, lc_v2(0.2, 0.2),
                                        NULL, 0.05, &out), 0);
    assert_true(out.v == 0 && out.w == 0);
    assert_int_equal(out.limit, LC_LIMIT_NONE);
}

/*
 * From a last setpoint beyond the robot's limits (a plan request's
 * velocity, a description lowered mid-run) the next one is within them:
 * the limits come before the rate limits (found by a review: 5 m/s gave
 * 4.975 m/s with v_max 0.8).
 */
static void test_last_beyond_limits(void **state)
{
    (void)state;
    lc_motion_params p;
    lc_motion_params_default(&p);
    test_region t;
    lc_setpoint out;
    make_box(&t, -10, -10, 10, 10);
    lc_robot r = robot_default_of(LC_MODEL_POINT);
    assert_int_equal(point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(5, 0), lc_v2(5, 0), 0.05,
                                &out), 0);
    assert_true(hypot(out.vx, out.vy) <= r.v_max + 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TOP_SPEED);
    lc_robot u = robot_default_of(LC_MODEL_UNICYCLE);
    lc_setpoint last = {.v = 3, .w = 5};
    assert_int_equal(lc_motion_unicycle(&u, &p, &t.r, (lc_pose){0, 0, 0}, lc_v2(5, 0), &last,
                                        0.05, &out), 0);
    assert_true(fabs(out.v) <= u.v_max + 1e-12 && fabs(out.w) <= u.w_max + 1e-12);
    last = (lc_setpoint){.v = -3, .w = -5};
    assert_int_equal(lc_motion_unicycle(&u, &p, &t.r, (lc_pose){0, 0, 0}, lc_v2(5, 0), &last,
                                        0.05, &out), 0);
    assert_true(out.v >= 0 && fabs(out.w) <= u.w_max + 1e-12);
}

/*
 * From a last setpoint beyond v_max the step starts at v_max and brakes
 * from there like from any other last setpoint (found by fuzzing the plan
 * request, tests/fuzz/corpus/plan/regress-fast-last-near-wall: the braking
 * velocity from the too-fast last setpoint was scaled down to v_max
 * unchecked, labelled top_speed, and stopped 0.14 m beyond the region).
 * Stopping distance v^2 / (2 a) in closed form (docs/REFERENCES.md).
 */
static void test_last_beyond_limits_brakes(void **state)
{
    (void)state;
    lc_motion_params p;
    lc_motion_params_default(&p);
    lc_robot r = robot_default_of(LC_MODEL_POINT);
    const double dt = 0.05, step = r.a_max * dt;
    test_region t;
    lc_setpoint out;
    /* wall 0.5 m ahead: even v_max - a dt (0.6 m to stop) is too fast, so
     * the step brakes as hard as the rate allows from v_max */
    make_box(&t, -10, -10, 0.5, 10);
    assert_int_equal(point_step(&r, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.4, 0), lc_v2(5, 0), dt,
                                &out), 0);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    assert_near(out.vx, r.v_max - step, 1e-12);
    assert_near(out.vy, 0, 1e-12);
    /* wall 0.7 m ahead, at an angle: braking from v_max is possible, and the
     * setpoint found stops inside */
    for (int k = 0; k < 8; k++) {
        double yaw = -0.7 + 0.2 * k;
        make_box(&t, -10, -10, 0.7, 10);
        lc_vec2 last = lc_rotate(lc_v2(5, 0), -yaw); /* robot frame, +x in the world */
        assert_int_equal(point_step(&r, &p, &t, (lc_pose){0, 0, yaw}, lc_v2(0.6, 0.1), last, dt,
                                    &out), 0);
        lc_vec2 v = lc_rotate(lc_v2(out.vx, out.vy), yaw);
        double speed = lc_len(v);
        assert_true(speed <= r.v_max + 1e-12);
        assert_true(lc_len(lc_sub(v, lc_v2(r.v_max, 0))) <= step + 1e-12);
        double stop = speed * speed / (2 * r.a_max);
        assert_true(speed == 0 || v.x / speed * stop <= 0.7 + 1e-9);
    }
    /* unicycle from 5 m/s toward a wall 0.5 m ahead: brakes from v_max too
     * (the rate window was pinned to v_max: no slower speed to brake with) */
    lc_robot u = robot_default_of(LC_MODEL_UNICYCLE);
    lc_setpoint last = {.v = 5, .w = 0};
    make_box(&t, -10, -10, 0.5, 10);
    assert_int_equal(lc_motion_unicycle(&u, &p, &t.r, (lc_pose){0, 0, 0}, lc_v2(0.4, 0), &last,
                                        dt, &out), 0);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    assert_near(out.v, u.v_max - u.a_max * dt, 1e-12);
}

/*
 * Tait-Kneser theorem (P. G. Tait 1896, A. Kneser 1912): the osculating
 * circles of a curve whose curvature is monotone are nested. With v falling
 * at a_max and w at dw_max from |w / v| > dw_max / a_max the curvature only
 * grows, so the path stays in the first osculating disc. And a path of
 * length s stays within s of where it starts (the triangle inequality), so
 * the braking path is also in the disc of radius v^2 / (2 a) about the
 * pose; motion.c checks each line against the nearer of the two discs.
 * Both simulated here by RK4 for random cases.
 */
static void test_unicycle_brake_disc(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 1896);
    for (int c = 0; c < 300; c++) {
        double a = lc_rng_uniform(&rng, 0.2, 2), dw = lc_rng_uniform(&rng, 0.2, 4);
        double v = lc_rng_uniform(&rng, -1.5, 1.5);
        double kmin = dw / a * 1.01;
        double kappa = copysign(lc_rng_uniform(&rng, kmin, kmin * 20), lc_rng_uniform(&rng, -1, 1));
        double w = kappa * v;
        double r = 1 / fabs(kappa);
        /* centre of the osculating circle at the origin heading +x: (0, 1/kappa) */
        ustate s = {0, 0, 0};
        const int n = 2000;
        double tb = fabs(v) / a, worst = -INFINITY, farthest = 0;
        for (int k = 0; k < n; k++) {
            double ta = tb * k / n, tc = tb * (k + 1) / n;
            double va = v * (1 - ta / tb), vb = v * (1 - tc / tb);
            double wa = copysign(fmax(fabs(w) - dw * ta, 0), w);
            double wb = copysign(fmax(fabs(w) - dw * tc, 0), w);
            s = rk4(s, va, wa, vb, wb, tb / n);
            worst = fmax(worst, hypot(s.x, s.y - 1 / kappa) - r);
            farthest = fmax(farthest, hypot(s.x, s.y));
        }
        assert_true(worst <= 1e-9 * fmax(1, r));
        assert_true(farthest <= v * v / (2 * a) * (1 + 1e-9));
    }

    /* In use: a tight left turn beside a wall on the left. The constant-
     * curvature arc would stay clear; the curvature cannot be held (what
     * the robot can do within dw_max), so the discs are checked. */
    lc_robot rb = robot_default_of(LC_MODEL_UNICYCLE);
    lc_motion_params p;
    lc_motion_params_default(&p);
    test_region t;
    lc_setpoint out;
    /* target (0.6, 0.35): alpha = 0.528, the law's w held to
     * sqrt(dw_max alpha / 2) = 0.727, its curvature 0.727 / 0.8 = 0.908
     * below dw/a = 4: from (0.19, 1.0) the step takes v = 0.215 (a_max dt
     * more) and w = 0.9 (dw_max dt less), curvature 4.19 > 4. The wall at
     * 0.36: the tangent disc (top at 2 v / w = 0.478) crosses it, the path's
     * length v^2 / (2a) = 0.046 m does not: the setpoint stands. */
    make_box(&t, -10, -10, 10, 0.36);
    uni_step(&rb, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.6, 0.35), 0.19, 1.0, 0.05, &out);
    assert_int_equal(out.limit, LC_LIMIT_ACCEL);
    assert_near(out.v, 0.215, 1e-12);
    assert_near(out.w, 0.9, 1e-12);
    assert_true(fabs(out.w / out.v) * rb.a_max > rb.dw_max);
    assert_true(2 * out.v / out.w > 0.36);
    assert_true(uni_brake_margin(&t, (lc_pose){0, 0, 0}, out.v, out.w, &rb, 0) >= -PATH_TOL);
    /* the wall at 0.02 m: neither disc fits at 0.215, and the rate
     * window's slowest speed 0.165 goes 0.027 m; no w saves it: the step
     * brakes at a_max */
    make_box(&t, -10, -10, 10, 0.02);
    uni_step(&rb, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.6, 0.35), 0.19, 1.0, 0.05, &out);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    assert_near(out.v, 0.165, 1e-12);
    /* the wall at 0.02 m, from (0.16, 1.0): the speed whose path length
     * v^2 / (2a) is 0.02 m, sqrt(0.02) (closed form), with w held */
    uni_step(&rb, &p, &t, (lc_pose){0, 0, 0}, lc_v2(0.6, 0.35), 0.16, 1.0, 0.05, &out);
    assert_int_equal(out.limit, LC_LIMIT_BRAKING);
    assert_near(out.v, sqrt(0.02), 1e-8); /* the checks' 1e-9 m of rounding slack */
    assert_near(out.w, 0.9, 1e-12);
}

static void random_uni_robot(lc_rng *rng, lc_robot *r, lc_motion_params *p, double *dt)
{
    *r = robot_default_of(LC_MODEL_UNICYCLE);
    r->v_max = lc_rng_uniform(rng, 0.3, 1.5);
    r->a_max = lc_rng_uniform(rng, 0.3, 2.0);
    r->w_max = lc_rng_uniform(rng, 0.5, 2.5);
    r->dw_max = lc_rng_uniform(rng, 1.0, 5.0);
    r->reverse = lc_rng_next(rng) % 2 == 0;
    lc_motion_params_default(p);
    *dt = lc_rng_uniform(rng, 0.01, 0.2);
    p->latency = lc_rng_next(rng) % 3 == 0 ? *dt : 0.0;
}

static void check_uni_limits(const lc_robot *r, double dt, double v0, double w0,
                             const lc_setpoint *out)
{
    assert_true(isfinite(out->v) && isfinite(out->w));
    assert_true(fabs(out->v) <= r->v_max * (1 + 1e-12));
    assert_true(fabs(out->w) <= r->w_max * (1 + 1e-12));
    assert_true(fabs(out->v - v0) <= r->a_max * dt * (1 + 1e-9) + 1e-12);
    assert_true(fabs(out->w - w0) <= r->dw_max * dt * (1 + 1e-9) + 1e-12);
    if (!r->reverse)
        assert_true(out->v >= 0);
}

static void test_unicycle_properties(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 31415);
    test_region t;
    int cases = 0, fallback = 0, turning = 0, driving = 0;
    while (cases < CASES) {
        make_random_region(&rng, &t);
        lc_vec2 p0, tg;
        if (!sample_inside(&rng, &t, 1e-6, &p0) || !sample_inside(&rng, &t, 0.0, &tg))
            continue;
        if (cases % 10 == 0)
            tg = lc_region_project(&t.r, lc_add(tg, lc_v2(0, 20)));
        cases++;
        lc_robot r;
        lc_motion_params prm;
        double dt;
        random_uni_robot(&rng, &r, &prm, &dt);
        lc_pose pose = {p0.x, p0.y, lc_rng_uniform(&rng, -LC_PI, LC_PI)};
        double v0 = lc_rng_uniform(&rng, r.reverse ? -r.v_max : 0, r.v_max);
        double w0 = lc_rng_uniform(&rng, -r.w_max, r.w_max);
        if (cases % 5 == 0)
            v0 = lc_rng_uniform(&rng, -1, 1) * r.a_max * dt * (r.reverse ? 1 : 0.5) +
                 (r.reverse ? 0 : 0.5 * r.a_max * dt);
        lc_setpoint out;
        assert_int_equal(uni_step(&r, &prm, &t, pose, tg, v0, w0, dt, &out), 0);
        check_uni_limits(&r, dt, v0, w0, &out);
        double m = uni_brake_margin(&t, pose, out.v, out.w, &r, prm.latency);
        if (fabs(v0) <= r.a_max * dt) {
            assert_true(m >= -PATH_TOL); /* rest is in reach: always safe */
        } else if (m < -PATH_TOL) {
            fallback++;
            assert_int_equal(out.limit, LC_LIMIT_BRAKING);
            assert_near(out.v, v0 - copysign(r.a_max * dt, v0), 1e-12);
        }

        /* from rest: turn in place toward the target, or drive with the side facing it */
        assert_int_equal(uni_step(&r, &prm, &t, pose, tg, 0, 0, dt, &out), 0);
        check_uni_limits(&r, dt, 0, 0, &out);
        assert_true(uni_brake_margin(&t, pose, out.v, out.w, &r, prm.latency) >= -PATH_TOL);
        lc_vec2 d = lc_sub(tg, p0);
        if (lc_len(d) > 0.05 && margin_of(&t, p0) > 0.01) {
            double alpha = lc_wrap_angle(atan2(d.y, d.x) - pose.yaw), dir = 1;
            if (r.reverse && fabs(alpha) > LC_PI / 2)
                alpha = lc_wrap_angle(alpha + LC_PI), dir = -1;
            if (fabs(alpha) > prm.turn_in_place) {
                turning++;
                assert_int_equal(out.limit, LC_LIMIT_TURNING);
                assert_true(out.v == 0);
                assert_true(out.w * alpha > 0);
            } else {
                driving++;
                assert_true(out.v * dir > 0);
                assert_true(out.w * alpha >= 0);
            }
        }
    }
    print_message("unicycle: %d cases, %d with no safe speed in reach (max deceleration), "
                  "from rest %d turning in place, %d driving\n",
                  cases, fallback, turning, driving);
    assert_true(turning > 100 && driving > 100);
}

/*
 * Unicycle closed loop: exact motion on each setpoint's arc for dt (closed
 * form x = v/w sin(w t), y = v/w (1 - cos(w t))); a shrink in half the
 * episodes; the same checks as the point loop.
 */
static void test_unicycle_closed_loop(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 2718);
    test_region t;
    loop_stats st = {0};
    int reached = 0, quiet = 0;
    while (st.episodes < 100) {
        make_random_region(&rng, &t);
        lc_vec2 p, tg;
        if (!sample_inside(&rng, &t, 1e-3, &p) || !sample_inside(&rng, &t, 0.0, &tg))
            continue;
        st.episodes++;
        lc_robot r;
        lc_motion_params prm;
        double dt;
        random_uni_robot(&rng, &r, &prm, &dt);
        dt = lc_rng_uniform(&rng, 0.02, 0.1);
        prm.latency = st.episodes % 3 == 0 ? 0.0 : dt;
        lc_pose pose = {p.x, p.y, lc_rng_uniform(&rng, -LC_PI, LC_PI)};
        double v0 = 0, w0 = 0;
        bool shrink = st.episodes % 2 == 0, fell_back = false;
        int n_steps = (int)(30.0 / dt);
        for (int k = 0; k < n_steps; k++, st.steps++) {
            if (shrink && k == n_steps / 20)
                shrink_about(&t, pose, &tg);
            lc_setpoint out;
            assert_int_equal(uni_step(&r, &prm, &t, pose, tg, v0, w0, dt, &out), 0);
            check_uni_limits(&r, dt, v0, w0, &out);
            if (uni_brake_margin_n(&t, pose, out.v, out.w, &r, prm.latency, 60) < -PATH_TOL) {
                /* no safe speed in reach: the speed nearest to rest in reach */
                if (!fell_back)
                    count_brake(&st, shrink, &prm, dt);
                fell_back = true;
                assert_int_equal(out.limit, LC_LIMIT_BRAKING);
                double v_stop = fabs(v0) <= r.a_max * dt ? 0 : v0 - copysign(r.a_max * dt, v0);
                assert_near(out.v, v_stop, 1e-12);
            }
            double v = out.v, w = out.w;
            lc_vec2 loc = fabs(w) < 1e-12 ? lc_v2(v * dt, 0)
                                          : lc_v2(v / w * sin(w * dt), v / w * (1 - cos(w * dt)));
            lc_vec2 np = lc_pose_apply(pose, loc);
            pose = (lc_pose){np.x, np.y, lc_wrap_angle(pose.yaw + w * dt)};
            if (!fell_back)
                check_still_inside(&t, pose, &r, &prm, dt);
            v0 = v, w0 = w;
        }
        if (!shrink) {
            quiet++;
            if (lc_dist(lc_v2(pose.x, pose.y), tg) < 0.05)
                reached++;
        }
    }
    print_message("unicycle closed loop: %d episodes, %d steps; episodes braking at a_max: "
                  "%d after a shrink, %d with latency 0, %d with latency dt; "
                  "%d of %d without a shrink reached the target within 5 cm\n",
                  st.episodes, st.steps, st.shrink_brakes, st.hold_brakes, st.latency_brakes,
                  reached, quiet);
    assert_int_equal(st.latency_brakes, 0);
    assert_true(reached > quiet * 3 / 4);
}

/* ---- a polygon footprint (lc_motion_unicycle_body) -------------------- */

/* A random convex footprint about the origin (the rotation centre inside). */
static int random_footprint(lc_rng *rng, lc_vec2 *v)
{
    for (;;) {
        int n = 3 + (int)(lc_rng_next(rng) % 8);
        lc_vec2 off = lc_v2(lc_rng_uniform(rng, -0.1, 0.1), lc_rng_uniform(rng, -0.1, 0.1));
        lc_test_random_convex(rng, off, lc_rng_uniform(rng, 0.15, 0.7), n, v);
        int at;
        if (lc_footprint_check(v, n, &at) == LC_FOOTPRINT_OK)
            return n;
    }
}

/* The test's own margin of a body at pose: least slack over its vertices. */
static double body_margin_at(const test_region *t, const lc_robot *r, double x, double y,
                             double th)
{
    double m = INFINITY;
    for (int i = 0; i < r->n_footprint; i++)
        m = fmin(m, margin_of(t, lc_pose_apply((lc_pose){x, y, th}, r->footprint[i])));
    return m;
}

/*
 * The body's least margin along its braking path, integrated by RK4: (v, w)
 * held for t_r, then v falls at a_max and w either keeps w / v (the robot
 * can hold the curvature) or falls at dw_max, by itself at rest; sampled at
 * n steps of each part.
 */
static double body_brake_margin(const test_region *t, lc_pose pose, double v, double w,
                                const lc_robot *r, double t_r, int n)
{
    ustate s = {pose.x, pose.y, pose.yaw};
    double m = body_margin_at(t, r, s.x, s.y, s.th);
    for (int k = 0; k < n && t_r > 0; k++) {
        s = rk4(s, v, w, v, w, t_r / n);
        m = fmin(m, body_margin_at(t, r, s.x, s.y, s.th));
    }
    bool hold = fabs(v) > 1e-12 && fabs(w / v) * r->a_max <= r->dw_max;
    double tv = fabs(v) / r->a_max, tw = fabs(w) / r->dw_max;
    double tb = hold ? tv : fmax(tv, tw), h = tb / n;
    for (int k = 0; k < n && tb > 0; k++) {
        double ta = tb * k / n, tc = tb * (k + 1) / n;
        double va = copysign(fmax(fabs(v) - r->a_max * ta, 0), v);
        double vb = copysign(fmax(fabs(v) - r->a_max * tc, 0), v);
        double wa = hold ? w / v * va : copysign(fmax(fabs(w) - r->dw_max * ta, 0), w);
        double wb = hold ? w / v * vb : copysign(fmax(fabs(w) - r->dw_max * tc, 0), w);
        s = rk4(s, va, wa, vb, wb, h);
        m = fmin(m, body_margin_at(t, r, s.x, s.y, s.th));
    }
    return m;
}

/* A random body robot at a pose where its footprint lies in t (false: none found). */
static bool random_body_case(lc_rng *rng, test_region *t, lc_robot *r, lc_motion_params *p,
                             double *dt, lc_pose *pose)
{
    make_random_region(rng, t);
    random_uni_robot(rng, r, p, dt);
    lc_vec2 fp[LC_FOOTPRINT_MAX];
    int n = random_footprint(rng, fp);
    assert_int_equal(lc_robot_set_footprint(r, fp, n), LC_OK);
    for (int k = 0; k < 50; k++) {
        lc_vec2 c;
        if (!sample_inside(rng, t, r->radius * 0.3, &c))
            return false;
        *pose = (lc_pose){c.x, c.y, lc_rng_uniform(rng, -LC_PI, LC_PI)};
        if (body_margin_at(t, r, c.x, c.y, pose->yaw) > 1e-6)
            return true;
    }
    return false;
}

/*
 * lc_motion_body_margin against the body's braking path simulated here:
 * never above it (conservative); on a constant-curvature arc and turning
 * at rest exact (within what 2000 samples and the straight-arc bound of
 * kappa s^2 / 2 + |kappa s| r leave).
 */
static void test_body_margin_against_simulation(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 1717);
    int cases = 0, exact = 0, discs = 0, rests = 0;
    while (cases < 600) {
        test_region t;
        lc_robot r;
        lc_motion_params p;
        double dt;
        lc_pose pose;
        if (!random_body_case(&rng, &t, &r, &p, &dt, &pose))
            continue;
        cases++;
        double v = cases % 4 == 0 ? 0.0 : lc_rng_uniform(&rng, -r.v_max, r.v_max);
        double w = lc_rng_uniform(&rng, -r.w_max, r.w_max);
        if (cases % 7 == 0)
            w = 0.0;
        if (cases % 11 == 0) /* nearly straight: the bend bound */
            w = v * lc_rng_uniform(&rng, -1e-4, 1e-4);
        double mine = lc_motion_body_margin(&r, &p, &t.r, pose, v, w);
        double sim = body_brake_margin(&t, pose, v, w, &r, p.latency, 2000);
        assert_true(mine <= sim + 1e-9);
        bool hold = fabs(v) > 1e-12 && fabs(w / v) * r.a_max <= r.dw_max;
        if (fabs(v) <= 1e-12) {
            rests++;
            assert_true(sim - mine <= 1e-4);
        } else if (hold) {
            exact++;
            assert_true(sim - mine <= 1e-3);
        } else {
            discs++;
        }
    }
    print_message("body margin: %d cases, %d arcs exact, %d at rest, %d Tait-Kneser discs\n",
                  cases, exact, rests, discs);
    assert_true(exact > 100 && rests > 100 && discs > 50);
    /* unusable arguments */
    lc_robot r = robot_default_of(LC_MODEL_UNICYCLE);
    lc_motion_params p;
    lc_motion_params_default(&p);
    test_region t;
    make_box(&t, -1, -1, 1, 1);
    assert_true(isnan(lc_motion_body_margin(&r, &p, &t.r, (lc_pose){NAN, 0, 0}, 0.1, 0)));
    assert_true(isnan(lc_motion_body_margin(&r, &p, &t.r, (lc_pose){0, 0, 0}, INFINITY, 0)));
    lc_setpoint out;
    assert_int_equal(lc_motion_unicycle_body(&r, &p, &t.r, (lc_pose){0, 0, 0}, lc_v2(0.5, 0),
                                             NULL, 0.05, &out),
                     LC_ERR_BAD_INPUT); /* a disc robot has no body */
    assert_int_equal(out.limit, LC_LIMIT_NONE);
}

static int body_step(const lc_robot *r, const lc_motion_params *p, const test_region *t,
                     lc_pose pose, lc_vec2 target, double v0, double w0, double dt,
                     lc_setpoint *out)
{
    return step_from(true, r, p, t, pose, target, v0, w0, dt, out);
}

/*
 * The body step keeps the rate limits always, and the body's braking path
 * in the workspace (simulated here) whenever it starts from rest or did not
 * have to brake as hard as it could.
 */
static void test_body_unicycle_properties(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 2024);
    int cases = 0, fallback = 0, moving = 0;
    while (cases < 800) {
        test_region t;
        lc_robot r;
        lc_motion_params p;
        double dt;
        lc_pose pose;
        lc_vec2 tg;
        if (!random_body_case(&rng, &t, &r, &p, &dt, &pose) || !sample_inside(&rng, &t, 0, &tg))
            continue;
        cases++;
        double v0 = lc_rng_uniform(&rng, r.reverse ? -r.v_max : 0, r.v_max);
        double w0 = lc_rng_uniform(&rng, -r.w_max, r.w_max);
        lc_setpoint out;
        assert_int_equal(body_step(&r, &p, &t, pose, tg, v0, w0, dt, &out), 0);
        check_uni_limits(&r, dt, v0, w0, &out);
        double m = body_brake_margin(&t, pose, out.v, out.w, &r, p.latency, 300);
        if (m < -PATH_TOL) {
            fallback++;
            assert_int_equal(out.limit, LC_LIMIT_BRAKING);
            assert_near(out.v, v0 - copysign(fmin(r.a_max * dt, fabs(v0)), v0), 1e-12);
        }
        /* from rest with no turn the body stays where it is: always safe */
        assert_int_equal(body_step(&r, &p, &t, pose, tg, 0, 0, dt, &out), 0);
        check_uni_limits(&r, dt, 0, 0, &out);
        assert_true(body_brake_margin(&t, pose, out.v, out.w, &r, p.latency, 300) >= -PATH_TOL);
        moving += out.v != 0 || out.w != 0;
    }
    print_message("body unicycle: %d cases, %d braking as hard as it can, %d moving from rest\n",
                  cases, fallback, moving);
    assert_true(moving > cases / 4);
}

/*
 * Turning round: a 1.0 x 0.5 m body facing along a corridor, its target
 * behind. Its whole turn (radius sqrt(0.5^2 + 0.25^2) = 0.559 m) fits a
 * corridor 1.3 m wide less the margin's 0.05 on each side when it stands
 * on the middle line: it turns in place, and brakes straight first when
 * rolling. 1.1 m wide it does not fit: it drives on instead (the arc, or
 * straight), never turning in place.
 */
static void test_body_turns_round_where_it_fits(void **state)
{
    (void)state;
    lc_robot r = robot_default_of(LC_MODEL_UNICYCLE);
    const lc_vec2 rect[] = {{0.5, -0.25}, {0.5, 0.25}, {-0.5, 0.25}, {-0.5, -0.25}};
    assert_int_equal(lc_robot_set_footprint(&r, rect, 4), LC_OK);
    lc_motion_params p;
    lc_motion_params_default(&p);
    p.latency = 0.05;
    test_region wide, narrow;
    lc_setpoint out;
    /* far target 0.5 rad off the heading in open space: a body's w is the
     * law's, k_alpha alpha = 4 up to w_max, not held to the turn that
     * stops on the bearing (motion.c turn_stop); the curvature 4 / 0.8 is
     * kept, so v = w_max / 5 */
    test_region open;
    make_box(&open, -20, -20, 20, 20);
    lc_vec2 off = lc_v2(5 * cos(0.5), 5 * sin(0.5));
    assert_int_equal(body_step(&r, &p, &open, (lc_pose){0, 0, 0}, off, 0.2, 1.0, 0.05, &out), 0);
    assert_near(out.w, 1.0, 1e-12);
    assert_near(out.v, 0.2, 1e-12);
    assert_int_equal(out.limit, LC_LIMIT_TURN_RATE);
    make_box(&wide, -5, -0.6, 5, 0.6);    /* 1.3 m wide, walls less the margin */
    make_box(&narrow, -5, -0.5, 5, 0.5);  /* 1.1 m wide */
    lc_vec2 behind = lc_v2(-3, 0.01);
    assert_int_equal(body_step(&r, &p, &wide, (lc_pose){0, 0, 0}, behind, 0, 0, 0.05, &out), 0);
    assert_int_equal(out.limit, LC_LIMIT_TURNING);
    assert_true(out.v == 0 && out.w > 0);
    /* rolling at 0.6 m/s: brakes straight (w toward 0), still "turning" */
    assert_int_equal(body_step(&r, &p, &wide, (lc_pose){0, 0, 0}, behind, 0.6, 0, 0.05, &out), 0);
    assert_near(out.v, 0.6 - 0.5 * 0.05, 1e-12);
    assert_true(out.w == 0);
    /* too narrow to turn round: no turning in place */
    assert_int_equal(body_step(&r, &p, &narrow, (lc_pose){0, 0, 0}, behind, 0, 0, 0.05, &out), 0);
    assert_true(out.limit != LC_LIMIT_TURNING);
    assert_true(body_brake_margin(&narrow, (lc_pose){0, 0, 0}, out.v, out.w, &r, p.latency,
                                  300) >= -PATH_TOL);
    /* the same robot as its circumscribed disc: 1.3 m is wide enough for
     * its centre (0.6 - 0.559 > 0), 1.1 m is not even that */
    assert_true(0.6 - r.radius > 0 && 0.5 - r.radius < 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_limit_names),
        cmocka_unit_test(test_defaults),
        cmocka_unit_test(test_stopping_distance),
        cmocka_unit_test(test_polar_linearisation),
        cmocka_unit_test(test_polar_converges_to_pose),
        cmocka_unit_test(test_arc_closed_form),
        cmocka_unit_test(test_arc_margin_dense),
        cmocka_unit_test(test_point_examples),
        cmocka_unit_test(test_point_degenerate),
        cmocka_unit_test(test_point_properties),
        cmocka_unit_test(test_point_closed_loop),
        cmocka_unit_test(test_unicycle_examples),
        cmocka_unit_test(test_unicycle_heading),
        cmocka_unit_test(test_last_beyond_limits),
        cmocka_unit_test(test_last_beyond_limits_brakes),
        cmocka_unit_test(test_unicycle_brake_disc),
        cmocka_unit_test(test_unicycle_properties),
        cmocka_unit_test(test_unicycle_closed_loop),
        cmocka_unit_test(test_body_margin_against_simulation),
        cmocka_unit_test(test_body_unicycle_properties),
        cmocka_unit_test(test_body_turns_round_where_it_fits),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
