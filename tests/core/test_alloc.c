/*
 * test_alloc.c - the core's one allocation hook (alloc.h): lc_grow grows a
 * buffer geometrically from 16 elements, never calls the allocator when the
 * buffer is big enough, keeps the contents, and on failure (the allocator's
 * or a size that does not fit) leaves buffer and capacity as they were;
 * lc_release frees once and zeroes the capacity.
 *
 * Outside check: the count of allocator calls for n elements grown one at a
 * time is the closed form of doubling from 16, 1 + ceil(log2(n / 16)).
 */
#include "testutil.h"

#include <limits.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* An allocator that fails on demand, counting every call it gets. */
typedef struct failing_alloc {
    lc_alloc alloc;
    bool fail; /* refuse every request for memory (frees still work) */
    long calls, frees;
} failing_alloc;

static void *failing_realloc(void *data, void *p, size_t n)
{
    failing_alloc *f = data;
    if (n == 0) {
        f->frees++;
        free(p);
        return NULL;
    }
    f->calls++;
    return f->fail ? NULL : realloc(p, n);
}

static void failing_init(failing_alloc *f)
{
    *f = (failing_alloc){.alloc = {failing_realloc, f}};
}

/* Capacity after growing an empty buffer to need: 16 doubled until it holds need. */
static int doubled(int need)
{
    long c = 16;
    while (c < need)
        c *= 2;
    return (int)c;
}

static void test_grow_sizes(void **state)
{
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    double *p = NULL;
    int cap = 0;
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 1), 0);
    assert_non_null(p);
    assert_int_equal(cap, 16);
    assert_int_equal(ca.calls, 1);
    /* room enough: no call, the same block */
    double *same = p;
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 16), 0);
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 0), 0);
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, -5), 0);
    assert_ptr_equal(p, same);
    assert_int_equal(cap, 16);
    assert_int_equal(ca.calls, 1);
    /* one past: doubled; far past: doubled until it fits, in one call */
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 17), 0);
    assert_int_equal(cap, 32);
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 1000), 0);
    assert_int_equal(cap, 1024);
    assert_int_equal(ca.calls, 3);
    assert_int_equal(ca.live, 1);
    LC_RELEASE(&ca.alloc, p, cap);
    assert_null(p);
    assert_int_equal(cap, 0);
    assert_int_equal(ca.frees, 1);
    assert_int_equal(ca.live, 0);
}

/* Grown one element at a time to n: 1 + ceil(log2(n / 16)) calls. */
static void test_grow_geometric(void **state)
{
    static const int ns[] = {1, 16, 17, 100, 1000, 4096, 4097, 100000};
    for (size_t k = 0; k < sizeof ns / sizeof ns[0]; k++) {
        lc_counting_alloc ca;
        lc_counting_alloc_init(&ca);
        int *p = NULL, cap = 0;
        for (int i = 1; i <= ns[k]; i++) {
            assert_int_equal(LC_GROW(&ca.alloc, p, cap, i), 0);
            p[i - 1] = i; /* the new element is writable (ASan checks the bound) */
        }
        int want = ns[k] <= 16 ? 1 : 1 + (int)ceil(log2(ns[k] / 16.0));
        assert_int_equal(ca.calls, want);
        assert_int_equal(cap, doubled(ns[k]));
        for (int i = 1; i <= ns[k]; i++) /* contents kept across every move */
            assert_int_equal(p[i - 1], i);
        LC_RELEASE(&ca.alloc, p, cap);
        assert_int_equal(ca.live, 0);
    }
}

/* A capacity that is not a power of two (a buffer sized elsewhere) doubles
 * from itself; below 16 it starts at 16. */
static void test_grow_from_odd_capacity(void **state)
{
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    char *p = NULL;
    int cap = 0;
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 20), 0);
    assert_int_equal(cap, 32);
    cap = 20; /* as if it had been sized to 20 */
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 21), 0);
    assert_int_equal(cap, 40);
    cap = 5;
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 6), 0);
    assert_int_equal(cap, 16);
    LC_RELEASE(&ca.alloc, p, cap);
    assert_int_equal(ca.live, 0);
}

/* The allocator says no: -1, and the buffer, its contents and capacity are
 * what they were; once it says yes again, growing works. */
