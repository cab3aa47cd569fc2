/*
 * test_guide_steady.c - guidance over time (guide.h): the cadence of the
 * searches, the steadiness of the path followed, the confirmation of "no
 * path", refusals, determinism and no allocation once warm. The search
 * itself against its outside references: test_guide.c.
 *
 * Memories are built as a robot builds them (tests/support/guide_scene.h).
 * Each check is against the rules guide.h and docs/DESIGN.md ("Guidance")
 * state, on scripted runs and seeded random runs, the frames the rules
 * name.
 */
#include "testutil.h"

#include <math.h>
#include <string.h>

#include "follow.h"
#include "guide_scene.h"

#define CLEAR SCENE_CLEAR

/* A ring of walls round c, radius r: no gap at all. */
static void add_ring(lc_world *w, lc_vec2 c, double r)
{
    for (int k = 0; k < 24; k++)
        scene_wall(w, lc_add(c, lc_scale(lc_unit_angle(k * LC_PI / 12), r)),
                   lc_add(c, lc_scale(lc_unit_angle((k + 1) * LC_PI / 12), r)));
}

/*
 * The waypoint enclosed (guide.h, "No path"): where a path was followed,
 * the first search that finds none keeps the old path, and LC_GUIDE_NO_PATH
 * comes with the next search, `every` frames on; for a new goal, and for a
 * guide without a path, at once (and a guide without a path searches each
 * frame).
 */
static void test_no_path(void **state)
{
    (void)state;
    lc_vec2 goal = lc_v2(3, 0), robot = lc_v2(0, 0), from[] = {{0, 0}, {3, 0}};
    scene s;
    scene_init(&s);
    add_ring(&s.w, goal, 1.0);
    scene_ready(&s, from, 2);
    lc_world open;
    lc_world_init(&open);
    lc_memory *m_ring = s.m, *m_open = scene_memory_of(&open, from, 2);
    s.m = m_open;
    const lc_guide_path *p = scene_update(&s, robot, goal, 0.2);
    assert_int_equal(p->status, LC_GUIDE_PATH);
    /* the ring appears across the path ahead: searched at once, no way,
     * the old path kept */
    s.m = m_ring;
    p = scene_update(&s, robot, goal, 0.2);
    assert_true(s.info.searched && s.info.blocked_ahead);
    assert_false(s.info.replaced);
    assert_int_equal(p->status, LC_GUIDE_PATH);
    assert_int_equal(p->n, 2);
    for (int k = 1; k < s.gc.every; k++) { /* waiting: no search though blocked */
        p = scene_update(&s, robot, goal, 0.2);
        assert_true(!s.info.searched && s.info.blocked_ahead);
        assert_int_equal(p->status, LC_GUIDE_PATH);
    }
    p = scene_update(&s, robot, goal, 0.2); /* `every` frames on: agreed */
    assert_true(s.info.searched);
    assert_int_equal(p->status, LC_GUIDE_NO_PATH);
    assert_int_equal(p->n, 0);
    assert_true(scene_same(p->goal, goal));

    /* the ring gone again: a path at the next frame */
    s.m = m_open;
    p = scene_update(&s, robot, goal, 0.2);
    assert_true(s.info.searched);
    assert_int_equal(p->status, LC_GUIDE_PATH);
    /* a new goal inside the ring: no path at once */
    s.m = m_ring;
    p = scene_update(&s, robot, lc_v2(3.2, 0.1), 0.2);
    assert_true(s.info.searched);
    assert_int_equal(p->status, LC_GUIDE_NO_PATH);

    scene_guide(&s); /* a fresh guide: at once, and each frame again */
    p = scene_update(&s, robot, goal, 0.2);
    assert_int_equal(p->status, LC_GUIDE_NO_PATH);
    assert_true(s.info.searched && s.info.expanded > 0);
    p = scene_update(&s, robot, goal, 0.2);
    assert_true(s.info.searched);
    assert_int_equal(s.info.searches, 2);
    lc_memory_free(m_open);
    lc_world_free(&open);
    scene_free(&s);
}

/*
 * Steadiness (guide.h): two ways round a post, symmetric about the line
 * from the robot to the waypoint, cost nearly alike. The robot wobbles
 * across that line from frame to frame (seeded) and is searched for every
 * `every` frames (travel 0): over 200 frames the path followed is replaced
 * at most once after the first. Without hysteresis the same run flips
 * (the scene does tell the two ways apart).
 */
