/*
 * fuzz_plan.c - any bytes as a `lacuna plan` request, then the planning
 * step that command runs: a fresh session for the request's robot, its goal
 * and last velocity, one lc_session_step with each of the request's frames
 * and dt (the checks are of the last, whose rate limits start from the
 * setpoint before it), and the result encoded (src/tools/plan.c does the
 * same calls, with a clock for timing only). Accepted requests are hostile but valid numbers (poses
 * and ranges up to 1e9, angle steps down to the smallest double, up to
 * 100000 beams or points), so this drives the whole core: ingest, segment,
 * hulls, growth, region inflation, the ellipse solver and the motion laws.
 *
 * Dense frames without huge inputs: a request may be preceded by "*K "
 * (K a whole number). Then every beam of its scan is repeated K times at a
 * K times finer angle step (same field of view), or every edge between
 * consecutive points is cut into K (points on the outline), capped at the
 * codec's default maximum of 100000; a 300-byte input then plans a frame
 * of 100000 beams. Without the prefix the bytes are the request, as given
 * to `lacuna plan`.
 *
 * Properties checked on every accepted request (docs/INTERFACES.md, `lacuna plan`
 * promises) - with a relative tolerance, since the numbers may be huge:
 * - the step succeeds (it fails only when out of memory);
 * - the setpoint is finite and keeps the motion laws' promises: speed <=
 *   v_max, |w| <= w_max, no reversing unless the robot may, and the rate
 *   limits against the request's velocity (the last setpoint) when that was
 *   within those limits;
 * - when there is a region, the robot centre is inside it, and every kept
 *   return is at least radius + margin from it (a polygon footprint: at
 *   least the margin from the region summed with the footprint at the
 *   frame's heading, lc_minkowski_sum, which tests/core/test_footprint.c
 *   checks against GEOS) (unless the centre was too
 *   close: then the obstacles holding it are left out by design); the
 *   target and the ellipse are in the region, and so is the point where a
 *   point robot comes to rest when it holds the setpoint for dt and then
 *   brakes at a_max (when the step did not have to fall back on braking);
 * - the encoded result is one JSON object.
 */
#include "fuzz.h"

#include <math.h>
#include <stdbool.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "codec.h"
#include "footprint.h"
#include "plan.h"
#include "session.h"

/* The codec's default beam and point limit: what a server would accept. */
#define LC_DENSE_MAX 100000

/* Rounding slack on a bound: relative to the numbers compared, plus a floor. */
static double slack(double a, double b) { return 1e-9 * (fabs(a) + fabs(b)) + 1e-12; }

/* The limits that came from the motion laws (the others are plain stops). */
static bool from_motion(lc_limit l)
{
    return l == LC_LIMIT_GOAL || l == LC_LIMIT_TOP_SPEED || l == LC_LIMIT_BRAKING ||
           l == LC_LIMIT_ACCEL || l == LC_LIMIT_TURNING || l == LC_LIMIT_TURN_RATE;
}

/*
 * The motion laws' promises (motion.c): |v| <= v_max, |w| <= w_max and no
 * reversing unless the robot may, always (from a last setpoint beyond them
 * the limit wins over the rate limit); every rate limit holds against the
 * last setpoint when that respected the limits, for the steps the motion
 * laws made (stops are immediate by design).
 */
