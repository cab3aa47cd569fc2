/*
 * replay.c - `lacuna replay`: a scenario file through the same session step
 * the server and the sim use, without the network; every produced setpoint
 * is compared with the recorded one (the setpoint line after its frame, or
 * the setpoints of --expect FILE in order).
 *
 * A setpoint differs when its velocity pair differs by more than the
 * tolerance (max_diff is the largest such difference), or when its seq,
 * state, limit, waypoint, valid_ms or model differ at all. Also the helpers sim
 * shares (replay.h), so a sim run and its replay take identical steps.
 */
#include "replay.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "clock_mono.h"
#include "file.h"
#include "svg.h"
#include "tools.h"

static const char usage[] =
    "usage: lacuna replay FILE [--out FILE] [--svg FILE] [--expect FILE]\n"
    "                     [--tolerance X] [--json]\n"
    "\n"
    "Feeds every scan/points frame of the scenario FILE through the planner\n"
    "(robot and route from its header; dt from consecutive stamps, the first\n"
    "frame 1/sensor rate or 0.05 s) and compares each setpoint produced with\n"
    "the recorded setpoint line that follows its frame.\n"
    "\n"
    "  --expect FILE    compare with the setpoints of FILE instead, in order\n"
    "  --tolerance X    largest velocity difference accepted (default 1e-9);\n"
    "                   seq, state, limit, waypoint and valid_ms must match\n"
    "                   exactly\n"
    "  --out FILE       write the run again with the setpoints produced now\n"
    "  --svg FILE       render the run (obstacles seen, regions, trajectory)\n"
    "  --json           JSON on stdout even on a terminal\n"
    "\n"
    "stdout: {\"frames\":n,\"compared\":n,\"mismatches\":n,\"max_diff\":x}; each\n"
    "mismatch is reported on stderr with its line number.\n"
    "exit status: 0 nothing differs, 1 a setpoint differs, 2 bad usage or file.\n";

void lc_replay_help(FILE *out) { fputs(usage, out); }

#define MAX_REPORTS 10

/* ------------------------------------------------------- shared helpers */

lc_session *lc_replay_session(const lc_scenario_header *h)
{
    lc_session *s = lc_session_new(&h->robot, NULL, NULL);
    if (!s)
        return NULL;
    if (h->has_route)
        lc_session_set_route(s, &h->route);
    lc_control c = lc_scenario_control(h);
    lc_session_set_control(s, &c);
    return s;
}


int lc_replay_put_line(FILE *out, const lc_wire_text *t)
{
    if (fwrite(t->s, 1, (size_t)t->len, out) != (size_t)t->len || fputc('\n', out) == EOF)
        return -1;
    return 0;
}

int lc_replay_put_header(FILE *out, const lc_scenario_header *h)
{
    lc_wire_text t;
    lc_wire_text_init(&t, NULL);
    int rc = lc_scenario_encode_header(&t, h) < 0 ? -1 : lc_replay_put_line(out, &t);
    lc_wire_text_free(&t);
    return rc;
}

bool lc_replay_want_json(bool json_flag) { return json_flag || !isatty(STDOUT_FILENO); }

/* Who warns about which file (one scenario is read per process). */
typedef struct warn_ctx {
    const char *cmd, *path;
} warn_ctx;

static void print_warning(void *data, int line, const char *message)
{
    const warn_ctx *w = data;
    fprintf(stderr, "lacuna %s: %s:%d: %s\n", w->cmd, w->path, line, message);
}

int lc_replay_load(const char *cmd, const char *path, char **text, size_t *len,
                   lc_scenario_reader *rd, lc_scenario_header *h)
{
    *text = lc_file_read(path, len);
    if (!*text)
        return lc_cli_usage_error(cmd, "cannot read %s: %s", path, strerror(errno));
    lc_scenario_reader_init(rd, *text, *len, NULL);
    static warn_ctx who;
    who = (warn_ctx){cmd, path};
    rd->warning = print_warning;
    rd->warning_data = &who;
    lc_scenario_header_init(h);
    lc_scenario_error err;
    if (lc_scenario_read_header(rd, h, &err) < 0) {
        lc_scenario_reader_free(rd);
        lc_scenario_header_free(h);
        free(*text);
        *text = NULL;
        return lc_cli_usage_error(cmd, "%s:%d: %s", path, err.line, err.message);
    }
    return 0;
}

/* ----------------------------------------------------------- the replay */

typedef struct replay_opts {
    const char *file, *out, *svg, *expect;
    double tolerance;
    bool json;
} replay_opts;

