/*
 * test_cli.c - the `lacuna` command table (cli.c) and its two readers.
 *
 *   - through the built command (LACUNA_EXE): --help, -h and help list every
 *     subcommand and exit 0; --version and -V print "lacuna VERSION"; no
 *     command, an unknown one or a near miss exit 2 with one line on stderr
 *     naming it; every subcommand's --help prints its usage and exits 0
 *     whatever else is on the line, except after "--";
 *   - in process: lc_file_read (whole files, empty ones, files larger
 *     than its first buffer, bytes after a NUL, standard input, a missing
 *     file, a directory) and lc_file_read_token (trailing white space, the
 *     length bounds, control and non-ASCII bytes, a second line, a buffer
 *     too small), each refusal exit code 2 with a one-line reason naming
 *     the file.
 *
 * Exit codes as `lacuna --help` states them: 0 success, 1 runtime failure, 2 bad
 * usage or bad input.
 */
#include "testutil.h"

#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "cli.h"
#include "file.h"
#include "codec.h"

static const char *const COMMANDS[] = {"plan", "serve", "replay", "sim", "bench", "check"};
#define N_COMMANDS (sizeof COMMANDS / sizeof COMMANDS[0])

static int setup(void **state) { return lc_test_tmpdir_setup("/tmp/lacuna_test_cli_"); }

/* The whole of out.json / err.txt of the last lc_test_lacuna (free it). */
static char *out_text(void)
{
    char *s = lc_test_slurp(lc_test_tmp("out.json"));
    assert_non_null(s);
    return s;
}

static char *err_text(void)
{
    char *s = lc_test_slurp(lc_test_tmp("err.txt"));
    assert_non_null(s);
    return s;
}

static int lines(const char *s)
{
    int n = 0;
    for (; *s; s++)
        n += *s == '\n';
    return n;
}

/* Runs args; wants exit rc, nothing on one stream and, on the other, text
 * that holds want (want_out: on stdout). */
static void expect_run(const char *args, int rc, bool want_out, const char *want)
{
    int got = lc_test_lacuna(args);
    char *out = out_text(), *err = err_text();
    if (got != rc)
        fail_msg("lacuna %s: exit %d, want %d; stderr: %s", args, got, rc, err);
    const char *text = want_out ? out : err, *quiet = want_out ? err : out;
    if (!strstr(text, want))
        fail_msg("lacuna %s: '%s' not in %s: %s", args, want, want_out ? "stdout" : "stderr", text);
    if (quiet[0])
        fail_msg("lacuna %s: %s not empty: %s", args, want_out ? "stderr" : "stdout", quiet);
    free(out);
    free(err);
}

/* ---- the command table ------------------------------------------------------ */

static void test_main_help(void **state)
{
    static const char *const forms[] = {"--help", "-h", "help"};
    for (size_t f = 0; f < 3; f++) {
        expect_run(forms[f], 0, true, "usage: lacuna <command> [options]");
        char *out = out_text();
        /* every subcommand on a line of its own, with a summary */
        for (size_t i = 0; i < N_COMMANDS; i++) {
            char line[32];
            snprintf(line, sizeof line, "\n  %-8s ", COMMANDS[i]);
            if (!strstr(out, line))
                fail_msg("lacuna %s does not list %s:\n%s", forms[f], COMMANDS[i], out);
        }
        assert_non_null(strstr(out, "exit status: 0 success, 1 runtime failure, 2 bad usage"));
        free(out);
    }
}

static void test_version(void **state)
{
    static const char *const forms[] = {"--version", "-V"};
    for (size_t f = 0; f < 2; f++) {
        assert_int_equal(lc_test_lacuna(forms[f]), 0);
        char *out = out_text();
        assert_string_equal(out, "lacuna " LC_VERSION "\n");
        free(out);
    }
}

/* No command: the main help on stderr, exit 2, nothing on stdout. */
static void test_no_command(void **state)
{
    expect_run("", 2, false, "usage: lacuna <command> [options]");
}

