/* test_cis.c - the vectorised exp(-i phi) of pf_cis.c against GSL's sine and
 * cosine (gsl_sf_sin, gsl_sf_cos; GNU Scientific Library, a general-purpose
 * reference), over small, large and awkward phases, and the hand-over to
 * libm above PF_CIS_FAST_LIMIT. */
#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <cmocka.h>
#include <gsl/gsl_sf_trig.h>
#include "pf_cis.h"
#include "pf_constants.h"
#include "pft.h"

#define COUNT 4099 /* not a multiple of the block, so the last block is short */

/* Phases: a ramp over [-span, span], multiples of pi/4 and pi/2 (where the
 * quadrant changes), and their neighbours one ulp away. */
static void fill_phases(double *p, double span)
{
    for (size_t i = 0; i < COUNT; i++) p[i] = span * (2.0 * (double)i / (COUNT - 1) - 1.0);
    for (int k = -40; k <= 40; k++) {
        size_t i = (size_t)(3 * (k + 40));
        double x = k * (PF_PI / 4);
        p[i] = x;
        p[i + 1] = nextafter(x, INFINITY);
        p[i + 2] = nextafter(x, -INFINITY);
    }
    p[COUNT - 1] = 0.0;
}

/* Largest |pf_cis - GSL| over the phases, with the multiply form checked
 * against the table form on the way (it must be the same factor). */
static double worst_error(double span, int use_libm)
{
    double *p = malloc(COUNT * sizeof *p);
    double complex *e = malloc(COUNT * sizeof *e), *d = malloc(COUNT * sizeof *d);
    assert_non_null(p);
    assert_non_null(e);
    assert_non_null(d);
    fill_phases(p, span);
    pf_cis_minus(p, e, COUNT);
    for (size_t i = 0; i < COUNT; i++) d[i] = 0.6 - 0.8 * I;
    pf_cis_multiply(d, p, COUNT);
    double worst = 0;
    for (size_t i = 0; i < COUNT; i++) {
        double c = use_libm ? cos(p[i]) : gsl_sf_cos(p[i]), s = use_libm ? sin(p[i]) : gsl_sf_sin(p[i]);
        double err = fmax(fabs(creal(e[i]) - c), fabs(cimag(e[i]) + s));
        if (err > worst) worst = err;
        double complex want = (0.6 - 0.8 * I) * e[i];
        pft_cnear(d[i], want, 4e-16);
    }
    free(p);
    free(e);
    free(d);
    return worst;
}

/* Phases of a few radians (one potential sub-step): within 2 ulp of 1. */
static void small_phases(void **state)
{
    (void)state;
    double w = worst_error(20.0, 0);
    pft_near(w, 0, 0, 4.5e-16, "|phi| <= 20: worst error against GSL");
}

/* Large phases (a deep trap over a long step, the chirps of a long flight)
 * keep the accuracy: the reduction by pi/2 in three parts loses nothing up
 * to the limit. */
static void large_phases(void **state)
{
    (void)state;
    double w = worst_error(0.999 * PF_CIS_FAST_LIMIT, 0);
    pft_near(w, 0, 0, 4.5e-16, "|phi| <= 1e8: worst error against GSL");
}

/* Beyond the limit the values come from libm (implementation check of the
 * hand-over, against glibc's cos and sin, whose argument reduction is exact
 * there; GSL's loses digits at 1e12). */
static void beyond_the_limit(void **state)
{
    (void)state;
    double w = worst_error(1e12, 1);
    pft_near(w, 0, 0, 4.5e-16, "|phi| <= 1e12: worst error against GSL");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(small_phases),
        cmocka_unit_test(large_phases),
        cmocka_unit_test(beyond_the_limit),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
