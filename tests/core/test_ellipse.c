/*
 * test_ellipse.c - the maximum-area inscribed ellipse (src/core/ellipse.c)
 * against outside references: closed forms and John's theorem
 * (docs/REFERENCES.md), the KKT conditions of the convex program (Boyd and
 * Vandenberghe, Convex Optimization, 8.4.2), and Ipopt as a general-purpose
 * solver on random polygons. Random input uses fixed seeds. Scratch is
 * allocated at exactly LC_ELLIPSE_SCRATCH(n) doubles so that the sanitiser
 * build catches any overrun.
 */
#include "testutil.h"

#include <stdio.h>
#include <stdlib.h>

#include "ellipse.h"
#include "lc_config.h"
#include "ref_mvie.h"

enum { MAXV = 256 };

/* ------------------------------------------------------------ helpers */

typedef struct poly {
    lc_vec2 v[MAXV];
    int nv;
    lc_halfspace h[2 * MAXV];
    int nh;
} poly;

/* Halfspaces of a CCW polygon; normals scaled by `scale` (not unit). */
static void poly_from_vertices(poly *p, double scale)
{
    p->nh = 0;
    for (int i = 0; i < p->nv; i++) {
        lc_vec2 a = p->v[i], b = p->v[(i + 1) % p->nv], e = lc_sub(b, a);
        lc_vec2 nrm = lc_scale(lc_v2(e.y, -e.x), scale / lc_len(e));
        p->h[p->nh++] = (lc_halfspace){nrm, lc_dot(nrm, a)};
    }
}

/* Area about the first vertex: the shoelace sum in absolute coordinates
 * loses too many digits on slivers away from the origin. */
static double poly_area(const poly *p)
{
    double a2 = 0.0;
    for (int i = 1; i + 1 < p->nv; i++)
        a2 += lc_cross(lc_sub(p->v[i], p->v[0]), lc_sub(p->v[i + 1], p->v[0]));
    return 0.5 * a2;
}

/* Sorted random angles on an ellipse of the given aspect, rotated, moved. */
static void random_convex(poly *p, lc_rng *r, int nv, double size, double aspect)
{
    double ang[MAXV];
    for (int i = 0; i < nv; i++)
        ang[i] = lc_rng_uniform(r, 0.0, 2.0 * LC_PI);
    for (int i = 1; i < nv; i++)
        for (int j = i; j > 0 && ang[j - 1] > ang[j]; j--) {
            double t = ang[j];
            ang[j] = ang[j - 1];
            ang[j - 1] = t;
        }
    double rot = lc_rng_uniform(r, 0.0, LC_PI);
    lc_vec2 c = lc_v2(lc_rng_uniform(r, -5, 5), lc_rng_uniform(r, -5, 5));
    p->nv = 0;
    for (int i = 0; i < nv; i++) {
        lc_vec2 q = lc_rotate(lc_v2(size * cos(ang[i]), size * aspect * sin(ang[i])), rot);
        lc_vec2 v = lc_add(q, c);
        /* drop (near) duplicate vertices: they would give a zero edge */
        if (p->nv > 0 && lc_dist(v, p->v[p->nv - 1]) < 1e-9 * size)
            continue;
        p->v[p->nv++] = v;
    }
    if (p->nv > 1 && lc_dist(p->v[0], p->v[p->nv - 1]) < 1e-9 * size)
        p->nv--;
}

/* Appends k redundant halfspaces: copies of existing ones pushed outward. */
static void add_redundant(poly *p, lc_rng *r, int k)
{
    int n0 = p->nh;
    for (int j = 0; j < k && p->nh < 2 * MAXV; j++) {
        lc_halfspace h = p->h[j % n0];
        h.b += lc_rng_uniform(r, 0.0, 0.5) * lc_len(h.a);
        p->h[p->nh++] = h;
    }
}

typedef struct result {
    int status;
    lc_ellipse e;
    lc_ellipse_info info;
    double lambda[2 * MAXV];
} result;

static result solve_opts(const lc_halfspace *h, int n, const lc_ellipse *warm,
                         const lc_ellipse_opts *opts)
{
    result r;
    int m = n > 0 ? n : 0;
    double *scratch = malloc(sizeof(double) * LC_ELLIPSE_SCRATCH(m));
    assert_non_null(scratch);
    r.status = lc_ellipse_solve(h, n, warm, opts, &r.e, r.lambda, scratch, &r.info);
    free(scratch);
    return r;
}

static result solve(const lc_halfspace *h, int n, const lc_ellipse *warm)
{
    return solve_opts(h, n, warm, NULL);
}

/* Eigenvalues of the symmetric L (the semi-axes), larger first. */
static void semi_axes(const lc_ellipse *e, double *big, double *small)
{
    double m = 0.5 * (e->l11 + e->l22);
    double q = hypot(0.5 * (e->l11 - e->l22), e->l12);
    *big = m + q;
    *small = m - q;
}