static int replacements(scene *s, double hysteresis)
{
    lc_guide_config_default(&s->gc);
    s->gc.travel = 0;
    s->gc.hysteresis = hysteresis;
    scene_guide(s);
    lc_rng rng;
    lc_rng_seed(&rng, 315);
    int replaced = 0, searched = 0;
    for (int k = 0; k < 200; k++) {
        lc_vec2 robot = lc_v2(0.002 * k, lc_rng_uniform(&rng, -0.06, 0.06));
        const lc_guide_path *p = scene_update(s, robot, lc_v2(4, 0), 0.2);
        assert_int_equal(p->status, LC_GUIDE_PATH);
        assert_true(fabs(scene_crossing_y(p, 2.0)) > 0.2 + CLEAR - 0.05); /* round the post */
        searched += s->info.searched;
        replaced += k > 0 && s->info.replaced;
    }
    assert_int_equal(searched, 20);
    return replaced;
}

static void test_hysteresis(void **state)
{
    (void)state;
    scene s;
    scene_init(&s);
    scene_post(&s.w, lc_v2(2, 0), 0.2);
    lc_vec2 from[] = {{0, 0}, {4, 0}, {2, 2}, {2, -2}};
    scene_ready(&s, from, 4);
    assert_true(replacements(&s, 0.15) <= 1);
    assert_true(replacements(&s, 0.0) > 1);
    scene_free(&s);
}

/*
 * A path through a wall seen since, beyond check_ahead (so not found
 * closed ahead): the first search, knowing 2 m round the robot, goes
 * straight to the waypoint 7 m off; then a wall across the way 4 m ahead
 * (x = 4, |y| <= 6) is seen. The way round its end costs more than the
 * old path's rest would with the wall priced as a graze (8 times its
 * 0.7 m), which hysteresis kept, and the robot drove to the wall before
 * it found out (a dead end's far wall). A path through an obstacle has no
 * cost: the next search's way round replaces it. Closed form: the way
 * round passes the wall's end at the clearance, |y| >= 6 + R less a
 * search cell.
 */
static void test_through_wall(void **state)
{
    (void)state;
    lc_world open, wall;
    lc_world_init(&open);
    lc_world_init(&wall);
    scene_wall(&wall, lc_v2(4, -6), lc_v2(4, 6));
    lc_vec2 robot = lc_v2(0, 0), wp = lc_v2(7, 0);
    lc_memory *m = scene_new_memory();
    scene_see(m, &open, robot, 1.0, 2.0);
    lc_guide_config gc;
    lc_guide_config_default(&gc);
    gc.travel = 0;
    lc_guide *g = scene_new_guide(&gc, NULL);
    lc_guide_info info;
    const lc_guide_path *p = scene_step(g, m, robot, wp, 0.2, &info);
    assert_int_equal(p->status, LC_GUIDE_PATH);
    assert_near(scene_crossing_y(p, 4.0), 0.0, 1e-6); /* straight through */
    scene_see(m, &wall, robot, 2.0, 12.0);
    int searched = 0;
    for (int k = 0; k < 2 * gc.every; k++) {
        p = scene_step(g, m, robot, wp, 0.2, &info);
        assert_false(info.blocked_ahead); /* the wall lies beyond check_ahead */
        searched += info.searched;
    }
    assert_true(searched >= 1);
    assert_int_equal(p->status, LC_GUIDE_PATH);
    assert_true(fabs(scene_crossing_y(p, 4.0)) >= 6 + CLEAR - gc.cell);
    lc_guide_free(g);
    lc_memory_free(m);
    lc_world_free(&wall);
    lc_world_free(&open);
}

/* ------------------------------------------------------------- cadence */

/* A seeded run: the robot wanders (steps of 0 to 8 cm, sometimes none),
 * the waypoint changes now and then, and at frame `post_at` the memory
 * gains a post 1 m ahead on the path. */
typedef struct run {
    lc_world open;
    lc_memory *m_open, *m_post;
    lc_rng rng;
    lc_vec2 robot, wp;
    double goal_rate; /* share of frames whose waypoint changes */
    int post_at;
} run;

static void run_init(run *r, uint64_t seed, int post_at)
{
    lc_world_init(&r->open);
    lc_vec2 at = lc_v2(0, 0);
    r->m_open = scene_memory_of(&r->open, &at, 1);
    r->m_post = NULL;
    lc_rng_seed(&r->rng, seed);
    r->robot = lc_v2(0, 0);
    r->wp = lc_v2(5, 1);
    r->goal_rate = 0.02;
    r->post_at = post_at;
}

static void run_free(run *r)
{
    lc_memory_free(r->m_open);
    lc_memory_free(r->m_post);
    lc_world_free(&r->open);
}

