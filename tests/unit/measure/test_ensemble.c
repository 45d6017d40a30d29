/* test_ensemble.c - Gauss-Hermite rules against GSL, the thermal
 * coherent-state mixture of a harmonic trap against the Bose-Einstein and
 * Maxwell-Boltzmann results, and mixture measurements (Bayes update). */
#include <gsl/gsl_integration.h>
#include <stdlib.h>
#include "pft.h"
#include "pf_ensemble.h"
#include "pf_flight.h"
#include "pf_observe.h"

/* GSL's fixed-point Hermite rule (gsl_integration_fixed_hermite, weight
 * exp(-x^2)) scaled to the standard normal. */
static void hermite_matches_gsl(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    int orders[] = {1, 2, 5, 12, 30};
    for (int o = 0; o < 5; o++) {
        int M = orders[o];
        double z[64], w[64];
        pft_ok(pf_gauss_hermite_normal(ctx, M, z, w));
        gsl_integration_fixed_workspace *ws = gsl_integration_fixed_alloc(gsl_integration_fixed_hermite, (size_t)M, 0, 1, 0, 0);
        const double *gx = gsl_integration_fixed_nodes(ws), *gw = gsl_integration_fixed_weights(ws);
        double worst = 0;
        /* Compare as sets: sort ours ascending. */
        double zs[64], ws_[64];
        for (int i = 0; i < M; i++) {
            zs[i] = z[i];
            ws_[i] = w[i];
        }
        for (int i = 0; i < M; i++)
            for (int j = i + 1; j < M; j++)
                if (zs[j] < zs[i]) {
                    double t = zs[i]; zs[i] = zs[j]; zs[j] = t;
                    t = ws_[i]; ws_[i] = ws_[j]; ws_[j] = t;
                }
        for (int i = 0; i < M; i++) {
            worst = fmax(worst, fabs(zs[i] - sqrt(2.0) * gx[i]));
            worst = fmax(worst, fabs(ws_[i] - gw[i] / sqrt(PF_PI)) / fmax(gw[i] / sqrt(PF_PI), 1e-300) * 1e-3);
        }
        gsl_integration_fixed_free(ws);
        char label[80];
        snprintf(label, sizeof label, "Gauss-Hermite M=%d vs GSL fixed hermite", M);
        pft_near(worst, 0, 0, 1e-12, label);
    }
    pf_context_release(ctx);
}

static void build(pf_context *ctx, pf_grid *g, const pf_thermal_spec *sp, pf_wave ***members, double **weights,
                  size_t *count)
{
    pf_thermal_member *list;
    pf_rng r;
    pf_rng_seed(&r, 5, 0);
    pft_ok(pf_thermal_members(ctx, sp, &r, &list, count));
    *members = calloc(*count, sizeof **members);
    *weights = calloc(*count, sizeof **weights);
    double center[3] = {0, 0, 0}, s0[3];
    for (int a = 0; a < sp->dim; a++) s0[a] = pf_thermal_sigma0(sp->mass, sp->omega[a]);
    for (size_t i = 0; i < *count; i++) {
        pft_ok(pf_wave_new(g, sp->mass, &(*members)[i]));
        pft_ok(pf_wave_fill_coherent((*members)[i], center, s0, list[i].shift, list[i].kmean));
        (*weights)[i] = list[i].weight;
    }
    free(list);
}

/* Thermal cloud released from a 1D trap: the mixture's width against the
 * quantum (Bose-Einstein) result sigma^2 = sigma0^2 coth(hbar w / 2 kB T)
 * [1 + (w t)^2] (exact, textbook harmonic oscillator), and the growth against
 * the Maxwell-Boltzmann law sigma_x(t)^2 = sigma_x(0)^2 + (kB T / m) t^2
 * (standard result), which holds to 1e-3 only for kB T >> hbar omega:
 * the correction is (hbar w / kB T)^2 / 12, so hbar w / kB T = 0.05 here. */
static void thermal_expansion_1d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double omega = PF_TWO_PI * 100.0;
    double T = PF_HBAR * omega / (0.05 * PF_BOLTZMANN); /* about 96 nK */
    pf_thermal_spec sp = {1, pft_mass("87Rb"), {omega}, T, 3, 0};
    pf_grid *g = pft_grid1(ctx, 1024, 200e-6, 0); /* dx resolves the fastest node (7e6 /m) */
    pf_wave **m;
    double *w;
    size_t count;
    build(ctx, g, &sp, &m, &w, &count);
    assert_int_equal(count, 9);
    pf_mixture mix = {count, m, w};
    double coth = 1 / tanh(PF_HBAR * omega / (2 * PF_BOLTZMANN * T));
    double s0 = pf_thermal_sigma0(pft_mass("87Rb"), omega);
    pf_field f;
    double mean, var0, var;
    pft_ok(pf_mixture_field(&mix, PF_POSITION, &f));
    pft_ok(pf_field_moments(&f, &mean, &var0));
    pf_field_free(&f);
    pft_near(var0, s0 * s0 * coth, 0, 1e-10 * s0 * s0 * coth, "thermal sigma_x(0)^2 = sigma0^2 coth (Bose-Einstein)");
    double t = 6e-3;
    for (size_t i = 0; i < count; i++) pft_ok(pf_wave_fly(m[i], t));
    pft_ok(pf_mixture_field(&mix, PF_POSITION, &f));
    pft_ok(pf_field_moments(&f, &mean, &var));
    pf_field_free(&f);
    double quantum = s0 * s0 * coth * (1 + omega * omega * t * t);
    pft_near(var, quantum, 0, 1e-9 * quantum, "thermal sigma_x(t)^2 quantum harmonic-oscillator result");
    double mb = var0 + PF_BOLTZMANN * T / pft_mass("87Rb") * t * t;
    pft_near(var / mb, 1, 0, 1e-3, "sigma_x(t)^2 = sigma_x(0)^2 + kB T t^2 / m (Maxwell-Boltzmann)");
    for (size_t i = 0; i < count; i++) pf_wave_free(m[i]);
    free(m);
    free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Sampled members (1D, 2000 of them): the width follows the Bose-Einstein
 * result in expectation; the sampling error of the displacement variance is
 * sqrt(2/K) = 3%, so 4 standard errors bound the check. */
