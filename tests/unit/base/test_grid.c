/* test_grid.c - grid validation, coordinates, index orders and plan sharing. */
#include "pft.h"
#include <string.h>
#include "pf_constants.h"
#include "pf_grid.h"
#include "pf_internal.h"
#include "pf_wave.h"


/* The grid a set of samples was taken on.  In position the coordinates are
 * the grid's own points (pf_grid.h's layout: origin at index floor(n/2)); in
 * momentum the DFT relation dk = 2 pi / (N dx) (common practice) fixes the
 * position grid whose transform has the samples' spacing: span N dx. */
static void grid_axis_from_samples(void **state)
{
    pf_context *ctx = *state;
    size_t n[1] = {48};
    double span[1] = {36e-6}, origin[1] = {-2.5e-6}, got_span = 0, got_origin = 1;
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, n, span, origin, &g));
    pft_ok(pf_grid_axis_from_samples(ctx, pf_grid_x_table(g, 0), n[0], 0, &got_span, &got_origin));
    pft_near(got_span, span[0], 1e-12, 0, NULL);
    pft_near(got_origin, origin[0], 1e-12, 0, NULL);
    pf_grid_release(g);
    /* Wave numbers of an N = 64 transform of a grid of dx = 0.75 um, in
     * ascending order: k_j = (j - N/2) 2 pi / (N dx). */
    double k[64], dx = 0.75e-6;
    for (int j = 0; j < 64; j++) k[j] = (j - 32) * 2 * PF_PI / (64 * dx);
    pft_ok(pf_grid_axis_from_samples(ctx, k, 64, 1, &got_span, &got_origin));
    pft_near(got_span, 64 * dx, 1e-12, 0, NULL);
    pft_near(got_origin, 0, 0, 0, NULL);
    /* Not uniform, descending, or too few: refused, outputs untouched. */
    k[17] += 1e-3 * (k[1] - k[0]);
    got_span = -1;
    assert_int_equal(pf_grid_axis_from_samples(ctx, k, 64, 1, &got_span, &got_origin), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "coordinate 18"));
    double down[3] = {3, 2, 1};
    assert_int_equal(pf_grid_axis_from_samples(ctx, down, 3, 0, &got_span, &got_origin), PF_EINVAL);
    assert_int_equal(pf_grid_axis_from_samples(ctx, down, 1, 0, &got_span, &got_origin), PF_EINVAL);
    assert_true(got_span == -1);
}

static void rejects_bad_shapes(void **state)
{
    pf_context *ctx = *state;
    pf_grid *g;
    size_t n1[1] = {1}, n2[2] = {64, 64};
    double s1[1] = {1.0}, s2[2] = {1.0, NAN}, neg[1] = {-1.0};
    assert_int_equal(pf_grid_new(ctx, 0, n2, s1, NULL, &g), PF_EINVAL);
    assert_int_equal(pf_grid_new(ctx, 4, n2, s1, NULL, &g), PF_EINVAL);
    assert_int_equal(pf_grid_new(ctx, 1, n1, s1, NULL, &g), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "at least 4"));
    /* The range of pf_grid.h (PF_GRID_*): inside every derived quantity is a
     * normal double; outside, results overflowed or underflowed unnoticed
     * (span 1e300 gave width inf, span 1e-320 gave norm inf). */
    size_t n3[1] = {3}, n4[1] = {4}, n64a[1] = {64};
    double huge[1] = {1e300}, tiny[1] = {1e-320}, top[1] = {1e30}, fine[1] = {64e-30}, one[1] = {1.0};
    double far[1] = {1.1e30};
    assert_int_equal(pf_grid_new(ctx, 1, n3, s1, NULL, &g), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "got 3"));
    assert_int_equal(pf_grid_new(ctx, 1, n64a, huge, NULL, &g), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "at most 1e+30 m"));
    assert_non_null(strstr(pf_context_message(ctx), "got 1e+300 m"));
    assert_int_equal(pf_grid_new(ctx, 1, n64a, tiny, NULL, &g), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "spacing on axis 1"));
    assert_int_equal(pf_grid_new(ctx, 1, n64a, one, far, &g), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "origin on axis 1"));
    /* The limits themselves are accepted. */
    pft_ok(pf_grid_new(ctx, 1, n4, top, NULL, &g));
    pf_grid_release(g);
    pft_ok(pf_grid_new(ctx, 1, n64a, fine, NULL, &g));
    pf_grid_release(g);
    assert_int_equal(pf_grid_new(ctx, 2, n2, s2, NULL, &g), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "axis 2"));
    size_t n64[1] = {64};
    assert_int_equal(pf_grid_new(ctx, 1, n64, neg, NULL, &g), PF_EINVAL);
    double origin[1] = {INFINITY};
    assert_int_equal(pf_grid_new(ctx, 1, n64, s1, origin, &g), PF_EINVAL);
    assert_null(g);
}

static void memory_cap_is_checked_before_allocating(void **state)
{
    pf_context *ctx = *state;
    pf_context_set_memory_cap(ctx, 1 << 20); /* 1 MiB */
    size_t n[2] = {1024, 1024};               /* 16 MiB per wave function */
    double s[2] = {1, 1};
    pf_grid *g;
    assert_int_equal(pf_grid_new(ctx, 2, n, s, NULL, &g), PF_ELIMIT);
    assert_non_null(strstr(pf_context_message(ctx), "memory cap"));
    /* A product that overflows size_t is refused, not wrapped. */
    size_t huge[3] = {(size_t)1 << 30, (size_t)1 << 30, (size_t)1 << 30};
    double s3[3] = {1, 1, 1};
    pf_context_set_memory_cap(ctx, (size_t)1 << 40);
    assert_int_not_equal(pf_grid_new(ctx, 3, huge, s3, NULL, &g), PF_OK);
}

