/*
 * test_status.c - the core's one error scheme (src/core/status.h): every
 * status has its own name, the numbers are the documented ones (callers and
 * recordings may hold them), and anything else, positive module outcomes
 * included, is "unknown". Then the scheme held to across modules: the same
 * failure gives the same number wherever it happens.
 */
#include "testutil.h"

#include <string.h>

#include "ellipse.h"
#include "grow.h"
#include "hull.h"
#include "region.h"
#include "status.h"

static void test_names(void **state)
{
    assert_int_equal(LC_OK, 0);
    assert_int_equal(LC_ERR_NO_MEMORY, -1);
    assert_int_equal(LC_ERR_BAD_INPUT, -2);
    assert_int_equal(LC_ERR_DEGENERATE, -3);
    assert_int_equal(LC_ERR_UNBOUNDED, -4);
    assert_int_equal(LC_ERR_LIBRARY, -5);
    assert_string_equal(lc_status_name(LC_OK), "ok");
    assert_string_equal(lc_status_name(LC_ERR_NO_MEMORY), "no_memory");
    assert_string_equal(lc_status_name(LC_ERR_BAD_INPUT), "bad_input");
    assert_string_equal(lc_status_name(LC_ERR_DEGENERATE), "degenerate");
    assert_string_equal(lc_status_name(LC_ERR_UNBOUNDED), "unbounded");
    assert_string_equal(lc_status_name(LC_ERR_LIBRARY), "library");
    /* degenerate input: values outside the table */
    assert_string_equal(lc_status_name(-6), "unknown");
    assert_string_equal(lc_status_name(1), "unknown");
    assert_string_equal(lc_status_name(LC_REGION_TOO_CLOSE), "unknown");
    assert_string_equal(lc_status_name(-2147483647 - 1), "unknown");
    assert_string_equal(lc_status_name(2147483647), "unknown");
    /* every error has a name of its own */
    for (int a = LC_ERR_LIBRARY; a <= LC_OK; a++)
        for (int b = a + 1; b <= LC_OK; b++)
            assert_true(strcmp(lc_status_name(a), lc_status_name(b)) != 0);
}

/* A negative or NaN size is bad input in every module that takes one. */
static void test_one_meaning(void **state)
{
    lc_vec2 tri[3] = {{0, 0}, {1, 0}, {0, 1}}, out[64];
    assert_int_equal(lc_grow_polygon(tri, 3, NAN, LC_GROW_DEFAULT_STEP, out, 64), LC_ERR_BAD_INPUT);
    lc_hull_ctx *h = lc_hull_new(NULL);
    assert_non_null(h);
    lc_vec2 bad[3] = {{0, 0}, {NAN, 0}, {0, 1}};
    assert_int_equal(lc_hull_compute(h, bad, 3, out), LC_ERR_BAD_INPUT);
    lc_hull_free(h);
    lc_halfspace hs[3] = {{{1, 0}, 1}, {{0, 1}, NAN}, {{-1, -1}, 1}};
    double scratch[LC_ELLIPSE_SCRATCH(3)];
    lc_ellipse e;
    assert_int_equal(lc_ellipse_solve(hs, 3, NULL, NULL, &e, NULL, scratch, NULL),
                     LC_ERR_BAD_INPUT);
    lc_halfspace b[2];
    assert_int_equal(lc_region_view_wedge(lc_v2(0, 0), lc_v2(0, 0), 1.5 * LC_PI, 0, NAN, b),
                     LC_ERR_BAD_INPUT);
    /* and an empty polygon is degenerate wherever it appears */
    lc_halfspace empty[4] = {{{1, 0}, -1}, {{-1, 0}, -1}, {{0, 1}, 1}, {{0, -1}, 1}};
    double s4[LC_ELLIPSE_SCRATCH(4)];
    assert_int_equal(lc_ellipse_solve(empty, 4, NULL, NULL, &e, NULL, s4, NULL),
                     LC_ERR_DEGENERATE);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_names),
        cmocka_unit_test(test_one_meaning),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
