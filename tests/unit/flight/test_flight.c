/* test_flight.c - exact free flight against outside references:
 *  - Gaussian width law sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2)
 *    (standard textbook result, e.g. any quantum-mechanics text's free
 *    Gaussian packet) in 1D, 2D and 3D;
 *  - Ehrenfest / exact moment laws of free motion on a non-Gaussian state;
 *  - plane waves commensurate with the grid are momentum eigenstates;
 *  - Parseval: norm conserved over many flights;
 *  - direct quadrature of the free propagator kernel
 *    K(x, x'; t) = sqrt(m / 2 pi i hbar t) exp(i m (x - x')^2 / 2 hbar t)
 *    (textbook free-particle propagator), evaluated independently here;
 *  - flying forward then backward restores the state;
 *  - the 1D flight phase at every wave number against its definition. */
#include "pft.h"
#include <stdlib.h>
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_internal.h"
#include "pf_observe.h"
#include "pf_wave.h"

/* 87Rb-like mass (kg); the exact value does not matter to these laws. */
#define MASS pft_mass("87Rb") /* from the species table */


typedef struct gauss_nd {
    int dim;
    double sigma[3], centre[3], k0[3];
} gauss_nd;

static int fill_gauss(void *user, const double *x, double complex *v)
{
    const gauss_nd *p = user;
    double complex z = 1;
    for (int a = 0; a < p->dim; a++) {
        double d = x[a] - p->centre[a];
        z *= exp(-d * d / (4 * p->sigma[a] * p->sigma[a])) * cexp(I * p->k0[a] * x[a]);
    }
    *v = z;
    return 0;
}

static double width_law(double s0, double t)
{
    double r = PF_HBAR * t / (2 * MASS * s0 * s0);
    return s0 * sqrt(1 + r * r);
}

static void gaussian_width_law(void **state, int dim, const size_t *n, const double *span, const double *sigma)
{
    pf_grid *g;
    pft_ok(pf_grid_new(*state, dim, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    gauss_nd p = {dim, {0}, {0}, {0}};
    for (int a = 0; a < dim; a++) {
        p.sigma[a] = sigma[a];
        p.centre[a] = 0.1 * sigma[a];
    }
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_gauss, &p));
    pft_ok(pf_wave_normalize(w));
    const double times[3] = {0.4e-3, 1.0e-3, 2.5e-3};
    double flown = 0;
    for (int i = 0; i < 3; i++) {
        pft_ok(pf_wave_fly(w, times[i] - flown));
        flown = times[i];
        double mean[3], var[3];
        pft_ok(pf_wave_position_moments(w, mean, var));
        for (int a = 0; a < dim; a++) {
            pft_near(sqrt(var[a]), width_law(sigma[a], flown), 1e-10, 0, NULL);
            pft_near(mean[a], p.centre[a], 0, 1e-12 * span[a], NULL);
        }
    }
    pf_wave_free(w);
    pf_grid_release(g);
}

static void width_law_1d(void **state)
{
    size_t n[1] = {2048};
    double span[1] = {120e-6}, sigma[1] = {1.0e-6};
    gaussian_width_law(state, 1, n, span, sigma);
}

static void width_law_2d(void **state)
{
    size_t n[2] = {256, 192};
    double span[2] = {90e-6, 60e-6}, sigma[2] = {1.4e-6, 2.0e-6};
    gaussian_width_law(state, 2, n, span, sigma);
}

static void width_law_3d(void **state)
{
    size_t n[3] = {96, 80, 64};
    double span[3] = {60e-6, 60e-6, 50e-6}, sigma[3] = {2.0e-6, 2.4e-6, 3.0e-6};
    gaussian_width_law(state, 3, n, span, sigma);
}

/* An asymmetric, non-Gaussian amplitude with a cubic phase (skewed packet). */
static int odd_phi(void *user, const double *k, double complex *v)
{
    (void)user;
    double q = k[0] * 1e-6; /* k in units of 1/um */
    double a = (q - 0.6) * (q - 0.6) * exp(-(q - 0.6) * (q - 0.6) / 0.18);
    double b = 0.7 * exp(-(q + 0.9) * (q + 0.9) / 0.08);
    *v = (a + b) * cexp(I * (0.8 * q * q * q - 0.3 * q));
    return 0;
}

