/* test_reduce_compensated.c - weighted moments (pf_reduce_axis_moments) are
 * summed with Neumaier's compensated addition (Neumaier 1974, ZAMM 54, 39:
 * the "improved Kahan-Babuska" sum, which also keeps a term larger than the
 * running sum).  Reference: exact integer arithmetic of the test's own
 * numbers (common practice: sums whose exact value is an integer that a
 * plain double sum cannot reach). */
#include "pft.h"
#include <math.h>
#include "pf_grid.h"
#include "pf_internal.h"

/* n points of |z|^2 = 1 with weights 1e16, 1, ..., 1, -1e16: the exact
 * weighted sum is n - 2, which a plain sum loses entirely (1e16 + 1 rounds
 * back to 1e16, the ulp there being 2).  Checked within one block and
 * across three blocks (the compensation is carried to the end). */
static void check_sum(pf_context *ctx, size_t n)
{
    pf_grid *g;
    double span[1] = {1e-3};
    pft_ok(pf_grid_new(ctx, 1, &n, span, NULL, &g));
    double complex *z = pf_alloc(ctx, n * sizeof *z);
    double *wt = pf_alloc(ctx, n * sizeof *wt);
    assert_non_null(z);
    assert_non_null(wt);
    for (size_t i = 0; i < n; i++) {
        z[i] = 1.0;
        wt[i] = 1.0;
    }
    wt[0] = 1e16;
    wt[n - 1] = -1e16;
    const double *w[1] = {wt};
    double sums[1 + 2 * PF_MAX_DIM];
    pft_ok(pf_reduce_axis_moments(g, z, w, sums));
    assert_true(sums[0] == (double)n);
    assert_true(sums[1] == (double)(n - 2));
    /* the second moment: 2e32 + (n - 2), exact to its own rounding */
    assert_true(sums[2] == 2e32 + (double)(n - 2));
    pf_context_free(ctx, z);
    pf_context_free(ctx, wt);
    pf_grid_release(g);
}

static void weighted_sums_are_compensated(void **state)
{
    check_sum(*state, 1000);                       /* one block */
    check_sum(*state, 2 * PF_REDUCE_BLOCK + 7232); /* three blocks */
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(weighted_sums_are_compensated, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests_name("reduce_compensated", tests, NULL, NULL);
}
