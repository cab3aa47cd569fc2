/*
 * testutil.h - what every lacuna test shares: cmocka's includes in the order
 * 1.1.5 needs, a tolerance assertion (1.1.5 has no assert_float_equal), a
 * seeded random source, and a counting allocator for the "no allocation per
 * frame once warm" checks.
 */
#ifndef LC_TESTUTIL_H
#define LC_TESTUTIL_H

#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "alloc.h"
#include "geom.h"

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

/* A counting allocator around the C library's. */
typedef struct lc_counting_alloc {
    lc_alloc alloc;
    long calls;   /* realloc calls with n > 0 */
    long frees;
    long live;    /* blocks alive */
} lc_counting_alloc;
void lc_counting_alloc_init(lc_counting_alloc *c);

/* Path of a file under the source tree (LACUNA_SOURCE_ROOT), static buffer. */
const char *lc_test_source_path(const char *rel);

/* The .jsonl files of the source tree's directory rel, sorted by name, into
 * paths (at most max); the count, or -1 when the directory cannot be read. */
#define LC_TEST_PATH_MAX 1024
int lc_test_jsonl_files(const char *rel, char (*paths)[LC_TEST_PATH_MAX], int max);

#endif
