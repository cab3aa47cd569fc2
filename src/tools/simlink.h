/*
 * simlink.h - the simulated robot's side of the wire: what `lacuna sim
 * --connect` uses to have a running `lacuna serve` plan its frames instead
 * of a local session, over the real protocol (docs/INTERFACES.md, lacuna.v2).
 *
 * A link says hello as a robot, sends the robot description and the route,
 * then for every frame sends one scan and waits for the setpoint that
 * answers it (the one whose seq echoes the frame's; stale stops the
 * watchdog pushed in between are skipped). Events arrive after their
 * frame's setpoint: a step hands back those received since the last step.
 * Any `error` message from the server ends the run with its code and text.
 *
 * Times are lc_mono_us() microseconds. One link per process; not thread safe.
 */
#ifndef LC_SIMLINK_H
#define LC_SIMLINK_H

#include <stddef.h>

#include "frame.h"
#include "patrol.h"
#include "robot.h"
#include "session.h"

typedef struct lc_simlink lc_simlink;

typedef struct lc_simlink_opts {
    const char *url;   /* ws://HOST:PORT[/PATH] */
    const char *name;  /* robot name on the server */
    const char *token; /* NULL: none */
    double timeout_s;  /* longest wait for the welcome and for each setpoint */
} lc_simlink_opts;

/*
 * Connects, says hello, sends robot and route. NULL on failure with a
 * one-line reason in err (cannot connect, refused by the server, ...).
 */
lc_simlink *lc_simlink_open(const lc_simlink_opts *o, const lc_robot *robot,
                            const lc_route *route, char *err, size_t n);

/* Sends the route again (the patrol starts over at its first waypoint). */
int lc_simlink_send_route(lc_simlink *l, const lc_route *route, char *err, size_t n);

/*
 * Services the connection until until_us (pacing), keeping events that
 * arrive. 0, or -1 with a reason (closed, an error from the server,
 * interrupted).
 */
int lc_simlink_idle(lc_simlink *l, double until_us, char *err, size_t n);

/*
 * Sends frame f and waits for its setpoint (into *reply). Fills res:
 * setpoint, state, waypoint_index/has_waypoint, the events received since
 * the last step, total_us = round trip (send to setpoint), geometry
 * pointers NULL. 0, or -1 with a reason.
 */
int lc_simlink_step(lc_simlink *l, const lc_frame *f, lc_plan_result *res, lc_reply *reply,
                    char *err, size_t n);

/* Waits up to wait_s for events still in flight (they join res->events). */
void lc_simlink_drain(lc_simlink *l, double wait_s, lc_plan_result *res);

/* Async-signal-safe: the current or next wait returns -1 ("interrupted"). */
void lc_simlink_interrupt(lc_simlink *l);

/* A normal close, then frees everything. NULL is fine. */
void lc_simlink_close(lc_simlink *l);

#endif
