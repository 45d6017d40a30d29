/* test_build.c - state builders against outside references:
 *   - Gaussian densities against GSL's bivariate and multivariate normal
 *     densities (gsl_ran_bivariate_gaussian_pdf,
 *     gsl_ran_multivariate_gaussian_pdf);
 *   - momentum moments of chirped Gaussians against the Wigner-function
 *     result Cov_k = S^-1/4 + C S C (textbook, e.g. any quantum-optics text
 *     on Gaussian states);
 *   - super-Gaussian second moments against Gamma-function ratios (GSL
 *     gsl_sf_gamma);
 *   - Thomas-Fermi widths <x_a^2> = R_a^2 / (d + 4) (textbook integral of
 *     the inverted parabola);
 *   - overlaps of displaced, boosted Gaussians (textbook closed form);
 *   - natural cubic spline interpolation against GSL's gsl_interp_cspline.
 * Every builder's argument checks and resolution warnings are exercised. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>
#include <complex.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <gsl/gsl_interp.h>
#include <gsl/gsl_linalg.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_sf_gamma.h>
#include "pf_algebra.h"
#include "pf_build.h"
#include "pf_constants.h"
#include "pf_observe.h"
#include "pf_species.h"
#include "pft.h"

static int warnings;
static char last_warning[1024];
static void count_warning(void *user, const char *text)
{
    (void)user;
    warnings++;
    snprintf(last_warning, sizeof last_warning, "%s", text);
}

static pf_context *new_ctx(void)
{
    pf_context *ctx = pft_context();
    pf_context_set_warn_handler(ctx, count_warning, NULL);
    return ctx;
}

static void gaussian_2d_matches_gsl_bivariate(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n[2] = {96, 80};
    double span[2] = {24e-6, 20e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("6Li"), &w));
    double sx = 1.6e-6, sy = 1.1e-6, rho = 0.6;
    pf_gaussian_spec s;
    pf_gaussian_spec_init(&s, 1.0);
    s.covariance[0][0] = sx * sx;
    s.covariance[1][1] = sy * sy;
    s.covariance[0][1] = s.covariance[1][0] = rho * sx * sy;
    s.center[0] = 0.7e-6;
    s.center[1] = -0.4e-6;
    s.wavenumber[0] = 2e6;
    s.chirp[0][0] = 1e11;
    s.chirp[0][1] = s.chirp[1][0] = 4e10;
    warnings = 0;
    pft_ok(pf_build_gaussian(w, &s, 0));
    if (warnings) print_error("unexpected warning: %s\n", last_warning);
    assert_int_equal(warnings, 0);
    double worst = 0;
    for (size_t i = 0; i < n[0]; i++)
        for (size_t j = 0; j < n[1]; j++) {
            size_t idx[2] = {i, j};
            double complex z;
            pf_wave_value(w, PF_POSITION, idx, &z);
            double x = pf_grid_x(g, 0, i) - s.center[0], y = pf_grid_x(g, 1, j) - s.center[1];
            double want = gsl_ran_bivariate_gaussian_pdf(x, y, sx, sy, rho);
            double got = creal(z) * creal(z) + cimag(z) * cimag(z);
            worst = fmax(worst, fabs(got - want) / gsl_ran_bivariate_gaussian_pdf(0, 0, sx, sy, rho));
        }
    pft_near(worst, 0, 0, 1e-12, "|psi|^2 vs bivariate normal");
    printf("ok 2D correlated chirped Gaussian density vs gsl_ran_bivariate_gaussian_pdf: max rel %.2e [GSL]\n", worst);
    /* Momentum covariance S^-1/4 + C S C (Wigner function of a chirped
     * Gaussian); mean wave number k0. */
    double mean[2], var[2];
    pft_ok(pf_wave_wavenumber_moments(w, mean, var));
    double det = s.covariance[0][0] * s.covariance[1][1] - s.covariance[0][1] * s.covariance[1][0];
    double inv[2][2] = {{s.covariance[1][1] / det, -s.covariance[0][1] / det},
                        {-s.covariance[1][0] / det, s.covariance[0][0] / det}};
    for (int a = 0; a < 2; a++) {
        double csc = 0;
        for (int b = 0; b < 2; b++)
            for (int c = 0; c < 2; c++) csc += s.chirp[a][b] * s.covariance[b][c] * s.chirp[c][a];
        pft_near(var[a], 0.25 * inv[a][a] + csc, 0, 1e-9 * var[a], "momentum variance");
        pft_near(mean[a], s.wavenumber[a], 0, 1e-9 * 2e6, "mean wave number");
    }
    printf("ok chirped 2D Gaussian: <k> = k0, Var k = S^-1/4 + C S C to 1e-9 [Gaussian Wigner function, textbook]\n");
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void gaussian_3d_matches_gsl_multivariate(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n[3] = {32, 36, 40};
    double span[3] = {16e-6, 18e-6, 20e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 3, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("133Cs"), &w));
    double cov[3][3] = {{1.2e-12, 0.3e-12, -0.2e-12}, {0.3e-12, 1.5e-12, 0.4e-12}, {-0.2e-12, 0.4e-12, 1.8e-12}};
    pf_gaussian_spec s;
    pf_gaussian_spec_init(&s, 1.0);
    memcpy(s.covariance, cov, sizeof cov);
    s.center[2] = 0.5e-6;
    pft_ok(pf_build_gaussian(w, &s, 0));
    gsl_matrix *L = gsl_matrix_alloc(3, 3);
    gsl_vector *mu = gsl_vector_calloc(3), *x = gsl_vector_alloc(3), *work = gsl_vector_alloc(3);
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++) gsl_matrix_set(L, a, b, cov[a][b] * 1e12); /* in um^2 */
    gsl_vector_set(mu, 2, 0.5);
    gsl_linalg_cholesky_decomp1(L);
    double worst = 0, peak = 0;
    for (size_t i = 0; i < n[0]; i += 3)
        for (size_t j = 0; j < n[1]; j += 2)
            for (size_t k = 0; k < n[2]; k++) {
                size_t idx[3] = {i, j, k};
                double complex z;
                pf_wave_value(w, PF_POSITION, idx, &z);
                for (int a = 0; a < 3; a++) gsl_vector_set(x, a, pf_grid_x(g, a, idx[a]) * 1e6);
                double want;
                gsl_ran_multivariate_gaussian_pdf(x, mu, L, &want, work);
                want *= 1e18; /* 1/um^3 -> 1/m^3 */
                double got = creal(z) * creal(z) + cimag(z) * cimag(z);
                worst = fmax(worst, fabs(got - want));
                peak = fmax(peak, want);
            }
    pft_near(worst / peak, 0, 0, 1e-12, "|psi|^2 vs multivariate normal");
    printf("ok 3D full-covariance Gaussian vs gsl_ran_multivariate_gaussian_pdf: max rel %.2e [GSL]\n", worst / peak);
    gsl_matrix_free(L);
    gsl_vector_free(mu);
    gsl_vector_free(x);
    gsl_vector_free(work);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void flat_top_moments_match_gamma_ratios(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n = 1024;
    double span = 300e-6;
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, &n, &span, NULL, &g));
    double orders[] = {1, 2, 4, 8};
    for (size_t i = 0; i < 4; i++) {
        pf_wave *w;
        pft_ok(pf_wave_new(g, pft_mass("88Sr"), &w));
        double c = 0, k0 = 3e6, kappa = 1.5e6, p = orders[i];
        warnings = 0;
        pft_ok(pf_build_flat_top(w, &c, &k0, &kappa, p, PF_FLAT_BOX, 1));
        if (warnings) print_error("unexpected warning: %s\n", last_warning);
    assert_int_equal(warnings, 0);
        double mean, var;
        pft_ok(pf_wave_wavenumber_moments(w, &mean, &var));
        /* density exp(-u^2p): <u^2> = Gamma(3/2p) / Gamma(1/2p). */
        double want = kappa * kappa * gsl_sf_gamma(3.0 / (2 * p)) / gsl_sf_gamma(1.0 / (2 * p));
        pft_near(var, want, 0, 1e-10 * want, "flat-top <(k-k0)^2>");
        pft_near(mean, k0, 0, 1e-10 * k0, "flat-top <k>");
        printf("ok 1D super-Gaussian p = %g: Var k rel %.1e vs kappa^2 Gamma(3/2p)/Gamma(1/2p) [GSL gsl_sf_gamma]\n", p,
               fabs(var / want - 1));
        pf_wave_free(w);
    }
    pf_grid_release(g);
    /* Round shape in 2D: <k_x^2> = kappa^2 Gamma(2/p) / (2 Gamma(1/p)). */
    size_t n2[2] = {256, 256};
    double span2[2] = {150e-6, 150e-6};
    pft_ok(pf_grid_new(ctx, 2, n2, span2, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("88Sr"), &w));
    double c[2] = {0, 0}, k0[2] = {0, 1e6}, kappa[2] = {1.5e6, 1.5e6}, p = 3;
    pft_ok(pf_build_flat_top(w, c, k0, kappa, p, PF_FLAT_ROUND, 1));
    double mean[2], var[2];
    pft_ok(pf_wave_wavenumber_moments(w, mean, var));
    double want = 1.5e6 * 1.5e6 * gsl_sf_gamma(2.0 / p) / (2 * gsl_sf_gamma(1.0 / p));
    pft_near(var[0], want, 0, 1e-9 * want, "round flat-top <kx^2>");
    pft_near(var[1], want, 0, 1e-9 * want, "round flat-top <ky^2>");
    printf("ok 2D round super-Gaussian p = 3: Var k_x rel %.1e vs kappa^2 Gamma(2/p)/(2 Gamma(1/p)) [GSL gsl_sf_gamma]\n",
           fabs(var[0] / want - 1));
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void thomas_fermi_widths(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    for (int d = 1; d <= 3; d++) {
        size_t n[3] = {d == 1 ? 4096 : 160, 160, 160};
        double span[3] = {60e-6, 60e-6, 60e-6}, r[3] = {20e-6, 16e-6, 12e-6}, c[3] = {1e-6, 0, -1e-6}, k0[3] = {0, 0, 0};
        pf_grid *g;
        pft_ok(pf_grid_new(ctx, d, n, span, NULL, &g));
        pf_wave *w;
        pft_ok(pf_wave_new(g, pft_mass("23Na"), &w));
        pft_ok(pf_build_thomas_fermi(w, c, r, k0, 1));
        double mean[3], var[3];
        pft_ok(pf_wave_position_moments(w, mean, var));
        /* Sampling the sqrt edge converges slowly (as dx^(3/2)/R^(3/2)). */
        double tol = d == 1 ? 1e-6 : 5e-5;
        for (int a = 0; a < d; a++) {
            double want = r[a] * r[a] / (d + 4.0);
            pft_near(var[a], want, 0, tol * want, "Thomas-Fermi <x^2>");
            pft_near(mean[a], c[a], 0, 1e-9, "Thomas-Fermi centre");
        }
        printf("ok %dD Thomas-Fermi: Var x rel %.1e vs R^2/(d+4) (tol %.0e) [textbook integral]\n", d,
               fabs(var[0] / (r[0] * r[0] / (d + 4.0)) - 1), tol);
        pf_wave_free(w);
        pf_grid_release(g);
    }
    pf_context_release(ctx);
}