typedef struct expected {
    lc_wire_setpoint sp;
    int line;
} expected;

typedef struct replay {
    const replay_opts *o;
    lc_session *s;
    bool pending;        /* a produced setpoint waits for its recorded line */
    lc_wire_setpoint produced;
    expected *exp;       /* --expect setpoints, in order */
    int n_exp, next_exp;
    long frames, compared, mismatches, unpaired;
    double max_diff;
    FILE *out;
    lc_wire_text text;
    lc_svg_run svg;
    double t_start, t_progress;
} replay;

static int parse_args(int argc, char **argv, replay_opts *o)
{
    *o = (replay_opts){.tolerance = 1e-9};
    for (int i = 1; i < argc; i++) {
        const char *a = argv[i];
        bool has_value = i + 1 < argc;
        if (strcmp(a, "--json") == 0) {
            o->json = true;
        } else if (strcmp(a, "--out") == 0 || strcmp(a, "--svg") == 0 ||
                   strcmp(a, "--expect") == 0 || strcmp(a, "--tolerance") == 0) {
            if (!has_value)
                return lc_cli_usage_error("replay", "%s needs a value", a);
            const char *v = argv[++i];
            if (strcmp(a, "--out") == 0)
                o->out = v;
            else if (strcmp(a, "--svg") == 0)
                o->svg = v;
            else if (strcmp(a, "--expect") == 0)
                o->expect = v;
            else {
                char *end;
                o->tolerance = strtod(v, &end);
                if (*v == '\0' || *end != '\0' || !(o->tolerance >= 0) || isinf(o->tolerance))
                    return lc_cli_usage_error("replay", "--tolerance: not a number >= 0: %s", v);
            }
        } else if (a[0] == '-' && a[1] != '\0') {
            return lc_cli_usage_error("replay", "unknown option %s (see --help)", a);
        } else if (o->file) {
            return lc_cli_usage_error("replay", "one scenario FILE only");
        } else {
            o->file = a;
        }
    }
    if (!o->file)
        return lc_cli_usage_error("replay", "no scenario FILE (see --help)");
    return 0;
}

static double pair_diff(const lc_wire_setpoint *a, const lc_wire_setpoint *b)
{
    if (a->model != b->model)
        return INFINITY;
    if (a->model == LC_MODEL_UNICYCLE)
        return fmax(fabs(a->sp.v - b->sp.v), fabs(a->sp.w - b->sp.w));
    return fmax(fabs(a->sp.vx - b->sp.vx), fabs(a->sp.vy - b->sp.vy));
}

static void report(const replay *r, const char *file, int line, const lc_wire_setpoint *got,
                   const lc_wire_setpoint *want, double diff)
{
    if (r->mismatches > MAX_REPORTS)
        return;
    if (r->mismatches == MAX_REPORTS) {
        fprintf(stderr, "lacuna replay: further mismatches not shown\n");
        return;
    }
    bool uni = got->model == LC_MODEL_UNICYCLE;
    fprintf(stderr,
            "lacuna replay: %s:%d: setpoint seq %lld differs: produced %s %.17g %.17g %s/%s "
            "waypoint %d valid_ms %d, recorded seq %lld %s %.17g %.17g %s/%s waypoint %d "
            "valid_ms %d (diff %.3g)\n",
            file, line, (long long)got->seq, uni ? "v,w" : "vx,vy", uni ? got->sp.v : got->sp.vx,
            uni ? got->sp.w : got->sp.vy, lc_state_name(got->state), lc_limit_name(got->sp.limit),
            got->waypoint, got->valid_ms, (long long)want->seq,
            want->model == LC_MODEL_UNICYCLE ? "v,w" : "vx,vy",
            want->model == LC_MODEL_UNICYCLE ? want->sp.v : want->sp.vx,
            want->model == LC_MODEL_UNICYCLE ? want->sp.w : want->sp.vy,
            lc_state_name(want->state), lc_limit_name(want->sp.limit), want->waypoint,
            want->valid_ms, diff);
}

static void compare(replay *r, const char *file, int line, const lc_wire_setpoint *want)
{
    const lc_wire_setpoint *got = &r->produced;
    double diff = pair_diff(got, want);
    bool same = diff <= r->o->tolerance && got->seq == want->seq && got->state == want->state &&
                got->sp.limit == want->sp.limit && got->waypoint == want->waypoint &&
                got->valid_ms == want->valid_ms;
    r->compared++;
    if (isfinite(diff))
        r->max_diff = fmax(r->max_diff, diff);
    if (!same) {
        report(r, file, line, got, want, diff);
        r->mismatches++;
    }
    r->pending = false;
}