/* Exact laws of free motion for any state (Ehrenfest; the Heisenberg
 * equations x(t) = x + p t / m, p(t) = p give them): <x> linear in t, <p>
 * and Var p constant, Var x quadratic in t with curvature Var p / m^2. */
static void moment_laws_hold_for_any_state(void **state)
{
    pf_grid *g;
    size_t n[1] = {4096};
    double span[1] = {2.0e-3};
    pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    pft_ok(pf_wave_fill(w, PF_MOMENTUM, odd_phi, NULL));
    pft_ok(pf_wave_normalize(w));
    double k0m, k0v;
    pft_ok(pf_wave_wavenumber_moments(w, &k0m, &k0v));
    const double dt = 0.15e-3;
    double xm[4], xv[4];
    for (int i = 0; i < 4; i++) {
        if (i) pft_ok(pf_wave_fly(w, dt));
        pft_ok(pf_wave_position_moments(w, &xm[i], &xv[i]));
        double km, kv;
        pft_ok(pf_wave_wavenumber_moments(w, &km, &kv));
        pft_near(km, k0m, 1e-12, 0, NULL);
        pft_near(kv, k0v, 1e-12, 0, NULL);
    }
    double v = PF_HBAR * k0m / MASS;
    for (int i = 1; i < 4; i++) pft_near(xm[i] - xm[0], v * dt * i, 1e-9, 0, NULL);
    double curvature = (xv[2] - 2 * xv[1] + xv[0]) / (dt * dt);
    pft_near(curvature, 2 * PF_HBAR * PF_HBAR * k0v / (MASS * MASS), 1e-8, 0, NULL);
    /* third difference of a quadratic vanishes */
    pft_near(xv[3] - 3 * xv[2] + 3 * xv[1] - xv[0], 0, 0, 1e-9 * xv[3], NULL);
    pf_wave_free(w);
    pf_grid_release(g);
}

static int plane_wave(void *user, const double *x, double complex *v)
{
    *v = cexp(I * *(double *)user * x[0]);
    return 0;
}

/* exp(ikx) with k = 2 pi m / L has all its weight in one momentum sample
 * and <p> = hbar k exactly (common practice: discrete Fourier basis). */
static void commensurate_plane_wave_is_an_eigenstate(void **state)
{
    pf_grid *g;
    size_t n[1] = {128};
    double span[1] = {64e-6}, origin[1] = {3e-6};
    pft_ok(pf_grid_new(*state, 1, n, span, origin, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    double k = 2 * PF_PI * 9 / span[0];
    pft_ok(pf_wave_fill(w, PF_POSITION, plane_wave, &k));
    pft_ok(pf_wave_normalize(w));
    double km, kv;
    pft_ok(pf_wave_wavenumber_moments(w, &km, &kv));
    pft_near(km, k, 1e-13, 0, NULL);
    pft_near(kv, 0, 0, 1e-20 * k * k, NULL);
    double rho[128];
    pft_ok(pf_wave_density(w, PF_MOMENTUM, rho));
    double off = 0;
    for (int j = 0; j < 128; j++)
        if (j != 64 + 9) off += rho[j];
    pft_near(off, 0, 0, 1e-24 * rho[64 + 9], NULL);
    /* Free flight only multiplies it by a global phase exp(-i hbar k^2 t / 2m). */
    size_t i0[1] = {5};
    double complex before, after;
    pft_ok(pf_wave_value(w, PF_POSITION, i0, &before));
    double t = 1.7e-3;
    pft_ok(pf_wave_fly(w, t));
    pft_ok(pf_wave_value(w, PF_POSITION, i0, &after));
    pft_cnear(after, before * cexp(-I * PF_HBAR * k * k * t / (2 * MASS)), 1e-12 * cabs(before));
    pf_wave_free(w);
    pf_grid_release(g);
}

static void norm_is_conserved_over_many_flights(void **state)
{
    pf_grid *g;
    size_t n[2] = {128, 128};
    double span[2] = {80e-6, 80e-6};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    gauss_nd p = {2, {2e-6, 3e-6}, {1e-6, -2e-6}, {1e6, 0}};
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_gauss, &p));
    pft_ok(pf_wave_normalize(w));
    for (int i = 0; i < 200; i++) {
        pft_ok(pf_wave_fly(w, 1e-5 * (1 + i % 7)));
        if (i % 10 == 0) pft_ok(pf_wave_to(w, PF_POSITION)); /* mix in transforms */
    }
    pft_near(pf_wave_norm(w), 1.0, 1e-12, 0, NULL);
    pf_wave_free(w);
    pf_grid_release(g);
}

