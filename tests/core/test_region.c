/*
 * test_region.c - iterative region inflation on random and built scenes.
 *
 * Outside references: GEOS (libgeos) for distances, intersection areas and
 * nearest points; the properties of region inflation stated by Deits and
 * Tedrake (WAFR 2014): the ellipse lies in the region, no obstacle enters
 * it, the ellipse area does not decrease from round to round.
 */
#include "testutil.h"

#include <stdlib.h>
#include <string.h>

#include "geos_oracle.h"
#include "grow.h"
#include "hull.h"
#include "lc_config.h"
#include "region.h"

/* What lc_region_inflate is given in most tests: the default configuration
 * and solver options, scratch and a region on the C library's allocator. */
typedef struct rig {
    lc_region_config cfg;
    lc_ellipse_opts eo;
    lc_region_ws ws;
    lc_region rg;
} rig;

static void rig_init(rig *t)
{
    memset(t, 0, sizeof *t);
    lc_region_config_default(&t->cfg);
    lc_ellipse_opts_default(&t->eo);
}

static void rig_free(rig *t)
{
    lc_region_free(&t->rg);
    lc_region_ws_free(&t->ws);
}

typedef struct scene {
    lc_polyset raw;   /* obstacles as seen (convex) */
    lc_polyset grown;
    double r;
} scene;

static void scene_free(scene *s)
{
    lc_polyset_free(&s->raw);
    lc_polyset_free(&s->grown);
}

static void scene_add(scene *s, lc_hull_ctx *hc, const lc_vec2 *pts, int n)
{
    lc_vec2 hull[256], g[512];
    int m = lc_hull_compute(hc, pts, n, hull);
    assert_true(m > 0);
    lc_polyset_push(&s->raw, hull, m, s->raw.np);
    int k = lc_grow_polygon(hull, m, s->r, LC_GROW_DEFAULT_STEP, g, 512);
    assert_true(k >= 3);
    lc_polyset_push(&s->grown, g, k, s->grown.np);
}

/* Random clutter: small blobs, thin walls and single points around the origin. */
static void random_scene(scene *s, lc_hull_ctx *hc, lc_rng *rng, int count)
{
    memset(s, 0, sizeof *s);
    s->r = lc_rng_uniform(rng, 0.1, 0.5);
    for (int k = 0; k < count; k++) {
        lc_vec2 c = lc_v2(lc_rng_uniform(rng, -8, 8), lc_rng_uniform(rng, -8, 8));
        lc_vec2 pts[12];
        int n = 1 + (int)lc_rng_uniform(rng, 0, 12);
        int kind = (int)lc_rng_uniform(rng, 0, 3);
        double ang = lc_rng_uniform(rng, 0, LC_PI);
        for (int i = 0; i < n; i++) {
            if (kind == 0)
                pts[i] = lc_add(c, lc_v2(lc_rng_uniform(rng, -0.4, 0.4), lc_rng_uniform(rng, -0.4, 0.4)));
            else
                pts[i] = lc_add(c, lc_scale(lc_unit_angle(ang), lc_rng_uniform(rng, -1.5, 1.5)));
        }
        scene_add(s, hc, pts, n);
    }
}

static bool centre_free(const scene *s, lc_vec2 c)
{
    for (int j = 0; j < s->grown.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&s->grown, j, &n);
        if (lc_convex_contains(v, n, c, 1e-6))
            return false;
    }
    return true;
}