/* Moves the robot and maybe the waypoint for frame k; the memory to use. */
static const lc_memory *run_frame(run *r, int k, const lc_guide_path *p, bool *goal_changed)
{
    double u = lc_rng_uniform(&r->rng, 0, 1);
    if (u > 0.2) {
        lc_vec2 step = lc_scale(lc_unit_angle(lc_rng_uniform(&r->rng, -LC_PI, LC_PI)),
                                lc_rng_uniform(&r->rng, 0, 0.08));
        lc_vec2 next = lc_add(r->robot, step);
        if (fabs(next.x) < 3 && fabs(next.y) < 3)
            r->robot = next;
    }
    *goal_changed = lc_rng_uniform(&r->rng, 0, 1) < r->goal_rate;
    if (*goal_changed)
        r->wp = lc_v2(lc_rng_uniform(&r->rng, -6, 6), lc_rng_uniform(&r->rng, -6, 6));
    if (k == r->post_at) {
        lc_world w;
        lc_world_init(&w);
        double rest;
        scene_post(&w, lc_guide_ahead(p, r->robot, 1.0, &rest), 0.15);
        lc_vec2 at[] = {{0, 0}, r->robot};
        r->m_post = scene_memory_of(&w, at, 2);
        lc_world_free(&w);
    }
    return r->m_post ? r->m_post : r->m_open;
}

/*
 * Cadence (guide.h): a search at the first frame, at once on a new goal or
 * a path blocked ahead, else once `every` frames have passed and the robot
 * has moved `travel` since the last search, or 10 x `every` frames have
 * passed. Each frame of a seeded run against that rule.
 */
static void test_cadence(void **state)
{
    (void)state;
    lc_guide_config gc;
    lc_guide_config_default(&gc);
    for (int variant = 0; variant < 3; variant++) {
        run r;
        run_init(&r, 77 + (uint64_t)variant, 300);
        if (variant == 1)
            r.goal_rate = 0;
        lc_guide *g = scene_new_guide(&gc, NULL);
        const lc_guide_path *p = NULL;
        long last = 0, searches = 0;
        lc_vec2 searched_at = r.robot;
        bool blocked_seen = false;
        for (int k = 1; k <= 600; k++) {
            bool goal_changed;
            const lc_memory *m = run_frame(&r, k, p, &goal_changed);
            if (variant == 1) /* stands still, one goal: the 10 x every rule alone */
                r.robot = lc_v2(0, 0);
            lc_guide_info info;
            p = scene_step(g, m, r.robot, r.wp, 0.2, &info);
            assert_int_equal(p->status, LC_GUIDE_PATH);
            long since = k - last;
            bool due = since >= gc.every && (lc_dist(r.robot, searched_at) >= gc.travel ||
                                             since >= 10L * gc.every);
            bool want = k == 1 || goal_changed || info.blocked_ahead || due;
            assert_int_equal(info.searched, want);
            if (k == r.post_at) {
                assert_true(info.blocked_ahead && info.replaced);
                blocked_seen = true;
            }
            if (info.searched) {
                last = k;
                searched_at = r.robot;
                searches++;
            }
            assert_int_equal(info.searches, searches);
        }
        assert_true(blocked_seen);
        if (variant == 1)
            assert_int_equal(searches, 7); /* frames 1, 101, 201, 300 (the post), 400, 500, 600 */
        lc_guide_free(g);
        run_free(&r);
    }
}

/* The same memory and the same calls give the same paths, bit for bit. */
static void test_deterministic(void **state)
{
    (void)state;
    lc_guide_config gc;
    lc_guide_config_default(&gc);
    run r1, r2;
    run_init(&r1, 5, 120);
    run_init(&r2, 5, 120);
    lc_guide *g1 = scene_new_guide(&gc, NULL), *g2 = scene_new_guide(&gc, NULL);
    const lc_guide_path *p1 = NULL, *p2 = NULL;
    for (int k = 1; k <= 300; k++) {
        bool c1, c2;
        const lc_memory *m1 = run_frame(&r1, k, p1, &c1), *m2 = run_frame(&r2, k, p2, &c2);
        lc_guide_info i1, i2;
        p1 = scene_step(g1, m1, r1.robot, r1.wp, 0.2, &i1);
        p2 = scene_step(g2, m2, r2.robot, r2.wp, 0.2, &i2);
        assert_int_equal(p1->status, p2->status);
        assert_int_equal(p1->n, p2->n);
        assert_memory_equal(p1->v, p2->v, (size_t)p1->n * sizeof p1->v[0]);
        assert_memory_equal(&p1->length, &p2->length, sizeof p1->length);
        assert_memory_equal(&p1->cost, &p2->cost, sizeof p1->cost);
        assert_int_equal(p1->seg, p2->seg);
        assert_int_equal(p1->found_at, p2->found_at);
        assert_memory_equal(&i1, &i2, sizeof i1);
    }
    lc_guide_free(g1);
    lc_guide_free(g2);
    run_free(&r1);
    run_free(&r2);
}

/* ------------------------------------------------------------ refusals */

/* A wall across the window at x = 2 with gaps [lo_k, hi_k] in y, seen from
 * both sides. */