/* Every halfspace holds exactly, as lc_ellipse_inside_halfspace evaluates it. */
static void assert_inside_all(const lc_ellipse *e, const lc_halfspace *h, int n)
{
    for (int i = 0; i < n; i++)
        if (!lc_ellipse_inside_halfspace(e, h[i], 0.0)) {
            print_error("ellipse pokes out of halfspace %d\n", i);
            fail();
        }
}

static poly regular(int n, double radius, lc_vec2 c)
{
    poly p;
    p.nv = n;
    for (int i = 0; i < n; i++)
        p.v[i] = lc_add(c, lc_scale(lc_unit_angle(2.0 * LC_PI * i / n + 0.3), radius));
    poly_from_vertices(&p, 1.0);
    return p;
}

/* ------------------------------------------------------- closed forms */

/* docs/REFERENCES.md, Steiner inellipse of (0,0), (1,0), (0,1). */
static void test_steiner_unit_triangle(void **state)
{
    (void)state;
    poly p = {.v = {{0, 0}, {1, 0}, {0, 1}}, .nv = 3};
    poly_from_vertices(&p, 1.0);
    result r = solve(p.h, p.nh, NULL);
    assert_int_equal(r.status, LC_OK);
    assert_near(r.e.d.x, 1.0 / 3.0, 1e-9);
    assert_near(r.e.d.y, 1.0 / 3.0, 1e-9);
    double big, small;
    semi_axes(&r.e, &big, &small);
    assert_near(big, 0.408248, 1e-6);   /* docs/REFERENCES.md */
    assert_near(small, 0.235702, 1e-6); /* docs/REFERENCES.md */
    assert_near(lc_ellipse_area(&r.e), 0.302300, 1e-6);
    /* shape matrix M = (1/6) sum (v - g)(v - g)^T, and L L^T = M */
    lc_vec2 g = lc_v2(1.0 / 3.0, 1.0 / 3.0);
    double m11 = 0, m12 = 0, m22 = 0;
    for (int i = 0; i < 3; i++) {
        lc_vec2 q = lc_sub(p.v[i], g);
        m11 += q.x * q.x / 6.0;
        m12 += q.x * q.y / 6.0;
        m22 += q.y * q.y / 6.0;
    }
    const lc_ellipse *e = &r.e;
    assert_near(e->l11 * e->l11 + e->l12 * e->l12, m11, 1e-9);
    assert_near(e->l11 * e->l12 + e->l12 * e->l22, m12, 1e-9);
    assert_near(e->l12 * e->l12 + e->l22 * e->l22, m22, 1e-9);
    assert_inside_all(&r.e, p.h, p.nh);
}

/* docs/REFERENCES.md: any triangle, area ratio pi / (3 sqrt 3), centre the centroid. */
static void test_random_triangles(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 101);
    for (int t = 0; t < 300; t++) {
        poly p;
        double size = pow(10.0, lc_rng_uniform(&rng, -3, 3));
        double aspect = t % 4 == 0 ? 1e-3 : lc_rng_uniform(&rng, 0.05, 1.0);
        random_convex(&p, &rng, 3, size, aspect);
        if (p.nv != 3 || !(poly_area(&p) > 1e-6 * size * size * aspect))
            continue;
        poly_from_vertices(&p, lc_rng_uniform(&rng, 0.1, 10.0));
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        /* docs/REFERENCES.md */
        assert_near(lc_ellipse_area(&r.e) / poly_area(&p), 0.604600, 1e-6);
        assert_rel_near(lc_ellipse_area(&r.e) / poly_area(&p), LC_PI / (3.0 * sqrt(3.0)), 1e-7);
        lc_vec2 g = lc_scale(lc_add(lc_add(p.v[0], p.v[1]), p.v[2]), 1.0 / 3.0);
        assert_near(r.e.d.x, g.x, 1e-7 * size);
        assert_near(r.e.d.y, g.y, 1e-7 * size);
        assert_inside_all(&r.e, p.h, p.nh);
    }
}

/* docs/REFERENCES.md: regular n-gon, the incircle, ratio pi / (n tan(pi/n)). */
static void test_regular_polygons(void **state)
{
    (void)state;
    static const struct {
        int n;
        double ratio;
    } table[] = {{4, 0.785398}, {5, 0.864806}, {6, 0.906900}, {8, 0.948059}};
    for (size_t k = 0; k < sizeof table / sizeof table[0]; k++) {
        poly p = regular(table[k].n, 2.0, lc_v2(1.5, -0.5));
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        assert_near(lc_ellipse_area(&r.e) / poly_area(&p), table[k].ratio, 1e-6);
        double rin = 2.0 * cos(LC_PI / table[k].n);
        assert_near(r.e.l11, rin, 1e-8);
        assert_near(r.e.l22, rin, 1e-8);
        assert_near(r.e.l12, 0.0, 1e-8);
        assert_near(r.e.d.x, 1.5, 1e-8);
        assert_near(r.e.d.y, -0.5, 1e-8);
    }
    /* many sides (n = 200, the largest size the solver is meant for) */
    poly p = regular(200, 1.0, lc_v2(0, 0));
    result r = solve(p.h, p.nh, NULL);
    assert_int_equal(r.status, LC_OK);
    assert_rel_near(lc_ellipse_area(&r.e) / poly_area(&p), LC_PI / (200 * tan(LC_PI / 200)),
                    1e-8);
}