static void test_failure_leaves_buffer(void **state)
{
    failing_alloc fa;
    failing_init(&fa);
    int *p = NULL, cap = 0;
    fa.fail = true;
    assert_int_equal(LC_GROW(&fa.alloc, p, cap, 1), -1);
    assert_null(p);
    assert_int_equal(cap, 0);
    fa.fail = false;
    assert_int_equal(LC_GROW(&fa.alloc, p, cap, 10), 0);
    for (int i = 0; i < 10; i++)
        p[i] = 7 * i;
    int *before = p;
    fa.fail = true;
    assert_int_equal(LC_GROW(&fa.alloc, p, cap, 17), -1);
    assert_ptr_equal(p, before);
    assert_int_equal(cap, 16);
    for (int i = 0; i < 10; i++)
        assert_int_equal(p[i], 7 * i);
    /* no room needed: no call, even to a failing allocator */
    long calls = fa.calls;
    assert_int_equal(LC_GROW(&fa.alloc, p, cap, 16), 0);
    assert_int_equal(fa.calls, calls);
    fa.fail = false;
    assert_int_equal(LC_GROW(&fa.alloc, p, cap, 17), 0);
    assert_int_equal(cap, 32);
    for (int i = 0; i < 10; i++)
        assert_int_equal(p[i], 7 * i);
    LC_RELEASE(&fa.alloc, p, cap);
    assert_int_equal(fa.frees, 1);
}

/* Sizes that do not fit an int count or a size_t byte count fail before
 * the allocator is asked, leaving the buffer as it was. */
static void test_sizes_that_do_not_fit(void **state)
{
    failing_alloc fa;
    failing_init(&fa);
    char *p = NULL;
    int cap = 0;
    /* 16 doubled past INT_MAX: 2^31 elements do not fit the int capacity */
    assert_int_equal(LC_GROW(&fa.alloc, p, cap, INT_MAX), -1);
    assert_int_equal(lc_grow(&fa.alloc, (void **)&p, &cap, (INT_MAX / 2) + 2, 1), -1);
    /* 16 elements of SIZE_MAX / 8 bytes overflow size_t */
    assert_int_equal(lc_grow(&fa.alloc, (void **)&p, &cap, 1, SIZE_MAX / 8), -1);
    assert_int_equal(fa.calls, 0);
    assert_null(p);
    assert_int_equal(cap, 0);
    /* the largest count that fits: 2^30 elements (a request the allocator
     * may refuse; it is asked once) */
    fa.fail = true;
    assert_int_equal(lc_grow(&fa.alloc, (void **)&p, &cap, (INT_MAX / 2) + 1, 1), -1);
    assert_int_equal(fa.calls, 1);
    assert_null(p);
    assert_int_equal(cap, 0);
}

/* A NULL allocator is the C library's; lc_alloc_default frees on n == 0. */
static void test_default_allocator(void **state)
{
    long *p = NULL;
    int cap = 0;
    assert_int_equal(LC_GROW(NULL, p, cap, 40), 0);
    assert_int_equal(cap, 64);
    for (int i = 0; i < 40; i++)
        p[i] = -i;
    assert_int_equal(LC_GROW(lc_alloc_default(), p, cap, 65), 0);
    assert_int_equal(cap, 128);
    for (int i = 0; i < 40; i++)
        assert_int_equal(p[i], -i);
    LC_RELEASE(NULL, p, cap);
    assert_null(p);
    assert_int_equal(cap, 0);
    const lc_alloc *d = lc_alloc_default();
    void *q = d->realloc(d->data, NULL, 24);
    assert_non_null(q);
    assert_null(d->realloc(d->data, q, 0));
    assert_null(d->realloc(d->data, NULL, 0)); /* freeing nothing is allowed */
}

/* Releasing an empty buffer calls nothing; releasing twice frees once. */
static void test_release_empty_and_twice(void **state)
{
    lc_counting_alloc ca;
    lc_counting_alloc_init(&ca);
    float *p = NULL;
    int cap = 0;
    LC_RELEASE(&ca.alloc, p, cap);
    assert_int_equal(ca.frees, 0);
    assert_int_equal(ca.calls, 0);
    assert_int_equal(LC_GROW(&ca.alloc, p, cap, 3), 0);
    LC_RELEASE(&ca.alloc, p, cap);
    LC_RELEASE(&ca.alloc, p, cap);
    assert_int_equal(ca.frees, 1);
    assert_int_equal(ca.live, 0);
    assert_null(p);
    assert_int_equal(cap, 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_grow_sizes),
        cmocka_unit_test(test_grow_geometric),
        cmocka_unit_test(test_grow_from_odd_capacity),
        cmocka_unit_test(test_failure_leaves_buffer),
        cmocka_unit_test(test_sizes_that_do_not_fit),
        cmocka_unit_test(test_default_allocator),
        cmocka_unit_test(test_release_empty_and_twice),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
