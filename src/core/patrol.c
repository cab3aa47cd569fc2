/*
 * patrol.c - which waypoint is current, and the route-level state.
 *
 * Time is the frames' stamps (s); distances are metres in the route's frame.
 * The patrol owns no memory; events go to the caller's array, appended from
 * *n_events on (the caller sets it, normally to 0), never beyond
 * LC_PATROL_MAX_EVENTS (further events of that frame are dropped).
 *
 * Per frame, in this order:
 *   - within route->tolerance of the current waypoint: "waypoint_reached",
 *     state ARRIVED for that frame, then the next waypoint; after the last one
 *     "route_done" (state DONE from the next frame on) or, looping, "lap" and
 *     waypoint 0. Arrival also ends a blocked wait ("unblocked" first).
 *   - blocked (policy WAIT): back to TRACKING with "unblocked" as soon as the
 *     target is closer to the waypoint than the robot is by more than
 *     route->progress; else BLOCKED.
 *   - progress: the distance to the waypoint shrank by route->progress since
 *     the reference: a new reference (distance, stamp). Guided, a way round
 *     and the first LC_PATROL_TRIES ways given up restart the count
 *     (patrol.h, lc_patrol_update_way).
 *   - no progress for route->blocked_time since the reference: "blocked"
 *     (once) and state BLOCKED; policy SKIP adds "waypoint_skipped" and moves
 *     on as after an arrival. blocked_time <= 0 (or not finite) disables it.
 * A stamp earlier than the reference (a restarted clock) moves the reference
 * there, so it never triggers `blocked` by itself.
 */
#include "patrol.h"

const char *lc_state_name(lc_state state)
{
    static const char *const names[LC_STATE_COUNT] = {
        "idle", "tracking", "arrived", "done", "blocked", "stale", "too_close", "shutdown",
    };
    if ((int)state < 0 || state >= LC_STATE_COUNT)
        return "unknown";
    return names[state];
}

const char *lc_event_name(lc_event_kind kind)
{
    static const char *const names[LC_EVENT_COUNT] = {
        "waypoint_reached", "route_done", "blocked", "unblocked", "waypoint_skipped", "lap",
    };
    if ((int)kind < 0 || kind >= LC_EVENT_COUNT)
        return "unknown";
    return names[kind];
}

const char *lc_block_reason_name(lc_block_reason reason)
{
    static const char *const names[LC_BLOCK_REASON_COUNT] = {"", "no_progress", "no_path"};
    if ((int)reason < 0 || reason >= LC_BLOCK_REASON_COUNT)
        return "unknown";
    return names[reason];
}

void lc_patrol_reset(lc_patrol *patrol)
{
    *patrol = (lc_patrol){0};
}

typedef struct event_sink {
    lc_event *events;
    int *n;
    double stamp;
} event_sink;

static void emit_why(const event_sink *sink, lc_event_kind kind, int waypoint,
                     lc_block_reason why)
{
    if (!sink->events || !sink->n || *sink->n < 0 || *sink->n >= LC_PATROL_MAX_EVENTS)
        return;
    sink->events[(*sink->n)++] = (lc_event){kind, waypoint, sink->stamp, why};
}

static void emit(const event_sink *sink, lc_event_kind kind, int waypoint)
{
    emit_why(sink, kind, waypoint, LC_BLOCK_NONE);
}

/* A fresh progress reference: distance from pos to the current waypoint now. */
static void restart_progress(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                             double stamp)
{
    patrol->ref_dist = lc_dist(pos, route->waypoints[patrol->current]);
    patrol->ref_stamp = stamp;
    patrol->tries = 0;
}

/* On to the next waypoint, wrapping (lap) or finishing (done) at the end. */
static void advance(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                    const event_sink *sink)
{
    patrol->blocked = false;
    patrol->held_new_way = patrol->held_gave_up = false; /* they were for this waypoint */
    if (patrol->current + 1 < route->count) {
        patrol->current++;
    } else if (route->loop) {
        patrol->current = 0;
        patrol->laps++;
        emit(sink, LC_EVENT_LAP, 0);
    } else {
        patrol->done = true;
        emit(sink, LC_EVENT_DONE, patrol->current);
        return;
    }
    restart_progress(patrol, route, pos, sink->stamp);
    patrol->fresh = true;
}

static bool blocked_check_enabled(const lc_route *route)
{
    return route->blocked_time > 0.0 && isfinite(route->blocked_time);
}

/* Policy WAIT: does the target promise progress again? */
static bool progress_possible(const lc_route *route, lc_vec2 wp, lc_vec2 target, double d)
{
    return lc_vec2_finite(target) && lc_dist(target, wp) < d - route->progress;
}

