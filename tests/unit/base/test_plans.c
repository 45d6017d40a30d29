/* test_plans.c - the context's register of FFTW plans (pf_plans.c): one note
 * per distinct plan set, labels naming shape and threads, and digests equal
 * to an independent FNV-1a 64 of FFTW's own plan descriptions.
 * Reference: FNV-1a 64 as published by Fowler, Noll and Vo (IETF
 * draft-eastlake-fnv): offset basis 14695981039346656037, prime
 * 1099511628211; the test vectors below are from memory of that draft's
 * table and are checked first, so a wrong reference cannot pass unnoticed. */
#include "pft.h"
#include <inttypes.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include "pf_grid.h"
#include "pf_internal.h"
#include "pf_plans.h"

static uint64_t fnv1a_ref(uint64_t h, const char *s)
{
    for (; *s; s++) {
        h ^= (unsigned char)*s;
        h *= UINT64_C(1099511628211);
    }
    return h;
}

static const uint64_t FNV_BASIS = UINT64_C(14695981039346656037);


static void reference_vectors(void **state)
{
    (void)state;
    assert_true(fnv1a_ref(FNV_BASIS, "") == UINT64_C(0xcbf29ce484222325));  /* empty input: the basis */
    assert_true(fnv1a_ref(FNV_BASIS, "a") == UINT64_C(0xaf63dc4c8601ec8c)); /* FNV-1a 64 of "a" */
}

/* Independent digest of a grid's forward/backward pair, as pf_plans.h
 * documents it: each plan's fftw_sprint_plan text followed by a newline. */
static void digest_of_pair(const pf_grid *g, char out[17])
{
    uint64_t h = FNV_BASIS;
    fftw_plan pair[2] = {g->forward, g->backward};
    for (int i = 0; i < 2; i++) {
        char *text = fftw_sprint_plan(pair[i]);
        assert_non_null(text);
        h = fnv1a_ref(fnv1a_ref(h, text), "\n");
        free(text);
    }
    snprintf(out, 17, "%016" PRIx64, h);
}

static void one_note_per_distinct_plan(void **state)
{
    pf_context *ctx = *state;
    assert_int_equal(pf_context_plan_count(ctx), 0);
    size_t n1[1] = {64}, n2[2] = {16, 8};
    double s1[1] = {1e-5}, s2[2] = {1e-5, 2e-5};
    pf_grid *a, *b, *c;
    pft_ok(pf_grid_new(ctx, 1, n1, s1, NULL, &a));
    pft_ok(pf_grid_new(ctx, 1, n1, s1, NULL, &b));
    pft_ok(pf_grid_new(ctx, 2, n2, s2, NULL, &c));
    assert_int_equal(pf_context_plan_count(ctx), 0); /* plans are made on first use */
    pft_ok(pf_grid_plan(a));
    assert_int_equal(pf_context_plan_count(ctx), 1);
    assert_string_equal(pf_context_plan_label(ctx, 0), "grid 64, 1 thread");
    char want[17];
    digest_of_pair(a, want);
    assert_string_equal(pf_context_plan_digest(ctx, 0), want);
    /* The same shape planned again (another grid) is the same plan: kept once. */
    pft_ok(pf_grid_plan(b));
    assert_int_equal(pf_context_plan_count(ctx), 1);
    pft_ok(pf_grid_plan(c));
    assert_int_equal(pf_context_plan_count(ctx), 2);
    assert_string_equal(pf_context_plan_label(ctx, 1), "grid 16x8, 1 thread");
    digest_of_pair(c, want);
    assert_string_equal(pf_context_plan_digest(ctx, 1), want);
    assert_string_not_equal(pf_context_plan_digest(ctx, 0), pf_context_plan_digest(ctx, 1));
    /* Another thread count makes new plans, noted with their thread count. */
    pft_ok(pf_context_set_threads(ctx, 2));
    pft_ok(pf_grid_plan(a));
    assert_int_equal(pf_context_plan_count(ctx), 3);
    assert_string_equal(pf_context_plan_label(ctx, 2), "grid 64, 2 threads");
    digest_of_pair(a, want);
    assert_string_equal(pf_context_plan_digest(ctx, 2), want);
    pf_grid_release(a);
    pf_grid_release(b);
    pf_grid_release(c);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(reference_vectors),
        cmocka_unit_test_setup_teardown(one_note_per_distinct_plan, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
