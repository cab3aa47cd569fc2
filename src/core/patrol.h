/*
 * patrol.h - progress along a route of waypoints.
 *
 * The patrol decides which waypoint is current and the route-level state;
 * the setpoint itself comes from motion.h. Time is the frames' stamps (s),
 * never a clock, so a replay decides exactly as the live run did.
 */
#ifndef LC_PATROL_H
#define LC_PATROL_H

#include <stdbool.h>
#include "geom.h"
#include "robot.h"

typedef enum lc_state {
    LC_STATE_IDLE = 0,  /* "idle": no route */
    LC_STATE_TRACKING,  /* "tracking" */
    LC_STATE_ARRIVED,   /* "arrived": reached a waypoint this frame */
    LC_STATE_DONE,      /* "done": route finished (not looping) */
    LC_STATE_BLOCKED,   /* "blocked" */
    LC_STATE_STALE,     /* "stale" (server watchdog) */
    LC_STATE_TOO_CLOSE, /* "too_close" */
    LC_STATE_COUNT
} lc_state;

const char *lc_state_name(lc_state state);

typedef enum lc_event_kind {
    LC_EVENT_REACHED = 0, /* "waypoint_reached" */
    LC_EVENT_DONE,        /* "route_done" */
    LC_EVENT_BLOCKED,     /* "blocked" */
    LC_EVENT_UNBLOCKED,   /* "unblocked" */
    LC_EVENT_SKIPPED,     /* "waypoint_skipped" */
    LC_EVENT_LAP,         /* "lap": a looping route starts again */
    LC_EVENT_COUNT
} lc_event_kind;

const char *lc_event_name(lc_event_kind kind);

typedef struct lc_event {
    lc_event_kind kind;
    int waypoint;
    double stamp;
} lc_event;

#define LC_PATROL_MAX_EVENTS 8

typedef struct lc_patrol {
    int current;      /* index of the current waypoint */
    int laps;
    bool done;
    bool blocked;
    bool started;
    double ref_dist;  /* distance to the waypoint at the last progress */
    double ref_stamp; /* stamp of the last progress */
} lc_patrol;

void lc_patrol_reset(lc_patrol *patrol);

/*
 * Update with the robot centre pos and the planned target (the waypoint
 * pulled into the region) at stamp. Appends events (at most
 * LC_PATROL_MAX_EVENTS) and returns the route-level state: IDLE, TRACKING,
 * ARRIVED, DONE or BLOCKED. `target` tells whether progress is possible
 * while blocked: it is when the target is closer to the waypoint than pos by
 * more than route->progress.
 */
lc_state lc_patrol_update(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                          lc_vec2 target, double stamp, lc_event *events,
                          int *n_events);

/* The current waypoint, or false when there is none (idle or done). */
bool lc_patrol_waypoint(const lc_patrol *patrol, const lc_route *route, lc_vec2 *out);

#endif
