/* test_protocol_masks.c - probability removed by masks against Gaussian
 * integrals evaluated with GSL (gsl_sf_erf, gsl_sf_erfc). */
#include <gsl/gsl_sf_erf.h>
#include "pf_observe.h"
#include "pft.h"
#include "pf_ops.h"

/* A centred slit of half-width a on a Gaussian density of std. dev. sigma
 * removes P(|x| > a) = erfc(a / (sqrt 2 sigma)) (normal distribution; GSL).
 * The slit edges sit midway between grid points, so the discrete sum is a
 * midpoint rule (sigma / dx = 205): relative tolerance 1e-5. */
static void test_slit_removes_gaussian_tail(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 4096;
    double span = 80e-6, dx = span / (double)n;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss p = {.sigma = {4e-6}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    double a = 200.5 * dx, removed = 0;
    pft_ok(pf_wave_slits(w, &(pf_slits_spec){.axis = 0, .count = 1, .width = 2 * a}, NULL, &removed));
    double want = gsl_sf_erfc(a / (sqrt(2.0) * 4e-6));
    pft_near(removed, want, 0, 1e-5 * want, "slit removes erfc(a / sqrt2 sigma) [GSL]");
    pft_near(pf_wave_norm(w), 1.0 - want, 0, 1e-5 * want, "norm after slit = 1 - removed");
    const pf_steplog *log = pf_wave_steplog(w);
    assert_string_equal(log->steps[log->count - 1].kind, "mask");
    pft_near(log->steps[log->count - 1].removed, removed, 0, 0, "removed recorded in the step log");
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* A velocity box of full width W on a Gaussian velocity distribution of std.
 * dev. sigma_v keeps erf(W / (2 sqrt 2 sigma_v)) (GSL).  The momentum grid has
 * 21 points per sigma_v (midpoint rule): tolerance 1e-4. */
static void test_velocity_box(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 4096;
    double span = 400e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    double sigma = 1.5e-6, m = pft_mass("87Rb");
    pft_gauss p = {.sigma = {sigma}, .k0 = {m * 3e-3 / PF_HBAR}};
    pf_wave *w = pft_gauss_wave(g, m, &p);
    double sv = PF_HBAR / (2 * m * sigma); /* minimum-uncertainty velocity spread */
    double dv = PF_HBAR * pf_grid_kspacing(g, 0) / m;
    double W = 2 * 20.5 * dv; /* edges midway between momentum grid points */
    double removed;
    pft_ok(pf_wave_select_velocity(w, 0, 3e-3, W, 0, &removed));
    double kept = gsl_sf_erf(W / (2 * sqrt(2.0) * sv));
    pft_near(1 - removed, kept, 0, 1e-4, "velocity box keeps erf(W / 2 sqrt2 sigma_v) [GSL]");
    assert_int_equal(pf_wave_rep(w), PF_MOMENTUM);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_slit_removes_gaussian_tail),
        cmocka_unit_test(test_velocity_box),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