static void test_unknown_commands(void **state)
{
    static const char *const names[] = {"fly", "Plan", "pla", "plans", "--plan", "''", "-x",
                                        "'plan '"};
    static const char *const shown[] = {"fly", "Plan", "pla", "plans", "--plan", "", "-x",
                                        "plan "};
    for (size_t i = 0; i < sizeof names / sizeof names[0]; i++) {
        char args[64], want[96];
        snprintf(args, sizeof args, "%s --help", names[i]);
        snprintf(want, sizeof want, "lacuna: unknown command '%s' (see lacuna --help)\n",
                 shown[i]);
        assert_int_equal(lc_test_lacuna(args), 2);
        char *err = err_text(), *out = out_text();
        assert_string_equal(err, want);
        assert_string_equal(out, "");
        free(err);
        free(out);
    }
}

/* Every subcommand's usage, by -h or --help anywhere on its line (before a
 * "--"), even beside options it would refuse. */
static void test_subcommand_help(void **state)
{
    for (size_t i = 0; i < N_COMMANDS; i++) {
        char args[96], want[64];
        snprintf(want, sizeof want, "usage: lacuna %s", COMMANDS[i]);
        snprintf(args, sizeof args, "%s --help", COMMANDS[i]);
        expect_run(args, 0, true, want);
        snprintf(args, sizeof args, "%s -h", COMMANDS[i]);
        expect_run(args, 0, true, want);
        snprintf(args, sizeof args, "%s --no-such-option --help", COMMANDS[i]);
        expect_run(args, 0, true, want);
        char *out = out_text();
        assert_true(lines(out) >= 2);
        free(out);
    }
    /* after "--" a --help is an operand: plan refuses "--" as an option */
    expect_run("plan -- --help", 2, false, "lacuna plan: unknown option '--'");
}

/* A refused subcommand line: exit 2, one line, naming the option. */
static void test_subcommand_bad_option(void **state)
{
    static const struct { const char *args, *want; } cases[] = {
        {"plan --fast", "lacuna plan: unknown option '--fast'"},
        {"replay --fast", "lacuna replay: "},
        {"sim --fast", "lacuna sim: "},
        {"bench --fast", "lacuna bench: unknown option '--fast'"},
        {"check --fast", "lacuna check: "},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        lc_test_refused(cases[i].args, cases[i].want);
        char *err = err_text();
        if (!strstr(err, "--fast"))
            fail_msg("lacuna %s: the reason does not name --fast: %s", cases[i].args, err);
        free(err);
    }
}

/* ---- lc_file_read --------------------------------------------------------- */

static void test_read_file(void **state)
{
    const char *path = lc_test_tmp("read.txt");
    size_t len = 99;
    lc_test_write_file(path, "one\ntwo\n", 8);
    char *s = lc_file_read(path, &len);
    assert_non_null(s);
    assert_int_equal(len, 8);
    assert_string_equal(s, "one\ntwo\n");
    free(s);
    /* no length wanted */
    s = lc_file_read(path, NULL);
    assert_string_equal(s, "one\ntwo\n");
    free(s);
    /* empty: an empty string, length 0 */
    lc_test_write_file(path, "", 0);
    s = lc_file_read(path, &len);
    assert_non_null(s);
    assert_int_equal(len, 0);
    assert_string_equal(s, "");
    free(s);
    /* bytes after a NUL are kept, and a NUL follows the last byte */
    lc_test_write_file(path, "a\0b", 3);
    s = lc_file_read(path, &len);
    assert_int_equal(len, 3);
    assert_memory_equal(s, "a\0b\0", 4);
    free(s);
}

/* Larger than the first 64 KiB buffer, and exactly its size less one (the
 * byte kept for the NUL): every byte read, in order. */
static void test_read_file_large(void **state)
{
    static const size_t sizes[] = {65535, 65536, 65537, 300001};
    const char *path = lc_test_tmp("large.bin");
    lc_rng rng;
    lc_rng_seed(&rng, 65536);
    for (size_t k = 0; k < sizeof sizes / sizeof sizes[0]; k++) {
        size_t n = sizes[k], len = 0;
        char *want = malloc(n);
        assert_non_null(want);
        for (size_t i = 0; i < n; i++)
            want[i] = (char)(lc_rng_next(&rng) & 0xff);
        lc_test_write_file(path, want, n);
        char *s = lc_file_read(path, &len);
        assert_non_null(s);
        assert_int_equal(len, n);
        assert_memory_equal(s, want, n);
        assert_int_equal(s[n], '\0');
        free(s);
        free(want);
    }
}

