/*
 * recorder.h - one robot session written as a scenario file (JSON Lines).
 *
 * The file is DIR/<robot>-<UTC time>-<n>.jsonl. Its first line is the
 * scenario header {"type":"scenario","version":1,"robot":{...},"route":{...}}
 * holding the robot and route in force when the first frame came, and
 * "control":{"period":s,"dt_min":s,"dt_max":s,"first_dt":s,"watchdog_ms":n}:
 * how the server chose each step's dt (period when > 0, else the stamp
 * difference clamped to [dt_min, dt_max], first_dt for the first frame)
 * and its watchdog, so a replay can do the same; then
 * every wire message of the session, one a line, as received (re-encoded
 * from what was decoded, so numbers parse back bit for bit) or as sent.
 * Every line is flushed when written, so a crash leaves each complete line
 * readable. Lines must not contain a newline (the codec writes none).
 *
 * Ownership: the caller owns the lc_recorder and must lc_recorder_close it.
 */
#ifndef LC_RECORDER_H
#define LC_RECORDER_H

#include <stdbool.h>
#include <stdio.h>

#include "control.h"
#include "robot.h"

typedef struct lc_recorder {
    FILE *file;
    lc_control control; /* how the server steps the session: written into the header */
    char path[4096];
    bool failed; /* a write failed: recording stopped, logged once */
    int error;   /* errno of that failure (ENOSPC for a full disk) */
} lc_recorder;

/*
 * Create the file in dir and write the header line. Returns 0, or -1 with
 * errno set (the recorder then stays closed).
 */
int lc_recorder_open(lc_recorder *rec, const char *dir, const char *robot_name,
                     const lc_robot *robot, const lc_route *route,
                     const lc_control *control);
bool lc_recorder_is_open(const lc_recorder *rec);

/* Append one line (text of len bytes, a newline is added) and flush; 0 or -1. */
int lc_recorder_line(lc_recorder *rec, const char *text, size_t len);

/*
 * Reopen the same path in append mode (after SIGHUP, when the file was
 * rotated away); a new empty file first gets the header again.
 */
int lc_recorder_reopen(lc_recorder *rec, const lc_robot *robot, const lc_route *route);

void lc_recorder_close(lc_recorder *rec);

#endif