/* docs/REFERENCES.md: rectangle w x h, semi-axes w/2 and h/2 (also very thin). */
static void test_rectangles(void **state)
{
    (void)state;
    static const double wh[][2] = {{1, 1}, {4, 1}, {1, 1e-3}, {1e3, 2}, {1e-4, 3e-4}};
    for (size_t k = 0; k < sizeof wh / sizeof wh[0]; k++) {
        double w = wh[k][0], h = wh[k][1];
        poly p = {.v = {{0, 0}, {w, 0}, {w, h}, {0, h}}, .nv = 4};
        poly_from_vertices(&p, 1.0);
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        double big, small;
        semi_axes(&r.e, &big, &small);
        assert_rel_near(big, fmax(w, h) / 2, 1e-8);
        assert_rel_near(small, fmin(w, h) / 2, 1e-8);
        assert_near(r.e.d.x, w / 2, 1e-9 * fmax(w, h));
        assert_near(r.e.d.y, h / 2, 1e-9 * fmax(w, h));
    }
}

/* docs/REFERENCES.md: a parallelogram is an affine square: ratio pi/4. */
static void test_parallelograms(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 7);
    for (int t = 0; t < 50; t++) {
        lc_vec2 o = lc_v2(lc_rng_uniform(&rng, -3, 3), lc_rng_uniform(&rng, -3, 3));
        lc_vec2 u = lc_scale(lc_unit_angle(lc_rng_uniform(&rng, 0, 2 * LC_PI)),
                             lc_rng_uniform(&rng, 0.1, 3));
        lc_vec2 v = lc_rotate(u, lc_rng_uniform(&rng, 0.05, LC_PI - 0.05));
        v = lc_scale(v, lc_rng_uniform(&rng, 0.1, 3) / lc_len(v));
        poly p = {.v = {o, lc_add(o, u), lc_add(lc_add(o, u), v), lc_add(o, v)}, .nv = 4};
        poly_from_vertices(&p, 1.0);
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        assert_rel_near(lc_ellipse_area(&r.e) / poly_area(&p), LC_PI / 4, 1e-8);
    }
}

/* docs/REFERENCES.md: isosceles trapezoid (-2,0),(2,0),(1,1),(-1,1) (symmetry argument). */
static void test_trapezoid(void **state)
{
    (void)state;
    poly p = {.v = {{-2, 0}, {2, 0}, {1, 1}, {-1, 1}}, .nv = 4};
    poly_from_vertices(&p, 1.0);
    result r = solve(p.h, p.nh, NULL);
    assert_int_equal(r.status, LC_OK);
    assert_near(r.e.d.x, 0.0, 1e-9);
    assert_near(r.e.d.y, 0.5, 1e-9);
    double big, small;
    semi_axes(&r.e, &big, &small);
    assert_near(big, sqrt(2.0), 1e-8);
    assert_near(small, 0.5, 1e-8);
    assert_near(lc_ellipse_area(&r.e), 2.221441, 1e-6); /* pi / sqrt 2 */
}

/* docs/REFERENCES.md: the inscribed ellipse commutes with affine maps. */
static void test_affine_invariance(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 2024);
    for (int t = 0; t < 100; t++) {
        poly p, q;
        random_convex(&p, &rng, 3 + t % 14, 1.0, lc_rng_uniform(&rng, 0.2, 1.0));
        poly_from_vertices(&p, 1.0);
        double m[4];
        do {
            for (int k = 0; k < 4; k++)
                m[k] = lc_rng_uniform(&rng, -2, 2);
        } while (fabs(m[0] * m[3] - m[1] * m[2]) < 0.2);
        lc_vec2 c = lc_v2(lc_rng_uniform(&rng, -10, 10), lc_rng_uniform(&rng, -10, 10));
        bool flip = m[0] * m[3] - m[1] * m[2] < 0;
        q.nv = p.nv;
        for (int i = 0; i < p.nv; i++) {
            lc_vec2 v = p.v[flip ? p.nv - 1 - i : i];
            q.v[i] = lc_add(c, lc_v2(m[0] * v.x + m[1] * v.y, m[2] * v.x + m[3] * v.y));
        }
        poly_from_vertices(&q, 1.0);
        result rp = solve(p.h, p.nh, NULL), rq = solve(q.h, q.nh, NULL);
        assert_int_equal(rp.status, LC_OK);
        assert_int_equal(rq.status, LC_OK);
        assert_rel_near(lc_ellipse_area(&rp.e) / poly_area(&p),
                        lc_ellipse_area(&rq.e) / poly_area(&q), 1e-8);
        /* the centre maps with the polygon */
        lc_vec2 d = rp.e.d;
        lc_vec2 md = lc_add(c, lc_v2(m[0] * d.x + m[1] * d.y, m[2] * d.x + m[3] * d.y));
        assert_near(rq.e.d.x, md.x, 1e-6);
        assert_near(rq.e.d.y, md.y, 1e-6);
    }
}

