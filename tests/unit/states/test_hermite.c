/* test_hermite.c - Hermite functions and oscillator eigenstates against
 * outside references:
 *   - GSL's gsl_sf_hermite_func (Debian libgsl-dev) for the function values;
 *   - the standard property that psi_n is an eigenfunction of the Fourier
 *     transform with eigenvalue (-i)^n, checked on the engine's momentum
 *     representation (reference values again from GSL);
 *   - orthonormality <m|n> = delta_mn (standard property). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <cmocka.h>
#include <complex.h>
#include <math.h>
#include <stdio.h>
#include <string.h>
#include <gsl/gsl_sf_hermite.h>
#include "pf_algebra.h"
#include "pf_build.h"
#include "pf_constants.h"
#include "pf_hermite.h"
#include "pf_species.h"
#include "pft.h"

static int warnings;
static void count_warning(void *user, const char *text)
{
    (void)user;
    (void)text;
    warnings++;
}

static void hermite_matches_gsl(void **state)
{
    (void)state;
    /* Reference: GSL gsl_sf_hermite_func, n = 0..60 and some higher orders. */
    int orders[70], count = 0;
    for (int n = 0; n <= 60; n++) orders[count++] = n;
    int high[] = {75, 100, 150, 200, 300};
    for (size_t i = 0; i < sizeof high / sizeof high[0]; i++) orders[count++] = high[i];
    double worst = 0;
    for (int i = 0; i < count; i++)
        for (double x = -30.0; x <= 30.0; x += 0.0917) {
            double got = pf_hermite_function(orders[i], x), want = gsl_sf_hermite_func(orders[i], x);
            worst = fmax(worst, fabs(got - want));
            pft_near(got, want, 0, 1e-12, "psi_n(x) vs gsl_sf_hermite_func");
        }
    printf("ok hermite vs gsl_sf_hermite_func, n <= 300, |x| <= 30: max |diff| %.2e (tol 1e-12) [GSL]\n", worst);
    /* The all-orders form gives the same numbers as the single-order one. */
    double all[61];
    pf_hermite_functions(60, 3.7, all);
    for (int n = 0; n <= 60; n++) pft_near(all[n], gsl_sf_hermite_func(n, 3.7), 0, 1e-12, "psi_0..60(3.7)");
}

/* 87Rb in a 2 pi x 100 Hz trap on a grid of 40 oscillator lengths. */
typedef struct fixture {
    pf_context *ctx;
    pf_grid *grid;
    double mass, omega, len;
} fixture;

static int setup(void **state)
{
    static fixture f;
    f.ctx = pft_context();
    pf_context_set_warn_handler(f.ctx, count_warning, NULL);
    f.mass = pft_mass("87Rb");
    f.omega = PF_TWO_PI * 100.0;
    f.len = sqrt(PF_HBAR / (f.mass * f.omega));
    size_t n = 512;
    double span = 40.0 * f.len;
    if (pf_grid_new(f.ctx, 1, &n, &span, NULL, &f.grid) != PF_OK) return -1;
    *state = &f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    pf_grid_release(f->grid);
    pf_context_release(f->ctx);
    return 0;
}

static void oscillator_is_fourier_eigenfunction(void **state)
{
    fixture *f = *state;
    warnings = 0;
    double worst = 0;
    for (int n = 0; n <= 60; n++) {
        pf_wave *w;
        pft_ok(pf_wave_new(f->grid, f->mass, &w));
        pft_ok(pf_build_oscillator(w, &f->omega, &n, NULL, NULL, 1));
        /* (-i)^n exactly, without cpow's rounding. */
        static const double complex phase[4] = {1.0, -I, -1.0, I};
        for (size_t j = 0; j < pf_grid_points(f->grid, 0); j++) {
            double complex got;
            pft_ok(pf_wave_value(w, PF_MOMENTUM, &j, &got));
            double k = pf_grid_k(f->grid, 0, j);
            double complex want = phase[n % 4] * sqrt(f->len) * gsl_sf_hermite_func(n, k * f->len);
            double err = cabs(got - want) / sqrt(f->len);
            worst = fmax(worst, err);
            if (!(err <= 1e-12)) {
                print_error("n = %d, k = %g: got %g%+gi, want %g%+gi\n", n, k, creal(got), cimag(got), creal(want),
                            cimag(want));
                fail();
            }
        }
        pf_wave_free(w);
    }
    assert_int_equal(warnings, 0); /* the grid resolves n <= 60: no false alarms */
    printf("ok phi_n(k) = (-i)^n psi_n(k l) sqrt(l), n = 0..60: max |diff| %.2e of the peak scale (tol 1e-12) "
           "[Fourier eigenfunction property; GSL values]\n", worst);
}

static void oscillator_states_are_orthonormal(void **state)
{
    fixture *f = *state;
    enum { N = 61 };
    pf_wave *w[N];
    for (int n = 0; n < N; n++) {
        pft_ok(pf_wave_new(f->grid, f->mass, &w[n]));
        pft_ok(pf_build_oscillator(w[n], &f->omega, &n, NULL, NULL, 0));
    }
    double worst = 0;
    for (int m = 0; m < N; m += 3)
        for (int n = 0; n < N; n++) {
            double complex z;
            pft_ok(pf_wave_inner(w[m], w[n], &z));
            double err = cabs(z - (m == n ? 1.0 : 0.0));
            worst = fmax(worst, err);
            pft_near(err, 0.0, 0, 1e-12, "<m|n> - delta_mn");
        }
    for (int n = 0; n < N; n++) pf_wave_free(w[n]);
    printf("ok <m|n> = delta_mn for oscillator states n <= 60: max |diff| %.2e (tol 1e-12) [standard property]\n", worst);
}

static void oscillator_rejects_bad_arguments(void **state)
{
    fixture *f = *state;
    pf_wave *w;
    pft_ok(pf_wave_new(f->grid, f->mass, &w));
    int n = PF_HERMITE_MAX_ORDER + 1;
    assert_int_equal(pf_build_oscillator(w, &f->omega, &n, NULL, NULL, 1), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(f->ctx), "quantum number n"));
    n = -1;
    assert_int_equal(pf_build_oscillator(w, &f->omega, &n, NULL, NULL, 1), PF_EINVAL);
    n = 0;
    double bad = -5;
    assert_int_equal(pf_build_oscillator(w, &bad, &n, NULL, NULL, 1), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(f->ctx), "omega"));
    bad = NAN;
    assert_int_equal(pf_build_ground_state(w, &bad, NULL, NULL, 1), PF_EINVAL);
    /* Under-resolved: n = 60 with 4 times fewer points per length warns. */
    size_t few = 96;
    double span = 40.0 * f->len;
    pf_grid *coarse;
    pft_ok(pf_grid_new(f->ctx, 1, &few, &span, NULL, &coarse));
    pf_wave *c;
    pft_ok(pf_wave_new(coarse, f->mass, &c));
    warnings = 0;
    n = 60;
    pft_ok(pf_build_oscillator(c, &f->omega, &n, NULL, NULL, 1));
    assert_true(warnings >= 2); /* feature size and Nyquist */
    pf_wave_free(c);
    pf_grid_release(coarse);
    pf_wave_free(w);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(hermite_matches_gsl),
        cmocka_unit_test_setup_teardown(oscillator_is_fourier_eigenfunction, setup, teardown),
        cmocka_unit_test_setup_teardown(oscillator_states_are_orthonormal, setup, teardown),
        cmocka_unit_test_setup_teardown(oscillator_rejects_bad_arguments, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