static void check_region(const scene *s, const lc_region_input *in, const lc_region *rg,
                         const lc_region_info *info)
{
    /* The robot centre (and the goal seed) are inside. */
    assert_true(lc_region_margin(rg, in->centre) >= -1e-9);
    if (rg->has_goal_seed)
        assert_true(lc_region_margin(rg, rg->goal_seed) >= -1e-9);
    /* Vertices CCW; every vertex satisfies every halfspace; every halfspace
     * carries an edge (non-redundant). */
    assert_true(rg->nv >= 3);
    assert_true(lc_polygon_area2(rg->v, rg->nv) > 0);
    for (int i = 0; i < rg->nv; i++)
        assert_true(lc_region_margin(rg, rg->v[i]) >= -1e-7);
    for (int k = 0; k < rg->nh; k++) {
        int on = 0;
        for (int i = 0; i < rg->nv; i++)
            on += fabs(lc_dot(rg->h[k].a, rg->v[i]) - rg->h[k].b) < 1e-7;
        assert_true(on >= 2);
        assert_near(lc_len(rg->h[k].a), 1.0, 1e-12);
    }
    /* The ellipse lies inside every halfspace. */
    for (int k = 0; k < rg->nh; k++)
        assert_true(lc_ellipse_inside_halfspace(&rg->ellipse, rg->h[k], 1e-7));
    /* The ellipse area never decreases from round to round (Deits and Tedrake). */
    for (int k = 2; k <= info->rounds && k <= rg->rounds; k++)
        assert_true(info->area[k] >= info->area[k - 1] * (1 - 1e-9));
#if LC_HAVE_GEOS
    /* GEOS: no obstacle point is closer than the grown radius to the region
     * (tolerance: 1e-7 m for round-off in the tangent lines). */
    for (int j = 0; j < s->raw.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&s->raw, j, &n);
        int g;
        const lc_vec2 *gv = lc_polyset_at(&s->grown, j, &g);
        if (lc_convex_contains(gv, g, in->centre, 0))
            continue; /* too close: left out by design */
        double d = oracle_distance(v, n, rg->v, rg->nv);
        assert_true(d >= s->r - 1e-7);
        assert_true(oracle_intersection_area(gv, g, rg->v, rg->nv) < 1e-9);
    }
#endif
}

static void test_random_scenes(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 2026);
    lc_hull_ctx *hc = lc_hull_new(NULL);
    rig t;
    rig_init(&t);
    int done = 0, fallback = 0, rounds = 0;
    for (int trial = 0; trial < 400; trial++) {
        scene s;
        random_scene(&s, hc, &rng, (int)lc_rng_uniform(&rng, 0, 60));
        lc_vec2 c;
        int tries = 0;
        do
            c = lc_v2(lc_rng_uniform(&rng, -6, 6), lc_rng_uniform(&rng, -6, 6));
        while (!centre_free(&s, c) && ++tries < 100);
        if (tries >= 100) {
            scene_free(&s);
            continue;
        }
        lc_region_input in = {.grown = &s.grown, .centre = c, .window = 6.0};
        in.has_waypoint = trial % 3 != 0;
        in.waypoint = lc_v2(lc_rng_uniform(&rng, -10, 10), lc_rng_uniform(&rng, -10, 10));
        if (trial % 4 == 1)
            in.n_blind = lc_region_blind_lines(c, lc_rng_uniform(&rng, 1.0, 6.0),
                                               lc_rng_uniform(&rng, -3, 3), in.has_waypoint,
                                               in.waypoint, in.blind);
        lc_region_info info;
        int st = lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, &info, NULL);
        assert_int_equal(st, LC_OK);
        check_region(&s, &in, &t.rg, &info);
        done++;
        fallback += info.fallback_lines;
        rounds += t.rg.rounds;
        scene_free(&s);
    }
    assert_true(done > 300);
    print_message("region: %d random scenes, %.2f rounds each, %d moved lines\n", done,
                  (double)rounds / done, fallback);
    rig_free(&t);
    lc_hull_free(hc);
    LC_GEOS_CHECKED();
}

/* No returns: the window is the region (no blind sector for full views). */
static void test_empty_frame_is_window(void **state)
{
    lc_polyset none = {0};
    rig t;
    rig_init(&t);
    lc_region_input in = {.grown = &none, .centre = {5, -2}, .window = 4.0};
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, NULL, NULL), LC_OK);
    assert_int_equal(t.rg.nv, 4);
    assert_near(lc_polygon_area2(t.rg.v, t.rg.nv) / 2, 64.0, 1e-9);
    /* The inscribed ellipse of a square is its incircle (docs/REFERENCES.md). */
    assert_near(lc_ellipse_area(&t.rg.ellipse), LC_PI * 16.0, 1e-5);
    rig_free(&t);
}

/*
 * The ray exit from a point on an edge, along that edge: the line does not
 * stop the ray, however its normal rounds (a rotated square, exit at the
 * corner 1 m away; found by a review of frozen point robots).
 */
static void test_ray_exit_along_edge(void **state)
{
    for (int k = 0; k < 50; k++) {
        double th = 0.1 + 0.0314159 * k;
        lc_vec2 u = lc_unit_angle(th), n = lc_perp(u);
        lc_halfspace h[4] = {{u, 1}, {n, 1}, {lc_scale(u, -1), 1}, {lc_scale(n, -1), 1}};
        lc_region r = {.h = h, .nh = 4};
        lc_vec2 p = u; /* midpoint of the edge u . x = 1 */
        assert_near(lc_region_ray_exit(&r, p, n), 1.0, 1e-9);
        assert_near(lc_region_ray_exit(&r, p, lc_scale(n, -1)), 1.0, 1e-9);
        assert_near(lc_region_ray_exit(&r, p, lc_scale(u, -1)), 2.0, 1e-9);
        assert_near(lc_region_ray_exit(&r, p, u), 0.0, 1e-12);
    }
}

