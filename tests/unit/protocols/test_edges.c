/* test_edges.c - band-limited transmission tables of masks with edges
 * between grid points (pf_edges.c), against outside references: GSL's erf
 * for the Gaussian-softened slit, the Fourier series of a rectangular wave
 * (textbook: c_h = e^{-i pi h f} sin(pi h f) / (pi h), mean f) for the
 * grating, and GSL's Bessel J1 for the disk's transform 2 pi R^2 J1(kR)/(kR)
 * (standard result; the disk's area pi R^2 at k = 0). */
#include <gsl/gsl_sf_bessel.h>
#include <gsl/gsl_sf_erf.h>
#include "pft.h"
#include "pf_edges.h"
#include "pf_ops.h"

/* Discrete Fourier coefficient of a table: (1/n) sum_j t_j e^{-i k (x_j - x_0)}. */
static double complex coefficient(const pf_grid *g, int axis, const double complex *t, double k)
{
    size_t n = pf_grid_points(g, axis);
    double x0 = pf_grid_x(g, axis, 0);
    double complex c = 0;
    for (size_t j = 0; j < n; j++) c += t[j] * cexp(-I * k * (pf_grid_x(g, axis, j) - x0));
    return c / (double)n;
}

/* A slit with Gaussian-softened edges (rms 5 dx) is the difference of two
 * error functions, 0.5 [erf((x - a)/(sqrt2 s)) - erf((x - b)/(sqrt2 s))] (the
 * convolution of a box with a normalised Gaussian; erf from GSL).  At 5 dx
 * the band limit cuts exp(-(pi 5)^2 / 2) ~ 1e-54: agreement to rounding. */
