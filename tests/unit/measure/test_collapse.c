/* test_collapse.c - region measurements and Gaussian-resolution position
 * measurements: outcome probabilities, post-measurement states. */
#include <stdlib.h>
#include <string.h>
#include "pft.h"
#include "pf_collapse.h"
#include "pf_guard.h"
#include "pf_observe.h"

/* Born rule: P(yes) = region probability; after a "yes" the norm is 1 and the
 * density outside the region is zero (projection postulate). */
static void region_measurement(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {80, 64};
    double span[2] = {50e-6, 40e-6}, origin[2] = {0, 0};
    pf_grid *g;
    /* Projecting onto a sharp region puts probability up to the Nyquist
     * limit (as it physically would, beyond it); the grid guards are not the
     * subject here. */
    pft_ok(pf_context_set_guard_threshold(ctx, INFINITY));
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    pft_gauss gs = {2, {1e-6, 0}, {4e-6, 3e-6}, {0, 0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    pf_region ball = {.kind = PF_REGION_BALL, .point = {2e-6, 1e-6}, .radius = 4e-6};
    double p;
    pft_ok(pf_wave_region_probability(w, &ball, &p));
    /* Frequencies of drawn outcomes on copies: binomial, 4 standard errors. */
    pf_rng r;
    pf_rng_seed(&r, 99, 0);
    int yes = 0, trials = 400;
    double worst = 0;
    for (int t = 0; t < trials; t++) {
        pf_wave *c;
        pft_ok(pf_wave_copy(w, &c));
        int o;
        double q;
        pft_ok(pf_wave_measure_region(c, &ball, &r, -1, &o, &q));
        worst = fmax(worst, fabs(q - (o ? p : 1 - p)));
        yes += o;
        pf_wave_free(c);
    }
    pft_near(worst, 0, 0, 1e-13, "outcome probability = region probability (Born rule)");
    pft_near(yes / (double)trials, p, 0, 4 * sqrt(p * (1 - p) / trials), "drawn frequency ~ P(yes) (binomial)");
    int o;
    double q;
    pft_ok(pf_wave_measure_region(w, &ball, NULL, 1, &o, &q));
    pft_near(pf_wave_norm(w), 1, 0, 1e-13, "collapsed state has norm 1");
    double *rho = malloc(pf_grid_total(g) * sizeof *rho), *m = malloc(pf_grid_total(g) * sizeof *m);
    pft_ok(pf_wave_density(w, PF_POSITION, rho));
    pft_ok(pf_region_weights(g, &ball, m));
    double outside = 0;
    for (size_t i = 0; i < pf_grid_total(g); i++) outside += (1 - m[i]) * rho[i];
    pft_near(outside, 0, 0, 0, "density outside the region is zero (projection postulate)");
    double p2;
    pft_ok(pf_wave_region_probability(w, &ball, &p2));
    pft_near(p2, 1, 0, 1e-13, "repeated measurement gives yes with certainty");
    /* Forcing the impossible branch fails and leaves the state alone. */
    assert_int_equal(pf_wave_measure_region(w, &ball, NULL, 0, &o, &q), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "probability 0"));
    pft_near(pf_wave_norm(w), 1, 0, 1e-13, "failed forced outcome leaves the state");
    free(rho);
    free(m);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Gaussian Kraus measurement of a Gaussian (product of Gaussians, standard
 * result): outcome density N(y; c, s^2 + sigma^2); posterior |psi|^2 has mean
 * (c sigma^2 + y s^2)/(s^2 + sigma^2) and variance s^2 sigma^2/(s^2 + sigma^2). */
static void gaussian_kraus(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 512, 120e-6, 0);
    double c = 3e-6, s = 6e-6, sigma = 2e-6, y = 5.5e-6;
    pft_gauss gs = {1, {c}, {s}, {0.5e6}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    double out, dens;
    pft_ok(pf_wave_measure_position(w, &sigma, NULL, &y, &out, &dens));
    double v = s * s + sigma * sigma;
    double want = exp(-(y - c) * (y - c) / (2 * v)) / sqrt(2 * PF_PI * v);
    pft_near(dens, want, 0, 1e-10 * want, "outcome density N(y; c, s^2 + sigma^2) (Gaussian convolution)");
    double mean, var;
    pft_ok(pf_wave_position_moments(w, &mean, &var));
    pft_near(mean, (c * sigma * sigma + y * s * s) / v, 0, 1e-16, "posterior mean (Gaussian product rule)");
    pft_near(var, s * s * sigma * sigma / v, 0, 1e-10 * var, "posterior variance (Gaussian product rule)");
    pft_near(pf_wave_norm(w), 1, 0, 1e-13, "posterior norm 1");
    /* Drawn outcomes: their mean and variance follow N(c, s^2 + sigma^2). */
    pf_rng r;
    pf_rng_seed(&r, 17, 2);
    int N = 2000;
    double sum = 0, sum2 = 0;
    pft_gauss g0 = {1, {c}, {s}, {0}};
    pf_wave *w0 = pft_gauss_wave(g, pft_mass("87Rb"), &g0);
    for (int t = 0; t < N; t++) {
        pf_wave *cpy;
        pft_ok(pf_wave_copy(w0, &cpy));
        pft_ok(pf_wave_measure_position(cpy, &sigma, &r, NULL, &out, &dens));
        sum += out;
        sum2 += out * out;
        pf_wave_free(cpy);
    }
    double em = sum / N, ev = sum2 / N - em * em;
    pft_near(em, c, 0, 4 * sqrt(v / N), "drawn outcome mean (Born rule + Gaussian noise)");
    pft_near(ev, v, 0, 4 * v * sqrt(2.0 / N), "drawn outcome variance s^2 + sigma^2");
    pf_wave_free(w0);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(region_measurement),
        cmocka_unit_test(gaussian_kraus),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