/* A two-lobed, chirped state: not a Gaussian, so the kernel check is not a
 * Gaussian identity in disguise. */
static double complex two_lobes(double x)
{
    return exp(-(x + 1.5) * (x + 1.5) / 2.0) * cexp(I * 2.0 * x) + 0.6 * exp(-(x - 2.0) * (x - 2.0) / 1.2) * cexp(I * 0.3 * x * x);
}

static int fill_two_lobes(void *user, const double *x, double complex *v)
{
    (void)user;
    *v = two_lobes(x[0]);
    return 0;
}

static void flight_matches_direct_kernel_quadrature(void **state)
{
    /* Units where hbar / m = 1 m^2/s keep the kernel's local frequency
     * m (x - x') / hbar t below the quadrature's Nyquist limit. */
    const double m = PF_HBAR;
    const double t = 2.0;
    pf_grid *g;
    size_t n[1] = {1024};
    double span[1] = {80.0};
    pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, m, &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_two_lobes, NULL));
    pft_ok(pf_wave_fly(w, t));
    const double dx = pf_grid_spacing(g, 0);
    const double complex pre = csqrt(m / (2 * PF_PI * I * PF_HBAR * t));
    double peak = 0;
    for (size_t j = 0; j < n[0]; j++) peak = fmax(peak, cabs(two_lobes(pf_grid_x(g, 0, j))));
    for (size_t j = 512 - 60; j <= 512 + 60; j += 6) {
        double x = pf_grid_x(g, 0, j);
        double complex sum = 0;
        for (size_t i = 0; i < n[0]; i++) {
            double xp = pf_grid_x(g, 0, i);
            if (fabs(xp) > 15) continue; /* the state is below 1e-40 there */
            double d = x - xp;
            sum += cexp(I * m * d * d / (2 * PF_HBAR * t)) * two_lobes(xp);
        }
        sum *= pre * dx;
        size_t idx[1] = {j};
        double complex got;
        pft_ok(pf_wave_value(w, PF_POSITION, idx, &got));
        pft_cnear(got, sum, 1e-11 * peak);
    }
    pf_wave_free(w);
    pf_grid_release(g);
}

static void forward_then_backward_restores_the_state(void **state)
{
    pf_grid *g;
    size_t n[3] = {32, 48, 40};
    double span[3] = {40e-6, 50e-6, 45e-6};
    pft_ok(pf_grid_new(*state, 3, n, span, NULL, &g));
    pf_wave *w, *orig;
    pft_ok(pf_wave_new(g, MASS, &w));
    gauss_nd p = {3, {3e-6, 4e-6, 3.5e-6}, {1e-6, 0, -1e-6}, {5e5, -3e5, 0}};
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_gauss, &p));
    pft_ok(pf_wave_normalize(w));
    pft_ok(pf_wave_copy(w, &orig));
    pft_ok(pf_wave_fly(w, 3.3e-3));
    pft_ok(pf_wave_fly(w, -3.3e-3));
    pft_ok(pf_wave_to(w, PF_POSITION));
    const double complex *a = pf_wave_data_const(w), *b = pf_wave_data_const(orig);
    double worst = 0, peak = 0;
    for (size_t i = 0; i < pf_grid_total(g); i++) {
        worst = fmax(worst, cabs(a[i] - b[i]));
        peak = fmax(peak, cabs(b[i]));
    }
    pft_near(worst, 0, 0, 1e-12 * peak, NULL);
    pft_near(pf_wave_clock(w), 0, 0, 1e-18, NULL);
    pf_wave_free(w);
    pf_wave_free(orig);
    pf_grid_release(g);
}

