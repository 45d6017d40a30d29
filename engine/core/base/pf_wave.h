/* pf_wave.h - wave functions: complex samples bound to a grid and a mass.
 *
 * A wave function is held in one representation at a time, position or
 * momentum, and is transformed only when a result needs the other one.
 * Physical conventions (docs/conventions.md):
 *   integral |psi(x)|^2 dx = 1,
 *   phi(k) = (2 pi)^(-d/2) integral psi(x) exp(-i k.x) dx,
 *   integral |phi(k)|^2 dk = 1.
 * Internally, momentum storage is S = DFT(psi) / N_total (unnormalised FFTW
 * forward transform divided by the point count), so that the backward FFTW
 * transform returns psi with no extra pass; phi = S * prod_a c_a(k_a) with
 * c_a = (span_a / sqrt(2 pi)) exp(-i k_a x0_a), x0_a the first grid point.
 * The accessors below always speak the physical convention. */
#ifndef PF_WAVE_H
#define PF_WAVE_H

#include <complex.h>
#include <stddef.h>
#include "pf_grid.h"

typedef struct pf_wave pf_wave;

typedef enum pf_rep { PF_POSITION = 0, PF_MOMENTUM = 1 } pf_rep;

/* Fills one sample: coord holds x (or k) per axis; the callback writes the
 * value (psi(x) or phi(k) in physical units) to *value and returns 0, or
 * returns non-zero to stop the fill (the fill then fails with PF_ECALLBACK). */
typedef int (*pf_sample_fn)(void *user, const double *coord, double complex *value);

/* Creates a wave function of the given mass (kg, finite, > 0) on g, all zero,
 * in position representation.  The wave retains the grid. */
pf_status pf_wave_new(pf_grid *g, double mass, pf_wave **out);
/* Deep copy (data, representation, mass, clock, step log). */
pf_status pf_wave_copy(const pf_wave *src, pf_wave **out);
void pf_wave_free(pf_wave *w);

pf_grid *pf_wave_grid(const pf_wave *w);
double pf_wave_mass(const pf_wave *w);
pf_rep pf_wave_rep(const pf_wave *w);
/* Time the state has flown in total (s, sum of all flight durations). */
double pf_wave_clock(const pf_wave *w);
void pf_wave_set_clock(pf_wave *w, double t);

/* Evaluates fn at every grid point of the given representation and stores the
 * result.  Leaves the wave in that representation. */
pf_status pf_wave_fill(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user);

/* Brings the data into the requested representation (no-op when already). */
pf_status pf_wave_to(pf_wave *w, pf_rep rep);

/* Value at a multi-index in physical units: psi(x) for position (natural
 * order) or phi(k) for momentum (FFT storage order).  Transforms if needed. */
pf_status pf_wave_value(pf_wave *w, pf_rep rep, const size_t *index, double complex *out);
/* Sets the value at a multi-index, same conventions. */
pf_status pf_wave_set_value(pf_wave *w, pf_rep rep, const size_t *index, double complex v);

/* Writes the density |psi|^2 (position, natural order) or |phi|^2 (momentum,
 * ascending-k order on every axis) into out (pf_grid_total doubles). */
pf_status pf_wave_density(pf_wave *w, pf_rep rep, double *out);

/* Multiplies every sample by the complex factor a. */
pf_status pf_wave_scale(pf_wave *w, double complex a);
/* Divides by sqrt(norm) so that the norm becomes 1.  Fails on a zero state. */
pf_status pf_wave_normalize(pf_wave *w);

/* Appends a step record (kind and method are short names, truncated to 23
 * characters) with the current clock and norm.  For steps made outside the
 * core's own step functions, such as builders in the binding. */
void pf_wave_record(pf_wave *w, const char *kind, const char *method, double duration, double removed);

/* The wave's step log (read-only; valid while the wave lives). */
#include "pf_steplog.h"
const pf_steplog *pf_wave_steplog(const pf_wave *w);

/* Raw storage in the current representation (see the storage note above).
 * For core kernels; callers outside the core use the accessors.  A deferred
 * 2D/3D flight is carried out first (the wave is then in position
 * representation); NULL if that fails, with the reason in the context. */
double complex *pf_wave_data(pf_wave *w);
const double complex *pf_wave_data_const(const pf_wave *w);

/* Physical factor phi/S for the momentum storage index (multi-index in FFT
 * order): phi(k) = S * pf_wave_momentum_factor(...). */
double complex pf_wave_momentum_factor(const pf_wave *w, const size_t *index);

#endif
