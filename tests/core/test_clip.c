/*
 * test_clip.c - the two halfspace clippers (src/core/clip.c).
 *
 * Outside reference: GEOS (libgeos) intersection areas of random convex
 * polygons (fixed seeds) with halfspaces, each halfspace a huge box on the
 * inner side of its line. Then what the owners promise (every edge lies on
 * its owner's line), the edge-list clipper against its own O(n) path, and
 * degenerate input: nothing left, nothing cut, a line through a vertex,
 * parallel and redundant lines, an empty and an unbounded set.
 */
#include "testutil.h"

#include <stdlib.h>

#include "clip.h"
#include "geos_oracle.h"
#include "lc_config.h"

enum { MAXV = 64 };

/* A random convex CCW polygon: sorted angles on a circle of radius r about c. */
static double area(const lc_vec2 *v, int n) { return n >= 3 ? 0.5 * lc_polygon_area2(v, n) : 0.0; }

/* Clips (v, n) by the halfspaces h[0..nh) through lc_clip_owned (edges of
 * the input owned by -1 - i); returns the count, result in out, own. */
static int clip_owned(const lc_vec2 *v, int n, const lc_halfspace *h, int nh, lc_vec2 *out,
                      int *own)
{
    lc_vec2 va[MAXV + 8], vb[MAXV + 8];
    int oa[MAXV + 8], ob[MAXV + 8];
    for (int i = 0; i < n; i++) {
        va[i] = v[i];
        oa[i] = -1 - i;
    }
    lc_clip_poly p = {va, oa, n}, spare = {vb, ob, 0};
    lc_clip_owned(&p, &spare, h, 0, nh);
    for (int i = 0; i < p.n; i++) {
        out[i] = p.v[i];
        own[i] = p.own[i];
    }
    return p.n;
}

/* The halfspace as a polygon for GEOS: a square of half side R on its
 * inside, one side along the line (CCW: along the line in direction
 * -perp(a), then inward). */
static void halfspace_box(lc_halfspace h, double R, lc_vec2 box[4])
{
    lc_vec2 foot = lc_scale(h.a, h.b), t = lc_perp(h.a), in = lc_scale(h.a, -2.0 * R);
    box[0] = lc_add(foot, lc_scale(t, R));
    box[1] = lc_add(box[0], in);
    box[2] = lc_add(box[1], lc_scale(t, -2.0 * R));
    box[3] = lc_add(foot, lc_scale(t, -R));
}

/* Sutherland-Hodgman against GEOS on random polygons and lines. */
static void test_owned_against_geos(void **state)
{
#if !LC_HAVE_GEOS
    skip();
#else
    lc_rng g;
    lc_rng_seed(&g, 20261);
    for (int t = 0; t < 300; t++) {
        lc_vec2 v[MAXV], out[MAXV + 8];
        double cx = lc_rng_uniform(&g, -5, 5), cy = lc_rng_uniform(&g, -5, 5);
        lc_vec2 c = lc_v2(cx, cy);
        double radius = lc_rng_uniform(&g, 0.1, 3.0);
        int n = 3 + (int)(lc_rng_next(&g) % 20);
        lc_test_random_convex(&g, c, radius, n, v);
        lc_halfspace h;
        h.a = lc_unit_angle(lc_rng_uniform(&g, -LC_PI, LC_PI));
        h.b = lc_dot(h.a, c) + lc_rng_uniform(&g, -3.0, 3.0);
        int own[MAXV + 8];
        int m = clip_owned(v, n, &h, 1, out, own);
        lc_vec2 box[4];
        halfspace_box(h, 100.0, box);
        double want = oracle_intersection_area(v, n, box, 4);
        assert_near(area(out, m), want, 1e-9 * (1.0 + want));
        assert_true(m <= n + 1);
        /* every vertex is inside, every edge on its owner's line */
        for (int i = 0; i < m; i++) {
            assert_true(lc_dot(h.a, out[i]) <= h.b + 1e-9);
            lc_vec2 p = out[i], q = out[(i + 1) % m];
            if (own[i] == 0) {
                assert_near(lc_dot(h.a, p), h.b, 1e-9);
                assert_near(lc_dot(h.a, q), h.b, 1e-9);
            } else {
                int e = -1 - own[i];
                assert_true(e >= 0 && e < n);
                lc_vec2 a = v[e], b = v[(e + 1) % n], d = lc_sub(b, a);
                assert_near(lc_cross(d, lc_sub(p, a)) / lc_len(d), 0.0, 1e-9);
                assert_near(lc_cross(d, lc_sub(q, a)) / lc_len(d), 0.0, 1e-9);
            }
        }
    }
#endif
}

