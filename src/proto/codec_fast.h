/*
 * codec_fast.h - the codec's fast path for scan and points messages (inside
 * the proto layer; lc_wire_decode uses it, tests and the codec fuzz target
 * compare it with the cJSON path).
 *
 * A sensor frame is almost all numbers: a 1081-beam scan through cJSON is
 * a tree node, a locale lookup and a strtod per beam (about 150 us of the
 * server's 190 us per scan message on the bench machine). The fast path
 * reads such a message in one pass straight into the decode buffers. It
 * only ever accepts: on anything it is not sure of (an unknown or repeated
 * key, an escape in a string, a number outside strict JSON grammar, a
 * field the cJSON path would refuse) it declines, and the cJSON path
 * decodes the message from scratch and reports any error in its words. So
 * every message it accepts decodes exactly as the cJSON path would.
 */
#ifndef LC_CODEC_FAST_H
#define LC_CODEC_FAST_H

#include "codec.h"

/*
 * Decodes text[0..len) if it is a scan or points message in plain form:
 * 1 with *out filled (type LC_MSG_SCAN or LC_MSG_POINTS; arrays in buf), or
 * 0 (declined; *out untouched, buf's contents unspecified). lim must not be
 * NULL.
 */
int lc_wire_decode_frame_fast(const char *text, size_t len, const lc_wire_limits *lim,
                              lc_wire_buffers *buf, lc_wire_msg *out);

/*
 * The cJSON path alone (lc_wire_decode without the fast path): the
 * reference the fast path is checked against.
 */
int lc_wire_decode_slow(const char *text, size_t len, const lc_wire_limits *lim,
                        lc_wire_buffers *buf, lc_wire_msg *out, lc_wire_error *err);

#endif
