/*
 * control.h - how a stream of frames becomes a stream of steps: the control
 * settings that choose each step's period, and the reply a frame gets.
 *
 * The period dt of a step is what the rate limits (a_max dt, dw_max dt) and
 * the braking latency use: how long the robot holds the setpoint before the
 * next one. lacuna serve, replay and sim all step a session through
 * lc_session_drive (session.h), which applies these settings, so a replay
 * takes exactly the steps the live run took. A recording stores the
 * settings it ran with (the scenario header's "control" object).
 *
 * The dt rule, in this order:
 *   - period > 0: every step uses period;
 *   - the first frame of a session: first_dt;
 *   - otherwise the difference d of this frame's stamp and the previous
 *     one's; a d that is not positive and finite (a restarted or repeated
 *     stamp, another sensor's older frame) becomes dt_min, or first_dt
 *     when dt_min is 0;
 *   - then clamped to [dt_min, dt_max].
 *
 * How long a reply may be followed without a newer one (valid_ms): two of
 * its step's periods (the one it was planned for and one more, for a frame
 * that comes late or is lost), never more than the watchdog time, rounded
 * to whole milliseconds, at least 1. Past it the robot stops by itself: the
 * braking the setpoint allows for assumes a newer one within about dt, and a
 * dead link sends none (not even the watchdog's stop).
 * Units: seconds; watchdog_ms and valid_ms milliseconds.
 */
#ifndef LC_CONTROL_H
#define LC_CONTROL_H

#include <stdbool.h>
#include <stdint.h>

#include "motion.h"
#include "patrol.h"
#include "robot.h"

typedef struct lc_control {
    double period;   /* s, > 0: a fixed period for every step; 0: from stamps */
    double dt_min;   /* s, least period taken from stamps (0: no floor) */
    double dt_max;   /* s, largest period taken from stamps (INFINITY: no cap) */
    double first_dt; /* s, the first frame's period */
    int watchdog_ms; /* the server's stop-after silence, and valid_ms's bound (0: none) */
} lc_control;

/* lacuna serve's defaults: period 0, dt_min 0.005, dt_max 0.2, first_dt
 * 0.05, watchdog 200 ms. */
void lc_control_default(lc_control *c);

/* The simulator's rule (a file without "control"): the plain stamp
 * difference, first_dt for the first frame and for a difference that is not
 * positive; no clamp, no watchdog. */
void lc_control_stamps(lc_control *c, double first_dt);

/* dt of a frame at stamp; first: no frame before it (prev unused). */
double lc_control_dt(const lc_control *c, bool first, double prev, double stamp);

/* Periods of its step a reply may be followed for (see above). */
#define LC_VALID_PERIODS 2
/* The largest valid_ms given (a bound for the int, about 11.6 days). */
#define LC_VALID_MS_MAX 1000000000

/* valid_ms of a reply to a step of period dt (s): LC_VALID_PERIODS dt, at
 * most the watchdog (when there is one), in [1, LC_VALID_MS_MAX] ms. */
int lc_control_valid_ms(const lc_control *c, double dt);

/*
 * The answer to one frame (the wire's setpoint message): seq and stamp echo
 * the frame; model says which pair of sp is meant (point: vx, vy; unicycle:
 * v, w); waypoint is the current waypoint's index, -1 when there is none;
 * valid_ms is how long it may be followed (lc_control_valid_ms; a stop
 * keeps the valid_ms of the reply it replaces).
 */
typedef struct lc_reply {
    int64_t seq;
    double stamp;
    lc_model model;
    lc_setpoint sp;
    lc_state state;
    int waypoint;
    int valid_ms;
} lc_reply;

#endif
