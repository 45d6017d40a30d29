/* test_advise.c - what the grid advisor and the long flight plan from:
 *  - the two-sided normal tail quantile z, P(|Z| > z) = tail, against GSL's
 *    inverse upper-tail normal CDF (gsl_cdf_ugaussian_Qinv at tail / 2);
 *  - the extents of a Gaussian-like request: z rms widths (GSL's quantile,
 *    at least the builders' reach), the minimum-uncertainty wave-number
 *    width 1 / (2 sigma_x) (sigma_x sigma_k = 1/2 for a Gaussian, textbook)
 *    and the FWHM 2 sqrt(2 ln 2) sigma as the smallest feature (textbook);
 *  - the extents of a wave as the long flight measures them, against GSL's
 *    quantiles for a Gaussian packet, to within a grid cell. */
#include "pft.h"
#include <gsl/gsl_cdf.h>
#include "pf_advise.h"
#include "pf_constants.h"
#include "pf_guard.h"
#include "pf_resolution.h"
#include "pf_wave.h"

static const double MASS = 86.909180531 * 1.66053906660e-27; /* 87Rb, AME2020 (from memory), CODATA 2018 u */

static void tail_quantile_matches_gsl(void **state)
{
    (void)state;
    static const double tails[] = {0.9, 0.5, 0.1, 1e-2, 1e-3, 1e-6, 1e-9, 1e-12, 1e-15};
    for (size_t i = 0; i < sizeof tails / sizeof tails[0]; i++)
        pft_near(pf_normal_tail_quantile(tails[i]), gsl_cdf_ugaussian_Qinv(tails[i] / 2), 1e-12, 0, NULL);
}

static void gaussian_request_extents(void **state)
{
    pf_context *ctx = *state;
    pf_advice_request q = {0};
    q.dim = 2;
    const double width[2] = {2e-6, 3e-6}, center[2] = {1e-6, -2e-6}, k0[2] = {1e6, 0};
    /* A guard threshold of 1e-12 puts z beyond the builders' reach of 6. */
    pft_ok(pf_context_set_guard_threshold(ctx, 1e-12));
    pft_ok(pf_advice_gaussian(ctx, &q, width, NULL, center, k0));
    double z = gsl_cdf_ugaussian_Qinv(0.5e-12);
    assert_true(z > PF_GAUSS_REACH);
    for (int a = 0; a < 2; a++) {
        pft_near(q.x_lo[a], center[a] - z * width[a], 1e-12, 1e-18, NULL);
        pft_near(q.x_hi[a], center[a] + z * width[a], 1e-12, 1e-18, NULL);
        pft_near(q.k_lo[a], k0[a] - z / (2 * width[a]), 1e-12, 1e-6, NULL);
        pft_near(q.k_hi[a], k0[a] + z / (2 * width[a]), 1e-12, 1e-6, NULL);
        pft_near(q.feature[a], 2 * sqrt(2 * log(2.0)) * width[a], 1e-15, 0, NULL);
    }
    /* The default threshold (1e-6, tail 1e-6): z = 4.89 < 6, so the reach. */
    pft_ok(pf_context_set_guard_threshold(ctx, PF_GUARD_DEFAULT_THRESHOLD));
    assert_true(gsl_cdf_ugaussian_Qinv(0.5e-6) < PF_GAUSS_REACH);
    const double kw[2] = {4e5, 5e5};
    pft_ok(pf_advice_gaussian(ctx, &q, width, kw, NULL, NULL));
    for (int a = 0; a < 2; a++) {
        pft_near(q.x_hi[a], PF_GAUSS_REACH * width[a], 1e-15, 0, NULL);
        pft_near(q.k_lo[a], -PF_GAUSS_REACH * kw[a], 1e-15, 0, NULL);
    }
    const double bad[2] = {2e-6, 0};
    assert_int_equal(pf_advice_gaussian(ctx, &q, bad, NULL, NULL, NULL), PF_EINVAL);
}

static int fill_gaussian(void *user, const double *x, double complex *v)
{
    const double *p = user; /* centre, width, wave number */
    double d = x[0] - p[0];
    *v = exp(-d * d / (4 * p[1] * p[1])) * cexp(I * p[2] * x[0]);
    return 0;
}

static void flight_extents_match_gaussian_quantiles(void **state)
{
    pf_context *ctx = *state;
    const double s = 1e-6, par[3] = {2e-6, s, 3e6};
    const size_t n[1] = {1024};
    const double span[1] = {40e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    pf_grid_release(g);
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_gaussian, (void *)par));
    pft_ok(pf_wave_normalize(w));
    double xlo, xhi, klo, khi;
    pft_ok(pf_wave_flight_extents(w, &xlo, &xhi, &klo, &khi));
    /* Default guard threshold 1e-6: the tail is 1e-6, z = Q^-1(tail / 2). */
    double z = gsl_cdf_ugaussian_Qinv(pf_flight_extent_tail(ctx) / 2);
    double dx = span[0] / (double)n[0], dk = PF_TWO_PI / span[0];
    pft_near(xlo, par[0] - z * s, 0, dx, NULL);
    pft_near(xhi, par[0] + z * s, 0, dx, NULL);
    pft_near(klo, par[2] - z / (2 * s), 0, dk, NULL);
    pft_near(khi, par[2] + z / (2 * s), 0, dk, NULL);
    pf_wave_free(w);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(tail_quantile_matches_gsl),
        cmocka_unit_test_setup_teardown(gaussian_request_extents, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(flight_extents_match_gaussian_quantiles, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
