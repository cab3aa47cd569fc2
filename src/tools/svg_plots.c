/*
 * svg_plots.c - the run picture's lanes over time and its legend (svg.h,
 * svg_parts.h): under the map, the clearance, the setpoint's speed (and
 * turn rate), and the state and limit of each frame as coloured bands, all
 * over one time axis with its grid, the route's events marked across them;
 * then a legend of every colour the picture uses.
 *
 * One time maps to one x everywhere: frame i covers [stamp i, stamp i+1)
 * and the last frame one more period, so a state that lasted one frame
 * still shows. Bands are runs of equal values, each at least a pixel wide;
 * a run with more changes than the lane has pixels is drawn a pixel column
 * at a time (the value in force at the column's middle), so a long run
 * stays a small file. Every band carries a <title> (its value and times),
 * which a browser shows on hover.
 */
#include "svg_parts.h"

#include <math.h>
#include <string.h>

#define CLEAR_H 150.0 /* px, the clearance lane */
#define SPEED_H 110.0 /* px, the speed lane */
#define BAND_H 18.0   /* px, one row of the state lane (state, then limit) */
#define GAP 34.0      /* px between lanes: room for a lane's title */
#define AXIS_H 40.0   /* px, the time axis' ticks and labels */
#define KEY_ROW 18.0  /* px, a legend line */
#define KEY_COLS 3
#define KEY_MAX 64    /* legend entries at most */
#define MIN_TICK_PX 60.0

#define CLEAR_STYLE "fill=\"none\" stroke=\"#0969da\""
#define CONTACT_STYLE "stroke=\"#cf222e\""
#define SPEED_STYLE "fill=\"none\" stroke=\"#1a7f37\" stroke-width=\"1.5\""
#define TURN_STYLE "fill=\"none\" stroke=\"#6e7781\" stroke-dasharray=\"3 2\""

typedef struct timeline {
    double x0, w;  /* px */
    double t0, t1; /* s: the first frame's stamp, the end of the last frame */
} timeline;

static timeline make_timeline(const lc_svg_run *run)
{
    timeline tl = {LC_SVG_PAD, LC_SVG_WIDTH, 0.0, 1.0};
    if (run->n > 0) {
        double last = run->n > 1 ? run->stamp[run->n - 1] - run->stamp[run->n - 2] : 0.0;
        tl.t0 = run->stamp[0];
        tl.t1 = run->stamp[run->n - 1] + (isfinite(last) && last > 0 ? last : 0.0);
        if (!(tl.t1 > tl.t0) || !isfinite(tl.t1 - tl.t0))
            tl.t1 = tl.t0 + 1.0;
    }
    return tl;
}

static double tx(const timeline *tl, double t)
{
    double x = tl->x0 + (t - tl->t0) / (tl->t1 - tl->t0) * tl->w;
    return fmin(fmax(x, tl->x0), tl->x0 + tl->w);
}

/* When frame i ends: the next frame's stamp, the timeline's end for the last. */
static double frame_end(const lc_svg_run *run, const timeline *tl, int i)
{
    return i + 1 < run->n ? run->stamp[i + 1] : tl->t1;
}

/* The group attributes that tie a lane to the time axis. */
static void put_time_attrs(FILE *out, const timeline *tl)
{
    fprintf(out, " data-x0=\"%.2f\" data-x1=\"%.2f\" data-t0=\"%.6g\" data-t1=\"%.6g\"", tl->x0,
            tl->x0 + tl->w, tl->t0, tl->t1);
}

/* ------------------------------------------------------------ colours */

/* Colours of the states and of the limits; no two in one table alike, and
 * the two tables apart where a name is in both (a row says which it is). */
static const char *const state_colour[LC_STATE_COUNT] = {
    [LC_STATE_IDLE] = "#d0d7de",     [LC_STATE_TRACKING] = "#8ddb8c",
    [LC_STATE_ARRIVED] = "#0969da",  [LC_STATE_DONE] = "#8250df",
    [LC_STATE_BLOCKED] = "#cf222e",  [LC_STATE_STALE] = "#6e7781",
    [LC_STATE_TOO_CLOSE] = "#bc4c00",
};