/*
 * John's theorem (docs/REFERENCES.md): K lies inside E scaled by 2 about its
 * centre (sqrt 2 for centrally symmetric K); and the area ratio is at least
 * that of triangles, pi / (3 sqrt 3).
 */
static void test_john(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 314);
    for (int t = 0; t < 200; t++) {
        poly p;
        random_convex(&p, &rng, 3 + t % 30, 1.0, lc_rng_uniform(&rng, 0.01, 1.0));
        if (p.nv < 3)
            continue;
        poly_from_vertices(&p, 1.0);
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        for (int i = 0; i < p.nv; i++)
            assert_true(lc_ellipse_norm(&r.e, p.v[i]) <= 2.0 + 1e-7);
        /* 0.604600 in docs/REFERENCES.md is pi / (3 sqrt 3) = 0.6045998 rounded up;
         * triangles attain it, so compare with the exact value */
        assert_true(lc_ellipse_area(&r.e) / poly_area(&p) >= LC_PI / (3.0 * sqrt(3.0)) - 1e-9);
    }
    for (int t = 0; t < 100; t++) {
        /* centrally symmetric: k angles in [0, pi) and their antipodes */
        int k = 2 + t % 10;
        poly p;
        lc_vec2 c = lc_v2(lc_rng_uniform(&rng, -5, 5), lc_rng_uniform(&rng, -5, 5));
        double a0 = lc_rng_uniform(&rng, 0, LC_PI), asp = lc_rng_uniform(&rng, 0.05, 1);
        for (int i = 0; i < k; i++) {
            double a = a0 + LC_PI * (i + lc_rng_uniform(&rng, 0.1, 0.9)) / k;
            p.v[i] = lc_add(c, lc_v2(cos(a), asp * sin(a)));
            p.v[i + k] = lc_sub(c, lc_v2(cos(a), asp * sin(a)));
        }
        p.nv = 2 * k;
        poly_from_vertices(&p, 1.0);
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        for (int i = 0; i < p.nv; i++)
            assert_true(lc_ellipse_norm(&r.e, p.v[i]) <= sqrt(2.0) + 1e-7);
    }
}

/* ------------------------------------------------ optimality conditions */

/*
 * KKT of max log det L s.t. |L a_i| + a_i . d <= b_i (Boyd and Vandenberghe
 * 8.4.2), with the caller's unnormalised normals: lambda >= 0,
 * sum lambda_i a_i = 0, L^-1 = sym(sum lambda_i (L a_i) a_i^T / |L a_i|),
 * lambda_i slack_i ~ 0; and, derived from those, sum lambda_i b_i = 2.
 */
static void test_kkt(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 55);
    for (int t = 0; t < 200; t++) {
        poly p;
        double size = pow(10.0, lc_rng_uniform(&rng, -2, 2));
        random_convex(&p, &rng, 3 + t % 14, size, lc_rng_uniform(&rng, 0.05, 1.0));
        if (p.nv < 3)
            continue;
        poly_from_vertices(&p, 1.0);
        for (int i = 0; i < p.nh; i++) { /* unnormalised normals */
            double k = lc_rng_uniform(&rng, 0.1, 10.0);
            p.h[i].a = lc_scale(p.h[i].a, k);
            p.h[i].b *= k;
        }
        if (t % 3 == 0)
            add_redundant(&p, &rng, 3);
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        const lc_ellipse *e = &r.e;
        double det = e->l11 * e->l22 - e->l12 * e->l12;
        double i11 = e->l22 / det, i12 = -e->l12 / det, i22 = e->l11 / det;
        double sx = 0, sy = 0, s11 = 0, s12 = 0, s22 = 0, sb = 0, anorm = 0;
        for (int i = 0; i < p.nh; i++) {
            lc_vec2 a = p.h[i].a;
            lc_vec2 la = lc_v2(e->l11 * a.x + e->l12 * a.y, e->l12 * a.x + e->l22 * a.y);
            double len = lc_len(la), lam = r.lambda[i];
            double slack = p.h[i].b - lc_dot(a, e->d) - len;
            assert_true(lam >= 0.0);
            assert_true(lam * slack <= 1e-8); /* complementary slackness */
            sx += lam * a.x;
            sy += lam * a.y;
            s11 += lam * la.x * a.x / len;
            s12 += lam * 0.5 * (la.x * a.y + la.y * a.x) / len;
            s22 += lam * la.y * a.y / len;
            sb += lam * p.h[i].b;
            anorm = fmax(anorm, lam * lc_len(a));
        }
        double scale = fmax(fabs(i11), fabs(i22));
        assert_near(sx, 0.0, 1e-7 * anorm);
        assert_near(sy, 0.0, 1e-7 * anorm);
        assert_near(s11, i11, 1e-7 * scale);
        assert_near(s12, i12, 1e-7 * scale);
        assert_near(s22, i22, 1e-7 * scale);
        assert_near(sb, 2.0, 1e-6);
        assert_true(r.info.gap <= 1e-9);
    }
}

