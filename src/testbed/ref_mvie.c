/*
 * ref_mvie.c - the inscribed-ellipse problem handed to Ipopt (see ref_mvie.h).
 *
 * Unknowns x = (l11, l12, l22, d1, d2); objective -log(l11 l22 - l12^2);
 * constraints g_i = |L a_i| + a_i . d <= b_i with unit normals. Exact first
 * and second derivatives are written out here on purpose rather than shared
 * with the core solver, so that the reference stays independent of the code
 * it checks. Ipopt is silenced (print_level 0, banner off) and run to tight
 * tolerances, bounds not relaxed, so that an agreement of 1e-6 in log det
 * means something. Its start is a small disc near the lines; when that fails
 * (thin polygons), a second run starts from the Chebyshev centre, found by
 * Ipopt too.
 */
#include "ref_mvie.h"

#include "clock_mono.h"
#include "lc_config.h"

#include <math.h>
#include <stddef.h>

#if LC_HAVE_IPOPT

#include <stdlib.h>

#include <IpStdCInterface.h>
#include <IpoptConfig.h>

/* Halfspaces with unit normals, owned by one solve. */
typedef struct ref_problem {
    int n;
    double *a1, *a2, *b;
} ref_problem;

enum { NV = 5, NH = 15 };

static Bool eval_f(Index n, Number *x, Bool new_x, Number *f, UserDataPtr data)
{
    double det = x[0] * x[2] - x[1] * x[1];
    if (!(det > 0.0))
        return FALSE;
    *f = -log(det);
    return TRUE;
}

static Bool eval_grad_f(Index n, Number *x, Bool new_x, Number *g, UserDataPtr data)
{
    double det = x[0] * x[2] - x[1] * x[1];
    if (!(det > 0.0))
        return FALSE;
    g[0] = -x[2] / det;
    g[1] = 2.0 * x[1] / det;
    g[2] = -x[0] / det;
    g[3] = g[4] = 0.0;
    return TRUE;
}

/* w = L a_i */
static void ref_la(const ref_problem *p, const Number *x, int i, double *w1, double *w2)
{
    *w1 = x[0] * p->a1[i] + x[1] * p->a2[i];
    *w2 = x[1] * p->a1[i] + x[2] * p->a2[i];
}

static Bool eval_g(Index n, Number *x, Bool new_x, Index m, Number *g, UserDataPtr data)
{
    const ref_problem *p = data;
    for (int i = 0; i < m; i++) {
        double w1, w2;
        ref_la(p, x, i, &w1, &w2);
        g[i] = hypot(w1, w2) + p->a1[i] * x[3] + p->a2[i] * x[4];
    }
    return TRUE;
}

static Bool eval_jac_g(Index n, Number *x, Bool new_x, Index m, Index nele, Index *row,
                       Index *col, Number *val, UserDataPtr data)
{
    const ref_problem *p = data;
    if (!val) {
        for (int i = 0; i < m; i++)
            for (int j = 0; j < NV; j++) {
                row[i * NV + j] = i;
                col[i * NV + j] = j;
            }
        return TRUE;
    }
    for (int i = 0; i < m; i++) {
        double w1, w2, a1 = p->a1[i], a2 = p->a2[i];
        ref_la(p, x, i, &w1, &w2);
        double r = hypot(w1, w2);
        if (!(r > 0.0))
            return FALSE;
        /* d|w|/dl11 = a1 w1/r, d/dl12 = (a2 w1 + a1 w2)/r, d/dl22 = a2 w2/r */
        Number *v = val + i * NV;
        v[0] = a1 * w1 / r;
        v[1] = (a2 * w1 + a1 * w2) / r;
        v[2] = a2 * w2 / r;
        v[3] = a1;
        v[4] = a2;
    }
    return TRUE;
}

/* Index of (r, c), r >= c, in the packed lower triangle of the 5x5 Hessian. */
static int tri(int r, int c) { return r * (r + 1) / 2 + c; }

