/*
 * replay.h - what `lacuna replay` and `lacuna sim` share, so that a sim run
 * and its replay take the same steps: the session built from a scenario
 * header (its robot, route and control settings: the frames are then
 * stepped with lc_session_drive, control.h's dt rule), and line output.
 */
#ifndef LC_REPLAY_H
#define LC_REPLAY_H

#include <stdbool.h>
#include <stdio.h>

#include "codec.h"
#include "scenario.h"
#include "session.h"

/* A session with the header's robot, route and control settings
 * (lc_scenario_control) and the default plan config. */
lc_session *lc_replay_session(const lc_scenario_header *h);


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