/* Vertex enumeration, a method of its own: the meets of every two lines
 * that satisfy every halfspace; GEOS takes their hull's area. */
static double enumerated_area(const lc_halfspace *h, int nh)
{
    lc_vec2 pts[(MAXV + 8) * (MAXV + 8)];
    int np = 0;
    for (int i = 0; i < nh; i++)
        for (int j = i + 1; j < nh; j++) {
            double det = lc_cross(h[i].a, h[j].a);
            if (fabs(det) < 1e-12)
                continue;
            lc_vec2 p = lc_v2((h[i].b * h[j].a.y - h[j].b * h[i].a.y) / det,
                              (h[i].a.x * h[j].b - h[j].a.x * h[i].b) / det);
            bool in = true;
            for (int k = 0; k < nh && in; k++)
                in = lc_dot(h[k].a, p) <= h[k].b + 1e-9;
            if (in)
                pts[np++] = p;
        }
    if (np < 3)
        return 0.0;
    lc_vec2 hull[(MAXV + 8) * (MAXV + 8)];
    double a = 0.0;
    oracle_convex_hull(pts, np, hull, (MAXV + 8) * (MAXV + 8), &a);
    return a;
}

/* Several lines in turn: the intersection of the polygon and all of them. */
static void test_owned_many_lines(void **state)
{
#if !LC_HAVE_GEOS
    skip();
#else
    lc_rng g;
    lc_rng_seed(&g, 77);
    for (int t = 0; t < 100; t++) {
        lc_vec2 v[MAXV], out[MAXV + 8];
        int n = 3 + (int)(lc_rng_next(&g) % 12);
        lc_test_random_convex(&g, lc_v2(0, 0), 2.0, n, v);
        lc_halfspace h[MAXV + 8];
        int nh = 6;
        for (int k = 0; k < nh; k++) {
            h[k].a = lc_unit_angle(lc_rng_uniform(&g, -LC_PI, LC_PI));
            h[k].b = lc_rng_uniform(&g, 0.2, 2.0);
        }
        int own[MAXV + 8];
        int m = clip_owned(v, n, h, nh, out, own);
        for (int i = 0; i < n; i++) { /* the polygon's own edges as halfspaces */
            lc_vec2 e = lc_sub(v[(i + 1) % n], v[i]), a = lc_scale(lc_v2(e.y, -e.x), 1.0 / lc_len(e));
            h[nh + i] = (lc_halfspace){a, lc_dot(a, v[i])};
        }
        assert_near(area(out, m), enumerated_area(h, nh + n), 1e-9);
    }
#endif
}

/* Nothing left, nothing cut, a line through a vertex, an empty input. */
static void test_owned_degenerate(void **state)
{
    lc_vec2 sq[4] = {{0, 0}, {1, 0}, {1, 1}, {0, 1}}, out[8];
    int own[8];
    /* x <= -1: nothing left */
    lc_halfspace away = {{1, 0}, -1};
    assert_int_equal(clip_owned(sq, 4, &away, 1, out, own), 0);
    /* x <= 2: unchanged, owners kept */
    lc_halfspace wide = {{1, 0}, 2};
    assert_int_equal(clip_owned(sq, 4, &wide, 1, out, own), 4);
    for (int i = 0; i < 4; i++) {
        assert_true(out[i].x == sq[i].x && out[i].y == sq[i].y);
        assert_int_equal(own[i], -1 - i);
    }
    /* x + y <= 1 through two vertices: the triangle below the diagonal */
    lc_halfspace diag = {{sqrt(0.5), sqrt(0.5)}, sqrt(0.5)};
    int m = clip_owned(sq, 4, &diag, 1, out, own);
    assert_near(area(out, m), 0.5, 1e-15);
    /* x <= 1 along an edge: nothing cut */
    lc_halfspace edge = {{1, 0}, 1};
    m = clip_owned(sq, 4, &edge, 1, out, own);
    assert_int_equal(m, 4);
    assert_near(area(out, m), 1.0, 0.0);
    /* no polygon, no halfspace */
    assert_int_equal(clip_owned(sq, 0, &wide, 1, out, own), 0);
    assert_int_equal(clip_owned(sq, 4, &wide, 0, out, own), 4);
}

