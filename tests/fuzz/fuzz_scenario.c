/*
 * fuzz_scenario.c - any bytes as a whole scenario file (JSON Lines): the
 * header line, then every later line through lc_scenario_next, the way
 * replay and sim read them; a last line without its newline is the
 * truncated-recording case.
 *
 * Properties checked on every input:
 * - the reader returns 1, 0 or -1 and stops; line numbers only grow and
 *   never exceed the number of lines in the input; every -1 names a line
 *   and a reason; nothing crashes or leaks;
 * - warnings are of two kinds only: a truncated last line (at most one) and
 *   unknown keys (the header's at most once, messages' at most once per
 *   message type);
 * - a header that was accepted encodes (lc_scenario_encode_header) to text
 *   that parses back and encodes to the same text again.
 */
#include "fuzz.h"

#include <string.h>

#include "scenario.h"

typedef struct warned {
    int truncated, unknown_header, unknown_messages;
} warned;

static void count_warning(void *data, int line, const char *message)
{
    warned *w = data;
    LC_FUZZ_CHECK(line >= 1 && message && message[0], "warning at line %d without text", line);
    if (strcmp(message, "truncated last line skipped") == 0)
        w->truncated++;
    else if (strncmp(message, "scenario header: unknown key", 28) == 0 && line == 1)
        w->unknown_header++;
    else if (strncmp(message, "unknown key", 11) == 0 && strstr(message, "(said once per"))
        w->unknown_messages++;
    else
        LC_FUZZ_CHECK(0, "unexpected warning at line %d: %s", line, message);
}

static void check_header_round_trip(const lc_scenario_header *h)
{
    lc_wire_text t1, t2;
    lc_wire_text_init(&t1, NULL);
    lc_wire_text_init(&t2, NULL);
    lc_scenario_header h2;
    lc_scenario_header_init(&h2);
    lc_scenario_error err;
    LC_FUZZ_CHECK(lc_scenario_encode_header(&t1, h) == 0, "encoding an accepted header failed");
    int rc = lc_scenario_parse_header(t1.s, (size_t)t1.len, &h2, &err);
    LC_FUZZ_CHECK(rc == 0, "own header text refused: %s\n%s", err.message, t1.s);
    LC_FUZZ_CHECK(lc_scenario_encode_header(&t2, &h2) == 0, "second header encode failed");
    LC_FUZZ_CHECK(t1.len == t2.len && memcmp(t1.s, t2.s, (size_t)t1.len) == 0,
                  "header round trip changed the text:\n%s\n%s", t1.s, t2.s);
    lc_scenario_header_free(&h2);
    lc_wire_text_free(&t1);
    lc_wire_text_free(&t2);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *text = (const char *)data;
    int lines = 0;
    for (size_t i = 0; i < size; i++)
        lines += text[i] == '\n';
    if (size > 0 && text[size - 1] != '\n')
        lines++;

    lc_scenario_reader r;
    lc_scenario_reader_init(&r, text, size, NULL);
    warned warnings = {0};
    r.warning = count_warning;
    r.warning_data = &warnings;
    lc_scenario_header h;
    lc_scenario_header_init(&h);
    lc_scenario_error err = {0};

    if (lc_scenario_read_header(&r, &h, &err) == 0) {
        check_header_round_trip(&h);
        int last = r.line, rc;
        lc_wire_msg msg;
        while ((rc = lc_scenario_next(&r, &msg, &err)) == 1) {
            LC_FUZZ_CHECK(msg.type > LC_MSG_NONE && msg.type < LC_MSG_COUNT &&
                              msg.type != LC_MSG_SCENARIO,
                          "line %d gave type %d", r.line, (int)msg.type);
            LC_FUZZ_CHECK(r.line > last && r.line <= lines, "line %d after %d of %d", r.line,
                          last, lines);
            last = r.line;
        }
        LC_FUZZ_CHECK(rc == 0 || rc == -1, "lc_scenario_next returned %d", rc);
        if (rc == -1)
            LC_FUZZ_CHECK(err.line > last && err.line <= lines && err.message[0],
                          "error at line %d (last good %d of %d): %s", err.line, last, lines,
                          err.message);
        LC_FUZZ_CHECK(warnings.truncated <= 1 && warnings.unknown_header <= 1 &&
                          warnings.unknown_messages <= LC_MSG_COUNT,
                      "warnings: %d truncated, %d header, %d messages", warnings.truncated,
                      warnings.unknown_header, warnings.unknown_messages);
    } else {
        LC_FUZZ_CHECK(err.line >= 1 && err.message[0], "header error at line %d: '%s'",
                      err.line, err.message);
    }
    lc_scenario_header_free(&h);
    lc_scenario_reader_free(&r);
    return 0;
}
