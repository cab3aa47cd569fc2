/*
 * svg.c - one SVG picture of a run (see svg.h).
 *
 * The map keeps metres isotropic (one scale for x and y, y flipped so that
 * up is +y); the lanes below it (svg_plots.c) share nothing with it but the
 * width. A long run keeps every frame's pose, clearance, speed, state and
 * limit but draws at most MAX_SNAPSHOTS of the region/obstacle snapshots
 * and MAX_TRAIL trajectory points, evenly spread, so the file stays
 * readable in a browser.
 */
#include "svg.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "svg_parts.h"

#define MAP_WIDTH LC_SVG_WIDTH
#define MAP_HEIGHT_MAX 900.0
#define PAD LC_SVG_PAD
#define MAX_SNAPSHOTS 40
#define MAX_TRAIL LC_SVG_MAX_TRAIL

void lc_svg_run_init(lc_svg_run *r, int every)
{
    memset(r, 0, sizeof *r);
    r->every = every > 0 ? every : 10;
}

void lc_svg_run_free(lc_svg_run *r)
{
    free(r->pose);
    free(r->stamp);
    free(r->clearance);
    free(r->speed);
    free(r->turn);
    free(r->state);
    free(r->limit);
    free(r->events);
    lc_polyset_free(&r->regions);
    lc_polyset_free(&r->seen);
    lc_polyset_free(&r->paths);
    lc_polyset_free(&r->last_region);
    lc_polyset_free(&r->last_grown);
    lc_polyset_free(&r->last_path);
    memset(r, 0, sizeof *r);
}

/* *p grown to cap items of size bytes; -1 (and *p as it was) when out of memory. */
static int grow_array(void *p, size_t size, int cap)
{
    void **a = p;
    void *q = realloc(*a, (size_t)cap * size);
    if (!q)
        return -1;
    *a = q;
    return 0;
}

static int grow_frames(lc_svg_run *r)
{
    if (r->n < r->cap)
        return 0;
    int cap = r->cap ? 2 * r->cap : 256;
    if (grow_array(&r->pose, sizeof *r->pose, cap) < 0 ||
        grow_array(&r->stamp, sizeof *r->stamp, cap) < 0 ||
        grow_array(&r->clearance, sizeof *r->clearance, cap) < 0 ||
        grow_array(&r->speed, sizeof *r->speed, cap) < 0 ||
        grow_array(&r->turn, sizeof *r->turn, cap) < 0 ||
        grow_array(&r->state, sizeof *r->state, cap) < 0 ||
        grow_array(&r->limit, sizeof *r->limit, cap) < 0)
        return -1;
    r->cap = cap;
    return 0;
}

/* The frame's events, the first LC_SVG_EVENTS_MAX of the run (the rest counted). */
static void keep_events(lc_svg_run *r, const lc_plan_result *res)
{
    for (int i = 0; i < res->n_events; i++) {
        if (r->n_events >= LC_SVG_EVENTS_MAX) {
            r->events_dropped++;
            continue;
        }
        if (!r->events && !(r->events = malloc(LC_SVG_EVENTS_MAX * sizeof *r->events))) {
            r->failed = 1;
            return;
        }
        r->events[r->n_events++] = res->events[i];
    }
}

static bool has_path(const lc_plan_result *res)
{
    return res->path && res->path->status == LC_GUIDE_PATH && res->path->n >= 2;
}

/* The last frame's region, grown obstacles, path and target. */
static void keep_last(lc_svg_run *r, const lc_plan_result *res)
{
    lc_polyset_clear(&r->last_region);
    lc_polyset_clear(&r->last_grown);
    lc_polyset_clear(&r->last_path);
    bool ok = true;
    if (res->region && res->region->nv >= 3)
        ok = lc_polyset_push(&r->last_region, res->region->v, res->region->nv, 0) == 0;
    for (int i = 0; ok && res->grown && i < res->grown->np; i++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(res->grown, i, &n);
        ok = lc_polyset_push(&r->last_grown, v, n, 0) == 0;
    }
    if (ok && has_path(res))
        ok = lc_polyset_push(&r->last_path, res->path->v, res->path->n, 0) == 0;
    r->has_last_target = res->has_target;
    r->last_target = res->target;
    if (!ok)
        r->failed = 1;
}

