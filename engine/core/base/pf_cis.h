/* pf_cis.h - exp(-i phi) for many phases at once, for the passes that need
 * a fresh phase factor per point (the mean-field sub-step, V(x, t), the
 * exponentials of a static potential).
 *
 * libm's cexp costs one call per point and does not vectorise; here the
 * phases are reduced to [-pi/4, pi/4] by the nearest multiple of pi/2 (pi/2
 * split in three parts, so the reduced argument is exact to rounding for
 * |phi| up to PF_CIS_FAST_LIMIT, which long-flight chirps reach) and sine
 * and cosine come from their Taylor polynomials, in a loop the compiler
 * vectorises.  One plain C source compiled for each vector path
 * (pf_vecpath.h): the bits do not depend on the processor's vector width.  Larger phases go
 * through libm.  Accuracy: within a few units in the last place of libm. */
#ifndef PF_CIS_H
#define PF_CIS_H

#include <complex.h>
#include <stddef.h>
#include "pf_vecpath.h"

/* Phases above this magnitude (rad) are handed to libm. */
#define PF_CIS_FAST_LIMIT 1.0e8

/* out[i] = exp(-i phase[i]) for i < n (phases finite). */
void pf_cis_minus(const double *phase, double complex *out, size_t n);

/* d[i] *= exp(-i phase[i]) for i < n (phases finite). */
void pf_cis_multiply(double complex *d, const double *phase, size_t n);

/* The same on a named path (for tests): 0, doing nothing, when this build
 * or processor cannot run it. */
int pf_cis_minus_on(pf_vector_path p, const double *phase, double complex *out, size_t n);
int pf_cis_multiply_on(pf_vector_path p, double complex *d, const double *phase, size_t n);

#endif
