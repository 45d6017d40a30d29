/* measure_util.h - helpers shared by the measurement tests (issue 6): a
 * double-precision tolerance check with a named source, and analytic
 * Gaussian states filled into engine wave functions. */
#ifndef MEASURE_UTIL_H
#define MEASURE_UTIL_H

#include <complex.h>
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdio.h>
#include <cmocka.h>
#include "pf_constants.h"
#include "pf_context.h"
#include "pf_grid.h"
#include "pf_wave.h"

/* cmocka 1.1's float comparison is single precision; this one is double and
 * prints the source of the reference value. */
#define MU_NEAR(got, want, tol, source)                                                                        \
    do {                                                                                                       \
        double mu_g = (got), mu_w = (want), mu_t = (tol);                                                      \
        if (!(fabs(mu_g - mu_w) <= mu_t)) {                                                                    \
            print_error("%s:%d: got %.17g want %.17g |diff| %.3e > %.3e [%s]\n", __FILE__, __LINE__, mu_g, mu_w, \
                        fabs(mu_g - mu_w), mu_t, source);                                                      \
            fail();                                                                                            \
        }                                                                                                      \
        printf("ok %-44s |diff| %.2e  [%s]\n", #got, fabs(mu_g - mu_w), source);                              \
    } while (0)

#define MU_OK(expr) assert_int_equal((expr), PF_OK)

/* Mass used by the synthetic tests: 87Rb, 86.909180531 u (AME2020) times
 * u = 1.66053906660e-27 kg (CODATA 2018). */
#define MU_MASS (86.909180531 * 1.66053906660e-27)

typedef struct mu_gauss {
    int dim;
    double center[3], sigma[3], k0[3];
} mu_gauss;

/* Product Gaussian with |psi|^2 of width sigma per axis and mean wave number k0
 * (textbook minimum-uncertainty packet). */
static inline int mu_gauss_fn(void *user, const double *x, double complex *v)
{
    const mu_gauss *gs = user;
    double complex z = 1;
    for (int a = 0; a < gs->dim; a++) {
        double u = x[a] - gs->center[a];
        z *= pow(2 * PF_PI * gs->sigma[a] * gs->sigma[a], -0.25) *
             cexp(-u * u / (4 * gs->sigma[a] * gs->sigma[a]) + I * gs->k0[a] * u);
    }
    *v = z;
    return 0;
}

static inline pf_context *mu_context(void)
{
    pf_context *ctx = pf_context_new();
    pf_context_set_planning(ctx, PF_PLAN_ESTIMATE);
    pf_context_set_wisdom_path(ctx, NULL);
    return ctx;
}

static inline pf_grid *mu_grid1(pf_context *ctx, size_t n, double span, double origin)
{
    pf_grid *g = NULL;
    assert_int_equal(pf_grid_new(ctx, 1, &n, &span, &origin, &g), PF_OK);
    return g;
}

static inline pf_wave *mu_gauss_wave(pf_grid *g, const mu_gauss *gs)
{
    pf_wave *w = NULL;
    assert_int_equal(pf_wave_new(g, MU_MASS, &w), PF_OK);
    assert_int_equal(pf_wave_fill(w, PF_POSITION, mu_gauss_fn, (void *)gs), PF_OK);
    assert_int_equal(pf_wave_normalize(w), PF_OK);
    return w;
}

#endif
