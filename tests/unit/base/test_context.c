/* test_context.c - the context's accounted allocator: statuses as codes
 * (cap -> PF_ELIMIT, refusal or injected failure -> PF_ENOMEM), exact
 * charging and discharging, 64-byte alignment, the public charge calls, and
 * the fault-injection switch.  No physics here, so no outside reference. */
#include "pft.h"
#include <stdint.h>
#include <string.h>
#include "pf_context.h"
#include "pf_grid.h"
#include "pf_internal.h"
#include "pf_wave.h"


static void blocks_are_charged_exactly_and_aligned(void **state)
{
    pf_context *ctx = *state;
    assert_int_equal(pf_context_memory_used(ctx), 0);
    /* One block below and one above the mapping threshold: both paths. */
    size_t small = 1000, large = PF_CONTEXT_MAP_MIN + 12345;
    unsigned char *a = pf_context_alloc(ctx, small);
    unsigned char *b = pf_context_alloc(ctx, large);
    assert_non_null(a);
    assert_non_null(b);
    assert_int_equal((uintptr_t)a % 64, 0);
    assert_int_equal((uintptr_t)b % 64, 0);
    assert_int_equal(pf_context_memory_used(ctx), small + large);
    memset(a, 0x5a, small); /* the whole block is usable (ASan checks the ends) */
    memset(b, 0xa5, large);
    pf_context_free(ctx, b);
    assert_int_equal(pf_context_memory_used(ctx), small);
    pf_context_free(ctx, a);
    pf_context_free(ctx, NULL);
    assert_int_equal(pf_context_memory_used(ctx), 0);
    assert_int_equal(pf_context_allocations(ctx), 2);
}

static void cap_is_a_limit_and_says_so_by_code(void **state)
{
    pf_context *ctx = *state;
    pft_ok(pf_context_set_memory_cap(ctx, 4096));
    void *p = pf_context_alloc(ctx, 5000);
    assert_null(p);
    assert_int_equal(pf_context_status(ctx), PF_ELIMIT);
    assert_non_null(strstr(pf_context_message(ctx), "memory cap"));
    assert_int_equal(pf_context_memory_used(ctx), 0);
    /* An overflowed size computation (0 bytes) is a limit as well. */
    assert_null(pf_context_alloc(ctx, 0));
    assert_int_equal(pf_context_status(ctx), PF_ELIMIT);
    /* The room shrinks by what is charged, and a charge that does not fit
     * leaves the count alone. */
    assert_int_equal(pf_context_memory_room(ctx), 4096);
    pft_ok(pf_context_charge(ctx, 1000));
    assert_int_equal(pf_context_memory_room(ctx), 3096);
    assert_int_equal(pf_context_charge(ctx, 3097), PF_ELIMIT);
    assert_int_equal(pf_context_memory_used(ctx), 1000);
    pf_context_discharge(ctx, 1000);
    assert_int_equal(pf_context_memory_used(ctx), 0);
    /* A request the system refuses under a cap it fits is out of memory,
     * even though the message mentions the cap (statuses, not text). */
    pft_ok(pf_context_set_memory_cap(ctx, SIZE_MAX));
    assert_null(pf_context_alloc(ctx, SIZE_MAX / 4));
    assert_int_equal(pf_context_status(ctx), PF_ENOMEM);
    assert_non_null(strstr(pf_context_message(ctx), "cap was not reached"));
    assert_int_equal(pf_context_memory_used(ctx), 0);
}

static void injected_failure_is_out_of_memory(void **state)
{
    pf_context *ctx = *state;
    pf_context_fail_allocation(ctx, 2);
    void *a = pf_context_alloc(ctx, 64);
    assert_non_null(a);
    assert_null(pf_context_alloc(ctx, 64));
    assert_int_equal(pf_context_status(ctx), PF_ENOMEM);
    assert_non_null(strstr(pf_context_message(ctx), "injected failure of engine allocation 2"));
    void *c = pf_context_alloc(ctx, 64); /* only the one allocation fails */
    assert_non_null(c);
    assert_int_equal(pf_context_memory_used(ctx), 128);
    pf_context_free(ctx, a);
    pf_context_free(ctx, c);
}

/* A core call whose allocation fails returns the allocator's code: the wave
 * storage over the cap is PF_ELIMIT, an injected failure PF_ENOMEM, and
 * nothing stays charged either way. */
static void core_calls_return_the_allocators_code(void **state)
{
    pf_context *ctx = *state;
    size_t n[1] = {4096};
    double span[1] = {1e-4};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, n, span, NULL, &g));
    size_t base = pf_context_memory_used(ctx);
    assert_true(base > 0); /* the grid's tables are charged */
    pf_wave *w = NULL;
    pft_ok(pf_context_set_memory_cap(ctx, base + 1000));
    assert_int_equal(pf_wave_new(g, pft_mass("87Rb"), &w), PF_ELIMIT);
    assert_null(w);
    pft_ok(pf_context_set_memory_cap(ctx, (size_t)1 << 30));
    /* Both of pf_wave_new's allocations (record, storage) fail cleanly. */
    pf_context_fail_allocation(ctx, 1);
    assert_int_equal(pf_wave_new(g, pft_mass("87Rb"), &w), PF_ENOMEM);
    assert_int_equal(pf_context_memory_used(ctx), base);
    pf_context_fail_allocation(ctx, 2);
    assert_int_equal(pf_wave_new(g, pft_mass("87Rb"), &w), PF_ENOMEM);
    assert_int_equal(pf_context_memory_used(ctx), base);
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    /* The storage and the wave's own record are both charged. */
    assert_int_equal(pf_context_memory_used(ctx), base + 4096 * 16 + sizeof(struct pf_wave));
    pf_wave_free(w);
    pf_grid_release(g);
    assert_int_equal(pf_context_memory_used(ctx), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(blocks_are_charged_exactly_and_aligned, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(cap_is_a_limit_and_says_so_by_code, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(injected_failure_is_out_of_memory, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(core_calls_return_the_allocators_code, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
