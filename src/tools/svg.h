/*
 * svg.h - one SVG picture of a run (replay or sim): world polygons, the
 * obstacles seen, free regions every N frames, the trajectory, the route's
 * waypoints (numbered from 0, as on the wire), and under the map three
 * lanes over one time axis, so that "why did it slow at 3.4 s?" has its
 * answer in one column: the clearance, the speed (and turn rate) of each
 * setpoint, and the state and limit of each frame as coloured bands, with
 * the route's events marked across them; a legend names every colour used.
 *
 * Layers are groups with fixed ids, so tests and people can find them:
 * "world" (only with a world), "seen", "regions", "paths" (guidance),
 * "last" (the last frame's region, grown obstacles, path and target: where a
 * run that did not arrive ended), "trajectory", "route", "robot" (footprint
 * at start and end; a polygon footprint also at each snapshot), then "time-grid", "clearance", "speed", "states"
 * (state and limit), "events", "time-axis" and "legend". The lanes and the
 * time axis carry data-x0, data-x1 (px) and data-t0, data-t1 (s): one time
 * maps to one x in all of them. World coordinates are metres (y up); the
 * picture flips them into SVG's y-down pixels.
 *
 * Ownership: the recorder owns copies of what it keeps (malloc); the scene's
 * pointers stay the caller's.
 */
#ifndef LC_SVG_H
#define LC_SVG_H

#include <stdio.h>

#include "frame.h"
#include "polyset.h"
#include "robot.h"
#include "session.h"

typedef struct lc_svg_run {
    int every;          /* snapshot of region and obstacles every this many frames */
    lc_pose *pose;      /* per frame, world frame */
    double *stamp;      /* s */
    double *clearance;  /* m, per frame (NAN: unknown) */
    double *speed;      /* m/s, the setpoint's along the ground */
    double *turn;       /* rad/s, the setpoint's turn rate (0 for the point model) */
    unsigned char *state, *limit; /* lc_state, lc_limit of each frame */
    int n, cap;
    lc_event *events;   /* the route's events, the first LC_SVG_EVENTS_MAX */
    int n_events, events_dropped;
    lc_polyset regions; /* region polygons of the snapshots */
    lc_polyset seen;    /* obstacles of the snapshots, as seen */
    lc_polyset paths;   /* guidance paths of the snapshots (polylines) */
    /* the last frame in full: region, grown obstacles (the frontier of the
     * unknown among them), path and target */
    lc_polyset last_region, last_grown, last_path;
    lc_vec2 last_target;
    bool has_last_target;
    int failed;         /* out of memory once: the picture is partial */
} lc_svg_run;

#define LC_SVG_EVENTS_MAX 256

/* every <= 0: 10. */
void lc_svg_run_init(lc_svg_run *r, int every);
void lc_svg_run_free(lc_svg_run *r);

/* Record one frame and its plan result. clearance: the value to plot. */
void lc_svg_run_add(lc_svg_run *r, const lc_frame *f, const lc_plan_result *res,
                    double clearance);

typedef struct lc_svg_scene {
    const char *title;       /* may be NULL */
    const lc_polyset *world; /* NULL: no world layer */
    const lc_route *route;   /* NULL: no waypoints */
    double radius;           /* m, footprint */
    const lc_vec2 *footprint; /* a polygon footprint (robot frame; NULL: the disc of
                                 radius), drawn at start, end and each snapshot */
    int n_footprint;
} lc_svg_scene;

/* Writes the picture; 0, or -1 on a write error. */
int lc_svg_write(FILE *out, const lc_svg_run *run, const lc_svg_scene *scene);

#endif