static void gaussian_overlap_and_superposition(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n = 1024;
    double span = 200e-6;
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, &n, &span, NULL, &g));
    double m = pft_mass("40K"), sigma = 3e-6, d = 4e-6, q = 2.5e5;
    pf_wave *a, *b;
    pf_gaussian_spec s;
    pf_gaussian_spec_init(&s, sigma);
    pft_ok(pf_wave_new(g, m, &a));
    pft_ok(pf_build_gaussian(a, &s, 1));
    s.center[0] = d;
    s.wavenumber[0] = q;
    pft_ok(pf_wave_new(g, m, &b));
    pft_ok(pf_build_gaussian(b, &s, 1));
    pf_wave_to(b, PF_MOMENTUM); /* inner() must handle mixed representations */
    double complex z;
    pft_ok(pf_wave_inner(a, b, &z));
    /* |<0|d,q>| = exp(-d^2/(8 sigma^2) - q^2 sigma^2 / 2) for equal widths. */
    double want = exp(-d * d / (8 * sigma * sigma) - q * q * sigma * sigma / 2);
    pft_near(cabs(z), want, 0, 1e-12, "|<a|b>|");
    printf("ok |<a|b>| of displaced boosted Gaussians: diff %.1e vs exp(-d^2/8s^2 - q^2 s^2/2) [textbook]\n",
           fabs(cabs(z) - want));
    /* Norm of a + b = 2 + 2 Re<a|b> (linearity). */
    pft_ok(pf_wave_axpy(a, 1.0, b));
    pft_near(pf_wave_norm(a), 2 + 2 * creal(z), 0, 1e-12, "norm of a + b");
    /* Mismatched mass is refused. */
    pf_wave *c;
    pft_ok(pf_wave_new(g, pft_mass("39K"), &c));
    assert_int_equal(pf_wave_axpy(a, 1.0, c), PF_ESTATE);
    assert_non_null(strstr(pf_context_message(ctx), "equal masses"));
    pf_wave_free(a);
    pf_wave_free(b);
    pf_wave_free(c);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void orders_carry_their_probabilities(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n = 2048;
    double span = 300e-6;
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, &n, &span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pf_gaussian_spec s;
    pf_gaussian_spec_init(&s, 20e-6);
    double q = 2 * PF_TWO_PI / 780.241e-9; /* two-photon recoil at 780 nm */
    pf_order o[3] = {{-1, 0.5}, {0, 0.6 * cexp(0.3 * I)}, {1, 0.62}};
    warnings = 0;
    pft_ok(pf_build_orders(w, &s, &q, o, 3, 1));
    if (warnings) print_error("unexpected warning: %s\n", last_warning);
    assert_int_equal(warnings, 0);
    double *rho = malloc(n * sizeof *rho);
    pft_ok(pf_wave_density(w, PF_MOMENTUM, rho));
    double total = 0.25 + 0.36 + 0.62 * 0.62, dk = pf_grid_kspacing(g, 0);
    for (int j = 0; j < 3; j++) {
        double p = 0;
        for (size_t i = 0; i < n; i++) {
            double k = pf_grid_k(g, 0, pf_grid_fft_index(g, 0, i));
            if (fabs(k - o[j].n * q) < 0.5 * q) p += rho[i] * dk;
        }
        double want = creal(o[j].amplitude * conj(o[j].amplitude)) / total;
        pft_near(p, want, 0, 1e-12, "order probability");
    }
    printf("ok diffraction orders: populations |a_n|^2 / sum |a|^2 to 1e-12 [superposition of disjoint momentum packets]\n");
    free(rho);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void cubic_samples_match_gsl_spline(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n = 256;
    double span = 40e-6;
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, &n, &span, NULL, &g));
    enum { M = 23 };
    double xs[M], re[M], im[M];
    double complex v[M];
    for (int i = 0; i < M; i++) {
        xs[i] = -15e-6 + 30e-6 * pow(i / (M - 1.0), 1.3); /* uneven spacing */
        re[i] = exp(-pow(xs[i] / 5e-6, 2)) * cos(xs[i] / 3e-6);
        im[i] = exp(-pow(xs[i] / 5e-6, 2)) * sin(xs[i] / 3e-6);
        v[i] = re[i] + I * im[i];
    }
    size_t counts = M;
    const double *axes[1] = {xs};
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("4He"), &w));
    pft_ok(pf_build_sampled(w, PF_POSITION, &counts, axes, v, PF_INTERP_CUBIC, 0));
    gsl_interp *sr = gsl_interp_alloc(gsl_interp_cspline, M), *si = gsl_interp_alloc(gsl_interp_cspline, M);
    gsl_interp_init(sr, xs, re, M);
    gsl_interp_init(si, xs, im, M);
    gsl_interp_accel *acc = gsl_interp_accel_alloc();
    double worst = 0;
    for (size_t j = 0; j < n; j++) {
        double x = pf_grid_x(g, 0, j);
        double complex got;
        pf_wave_value(w, PF_POSITION, &j, &got);
        double complex want = 0;
        if (x >= xs[0] && x <= xs[M - 1])
            want = gsl_interp_eval(sr, xs, re, x, acc) + I * gsl_interp_eval(si, xs, im, x, acc);
        worst = fmax(worst, cabs(got - want));
    }
    pft_near(worst, 0, 0, 1e-13, "natural cubic spline");
    printf("ok natural cubic spline samples vs gsl_interp_cspline: max |diff| %.1e [GSL]\n", worst);
    gsl_interp_free(sr);
    gsl_interp_free(si);
    gsl_interp_accel_free(acc);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Multilinear interpolation reproduces any function that is linear along
 * each axis exactly (standard property), here on an uneven 2D mesh in
 * momentum space; grid points outside the mesh get zero. */
