/* pft.h - helpers shared by the cmocka unit tests of the core.
 *
 * cmocka 1.1's float comparison works in single precision, so the tests use
 * these double-precision checks, which print both values on failure. */
#ifndef PFT_H
#define PFT_H

#include <complex.h>
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdio.h>
#include <cmocka.h>
#include "pf_context.h"

/* |got - want| <= rel * |want| + abs_tol, else fail with both values. */
#define pft_near(got, want, rel, abs_tol) pft_near_at((got), (want), (rel), (abs_tol), #got, __FILE__, __LINE__)

static inline void pft_near_at(double got, double want, double rel, double abs_tol, const char *expr,
                               const char *file, int line)
{
    double tol = rel * fabs(want) + abs_tol;
    if (!(fabs(got - want) <= tol)) {
        print_error("%s = %.17g, want %.17g (|diff| %.3e > tol %.3e)\n", expr, got, want, fabs(got - want), tol);
        _fail(file, line);
    }
}

/* |got - want| <= tol for complex values. */
#define pft_cnear(got, want, tol) pft_cnear_at((got), (want), (tol), #got, __FILE__, __LINE__)

static inline void pft_cnear_at(double complex got, double complex want, double tol, const char *expr,
                                const char *file, int line)
{
    if (!(cabs(got - want) <= tol)) {
        print_error("%s = %.17g%+.17gi, want %.17g%+.17gi (|diff| %.3e > %.3e)\n", expr, creal(got), cimag(got),
                    creal(want), cimag(want), cabs(got - want), tol);
        _fail(file, line);
    }
}

#define pft_ok(expr) assert_int_equal((expr), PF_OK)

/* The common fixture: a fresh context with estimated planning (tests never
 * depend on measured plans), released after the test. */
static inline int pft_context_setup(void **state)
{
    *state = pf_context_new();
    if (!*state) return -1;
    pf_context_set_planning(*state, PF_PLAN_ESTIMATE);
    return 0;
}

static inline int pft_context_teardown(void **state)
{
    pf_context_release(*state);
    return 0;
}

#endif