/* "-" reads standard input to its end. */
static void test_read_file_stdin(void **state)
{
    const char *path = lc_test_tmp("stdin.txt");
    lc_test_write_file(path, "from stdin\n", 11);
    int saved = dup(STDIN_FILENO), fd = open(path, O_RDONLY);
    assert_true(saved >= 0 && fd >= 0);
    assert_int_equal(dup2(fd, STDIN_FILENO), STDIN_FILENO);
    close(fd);
    size_t len = 0;
    char *s = lc_file_read("-", &len);
    dup2(saved, STDIN_FILENO);
    close(saved);
    clearerr(stdin);
    assert_non_null(s);
    assert_int_equal(len, 11);
    assert_string_equal(s, "from stdin\n");
    free(s);
}

/* A missing file and a directory: NULL, with errno saying which. */
static void test_read_file_refused(void **state)
{
    size_t len = 7;
    errno = 0;
    assert_null(lc_file_read(lc_test_tmp("no-such-file"), &len));
    assert_int_equal(errno, ENOENT);
    errno = 0;
    assert_null(lc_file_read(lc_test_tmp("."), &len));
    assert_int_equal(errno, EISDIR);
    errno = 0;
    assert_null(lc_file_read("", &len));
    assert_int_equal(errno, ENOENT);
    assert_int_equal(len, 7); /* untouched */
}

/* ---- lc_file_read_token -------------------------------------------------------- */

/* Catches what is written to stderr from stderr_begin to stderr_end, which
 * returns it (free it). */
static int stderr_begin(void)
{
    fflush(stderr);
    int saved = dup(STDERR_FILENO);
    int fd = open(lc_test_tmp("stderr.txt"), O_WRONLY | O_CREAT | O_TRUNC, 0600);
    assert_true(saved >= 0 && fd >= 0);
    dup2(fd, STDERR_FILENO);
    close(fd);
    return saved;
}

static char *stderr_end(int saved)
{
    fflush(stderr);
    dup2(saved, STDERR_FILENO);
    close(saved);
    char *text = lc_test_slurp(lc_test_tmp("stderr.txt"));
    assert_non_null(text);
    return text;
}

/* lc_file_read_token on a file holding text[0..n); its result, and what it
 * wrote on stderr in *why (free it). */
static int read_token(const char *text, size_t n, char *out, size_t cap, char **why)
{
    const char *path = lc_test_tmp("token");
    lc_test_write_file(path, text, n);
    int saved = stderr_begin();
    int rc = lc_file_read_token("serve", path, LC_WIRE_TOKEN_MAX, out, cap);
    *why = stderr_end(saved);
    return rc;
}

static void test_token_accepted(void **state)
{
    static const struct { const char *text, *want; } cases[] = {
        {"meadow-lantern-19", "meadow-lantern-19"},
        {"meadow-lantern-19\n", "meadow-lantern-19"},
        {"meadow-lantern-19\r\n", "meadow-lantern-19"},
        {"meadow-lantern-19 \t \n\n", "meadow-lantern-19"},
        {" leading space kept", " leading space kept"}, /* only trailing space goes */
        {"inner spaces stay", "inner spaces stay"},
        {"~!\"#$%&'()*+,-./:;<=>?@[\\]^_`{|}", "~!\"#$%&'()*+,-./:;<=>?@[\\]^_`{|}"},
        {"x", "x"},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        char out[LC_WIRE_TOKEN_MAX + 2], *why;
        int rc = read_token(cases[i].text, strlen(cases[i].text), out, sizeof out, &why);
        if (rc != 0)
            fail_msg("token %s: refused: %s", cases[i].text, why);
        assert_string_equal(out, cases[i].want);
        assert_string_equal(why, "");
        free(why);
    }
}