/* ------------------------------------------------- general-purpose solver */

/*
 * Agreement with Ipopt (general-purpose NLP solver) on 200 random convex
 * polygons, 3 to 16 sides, a third with redundant halfspaces (each Ipopt
 * solve costs milliseconds, much more under the sanitisers: no more). Tolerance:
 * |logdet - logdet_ipopt| <= 1e-6 max(1, |logdet_ipopt|), i.e. relative, and
 * absolute when log det is near 0 (a unit-sized ellipse) where a relative
 * figure would mean nothing.
 */
static void test_agrees_with_ipopt(void **state)
{
    (void)state;
    if (!lc_ref_mvie_available()) {
        print_message("NOTICE: built without Ipopt; the general-purpose reference check "
                      "is skipped\n");
        skip();
    }
    lc_rng rng;
    lc_rng_seed(&rng, 9001);
    int checked = 0;
    double worst = 0.0;
    for (int t = 0; t < 300 && checked < 200; t++) {
        poly p;
        double aspect = t % 4 == 0 ? 0.01 : lc_rng_uniform(&rng, 0.1, 1.0);
        double size = lc_rng_uniform(&rng, 0.2, 5.0);
        random_convex(&p, &rng, 3 + t % 14, size, aspect);
        /* extreme slivers (a few random points close together) can defeat
         * the general-purpose solver; the closed forms cover them */
        if (p.nv < 3 || poly_area(&p) < 0.05 * size * size * aspect)
            continue;
        poly_from_vertices(&p, lc_rng_uniform(&rng, 0.5, 2.0));
        if (t % 3 == 0)
            add_redundant(&p, &rng, 4);
        result r = solve(p.h, p.nh, NULL);
        assert_int_equal(r.status, LC_OK);
        lc_ellipse ref;
        double ld_ref;
        assert_int_equal(lc_ref_mvie_solve(p.h, p.nh, &ref, &ld_ref, NULL), LC_REF_MVIE_OK);
        double ld = lc_ellipse_logdet(&r.e);
        double gap = fabs(ld - ld_ref) / fmax(1.0, fabs(ld_ref));
        worst = fmax(worst, gap);
        assert_true(gap <= 1e-6);
        assert_near(r.e.d.x, ref.d.x, 1e-4);
        assert_near(r.e.d.y, ref.d.y, 1e-4);
        checked++;
    }
    assert_true(checked >= 200);
    print_message("%s: %d polygons, worst log det gap %.2g\n", lc_ref_mvie_name(), checked,
                  worst);
}

/* --------------------------------------------------------- warm starts */

/* A warm start gives the same optimum as a cold one and says it was used. */
static void test_warm_start(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 77);
    for (int t = 0; t < 100; t++) {
        poly p;
        random_convex(&p, &rng, 3 + t % 14, 1.0, lc_rng_uniform(&rng, 0.05, 1.0));
        if (p.nv < 3)
            continue;
        poly_from_vertices(&p, 1.0);
        result cold = solve(p.h, p.nh, NULL);
        assert_int_equal(cold.status, LC_OK);
        assert_int_equal(cold.info.warm_used, 0);
        /* from the optimum itself (touching), and from a shrunk, moved copy */
        lc_ellipse w2 = cold.e;
        w2.l11 *= 0.5;
        w2.l12 *= 0.5;
        w2.l22 *= 0.5;
        lc_vec2 shift = lc_v2(0.2 * cold.e.l11, -0.1 * cold.e.l22);
        w2.d = lc_add(w2.d, shift);
        const lc_ellipse *warms[] = {&cold.e, &w2};
        for (int k = 0; k < 2; k++) {
            if (k == 1) {
                bool inside = true;
                for (int i = 0; i < p.nh; i++)
                    inside = inside && lc_ellipse_inside_halfspace(&w2, p.h[i], 0.0);
                if (!inside)
                    continue;
            }
            result warm = solve(p.h, p.nh, warms[k]);
            assert_int_equal(warm.status, LC_OK);
            assert_int_equal(warm.info.warm_used, 1);
            assert_near(lc_ellipse_logdet(&warm.e), lc_ellipse_logdet(&cold.e), 1e-8);
            assert_near(warm.e.d.x, cold.e.d.x, 1e-5);
            assert_near(warm.e.d.y, cold.e.d.y, 1e-5);
            assert_inside_all(&warm.e, p.h, p.nh);
        }
    }
}