static const char *const limit_colour[LC_LIMIT_COUNT] = {
    [LC_LIMIT_NONE] = "#eaeef2",      [LC_LIMIT_GOAL] = "#54aeff",
    [LC_LIMIT_TOP_SPEED] = "#116329", [LC_LIMIT_BRAKING] = "#fb8500",
    [LC_LIMIT_ACCEL] = "#ffd33d",     [LC_LIMIT_TURNING] = "#a475f9",
    [LC_LIMIT_TURN_RATE] = "#e85aad", [LC_LIMIT_TOO_CLOSE] = "#953800",
    [LC_LIMIT_STALE] = "#424a53",     [LC_LIMIT_BLOCKED] = "#82071e",
    [LC_LIMIT_ARRIVED] = "#0550ae",   [LC_LIMIT_IDLE] = "#afb8c1",
};

/* Short labels of the events on the lanes (the legend gives the wire's names). */
static const char *const event_label[LC_EVENT_COUNT] = {
    [LC_EVENT_REACHED] = "reached", [LC_EVENT_DONE] = "done",
    [LC_EVENT_BLOCKED] = "blocked", [LC_EVENT_UNBLOCKED] = "unblocked",
    [LC_EVENT_SKIPPED] = "skipped", [LC_EVENT_LAP] = "lap",
};

static const char *const event_colour[LC_EVENT_COUNT] = {
    [LC_EVENT_REACHED] = "#1a7f37", [LC_EVENT_DONE] = "#8250df",
    [LC_EVENT_BLOCKED] = "#cf222e", [LC_EVENT_UNBLOCKED] = "#2da44e",
    [LC_EVENT_SKIPPED] = "#bc4c00", [LC_EVENT_LAP] = "#0969da",
};

/* A row of the state lane: which values, their names and colours. */
typedef struct band {
    const char *what; /* "state" or "limit" */
    const unsigned char *v;
    const char *const *colour;
    int count;
    const char *(*name)(int);
} band;

static const char *state_name(int v) { return lc_state_name((lc_state)v); }
static const char *limit_name(int v) { return lc_limit_name((lc_limit)v); }

static band state_band(const lc_svg_run *run)
{
    return (band){"state", run->state, state_colour, LC_STATE_COUNT, state_name};
}

static band limit_band(const lc_svg_run *run)
{
    return (band){"limit", run->limit, limit_colour, LC_LIMIT_COUNT, limit_name};
}

/* A value's colour; one the table does not know (a newer value) is grey. */
static const char *colour_of(const band *b, int v)
{
    return v >= 0 && v < b->count && b->colour[v] ? b->colour[v] : "#999999";
}

/* ------------------------------------------------------------ bands */

static void put_run(FILE *out, const band *b, int v, double xa, double xb, double ta, double tb,
                    double y)
{
    fprintf(out,
            "<rect x=\"%.2f\" y=\"%.2f\" width=\"%.2f\" height=\"%.2f\" fill=\"%s\">"
            "<title>%s %s, %.2f to %.2f s</title></rect>\n",
            xa, y, fmax(xb - xa, 1.0), BAND_H, colour_of(b, v), b->what, b->name(v), ta, tb);
}

static int count_runs(const band *b, int n)
{
    int runs = n > 0;
    for (int i = 1; i < n; i++)
        runs += b->v[i] != b->v[i - 1];
    return runs;
}

/* One row: runs of equal values, or pixel columns when they are too many. */
static void put_band(FILE *out, const lc_svg_run *run, const timeline *tl, const band *b,
                     double y)
{
    int n = run->n;
    if (count_runs(b, n) <= 2 * (int)tl->w) {
        for (int i = 0; i < n;) {
            int j = i + 1;
            while (j < n && b->v[j] == b->v[i])
                j++;
            double ta = run->stamp[i], tb = frame_end(run, tl, j - 1);
            put_run(out, b, b->v[i], tx(tl, ta), tx(tl, tb), ta - tl->t0, tb - tl->t0, y);
            i = j;
        }
        return;
    }
    int cols = (int)tl->w, k = 0, start = 0, held = -1;
    double dt = (tl->t1 - tl->t0) / cols;
    for (int c = 0; c <= cols; c++) {
        int v = -1;
        if (c < cols) {
            double t = tl->t0 + (c + 0.5) * dt;
            while (k + 1 < n && run->stamp[k + 1] <= t)
                k++;
            v = b->v[k];
        }
        if (v == held)
            continue;
        if (held >= 0)
            put_run(out, b, held, tl->x0 + start, tl->x0 + c, start * dt, c * dt, y);
        held = v;
        start = c;
    }
}

