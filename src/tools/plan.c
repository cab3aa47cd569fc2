/*
 * plan.c - `lacuna plan [FILE|-]`: one plan request in (docs/INTERFACES.md),
 * one plan result out. Each of the request's frames is one step of a fresh
 * session (in order: the memory holds them all) through lc_session_step,
 * the step that replay, sim and the server reach through lc_session_drive,
 * with the request's dt; the result is the last frame's.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "clock_mono.h"
#include "codec.h"
#include "file.h"
#include "plan.h"
#include "session.h"
#include "tools.h"

static const char usage[] =
    "usage: lacuna plan [FILE|-] [--pretty | --json]\n"
    "\n"
    "Plans one frame. FILE (or standard input for '-' or no FILE) holds one plan\n"
    "request: {\"robot\": {...}, \"goal\": [x, y], \"velocity\": [vx, vy] | [v, w],\n"
    "\"dt\": s, \"frame\": {scan or points}}; or \"frames\": [...] instead of \"frame\"\n"
    "(1 to 64, of one or several sensors), planned in order by one session, each\n"
    "a step of dt, so that the last plan remembers them all. Prints one JSON\n"
    "object, the last frame's plan: the convex obstacles as seen, the free region\n"
    "(halfspaces for the robot centre and CCW vertices), its maximum-area\n"
    "inscribed ellipse, the target, the setpoint with its state and limit, and\n"
    "timing_us.\n"
    "\n"
    "  --pretty   a summary for a person instead of JSON (the default when stdout\n"
    "             is a terminal)\n"
    "  --json     JSON even on a terminal\n"
    "\n"
    "Example: lacuna plan scenarios/requests/office-corner.json\n"
    "Exit status: 0 planned, 1 runtime failure, 2 bad usage or bad request.\n";

void lc_plan_help(FILE *out) { fputs(usage, out); }

static void print_pretty(FILE *out, const lc_plan_result *r, const lc_wire_plan_request *req)
{
    if (req->n_frames > 1)
        fprintf(out, "frames     %d, the last one planned from all of them\n", req->n_frames);
    fprintf(out, "frame      %s, %d points kept of %d\n",
            req->frame.kind == LC_FRAME_SCAN ? "scan" : "points", r->cloud->n,
            req->frame.kind == LC_FRAME_SCAN ? req->frame.n_ranges : req->frame.n_points);
    fprintf(out, "obstacles  %d convex pieces\n", r->obstacles->np);
    if (r->region) {
        double area = 0.5 * lc_polygon_area2(r->region->v, r->region->nv);
        fprintf(out, "region     %d sides, %.2f m2, %d rounds, ellipse %.2f m2 at (%.2f, %.2f)\n",
                r->region->nh, area, r->region->rounds, lc_ellipse_area(&r->region->ellipse),
                r->region->ellipse.d.x, r->region->ellipse.d.y);
    } else {
        fprintf(out, "region     none holds the robot centre\n");
    }
    fprintf(out, "goal       (%.2f, %.2f)\n", req->goal.x, req->goal.y);
    if (r->has_target)
        fprintf(out, "target     (%.2f, %.2f)%s\n", r->target.x, r->target.y,
                lc_dist(r->target, req->goal) < 1e-9 ? " (the goal is in the region)"
                                                    : " (closest point of the region)");
    if (req->robot.model == LC_MODEL_UNICYCLE)
        fprintf(out, "setpoint   v %.3f m/s, w %.3f rad/s\n", r->setpoint.v, r->setpoint.w);
    else
        fprintf(out, "setpoint   vx %.3f m/s, vy %.3f m/s\n", r->setpoint.vx, r->setpoint.vy);
    fprintf(out, "state      %s, limited by %s\n", lc_state_name(r->state),
            lc_limit_name(r->setpoint.limit));
    fprintf(out, "clearance  %.3f m from the footprint to the nearest return\n", r->clearance);
    fprintf(out, "time       %.1f us\n", r->total_us);
}

static int parse_args(int argc, char **argv, const char **path, int *pretty)
{
    *path = "-";
    *pretty = isatty(STDOUT_FILENO);
    int files = 0;
    for (int i = 1; i < argc; i++) {
        if (strcmp(argv[i], "--pretty") == 0)
            *pretty = 1;
        else if (strcmp(argv[i], "--json") == 0)
            *pretty = 0;
        else if (argv[i][0] == '-' && argv[i][1] != '\0')
            return lc_cli_usage_error("plan", "unknown option '%s' (see lacuna plan --help)",
                                      argv[i]);
        else if (files++ == 0)
            *path = argv[i];
        else
            return lc_cli_usage_error("plan", "one request file at most");
    }
    return 0;
}

lc_session *lc_plan_session_new(const lc_wire_plan_request *req)
{
    /* One request, planned on its own: no guidance, so that the target is
     * what docs/INTERFACES.md promises (the goal or its closest point in the
     * region); the memory holds the request's frames. */
    lc_plan_config cfg;
    lc_plan_config_default(&cfg);
    cfg.guide.enabled = false;
    lc_session *s = lc_session_new(&req->robot, &cfg, NULL);
    if (s) {
        lc_session_set_goal(s, req->goal);
        lc_session_set_velocity(s, &req->velocity);
    }
    return s;
}

int lc_tool_plan(int argc, char **argv)
{
    const char *path;
    int pretty;
    int rc = parse_args(argc, argv, &path, &pretty);
    if (rc)
        return rc;
    size_t len = 0;
    char *text = lc_file_read(path, &len);
    if (!text)
        return lc_cli_usage_error("plan", "cannot read '%s': %m", path);

    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_plan_request req;
    lc_wire_error err;
    if (lc_wire_decode_plan_request(text, len, NULL, &buf, &req, &err) < 0) {
        free(text);
        lc_wire_buffers_free(&buf);
        return lc_cli_usage_error("plan", "%s: %s", path, err.message);
    }
    if (err.ignored) {
        char ignored[LC_WIRE_KEY_SHOWN + 64];
        lc_wire_ignored_text(&err, ignored, sizeof ignored);
        fprintf(stderr, "lacuna plan: %s: %s\n", path, ignored);
    }
    lc_session *s = lc_plan_session_new(&req);
    lc_wire_text out;
    lc_wire_text_init(&out, NULL);
    lc_plan_result res;
    rc = LC_EXIT_FAIL;
    if (s) {
        lc_session_set_clock(s, lc_mono_clock());
        int step = 0;
        for (int i = 0; i < req.n_frames && step == 0; i++)
            step = lc_session_step(s, &req.frames[i], req.dt, &res);
        if (step == 0) {
            if (pretty) {
                print_pretty(stdout, &res, &req);
                rc = LC_EXIT_OK;
            } else if (lc_wire_encode_plan_result(&out, &res, req.robot.model) == 0) {
                fputs(out.s, stdout);
                fputc('\n', stdout);
                rc = LC_EXIT_OK;
            }
        }
    }
    if (rc != LC_EXIT_OK)
        lc_cli_fail("plan", "out of memory");
    if (fflush(stdout) != 0 && rc == LC_EXIT_OK)
        rc = lc_cli_fail("plan", "cannot write the result: %m");
    lc_wire_text_free(&out);
    lc_session_free(s);
    lc_wire_buffers_free(&buf);
    free(text);
    return rc;
}