static void coordinates_are_centred_on_the_origin(void **state)
{
    pf_grid *g;
    size_t n[2] = {8, 7};
    double span[2] = {4.0, 7.0}, origin[2] = {1.5, -2.0};
    pft_ok(pf_grid_new(*state, 2, n, span, origin, &g));
    /* Even n: x_j = origin + (j - n/2) dx, the origin is point n/2. */
    pft_near(pf_grid_spacing(g, 0), 0.5, 0, 0, NULL);
    pft_near(pf_grid_x(g, 0, 4), 1.5, 0, 0, NULL);
    pft_near(pf_grid_x(g, 0, 0), 1.5 - 2.0, 1e-15, 0, NULL);
    /* Odd n: symmetric about the origin. */
    pft_near(pf_grid_x(g, 1, 3), -2.0, 0, 0, NULL);
    pft_near(pf_grid_x(g, 1, 0) + pf_grid_x(g, 1, 6), -4.0, 1e-15, 0, NULL);
    pft_near(pf_grid_cell_volume(g), 0.5, 1e-15, 0, NULL);
    pf_grid_release(g);
}

/* FFT order as numpy.fft.fftfreq defines it (common practice): for n = 8,
 * m = 0 1 2 3 -4 -3 -2 -1; for n = 7, m = 0 1 2 3 -3 -2 -1. */
static void wave_numbers_follow_fft_order(void **state)
{
    pf_grid *g;
    size_t n[2] = {8, 7};
    double span[2] = {2.0, 3.0};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    const int m8[8] = {0, 1, 2, 3, -4, -3, -2, -1}, m7[7] = {0, 1, 2, 3, -3, -2, -1};
    for (size_t j = 0; j < 8; j++) pft_near(pf_grid_k(g, 0, j), m8[j] * PF_TWO_PI / 2.0, 1e-15, 0, NULL);
    for (size_t j = 0; j < 7; j++) pft_near(pf_grid_k(g, 1, j), m7[j] * PF_TWO_PI / 3.0, 1e-15, 0, NULL);
    pft_near(pf_grid_knyquist(g, 0), PF_PI / 0.25, 1e-15, 0, NULL);
    /* Ascending order visits k from the most negative up, and maps back. */
    for (int a = 0; a < 2; a++) {
        double prev = -INFINITY;
        for (size_t i = 0; i < n[a]; i++) {
            size_t j = pf_grid_fft_index(g, a, i);
            assert_true(pf_grid_k(g, a, j) > prev);
            prev = pf_grid_k(g, a, j);
            assert_int_equal(pf_grid_ascending_index(g, a, j), i);
        }
    }
    pf_grid_release(g);
}

static void plans_are_made_once_and_shared(void **state)
{
    pf_grid *g;
    size_t n[1] = {256};
    double span[1] = {1.0};
    pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
    pf_wave *a, *b;
    pft_ok(pf_wave_new(g, 1.0, &a));
    pft_ok(pf_wave_new(g, 1.0, &b));
    pft_ok(pf_wave_to(a, PF_MOMENTUM));
    fftw_plan fwd = g->forward;
    assert_non_null(fwd);
    pft_ok(pf_wave_to(b, PF_MOMENTUM));
    pft_ok(pf_wave_to(a, PF_POSITION));
    assert_ptr_equal(g->forward, fwd); /* the second wave reused the plan */
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
}

static void grid_outlives_its_handle_while_waves_hold_it(void **state)
{
    pf_grid *g;
    size_t n[1] = {32};
    double span[1] = {1.0};
    pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, 1.0, &w));
    pf_grid_release(g); /* the wave keeps its own reference */
    assert_int_equal(pf_grid_points(pf_wave_grid(w), 0), 32);
    pf_wave_free(w);
}

/* The momentum-representation factors (span / sqrt(2 pi)) exp(-i k x0) are,
 * bit for bit, the definition with the exponent reduced by libm's fmod on
 * the integer lattice (the grid forms fmod(y, 1) as y - trunc(y), a zero
 * keeping y's sign): origins that put the turns on whole numbers (both
 * signs of zero), odd and even counts. */
static void momentum_factors_follow_their_definition(void **state)
{
    pf_context *ctx = *state;
    static const double origins[] = {0.0, 1e-6, -3.3e-5, 7.77e-3, -2.5e-9};
    static const size_t counts[] = {4, 5, 64, 255, 4096};
    for (size_t o = 0; o < sizeof origins / sizeof origins[0]; o++)
        for (size_t c = 0; c < sizeof counts / sizeof counts[0]; c++) {
            size_t n = counts[c];
            double span = 1e-4 * (double)(1 + c);
            pf_grid *g;
            pft_ok(pf_grid_new(ctx, 1, &n, &span, &origins[o], &g));
            double x0 = origins[o] - (double)(n / 2) * (span / (double)n);
            for (size_t j = 0; j < n; j++) {
                double m = j < (n + 1) / 2 ? (double)j : (double)j - (double)n;
                double complex want = span / sqrt(PF_TWO_PI) * cexp(-I * PF_TWO_PI * fmod(m * (x0 / span), 1.0));
                assert_memory_equal(&g->kfactor[0][j], &want, sizeof want);
            }
            pf_grid_release(g);
        }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(grid_axis_from_samples, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(rejects_bad_shapes, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(memory_cap_is_checked_before_allocating, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(coordinates_are_centred_on_the_origin, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(wave_numbers_follow_fft_order, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(momentum_factors_follow_their_definition, pft_setup,
                                        pft_teardown),
        cmocka_unit_test_setup_teardown(plans_are_made_once_and_shared, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(grid_outlives_its_handle_while_waves_hold_it, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests_name("grid", tests, NULL, NULL);
}