static void bilinear_samples_are_exact(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n[2] = {64, 48};
    double span[2] = {60e-6, 50e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, NULL, &g));
    double kx[5] = {-2e6, -1.1e6, 0.2e6, 0.9e6, 2.5e6}, ky[4] = {-1.5e6, -0.2e6, 0.4e6, 1.8e6};
    double complex v[20];
    for (int i = 0; i < 5; i++)
        for (int j = 0; j < 4; j++)
            v[i * 4 + j] = (1.0 + kx[i] / 3e6) * (2.0 - ky[j] / 2e6) + I * (0.5 * kx[i] / 1e6 + 0.1);
    size_t counts[2] = {5, 4};
    const double *axes[2] = {kx, ky};
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("164Dy"), &w));
    warnings = 0;
    pft_ok(pf_build_sampled(w, PF_MOMENTUM, counts, axes, v, PF_INTERP_LINEAR, 0));
    double worst = 0;
    int inside = 0;
    for (size_t i = 0; i < n[0]; i++)
        for (size_t j = 0; j < n[1]; j++) {
            size_t idx[2] = {i, j};
            double k1 = pf_grid_k(g, 0, i), k2 = pf_grid_k(g, 1, j);
            double complex got;
            pf_wave_value(w, PF_MOMENTUM, idx, &got);
            double complex want = 0;
            if (k1 >= kx[0] && k1 <= kx[4] && k2 >= ky[0] && k2 <= ky[3]) {
                want = (1.0 + k1 / 3e6) * (2.0 - k2 / 2e6) + I * (0.5 * k1 / 1e6 + 0.1);
                inside++;
            }
            worst = fmax(worst, cabs(got - want));
        }
    assert_true(inside > 100);
    pft_near(worst, 0, 0, 1e-13, "bilinear samples");
    assert_true(warnings >= 1); /* a box with sharp edges in k reaches the position edges */
    printf("ok 2D multilinear momentum samples reproduce a bilinear function: max |diff| %.1e [standard property]\n", worst);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void bad_arguments_and_warnings(void **state)
{
    (void)state;
    pf_context *ctx = new_ctx();
    size_t n = 128;
    double span = 20e-6;
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, &n, &span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("7Li"), &w));
    pf_gaussian_spec s;
    pf_gaussian_spec_init(&s, -1e-6);
    s.covariance[0][0] = -1e-12;
    assert_int_equal(pf_build_gaussian(w, &s, 1), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "width on axis 1"));
    pf_gaussian_spec_init(&s, 1e-6);
    s.center[0] = NAN;
    assert_int_equal(pf_build_gaussian(w, &s, 1), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "center on axis 1"));
    double c = 0, k0 = 0, kappa = 1e6;
    assert_int_equal(pf_build_flat_top(w, &c, &k0, &kappa, 0.5, PF_FLAT_BOX, 1), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "order"));
    double r = -3e-6;
    assert_int_equal(pf_build_thomas_fermi(w, &c, &r, &k0, 1), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "radius"));
    /* Too narrow: feature and Nyquist warnings with a remedy. */
    pf_gaussian_spec_init(&s, 0.05e-6);
    warnings = 0;
    pft_ok(pf_build_gaussian(w, &s, 1));
    assert_int_equal(warnings, 2);
    assert_non_null(strstr(last_warning, "Nyquist"));
    assert_non_null(strstr(last_warning, "points"));
    /* Too wide: does not fit. */
    pf_gaussian_spec_init(&s, 3e-6);
    warnings = 0;
    pft_ok(pf_build_gaussian(w, &s, 1));
    /* The builder's analytic check, then the grid guard's measured band
     * figure (pf_guard.c); the builder's text comes first, so strict mode
     * reports it (tests/lua/test_states.lua checks that text). */
    assert_int_equal(warnings, 2);
    assert_non_null(strstr(last_warning, "enlarge the span on axis 1"));
    /* A flat top too sharp for the span: the measured edge check fires. */
    kappa = 1e5;
    warnings = 0;
    pft_ok(pf_build_flat_top(w, &c, &k0, &kappa, 6, PF_FLAT_BOX, 1));
    assert_true(warnings >= 1);
    assert_non_null(strstr(last_warning, "grid edge"));
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(gaussian_2d_matches_gsl_bivariate),
        cmocka_unit_test(gaussian_3d_matches_gsl_multivariate),
        cmocka_unit_test(flat_top_moments_match_gamma_ratios),
        cmocka_unit_test(thomas_fermi_widths),
        cmocka_unit_test(gaussian_overlap_and_superposition),
        cmocka_unit_test(orders_carry_their_probabilities),
        cmocka_unit_test(cubic_samples_match_gsl_spline),
        cmocka_unit_test(bilinear_samples_are_exact),
        cmocka_unit_test(bad_arguments_and_warnings),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