static void check_setpoint(const lc_robot *robot, const lc_setpoint *last, double dt,
                           const lc_setpoint *sp)
{
    const char *why = lc_limit_name(sp->limit);
    LC_FUZZ_CHECK(isfinite(sp->vx) && isfinite(sp->vy) && isfinite(sp->v) && isfinite(sp->w),
                  "setpoint not finite: vx %g vy %g v %g w %g", sp->vx, sp->vy, sp->v, sp->w);
    double dv_max = robot->a_max * dt, dw_max = robot->dw_max * dt;
    bool motion = from_motion(sp->limit);
    if (robot->model == LC_MODEL_POINT) {
        double speed = hypot(sp->vx, sp->vy), speed0 = hypot(last->vx, last->vy);
        LC_FUZZ_CHECK(speed <= robot->v_max + slack(robot->v_max, 0),
                      "speed %.17g above v_max %.17g (%s)", speed, robot->v_max, why);
        double dv = hypot(sp->vx - last->vx, sp->vy - last->vy);
        LC_FUZZ_CHECK(!motion || speed0 > robot->v_max || dv <= dv_max + slack(dv_max, speed0),
                      "speed change %.17g beyond a_max dt %.17g (%s)", dv, dv_max, why);
        return;
    }
    LC_FUZZ_CHECK(fabs(sp->v) <= robot->v_max + slack(robot->v_max, 0),
                  "v %.17g beyond v_max %.17g (%s)", sp->v, robot->v_max, why);
    LC_FUZZ_CHECK(fabs(sp->w) <= robot->w_max + slack(robot->w_max, 0),
                  "w %.17g beyond w_max %.17g (%s)", sp->w, robot->w_max, why);
    LC_FUZZ_CHECK(robot->reverse || sp->v >= 0.0, "v %.17g backwards (%s)", sp->v, why);
    bool v_ok = fabs(last->v) <= robot->v_max && (robot->reverse || last->v >= 0);
    LC_FUZZ_CHECK(!motion || !v_ok || fabs(sp->v - last->v) <= dv_max + slack(dv_max, last->v),
                  "v %.17g from %.17g: beyond a_max dt %.17g (%s)", sp->v, last->v, dv_max, why);
    LC_FUZZ_CHECK(!motion || fabs(last->w) > robot->w_max ||
                      fabs(sp->w - last->w) <= dw_max + slack(dw_max, last->w),
                  "w %.17g from %.17g: beyond dw_max dt %.17g (%s)", sp->w, last->w, dw_max,
                  why);
}

static void check_region(const lc_region *region, lc_vec2 centre)
{
    for (int i = 0; region && i < region->nh; i++) {
        const lc_halfspace *h = &region->h[i];
        double s = h->a.x * centre.x + h->a.y * centre.y - h->b;
        double tol = 1e-9 * (fabs(centre.x) + fabs(centre.y) + fabs(h->b)) + 1e-9;
        LC_FUZZ_CHECK(s <= tol, "centre (%.17g, %.17g) outside halfspace %d by %.3g m",
                      centre.x, centre.y, i, s);
    }
}

/* How far p is outside {a.p <= b} (negative inside), with its rounding scale. */
static double outside(const lc_halfspace *h, lc_vec2 p, double *scale)
{
    *scale = fabs(h->a.x * p.x) + fabs(h->a.y * p.y) + fabs(h->b);
    return h->a.x * p.x + h->a.y * p.y - h->b;
}

/*
 * The target, the ellipse and (point model, when the step did not have to
 * fall back on braking) the place the setpoint stops at lie in the region.
 * The ellipse {L u + d : |u| <= 1} is inside a.p <= b when a.d + |L a| <= b
 * (L symmetric; the support function of an ellipse, common practice).
 */
static void check_inside(const lc_robot *robot, const lc_wire_plan_request *req,
                         const lc_plan_result *r)
{
    const lc_region *g = r->region;
    if (!g)
        return;
    const lc_ellipse *e = &g->ellipse;
    lc_vec2 p = {req->frame.pose.x, req->frame.pose.y}, stop = p;
    bool check_stop = robot->model == LC_MODEL_POINT && r->state == LC_STATE_TRACKING &&
                      r->setpoint.limit != LC_LIMIT_BRAKING;
    if (check_stop) {
        /* setpoint held for dt (the session's latency), then a_max to rest */
        lc_vec2 v = lc_rotate(lc_v2(r->setpoint.vx, r->setpoint.vy), req->frame.pose.yaw);
        double speed = lc_len(v);
        if (speed > 0) {
            double d = lc_stopping_distance(speed, req->dt, robot->a_max);
            stop = lc_add(p, lc_scale(v, d / speed));
        }
    }
    for (int i = 0; i < g->nh; i++) {
        const lc_halfspace *h = &g->h[i];
        double scale;
        if (r->has_target) {
            double o = outside(h, r->target, &scale);
            LC_FUZZ_CHECK(o <= 1e-9 * scale + 1e-9, "target (%.17g, %.17g) outside halfspace "
                          "%d by %.3g m", r->target.x, r->target.y, i, o);
        }
        double la = hypot(e->l11 * h->a.x + e->l12 * h->a.y, e->l12 * h->a.x + e->l22 * h->a.y);
        double o = outside(h, e->d, &scale) + la;
        LC_FUZZ_CHECK(o <= 1e-9 * (scale + la) + 1e-9, "ellipse outside halfspace %d by %.3g m",
                      i, o);
        if (check_stop) {
            o = outside(h, stop, &scale);
            LC_FUZZ_CHECK(o <= 1e-9 * scale + 1e-9, "setpoint (%s) stops at (%.17g, %.17g), "
                          "outside halfspace %d by %.3g m", lc_limit_name(r->setpoint.limit),
                          stop.x, stop.y, i, o);
        }
    }
}