static void scene_gaps(scene *s, const double (*gap)[2], int gaps)
{
    scene_init(s);
    double y = -9;
    for (int k = 0; k < gaps; k++) {
        scene_wall(&s->w, lc_v2(2, y), lc_v2(2, gap[k][0]));
        y = gap[k][1];
    }
    scene_wall(&s->w, lc_v2(2, y), lc_v2(2, 9));
    lc_vec2 from[] = {{0, 0}, {0, -3.5}, {0, 3.5}, {3.5, 0}, {3.5, -3.5}, {3.5, 3.5}};
    scene_ready(s, from, 6);
}

/* The path crosses x = 2 within (lo, hi). */
static bool crosses_within(const lc_guide_path *p, double lo, double hi)
{
    double y = scene_crossing_y(p, 2.0);
    return p->status == LC_GUIDE_PATH && y > lo && y < hi;
}

/*
 * Refusals (guide.h): refusing the only gap leaves no way, so the refusal
 * is forgotten and the gap taken again (never NO_PATH); refusing one of two
 * gaps sends the path through the other; a new goal, and lc_guide_reset,
 * forget the refusals. Refusals that are not usable are ignored.
 */
static void test_refusals(void **state)
{
    (void)state;
    lc_vec2 robot = lc_v2(0, 0), wp = lc_v2(4, 0), wp2 = lc_v2(4, 0.1);
    const double one[1][2] = {{0.5, 1.5}}, two[2][2] = {{-2.5, -1.5}, {0.5, 1.5}};
    scene s;
    scene_gaps(&s, one, 1);
    assert_true(crosses_within(scene_update(&s, robot, wp, 0.2), 0.5, 1.5));
    lc_guide_refuse(s.g, lc_v2(2, 1), 0.6);
    for (int k = 0; k < 3; k++) {
        assert_true(crosses_within(scene_update(&s, robot, wp, 0.2), 0.5, 1.5));
        assert_true(s.info.searched == (k == 0)); /* at once, then the cadence */
    }
    lc_guide_refuse(s.g, lc_v2(NAN, 1), 0.6);
    lc_guide_refuse(s.g, lc_v2(2, 1), 0.0);
    lc_guide_refuse(s.g, lc_v2(2, 1), NAN);
    scene_update(&s, robot, wp, 0.2);
    assert_false(s.info.searched);
    scene_free(&s);

    scene_gaps(&s, two, 2);
    assert_true(crosses_within(scene_update(&s, robot, wp, 0.2), 0.5, 1.5)); /* the nearer */
    lc_guide_refuse(s.g, lc_v2(2, 1), 0.6);
    assert_true(crosses_within(scene_update(&s, robot, wp, 0.2), -2.5, -1.5)); /* the other */
    assert_true(s.info.searched && s.info.replaced);
    for (int k = 0; k < 30; k++) /* and it stays there */
        assert_true(crosses_within(scene_update(&s, robot, wp, 0.2), -2.5, -1.5));
    assert_true(crosses_within(scene_update(&s, robot, wp2, 0.2), 0.5, 1.5)); /* new goal */
    assert_true(s.info.searched && s.info.replaced);
    lc_guide_refuse(s.g, lc_v2(2, 1), 0.6);
    lc_guide_reset(s.g);
    assert_true(crosses_within(scene_update(&s, robot, wp2, 0.2), 0.5, 1.5));
    assert_true(s.info.searched);
    scene_free(&s);
}

/* No allocation per update once warm (guide.h: the search grid once, in
 * lc_guide_new; the returns' buckets grow to the most returns seen). */
static void test_no_alloc_when_warm(void **state)
{
    (void)state;
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    lc_guide_config gc;
    lc_guide_config_default(&gc);
    lc_guide *g = scene_new_guide(&gc, &ca.alloc);
    run r;
    run_init(&r, 9, 40);
    r.goal_rate = 0.2;
    const lc_guide_path *p = NULL;
    long calls = 0;
    for (int k = 1; k <= 200; k++) {
        bool changed;
        const lc_memory *m = run_frame(&r, k, p, &changed);
        lc_guide_info info;
        p = scene_step(g, m, r.robot, r.wp, 0.2, &info);
        if (k == 50) /* warm: both memories searched */
            calls = ca.calls;
        if (k % 17 == 0)
            lc_guide_refuse(g, r.robot, 0.3);
    }
    assert_int_equal(ca.calls, calls);
    lc_guide_free(g);
    assert_int_equal(ca.live, 0);
    run_free(&r);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_no_path),
        cmocka_unit_test(test_hysteresis),
        cmocka_unit_test(test_through_wall),
        cmocka_unit_test(test_cadence),
        cmocka_unit_test(test_deterministic),
        cmocka_unit_test(test_refusals),
        cmocka_unit_test(test_no_alloc_when_warm),
    };
    return LC_RUN_TESTS(tests, NULL, NULL);
}
