/*
 * fuzz_codec.c - any bytes as one wire message (lc_wire_decode), every
 * message type through the one entry point the server uses.
 *
 * Properties checked on every input:
 * - the decoder returns 0 or -1, never crashes, reads nothing beyond len
 *   (the input is libFuzzer's buffer, not NUL-terminated), leaks nothing;
 * - on failure the error has a code other than ok and a message;
 * - on success, encoding the message and decoding that text again gives
 *   the same type and, encoded once more, the same text (decode and encode
 *   agree on every field, numbers round-trip bit for bit);
 * - the same input decoded again with tight limits into the same (now warm)
 *   buffers behaves like any input (the limit paths and buffer reuse);
 * - differential: whatever the fast path for scan and points messages
 *   (codec_fast.c) accepts, under either limits, the cJSON path alone
 *   decodes to the same frame, bit for bit.
 */
#include "fuzz.h"

#include <string.h>

#include "codec.h"
#include "codec_fast.h"

/* The encoder of a decoded message; 1 when the type has none (view, scenario). */
static int encode_msg(lc_wire_text *t, const lc_wire_msg *m)
{
    switch (m->type) {
    case LC_MSG_HELLO:
        return lc_wire_encode_hello(t, &m->u.hello);
    case LC_MSG_WELCOME:
        return lc_wire_encode_welcome(t, &m->u.welcome);
    case LC_MSG_ROBOT:
        return lc_wire_encode_robot(t, &m->u.robot);
    case LC_MSG_ROUTE:
        return lc_wire_encode_route(t, &m->u.route);
    case LC_MSG_SCAN:
    case LC_MSG_POINTS:
        return lc_wire_encode_frame(t, &m->u.frame);
    case LC_MSG_SETPOINT:
        return lc_wire_encode_setpoint(t, &m->u.setpoint);
    case LC_MSG_EVENT:
        return lc_wire_encode_event(t, &m->u.event);
    case LC_MSG_ERROR:
        return lc_wire_encode_error(t, &m->u.error);
    case LC_MSG_WARNING:
        return lc_wire_encode_warning(t, &m->u.warning);
    default:
        return 1;
    }
}

static void check_error(const lc_wire_error *err)
{
    LC_FUZZ_CHECK(err->code != LC_WIRE_OK && err->code < LC_WIRE_CODE_COUNT,
                  "failed decode with code %d", (int)err->code);
    LC_FUZZ_CHECK(err->message[0] != '\0', "failed decode without a message");
    LC_FUZZ_CHECK(memchr(err->message, '\0', sizeof err->message) != NULL,
                  "error message not terminated");
}

/* encode(m) decodes to the same type and encodes to the same text again. */
static void check_round_trip(const lc_wire_msg *m, lc_wire_buffers *buf)
{
    lc_wire_text t1, t2;
    lc_wire_text_init(&t1, NULL);
    lc_wire_text_init(&t2, NULL);
    int rc = encode_msg(&t1, m);
    if (rc == 0) {
        lc_wire_msg m2;
        lc_wire_error err;
        lc_wire_limits lim;
        lc_wire_limits_default(&lim);
        lim.max_message = (size_t)1 << 30; /* the encoded text may be longer than the input */
        int drc = lc_wire_decode(t1.s, (size_t)t1.len, &lim, buf, &m2, &err);
        LC_FUZZ_CHECK(drc == 0, "own %s text refused: %s: %s\n%s", lc_msg_type_name(m->type),
                      lc_wire_code_name(err.code), err.message, t1.s);
        LC_FUZZ_CHECK(m2.type == m->type, "type %d came back as %d", (int)m->type,
                      (int)m2.type);
        LC_FUZZ_CHECK(encode_msg(&t2, &m2) == 0, "second encode failed");
        LC_FUZZ_CHECK(t1.len == t2.len && memcmp(t1.s, t2.s, (size_t)t1.len) == 0,
                      "round trip changed the text:\n%s\n%s", t1.s, t2.s);
    } else {
        LC_FUZZ_CHECK(rc == 1, "encoder failed on a decoded %s", lc_msg_type_name(m->type));
    }
    lc_wire_text_free(&t1);
    lc_wire_text_free(&t2);
}

static bool same_doubles(const double *a, const double *b, int n)
{
    return n == 0 || memcmp(a, b, (size_t)n * sizeof *a) == 0;
}