/* ------------------------------------------------ the edge-list clipper */

typedef struct rows_buf {
    double a1[MAXV + 8], a2[MAXV + 8], b[MAXV + 8], work[LC_CLIP_WORK(MAXV)];
} rows_buf;

/* Rows of a CCW polygon (unit normals), and the largest |b|. */
static lc_hrows rows_of(rows_buf *rb, const lc_vec2 *v, int n, double *bmax)
{
    *bmax = 0.0;
    for (int i = 0; i < n; i++) {
        lc_vec2 e = lc_sub(v[(i + 1) % n], v[i]), a = lc_scale(lc_v2(e.y, -e.x), 1.0 / lc_len(e));
        rb->a1[i] = a.x;
        rb->a2[i] = a.y;
        rb->b[i] = lc_dot(a, v[i]);
        *bmax = fmax(*bmax, fabs(rb->b[i]));
    }
    return (lc_hrows){rb->a1, rb->a2, rb->b, n};
}

static double clip_area(const lc_clip *c)
{
    lc_vec2 v[MAXV + 8];
    for (int k = 0; k < c->m; k++)
        v[k] = lc_v2(c->vx[k], c->vy[k]);
    return area(v, c->m);
}

/* Random convex polygons back from their halfspaces, by both paths, in
 * shuffled order; GEOS gives the area. */
static void test_all_and_fast(void **state)
{
    lc_rng g;
    lc_rng_seed(&g, 4242);
    int fast_taken = 0;
    for (int t = 0; t < 300; t++) {
        lc_vec2 v[MAXV];
        double cx = lc_rng_uniform(&g, -3, 3), cy = lc_rng_uniform(&g, -3, 3);
        double radius = lc_rng_uniform(&g, 0.5, 2.0);
        int n = 3 + (int)(lc_rng_next(&g) % 30);
        lc_test_random_convex(&g, lc_v2(cx, cy), radius, n, v);
        /* drop repeated angles (two may be drawn close together) */
        int k = 1;
        for (int i = 1; i < n; i++)
            if (lc_dist(v[i], v[k - 1]) > 1e-6)
                v[k++] = v[i];
        n = k;
        if (n < 3)
            continue;
        rows_buf rb;
        double bmax;
        lc_hrows r = rows_of(&rb, v, n, &bmax);
        for (int i = n - 1; i > 0; i--) { /* shuffle the rows */
            int j = (int)(lc_rng_next(&g) % (uint64_t)(i + 1));
            double t1 = r.a1[i], t2 = r.a2[i], t3 = r.b[i];
            r.a1[i] = r.a1[j], r.a2[i] = r.a2[j], r.b[i] = r.b[j];
            r.a1[j] = t1, r.a2[j] = t2, r.b[j] = t3;
        }
        double want = area(v, n);
#if LC_HAVE_GEOS
        want = oracle_polygon_area(v, n);
#endif
        lc_clip c;
        lc_clip_bind(&c, r, rb.work);
        assert_int_equal(lc_clip_all(&c, bmax), LC_OK);
        assert_int_equal(c.m, n);
        assert_near(clip_area(&c), want, 1e-9 * want);
        lc_clip f;
        lc_clip_bind(&f, r, rb.work);
        if (lc_clip_fast(&f, bmax)) {
            fast_taken++;
            assert_int_equal(f.m, n);
            assert_near(clip_area(&f), want, 1e-9 * want);
        }
    }
    assert_true(fast_taken > 200); /* random polygons are plainly well formed */
}

