/* test_wigner.c - the discrete Wigner function against the standard results
 * for a Gaussian and for a superposition of two separated Gaussians. */
#include <stdlib.h>
#include "pft.h"
#include "pf_field.h"
#include "pf_wigner.h"

/* Standard result (e.g. Schleich, Quantum Optics in Phase Space, ch. 3): the
 * Wigner function of the Gaussian with |psi|^2 width s, centre c, wave number
 * k0 is W(x, k) = (1/pi) exp(-(x-c)^2 / (2 s^2) - 2 s^2 (k - k0)^2)
 * (W(x, p) = W(x, k) / hbar, the (1/pi hbar) exp(...) form). */
static double w_gauss(double x, double k, double c, double s, double k0)
{
    return exp(-(x - c) * (x - c) / (2 * s * s) - 2 * s * s * (k - k0) * (k - k0)) / PF_PI;
}

static void gaussian_wigner(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 256, 80e-6, 2e-6);
    double s = 3e-6, c = 5e-6, k0 = 2.0e6;
    pft_gauss gs = {1, {c}, {s}, {k0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    size_t n = 256;
    double *W = malloc(n * n * sizeof *W);
    pft_ok(pf_wave_wigner(w, 0, PF_WIGNER_CUT, NULL, 1.0, 0, W));
    double worst = 0, dk = pf_grid_kspacing(g, 0), dx = pf_grid_spacing(g, 0);
    for (size_t j = 0; j < n; j++)
        for (size_t m = 0; m < n; m++) {
            double x = pf_grid_x(g, 0, j), k = pf_grid_k(g, 0, pf_grid_fft_index(g, 0, m));
            worst = fmax(worst, fabs(W[j * n + m] - w_gauss(x, k, c, s, k0)));
        }
    pft_near(worst * PF_PI, 0, 0, 1e-10, "Gaussian Wigner = (1/pi hbar) exp(...) (standard result)");
    /* Marginals: integral over k gives |psi(x)|^2, over x gives |phi(k)|^2. */
    double *rho = malloc(n * sizeof *rho), *mom = malloc(n * sizeof *mom);
    pft_ok(pf_wave_density(w, PF_POSITION, rho));
    pft_ok(pf_wave_density(w, PF_MOMENTUM, mom));
    double wx = 0, wk = 0, peakx = 0, peakk = 0;
    for (size_t j = 0; j < n; j++) {
        double sx = 0, sk = 0;
        for (size_t m = 0; m < n; m++) {
            sx += W[j * n + m] * dk;
            sk += W[m * n + j] * dx;
        }
        wx = fmax(wx, fabs(sx - rho[j]));
        wk = fmax(wk, fabs(sk - mom[j]));
        peakx = fmax(peakx, rho[j]);
        peakk = fmax(peakk, mom[j]);
    }
    pft_near(wx / peakx, 0, 0, 1e-12, "x marginal of W = |psi(x)|^2 (Wigner marginal property)");
    pft_near(wk / peakk, 0, 0, 1e-10, "k marginal of W = |phi(k)|^2 (Wigner marginal property)");
    free(rho);
    free(mom);
    free(W);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

typedef struct cat { double d, s; } cat;
static int cat_fn(void *user, const double *x, double complex *v)
{
    const cat *c = user;
    double a = x[0] - c->d, b = x[0] + c->d;
    *v = exp(-a * a / (4 * c->s * c->s)) + exp(-b * b / (4 * c->s * c->s));
    return 0;
}

/* Two Gaussians at +-d (same width s, at rest), normalised: the standard
 * result W = [W_+ + W_- + (2/pi) exp(-x^2/2s^2 - 2 s^2 k^2) cos(2 k d)] /
 * (2 (1 + exp(-d^2 / 2 s^2))) has a negative interference term at x = 0. */
static void cat_state_negative_term(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 256, 100e-6, 0);
    cat c = {12e-6, 2.5e-6};
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, cat_fn, &c));
    pft_ok(pf_wave_normalize(w));
    size_t n = 256;
    double *W = malloc(n * n * sizeof *W);
    pft_ok(pf_wave_wigner(w, 0, PF_WIGNER_CUT, NULL, 1.0, 0, W));
    double nrm = 2 * (1 + exp(-c.d * c.d / (2 * c.s * c.s))), worst = 0, minW = 0;
    for (size_t j = 0; j < n; j++)
        for (size_t m = 0; m < n; m++) {
            double x = pf_grid_x(g, 0, j), k = pf_grid_k(g, 0, pf_grid_fft_index(g, 0, m));
            double ref = (w_gauss(x, k, c.d, c.s, 0) + w_gauss(x, k, -c.d, c.s, 0) +
                          2 / PF_PI * exp(-x * x / (2 * c.s * c.s) - 2 * c.s * c.s * k * k) * cos(2 * k * c.d)) / nrm;
            worst = fmax(worst, fabs(W[j * n + m] - ref));
            minW = fmin(minW, W[j * n + m]);
        }
    pft_near(worst * PF_PI, 0, 0, 1e-10, "two-Gaussian superposition Wigner (standard result)");
    /* Most negative value: at x = 0, k = pi / 2d, about -(1/pi) / (1 + e^{-d^2/2s^2}). */
    double kneg = PF_PI / (2 * c.d);
    double want = (-2 / PF_PI * exp(-2 * c.s * c.s * kneg * kneg) + 2 * w_gauss(0, kneg, c.d, c.s, 0)) / nrm;
    assert_true(minW < 0.9 * want);
    printf("ok interference term negative: min W = %.4g (formula at x=0, k=pi/2d: %.4g)  [standard result]\n", minW, want);
    free(W);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* A cut through a separable 2D Gaussian is the 1D Gaussian of that axis;
 * the reduced Wigner of a separable state is the same. */
static void cut_and_reduced_2d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {128, 32};
    double span[2] = {60e-6, 30e-6}, origin[2] = {0, 0};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    pft_gauss gs = {2, {1e-6, 2e-6}, {2.5e-6, 3e-6}, {1.5e6, 0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    double *W = malloc(128 * 128 * sizeof *W), *R = malloc(128 * 128 * sizeof *R);
    size_t through[2] = {0, 20};
    pft_ok(pf_wave_wigner(w, 0, PF_WIGNER_CUT, through, 1.0, 0, W));
    pft_ok(pf_wave_wigner(w, 0, PF_WIGNER_REDUCED, through, 1.0, 0, R));
    double worst = 0, worstr = 0;
    for (size_t j = 0; j < 128; j++)
        for (size_t m = 0; m < 128; m++) {
            double x = pf_grid_x(g, 0, j), k = pf_grid_k(g, 0, pf_grid_fft_index(g, 0, m));
            double ref = w_gauss(x, k, 1e-6, 2.5e-6, 1.5e6);
            worst = fmax(worst, fabs(W[j * 128 + m] - ref));
            worstr = fmax(worstr, fabs(R[j * 128 + m] - ref));
        }
    pft_near(worst * PF_PI, 0, 0, 1e-10, "cut of a separable Gaussian (standard result)");
    pft_near(worstr * PF_PI, 0, 0, 1e-10, "reduced Wigner of a separable Gaussian (partial trace)");
    free(W);
    free(R);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(gaussian_wigner),
        cmocka_unit_test(cat_state_negative_term),
        cmocka_unit_test(cut_and_reduced_2d),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
