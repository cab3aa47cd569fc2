/*
 * check.c - `lacuna check`: stopping-distance advice for a configuration.
 *
 * d = v t_r + v^2 / (2 a) (reaction distance plus braking distance, common
 * practice; docs/REFERENCES.md check values: 1.0 m/s, 0.1 s, 1.0 m/s^2 -> 0.60 m).
 * lacuna warns when d reaches half the sensor's useful range: beyond that a
 * person stepping out at the edge of what the sensor sees leaves too little
 * room. Given the robot's shape (--radius, or --footprint as the robot
 * description writes it, read by the codec), the range counts from the
 * robot's centre and the robot's front, e metres ahead of it (the radius,
 * or the footprint's largest x), needs d + e of it. This is advice, not a
 * safety function.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <cjson/cJSON.h>

#include "cli.h"
#include "codec.h"
#include "motion.h"
#include "robot.h"
#include "tools.h"

static const char usage[] =
    "usage: lacuna check [--v-max M/S] [--a-max M/S2] [--latency S] [--range M]\n"
    "                    [--warn-fraction F] [--radius M | --footprint JSON] [--strict]\n"
    "\n"
    "Estimates the stopping distance d = v t_r + v^2 / (2 a) for the top speed v,\n"
    "the braking deceleration a and the latency t_r from a scan to a setpoint\n"
    "acting on the wheels, and warns when d reaches F (default 0.5) of the\n"
    "sensor's useful range. Given the robot's shape, the range counts from its\n"
    "centre and its front, e ahead of the centre, needs d + e.\n"
    "\n"
    "  --v-max      top speed, m/s (default 0.8, the robot default)\n"
    "  --a-max      braking deceleration, m/s^2 (default 0.5)\n"
    "  --latency    sensor-to-wheel latency, s (default 0.1)\n"
    "  --range      the sensor's useful range, m (default 10)\n"
    "  --radius     a disc robot's radius, m: e is the radius\n"
    "  --footprint  a polygon footprint as in the robot description,\n"
    "               '[[x, y], ...]' (robot frame, x forward): e is its largest x\n"
    "  --strict     exit 1 when it warns\n"
    "\n"
    "This is advice, not a safety function. lacuna is not a safety-rated\n"
    "component: separation distances are set by a risk assessment under the\n"
    "standards that apply (for example ISO 13855) and local rules.\n";

void lc_check_help(FILE *out) { fputs(usage, out); }

/* The footprint's reach ahead, read by the codec as a robot's "footprint". */
static int footprint_arg(const char *text, double *ahead)
{
    cJSON *obj = cJSON_CreateObject(), *fp = cJSON_Parse(text);
    if (!obj || !fp) {
        cJSON_Delete(obj);
        cJSON_Delete(fp);
        return lc_cli_usage_error("check", "--footprint: not JSON: '%s'", text);
    }
    cJSON_AddItemToObject(obj, "footprint", fp);
    lc_robot robot;
    lc_wire_error err;
    int rc = lc_wire_robot_from_json(obj, "", &robot, &err);
    cJSON_Delete(obj);
    if (rc < 0)
        return lc_cli_usage_error("check", "--footprint: %s", err.message);
    *ahead = lc_robot_reach_ahead(&robot);
    return 0;
}

static int number_arg(const char *opt, const char *text, double lo, double *out)
{
    char *end;
    double x = strtod(text, &end);
    if (end == text || *end != '\0' || !isfinite(x) || !(x > lo))
        return lc_cli_usage_error("check", "%s: '%s' is not a number above %g", opt, text, lo);
    *out = x;
    return 0;
}

int lc_tool_check(int argc, char **argv)
{
    lc_robot robot;
    lc_robot_default(&robot);
    double v = robot.v_max, a = robot.a_max, t_r = 0.1, range = 10.0, frac = 0.5, ahead = 0;
    int strict = 0, shapes = 0;
    for (int i = 1; i < argc; i++) {
        int rc = 0;
        const char *o = argv[i];
        if (strcmp(o, "--strict") == 0) {
            strict = 1;
            continue;
        }
        if (i + 1 >= argc)
            return lc_cli_usage_error("check", "unknown option or missing value: '%s'", o);
        const char *val = argv[++i];
        if (strcmp(o, "--v-max") == 0)
            rc = number_arg(o, val, 0, &v);
        else if (strcmp(o, "--a-max") == 0)
            rc = number_arg(o, val, 0, &a);
        else if (strcmp(o, "--latency") == 0)
            rc = number_arg(o, val, -1e-300, &t_r);
        else if (strcmp(o, "--range") == 0)
            rc = number_arg(o, val, 0, &range);
        else if (strcmp(o, "--warn-fraction") == 0)
            rc = number_arg(o, val, 0, &frac);
        else if (strcmp(o, "--radius") == 0 && ++shapes == 1)
            rc = number_arg(o, val, 0, &ahead);
        else if (strcmp(o, "--footprint") == 0 && ++shapes == 1)
            rc = footprint_arg(val, &ahead);
        else if (shapes > 1)
            return lc_cli_usage_error("check", "give --radius or --footprint, not both");
        else
            return lc_cli_usage_error("check", "unknown option '%s' (see lacuna check --help)", o);
        if (rc)
            return rc;
    }
    double d = lc_stopping_distance(v, t_r, a), room = frac * range - ahead;
    double v_ok = room > 0 ? -a * t_r + sqrt(a * a * t_r * t_r + 2.0 * a * room) : 0.0;
    printf("stopping distance  %.3f m  (%.3f m reaction at %.2f s + %.3f m braking at %.2f m/s2)\n",
           d, v * t_r, t_r, v * v / (2 * a), a);
    if (shapes)
        printf("front of the robot %.3f m ahead of its centre: it needs %.3f m\n", ahead, d + ahead);
    printf("sensor range       %.2f m, advice limit %.2f m (%.0f %%)\n", range, frac * range,
           frac * 100);
    int warn = d + ahead >= frac * range;
    if (warn)
        printf("WARNING: at %.2f m/s the robot needs %.2f m to stop, more than %.0f %% of what the\n"
               "sensor sees; lower v_max to %.2f m/s or below, or brake harder.\n",
               v, d + ahead, frac * 100, v_ok);
    else
        printf("ok: top speed %.2f m/s is below the advice limit of %.2f m/s\n", v, v_ok);
    printf("This is advice, not a safety function; see lacuna serve --help.\n");
    return warn && strict ? LC_EXIT_FAIL : LC_EXIT_OK;
}