static void snapshot(lc_svg_run *r, const lc_plan_result *res, int id)
{
    if (has_path(res) && lc_polyset_push(&r->paths, res->path->v, res->path->n, id) < 0)
        r->failed = 1;
    if (res->region && res->region->nv >= 3 &&
        lc_polyset_push(&r->regions, res->region->v, res->region->nv, id) < 0)
        r->failed = 1;
    for (int i = 0; res->obstacles && i < res->obstacles->np; i++) {
        int n;
        const lc_vec2 *v = lc_polyset_at(res->obstacles, i, &n);
        if (lc_polyset_push(&r->seen, v, n, id) < 0)
            r->failed = 1;
    }
}

void lc_svg_run_add(lc_svg_run *r, const lc_frame *f, const lc_plan_result *res,
                    double clearance)
{
    if (r->failed || grow_frames(r) < 0) {
        r->failed = 1;
        return;
    }
    const lc_setpoint *sp = &res->setpoint;
    r->pose[r->n] = f->pose;
    r->stamp[r->n] = f->stamp;
    r->clearance[r->n] = clearance;
    /* the pair the model does not use is zero: the larger is the speed */
    r->speed[r->n] = fmax(hypot(sp->vx, sp->vy), fabs(sp->v));
    r->turn[r->n] = sp->w;
    r->state[r->n] = (unsigned char)res->state;
    r->limit[r->n] = (unsigned char)sp->limit;
    keep_events(r, res);
    if (r->n % r->every == 0)
        snapshot(r, res, r->n / r->every);
    keep_last(r, res);
    r->n++;
}

/* ------------------------------------------------------------- writing */

typedef struct view {
    double minx, miny, maxx, maxy, scale;
    double map_h; /* px */
} view;

static void extend(view *v, lc_vec2 p, double pad)
{
    if (!lc_vec2_finite(p))
        return;
    v->minx = fmin(v->minx, p.x - pad);
    v->maxx = fmax(v->maxx, p.x + pad);
    v->miny = fmin(v->miny, p.y - pad);
    v->maxy = fmax(v->maxy, p.y + pad);
}

static void extend_set(view *v, const lc_polyset *s)
{
    for (int i = 0; s && i < s->nv; i++)
        extend(v, s->v[i], 0);
}

static view make_view(const lc_svg_run *run, const lc_svg_scene *sc)
{
    view v = {INFINITY, INFINITY, -INFINITY, -INFINITY, 1, 0};
    extend_set(&v, sc->world);
    if (!sc->world)
        extend_set(&v, &run->seen);
    for (int i = 0; i < run->n; i++)
        extend(&v, lc_v2(run->pose[i].x, run->pose[i].y), sc->radius);
    for (int i = 0; sc->route && i < sc->route->count; i++)
        extend(&v, sc->route->waypoints[i], sc->route->tolerance);
    if (!(v.minx < v.maxx))
        v = (view){-1, -1, 1, 1, 1, 0};
    double w = v.maxx - v.minx, h = fmax(v.maxy - v.miny, 1e-3);
    v.scale = fmin(MAP_WIDTH / w, MAP_HEIGHT_MAX / h);
    v.map_h = h * v.scale;
    return v;
}

static double px(const view *v, double x) { return PAD + (x - v->minx) * v->scale; }
static double py(const view *v, double y) { return PAD + (v->maxy - y) * v->scale; }

static void put_escaped(FILE *out, const char *s)
{
    for (; *s; s++) {
        switch (*s) {
        case '<': fputs("&lt;", out); break;
        case '>': fputs("&gt;", out); break;
        case '&': fputs("&amp;", out); break;
        case '"': fputs("&quot;", out); break;
        default:
            if ((unsigned char)*s >= 0x20 || *s == '\t' || *s == '\n')
                fputc(*s, out);
        }
    }
}

