/* test_wave.c - the physical Fourier convention, Parseval, element access and
 * deterministic reductions. */
#include "pft.h"
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_observe.h"
#include "pf_wave.h"


typedef struct gauss1 {
    double sigma, centre, k0;
} gauss1;

/* Normalised Gaussian (2 pi s^2)^(-1/4) exp(-(x-c)^2/4s^2 + i k0 x). */
static int gauss_x(void *user, const double *x, double complex *v)
{
    const gauss1 *p = user;
    double d = x[0] - p->centre;
    *v = pow(2 * PF_PI * p->sigma * p->sigma, -0.25) * exp(-d * d / (4 * p->sigma * p->sigma)) * cexp(I * p->k0 * x[0]);
    return 0;
}

/* Its transform under phi(k) = (2 pi)^(-1/2) int psi e^{-ikx} dx (standard
 * Gaussian Fourier pair, e.g. any table of Fourier transforms):
 * phi(k) = (2 s^2 / pi)^(1/4) exp(-s^2 (k-k0)^2) exp(-i (k-k0) c) e^{i k0 c}. */
static double complex gauss_k(const gauss1 *p, double k)
{
    double q = k - p->k0;
    return pow(2 * p->sigma * p->sigma / PF_PI, 0.25) * exp(-p->sigma * p->sigma * q * q) * cexp(-I * k * p->centre) *
           cexp(I * p->k0 * p->centre);
}

/* Checks the convention on even and odd point counts and an off-centre
 * grid, where the e^{-ik x0} factor matters. */
static void momentum_values_follow_the_physical_convention(void **state)
{
    const size_t counts[3] = {256, 255, 300};
    const double origins[3] = {0.0, 0.37, -1.1};
    for (int c = 0; c < 3; c++) {
        pf_grid *g;
        size_t n[1] = {counts[c]};
        double span[1] = {40.0}, origin[1] = {origins[c]};
        pft_ok(pf_grid_new(*state, 1, n, span, origin, &g));
        pf_wave *w;
        pft_ok(pf_wave_new(g, 1.0, &w));
        gauss1 p = {1.3, origins[c] + 0.8, 2.5};
        pft_ok(pf_wave_fill(w, PF_POSITION, gauss_x, &p));
        for (size_t j = 0; j < n[0]; j += 7) {
            size_t idx[1] = {j};
            double complex phi;
            pft_ok(pf_wave_value(w, PF_MOMENTUM, idx, &phi));
            pft_cnear(phi, gauss_k(&p, pf_grid_k(g, 0, j)), 1e-12);
        }
        /* integral |phi|^2 dk = integral |psi|^2 dx = 1 */
        pft_near(pf_wave_norm(w), 1.0, 1e-13, 0, NULL);
        pf_wave_free(w);
        pf_grid_release(g);
    }
}

/* Building from phi(k) and reading psi(x) inverts the same convention. */
static int gauss_k_fill(void *user, const double *k, double complex *v)
{
    *v = gauss_k(user, k[0]);
    return 0;
}

static void building_from_momentum_round_trips(void **state)
{
    pf_grid *g;
    size_t n[1] = {512};
    double span[1] = {50.0}, origin[1] = {2.0};
    pft_ok(pf_grid_new(*state, 1, n, span, origin, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, 1.0, &w));
    gauss1 p = {1.1, 1.0, -3.0};
    pft_ok(pf_wave_fill(w, PF_MOMENTUM, gauss_k_fill, &p));
    assert_int_equal(pf_wave_rep(w), PF_MOMENTUM);
    for (size_t j = 0; j < n[0]; j += 11) {
        size_t idx[1] = {j};
        double complex psi, want;
        pft_ok(pf_wave_value(w, PF_POSITION, idx, &psi));
        double x = pf_grid_x(g, 0, j);
        gauss_x(&p, &x, &want);
        pft_cnear(psi, want, 1e-12);
    }
    pf_wave_free(w);
    pf_grid_release(g);
}