/*
 * Every buffer grows through its own struct's allocator and goes back to
 * it on free (no second argument): a counting allocator given to the
 * region, its workspace and the grown obstacles sees them all grow, sees
 * no call once warm, and holds nothing after the frees.
 */
static void test_buffers_keep_their_allocator(void **state)
{
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_hull_ctx *hc = lc_hull_new(NULL);
    lc_rng rng;
    lc_rng_seed(&rng, 808);
    scene s;
    random_scene(&s, hc, &rng, 25);
    lc_polyset grown;
    lc_polyset_init(&grown, &ca.alloc);
    for (int j = 0; j < s.grown.np; j++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(&s.grown, j, &n);
        assert_int_equal(lc_polyset_push(&grown, v, n, j), LC_OK);
    }
    long after_polyset = ca.calls;
    assert_true(after_polyset > 0);
    lc_region_config cfg;
    lc_region_config_default(&cfg);
    lc_ellipse_opts eo;
    lc_ellipse_opts_default(&eo);
    lc_region_ws ws;
    lc_region rg;
    lc_region_ws_init(&ws, &ca.alloc);
    lc_region_init(&rg, &ca.alloc);
    lc_region_input in = {.grown = &grown, .centre = {9, 9}, .window = 6.0};
    assert_true(lc_region_inflate(&in, &cfg, &eo, &ws, &rg, NULL, NULL) >= 0);
    assert_true(ca.calls > after_polyset);
    long warm = ca.calls;
    assert_true(lc_region_inflate(&in, &cfg, &eo, &ws, &rg, NULL, NULL) >= 0);
    assert_int_equal(ca.calls, warm);
    lc_region_free(&rg);
    lc_region_ws_free(&ws);
    lc_polyset_free(&grown);
    assert_int_equal(ca.live, 0);
    /* freed twice: nothing left to release, nothing breaks */
    lc_region_free(&rg);
    lc_polyset_free(&grown);
    assert_int_equal(ca.live, 0);
    scene_free(&s);
    lc_hull_free(hc);
}

/* Centre inside a grown obstacle: too close, the region still holds it. */
static void test_too_close(void **state)
{
    scene s = {.r = 0.4};
    lc_hull_ctx *hc = lc_hull_new(NULL);
    lc_vec2 wall[2] = {{0.2, -2}, {0.2, 2}};
    scene_add(&s, hc, wall, 2);
    lc_vec2 far[2] = {{-3, -2}, {-3, 2}};
    scene_add(&s, hc, far, 2);
    rig t;
    rig_init(&t);
    lc_region_info info;
    lc_region_input in = {.grown = &s.grown, .centre = {0, 0}, .window = 5.0};
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, &info, NULL),
                     LC_REGION_TOO_CLOSE);
    assert_int_equal(info.too_close, 1);
    assert_true(lc_region_contains(&t.rg, in.centre, 1e-9));
    /* the other wall is still kept out */
    assert_true(lc_region_margin(&t.rg, lc_v2(-3 + 0.4, 0)) <= 1e-9);
    rig_free(&t);
    scene_free(&s);
    lc_hull_free(hc);
}