static void put_points(FILE *out, const view *v, const lc_vec2 *p, int n)
{
    for (int i = 0; i < n; i++)
        fprintf(out, "%s%.2f,%.2f", i ? " " : "", px(v, p[i].x), py(v, p[i].y));
}

static void put_polygon(FILE *out, const view *v, const lc_vec2 *p, int n)
{
    if (n == 1) {
        fprintf(out, "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"1.5\"/>\n", px(v, p[0].x), py(v, p[0].y));
        return;
    }
    fputs(n == 2 ? "<polyline points=\"" : "<polygon points=\"", out);
    put_points(out, v, p, n);
    fputs("\"/>\n", out);
}

static void put_set(FILE *out, const view *v, const lc_polyset *s, int keep_every)
{
    for (int i = 0; s && i < s->np; i++) {
        if (keep_every > 1 && s->span[i].src % keep_every != 0)
            continue;
        int n;
        const lc_vec2 *p = lc_polyset_at(s, i, &n);
        put_polygon(out, v, p, n);
    }
}

static void put_polylines(FILE *out, const view *v, const lc_polyset *s, int keep_every)
{
    for (int i = 0; s && i < s->np; i++) {
        if (keep_every > 1 && s->span[i].src % keep_every != 0)
            continue;
        int n;
        const lc_vec2 *p = lc_polyset_at(s, i, &n);
        fputs("<polyline points=\"", out);
        put_points(out, v, p, n);
        fputs("\"/>\n", out);
    }
}

/* Where the run ended: the last frame's grown obstacles, region, path and
 * target, drawn over the snapshots. */
static void put_last(FILE *out, const view *v, const lc_svg_run *run)
{
    fputs("<g id=\"last\">\n<g " LC_SVG_STYLE_LAST_GROWN ">\n", out);
    put_set(out, v, &run->last_grown, 0);
    fputs("</g>\n<g " LC_SVG_STYLE_LAST_REGION ">\n", out);
    put_set(out, v, &run->last_region, 0);
    fputs("</g>\n<g " LC_SVG_STYLE_LAST_PATH ">\n", out);
    put_polylines(out, v, &run->last_path, 0);
    fputs("</g>\n", out);
    if (run->has_last_target)
        fprintf(out, "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"4\" fill=\"#8250df\"/>\n",
                px(v, run->last_target.x), py(v, run->last_target.y));
    fputs("</g>\n", out);
}

static void put_trajectory(FILE *out, const view *v, const lc_svg_run *run)
{
    fputs("<g id=\"trajectory\" " LC_SVG_STYLE_TRAJECTORY ">\n", out);
    if (run->n > 0) {
        int step = run->n > MAX_TRAIL ? (run->n + MAX_TRAIL - 1) / MAX_TRAIL : 1;
        fputs("<polyline points=\"", out);
        for (int i = 0; i < run->n; i += step)
            fprintf(out, "%s%.2f,%.2f", i ? " " : "", px(v, run->pose[i].x), py(v, run->pose[i].y));
        const lc_pose *e = &run->pose[run->n - 1];
        fprintf(out, " %.2f,%.2f\"/>\n", px(v, e->x), py(v, e->y));
    }
    fputs("</g>\n", out);
}

static void put_route(FILE *out, const view *v, const lc_route *route)
{
    fputs("<g id=\"route\" font-family=\"sans-serif\" font-size=\"12\">\n", out);
    for (int i = 0; route && i < route->count; i++) {
        lc_vec2 w = route->waypoints[i];
        fprintf(out,
                "<circle cx=\"%.2f\" cy=\"%.2f\" r=\"%.2f\" " LC_SVG_STYLE_ROUTE "/>\n"
                "<text x=\"%.2f\" y=\"%.2f\" fill=\"#8250df\">%d</text>\n",
                px(v, w.x), py(v, w.y), fmax(route->tolerance * v->scale, 3.0), px(v, w.x) + 6,
                py(v, w.y) - 6, i);
    }
    fputs("</g>\n", out);
}

/* The footprint at pose p: the disc of radius, or the polygon sc gives,
 * with a line from the centre to its front. */