/* ------------------------------------------------------------ lanes */

typedef struct layout {
    double clear, speed, states, axis, legend, end; /* px, each part's top; end: the bottom */
} layout;

static int legend_entries(const lc_svg_run *run, bool world);

static layout make_layout(const lc_svg_run *run, double top, bool world)
{
    layout l;
    l.clear = top;
    l.speed = l.clear + CLEAR_H + GAP;
    l.states = l.speed + SPEED_H + GAP;
    l.axis = l.states + 2 * BAND_H + 4;
    l.legend = l.axis + AXIS_H + 20;
    int rows = (legend_entries(run, world) + KEY_COLS - 1) / KEY_COLS;
    l.end = l.legend + 14 + rows * KEY_ROW;
    return l;
}

double lc_svg_plots_height(const lc_svg_run *run, bool world)
{
    layout l = make_layout(run, 0.0, world);
    return l.end;
}

/* A line through (stamp, value) of every frame (thinned; absolute: the
 * value's magnitude), value clamped to [lo, hi] and scaled onto the lane
 * [y + h, y]; NAN values are left out. */
static void put_series(FILE *out, const lc_svg_run *run, const timeline *tl, const double *v,
                       bool absolute, double lo, double hi, double y, double h, const char *style)
{
    fprintf(out, "<polyline %s points=\"", style);
    int step = run->n > LC_SVG_MAX_TRAIL ? (run->n + LC_SVG_MAX_TRAIL - 1) / LC_SVG_MAX_TRAIL : 1;
    bool first = true;
    for (int i = 0; i < run->n; i += step) {
        if (!isfinite(v[i]))
            continue;
        double c = fmin(fmax(absolute ? fabs(v[i]) : v[i], lo), hi);
        fprintf(out, "%s%.2f,%.2f", first ? "" : " ", tx(tl, run->stamp[i]),
                y + (hi - c) / (hi - lo) * h);
        first = false;
    }
    fputs("\"/>\n", out);
}

static void lane_open(FILE *out, const char *id, const timeline *tl, double y, double h,
                      const char *title)
{
    fprintf(out, "<g id=\"%s\" font-family=\"sans-serif\" font-size=\"12\"", id);
    put_time_attrs(out, tl);
    fprintf(out,
            ">\n<rect x=\"%.2f\" y=\"%.2f\" width=\"%.2f\" height=\"%.2f\" fill=\"none\" "
            "stroke=\"#888\"/>\n<text x=\"%.2f\" y=\"%.2f\">%s</text>\n",
            tl->x0, y, tl->w, h, tl->x0, y - 5, title);
}

/* Clearance over time; the red line is zero (contact). */
static void put_clearance(FILE *out, const lc_svg_run *run, const timeline *tl, double y)
{
    double cmax = 0.5;
    for (int i = 0; i < run->n; i++)
        if (isfinite(run->clearance[i]))
            cmax = fmax(cmax, fmin(run->clearance[i], 5.0));
    double cmin = -0.1 * cmax, zero = y + cmax / (cmax - cmin) * CLEAR_H;
    char title[96];
    snprintf(title, sizeof title, "clearance (m), 0 to %.2f m", cmax);
    lane_open(out, "clearance", tl, y, CLEAR_H, title);
    fprintf(out, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\" " CONTACT_STYLE "/>\n",
            tl->x0, zero, tl->x0 + tl->w, zero);
    put_series(out, run, tl, run->clearance, false, cmin, cmax, y, CLEAR_H, CLEAR_STYLE);
    fputs("</g>\n", out);
}

/* The largest of v (absolute), at least 0.1, rounded up to a tenth. */
static double scale_top(const double *v, int n, bool *any)
{
    double m = 0.0;
    for (int i = 0; i < n; i++)
        if (isfinite(v[i]))
            m = fmax(m, fabs(v[i]));
    *any = m > 1e-9;
    return fmax(0.1, ceil(m * 10.0 - 1e-9) / 10.0);
}

