/* pf_covariance.h - position-momentum covariance of a wave function.
 *
 * C_ab = <(x_a p_b + p_b x_a)/2> - <x_a><p_b>, a, b = axes, in m kg m/s.
 * For a != b the operators commute and this is <x_a p_b> - <x_a><p_b>; for
 * a = b it is the symmetrised (Weyl-ordered) moment.  Exact on the grid: p_b
 * psi is the spectral derivative -i hbar d psi / dx_b (i k in momentum
 * space, the Nyquist mode of an even axis split as in pf_flux.h, so its
 * derivative vanishes), weighted with the grid positions. */
#ifndef PF_COVARIANCE_H
#define PF_COVARIANCE_H

#include "pf_wave.h"

/* Writes C_ab into cov[a * dim + b] (dim x dim, row = position axis, column =
 * momentum axis).  Normalised like the other moments (divided by the norm);
 * a zero state is refused.  Leaves the wave in position representation.  The
 * same bits on any thread count (fixed blocks). */
pf_status pf_wave_position_momentum_covariance(pf_wave *w, double *cov);

#endif