/* A warm ellipse that does not fit, or is not an ellipse, is ignored. */
static void test_warm_start_rejected(void **state)
{
    (void)state;
    poly p = regular(6, 1.0, lc_v2(0, 0));
    result cold = solve(p.h, p.nh, NULL);
    lc_ellipse bad[] = {
        {2.0, 0.0, 2.0, {0, 0}},       /* sticks out */
        {0.1, 0.0, 0.1, {5, 5}},       /* centre outside */
        {1.0, 2.0, 1.0, {0, 0}},       /* not positive definite */
        {NAN, 0.0, 0.1, {0, 0}},       /* not finite */
        {0.1, 0.0, 0.1, {INFINITY, 0}} /* not finite */
    };
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        result r = solve(p.h, p.nh, &bad[k]);
        assert_int_equal(r.status, LC_OK);
        assert_int_equal(r.info.warm_used, 0);
        assert_near(lc_ellipse_logdet(&r.e), lc_ellipse_logdet(&cold.e), 1e-9);
    }
    /* a warm start on an unbounded polygon still reports it */
    lc_halfspace open[3] = {{{1, 0}, 1}, {{0, 1}, 1}, {{-1, 1}, 1}};
    lc_ellipse small = {0.1, 0.0, 0.1, {0, 0}};
    assert_int_equal(solve(open, 3, &small).status, LC_ERR_UNBOUNDED);
}

/* --------------------------------------------------------- degenerate */

static void test_bad_input(void **state)
{
    (void)state;
    lc_halfspace sq[4] = {{{1, 0}, 1}, {{-1, 0}, 1}, {{0, 1}, 1}, {{0, -1}, 1}};
    assert_int_equal(solve(sq, 0, NULL).status, LC_ERR_BAD_INPUT);
    assert_int_equal(solve(sq, 2, NULL).status, LC_ERR_BAD_INPUT);
    assert_int_equal(solve(sq, -1, NULL).status, LC_ERR_BAD_INPUT);
    const double poison[] = {NAN, INFINITY, -INFINITY};
    for (int k = 0; k < 3; k++)
        for (int field = 0; field < 3; field++) {
            lc_halfspace h[4];
            for (int i = 0; i < 4; i++)
                h[i] = sq[i];
            if (field == 0)
                h[2].a.x = poison[k];
            else if (field == 1)
                h[2].a.y = poison[k];
            else
                h[2].b = poison[k];
            assert_int_equal(solve(h, 4, NULL).status, LC_ERR_BAD_INPUT);
        }
    lc_halfspace zero[4] = {{{1, 0}, 1}, {{-1, 0}, 1}, {{0, 0}, 1}, {{0, -1}, 1}};
    assert_int_equal(solve(zero, 4, NULL).status, LC_ERR_BAD_INPUT);
}

static void test_empty_and_flat(void **state)
{
    (void)state;
    /* contradictory: x <= 0 and x >= 1 */
    lc_halfspace empty[4] = {{{1, 0}, 0}, {{-1, 0}, -1}, {{0, 1}, 1}, {{0, -1}, 1}};
    assert_int_equal(solve(empty, 4, NULL).status, LC_ERR_DEGENERATE);
    /* zero area: x <= 0.3 and -x <= -0.3 (b summing to 0), capped in y */
    lc_halfspace flat[4] = {{{1, 0}, 0.3}, {{-1, 0}, -0.3}, {{0, 1}, 1}, {{0, -1}, 1}};
    assert_int_equal(solve(flat, 4, NULL).status, LC_ERR_DEGENERATE);
    /* a point: three lines through one point */
    lc_halfspace point[3] = {{{1, 0}, 0}, {{0, 1}, 0}, {{-1, -1}, 0}};
    assert_int_equal(solve(point, 3, NULL).status, LC_ERR_DEGENERATE);
    /* empty triangle (orientation reversed) */
    poly p = {.v = {{0, 0}, {0, 1}, {1, 0}}, .nv = 3};
    poly_from_vertices(&p, 1.0);
    assert_int_equal(solve(p.h, p.nh, NULL).status, LC_ERR_DEGENERATE);
}

static void test_unbounded(void **state)
{
    (void)state;
    /* normals all in one half-plane */
    lc_halfspace wedge[3] = {{{1, 0}, 1}, {{0, 1}, 1}, {{1, 1}, 3}};
    assert_int_equal(solve(wedge, 3, NULL).status, LC_ERR_UNBOUNDED);
    /* only two distinct halfspaces (a strip), one given twice */
    lc_halfspace strip[3] = {{{0, 1}, 1}, {{0, -1}, 1}, {{0, 2}, 2}};
    assert_int_equal(solve(strip, 3, NULL).status, LC_ERR_UNBOUNDED);
    /* a half-plane bounded on three sides but open on the fourth */
    lc_halfspace open[3] = {{{1, 0}, 1}, {{0, 1}, 1}, {{0, -1}, 1}};
    assert_int_equal(solve(open, 3, NULL).status, LC_ERR_UNBOUNDED);
}