static void density_orders_and_set_value(void **state)
{
    pf_grid *g;
    size_t n[2] = {6, 5};
    double span[2] = {3.0, 2.0};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, 2.0, &w));
    size_t idx[2] = {4, 1};
    pft_ok(pf_wave_set_value(w, PF_POSITION, idx, 3.0 - 4.0 * I));
    double rho[30];
    pft_ok(pf_wave_density(w, PF_POSITION, rho));
    pft_near(rho[4 * 5 + 1], 25.0, 1e-15, 0, NULL);
    /* A single point has a flat |phi|^2 = |psi|^2 dx^2 / (2 pi)^2 ... in
     * ascending order every entry is equal. */
    pft_ok(pf_wave_density(w, PF_MOMENTUM, rho));
    double dx2 = pf_grid_cell_volume(g) * pf_grid_cell_volume(g);
    for (int i = 0; i < 30; i++) pft_near(rho[i], 25.0 * dx2 / (4 * PF_PI * PF_PI), 1e-12, 0, NULL);
    /* Out-of-range index and non-finite values are refused. */
    size_t bad[2] = {6, 0};
    assert_int_equal(pf_wave_set_value(w, PF_POSITION, bad, 1.0), PF_EINVAL);
    assert_int_equal(pf_wave_set_value(w, PF_POSITION, idx, NAN), PF_EINVAL);
    assert_int_equal(pf_wave_scale(w, INFINITY), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
}

static void copies_are_independent(void **state)
{
    pf_grid *g;
    size_t n[1] = {128};
    double span[1] = {24.0}; /* +-12 sigma: the truncated tail is below 1e-30 */
    pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
    pf_wave *w, *c;
    pft_ok(pf_wave_new(g, 1.0, &w));
    gauss1 p = {1.0, 0.0, 0.0};
    pft_ok(pf_wave_fill(w, PF_POSITION, gauss_x, &p));
    pft_ok(pf_wave_copy(w, &c));
    pft_ok(pf_wave_scale(c, 2.0));
    pft_near(pf_wave_norm(w), 1.0, 1e-12, 0, NULL);
    pft_near(pf_wave_norm(c), 4.0, 1e-12, 0, NULL);
    pf_wave_free(c);
    assert_int_equal(pf_wave_new(g, -1.0, &c), PF_EINVAL);
    assert_int_equal(pf_wave_new(g, NAN, &c), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
}

/* The same observable is bit-identical whatever the thread count, because
 * the reduction's block split is fixed (engine design, pf_reduce.c). */
static void reductions_do_not_depend_on_threads(void **state)
{
    pf_context *ctx = *state;
    pf_grid *g;
    size_t n[2] = {300, 257};
    double span[2] = {30.0, 20.0};
    pft_ok(pf_grid_new(ctx, 2, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, 1.0, &w));
    double complex *d = pf_wave_data(w);
    for (size_t i = 0; i < pf_grid_total(g); i++) d[i] = sin(0.001 * (double)i * (double)i) + I * cos(0.37 * (double)i);
    double m1[2], v1[2], m2[2], v2[2];
    pf_context_set_threads(ctx, 1);
    double n1 = pf_wave_norm(w);
    pft_ok(pf_wave_position_moments(w, m1, v1));
    pf_context_set_threads(ctx, 2);
    double n2 = pf_wave_norm(w);
    pft_ok(pf_wave_position_moments(w, m2, v2));
    assert_memory_equal(&n1, &n2, sizeof n1);
    assert_memory_equal(m1, m2, sizeof m1);
    assert_memory_equal(v1, v2, sizeof v1);
    pf_wave_free(w);
    pf_grid_release(g);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(momentum_values_follow_the_physical_convention, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(building_from_momentum_round_trips, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(density_orders_and_set_value, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(copies_are_independent, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(reductions_do_not_depend_on_threads, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests_name("wave", tests, NULL, NULL);
}
