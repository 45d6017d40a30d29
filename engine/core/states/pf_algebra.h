/* pf_algebra.h - linear algebra on wave functions: a psi1 + b psi2 and the
 * inner product <psi1|psi2>.
 *
 * Both operands must live on the same grid (same shape, spans and origins)
 * and carry the same mass.  An operand in the other representation is
 * transformed first (its physical state is unchanged).  Sums are taken in
 * fixed blocks combined in a fixed order, so results do not depend on the
 * thread count. */
#ifndef PF_ALGEBRA_H
#define PF_ALGEBRA_H

#include <complex.h>
#include "pf_wave.h"

/* y <- y + a x.  Warns when the two clocks differ (the sum then mixes states
 * at different times) and appends a "combine" step to y's log. */
pf_status pf_wave_axpy(pf_wave *y, double complex a, pf_wave *x);
/* *out = <a|b> = integral conj(psi_a) psi_b dx (not normalised by the norms). */
pf_status pf_wave_inner(pf_wave *a, pf_wave *b, double complex *out);

#endif
