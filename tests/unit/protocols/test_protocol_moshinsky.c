/* test_protocol_moshinsky.c - diffraction in time: a plane wave released
 * from an absorbing shutter (Moshinsky, Phys. Rev. 88, 625 (1952)), the
 * engine's mask + exact flight against the closed form written with the
 * complementary error function of complex argument from libcerf.
 *
 * Closed form (free propagator integrated over the half line x' < 0):
 *   psi(x, t) = (1/2) exp(i (k x - hbar k^2 t / 2m)) erfc(z),
 *   z = exp(-i pi / 4) sqrt(m / (2 hbar t)) (x - hbar k t / m),
 * so |psi|^2 = |erfc(z)|^2 / 4 for a unit-amplitude plane wave. */
#include <cerf.h>
#include "pft.h"
#include "pf_flight.h"
#include "pf_ops.h"

typedef struct plane {
    double k, left, ramp;
} plane;

/* A long flat-top plane wave: amplitude 1 on (-left, ...), switched on by a
 * smooth tanh ramp far to the left so that only the shutter edge diffracts
 * in the window we compare. */
static int plane_fn(void *user, const double *x, double complex *v)
{
    const plane *p = user;
    double env = 0.5 * (1.0 + tanh((x[0] + p->left) / p->ramp));
    *v = env * cexp(I * p->k * x[0]);
    return 0;
}

/* Worst absolute density error within 10 Fresnel lengths of the classical
 * front vt, on a grid of n points over 1.2 mm (87Rb at 1 cm/s, t = 2 ms). */
static double worst_error(size_t n)
{
    pf_context *ctx = pft_context();
    const double m = pft_mass("87Rb"), v = 1.0e-2, t = 2.0e-3;
    double span = 1.2e-3, dx = span / (double)n;
    double origin = 0.5 * dx - 0.1e-3; /* x = 0 midway between points; grid on [-0.7, 0.5] mm */
    pf_grid *g = pft_grid(ctx, 1, &n, &span, &origin);
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(g, m, &w));
    plane p = {.k = m * v / PF_HBAR, .left = 0.55e-3, .ramp = 10e-6};
    pft_ok(pf_wave_fill(w, PF_POSITION, plane_fn, &p));
    /* The shutter: everything at x > 0 is absorbed at t = 0. */
    double removed = 0;
    pft_ok(pf_wave_slits(w, &(pf_slits_spec){.axis = 0, .count = 1, .width = 0.6e-3, .center = -0.3e-3}, NULL, &removed));
    assert_true(removed > 0.4 * 0.1e-3); /* the plane wave's part beyond the shutter */
    pft_ok(pf_wave_fly(w, t));
    double *rho = malloc(n * sizeof *rho);
    pft_ok(pf_wave_density(w, PF_POSITION, rho));
    const double s = sqrt(PF_HBAR * t / m), front = PF_HBAR * p.k * t / m;
    const double complex phase = cexp(-I * PF_PI / 4) * sqrt(m / (2 * PF_HBAR * t));
    double worst = 0, worst_x = 0;
    int compared = 0;
    for (size_t i = 0; i < n; i++) {
        double x = pf_grid_x(g, 0, i);
        if (fabs(x - front) > 10 * s) continue;
        double complex e = cerfc(phase * (x - front));
        double ref = 0.25 * (creal(e) * creal(e) + cimag(e) * cimag(e));
        double err = fabs(rho[i] - ref);
        if (err > worst) {
            worst = err;
            worst_x = x;
        }
        compared++;
    }
    printf("note Moshinsky: %d points within 10 Fresnel lengths (%.3g um) of the front, worst |rho - ref| %.3e "
           "at x - vt = %.3g um (density 1 in the plateau)\n", compared, s * 1e6, worst, (worst_x - front) * 1e6);
    assert_true(compared > 300);
    free(rho);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
    return worst;
}

/* The grid cuts the sharp shutter's spectrum at its Nyquist wave number, so
 * the density error near the front falls as dx: 4e-3 of the plateau density
 * at dx = 18 nm (1.5% of the Fresnel length).  Checked: below 6e-3 there, and
 * halving dx halves it (first-order convergence to the closed form). */
static void test_diffraction_in_time(void **state)
{
    (void)state;
    double coarse = worst_error(32768), fine = worst_error(65536);
    pft_near(fine, 0.0, 0, 6e-3, "Moshinsky density vs libcerf erfc (abs, plateau 1)");
    pft_near(coarse / fine, 2.0, 0, 0.4, "Moshinsky error ratio for dx halved (first order)");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_diffraction_in_time),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
