/*
 * replay.h - what `lacuna replay` and `lacuna sim` share, so that a sim run
 * and its replay take the same steps: the session built from a scenario
 * header, the control period of each frame, the setpoint message of a plan
 * result, and line output.
 *
 * The dt rule: the first frame of a run uses lc_scenario_first_dt (1 /
 * sensor rate, else 0.05 s); every later one the difference of consecutive
 * stamps, or the first-frame period again when that difference is not
 * positive and finite (a restarted or repeated stamp).
 */
#ifndef LC_REPLAY_H
#define LC_REPLAY_H

#include <stdbool.h>
#include <stdio.h>

#include "codec.h"
#include "scenario.h"
#include "session.h"

/* A session with the header's robot and route and the default plan config. */
lc_session *lc_replay_session(const lc_scenario_header *h);

/* dt for a frame at stamp after one at prev (first: no frame before). */
double lc_replay_dt(bool first, double prev, double stamp, double first_dt);

/* The setpoint message that answers frame f (seq and stamp echo it). */
lc_wire_setpoint lc_replay_setpoint(const lc_frame *f, const lc_plan_result *r, lc_model model);

/* t's text and a newline; 0 or -1. */
int lc_replay_put_line(FILE *out, const lc_wire_text *t);

/* Writes the header line of h; 0 or -1. */
int lc_replay_put_header(FILE *out, const lc_scenario_header *h);

/* True when results should be JSON: --json, or stdout is not a terminal. */
bool lc_replay_want_json(bool json_flag);

/* Reads and opens a scenario: text (free it) and header; 0, or an exit code. */
int lc_replay_load(const char *cmd, const char *path, char **text, size_t *len,
                   lc_scenario_reader *rd, lc_scenario_header *h);

#endif