/* Distance from p to the convex CCW polygon v[0..n) (0 inside). */
static double polygon_distance(const lc_vec2 *v, int n, lc_vec2 p)
{
    bool inside = n >= 3;
    double best = INFINITY;
    for (int i = 0; i < n; i++) {
        lc_vec2 a = v[i], b = v[(i + 1) % n];
        double ex = b.x - a.x, ey = b.y - a.y, px = p.x - a.x, py = p.y - a.y;
        if (ex * py - ey * px < 0)
            inside = false;
        double ee = ex * ex + ey * ey;
        double t = ee > 0 ? (ex * px + ey * py) / ee : 0;
        t = t < 0 ? 0 : (t > 1 ? 1 : t);
        best = fmin(best, hypot(px - t * ex, py - t * ey));
    }
    return inside ? 0.0 : best;
}

/*
 * Every kept return is at least radius + margin from the region (up to
 * 2000 of them, evenly spread, to bound the cost). Not when the centre was
 * too close: the obstacles holding it were left out of the region. A
 * polygon footprint: the margin from the region summed with the footprint
 * at the frame's heading.
 */
static void check_clearance(const lc_robot *robot, double yaw, const lc_plan_result *r)
{
    const lc_region *g = r->region;
    if (!g || g->nv < 3 || r->state == LC_STATE_TOO_CLOSE)
        return;
    double need = lc_robot_clearance(robot);
    static lc_vec2 sum[4096];
    const lc_vec2 *body = g->v;
    int nb = g->nv;
    if (robot->n_footprint > 0 && g->nv + robot->n_footprint <= 4096) {
        lc_vec2 fp[LC_FOOTPRINT_MAX];
        lc_footprint_place(robot->footprint, robot->n_footprint, yaw, false, fp);
        nb = lc_minkowski_sum(g->v, g->nv, fp, robot->n_footprint, sum, 4096);
        LC_FUZZ_CHECK(nb >= 3, "the region and the footprint have no sum (%d)", nb);
        body = sum;
        need = robot->margin;
    }
    int n = r->cloud->n, stride = n > 2000 ? n / 2000 : 1;
    for (int i = 0; i < n; i += stride) {
        lc_vec2 p = r->cloud->world[i];
        double d = polygon_distance(body, nb, p);
        double tol = 1e-6 * (fabs(p.x) + fabs(p.y) + need) + 1e-6;
        LC_FUZZ_CHECK(d >= need - tol, "return %d at (%.17g, %.17g) is %.17g from the region, "
                      "less than radius + margin %.17g", i, p.x, p.y, d, need);
    }
}

/* "*K " at the start: K (>= 1), and the rest of the input. 1 without it. */
static int dense_prefix(const uint8_t **data, size_t *size)
{
    const uint8_t *d = *data;
    size_t n = *size, i = 1;
    if (n < 3 || d[0] != '*')
        return 1;
    long k = 0;
    while (i < n && i < 8 && d[i] >= '0' && d[i] <= '9')
        k = 10 * k + (d[i++] - '0');
    if (i == 1 || i >= n || d[i] != ' ')
        return 1;
    *data = d + i + 1;
    *size = n - i - 1;
    return k < 1 ? 1 : (int)(k > LC_DENSE_MAX ? LC_DENSE_MAX : k);
}

/*
 * The frame made k times denser into *dense (arrays malloc'd into *own; the
 * caller frees it). Scans: each beam but the last k times, step / k, over
 * the same angles (the codec's full-turn bound still holds). Points: each edge
 * p[j] -> p[j+1] cut into k, heights copied from p[j].
 */