/* The box stays when the set is unbounded; disjoint lines leave nothing;
 * the fast path declines parallel and redundant lines, the clipper copes. */
static void test_all_degenerate(void **state)
{
    rows_buf rb;
    lc_clip c;
    /* y <= 1, -y <= 1, x <= 1: unbounded toward -x */
    double a1[3] = {0, 0, 1}, a2[3] = {1, -1, 0}, b[3] = {1, 1, 1};
    for (int i = 0; i < 3; i++)
        rb.a1[i] = a1[i], rb.a2[i] = a2[i], rb.b[i] = b[i];
    lc_hrows r = {rb.a1, rb.a2, rb.b, 3};
    lc_clip_bind(&c, r, rb.work);
    assert_false(lc_clip_fast(&c, 1.0));
    lc_clip_bind(&c, r, rb.work);
    assert_int_equal(lc_clip_all(&c, 1.0), LC_ERR_UNBOUNDED);
    /* x <= -1 and -x <= -1 (x >= 1) with y bounds: empty */
    double e1[4] = {1, -1, 0, 0}, e2[4] = {0, 0, 1, -1}, eb[4] = {-1, -1, 1, 1};
    for (int i = 0; i < 4; i++)
        rb.a1[i] = e1[i], rb.a2[i] = e2[i], rb.b[i] = eb[i];
    r.n = 4;
    lc_clip_bind(&c, r, rb.work);
    assert_false(lc_clip_fast(&c, 1.0));
    lc_clip_bind(&c, r, rb.work);
    assert_int_equal(lc_clip_all(&c, 1.0), LC_ERR_DEGENERATE);
    /* the unit square and a redundant x <= 5: the square, by the clipper */
    double s1[5] = {1, 0, -1, 0, 1}, s2[5] = {0, 1, 0, -1, 0}, sb[5] = {1, 1, 1, 1, 5};
    for (int i = 0; i < 5; i++)
        rb.a1[i] = s1[i], rb.a2[i] = s2[i], rb.b[i] = sb[i];
    r.n = 5;
    lc_clip_bind(&c, r, rb.work);
    assert_false(lc_clip_fast(&c, 5.0));
    lc_clip_bind(&c, r, rb.work);
    assert_int_equal(lc_clip_all(&c, 5.0), LC_OK);
    assert_int_equal(c.m, 4);
    assert_near(clip_area(&c), 4.0, 1e-12);
    /* the square with x <= 1 twice: parallel neighbours, the clipper again */
    sb[4] = 1;
    lc_clip_bind(&c, r, rb.work);
    assert_false(lc_clip_fast(&c, 1.0));
    lc_clip_bind(&c, r, rb.work);
    assert_int_equal(lc_clip_all(&c, 1.0), LC_OK);
    assert_near(clip_area(&c), 4.0, 1e-12);
    /* a sliver of zero width (x <= 0, -x <= 0): a polygon of zero area (the
     * ellipse solver's driver calls that empty, not the clipper) */
    double z1[4] = {1, -1, 0, 0}, z2[4] = {0, 0, 1, -1}, zb[4] = {0, 0, 1, 1};
    for (int i = 0; i < 4; i++)
        rb.a1[i] = z1[i], rb.a2[i] = z2[i], rb.b[i] = zb[i];
    r.n = 4;
    lc_clip_bind(&c, r, rb.work);
    int st = lc_clip_all(&c, 1.0);
    assert_int_equal(st, LC_OK);
    assert_near(clip_area(&c), 0.0, 0.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_owned_against_geos),
        cmocka_unit_test(test_owned_many_lines),
        cmocka_unit_test(test_owned_degenerate),
        cmocka_unit_test(test_all_and_fast),
        cmocka_unit_test(test_all_degenerate),
    };
    return cmocka_run_group_tests(tests, lc_test_geos_setup, lc_test_geos_teardown);
}
