/* pft.h - the one helper header of the cmocka unit tests: a double-precision
 * near-equality check, status checks that print the core's message, the
 * shared context set-up, test masses from the species table, Gaussian packets
 * and distances between states.  Header-only so each test binary stays
 * self-contained. */
#ifndef PFT_H
#define PFT_H

#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>
#include "pf_constants.h"
#include "pf_context.h"
#include "pf_grid.h"
#include "pf_species.h"
#include "pf_status.h"
#include "pf_wave.h"

/* ---- near-equality ----------------------------------------------------
 * cmocka 1.1's float comparison works in single precision; this one is
 * double.  pft_near(got, want, rel, abs_tol [, what]) passes when
 * |got - want| <= rel * |want| + abs_tol.  A failing check prints both
 * values, the difference and the tolerance.  what names the quantity and the
 * source of the reference value (optional, or NULL); a labelled check prints
 * one "ok" line with its difference the first time it passes (once per call
 * site, so checks inside loops do not flood the suite log, which keeps these
 * lines). */
#define PFT_NEAR_PICK(_1, _2, _3, _4, _5, name, ...) name
#define pft_near(...) PFT_NEAR_PICK(__VA_ARGS__, pft_near5, pft_near4, )(__VA_ARGS__)
#define pft_near4(got, want, rel, abs_tol) pft_near5(got, want, rel, abs_tol, NULL)
#define pft_near5(got, want, rel, abs_tol, what)                                                                  \
    do {                                                                                                          \
        static int pft_reported_;                                                                                 \
        pft_near_at((got), (want), (rel), (abs_tol), (what), &pft_reported_, #got, __FILE__, __LINE__);           \
    } while (0)

static inline void pft_near_at(double got, double want, double rel, double abs_tol, const char *what, int *reported,
                               const char *expr, const char *file, int line)
{
    double diff = fabs(got - want), tol = rel * fabs(want) + abs_tol;
    if (!(diff <= tol)) {
        print_error("%s:%d: %s%s%s = %.17g, want %.17g (|diff| %.3e > tol %.3e = %.1e * |want| + %.1e)\n", file,
                    line, what ? what : "", what ? ": " : "", expr, got, want, diff, tol, rel, abs_tol);
        _fail(file, line);
    }
    if (what && !*reported) printf("ok %-48s |diff| %.2e (tol %.1e)\n", what, diff, tol);
    *reported = 1;
}

/* |got - want| <= tol for complex values. */
#define pft_cnear(got, want, tol) pft_cnear_at((got), (want), (tol), #got, __FILE__, __LINE__)

static inline void pft_cnear_at(double complex got, double complex want, double tol, const char *expr,
                                const char *file, int line)
{
    if (!(cabs(got - want) <= tol)) {
        print_error("%s:%d: %s = %.17g%+.17gi, want %.17g%+.17gi (|diff| %.3e > %.3e)\n", file, line, expr,
                    creal(got), cimag(got), creal(want), cimag(want), cabs(got - want), tol);
        _fail(file, line);
    }
}

/* ---- the shared context -------------------------------------------------
 * pft_context(): a fresh context with estimated planning (tests never depend
 * on measured plans) and no wisdom file, warnings counted in pft_warnings.
 * The helper keeps one reference to the context it made last, so pft_ok can
 * print that context's message even after the test released its own
 * reference; the reference is dropped when the next context is made and at
 * exit. */
static int pft_warnings;
static pf_context *pft_last_context;

static inline void pft_count_warning(void *user, const char *text)
{
    (void)text;
    if (user) (*(int *)user)++;
}

static inline void pft_forget_context(void)
{
    if (pft_last_context) pf_context_release(pft_last_context);
    pft_last_context = NULL;
}

static inline pf_context *pft_context(void)
{
    static int registered;
    pf_context *ctx = pf_context_new();
    assert_non_null(ctx);
    assert_int_equal(pf_context_set_planning(ctx, PF_PLAN_ESTIMATE), PF_OK);
    assert_int_equal(pf_context_set_wisdom_path(ctx, NULL), PF_OK);
    pf_context_set_warn_handler(ctx, pft_count_warning, &pft_warnings);
    pft_forget_context();
    pf_context_retain(ctx);
    pft_last_context = ctx;
    if (!registered) registered = atexit(pft_forget_context) == 0;
    return ctx;
}

/* cmocka fixture: *state is a pft_context(), released after the test. */
static inline int pft_setup(void **state)
{
    *state = pft_context();
    return 0;
}

static inline int pft_teardown(void **state)
{
    pf_context_release(*state);
    return 0;
}

/* ---- statuses -----------------------------------------------------------
 * pft_ok(call): the call returned PF_OK; otherwise prints the status name
 * and the message of the last context pft_context() made. */
#define pft_ok(expr) pft_ok_at((expr), #expr, __FILE__, __LINE__)

static inline void pft_ok_at(pf_status s, const char *expr, const char *file, int line)
{
    if (s == PF_OK) return;
    print_error("%s:%d: %s returned %s (%d): %s\n", file, line, expr, pf_status_name(s), (int)s,
                pft_last_context ? pf_context_message(pft_last_context) : "(no context made by pft_context)");
    _fail(file, line);
}

/* ---- test masses --------------------------------------------------------
 * Masses come from the engine's species table (AME2020 / CODATA 2018, see
 * pf_species.h), looked up by label: pft_mass("87Rb"). */
static inline double pft_mass(const char *label)
{
    const pf_species *s = pf_species_find(label);
    if (!s) fail_msg("pft_mass: no species \"%s\" in the table", label);
    return s->mass_kg;
}

/* ---- grids and Gaussian packets ----------------------------------------- */
static inline pf_grid *pft_grid(pf_context *ctx, int dim, const size_t *n, const double *span, const double *origin)
{
    pf_grid *g = NULL;
    pft_ok(pf_grid_new(ctx, dim, n, span, origin, &g));
    return g;
}

static inline pf_grid *pft_grid1(pf_context *ctx, size_t n, double span, double origin)
{
    return pft_grid(ctx, 1, &n, &span, &origin);
}

/* Product Gaussian with |psi|^2 of standard deviation sigma per axis, centre
 * x0 and mean wave number k0 (the textbook minimum-uncertainty packet; the
 * phase is k0 (x - x0), zero at the centre). */
typedef struct pft_gauss {
    int dim;
    double x0[3], sigma[3], k0[3];
} pft_gauss;

static inline int pft_gauss_fn(void *user, const double *x, double complex *v)
{
    const pft_gauss *p = user;
    double complex z = 1;
    for (int a = 0; a < p->dim; a++) {
        double u = x[a] - p->x0[a];
        z *= pow(2 * PF_PI * p->sigma[a] * p->sigma[a], -0.25) *
             cexp(-u * u / (4 * p->sigma[a] * p->sigma[a]) + I * p->k0[a] * u);
    }
    *v = z;
    return 0;
}

/* The packet filled on g and normalised on the grid; p->dim is set from g. */
static inline pf_wave *pft_gauss_wave(pf_grid *g, double mass, pft_gauss *p)
{
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(g, mass, &w));
    p->dim = pf_grid_dim(g);
    pft_ok(pf_wave_fill(w, PF_POSITION, pft_gauss_fn, p));
    pft_ok(pf_wave_normalize(w));
    return w;
}

/* ---- distances between states (position space) -------------------------
 * pft_distance: min over theta of ||a - exp(i theta) b||, the distance up to
 * a global phase, formed by explicit subtraction so that it resolves
 * differences down to rounding (not sqrt(rounding)).  pft_difference: plain
 * ||a - b||, phase-sensitive. */
static inline double pft_distance(pf_wave *a, pf_wave *b)
{
    pft_ok(pf_wave_to(a, PF_POSITION));
    pft_ok(pf_wave_to(b, PF_POSITION));
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

static inline double pft_difference(pf_wave *a, pf_wave *b)
{
    pft_ok(pf_wave_to(a, PF_POSITION));
    pft_ok(pf_wave_to(b, PF_POSITION));
    const pf_grid *g = pf_wave_grid(a);
    const double complex *x = pf_wave_data(a), *y = pf_wave_data(b);
    double s = 0;
    for (size_t i = 0; i < pf_grid_total(g); i++) {
        double complex d = x[i] - y[i];
        s += creal(d) * creal(d) + cimag(d) * cimag(d);
    }
    return sqrt(s * pf_grid_cell_volume(g));
}

#endif