/* Redundant, duplicated and nearly parallel halfspaces change nothing. */
static void test_redundant_duplicates(void **state)
{
    (void)state;
    poly p = regular(5, 1.0, lc_v2(0.2, 0.1));
    result base = solve(p.h, p.nh, NULL);
    poly q = p;
    for (int i = 0; i < p.nh; i++) {
        q.h[q.nh++] = p.h[i];                            /* duplicate */
        q.h[q.nh] = p.h[i];                              /* redundant */
        q.h[q.nh].b += 0.3;
        q.nh++;
        q.h[q.nh] = p.h[i];                              /* nearly parallel */
        q.h[q.nh].a = lc_scale(lc_rotate(p.h[i].a, 1e-7), 3.0);
        q.h[q.nh].b = 3.0 * p.h[i].b + 1e-9;
        q.nh++;
    }
    result r = solve(q.h, q.nh, NULL);
    assert_int_equal(r.status, LC_OK);
    assert_near(lc_ellipse_logdet(&r.e), lc_ellipse_logdet(&base.e), 1e-6);
    assert_inside_all(&r.e, q.h, q.nh);
    /* 40 redundant boxes around a triangle */
    poly t = {.v = {{0, 0}, {2, 0}, {0, 1}}, .nv = 3};
    poly_from_vertices(&t, 1.0);
    for (int k = 0; k < 40; k++) {
        double s = 3.0 + k;
        t.h[t.nh++] = (lc_halfspace){lc_unit_angle(k * 0.7), s};
    }
    result rt = solve(t.h, t.nh, NULL);
    assert_int_equal(rt.status, LC_OK);
    assert_rel_near(lc_ellipse_area(&rt.e), 0.604600 * 1.0, 1e-6); /* triangle area 1 */
}

/* Huge offsets and tiny or huge polygons: same shape, scaled answer. */
static void test_scale_and_offset(void **state)
{
    (void)state;
    static const struct {
        double size, offset, tol;
    } table[] = {
        {1.0, 0.0, 1e-9},
        {1e-4, 0.0, 1e-9},
        {1e3, 0.0, 1e-9},
        {1e-3, 1e3, 1e-8},
        /* b carries about 1e-10 m of rounding at 1e6 m: relative 1e-10/size */
        {1.0, 1e6, 1e-8},
        {1e-2, 1e6, 1e-6},
    };
    for (size_t k = 0; k < sizeof table / sizeof table[0]; k++) {
        double s = table[k].size;
        lc_vec2 o = lc_v2(table[k].offset, -0.7 * table[k].offset);
        poly p = {.v = {{0, 0}, {3 * s, 0}, {3 * s, s}, {s, 2 * s}}, .nv = 4};
        for (int i = 0; i < 4; i++)
            p.v[i] = lc_add(p.v[i], o);
        poly_from_vertices(&p, 1.0);
        poly u = {.v = {{0, 0}, {3, 0}, {3, 1}, {1, 2}}, .nv = 4};
        poly_from_vertices(&u, 1.0);
        result rp = solve(p.h, p.nh, NULL), ru = solve(u.h, u.nh, NULL);
        assert_int_equal(rp.status, LC_OK);
        assert_int_equal(ru.status, LC_OK);
        assert_rel_near(lc_ellipse_area(&rp.e), lc_ellipse_area(&ru.e) * s * s, table[k].tol);
        assert_near(rp.e.d.x - o.x, ru.e.d.x * s, 1e-6 * s);
        assert_near(rp.e.d.y - o.y, ru.e.d.y * s, 1e-6 * s);
        assert_inside_all(&rp.e, p.h, p.nh);
    }
}

/*
 * Random polygons over the whole intended range (1e-3 m to 1e3 m, aspect down
 * to 1e-3, 3 to 200 sides, redundant halfspaces): the same answer as the
 * polygon's unit-scale copy, and always inside. The tolerance allows for the
 * rounding of b that the scaling itself introduces.
 */
static void test_random_scaled(void **state)
{
    (void)state;
    lc_rng rng;
    lc_rng_seed(&rng, 4242);
    for (int t = 0; t < 600; t++) {
        poly p;
        int nv = t % 20 == 0 ? 200 : 3 + t % 14;
        double aspect = t % 3 == 0 ? 1e-3 : lc_rng_uniform(&rng, 0.05, 1.0);
        random_convex(&p, &rng, nv, 1.0, aspect);
        if (p.nv < 3 || !(poly_area(&p) > 1e-4 * aspect))
            continue;
        poly_from_vertices(&p, 1.0);
        if (t % 4 == 1)
            add_redundant(&p, &rng, p.nh / 2 + 1);
        double s = pow(10.0, lc_rng_uniform(&rng, -3, 3));
        lc_vec2 o = lc_v2(lc_rng_uniform(&rng, -10, 10), lc_rng_uniform(&rng, -10, 10));
        poly q = p;
        for (int i = 0; i < q.nh; i++)
            q.h[i].b = q.h[i].b * s + lc_dot(q.h[i].a, o);
        result rp = solve(p.h, p.nh, NULL), rq = solve(q.h, q.nh, NULL);
        assert_int_equal(rp.status, LC_OK);
        assert_int_equal(rq.status, LC_OK);
        double tol = aspect < 0.01 ? 1e-5 : 1e-7;
        assert_near(lc_ellipse_logdet(&rq.e) - 2.0 * log(s), lc_ellipse_logdet(&rp.e), tol);
        assert_inside_all(&rq.e, q.h, q.nh);
        assert_true(rq.info.iterations <= 30);
    }
}

