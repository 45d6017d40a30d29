/* test_fringe.c - fringe period, visibility and phase against two-beam
 * interference, and covariance, overlap and fidelity against analytic
 * Gaussians. */
#include <gsl/gsl_cdf.h>
#include <stdlib.h>
#include "pft.h"
#include "pf_algebra.h"
#include "pf_field.h"
#include "pf_fringe.h"
#include "pf_measure.h"

typedef struct beams { double complex a, b; double k1, k2; } beams;
static int beams_fn(void *user, const double *x, double complex *v)
{
    const beams *p = user;
    *v = p->a * cexp(I * p->k1 * x[0]) + p->b * cexp(I * p->k2 * x[0]);
    return 0;
}

/* Two-beam interference (textbook optics): |a e^{ik1 x} + b e^{ik2 x}|^2 =
 * |a|^2 + |b|^2 + 2|a||b| cos((k1 - k2) x + arg a - arg b), so the period is
 * 2 pi / (k1 - k2), V = 2|a||b| / (|a|^2 + |b|^2), phase = arg a - arg b. */
static void two_beam_fringes(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 1024, 200e-6, 0);
    double dk = pf_grid_kspacing(g, 0);
    beams p = {0.8 * cexp(0.7 * I), 0.45 * cexp(-0.4 * I), 37 * dk, 5 * dk};
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, beams_fn, &p));
    double *rho = malloc(1024 * sizeof *rho), *x = malloc(1024 * sizeof *x);
    pft_ok(pf_wave_density(w, PF_POSITION, rho));
    for (size_t j = 0; j < 1024; j++) x[j] = pf_grid_x(g, 0, j);
    pf_fringe_fit fit;
    /* A window that does not hold a whole number of fringes. */
    pft_ok(pf_fringe_analyse(ctx, x, rho, 1024, -61.3e-6, 43.9e-6, 0, &fit));
    double A = cabs(p.a), B = cabs(p.b);
    pft_near(fit.period, PF_TWO_PI / (p.k1 - p.k2), 0, 1e-9 * fit.period, "fringe period 2pi/(k1-k2) (two-beam interference)");
    pft_near(fit.visibility, 2 * A * B / (A * A + B * B), 0, 1e-9, "visibility 2|a||b|/(|a|^2+|b|^2) (two-beam)");
    pft_near(fit.phase, carg(p.a) - carg(p.b), 0, 1e-8, "fringe phase arg a - arg b (two-beam)");
    pft_ok(pf_fringe_analyse(ctx, x, rho, 1024, -61.3e-6, 43.9e-6, 6e-6, &fit));
    pft_near(fit.period, PF_TWO_PI / (p.k1 - p.k2), 0, 1e-9 * fit.period, "period with a guess (two-beam)");
    assert_int_equal(pf_fringe_analyse(ctx, x, rho, 1024, 1e-6, 2e-6, 0, &fit), PF_EINVAL);
    free(rho);
    free(x);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

typedef struct tilted { double s1, s2, rho, c[2]; } tilted;
/* Correlated Gaussian amplitude: |psi|^2 is the bivariate normal with
 * standard deviations s1, s2 and correlation rho. */
static int tilted_fn(void *user, const double *x, double complex *v)
{
    const tilted *t = user;
    double u = (x[0] - t->c[0]) / t->s1, w = (x[1] - t->c[1]) / t->s2;
    double q = (u * u - 2 * t->rho * u * w + w * w) / (1 - t->rho * t->rho);
    *v = exp(-q / 4);
    return 0;
}

static void covariance_and_overlap(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {96, 96};
    double span[2] = {60e-6, 60e-6}, origin[2] = {0, 0};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    tilted t = {4e-6, 3e-6, 0.6, {1e-6, -2e-6}};
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, tilted_fn, &t));
    pft_ok(pf_wave_normalize(w));
    pf_field f;
    pft_ok(pf_field_for_grid(g, PF_POSITION, &f));
    pft_ok(pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL));
    double mean[2], cov[4];
    pft_ok(pf_field_moments(&f, mean, cov));
    /* Bivariate normal (standard result): cov = [[s1^2, rho s1 s2], [rho s1 s2, s2^2]]. */
    pft_near(cov[1], t.rho * t.s1 * t.s2, 0, 1e-9 * t.s1 * t.s2, "off-diagonal covariance rho s1 s2 (bivariate normal)");
    pft_near(cov[0], t.s1 * t.s1, 0, 1e-9 * t.s1 * t.s1, "variance s1^2 (bivariate normal)");
    pft_near(mean[1], -2e-6, 0, 1e-15, "mean (bivariate normal)");
    pf_field_free(&f);
    pf_wave_free(w);
    /* Overlap of two Gaussians displaced by d (same width s):
     * <g(x - d/2)|g(x + d/2)> = exp(-d^2 / 8 s^2) (Gaussian integral). */
    pft_gauss a = {2, {-3e-6, 0}, {4e-6, 3e-6}, {0, 0}}, b = {2, {3e-6, 0}, {4e-6, 3e-6}, {0, 0}};
    pf_wave *wa = pft_gauss_wave(g, pft_mass("87Rb"), &a), *wb = pft_gauss_wave(g, pft_mass("87Rb"), &b);
    double complex o;
    pft_ok(pf_wave_inner(wa, wb, &o));
    pft_near(creal(o), exp(-36e-12 / (8 * 16e-12)), 0, 1e-10, "overlap exp(-d^2/8s^2) (Gaussian integral)");
    double fid;
    pft_ok(pf_wave_to(wb, PF_MOMENTUM)); /* mixed representations */
    pft_ok(pf_wave_fidelity(wa, wb, &fid));
    pft_near(fid, exp(-36e-12 / (4 * 16e-12)), 0, 1e-10, "fidelity |<a|b>|^2 (Gaussian integral)");
    pf_region box = {.kind = PF_REGION_BOX, .lo = {-3e-6, -100}, .hi = {1e6, 100}};
    double p;
    pft_ok(pf_wave_region_probability(wa, &box, &p));
    /* Grid points x_j >= -3 um carry the cells from the first such point
     * minus half a cell: against GSL's normal tail (gsl_cdf_gaussian_Q) up to
     * the midpoint rule's O(dx^2) error at the cut. */
    double dx = pf_grid_spacing(g, 0), first = 0;
    for (size_t j = 0; j < n[0]; j++)
        if (pf_grid_x(g, 0, j) >= -3e-6) {
            first = pf_grid_x(g, 0, j);
            break;
        }
    pft_near(p, gsl_cdf_gaussian_Q(first - 0.5 * dx + 3e-6, 4e-6), 0, 2e-3, "box probability vs GSL normal tail");
    pf_wave_free(wa);
    pf_wave_free(wb);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(two_beam_fringes),
        cmocka_unit_test(covariance_and_overlap),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
