/* test_protocol_pulses.c - thin phase pulses against closed forms: the
 * Raman-Nath diffraction orders of a standing-wave grating (Bessel functions
 * from GSL) and the lens / kick phases. */
#include <gsl/gsl_sf_bessel.h>
#include "pf_observe.h"
#include "pft.h"
#include "pf_ops.h"

/* A thin phase grating exp(i phi cos(2 pi x / d)) on a plane wave puts
 * probability J_n(phi)^2 into order n (Jacobi-Anger expansion; Raman-Nath
 * diffraction), with amplitude i^n J_n(phi).  GSL gsl_sf_bessel_Jn. */
static void test_grating_orders_are_bessel(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    const double d = 2e-6, phi = 1.7;
    const size_t per = 32, periods = 8;
    size_t n = per * periods;
    double span = d * (double)periods;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss flat = {.sigma = {1e9}}; /* a plane wave on this grid */
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &flat);
    pft_ok(pf_wave_grating(w, 0, phi, d, 0.0));
    pft_ok(pf_wave_to(w, PF_MOMENTUM));
    const double complex *S = pf_wave_data(w);
    double total = 0;
    for (int order = -5; order <= 5; order++) {
        size_t idx = (size_t)((order * (int)periods + (int)n) % (int)n); /* storage index of k = 2 pi order / d */
        double P = span * (creal(S[idx]) * creal(S[idx]) + cimag(S[idx]) * cimag(S[idx]));
        double J = gsl_sf_bessel_Jn(order, phi);
        char label[80];
        snprintf(label, sizeof label, "grating order %+d population = J_n(phi)^2 [GSL]", order);
        pft_near(P, J * J, 0, 1e-12, label);
        /* amplitude i^n J_n: the phase relative to order 0 */
        double complex rel = S[idx] / S[0];
        double complex want = cpow(I, order) * J / gsl_sf_bessel_J0(phi);
        snprintf(label, sizeof label, "grating order %+d amplitude = i^n J_n(phi)", order);
        pft_near(cabs(rel - want), 0.0, 0, 1e-11, label);
        total += P;
    }
    pft_near(total, 1.0, 0, 1e-6, "orders -5..5 carry all but J tail");
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* The lens imparts the velocity field v(x) = -(x - c) / f: a narrow packet
 * at x1 leaves with mean velocity -(x1 - c)/f (classical thin lens; common
 * practice), and a kick adds hbar k / m. */
static void test_lens_and_kick_velocities(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 2048;
    double span = 200e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss p = {.x0 = {30e-6}, .sigma = {2e-6}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    double c = 10e-6, f = 5e-3;
    pft_ok(pf_wave_lens(w, 0, f, &c));
    double k, kv;
    pft_ok(pf_wave_wavenumber_moments(w, &k, &kv));
    double v = PF_HBAR * k / pft_mass("87Rb");
    pft_near(v, -(30e-6 - c) / f, 0, 1e-9 * (20e-6 / f), "lens: mean velocity -(x1 - c)/f");
    double kick = 7 * pf_grid_kspacing(g, 0);
    pft_ok(pf_wave_kick(w, &kick));
    double k2;
    pft_ok(pf_wave_wavenumber_moments(w, &k2, NULL));
    pft_near(k2 - k, kick, 0, 1e-9 * kick, "kick adds k (hbar k momentum)");
    assert_int_equal(pf_wave_lens(w, 0, 0.0, NULL), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "focal time"));
    double bad = NAN;
    assert_int_equal(pf_wave_grating(w, 0, 1.0, 0.0, 0.0), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "period"));
    assert_int_equal(pf_wave_kick(w, &bad), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_grating_orders_are_bessel),
        cmocka_unit_test(test_lens_and_kick_velocities),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
