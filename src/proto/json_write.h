/*
 * json_write.h - the proto layer's one JSON writer (inside src/proto; the
 * encoders of codec.h and scenario headers write through it).
 *
 * Writes straight into an lc_wire_text, which grows through its lc_alloc to
 * a high-water mark and is reused. Every value and key separates itself
 * from what came before (a comma unless it follows '{', '[' or ':'), so a
 * writer is a plain sequence of calls. Out of memory sets t->failed and
 * makes every later call a no-op; lc_jw_end reports it. Numbers go through
 * lc_wire_format_number: decimals < 0 is the exact round-trip form, >= 0
 * that many decimals; non-finite is null. Keys are the codec's own literals
 * and are not escaped; string values are.
 */
#ifndef LC_JSON_WRITE_H
#define LC_JSON_WRITE_H

#include "codec.h"

/* A document that is one object: "{" into an emptied *t, and at the end "}"
 * with 0, or -1 (out of memory) and *t emptied. */
void lc_jw_begin(lc_wire_text *t);
int lc_jw_end(lc_wire_text *t);

/* c is '{' or '[' to open, '}' or ']' to close. */
void lc_jw_open(lc_wire_text *t, char c);
void lc_jw_close(lc_wire_text *t, char c);
void lc_jw_key(lc_wire_text *t, const char *k);

void lc_jw_null(lc_wire_text *t);
void lc_jw_str(lc_wire_text *t, const char *s); /* NULL: null */
void lc_jw_num(lc_wire_text *t, double x, int decimals);
void lc_jw_int(lc_wire_text *t, int64_t x);
void lc_jw_bool(lc_wire_text *t, bool b);

/* Key and value in one call. */
void lc_jw_kv_num(lc_wire_text *t, const char *k, double x, int decimals);
void lc_jw_kv_int(lc_wire_text *t, const char *k, int64_t x);
void lc_jw_kv_str(lc_wire_text *t, const char *k, const char *s);
void lc_jw_kv_bool(lc_wire_text *t, const char *k, bool b);
void lc_jw_kv_index(lc_wire_text *t, const char *k, int i); /* i < 0: null */

/* [v0, ...], [x, y], [x, y, yaw], [[x, y], ...] and [[[x, y], ...], ...]
 * (NULL ps: []). */
void lc_jw_doubles(lc_wire_text *t, const double *v, int n, int decimals);
void lc_jw_vec2(lc_wire_text *t, lc_vec2 v, int decimals);
void lc_jw_pose(lc_wire_text *t, lc_pose p, int decimals);
void lc_jw_vec2_list(lc_wire_text *t, const lc_vec2 *v, int n, int decimals);
void lc_jw_polyset(lc_wire_text *t, const lc_polyset *ps, int decimals);

#endif