static void densify(const lc_frame *f, int k, lc_frame *dense, double **own)
{
    *dense = *f;
    *own = NULL;
    if (f->kind == LC_FRAME_SCAN) {
        long n = (long)(f->n_ranges - 1) * k + 1; /* the same span of angles */
        n = n > LC_DENSE_MAX ? LC_DENSE_MAX : n;
        double *r = malloc((size_t)n * sizeof *r);
        LC_FUZZ_CHECK(r != NULL, "out of memory");
        for (long i = 0; i < n; i++)
            r[i] = f->ranges[i / k];
        dense->ranges = r;
        dense->n_ranges = (int)n;
        dense->angle_step = f->angle_step / k;
        *own = r;
        return;
    }
    if (f->n_points < 2)
        return;
    long n = (long)(f->n_points - 1) * k + 1;
    n = n > LC_DENSE_MAX ? LC_DENSE_MAX : n;
    double *xy = malloc((size_t)n * 3 * sizeof *xy), *z = xy + 2 * n;
    LC_FUZZ_CHECK(xy != NULL, "out of memory");
    for (long i = 0; i < n; i++) {
        long j = i / k;
        double t = (double)(i % k) / k;
        const double *a = &f->xy[2 * j], *b = j + 1 < f->n_points ? a + 2 : a;
        xy[2 * i] = a[0] + t * (b[0] - a[0]);
        xy[2 * i + 1] = a[1] + t * (b[1] - a[1]);
        z[i] = f->z ? f->z[j] : 0.0;
    }
    dense->xy = xy;
    dense->z = f->z ? z : NULL;
    dense->n_points = (int)n;
    *own = xy;
}

static void check_json(const lc_wire_text *t)
{
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(t->s, (size_t)t->len, &end, 0);
    LC_FUZZ_CHECK(root && cJSON_IsObject(root) && end == t->s + t->len,
                  "plan result is not one JSON object:\n%s", t->s);
    cJSON_Delete(root);
}

/* ------------------------------------------------------------------------
 * A structure-aware mutator. Byte mutations of a request mostly break the
 * JSON (cJSON is not instrumented, so libFuzzer cannot learn its grammar);
 * half the time this one instead parses the request, sets one number to a
 * hostile but often valid value (0, -0, the +-1e9 bounds, subnormals,
 * 1e-300, a full turn, an ulp away, a random magnitude) or adds or removes
 * an array element, and prints it back (cJSON prints numbers exactly).
 */

size_t LLVMFuzzerMutate(uint8_t *data, size_t size, size_t max_size);
size_t LLVMFuzzerCustomMutator(uint8_t *data, size_t size, size_t max_size, unsigned int seed);

static uint64_t rng_next(uint64_t *s)
{
    *s ^= *s << 13;
    *s ^= *s >> 7;
    *s ^= *s << 17;
    return *s;
}

/* The k-th node (pre-order) that is a number (want_array false) or an array. */
static cJSON *nth_node(cJSON *node, bool want_array, long *k)
{
    for (; node; node = node->next) {
        bool hit = want_array ? cJSON_IsArray(node) : cJSON_IsNumber(node);
        if (hit && (*k)-- == 0)
            return node;
        cJSON *in = nth_node(node->child, want_array, k);
        if (in)
            return in;
    }
    return NULL;
}

static long count_nodes(const cJSON *node, bool want_array)
{
    long n = 0;
    for (; node; node = node->next)
        n += (want_array ? cJSON_IsArray(node) : cJSON_IsNumber(node)) +
             count_nodes(node->child, want_array);
    return n;
}

static double hostile_number(double x, uint64_t *rng)
{
    static const double table[] = {0.0, -0.0, 1e9, -1e9, 999999999.99999994, 1e-300, -1e-300,
                                   5e-324, 2.2250738585072014e-308, 1e-9, 1e-12, 1.0,
                                   6.283185307179586, 6.2831853071795871, 3.141592653589793,
                                   -3.141592653589793, 0.05, 100000, 1e6};
    uint64_t r = rng_next(rng);
    switch (r % 6) {
    case 0:
    case 1:
        return table[(r >> 8) % (sizeof table / sizeof table[0])];
    case 2:
        return nextafter(x, (r >> 8) & 1 ? INFINITY : -INFINITY);
    case 3:
        return -x;
    case 4:
        return x * (1.0 + ((double)((r >> 8) % 2001) - 1000.0) * 1e-3);
    default: {
        double mant = (double)((r >> 8) % 10000) / 1000.0;
        int e = (int)((r >> 24) % 22) - 12;
        return ((r >> 40) & 1 ? -mant : mant) * pow(10.0, e);
    }
    }
}

