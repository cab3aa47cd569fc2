/*
 * codec_encode.h - pieces of the message encoders that other writers in
 * src/proto reuse (views and plan results in codec_view.c, scenario
 * headers in scenario.c), so that a field reads the same wherever it is
 * written. Each writes members (key and value) or one value into *t
 * through json_write.h; numbers without a decimals argument are exact.
 */
#ifndef LC_CODEC_ENCODE_H
#define LC_CODEC_ENCODE_H

#include "codec.h"

/* The members of the robot and route messages, "type" first: wrapped in
 * braces they are the message, or an object embedding it. */
void lc_wire_robot_members(lc_wire_text *t, const lc_robot *m);
void lc_wire_route_members(lc_wire_text *t, const lc_route *m);

/* What route messages and views share: waypoints, loop, tolerance,
 * on_blocked, blocked_time, with decimals as lc_wire_format_number's. */
void lc_wire_route_common(lc_wire_text *t, const lc_route *m, int decimals);

/* "state", "limit", "model": the core's names (null for an out-of-range value). */
void lc_wire_kv_state(lc_wire_text *t, lc_state s);
void lc_wire_kv_limit(lc_wire_text *t, lc_limit l);
void lc_wire_kv_model(lc_wire_text *t, lc_model m);

/* "event", "waypoint" (null for none), "stamp". */
void lc_wire_kv_event(lc_wire_text *t, const lc_event *ev);

/* {"vx","vy"} for a point robot, {"v","w"} for a unicycle: exact, as
 * replay compares them. */
void lc_wire_put_setpoint(lc_wire_text *t, const lc_setpoint *sp, lc_model model);

#endif