/* Speed along the ground; the turn rate's magnitude, dashed, on its own scale. */
static void put_speed(FILE *out, const lc_svg_run *run, const timeline *tl, double y)
{
    bool moved, turned;
    double smax = scale_top(run->speed, run->n, &moved);
    double wmax = scale_top(run->turn, run->n, &turned);
    char title[128];
    snprintf(title, sizeof title, "speed (m/s), 0 to %.1f m/s%s", smax,
             turned ? "; turn rate |w| dashed, right scale" : "");
    lane_open(out, "speed", tl, y, SPEED_H, title);
    put_series(out, run, tl, run->speed, false, 0.0, smax, y, SPEED_H, SPEED_STYLE);
    if (turned) {
        fprintf(out, "<text x=\"%.2f\" y=\"%.2f\" text-anchor=\"end\" fill=\"#6e7781\">"
                "0 to %.1f rad/s</text>\n", tl->x0 + tl->w, y - 5, wmax);
        put_series(out, run, tl, run->turn, true, 0.0, wmax, y, SPEED_H, TURN_STYLE);
    }
    fputs("</g>\n", out);
}

static void put_states(FILE *out, const lc_svg_run *run, const timeline *tl, double y)
{
    fprintf(out, "<g id=\"states\" font-family=\"sans-serif\" font-size=\"12\"");
    put_time_attrs(out, tl);
    fprintf(out, ">\n<text x=\"%.2f\" y=\"%.2f\">state (upper row) and limit (lower row) of each "
            "frame</text>\n", tl->x0, y - 5);
    band s = state_band(run), l = limit_band(run);
    put_band(out, run, tl, &s, y);
    put_band(out, run, tl, &l, y + BAND_H + 2);
    fputs("</g>\n", out);
}

/* ------------------------------------------------------------ events */

static const char *event_colour_of(lc_event_kind k)
{
    return k >= 0 && k < LC_EVENT_COUNT && event_colour[k] ? event_colour[k] : "#999999";
}

/* The route's events: a line across the lanes at each, a label where there is room. */
static void put_events(FILE *out, const lc_svg_run *run, const timeline *tl, const layout *l)
{
    fputs("<g id=\"events\" font-family=\"sans-serif\" font-size=\"10\">\n", out);
    double free_from[2] = {-INFINITY, -INFINITY}; /* two rows of labels: where each is free */
    for (int i = 0; i < run->n_events; i++) {
        const lc_event *e = &run->events[i];
        double x = tx(tl, e->stamp);
        const char *c = event_colour_of(e->kind);
        fprintf(out, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\" stroke=\"%s\" "
                "stroke-dasharray=\"2 2\"><title>%s, waypoint %d, %.2f s</title></line>\n",
                x, l->clear, x, l->axis, c, lc_event_name(e->kind), e->waypoint, e->stamp - tl->t0);
        bool known = e->kind >= 0 && e->kind < LC_EVENT_COUNT && event_label[e->kind];
        char label[32];
        snprintf(label, sizeof label, "%s %d", known ? event_label[e->kind] : "event", e->waypoint);
        /* about 5.6 px a character at 10 px; near the right edge it ends at the line */
        double width = 5.6 * (double)strlen(label) + 4;
        bool right = x + 2 + width > tl->x0 + tl->w;
        double start = right ? x - 2 - width : x + 2;
        int row = start >= free_from[0] ? 0 : start >= free_from[1] ? 1 : -1;
        if (row < 0)
            continue;
        fprintf(out, "<text x=\"%.2f\" y=\"%.2f\" fill=\"%s\"%s>%s</text>\n",
                right ? x - 2 : x + 2, l->clear + 11 + 12 * row, c,
                right ? " text-anchor=\"end\"" : "", label);
        free_from[row] = start + width + 4;
    }
    if (run->events_dropped)
        fprintf(out, "<text x=\"%.2f\" y=\"%.2f\" text-anchor=\"end\">(%d later events not "
                "marked)</text>\n", tl->x0 + tl->w - 2, l->clear + 35, run->events_dropped);
    fputs("</g>\n", out);
}

