/* pf_interp.h - values of a wave function anywhere, not only at grid points.
 *
 * The grid's samples define one band-limited function, the trigonometric
 * interpolant psi(x) = sum_m S_m exp(i k_m (x - x_0)) (S the momentum
 * storage, k_m the grid's wave numbers, x_0 its first point), the same
 * function the exact flight evolves.  It is evaluated here exactly at any
 * point of the grid's cell; the Nyquist mode of an even axis is split
 * evenly between +K and -K (cos K(x - x_0)), the usual symmetric choice,
 * so the interpolant of a real function is real. */
#ifndef PF_INTERP_H
#define PF_INTERP_H

#include <complex.h>
#include <stddef.h>
#include "pf_wave.h"

/* psi at `count` points; points[i * dim + a] is lab coordinate a of point i
 * (m).  A wave with a moved frame (pf_frame.h) is evaluated through it:
 * grid coordinate xi = x - X, psi_lab = exp(i (theta + K.xi)) chi(xi).
 * Every point must lie in the grid's cell, [x_0 - dx/2, x_0 + span - dx/2]
 * + X per axis (the periodic grid says nothing about psi elsewhere).  Brings
 * the wave to momentum representation (settling a deferred flight).
 * Results do not depend on the thread count (each point is one sum in a
 * fixed order).  Warns (an error in strict mode) when the momentum guard
 * band holds more than the guard threshold: the grid then does not resolve
 * the state and values between points are not the wave function. */
pf_status pf_wave_values_at(pf_wave *w, size_t count, const double *points, double complex *out);

#endif
