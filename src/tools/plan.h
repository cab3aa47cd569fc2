/*
 * plan.h - `lacuna plan`'s session of one request: its robot, goal and last
 * velocity. The fuzz target (tests/fuzz/fuzz_plan.c) plans through the same
 * call. The caller frees it (lc_session_free).
 */
#ifndef LC_PLAN_H
#define LC_PLAN_H

#include "codec.h"
#include "session.h"

/* NULL when out of memory. */
lc_session *lc_plan_session_new(const lc_wire_plan_request *req);

#endif