/* The fast path's frame against the cJSON path's, field by field. */
static void check_fast_path(const char *text, size_t size, const lc_wire_limits *lim)
{
    lc_wire_buffers bf, bs;
    lc_wire_buffers_init(&bf, NULL);
    lc_wire_buffers_init(&bs, NULL);
    lc_wire_msg mf, ms;
    lc_wire_error err;
    if (lc_wire_decode_frame_fast(text, size, lim, &bf, &mf)) {
        int rc = lc_wire_decode_slow(text, size, lim, &bs, &ms, &err);
        LC_FUZZ_CHECK(rc == 0, "fast path accepted what the cJSON path refuses: %s: %s",
                      lc_wire_code_name(err.code), err.message);
        const lc_frame *a = &mf.u.frame, *b = &ms.u.frame;
        double ha[] = {a->stamp, a->pose.x, a->pose.y, a->pose.yaw, a->mount.x, a->mount.y,
                       a->mount.yaw, a->angle_start, a->angle_step, a->range_min, a->range_max};
        double hb[] = {b->stamp, b->pose.x, b->pose.y, b->pose.yaw, b->mount.x, b->mount.y,
                       b->mount.yaw, b->angle_start, b->angle_step, b->range_min, b->range_max};
        LC_FUZZ_CHECK(mf.type == ms.type && a->kind == b->kind && a->seq == b->seq &&
                          same_doubles(ha, hb, 11) && a->has_mount == b->has_mount &&
                          strcmp(a->sensor, b->sensor) == 0,
                      "fast path header differs");
        LC_FUZZ_CHECK(a->n_ranges == b->n_ranges && a->n_points == b->n_points &&
                          (a->ranges == NULL) == (b->ranges == NULL) &&
                          (a->xy == NULL) == (b->xy == NULL) && (a->z == NULL) == (b->z == NULL),
                      "fast path counts differ");
        LC_FUZZ_CHECK(err.ignored == 0, "the fast path accepted a message with unknown keys");
        LC_FUZZ_CHECK(!a->ranges || same_doubles(a->ranges, b->ranges, a->n_ranges),
                      "fast path ranges differ");
        LC_FUZZ_CHECK(!a->xy || same_doubles(a->xy, b->xy, 2 * a->n_points),
                      "fast path xy differ");
        LC_FUZZ_CHECK(!a->z || same_doubles(a->z, b->z, a->n_points), "fast path z differ");
    }
    lc_wire_buffers_free(&bf);
    lc_wire_buffers_free(&bs);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *text = (const char *)data;
    lc_wire_buffers buf;
    lc_wire_buffers_init(&buf, NULL);
    lc_wire_msg msg;
    lc_wire_error err;

    int rc = lc_wire_decode(text, size, NULL, &buf, &msg, &err);
    LC_FUZZ_CHECK(rc == 0 || rc == -1, "decode returned %d", rc);
    if (rc == 0) {
        LC_FUZZ_CHECK(msg.type > LC_MSG_NONE && msg.type < LC_MSG_COUNT, "type %d",
                      (int)msg.type);
        check_round_trip(&msg, &buf);
    } else {
        check_error(&err);
        LC_FUZZ_CHECK(msg.type == LC_MSG_NONE, "failed decode left type %d", (int)msg.type);
    }

    /* Tight limits, warm buffers. */
    lc_wire_limits tight = {.max_message = 4096, .max_beams = 16, .max_points = 8,
                            .dt_max = 0.1};
    rc = lc_wire_decode(text, size, &tight, &buf, &msg, &err);
    if (rc == 0) {
        LC_FUZZ_CHECK(size <= tight.max_message, "%zu bytes passed a 4096-byte limit", size);
        LC_FUZZ_CHECK(msg.type != LC_MSG_SCAN || msg.u.frame.n_ranges <= tight.max_beams,
                      "%d beams passed a limit of 16", msg.u.frame.n_ranges);
        LC_FUZZ_CHECK(msg.type != LC_MSG_POINTS || msg.u.frame.n_points <= tight.max_points,
                      "%d points passed a limit of 8", msg.u.frame.n_points);
    } else
        check_error(&err);

    lc_wire_limits dflt;
    lc_wire_limits_default(&dflt);
    check_fast_path(text, size, &dflt);
    check_fast_path(text, size, &tight);

    lc_wire_buffers_free(&buf);
    return 0;
}