static void thermal_sampled(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double om = PF_TWO_PI * 200.0, T = 50e-9;
    pf_thermal_spec sp = {1, pft_mass("87Rb"), {om}, T, 0, 2000};
    pf_grid *g = pft_grid1(ctx, 256, 60e-6, 0);
    pf_wave **m;
    double *w;
    size_t count;
    build(ctx, g, &sp, &m, &w, &count);
    pf_mixture mix = {count, m, w};
    pf_field f;
    double mean, var;
    pft_ok(pf_mixture_field(&mix, PF_POSITION, &f));
    pft_ok(pf_field_moments(&f, &mean, &var));
    pf_field_free(&f);
    double s0 = pf_thermal_sigma0(pft_mass("87Rb"), om), nb = pf_thermal_nbar(om, T);
    double want = s0 * s0 * (2 * nb + 1);
    pft_near(var / want, 1, 0, 4 * sqrt(2.0 / count), "sampled thermal width (Bose-Einstein, 4 sampling errors)");
    for (size_t i = 0; i < count; i++) pf_wave_free(m[i]);
    free(m);
    free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* 2D Gauss-Hermite mixture (2 nodes per quadrature, 16 members): the
 * covariance is exactly diag(sigma0_a^2 coth(hbar w_a / 2 kB T)) (Bose-
 * Einstein, separable trap; the rule is exact for second moments). */
static void thermal_quadrature_2d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double om[2] = {PF_TWO_PI * 200.0, PF_TWO_PI * 120.0};
    double T = 30e-9;
    pf_thermal_spec sp = {2, pft_mass("87Rb"), {om[0], om[1]}, T, 2, 0};
    size_t n[2] = {128, 128};
    double span[2] = {40e-6, 48e-6}, origin[2] = {0, 0};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    pf_wave **m;
    double *w;
    size_t count;
    build(ctx, g, &sp, &m, &w, &count);
    assert_int_equal(count, 16);
    pf_mixture mix = {count, m, w};
    pf_field f;
    double mean[2], cov[4];
    pft_ok(pf_mixture_field(&mix, PF_POSITION, &f));
    pft_ok(pf_field_moments(&f, mean, cov));
    pf_field_free(&f);
    for (int a = 0; a < 2; a++) {
        double s0 = pf_thermal_sigma0(pft_mass("87Rb"), om[a]);
        double want = s0 * s0 / tanh(PF_HBAR * om[a] / (2 * PF_BOLTZMANN * T));
        pft_near(cov[a * 3] / want, 1, 0, 1e-9, "2D quadrature thermal variance (Bose-Einstein)");
    }
    pft_near(cov[1], 0, 0, 1e-25, "no x-y correlation in a separable trap");
    for (size_t i = 0; i < count; i++) pf_wave_free(m[i]);
    free(m);
    free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Bayes' rule for a region measurement on a 50/50 mixture of two packets on
 * either side of x = 0 (probability theory, no other source needed). */
static void mixture_region_bayes(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 256, 100e-6, 0);
    pft_gauss a = {1, {-10e-6}, {3e-6}, {0}}, b = {1, {12e-6}, {3e-6}, {0}};
    pf_wave *m[2] = {pft_gauss_wave(g, pft_mass("87Rb"), &a), pft_gauss_wave(g, pft_mass("87Rb"), &b)};
    double w[2] = {0.3, 0.7}, nw[2];
    pf_region reg = {.kind = PF_REGION_HALF_SPACE, .point = {0}, .normal = {1}};
    double pa, pb;
    pft_ok(pf_wave_region_probability(m[0], &reg, &pa));
    pft_ok(pf_wave_region_probability(m[1], &reg, &pb));
    pf_mixture mix = {2, m, w};
    int out;
    double P;
    pft_ok(pf_mixture_measure_region(&mix, &reg, NULL, 1, &out, &P, nw));
    pft_near(P, 0.3 * pa + 0.7 * pb, 0, 1e-15, "mixture outcome probability = sum w_i p_i");
    pft_near(nw[0], 0.3 * pa / P, 0, 1e-15, "posterior weight (Bayes' rule)");
    pft_near(nw[0] + nw[1], 1, 0, 1e-15, "posterior weights sum to 1");
    pft_near(pf_wave_norm(m[0]), 1, 0, 1e-12, "collapsed member renormalised");
    pf_wave_free(m[0]);
    pf_wave_free(m[1]);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(hermite_matches_gsl),
        cmocka_unit_test(thermal_expansion_1d),
        cmocka_unit_test(thermal_sampled),
        cmocka_unit_test(thermal_quadrature_2d),
        cmocka_unit_test(mixture_region_bayes),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