static int write_text(replay *r, int rc)
{
    if (!r->out || rc < 0)
        return rc;
    return lc_replay_put_line(r->out, &r->text);
}

static void progress(replay *r)
{
    if (!isatty(STDERR_FILENO))
        return;
    double now = lc_mono_us();
    if (now - r->t_start < 1e6 || now - r->t_progress < 5e5)
        return;
    r->t_progress = now;
    fprintf(stderr, "\rlacuna replay: %ld frames", r->frames);
}

static int on_frame(replay *r, const lc_frame *f)
{
    lc_plan_result res;
    if (lc_session_drive(r->s, f, &res, &r->produced) < 0)
        return lc_cli_fail("replay", "out of memory");
    r->frames++;
    r->pending = true;
    if (r->o->svg)
        lc_svg_run_add(&r->svg, f, &res, res.clearance);
    if (write_text(r, lc_wire_encode_frame(&r->text, f)) < 0 ||
        write_text(r, lc_wire_encode_setpoint(&r->text, &r->produced)) < 0)
        return lc_cli_fail("replay", "cannot write %s", r->o->out);
    for (int i = 0; i < res.n_events; i++) {
        lc_wire_event ev = {.ev = res.events[i], .seq = f->seq};
        if (write_text(r, lc_wire_encode_event(&r->text, &ev)) < 0)
            return lc_cli_fail("replay", "cannot write %s", r->o->out);
    }
    if (r->o->expect && r->next_exp < r->n_exp) {
        const expected *e = &r->exp[r->next_exp++];
        compare(r, r->o->expect, e->line, &e->sp);
    }
    progress(r);
    return 0;
}

static int on_message(replay *r, const lc_wire_msg *m, int line)
{
    switch (m->type) {
    case LC_MSG_SCAN:
    case LC_MSG_POINTS:
        return on_frame(r, &m->u.frame);
    case LC_MSG_SETPOINT:
        if (r->o->expect)
            return 0;
        if (r->pending)
            compare(r, r->o->file, line, &m->u.setpoint);
        else if (m->u.setpoint.state == LC_STATE_STALE ||
                 m->u.setpoint.state == LC_STATE_SHUTDOWN) /* the watchdog's, the last stop */
            lc_session_stop(r->s, m->u.setpoint.state, m->u.setpoint.sp.limit, NULL);
        else if (r->unpaired++ == 0)
            fprintf(stderr, "lacuna replay: %s:%d: setpoint without a frame before it\n",
                    r->o->file, line);
        return 0;
    case LC_MSG_ROBOT:
        lc_session_set_robot(r->s, &m->u.robot);
        return write_text(r, lc_wire_encode_robot(&r->text, &m->u.robot)) < 0
                   ? lc_cli_fail("replay", "cannot write %s", r->o->out)
                   : 0;
    case LC_MSG_ROUTE:
        lc_session_set_route(r->s, &m->u.route);
        return write_text(r, lc_wire_encode_route(&r->text, &m->u.route)) < 0
                   ? lc_cli_fail("replay", "cannot write %s", r->o->out)
                   : 0;
    default:
        return 0; /* events, errors, views: what the run said, not what it did */
    }
}

/* The setpoints of the --expect file, in order. */
static int load_expect(replay *r)
{
    char *text;
    size_t len;
    lc_scenario_reader rd;
    lc_scenario_header h;
    int rc = lc_replay_load("replay", r->o->expect, &text, &len, &rd, &h);
    if (rc)
        return rc;
    int cap = 0;
    lc_wire_msg m;
    lc_scenario_error err;
    while ((rc = lc_scenario_next(&rd, &m, &err)) > 0) {
        if (m.type != LC_MSG_SETPOINT)
            continue;
        if (LC_GROW(NULL, r->exp, cap, r->n_exp + 1) < 0) {
            rc = -2;
            break;
        }
        r->exp[r->n_exp++] = (expected){m.u.setpoint, rd.line};
    }
    lc_scenario_reader_free(&rd);
    lc_scenario_header_free(&h);
    free(text);
    if (rc == -2)
        return lc_cli_fail("replay", "out of memory");
    if (rc < 0)
        return lc_cli_usage_error("replay", "%s:%d: %s", r->o->expect, err.line, err.message);
    return 0;
}