/* ------------------------------------------------------------ time axis */

/* The 1-2-5 step that puts ticks at least MIN_TICK_PX apart. */
static double tick_step(const timeline *tl)
{
    static const double m[3] = {1, 2, 5};
    double want = (tl->t1 - tl->t0) * MIN_TICK_PX / tl->w;
    double p = pow(10.0, floor(log10(want)));
    for (int k = 0; k < 3; k++)
        if (m[k] * p >= want)
            return m[k] * p;
    return 10 * p;
}

/* Ticks and labels in s from the first frame, and the grid through the lanes. */
static void put_time_axis(FILE *out, const timeline *tl, const layout *l)
{
    double step = tick_step(tl);
    int ticks = (int)floor((tl->t1 - tl->t0) / step + 1e-9);
    fputs("<g id=\"time-grid\" stroke=\"#eaeef2\">\n", out);
    for (int k = 0; k <= ticks; k++)
        fprintf(out, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\"/>\n",
                tx(tl, tl->t0 + k * step), l->clear, tx(tl, tl->t0 + k * step), l->axis);
    fputs("</g>\n", out);
    fputs("<g id=\"time-axis\" font-family=\"sans-serif\" font-size=\"12\"", out);
    put_time_attrs(out, tl);
    fprintf(out, ">\n<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\" stroke=\"#444\"/>\n",
            tl->x0, l->axis, tl->x0 + tl->w, l->axis);
    for (int k = 0; k <= ticks; k++) {
        double t = k * step, x = tx(tl, tl->t0 + t);
        fprintf(out, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\" stroke=\"#444\"/>"
                "<text x=\"%.2f\" y=\"%.2f\" text-anchor=\"middle\">%g</text>\n",
                x, l->axis, x, l->axis + 5, x, l->axis + 18, t);
    }
    fprintf(out, "<text x=\"%.2f\" y=\"%.2f\" text-anchor=\"middle\">time since the first "
            "frame (s)</text>\n</g>\n", tl->x0 + tl->w / 2, l->axis + 34);
}

/* ------------------------------------------------------------ legend */

typedef enum key_kind { KEY_AREA, KEY_LINE, KEY_DOT } key_kind;

typedef struct key {
    key_kind kind;
    char style[192]; /* SVG attributes of the swatch */
    char label[64];
} key;

typedef struct keys {
    key k[KEY_MAX];
    int n;
} keys;

static void add_key(keys *ks, key_kind kind, const char *style, const char *fmt, const char *arg)
{
    if (ks->n >= KEY_MAX)
        return;
    key *k = &ks->k[ks->n++];
    k->kind = kind;
    snprintf(k->style, sizeof k->style, "%s", style);
    snprintf(k->label, sizeof k->label, fmt, arg);
}

/* The values a row of the state lane takes in this run, one key each. */
static void add_band_keys(keys *ks, const lc_svg_run *run, const band *b)
{
    for (int v = 0; v < b->count; v++) {
        bool used = false;
        for (int i = 0; i < run->n && !used; i++)
            used = b->v[i] == v;
        if (!used)
            continue;
        char fill[32], label[48];
        snprintf(fill, sizeof fill, "fill=\"%s\"", colour_of(b, v));
        snprintf(label, sizeof label, "%s %s", b->what, b->name(v));
        add_key(ks, KEY_AREA, fill, "%s", label);
    }
}

static void add_event_keys(keys *ks, const lc_svg_run *run)
{
    for (int k = 0; k < LC_EVENT_COUNT; k++) {
        bool used = false;
        for (int i = 0; i < run->n_events && !used; i++)
            used = run->events[i].kind == (lc_event_kind)k;
        if (!used)
            continue;
        char stroke[64];
        snprintf(stroke, sizeof stroke, "stroke=\"%s\" stroke-dasharray=\"2 2\"",
                 event_colour_of((lc_event_kind)k));
        add_key(ks, KEY_LINE, stroke, "event %s (waypoint index)", lc_event_name((lc_event_kind)k));
    }
}

