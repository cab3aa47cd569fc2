/*
 * testutil.h - what every lacuna test shares: cmocka's includes in the order
 * 1.1.5 needs, a tolerance assertion (1.1.5 has no assert_float_equal), a
 * seeded random source, a counting allocator for the "no allocation per
 * frame once warm" checks, skips that say so (a check whose outside
 * reference is missing from the build is skipped, never passed), and, for
 * the tests that run the built command, a per-test temporary directory, the
 * command itself and whole-file reads and writes.
 */
#ifndef LC_TESTUTIL_H
#define LC_TESTUTIL_H

#include <setjmp.h>
#include <stdarg.h>
#include <stdbool.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "alloc.h"
#include "geom.h"
#include "lc_config.h"

/* Fails the test, printing both values, when |a - b| > tol. */
#define assert_near(a, b, tol) lc_test_assert_near((a), (b), (tol), #a, #b, __FILE__, __LINE__)
void lc_test_assert_near(double a, double b, double tol, const char *sa, const char *sb,
                         const char *file, int line);

/* Relative form: |a - b| <= rel * max(|a|, |b|, 1e-300). */
#define assert_rel_near(a, b, rel) \
    lc_test_assert_near((a), (b), (rel) * fmax(fmax(fabs(a), fabs(b)), 1e-300), #a, #b, \
                        __FILE__, __LINE__)

/* splitmix64: a fixed seed gives the same sequence on every machine. */
typedef struct lc_rng {
    uint64_t s;
} lc_rng;
static inline void lc_rng_seed(lc_rng *r, uint64_t seed) { r->s = seed; }
uint64_t lc_rng_next(lc_rng *r);
double lc_rng_uniform(lc_rng *r, double lo, double hi); /* [lo, hi) */
double lc_rng_normal(lc_rng *r);                        /* standard normal */

/* A random convex CCW polygon of n (<= 256) vertices: sorted angles drawn
 * on the circle of radius r about c (two may fall close together). */
void lc_test_random_convex(lc_rng *g, lc_vec2 c, double r, int n, lc_vec2 *v);


/* A counting allocator around the C library's. */
typedef struct lc_counting_alloc {
    lc_alloc alloc;
    long calls;   /* realloc calls with n > 0 */
    long frees;
    long live;    /* blocks alive */
} lc_counting_alloc;
void lc_counting_alloc_init(lc_counting_alloc *c);

/*
 * Skips. LC_TEST_SKIP prints why on stderr, counts the skip and ends the
 * test as cmocka's skip() does (reported SKIPPED, not passed). LC_RUN_TESTS
 * runs a group as cmocka_run_group_tests does and returns its result, except
 * that a group whose every test was skipped returns 77, which meson shows as
 * SKIP: an executable that checked nothing does not pass.
 */
#define LC_TEST_SKIP(why) \
    do { \
        lc_test_count_skip(why); \
        skip(); \
    } while (0)
void lc_test_count_skip(const char *why);
int lc_test_group_result(int failed, size_t tests);
#define LC_RUN_TESTS(tests, setup, teardown) \
    lc_test_group_result(cmocka_run_group_tests(tests, setup, teardown), \
                         sizeof(tests) / sizeof((tests)[0]))

/*
 * Checks against GEOS (geos_oracle.h) exist only when meson found GEOS.
 * LC_GEOS_TEST(f) registers a test that is all GEOS: without GEOS it is
 * listed under its own name and skipped (its body may then be left out of
 * the build). A test that checks GEOS beside other things ends with
 * LC_GEOS_CHECKED(): without GEOS, once the other checks have passed, it is
 * skipped, since part of what it promises was not checked.
 */
void lc_test_skip_without_geos(void **state);

/* A group teardown that ends the GEOS oracle's context (nothing without
 * GEOS), so that the leak checkers see it freed. Inline, so that only the
 * tests that use it link the oracle. */
#if LC_HAVE_GEOS
#include "geos_oracle.h"
#endif
static inline int lc_test_geos_teardown(void **state)
{
    (void)state;
#if LC_HAVE_GEOS
    oracle_finish();
#endif
    return 0;
}