static int unit_amplitude(void *user, const double *k, double complex *v)
{
    (void)user;
    (void)k;
    *v = 1.0;
    return 0;
}

/* The flight phase at every wave number against its definition,
 * phi(k, t) = phi(k, 0) exp(-i hbar k^2 t / 2m) (free motion in momentum
 * space, textbook), evaluated here with cexp.  1D grids of 1000 points (full
 * phase table) and of 65536 and 70000 points, where the engine builds the
 * phase in segments (a start value, a chirp table and powers of a ratio),
 * with the full table for the segment that holds the change from positive to
 * negative k and for a short last one; 70000 points have both.  The span
 * grows with the points so that phases reach about 100 rad in each case. */
static void flight_phase_matches_definition_1d(void **state)
{
    const size_t sizes[3] = {1000, 65536, 70000};
    for (int c = 0; c < 3; c++) {
        pf_grid *g;
        size_t n[1] = {sizes[c]};
        double span[1] = {1e-7 * (double)sizes[c]};
        pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
        pf_wave *w;
        pft_ok(pf_wave_new(g, MASS, &w));
        pft_ok(pf_wave_fill(w, PF_MOMENTUM, unit_amplitude, NULL));
        const double t = 2.8e-4;
        pft_ok(pf_wave_fly(w, t));
        double worst = 0;
        for (size_t j = 0; j < n[0]; j++) {
            double complex v;
            size_t idx[1] = {j};
            pft_ok(pf_wave_value(w, PF_MOMENTUM, idx, &v));
            double k = pf_grid_k(g, 0, j);
            worst = fmax(worst, cabs(v - cexp(-I * PF_HBAR * k * k * t / (2 * MASS))));
        }
        pft_near(worst, 0, 0, 1e-13, NULL); /* measured 3e-14 (table), 5e-14 (segments) */
        pf_wave_free(w);
        pf_grid_release(g);
    }
}

/* The flight's per-axis tables are libm's exp(-i c m^2) for every entry,
 * bit for bit, although each |m| is evaluated once (the entry of -m is a
 * copy) and a long axis is shared among threads: 1D axes of even and odd
 * length above the threading threshold, 2 threads, flights forward and
 * backward in time (implementation check, no physics claim). */
static void flight_tables_are_the_exponentials(void **state)
{
    pf_context *ctx = *state;
    pft_ok(pf_context_set_threads(ctx, 2));
    const size_t lengths[] = {16384, 16383};
    const double taus[] = {3.7e-12, -5.1e-12};
    for (size_t l = 0; l < 2; l++) {
        size_t n[1] = {lengths[l]};
        double span[1] = {1e-4};
        pf_grid *g;
        pft_ok(pf_grid_new(ctx, 1, n, span, NULL, &g));
        for (size_t q = 0; q < 2; q++) {
            pf_flight_fill_tables(g, taus[q]);
            const double dk = PF_TWO_PI / span[0], c = 0.5 * taus[q] * dk * dk;
            for (size_t j = 0; j < n[0]; j++) {
                double m = nearbyint(pf_grid_k(g, 0, j) / dk);
                double complex want = cexp(-I * (c * m * m));
                assert_memory_equal(&g->flight.phase[0][j], &want, sizeof want);
            }
        }
        pf_grid_release(g);
    }
    pft_ok(pf_context_set_threads(ctx, 1));
}

static void bad_flight_times_are_refused(void **state)
{
    pf_grid *g;
    size_t n[1] = {16};
    double span[1] = {1.0};
    pft_ok(pf_grid_new(*state, 1, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    assert_int_equal(pf_wave_fly(w, NAN), PF_EINVAL);
    assert_int_equal(pf_wave_fly(w, INFINITY), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(width_law_1d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(width_law_2d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(width_law_3d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(moment_laws_hold_for_any_state, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(commensurate_plane_wave_is_an_eigenstate, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(norm_is_conserved_over_many_flights, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(flight_matches_direct_kernel_quadrature, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(forward_then_backward_restores_the_state, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(flight_phase_matches_definition_1d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(flight_tables_are_the_exponentials, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(bad_flight_times_are_refused, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests_name("flight", tests, NULL, NULL);
}