static Bool eval_h(Index n, Number *x, Bool new_x, Number sigma, Index m, Number *lambda,
                   Bool new_lambda, Index nele, Index *row, Index *col, Number *val,
                   UserDataPtr data)
{
    const ref_problem *p = data;
    if (!val) {
        for (int r = 0; r < NV; r++)
            for (int c = 0; c <= r; c++) {
                row[tri(r, c)] = r;
                col[tri(r, c)] = c;
            }
        return TRUE;
    }
    for (int k = 0; k < NH; k++)
        val[k] = 0.0;
    double det = x[0] * x[2] - x[1] * x[1];
    if (!(det > 0.0))
        return FALSE;
    /* -log det: H = -D''/D + D' D'^T / D^2 with D' = (x2, -2 x1, x0) */
    double dd[3] = {x[2], -2.0 * x[1], x[0]};
    double d2[3][3] = {{0, 0, 1}, {0, -2, 0}, {1, 0, 0}};
    for (int r = 0; r < 3; r++)
        for (int c = 0; c <= r; c++)
            val[tri(r, c)] += sigma * (-d2[r][c] / det + dd[r] * dd[c] / (det * det));
    /* |J l| with J = [[a1, a2, 0], [0, a1, a2]]: Hessian J^T (I - u u^T) J / r */
    for (int i = 0; i < m; i++) {
        double w1, w2, a1 = p->a1[i], a2 = p->a2[i];
        ref_la(p, x, i, &w1, &w2);
        double r = hypot(w1, w2);
        if (!(r > 0.0))
            return FALSE;
        double u1 = w1 / r, u2 = w2 / r;
        double P[2][2] = {{1 - u1 * u1, -u1 * u2}, {-u1 * u2, 1 - u2 * u2}};
        double J[2][3] = {{a1, a2, 0}, {0, a1, a2}};
        for (int rr = 0; rr < 3; rr++)
            for (int c = 0; c <= rr; c++) {
                double s = 0.0;
                for (int k = 0; k < 2; k++)
                    for (int l = 0; l < 2; l++)
                        s += J[k][rr] * P[k][l] * J[l][c];
                val[tri(rr, c)] += lambda[i] * s / r;
            }
    }
    return TRUE;
}

/* Unit normals into p; false on a non-finite or zero normal. */
static bool ref_normalise(const lc_halfspace *h, int n, ref_problem *p)
{
    for (int i = 0; i < n; i++) {
        double len = hypot(h[i].a.x, h[i].a.y);
        if (!(len > 0.0) || !isfinite(len) || !isfinite(h[i].b))
            return false;
        p->a1[i] = h[i].a.x / len;
        p->a2[i] = h[i].a.y / len;
        p->b[i] = h[i].b / len;
    }
    return true;
}

/*
 * Start point: centre at the mean of the feet of the perpendiculars from the
 * origin to the lines, a small disc; Ipopt does not need a feasible start.
 */
static void ref_start(const ref_problem *p, Number *x)
{
    double cx = 0.0, cy = 0.0, spread = 0.0;
    for (int i = 0; i < p->n; i++) {
        cx += p->a1[i] * p->b[i] / p->n;
        cy += p->a2[i] * p->b[i] / p->n;
    }
    for (int i = 0; i < p->n; i++)
        spread = fmax(spread, fabs(p->b[i] - p->a1[i] * cx - p->a2[i] * cy));
    double r = 1e-3 * (spread > 0.0 ? spread : 1.0);
    x[0] = r;
    x[1] = 0.0;
    x[2] = r;
    x[3] = cx;
    x[4] = cy;
}

/*
 * Chebyshev centre as a fallback start: max r s.t. a_i . c + r <= b_i, over
 * (c1, c2, r), also solved by Ipopt. Used when a thin polygon defeats the
 * plain start.
 */
static Bool cheb_f(Index n, Number *x, Bool new_x, Number *f, UserDataPtr data)
{
    *f = -x[2];
    return TRUE;
}

static Bool cheb_grad_f(Index n, Number *x, Bool new_x, Number *g, UserDataPtr data)
{
    g[0] = g[1] = 0.0;
    g[2] = -1.0;
    return TRUE;
}

static Bool cheb_g(Index n, Number *x, Bool new_x, Index m, Number *g, UserDataPtr data)
{
    const ref_problem *p = data;
    for (int i = 0; i < m; i++)
        g[i] = p->a1[i] * x[0] + p->a2[i] * x[1] + x[2];
    return TRUE;
}

static Bool cheb_jac_g(Index n, Number *x, Bool new_x, Index m, Index nele, Index *row,
                       Index *col, Number *val, UserDataPtr data)
{
    const ref_problem *p = data;
    for (int i = 0; i < m; i++)
        for (int j = 0; j < 3; j++) {
            if (!val) {
                row[i * 3 + j] = i;
                col[i * 3 + j] = j;
            } else {
                val[i * 3 + j] = j == 0 ? p->a1[i] : j == 1 ? p->a2[i] : 1.0;
            }
        }
    return TRUE;
}

static Bool cheb_h(Index n, Number *x, Bool new_x, Number sigma, Index m, Number *lambda,
                   Bool new_lambda, Index nele, Index *row, Index *col, Number *val,
                   UserDataPtr data)
{
    if (!val) {
        row[0] = col[0] = 0;
        return TRUE;
    }
    val[0] = 0.0;
    return TRUE;
}

static void ref_options(IpoptProblem ip, int max_iter)
{
    AddIpoptIntOption(ip, "print_level", 0);
    AddIpoptStrOption(ip, "sb", "yes");
    AddIpoptNumOption(ip, "tol", 1e-12);
    AddIpoptNumOption(ip, "constr_viol_tol", 1e-12);
    /* By default Ipopt relaxes every bound by 1e-8 and answers a slightly
     * larger, infeasible ellipse: keep the constraints exact. */
    AddIpoptNumOption(ip, "bound_relax_factor", 0.0);
    AddIpoptIntOption(ip, "max_iter", max_iter);
    AddIpoptStrOption(ip, "mu_strategy", "adaptive");
    /* MUMPS reserves 10 times its workspace estimate by default: far more
     * than five unknowns need, and slow under MALLOC_PERTURB_ */
    AddIpoptIntOption(ip, "mumps_mem_percent", 100);
}