/* The group setup of the tests that ask GEOS: start it, or say once that
 * the GEOS checks are skipped (GEOS not found at build time). */
static inline int lc_test_geos_setup(void **state)
{
    (void)state;
#if LC_HAVE_GEOS
    oracle_init();
#else
    print_message("NOTICE: GEOS not found at build time: the GEOS checks are skipped\n");
#endif
    return 0;
}
#if LC_HAVE_GEOS
#define LC_GEOS_TEST(f) cmocka_unit_test(f)
#define LC_GEOS_CHECKED() ((void)0)
#else
#define LC_GEOS_TEST(f) {#f, lc_test_skip_without_geos, NULL, NULL, NULL}
#define LC_GEOS_CHECKED() \
    LC_TEST_SKIP("GEOS not found at build time: the checks against GEOS did not run")
#endif

/* Path of a file under the source tree (LACUNA_SOURCE_ROOT), static buffer. */
const char *lc_test_source_path(const char *rel);

/* The files of the source tree's directory rel whose names end in suffix
 * (".json"), sorted by name, into paths (at most max); the count, or -1 when
 * the directory cannot be read. lc_test_jsonl_files: the ".jsonl" ones. */
#define LC_TEST_PATH_MAX 1024
int lc_test_files(const char *rel, const char *suffix, char (*paths)[LC_TEST_PATH_MAX], int max);
int lc_test_jsonl_files(const char *rel, char (*paths)[LC_TEST_PATH_MAX], int max);

/* One temporary directory per test executable (one at a time), made from
 * prefix + "XXXXXX" by mkdtemp (prefix such as "/tmp/lacuna_test_sim_",
 * under 250 characters, no single quote), so a run left behind says whose it
 * was. Returns 0, or -1 when it cannot be made: the shape of a cmocka group
 * setup's result. */
int lc_test_tmpdir_setup(const char *prefix);

/* Removes the directory and everything in it (rm -rf); 0, or -1 when that
 * fails. Has a cmocka group teardown's signature, so it can be passed as one;
 * does nothing when no directory was made. */
int lc_test_tmpdir_teardown(void **state);

/* The path of name inside the temporary directory. The result lives in one of
 * four static buffers used in turn: at most four results may be in use at
 * once, and a path longer than LC_TEST_PATH_MAX - 1 fails the test. */
const char *lc_test_tmp(const char *name);

/* Runs `$LACUNA_EXE ARGS` through the shell (args is shell text: quote paths
 * in it), stdout to out.json and stderr to err.txt in the temporary directory,
 * and returns its exit status. Fails the test when LACUNA_EXE is not set, the
 * command line is longer than 4095 characters, or the shell did not exit
 * normally (killed by a signal); a command killed by a signal under the shell
 * may instead show as status 128 + its number. Uses none of lc_test_tmp's
 * buffers. */
int lc_test_lacuna(const char *args);

/* Runs `$LACUNA_EXE ARGS` as lc_test_lacuna does and wants it refused as
 * bad usage or bad input: exit status 2, nothing on stdout, and on stderr
 * one line that starts with want. Fails the test otherwise, showing both. */
void lc_test_refused(const char *args, const char *want);

/* The whole file into a malloc'd string with a NUL after the last byte read
 * (free it); the byte count in *len when len is not NULL (the file may hold NUL
 * bytes of its own). NULL, without failing the test, when the file cannot be
 * opened, sized (a pipe or a terminal: ftell fails) or read, or the memory
 * cannot be had. A file that grows while read is cut at the size it had. */
char *lc_test_slurp_len(const char *path, size_t *len);
char *lc_test_slurp(const char *path);

/* s with ' turned into " (tables of JSON inputs stay readable written with
 * '), in the caller's out[n]; fails the test when it does not fit. */
const char *lc_test_unquote(const char *s, char *out, size_t n);

/* True when msg is "field: ..." for exactly this field (a codec error or
 * warning names its field first). */
bool lc_test_names_field(const char *msg, const char *field);

/* Writes the n bytes of text to path (created or truncated); fails the test
 * when the file cannot be opened or not all of it written. */
void lc_test_write_file(const char *path, const char *text, size_t n);

#endif
