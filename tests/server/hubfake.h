/*
 * hubfake.h - the hub (src/server/robots.h) driven without sockets, for the
 * server's tests: a fake transport that counts wakes and kills, a hub made
 * from the default options (tweaked per test), messages said to it and the
 * queued replies read back as JSON. Time is whatever the test passes: a
 * fake clock, so timer checks are exact whatever the machine's load.
 */
#ifndef LC_HUBFAKE_H
#define LC_HUBFAKE_H

#include <cjson/cJSON.h>
#include <stdbool.h>

#include "robots.h"

typedef struct lc_fake_io {
    int wakes, kills;
} lc_fake_io;

/* What every fake hub's transport counts (reset by nobody: compare deltas). */
extern lc_fake_io lc_fake;

/* A hub of the default options, with link_timeout_ms 0 (the fake peers
 * answer no ping), then tweak (may be NULL). Fails the test when NULL. */
lc_hub *lc_fake_hub(void (*tweak)(lc_hub_config *));

/* One whole text message received at now; what lc_hub_receive returns. */
int lc_fake_say(lc_hub *hub, lc_conn *c, const char *text, double now);

/* The next queued message parsed and popped (the caller frees), or NULL. */
cJSON *lc_fake_next(lc_conn *c);

/* A member of a message: "" / NAN when absent or of another type. */
const char *lc_fake_str(const cJSON *j, const char *key);
double lc_fake_num(const cJSON *j, const char *key);

/* The next message has this type (and code, for errors; NULL: any). */
void lc_fake_expect(lc_conn *c, const char *type, const char *code);
void lc_fake_expect_none(lc_conn *c);

/* Pop every queued message (the peer read them); how many there were. */
int lc_fake_drain(lc_conn *c);

/* A robot connection welcomed under name (a hello without a token). */
lc_conn *lc_fake_robot(lc_hub *hub, const char *name, double now);

/* A points frame of open space: a ring of points 6 m around the robot at
 * pose (x, y, 0). Fails the test when the hub refuses it outright. */
void lc_fake_frame(lc_hub *hub, lc_conn *c, int seq, double stamp, double x, double y,
                   double now);

#endif