/* --------------------------------------------------- small functions */

static void test_helpers(void **state)
{
    (void)state;
    lc_ellipse e = {2.0, 0.5, 1.0, {1.0, -1.0}};
    double det = 2.0 * 1.0 - 0.25;
    assert_near(lc_ellipse_area(&e), LC_PI * det, 1e-12);
    assert_near(lc_ellipse_logdet(&e), log(det), 1e-12);
    for (int k = 0; k < 8; k++) {
        lc_vec2 u = lc_unit_angle(k * 0.8);
        lc_vec2 p = lc_add(e.d, lc_v2(e.l11 * u.x + e.l12 * u.y, e.l12 * u.x + e.l22 * u.y));
        assert_near(lc_ellipse_norm(&e, p), 1.0, 1e-12);
        assert_near(lc_ellipse_norm(&e, lc_lerp(e.d, p, 0.5)), 0.5, 1e-12);
    }
    assert_near(lc_ellipse_norm(&e, e.d), 0.0, 0.0);
    /* support function: a . d + |L a| */
    lc_vec2 a = lc_v2(0.6, 0.8);
    double support = lc_dot(a, e.d) + hypot(2.0 * 0.6 + 0.5 * 0.8, 0.5 * 0.6 + 1.0 * 0.8);
    assert_true(lc_ellipse_inside_halfspace(&e, (lc_halfspace){a, support + 1e-9}, 0.0));
    assert_false(lc_ellipse_inside_halfspace(&e, (lc_halfspace){a, support - 1e-6}, 0.0));
    assert_true(lc_ellipse_inside_halfspace(&e, (lc_halfspace){a, support - 1e-6}, 1e-5));
    lc_ellipse_opts o;
    lc_ellipse_opts_default(&o);
    assert_near(o.gap_tol, 1e-9, 0.0);
    assert_int_equal(o.max_iter, 60);
}

/* An iteration cap returns the best iterate: feasible, status MAX_ITER. */
static void test_max_iter(void **state)
{
    (void)state;
    poly p = {.v = {{0, 0}, {5, 0}, {4, 1}, {0.5, 3}}, .nv = 4};
    poly_from_vertices(&p, 1.0);
    lc_ellipse_opts o;
    lc_ellipse_opts_default(&o);
    o.max_iter = 1;
    result r = solve_opts(p.h, p.nh, NULL, &o);
    assert_int_equal(r.status, LC_ELLIPSE_MAX_ITER);
    assert_int_equal(r.info.iterations, 1);
    assert_true(r.info.gap > o.gap_tol);
    assert_inside_all(&r.e, p.h, p.nh);
    assert_true(lc_ellipse_area(&r.e) > 0.0);
    /* a looser tolerance stops earlier than the default */
    o.max_iter = 60;
    o.gap_tol = 1e-3;
    result loose = solve_opts(p.h, p.nh, NULL, &o), tight = solve(p.h, p.nh, NULL);
    assert_int_equal(loose.status, LC_OK);
    assert_true(loose.info.iterations <= tight.info.iterations);
    assert_true(loose.info.gap <= 1e-3);
    /* lambda and info may be NULL */
    double *scratch = malloc(sizeof(double) * LC_ELLIPSE_SCRATCH(p.nh));
    lc_ellipse e;
    assert_int_equal(lc_ellipse_solve(p.h, p.nh, NULL, NULL, &e, NULL, scratch, NULL),
                     LC_OK);
    free(scratch);
    assert_near(lc_ellipse_logdet(&e), lc_ellipse_logdet(&tight.e), 1e-12);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_steiner_unit_triangle),
        cmocka_unit_test(test_random_triangles),
        cmocka_unit_test(test_regular_polygons),
        cmocka_unit_test(test_rectangles),
        cmocka_unit_test(test_parallelograms),
        cmocka_unit_test(test_trapezoid),
        cmocka_unit_test(test_affine_invariance),
        cmocka_unit_test(test_john),
        cmocka_unit_test(test_kkt),
        cmocka_unit_test(test_agrees_with_ipopt),
        cmocka_unit_test(test_warm_start),
        cmocka_unit_test(test_warm_start_rejected),
        cmocka_unit_test(test_bad_input),
        cmocka_unit_test(test_empty_and_flat),
        cmocka_unit_test(test_unbounded),
        cmocka_unit_test(test_redundant_duplicates),
        cmocka_unit_test(test_scale_and_offset),
        cmocka_unit_test(test_random_scaled),
        cmocka_unit_test(test_helpers),
        cmocka_unit_test(test_max_iter),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
