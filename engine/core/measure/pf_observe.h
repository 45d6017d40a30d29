/* pf_observe.h - expectation values of a wave function.
 *
 * Means and variances are normalised expectation values <psi|A|psi>/<psi|psi>,
 * so they stay meaningful after a mask removed probability.  Sums are taken in
 * fixed blocks and combined in a fixed order, so results do not depend on the
 * thread count or on scheduling. */
#ifndef PF_OBSERVE_H
#define PF_OBSERVE_H

#include "pf_wave.h"

/* integral |psi|^2 dx, computed in whichever representation the wave is in
 * (no transform). */
double pf_wave_norm(pf_wave *w);
/* Mean and variance of position per axis (m, m^2).  Either pointer may be NULL. */
pf_status pf_wave_position_moments(pf_wave *w, double *mean, double *variance);
/* Mean and variance of the wave number per axis (1/m, 1/m^2); momentum is
 * hbar times these. */
pf_status pf_wave_wavenumber_moments(pf_wave *w, double *mean, double *variance);
/* Kinetic energy <p^2>/2m (J). */
pf_status pf_wave_kinetic_energy(pf_wave *w, double *energy);

#endif