/* Projection equals GEOS's nearest point; same input, same bits. */
static void test_projection_and_determinism(void **state)
{
    lc_rng rng;
    lc_rng_seed(&rng, 7);
    lc_hull_ctx *hc = lc_hull_new(NULL);
    lc_region_config cfg;
    lc_region_config_default(&cfg);
    lc_ellipse_opts eo;
    lc_ellipse_opts_default(&eo);
    lc_region_ws ws = {0};
    lc_region a = {0}, b = {0};
    for (int trial = 0; trial < 60; trial++) {
        scene s;
        random_scene(&s, hc, &rng, 25);
        lc_vec2 c = lc_v2(0, 0);
        if (!centre_free(&s, c)) {
            scene_free(&s);
            continue;
        }
        lc_region_input in = {.grown = &s.grown, .centre = c, .window = 7.0, .has_waypoint = true,
                              .waypoint = lc_v2(lc_rng_uniform(&rng, -9, 9), lc_rng_uniform(&rng, -9, 9))};
        assert_true(lc_region_inflate(&in, &cfg, &eo, &ws, &a, NULL, NULL) >= 0);
        assert_true(lc_region_inflate(&in, &cfg, &eo, &ws, &b, NULL, NULL) >= 0);
        assert_int_equal(a.nv, b.nv);
        assert_int_equal(a.nh, b.nh);
        assert_memory_equal(a.v, b.v, sizeof *a.v * (size_t)a.nv);
        assert_memory_equal(a.h, b.h, sizeof *a.h * (size_t)a.nh);
        assert_memory_equal(&a.ellipse, &b.ellipse, sizeof a.ellipse);
#if LC_HAVE_GEOS
        for (int k = 0; k < 20; k++) {
            lc_vec2 p = lc_v2(lc_rng_uniform(&rng, -12, 12), lc_rng_uniform(&rng, -12, 12));
            lc_vec2 q = lc_region_project(&a, p), g = oracle_nearest(a.v, a.nv, p);
            assert_near(q.x, g.x, 1e-9);
            assert_near(q.y, g.y, 1e-9);
        }
#endif
        scene_free(&s);
    }
    lc_region_free(&a);
    lc_region_free(&b);
    lc_region_ws_free(&ws);
    lc_hull_free(hc);
    LC_GEOS_CHECKED();
}

/*
 * The goal seed takes the bend of the way when the step toward the
 * waypoint is not free: a box ahead holds the step 1 m toward the
 * waypoint; the way turns below it, at the bend, which the region then
 * holds. A bend inside the box is no seed (the step is halved as before),
 * and without a bend the seed is the halved step.
 */
static void test_bend_seed(void **state)
{
    (void)state;
    lc_polyset grown = {0};
    const lc_vec2 box[4] = {{0.5, -0.2}, {1.5, -0.2}, {1.5, 2}, {0.5, 2}};
    assert_int_equal(lc_polyset_push(&grown, box, 4, 0), 0);
    rig t;
    rig_init(&t);
    lc_region_input in = {.grown = &grown, .centre = lc_v2(0, 0), .window = 7.0,
                          .has_waypoint = true, .waypoint = lc_v2(2, 1)};
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, NULL, NULL), LC_OK);
    assert_true(t.rg.has_goal_seed);
    lc_vec2 half = lc_scale(lc_v2(2, 1), 0.5 / sqrt(5.0)); /* 0.5 m toward it */
    assert_near(t.rg.goal_seed.x, half.x, 1e-12);
    assert_near(t.rg.goal_seed.y, half.y, 1e-12);
    in.has_bend = true;
    in.bend = lc_v2(1.0, -0.5);
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, NULL, NULL), LC_OK);
    assert_true(t.rg.has_goal_seed && t.rg.goal_seed.x == 1.0 && t.rg.goal_seed.y == -0.5);
    assert_true(lc_region_margin(&t.rg, in.bend) >= -1e-9);
    assert_true(lc_region_margin(&t.rg, in.centre) >= -1e-9);
    in.bend = lc_v2(1.0, 0.5); /* in the box */
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, NULL, NULL), LC_OK);
    assert_near(t.rg.goal_seed.x, half.x, 1e-12);
    assert_near(t.rg.goal_seed.y, half.y, 1e-12);
    rig_free(&t);
    lc_polyset_free(&grown);
}

static void test_bad_input(void **state)
{
    lc_polyset none = {0};
    rig t;
    rig_init(&t);
    lc_region_input in = {.grown = &none, .centre = {NAN, 0}, .window = 4.0};
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, NULL, NULL),
                     LC_ERR_BAD_INPUT);
    in.centre = lc_v2(0, 0);
    in.window = 0;
    assert_int_equal(lc_region_inflate(&in, &t.cfg, &t.eo, &t.ws, &t.rg, NULL, NULL),
                     LC_ERR_BAD_INPUT);
    rig_free(&t);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_random_scenes),
        cmocka_unit_test(test_empty_frame_is_window),
        cmocka_unit_test(test_ray_exit_along_edge),
        cmocka_unit_test(test_too_close),
        cmocka_unit_test(test_buffers_keep_their_allocator),
        cmocka_unit_test(test_projection_and_determinism),
        cmocka_unit_test(test_bend_seed),
        cmocka_unit_test(test_bad_input),
    };
    return LC_RUN_TESTS(tests, lc_test_geos_setup, lc_test_geos_teardown);
}
