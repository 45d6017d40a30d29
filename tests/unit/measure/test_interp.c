/* test_interp.c - pf_wave_values_at: the band-limited interpolant between
 * grid points, against the closed-form Gaussian (a Gaussian sampled on a
 * grid that resolves it is its own interpolant to rounding: its transform
 * is negligible beyond Nyquist and its tails beyond the cell), in 3D, plus
 * the properties of the symmetric trigonometric interpolant (real samples
 * give real values; samples are reproduced) and thread independence. */
#include "pft.h"
#include "pf_interp.h"

static double complex gauss3(const pft_gauss *p, const double *x)
{
    double complex z = 1.0;
    for (int a = 0; a < 3; a++) {
        double u = x[a] - p->x0[a];
        z *= pow(2 * PF_PI * p->sigma[a] * p->sigma[a], -0.25) *
             cexp(-u * u / (4 * p->sigma[a] * p->sigma[a]) + I * p->k0[a] * u); /* the phase convention of pft_gauss_fn */
    }
    return z;
}

/* 3D moving Gaussian (48 x 56 x 64 points, dx = 0.5 um), 40 points off the grid. */
static void test_gaussian_3d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[3] = {48, 56, 64};
    double span[3] = {24e-6, 28e-6, 32e-6};
    pf_grid *g = pft_grid(ctx, 3, n, span, NULL);
    pft_gauss p = {.x0 = {0.3e-6, -0.2e-6, 0.5e-6}, .sigma = {1.0e-6, 1.1e-6, 1.2e-6}, .k0 = {1e6, -5e5, 2e5}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    double pts[40 * 3];
    double complex got[40];
    for (int i = 0; i < 40; i++) {
        pts[3 * i] = -3e-6 + 0.1537e-6 * i;
        pts[3 * i + 1] = 2.5e-6 - 0.1291e-6 * i;
        pts[3 * i + 2] = -2e-6 + 0.1113e-6 * i;
    }
    pft_ok(pf_wave_values_at(w, 40, pts, got));
    double worst = 0;
    for (int i = 0; i < 40; i++) worst = fmax(worst, cabs(got[i] - gauss3(&p, pts + 3 * i)));
    double peak = cabs(gauss3(&p, p.x0));
    printf("note 3D Gaussian: worst |psi_at - closed form| %.2e of the peak\n", worst / peak);
    pft_near(worst / peak, 0, 0, 1e-12, NULL);
    /* Same bits on one and two threads. */
    double complex again[40];
    pft_ok(pf_context_set_threads(ctx, 2));
    pft_ok(pf_wave_values_at(w, 40, pts, again));
    assert_memory_equal(got, again, sizeof got);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Real samples with content at Nyquist (an even axis): the symmetric
 * interpolant is real everywhere and passes through every sample. */
static void test_real_samples_real_interpolant(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 32;
    double span = 32e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    unsigned seed = 12345;
    double vals[32];
    for (size_t j = 0; j < n; j++) {
        seed = seed * 1103515245u + 12345u;
        vals[j] = (double)(seed >> 16 & 0x7fff) / 32768.0 - 0.5;
        size_t idx = j;
        pft_ok(pf_wave_set_value(w, PF_POSITION, &idx, vals[j]));
    }
    double pts[64];
    double complex got[64];
    for (int i = 0; i < 64; i++) pts[i] = pf_grid_x(g, 0, 0) + (i * 0.5) * (span / (double)n);
    pft_ok(pf_wave_values_at(w, 64, pts, got));
    for (int i = 0; i < 64; i++) {
        pft_near(cimag(got[i]), 0, 0, 1e-14, NULL);
        if (i % 2 == 0) pft_near(creal(got[i]), vals[i / 2], 0, 1e-14, NULL);
    }
    double bad = 1e-3 + pf_grid_x(g, 0, n - 1);
    assert_int_equal(pf_wave_values_at(w, 1, &bad, got), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_gaussian_3d),
        cmocka_unit_test(test_real_samples_real_interpolant),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
