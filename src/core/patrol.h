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
    LC_STATE_SHUTDOWN,  /* "shutdown": the server's last stop before it exits */
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

/* Why a waypoint was found blocked. */
typedef enum lc_block_reason {
    LC_BLOCK_NONE = 0,        /* "" (events other than blocked) */
    LC_BLOCK_NO_PROGRESS = 1, /* "no_progress": no progress for the blocked time */
    LC_BLOCK_NO_PATH = 2,     /* "no_path": no way to the waypoint through what is known */
    LC_BLOCK_REASON_COUNT
} lc_block_reason;

const char *lc_block_reason_name(lc_block_reason reason);

typedef struct lc_event {
    lc_event_kind kind;
    int waypoint;
    double stamp;
    lc_block_reason reason; /* LC_EVENT_BLOCKED only */
} lc_event;

#define LC_PATROL_MAX_EVENTS 8

typedef struct lc_patrol {
    int current;      /* index of the current waypoint */
    int laps;
    bool done;
    bool blocked;
    bool started;
    bool fresh;       /* a new waypoint: the next frame sets the reference (its way's
                         length may differ from the straight line) */
    double ref_dist;  /* distance to the waypoint at the last progress */
    double ref_stamp; /* stamp of the last progress */
    int tries;        /* ways given up for this waypoint that counted as progress */
    bool held_new_way, held_gave_up; /* told while held (lc_patrol_way.held): counted
                                        on the first frame not held, same waypoint */
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

/*
 * What guidance (guide.h) tells the patrol about the way to the current
 * waypoint. Progress is then measured along the path (a detour round a
 * cul-de-sac takes the robot farther from the waypoint as the crow flies
 * while it gets nearer along the way), and a missing way blocks at once.
 */
#define LC_PATROL_DETOUR 1.0 /* m */
#define LC_PATROL_TRIES 4    /* ways given up per waypoint that count as progress */

typedef struct lc_patrol_way {
    bool guided;         /* false: the straight line (as lc_patrol_update) */
    double to_go;        /* m, along the path from the robot */
    double to_go_target; /* m, along the path from the planned target */
    bool new_way;        /* the path was replaced this frame */
    bool no_path;        /* there is no way to the waypoint within what is known */
    bool gave_up;        /* the way followed was given up this frame (the session's
                            stall watch refused where it led): another is sought */
    bool held;           /* the robot is held in the margin this frame: it follows
                            and tries no way, so new_way and gave_up wait */
} lc_patrol_way;

/*
 * lc_patrol_update with guidance's view of the way (way may be NULL: the
 * straight line). With a way: progress is to_go shrinking by
 * route->progress; a new way longer than the reference by more than
 * LC_PATROL_DETOUR (a way round an obstacle found, not a robot dithering
 * between two ways of about the same length) starts the progress over from
 * it, while a new way that is not (or is shorter) is no progress by itself;
 * no_path raises "blocked" (reason no_path) at once; a robot held blocked
 * (policy WAIT) is "unblocked" only by a new way (new_way) whose target
 * lies nearer the waypoint, along it, than the robot ever got (by
 * route->progress): the way it got stuck on does not unblock it again.
 * A way given up (gave_up) starts the count over, as a way round does, for
 * the first LC_PATROL_TRIES of a waypoint: in a cluttered corridor the
 * robot may try a few gaps, each given up after the stall watch's time,
 * before one lets it through; trying them is not standing still. Then the
 * count runs on, so a robot that can try no more is still blocked, at the
 * latest blocked_time after its last counted try. While the robot is held
 * in the margin (held), neither starts the count over; both are kept and
 * counted on the first frame it is free again, for the same waypoint: a
 * robot held while it gave a gap up, then driving the long way round found
 * meanwhile, was blocked 6 s into it, its count running from before the gap.
 */
lc_state lc_patrol_update_way(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                              lc_vec2 target, const lc_patrol_way *way, double stamp,
                              lc_event *events, int *n_events);

/* The current waypoint, or false when there is none (idle or done). */
bool lc_patrol_waypoint(const lc_patrol *patrol, const lc_route *route, lc_vec2 *out);

#endif