static void test_soft_slit_is_erf_profile(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 1024;
    double span = 100e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    double dx = span / (double)n, s = 5 * dx, a = -7.3137e-6, b = 11.0071e-6;
    double complex *t = malloc(n * sizeof *t);
    pf_edges e = {PF_EDGES_EXACT, s};
    pf_edges_comb slit = {.start = a, .open = b - a, .pitch = b - a, .first = 0, .last = 0};
    pft_ok(pf_edges_comb_table(g, 0, &slit, &e, t));
    double worst = 0;
    for (size_t j = 0; j < n; j++) {
        double x = pf_grid_x(g, 0, j);
        double want = 0.5 * (gsl_sf_erf((x - a) / (sqrt(2.0) * s)) - gsl_sf_erf((x - b) / (sqrt(2.0) * s)));
        assert_true(cimag(t[j]) == 0);
        worst = fmax(worst, fabs(creal(t[j]) - want));
    }
    printf("note soft slit (rms 5 dx): worst |t - erf profile| %.2e [GSL gsl_sf_erf]\n", worst);
    pft_near(worst, 0, 0, 1e-13, NULL);
    free(t);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static int uniform_fn(void *user, const double *x, double complex *v)
{
    (void)user;
    (void)x;
    *v = 1.0;
    return 0;
}

/* A grating of period p = span / 16 and open fraction f = 0.3 offset by a
 * non-grid distance: the table's coefficients are the rectangular wave's
 * Fourier series at the harmonics and zero between them. */
static void test_grating_fourier_series(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 512;
    double span = 64e-6, p = span / 16, f = 0.3, offset = 0.37123e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    double complex *t = malloc(n * sizeof *t);
    pf_wave *w = NULL;
    pf_edges e = {PF_EDGES_EXACT, 0};
    double x0 = pf_grid_x(g, 0, 0);
    /* Through the same route as w:mask_grating: every period meeting the window. */
    pf_edges_comb comb = {.start = offset, .open = f * p, .pitch = p, .first = floor((x0 - offset) / p) - 1,
                          .last = ceil((x0 + span - offset) / p) + 1};
    pft_ok(pf_edges_comb_table(g, 0, &comb, &e, t));
    for (int h = 0; h <= 5; h++) {
        double k = 2 * PF_PI * h / p;
        /* Series referred to x0: shift theorem e^{-i k (offset - x0)}. */
        double complex want = h == 0 ? f : cexp(-I * PF_PI * h * f) * sin(PF_PI * h * f) / (PF_PI * h);
        want *= cexp(-I * k * (offset - x0));
        pft_cnear(coefficient(g, 0, t, k), want, 1e-13);
        /* Halfway between harmonics the periodic mask has no content. */
        pft_cnear(coefficient(g, 0, t, k + PF_PI / p), 0, 1e-13);
    }
    printf("ok grating table: rectangular-wave Fourier series at harmonics 0..5, zero between (textbook series)\n");
    /* The wave-level call gives the same table (kept probability = mean of
     * t^2 on a uniform state, Parseval). */
    pf_context_set_warn_handler(ctx, pft_count_warning, NULL); /* a uniform state fills the grid by design */
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    double sum2 = 0;
    for (size_t j = 0; j < n; j++) sum2 += creal(t[j]) * creal(t[j]);
    pft_ok(pf_wave_fill(w, PF_POSITION, uniform_fn, NULL));
    pft_ok(pf_wave_normalize(w));
    double removed = 0;
    pft_ok(pf_wave_mask_grating(w, 0, p, f, offset, &e, &removed));
    pft_near(1 - removed, sum2 / (double)n, 1e-12, 0, NULL);
    pf_wave_free(w);
    free(t);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* A disk of radius R centred off the grid: its table's 2D coefficients are
 * the disk's transform 2 pi R^2 J1(kR)/(kR) / (L_a L_b) times the shift phase
 * (J1 from GSL), the k = 0 one its area over the window's. */
static void test_disk_transform(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {64, 96};
    double span[2] = {40e-6, 60e-6}, R = 7.77e-6, c[2] = {1.234e-6, -2.345e-6};
    pf_grid *g = pft_grid(ctx, 2, n, span, NULL);
    size_t total = n[0] * n[1];
    double complex *t = malloc(total * sizeof *t);
    pf_edges e = {PF_EDGES_EXACT, 0};
    pft_ok(pf_edges_disk_field(g, 1, 0, c[1], c[0], R, &e, t));
    double xa = pf_grid_x(g, 0, 0), xb = pf_grid_x(g, 1, 0);
    int pairs[][2] = {{0, 0}, {1, 0}, {0, 1}, {3, -2}, {-5, 4}, {7, 7}};
    for (size_t q = 0; q < sizeof pairs / sizeof pairs[0]; q++) {
        double ka = 2 * PF_PI * pairs[q][0] / span[0], kb = 2 * PF_PI * pairs[q][1] / span[1];
        double complex got = 0;
        for (size_t i = 0; i < n[0]; i++)
            for (size_t j = 0; j < n[1]; j++)
                got += t[i * n[1] + j] *
                       cexp(-I * (ka * (pf_grid_x(g, 0, i) - xa) + kb * (pf_grid_x(g, 1, j) - xb)));
        got /= (double)total;
        double kr = hypot(ka, kb) * R;
        double airy = kr == 0 ? 1.0 : 2 * gsl_sf_bessel_J1(kr) / kr;
        double complex want = PF_PI * R * R * airy / (span[0] * span[1]) *
                              cexp(-I * (ka * (c[0] - xa) + kb * (c[1] - xb)));
        pft_cnear(got, want, 1e-14);
    }
    printf("ok disk table: 2D coefficients = 2 pi R^2 J1(kR)/(kR) with the centre's phase [GSL gsl_sf_bessel_J1]\n");
    free(t);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Bad edge descriptions are refused with PF_EINVAL. */
static void test_bad_edges(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 64;
    double span = 10e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pf_edges neg = {PF_EDGES_EXACT, -1e-9}, nan_w = {PF_EDGES_EXACT, NAN}, hard_soft = {PF_EDGES_CELLS, 1e-9},
             mode = {(pf_edge_mode)7, 0};
    assert_int_equal(pf_edges_check(g, &neg), PF_EINVAL);
    assert_int_equal(pf_edges_check(g, &nan_w), PF_EINVAL);
    assert_int_equal(pf_edges_check(g, &hard_soft), PF_EINVAL);
    assert_int_equal(pf_edges_check(g, &mode), PF_EINVAL);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_soft_slit_is_erf_profile),
        cmocka_unit_test(test_grating_fourier_series),
        cmocka_unit_test(test_disk_transform),
        cmocka_unit_test(test_bad_edges),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
