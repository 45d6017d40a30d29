/* test_readcap.c - sizes claimed by data files (engine/io/pf_readcap.c):
 * per-axis limit, overflow of products, and the memory cap.  The expected
 * byte counts are plain integer arithmetic (2^a * 2^b = 2^(a+b)); the
 * overflow boundary is that of a 64-bit size_t (C11 7.20.3, SIZE_MAX). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <string.h>
#include "pf_context.h"
#include "pf_internal.h" /* pf_alloc: memory the engine holds */
#include "pf_readcap.h"
#include "pft.h"

static void axis_limit_and_overflow(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t bytes = 0;
    /* The 1.4 kB HDF5 file of the hostile-input report: shape (2^60,). */
    uint64_t huge[1] = {(uint64_t)1 << 60};
    assert_int_equal(pf_read_shape_bytes(ctx, "f.h5", "dataset 'psi'", 1, huge, 16, &bytes), PF_ELIMIT);
    assert_non_null(strstr(pf_context_message(ctx), "claims 1152921504606846976 entries on axis 1"));
    /* Each axis at the limit: 2^90 samples overflow 64 bits. */
    uint64_t cube[3] = {(uint64_t)1 << 30, (uint64_t)1 << 30, (uint64_t)1 << 30};
    assert_int_equal(pf_read_shape_bytes(ctx, "f.h5", "dataset 'psi'", 3, cube, 16, &bytes), PF_ELIMIT);
    assert_non_null(strstr(pf_context_message(ctx), "overflows"));
    /* 2^30 * 2^29 * 16 = 2^63 still fits; one more factor 2 does not. */
    uint64_t edge[2] = {(uint64_t)1 << 30, (uint64_t)1 << 29};
    pft_ok(pf_read_shape_bytes(ctx, "f.h5", "x", 2, edge, 16, &bytes));
    assert_true(bytes == (size_t)1 << 63);
    assert_int_equal(pf_read_shape_bytes(ctx, "f.h5", "x", 2, edge, 32, &bytes), PF_ELIMIT);
    /* An ordinary shape: 3 x 5 x 7 complex samples. */
    uint64_t small[3] = {3, 5, 7};
    pft_ok(pf_read_shape_bytes(ctx, "f.h5", "x", 3, small, 16, &bytes));
    assert_int_equal(bytes, 3 * 5 * 7 * 16);
    assert_int_equal(pf_read_add(SIZE_MAX - 1, 2), SIZE_MAX);
    assert_int_equal(pf_read_add(40, 2), 42);
    pf_context_release(ctx);
}

static void budget_is_cap_minus_used(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pft_ok(pf_context_set_memory_cap(ctx, 1 << 20));
    pft_ok(pf_read_budget(ctx, "scan.h5", 1 << 20));
    assert_int_equal(pf_read_budget(ctx, "scan.h5", (1 << 20) + 1), PF_ELIMIT);
    assert_string_equal(pf_context_message(ctx),
                        "file 'scan.h5' needs 1048577 bytes, over the memory cap (1048576 bytes, 0 in use); "
                        "raise --memory-cap if the file is what you expect");
    /* Memory the engine holds counts: a wave's storage leaves less room. */
    void *held = pf_alloc(ctx, 1 << 19);
    assert_non_null(held);
    pft_ok(pf_read_budget(ctx, "scan.h5", 1 << 19));
    assert_int_equal(pf_read_budget(ctx, "scan.h5", (1 << 19) + 1), PF_ELIMIT);
    assert_int_equal(pf_read_budget(ctx, "scan.h5", SIZE_MAX), PF_ELIMIT);
    pf_free(ctx, held, 1 << 19);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(axis_limit_and_overflow),
        cmocka_unit_test(budget_is_cap_minus_used),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