/* One structural change of root; false when there was nothing to change. */
static bool mutate_tree(cJSON *root, uint64_t *rng)
{
    uint64_t r = rng_next(rng);
    if (r % 4 != 0) {
        long n = count_nodes(root, false);
        if (n == 0)
            return false;
        long k = (long)((r >> 8) % (uint64_t)n);
        cJSON *num = nth_node(root, false, &k);
        cJSON_SetNumberValue(num, hostile_number(num->valuedouble, rng));
        return true;
    }
    long n = count_nodes(root, true);
    if (n == 0)
        return false;
    long k = (long)((r >> 8) % (uint64_t)n);
    cJSON *arr = nth_node(root, true, &k);
    int len = cJSON_GetArraySize(arr);
    if (len > 0 && (r >> 40) % 2 == 0) {
        cJSON_DeleteItemFromArray(arr, (int)((r >> 20) % (uint64_t)len));
        return true;
    }
    cJSON *copy = len > 0 ? cJSON_Duplicate(cJSON_GetArrayItem(arr, (int)((r >> 20) % (uint64_t)len)), 1)
                          : cJSON_CreateNumber(1.0);
    return copy && cJSON_AddItemToArray(arr, copy);
}

size_t LLVMFuzzerCustomMutator(uint8_t *data, size_t size, size_t max_size, unsigned int seed)
{
    uint64_t rng = 0x9e3779b97f4a7c15ull ^ seed;
    if (rng_next(&rng) % 2)
        return LLVMFuzzerMutate(data, size, max_size);
    const uint8_t *body = data;
    size_t body_size = size;
    size_t prefix = (size_t)(dense_prefix(&body, &body_size) > 1 ? body - data : 0);
    cJSON *root = cJSON_ParseWithLength((const char *)body, body_size);
    char *text = NULL;
    if (root && mutate_tree(root, &rng))
        text = cJSON_PrintUnformatted(root);
    cJSON_Delete(root);
    size_t n = text ? strlen(text) : 0;
    if (!text || prefix + n > max_size) {
        cJSON_free(text);
        return LLVMFuzzerMutate(data, size, max_size);
    }
    memmove(data + prefix, text, n);
    cJSON_free(text);
    return prefix + n;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    int k = dense_prefix(&data, &size);
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_plan_request req;
    lc_wire_error err;
    if (lc_wire_decode_plan_request((const char *)data, size, NULL, &buf, &req, &err) < 0) {
        LC_FUZZ_CHECK(err.code != LC_WIRE_OK && err.message[0], "refused without a reason");
        lc_wire_buffers_free(&buf);
        return 0;
    }

    double *own = NULL;
    if (k > 1) {
        lc_frame dense;
        densify(&req.frame, k, &dense, &own);
        req.frame = dense;
    }

    lc_session *s = lc_plan_session_new(&req);
    LC_FUZZ_CHECK(s != NULL, "lc_plan_session_new failed");
    lc_plan_result res;
    lc_setpoint last = req.velocity; /* what the last frame's rate limits start from */
    for (int i = 0; i + 1 < req.n_frames; i++) {
        LC_FUZZ_CHECK(lc_session_step(s, &req.frames[i], req.dt, &res) == 0,
                      "lc_session_step failed");
        last = res.setpoint;
    }
    LC_FUZZ_CHECK(lc_session_step(s, &req.frame, req.dt, &res) == 0, "lc_session_step failed");
    check_setpoint(&req.robot, &last, req.dt, &res.setpoint);
    check_region(res.region, lc_v2(req.frame.pose.x, req.frame.pose.y));
    check_clearance(&req.robot, req.frame.pose.yaw, &res);
    check_inside(&req.robot, &req, &res);

    lc_wire_text out;
    lc_wire_text_init(&out, NULL);
    LC_FUZZ_CHECK(lc_wire_encode_plan_result(&out, &res, req.robot.model) == 0,
                  "encoding the result failed");
    check_json(&out);

    lc_wire_text_free(&out);
    lc_session_free(s);
    lc_wire_buffers_free(&buf);
    free(own);
    return 0;
}
