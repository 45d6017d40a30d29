/* protocol_util.h - shared set-up for the protocol-step unit tests (issue 4):
 * a context with estimate planning, Gaussian packets, and phase-insensitive
 * distances between states.  Header-only so each test binary stays
 * self-contained. */
#ifndef PROTOCOL_UTIL_H
#define PROTOCOL_UTIL_H

#include <complex.h>
#include <math.h>
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>
#include "pf_constants.h"
#include "pf_context.h"
#include "pf_grid.h"
#include "pf_observe.h"
#include "pf_wave.h"

/* 87Rb atomic mass 86.909180531 u (AME2020, the value in the engine's species
 * table) with u from CODATA 2018. */
#define RB87_MASS (86.909180531 * 1.66053906660e-27)

static inline pf_context *tu_context(void)
{
    pf_context *ctx = pf_context_new();
    assert_non_null(ctx);
    assert_int_equal(pf_context_set_planning(ctx, PF_PLAN_ESTIMATE), PF_OK);
    assert_int_equal(pf_context_set_wisdom_path(ctx, NULL), PF_OK);
    return ctx;
}

static inline void tu_quiet(void *user, const char *text)
{
    (void)text;
    if (user) (*(int *)user)++;
}

static inline pf_grid *tu_grid(pf_context *ctx, int dim, const size_t *n, const double *span, const double *origin)
{
    pf_grid *g = NULL;
    assert_int_equal(pf_grid_new(ctx, dim, n, span, origin, &g), PF_OK);
    return g;
}

/* A Gaussian packet of rms width sigma (density std. dev.), centre x0, mean
 * wave number k0, per axis. */
typedef struct tu_gauss {
    int dim;
    double x0[3], sigma[3], k0[3];
} tu_gauss;

static inline int tu_gauss_fn(void *user, const double *x, double complex *v)
{
    const tu_gauss *p = user;
    double complex z = 1.0;
    for (int a = 0; a < p->dim; a++) {
        double u = x[a] - p->x0[a];
        z *= cexp(-u * u / (4 * p->sigma[a] * p->sigma[a]) + I * p->k0[a] * x[a]);
    }
    *v = z;
    return 0;
}

static inline pf_wave *tu_gauss_wave(pf_grid *g, double mass, tu_gauss *p)
{
    pf_wave *w = NULL;
    assert_int_equal(pf_wave_new(g, mass, &w), PF_OK);
    p->dim = pf_grid_dim(g);
    assert_int_equal(pf_wave_fill(w, PF_POSITION, tu_gauss_fn, p), PF_OK);
    assert_int_equal(pf_wave_normalize(w), PF_OK);
    return w;
}

/* min over theta of ||a - exp(i theta) b|| for position-space states: the
 * distance up to a global phase, formed by explicit subtraction so that it
 * resolves differences down to rounding (not sqrt(rounding)). */
static inline double tu_distance(pf_wave *a, pf_wave *b)
{
    assert_int_equal(pf_wave_to(a, PF_POSITION), PF_OK);
    assert_int_equal(pf_wave_to(b, PF_POSITION), PF_OK);
    const pf_grid *g = pf_wave_grid(a);
    const double complex *x = pf_wave_data(a), *y = pf_wave_data(b);
    double complex s = 0;
    for (size_t i = 0; i < pf_grid_total(g); i++) s += conj(y[i]) * x[i];
    double complex u = cabs(s) > 0 ? s / cabs(s) : 1.0;
    double sum = 0;
    for (size_t i = 0; i < pf_grid_total(g); i++) {
        double complex d = x[i] - u * y[i];
        sum += creal(d) * creal(d) + cimag(d) * cimag(d);
    }
    return sqrt(sum * pf_grid_cell_volume(g));
}

/* Plain ||a - b|| (phase-sensitive), position space. */
static inline double tu_difference(pf_wave *a, pf_wave *b)
{
    assert_int_equal(pf_wave_to(a, PF_POSITION), PF_OK);
    assert_int_equal(pf_wave_to(b, PF_POSITION), PF_OK);
    const pf_grid *g = pf_wave_grid(a);
    const double complex *x = pf_wave_data(a), *y = pf_wave_data(b);
    double s = 0;
    for (size_t i = 0; i < pf_grid_total(g); i++) {
        double complex d = x[i] - y[i];
        s += creal(d) * creal(d) + cimag(d) * cimag(d);
    }
    return sqrt(s * pf_grid_cell_volume(g));
}

/* |got - want| <= tol, with a message that shows both in full precision. */
#define TU_NEAR(got, want, tol, what)                                                                    \
    do {                                                                                                 \
        double g_ = (got), w_ = (want), t_ = (tol);                                                      \
        if (!(fabs(g_ - w_) <= t_)) fail_msg("%s: got %.17g, want %.17g (|diff| %.3e > %.3e)", what, g_, \
                                             w_, fabs(g_ - w_), t_);                                     \
        printf("ok %-48s |diff| %.2e (tol %.1e)\n", what, fabs(g_ - w_), t_);                            \
    } while (0)

#endif
