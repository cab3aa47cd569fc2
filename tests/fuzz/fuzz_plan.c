/*
 * fuzz_plan.c - any bytes as a `lacuna plan` request, then the planning
 * step that command runs: a fresh session for the request's robot, its goal
 * and last velocity, one lc_session_step with the request's frame and dt,
 * and the result encoded (src/tools/plan.c does the same calls, with a clock
 * for timing only). Accepted requests are hostile but valid numbers (poses
 * and ranges up to 1e9, angle steps down to the smallest double, up to
 * 100000 beams or points), so this drives the whole core: ingest, segment,
 * hulls, growth, region inflation, the ellipse solver and the motion laws.
 *
 * Properties checked on every accepted request (CONTRACT.md, `lacuna plan`
 * promises) - with a relative tolerance, since the numbers may be huge:
 * - the step succeeds (it fails only when out of memory);
 * - the setpoint is finite and keeps motion.h's promises: the rate limits
 *   against the request's velocity (the last setpoint), speed <= v_max,
 *   |w| <= w_max and no reversing unless the last setpoint already broke
 *   them (then it only moves toward them);
 * - when there is a region, the robot centre is inside it;
 * - the encoded result is one JSON object.
 */
#include "fuzz.h"

#include <math.h>
#include <stdbool.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "codec.h"
#include "session.h"

/* Rounding slack on a bound: relative to the numbers compared, plus a floor. */
static double slack(double a, double b) { return 1e-9 * (fabs(a) + fabs(b)) + 1e-12; }

/* The limits that came from the motion laws (the others are plain stops). */
static bool from_motion(lc_limit l)
{
    return l == LC_LIMIT_GOAL || l == LC_LIMIT_TOP_SPEED || l == LC_LIMIT_BRAKING ||
           l == LC_LIMIT_ACCEL || l == LC_LIMIT_TURNING || l == LC_LIMIT_TURN_RATE;
}

/*
 * motion.h's promises: every rate limit holds against the last setpoint
 * (for the steps the motion laws made; stops are immediate by design), and
 * |v| <= v_max, |w| <= w_max and no reversing hold whenever the last
 * setpoint respected them; a last setpoint beyond them only moves toward
 * them, so the speed never exceeds max(v_max, |last|).
 */
static void check_setpoint(const lc_robot *robot, const lc_setpoint *last, double dt,
                           const lc_setpoint *sp)
{
    const char *why = lc_limit_name(sp->limit);
    LC_FUZZ_CHECK(isfinite(sp->vx) && isfinite(sp->vy) && isfinite(sp->v) && isfinite(sp->w),
                  "setpoint not finite: vx %g vy %g v %g w %g", sp->vx, sp->vy, sp->v, sp->w);
    double dv_max = robot->a_max * dt, dw_max = robot->dw_max * dt;
    if (robot->model == LC_MODEL_POINT) {
        double speed = hypot(sp->vx, sp->vy), speed0 = hypot(last->vx, last->vy);
        double top = fmax(robot->v_max, speed0);
        LC_FUZZ_CHECK(speed <= top + slack(top, 0), "speed %.17g above %.17g (v_max %.17g, %s)",
                      speed, top, robot->v_max, why);
        double dv = hypot(sp->vx - last->vx, sp->vy - last->vy);
        LC_FUZZ_CHECK(!from_motion(sp->limit) || dv <= dv_max + slack(dv_max, speed0),
                      "speed change %.17g beyond a_max dt %.17g (%s)", dv, dv_max, why);
        return;
    }
    double top = fmax(robot->v_max, fabs(last->v)), wtop = fmax(robot->w_max, fabs(last->w));
    LC_FUZZ_CHECK(fabs(sp->v) <= top + slack(top, 0), "v %.17g beyond %.17g (v_max %.17g, %s)",
                  sp->v, top, robot->v_max, why);
    LC_FUZZ_CHECK(fabs(sp->w) <= wtop + slack(wtop, 0), "w %.17g beyond %.17g (w_max %.17g, %s)",
                  sp->w, wtop, robot->w_max, why);
    LC_FUZZ_CHECK(robot->reverse || last->v < 0 || sp->v >= 0.0, "v %.17g backwards (%s)",
                  sp->v, why);
    if (from_motion(sp->limit)) {
        LC_FUZZ_CHECK(fabs(sp->v - last->v) <= dv_max + slack(dv_max, last->v),
                      "v %.17g from %.17g: beyond a_max dt %.17g (%s)", sp->v, last->v, dv_max,
                      why);
        LC_FUZZ_CHECK(fabs(sp->w - last->w) <= dw_max + slack(dw_max, last->w),
                      "w %.17g from %.17g: beyond dw_max dt %.17g (%s)", sp->w, last->w, dw_max,
                      why);
    }
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

static void check_json(const lc_wire_text *t)
{
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(t->s, (size_t)t->len, &end, 0);
    LC_FUZZ_CHECK(root && cJSON_IsObject(root) && end == t->s + t->len,
                  "plan result is not one JSON object:\n%s", t->s);
    cJSON_Delete(root);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_plan_request req;
    lc_wire_error err;
    if (lc_wire_decode_plan_request((const char *)data, size, NULL, &buf, &req, &err) < 0) {
        LC_FUZZ_CHECK(err.code != LC_WIRE_OK && err.message[0], "refused without a reason");
        lc_wire_buffers_free(&buf);
        return 0;
    }

    lc_session *s = lc_session_new(&req.robot, NULL, NULL);
    LC_FUZZ_CHECK(s != NULL, "lc_session_new failed");
    lc_session_set_goal(s, req.goal);
    lc_session_set_velocity(s, &req.velocity);
    lc_plan_result res;
    LC_FUZZ_CHECK(lc_session_step(s, &req.frame, req.dt, &res) == 0, "lc_session_step failed");
    check_setpoint(&req.robot, &req.velocity, req.dt, &res.setpoint);
    check_region(res.region, lc_v2(req.frame.pose.x, req.frame.pose.y));

    lc_wire_text out;
    lc_wire_text_init(&out, NULL);
    LC_FUZZ_CHECK(lc_wire_encode_plan_result(&out, &res, req.robot.model) == 0,
                  "encoding the result failed");
    check_json(&out);

    lc_wire_text_free(&out);
    lc_session_free(s);
    lc_wire_buffers_free(&buf);
    return 0;
}