static void print_result(const replay *r)
{
    char d[LC_WIRE_NUMBER_MAX];
    lc_wire_format_number(d, r->max_diff, -1);
    if (r->frames == 0) /* nothing differs, but nothing was compared either */
        fprintf(stderr, "lacuna replay: %s holds no scan or points frame\n", r->o->file);
    else if (r->compared == 0)
        fprintf(stderr, "lacuna replay: %s holds no recorded setpoint to compare with\n",
                r->o->file);
    if (lc_replay_want_json(r->o->json)) {
        printf("{\"frames\":%ld,\"compared\":%ld,\"mismatches\":%ld,\"max_diff\":%s,"
               "\"tolerance\":%.17g,\"unpaired\":%ld}\n",
               r->frames, r->compared, r->mismatches, d, r->o->tolerance, r->unpaired);
        return;
    }
    printf("%s: %ld frames, %ld setpoints compared, %ld differ (largest difference %s, "
           "tolerance %g)\n",
           r->o->file, r->frames, r->compared, r->mismatches, d, r->o->tolerance);
}

static int write_svg(const replay *r, const lc_scenario_header *h)
{
    FILE *f = fopen(r->o->svg, "w");
    if (!f)
        return lc_cli_fail("replay", "cannot write %s: %s", r->o->svg, strerror(errno));
    lc_svg_scene scene = {.title = h->description[0] ? h->description : r->o->file,
                          .world = NULL,
                          .route = lc_session_route(r->s),
                          .radius = lc_session_robot(r->s)->radius,
                          .footprint = lc_session_robot(r->s)->footprint,
                          .n_footprint = lc_session_robot(r->s)->n_footprint};
    int rc = lc_svg_write(f, &r->svg, &scene);
    if (fclose(f) != 0 || rc < 0)
        return lc_cli_fail("replay", "cannot write %s", r->o->svg);
    return 0;
}

static int run_messages(replay *r, lc_scenario_reader *rd)
{
    lc_wire_msg m;
    lc_scenario_error err;
    int rc;
    while ((rc = lc_scenario_next(rd, &m, &err)) > 0) {
        int e = on_message(r, &m, rd->line);
        if (e)
            return e;
    }
    if (isatty(STDERR_FILENO) && r->t_progress > 0)
        fputc('\n', stderr);
    if (rc < 0)
        return lc_cli_usage_error("replay", "%s:%d: %s", r->o->file, err.line, err.message);
    if (r->o->expect && r->n_exp != r->frames)
        fprintf(stderr, "lacuna replay: %s holds %d setpoints for %ld frames (%ld compared)\n",
                r->o->expect, r->n_exp, r->frames, r->compared);
    return 0;
}

static int replay_run(replay *r, lc_scenario_reader *rd, const lc_scenario_header *h)
{
    r->s = lc_replay_session(h);
    if (!r->s)
        return lc_cli_fail("replay", "out of memory");
    r->t_start = lc_mono_us();
    int rc = 0;
    if (r->o->expect)
        rc = load_expect(r);
    if (!rc && r->o->out) {
        r->out = fopen(r->o->out, "w");
        if (!r->out || lc_replay_put_header(r->out, h) < 0)
            rc = lc_cli_fail("replay", "cannot write %s", r->o->out);
    }
    if (!rc)
        rc = run_messages(r, rd);
    if (r->out && fclose(r->out) != 0 && !rc)
        rc = lc_cli_fail("replay", "cannot write %s", r->o->out);
    if (!rc && r->o->svg)
        rc = write_svg(r, h);
    return rc;
}

int lc_tool_replay(int argc, char **argv)
{
    replay_opts o;
    int rc = parse_args(argc, argv, &o);
    if (rc)
        return rc;
    char *text;
    size_t len;
    lc_scenario_reader rd;
    lc_scenario_header h;
    if ((rc = lc_replay_load("replay", o.file, &text, &len, &rd, &h)))
        return rc;
    replay r = {.o = &o};
    lc_wire_text_init(&r.text, NULL);
    lc_svg_run_init(&r.svg, 10);
    rc = replay_run(&r, &rd, &h);
    if (!rc) {
        print_result(&r);
        rc = r.mismatches ? LC_EXIT_FAIL : LC_EXIT_OK;
    }
    lc_svg_run_free(&r.svg);
    lc_wire_text_free(&r.text);
    lc_session_free(r.s);
    free(r.exp);
    lc_scenario_reader_free(&rd);
    lc_scenario_header_free(&h);
    free(text);
    return rc;
}