/* The keys every picture has: the map's layers, the lanes' lines. */
static const struct {
    key_kind kind;
    const char *style, *label;
} fixed_keys[] = {
    {KEY_AREA, LC_SVG_STYLE_SEEN, "obstacles seen (snapshots)"},
    {KEY_AREA, LC_SVG_STYLE_REGIONS, "free regions (snapshots)"},
    {KEY_LINE, LC_SVG_STYLE_PATHS, "guidance paths (snapshots)"},
    {KEY_AREA, LC_SVG_STYLE_LAST_REGION, "last frame: free region"},
    {KEY_AREA, LC_SVG_STYLE_LAST_GROWN, "last frame: grown obstacles"},
    {KEY_LINE, LC_SVG_STYLE_LAST_PATH, "last frame: path and target"},
    {KEY_LINE, LC_SVG_STYLE_TRAJECTORY, "trajectory"},
    {KEY_DOT, LC_SVG_STYLE_ROUTE, "waypoints, numbered from 0"},
    {KEY_DOT, LC_SVG_STYLE_ROBOT, "robot at start and end"},
    {KEY_LINE, CLEAR_STYLE, "clearance"},
    {KEY_LINE, CONTACT_STYLE, "clearance 0: contact"},
    {KEY_LINE, SPEED_STYLE, "speed"},
};

/* Every colour of the picture: the map's layers (the world's when there is
 * one), the lanes' lines, the states, limits and events of this run. */
static void make_keys(keys *ks, const lc_svg_run *run, bool world)
{
    ks->n = 0;
    if (world)
        add_key(ks, KEY_AREA, LC_SVG_STYLE_WORLD, "%s", "world (walls, as simulated)");
    for (size_t i = 0; i < sizeof fixed_keys / sizeof fixed_keys[0]; i++)
        add_key(ks, fixed_keys[i].kind, fixed_keys[i].style, "%s", fixed_keys[i].label);
    bool turned;
    scale_top(run->turn, run->n, &turned);
    if (turned)
        add_key(ks, KEY_LINE, TURN_STYLE, "%s", "turn rate |w|");
    band s = state_band(run), l = limit_band(run);
    add_band_keys(ks, run, &s);
    add_band_keys(ks, run, &l);
    add_event_keys(ks, run);
}

static int legend_entries(const lc_svg_run *run, bool world)
{
    keys ks;
    make_keys(&ks, run, world);
    return ks.n;
}

static void put_key(FILE *out, const key *k, double x, double y)
{
    if (k->kind == KEY_AREA)
        fprintf(out, "<rect x=\"%.2f\" y=\"%.2f\" width=\"22\" height=\"11\" %s/>", x,
                y - 10, k->style);
    else if (k->kind == KEY_LINE)
        fprintf(out, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\" %s/>", x, y - 4,
                x + 22, y - 4, k->style);
    else
        fprintf(out, "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"5\" %s/>", x + 11, y - 4, k->style);
    fprintf(out, "<text x=\"%.2f\" y=\"%.2f\">%s</text>\n", x + 28, y, k->label);
}

static void put_legend(FILE *out, const lc_svg_run *run, bool world, double y)
{
    keys ks;
    make_keys(&ks, run, world);
    fprintf(out, "<g id=\"legend\" font-family=\"sans-serif\" font-size=\"12\">\n"
            "<text x=\"%.2f\" y=\"%.2f\" font-weight=\"bold\">legend</text>\n",
            LC_SVG_PAD, y - 6);
    int rows = (ks.n + KEY_COLS - 1) / KEY_COLS;
    for (int i = 0; i < ks.n; i++)
        put_key(out, &ks.k[i], LC_SVG_PAD + (i / rows) * (LC_SVG_WIDTH / KEY_COLS),
                y + 14 + (i % rows) * KEY_ROW);
    fputs("</g>\n", out);
}

/* ------------------------------------------------------------ all */

void lc_svg_put_plots(FILE *out, const lc_svg_run *run, double top, bool world)
{
    timeline tl = make_timeline(run);
    layout l = make_layout(run, top, world);
    put_time_axis(out, &tl, &l);
    put_clearance(out, run, &tl, l.clear);
    put_speed(out, run, &tl, l.speed);
    put_states(out, run, &tl, l.states);
    put_events(out, run, &tl, &l);
    put_legend(out, run, world, l.legend);
}
