/* pf_force.h - exact flight under a uniform force (gravity or any constant
 * acceleration), by the closed-form solution for a linear potential.
 *
 * For H = p^2/2m - m a.x the propagator factorises exactly (Avron-Herbst form):
 *   psi(x, t) = exp(i m a.x t / hbar - i m |a|^2 t^3 / (6 hbar))
 *               * [U_free(t) psi_0](x - a t^2 / 2),
 * i.e. free flight, a rigid translation by a t^2/2 and a momentum kick m a t.
 * Flight and translation are one pass in momentum space, the kick one pass in
 * position space, so the step costs two FFTs and has no time-stepping error. */
#ifndef PF_FORCE_H
#define PF_FORCE_H

#include "pf_wave.h"

/* Flies for t seconds (finite, may be negative) under the constant
 * acceleration accel[a] (m/s^2, finite) per axis.  Leaves the wave in position
 * representation and records a "fall" step.  Warns when the acquired
 * momentum m a t / hbar on an axis reaches the grid's Nyquist limit (the
 * momentum would wrap around). */
pf_status pf_wave_fall(pf_wave *w, double t, const double *accel);

#endif