static void put_footprint(FILE *out, const view *v, lc_pose p, const lc_svg_scene *sc,
                          const char *what)
{
    double radius = sc->radius, ahead = radius;
    if (!sc->footprint || sc->n_footprint < 3) {
        fprintf(out, "<g class=\"%s\"><circle cx=\"%.2f\" cy=\"%.2f\" r=\"%.2f\"/>", what,
                px(v, p.x), py(v, p.y), fmax(radius * v->scale, 2.0));
    } else {
        fprintf(out, "<g class=\"%s\"><polygon points=\"", what);
        ahead = 0;
        for (int i = 0; i < sc->n_footprint; i++) {
            lc_vec2 q = lc_pose_apply(p, sc->footprint[i]);
            fprintf(out, "%s%.2f,%.2f", i ? " " : "", px(v, q.x), py(v, q.y));
            ahead = fmax(ahead, sc->footprint[i].x);
        }
        fputs("\"/>", out);
    }
    fprintf(out, "<line x1=\"%.2f\" y1=\"%.2f\" x2=\"%.2f\" y2=\"%.2f\"/></g>\n", px(v, p.x),
            py(v, p.y), px(v, p.x + ahead * cos(p.yaw)), py(v, p.y + ahead * sin(p.yaw)));
}

static void put_robot(FILE *out, const view *v, const lc_svg_run *run, const lc_svg_scene *sc,
                      int stride)
{
    fputs("<g id=\"robot\" " LC_SVG_STYLE_ROBOT ">\n", out);
    if (run->n > 0) {
        if (sc->footprint && sc->n_footprint >= 3)
            for (int i = run->every * stride; i < run->n - 1; i += run->every * stride)
                put_footprint(out, v, run->pose[i], sc, "pose");
        put_footprint(out, v, run->pose[0], sc, "start");
        put_footprint(out, v, run->pose[run->n - 1], sc, "end");
    }
    fputs("</g>\n", out);
}

static int snapshot_stride(const lc_svg_run *run)
{
    int count = run->n > 0 ? (run->n - 1) / run->every + 1 : 0;
    return count > MAX_SNAPSHOTS ? (count + MAX_SNAPSHOTS - 1) / MAX_SNAPSHOTS : 1;
}

int lc_svg_write(FILE *out, const lc_svg_run *run, const lc_svg_scene *sc)
{
    view v = make_view(run, sc);
    double plots_top = v.map_h + 2 * PAD + 20;
    double width = MAP_WIDTH + 2 * PAD;
    double height = plots_top + lc_svg_plots_height(run, sc->world != NULL) + PAD;
    fprintf(out,
            "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
            "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"%.0f\" height=\"%.0f\" "
            "viewBox=\"0 0 %.0f %.0f\">\n<title>",
            width, height, width, height);
    put_escaped(out, sc->title ? sc->title : "lacuna run");
    fprintf(out, "</title>\n<desc>%d frames; scale %.3f px/m; grid origin (%.3f, %.3f) m%s</desc>\n",
            run->n, v.scale, v.minx, v.miny, run->failed ? "; partial (out of memory)" : "");
    fputs("<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n", out);
    if (sc->world) {
        fputs("<g id=\"world\" " LC_SVG_STYLE_WORLD ">\n", out);
        put_set(out, &v, sc->world, 0);
        fputs("</g>\n", out);
    }
    int stride = snapshot_stride(run);
    fputs("<g id=\"seen\" " LC_SVG_STYLE_SEEN ">\n", out);
    put_set(out, &v, &run->seen, stride);
    fputs("</g>\n<g id=\"regions\" " LC_SVG_STYLE_REGIONS ">\n", out);
    put_set(out, &v, &run->regions, stride);
    fputs("</g>\n<g id=\"paths\" " LC_SVG_STYLE_PATHS ">\n", out);
    put_polylines(out, &v, &run->paths, stride);
    fputs("</g>\n", out);
    put_last(out, &v, run);
    put_trajectory(out, &v, run);
    put_route(out, &v, sc->route);
    put_robot(out, &v, run, sc, stride);
    lc_svg_put_plots(out, run, plots_top, sc->world != NULL);
    fputs("</svg>\n", out);
    return ferror(out) ? -1 : 0;
}
