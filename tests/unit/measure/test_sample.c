/* test_sample.c - Born-rule sampling: histograms against the density by a
 * chi-square test (GSL's gsl_cdf_chisq_Q, 5% level), event moments against
 * the analytic Gaussian, and same-seed reproducibility. */
#include <gsl/gsl_cdf.h>
#include <stdlib.h>
#include <string.h>
#include "pft.h"
#include "pf_field.h"
#include "pf_sample.h"

/* 2D density of a Gaussian on a 48 x 40 grid: each cell's count against
 * N p_cell (cells with expectation >= 5, the usual chi-square rule; the rest
 * pooled). */
static void histogram_passes_chi_square(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {48, 40};
    double span[2] = {40e-6, 30e-6}, origin[2] = {1e-6, -2e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    pft_gauss gs = {2, {2e-6, -1e-6}, {4e-6, 3e-6}, {1e6, 0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    pf_field f;
    pft_ok(pf_field_for_grid(g, PF_POSITION, &f));
    pft_ok(pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL));
    pf_sampler s;
    pft_ok(pf_sampler_init(&s, &f));
    enum { N = 200000 };
    double *ev = malloc(2 * N * sizeof *ev);
    pf_rng r;
    pf_rng_seed(&r, 2024, 0);
    pf_sampler_draw(&s, &r, N, 1, ev);
    double *obs = calloc(f.total, sizeof *obs);
    for (size_t e = 0; e < N; e++) {
        size_t i = pf_field_nearest(&f, 0, ev[2 * e]), j = pf_field_nearest(&f, 1, ev[2 * e + 1]);
        obs[i * n[1] + j]++;
    }
    double cell = pf_grid_cell_volume(g), chi2 = 0, pool_o = 0, pool_e = 0;
    int bins = 0;
    for (size_t c = 0; c < f.total; c++) {
        double ex = N * f.values[c] * cell;
        if (ex >= 5) {
            chi2 += (obs[c] - ex) * (obs[c] - ex) / ex;
            bins++;
        } else {
            pool_o += obs[c];
            pool_e += ex;
        }
    }
    if (pool_e > 0) {
        chi2 += (pool_o - pool_e) * (pool_o - pool_e) / pool_e;
        bins++;
    }
    double p = gsl_cdf_chisq_Q(chi2, bins - 1);
    printf("ok sampled histogram chi-square %.1f over %d bins, p = %.3f  [GSL gsl_cdf_chisq_Q]\n", chi2, bins, p);
    assert_true(p > 0.05);
    /* Event moments: mean of the Gaussian, variance sigma^2 plus the jitter's
     * dx^2/12 (uniform distribution) - within 4 standard errors. */
    double m = 0, v = 0;
    for (size_t e = 0; e < N; e++) m += ev[2 * e];
    m /= N;
    for (size_t e = 0; e < N; e++) v += (ev[2 * e] - m) * (ev[2 * e] - m);
    v /= N;
    double dx = pf_grid_spacing(g, 0);
    pft_near(m, 2e-6, 0, 4 * 4e-6 / sqrt(N), "event mean = packet centre (analytic Gaussian)");
    pft_near(v, 16e-12 + dx * dx / 12, 0, 4 * 16e-12 * sqrt(2.0 / N), "event variance = sigma^2 + dx^2/12");
    /* Same seed, same events. */
    double *ev2 = malloc(2 * N * sizeof *ev2);
    pf_rng_seed(&r, 2024, 0);
    pf_sampler_draw(&s, &r, N, 1, ev2);
    assert_memory_equal(ev, ev2, 2 * N * sizeof *ev);
    printf("ok same seed gives the same events  [determinism requirement]\n");
    free(ev);
    free(ev2);
    free(obs);
    pf_sampler_free(&s);
    pf_field_free(&f);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* The guide-table search against a plain linear search (naive reference). */
static void guide_table_matches_linear_search(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 1000;
    double first = 0, step = 1;
    pf_field f;
    pft_ok(pf_field_new(ctx, 1, &n, &first, &step, &f));
    for (size_t i = 0; i < n; i++) f.values[i] = (i % 7 == 0) ? 0 : (double)((i * 37) % 11);
    pf_sampler s;
    pft_ok(pf_sampler_init(&s, &f));
    pf_rng r;
    pf_rng_seed(&r, 3, 3);
    for (int t = 0; t < 20000; t++) {
        double u = pf_rng_uniform(&r);
        size_t i = 0;
        while (s.cdf[i] <= u * s.total && i + 1 < n) i++;
        assert_int_equal(pf_sampler_cell(&s, u), i);
        assert_true(f.values[i] > 0);
    }
    printf("ok guide table = linear search over 20000 draws  [naive reference]\n");
    pf_sampler_free(&s);
    pf_field_free(&f);
    pf_context_release(ctx);
}

static void bad_weights_fail(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 4;
    double first = 0, step = 1;
    pf_field f;
    pft_ok(pf_field_new(ctx, 1, &n, &first, &step, &f));
    pf_sampler s;
    assert_int_equal(pf_sampler_init(&s, &f), PF_EINVAL);
    f.values[2] = -1;
    assert_int_equal(pf_sampler_init(&s, &f), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "non-negative"));
    pf_field_free(&f);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(histogram_passes_chi_square),
        cmocka_unit_test(guide_table_matches_linear_search),
        cmocka_unit_test(bad_weights_fail),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