/* Exactly LC_WIRE_TOKEN_MAX characters pass, one more does not; the buffer
 * must hold the token and its NUL. */
static void test_token_bounds(void **state)
{
    char text[LC_WIRE_TOKEN_MAX + 3], out[LC_WIRE_TOKEN_MAX + 2], *why;
    memset(text, 'k', sizeof text);
    assert_int_equal(read_token(text, LC_WIRE_TOKEN_MAX, out, sizeof out, &why), 0);
    assert_int_equal(strlen(out), LC_WIRE_TOKEN_MAX);
    free(why);
    strcpy(out, "untouched");
    assert_int_equal(read_token(text, LC_WIRE_TOKEN_MAX + 1, out, sizeof out, &why), 2);
    assert_string_equal(out, "untouched");
    free(why);
    /* a 5-character token: a buffer of 6 takes it, one of 5 does not */
    char small[6];
    assert_int_equal(read_token("abcde\n", 6, small, 6, &why), 0);
    assert_string_equal(small, "abcde");
    free(why);
    strcpy(small, "keep");
    assert_int_equal(read_token("abcde\n", 6, small, 5, &why), 2);
    assert_string_equal(small, "keep");
    free(why);
}

/* Refused: exit code 2, the output left alone, one line naming the command
 * and the file. */
static void test_token_refused(void **state)
{
    static const struct { const char *what, *text; size_t n; } cases[] = {
        {"empty file", "", 0},
        {"only a newline", "\n", 1},
        {"only white space", " \t \r\n", 5},
        {"a control byte", "ab\x01" "cd", 5},
        {"a tab inside", "ab\tcd", 5},
        {"a NUL inside", "ab\0cd", 5},
        {"two lines", "abc\ndef\n", 8},
        {"non-ASCII", "caf\xc3\xa9", 5},
        {"DEL", "ab\x7f", 3},
    };
    char want[LC_TEST_PATH_MAX + 64];
    snprintf(want, sizeof want, "lacuna serve: token file %s: must hold 1 to %d printable ASCII "
             "characters\n", lc_test_tmp("token"), LC_WIRE_TOKEN_MAX);
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        char out[LC_WIRE_TOKEN_MAX + 2] = "untouched", *why;
        int rc = read_token(cases[i].text, cases[i].n, out, sizeof out, &why);
        if (rc != 2 || strcmp(why, want) != 0)
            fail_msg("token with %s: exit %d, reason %s", cases[i].what, rc, why);
        assert_string_equal(out, "untouched");
        free(why);
    }
}

/* A missing token file: exit code 2, the reason names the file and why. */
static void test_token_missing_file(void **state)
{
    char path[LC_TEST_PATH_MAX], out[LC_WIRE_TOKEN_MAX + 2], want[LC_TEST_PATH_MAX + 64];
    snprintf(path, sizeof path, "%s", lc_test_tmp("no-token-here"));
    int saved = stderr_begin();
    int rc = lc_file_read_token("sim", path, LC_WIRE_TOKEN_MAX, out, sizeof out);
    char *why = stderr_end(saved);
    snprintf(want, sizeof want, "lacuna sim: token file %s: No such file or directory\n", path);
    assert_int_equal(rc, 2);
    assert_string_equal(why, want);
    free(why);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_main_help),
        cmocka_unit_test(test_version),
        cmocka_unit_test(test_no_command),
        cmocka_unit_test(test_unknown_commands),
        cmocka_unit_test(test_subcommand_help),
        cmocka_unit_test(test_subcommand_bad_option),
        cmocka_unit_test(test_read_file),
        cmocka_unit_test(test_read_file_large),
        cmocka_unit_test(test_read_file_stdin),
        cmocka_unit_test(test_read_file_refused),
        cmocka_unit_test(test_token_accepted),
        cmocka_unit_test(test_token_bounds),
        cmocka_unit_test(test_token_refused),
        cmocka_unit_test(test_token_missing_file),
    };
    return cmocka_run_group_tests(tests, setup, lc_test_tmpdir_teardown);
}