lc_state lc_patrol_update(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                          lc_vec2 target, double stamp, lc_event *events,
                          int *n_events)
{
    return lc_patrol_update_way(patrol, route, pos, target, NULL, stamp, events, n_events);
}

/* Blocked: raise the event, then the route's policy. */
static lc_state block(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                      const event_sink *sink, lc_block_reason why)
{
    emit_why(sink, LC_EVENT_BLOCKED, patrol->current, why);
    if (route->on_blocked == LC_BLOCKED_SKIP) {
        emit(sink, LC_EVENT_SKIPPED, patrol->current);
        advance(patrol, route, pos, sink);
    } else {
        patrol->blocked = true;
    }
    return LC_STATE_BLOCKED;
}

lc_state lc_patrol_update_way(lc_patrol *patrol, const lc_route *route, lc_vec2 pos,
                              lc_vec2 target, const lc_patrol_way *way, double stamp,
                              lc_event *events, int *n_events)
{
    if (!route || route->count <= 0)
        return LC_STATE_IDLE;
    if (patrol->current < 0 || patrol->current >= route->count)
        lc_patrol_reset(patrol);
    lc_patrol_way told;
    if (way) {
        /* held: kept for later; free: what was kept is told now */
        told = *way;
        if (told.held) {
            patrol->held_new_way |= told.new_way;
            patrol->held_gave_up |= told.gave_up;
            told.new_way = told.gave_up = false;
        } else {
            told.new_way |= patrol->held_new_way;
            told.gave_up |= patrol->held_gave_up;
            patrol->held_new_way = patrol->held_gave_up = false;
        }
        way = &told;
    }
    if (patrol->done)
        return LC_STATE_DONE;
    if (!lc_vec2_finite(pos) || !isfinite(stamp))
        return patrol->blocked ? LC_STATE_BLOCKED : LC_STATE_TRACKING;

    event_sink sink = {events, n_events, stamp};
    lc_vec2 wp = route->waypoints[patrol->current];
    double d = lc_dist(pos, wp);
    bool guided = way && way->guided && isfinite(way->to_go);
    double go = guided ? way->to_go : d; /* the progress measure */
    if (!patrol->started || patrol->fresh) {
        patrol->started = true;
        patrol->fresh = false;
        restart_progress(patrol, route, pos, stamp);
        patrol->ref_dist = go;
    }
    if (d <= route->tolerance) {
        if (patrol->blocked)
            emit(&sink, LC_EVENT_UNBLOCKED, patrol->current);
        emit(&sink, LC_EVENT_REACHED, patrol->current);
        advance(patrol, route, pos, &sink);
        return LC_STATE_ARRIVED;
    }
    if (stamp < patrol->ref_stamp)
        patrol->ref_stamp = stamp;
    bool no_path = way && way->no_path;
    if (patrol->blocked) {
        /* guided: a new way that leads nearer than the robot ever got (the
         * way it was stuck on does not count again) */
        bool possible = !no_path && (guided ? way->new_way &&
                                                  way->to_go_target < patrol->ref_dist - route->progress
                                            : progress_possible(route, wp, target, d));
        if (!possible)
            return LC_STATE_BLOCKED;
        patrol->blocked = false;
        emit(&sink, LC_EVENT_UNBLOCKED, patrol->current);
        patrol->ref_dist = go;
        patrol->ref_stamp = stamp;
        return LC_STATE_TRACKING;
    }
    if (no_path)
        return block(patrol, route, pos, &sink, LC_BLOCK_NO_PATH);
    if (guided && way->new_way) {
        /* a new way is not progress by itself: only a way round (longer by
         * more than the detour) starts the count over */
        if (go > patrol->ref_dist + LC_PATROL_DETOUR) {
            patrol->ref_dist = go;
            patrol->ref_stamp = stamp;
        } else if (go < patrol->ref_dist) {
            patrol->ref_dist = go;
        }
    } else if (go <= patrol->ref_dist - route->progress) {
        patrol->ref_dist = go;
        patrol->ref_stamp = stamp;
    }
    if (guided && way->gave_up && patrol->tries < LC_PATROL_TRIES) {
        patrol->tries++; /* another way will be tried: a count of its own */
        patrol->ref_stamp = stamp;
    }
    if (blocked_check_enabled(route) && stamp - patrol->ref_stamp >= route->blocked_time)
        return block(patrol, route, pos, &sink, LC_BLOCK_NO_PROGRESS);
    return LC_STATE_TRACKING;
}

bool lc_patrol_waypoint(const lc_patrol *patrol, const lc_route *route, lc_vec2 *out)
{
    if (!route || route->count <= 0 || patrol->done || patrol->current < 0 ||
        patrol->current >= route->count)
        return false;
    if (out)
        *out = route->waypoints[patrol->current];
    return true;
}