static bool ref_ok(int st) { return st == Solve_Succeeded || st == Solved_To_Acceptable_Level; }

/* Constraint bounds g_i <= b_i (no lower bound); caller frees. */
static Number *ref_bounds(const ref_problem *p)
{
    Number *gl = malloc(2 * sizeof(Number) * (size_t)p->n);
    if (gl)
        for (int i = 0; i < p->n; i++) {
            gl[i] = -2e19;
            gl[p->n + i] = p->b[i];
        }
    return gl;
}

/* Disc at the Chebyshev centre, half its radius, into x. */
static bool ref_cheb_start(ref_problem *p, Number *x)
{
    Number xl[3] = {-2e19, -2e19, 0.0}, xu[3] = {2e19, 2e19, 2e19};
    Number *gl = ref_bounds(p);
    if (!gl)
        return false;
    IpoptProblem ip = CreateIpoptProblem(3, xl, xu, p->n, gl, gl + p->n, 3 * p->n, 1, 0,
                                         cheb_f, cheb_g, cheb_grad_f, cheb_jac_g, cheb_h);
    free(gl);
    if (!ip)
        return false;
    ref_options(ip, 1000);
    Number c[3] = {x[3], x[4], 0.0}, obj = 0.0;
    int st = IpoptSolve(ip, c, NULL, &obj, NULL, NULL, NULL, p);
    FreeIpoptProblem(ip);
    if (!ref_ok(st) || !(c[2] > 0.0))
        return false;
    x[0] = x[2] = 0.5 * c[2];
    x[1] = 0.0;
    x[3] = c[0];
    x[4] = c[1];
    return true;
}

/* One Ipopt run of the ellipse problem from x. */
static int ref_ellipse_run(ref_problem *p, Number *x, int max_iter, Number *obj)
{
    Number xl[NV] = {1e-300, -2e19, 1e-300, -2e19, -2e19};
    Number xu[NV] = {2e19, 2e19, 2e19, 2e19, 2e19};
    Number *gl = ref_bounds(p);
    if (!gl)
        return Insufficient_Memory;
    IpoptProblem ip = CreateIpoptProblem(NV, xl, xu, p->n, gl, gl + p->n, p->n * NV, NH, 0,
                                         eval_f, eval_g, eval_grad_f, eval_jac_g, eval_h);
    free(gl);
    if (!ip)
        return Invalid_Problem_Definition;
    ref_options(ip, max_iter);
    int st = IpoptSolve(ip, x, NULL, obj, NULL, NULL, NULL, p);
    FreeIpoptProblem(ip);
    return st;
}

static int ref_run(ref_problem *p, lc_ellipse *out, double *logdet)
{
    Number x[NV], obj = 0.0;
    ref_start(p, x);
    int st = ref_ellipse_run(p, x, 300, &obj);
    if (!ref_ok(st)) {
        ref_start(p, x);
        if (!ref_cheb_start(p, x))
            return LC_REF_MVIE_FAILED;
        st = ref_ellipse_run(p, x, 1000, &obj);
    }
    if (!ref_ok(st))
        return LC_REF_MVIE_FAILED;
    *out = (lc_ellipse){x[0], x[1], x[2], {x[3], x[4]}};
    if (logdet)
        *logdet = -obj;
    return LC_REF_MVIE_OK;
}

bool lc_ref_mvie_available(void) { return true; }

const char *lc_ref_mvie_name(void) { return "Ipopt " IPOPT_VERSION; }

int lc_ref_mvie_solve(const lc_halfspace *h, int n, lc_ellipse *out, double *logdet,
                      double *usec)
{
    if (n < 3 || !h || !out)
        return LC_REF_MVIE_BAD_INPUT;
    double t0 = lc_mono_us();
    ref_problem p = {n, malloc(3 * sizeof(double) * (size_t)n), NULL, NULL};
    if (!p.a1)
        return LC_REF_MVIE_FAILED;
    p.a2 = p.a1 + n;
    p.b = p.a2 + n;
    int st = ref_normalise(h, n, &p) ? ref_run(&p, out, logdet) : LC_REF_MVIE_BAD_INPUT;
    free(p.a1);
    if (usec)
        *usec = lc_mono_us() - t0;
    return st;
}

#else /* !LC_HAVE_IPOPT */

bool lc_ref_mvie_available(void) { return false; }

const char *lc_ref_mvie_name(void) { return "none"; }

int lc_ref_mvie_solve(const lc_halfspace *h, int n, lc_ellipse *out, double *logdet,
                      double *usec)
{
    (void)h, (void)n, (void)out, (void)logdet;
    if (usec)
        *usec = 0.0;
    return LC_REF_MVIE_UNAVAILABLE;
}

#endif
