/* pf_build.h - state builders: fill a wave function with a prepared state.
 *
 * Every builder overwrites the wave's data, leaves it in the representation
 * that was natural for the construction (callers never need to care: the
 * accessors transform on demand), normalises it on the grid when asked, runs
 * the resolution checks (pf_resolution.h) and appends a "build" step to the
 * wave's log.  Arguments are validated first; on failure the wave is left
 * unchanged and the context holds a message naming the bad argument.
 * Vectors have one entry per grid axis; all values are SI (m, 1/m, rad/s). */
#ifndef PF_BUILD_H
#define PF_BUILD_H

#include <complex.h>
#include <stddef.h>
#include "pf_grid.h"
#include "pf_wave.h"

/* A Gaussian wave packet
 *   psi(x) = N exp(-(1/4) d^T S^-1 d + i k0.d + (i/2) d^T C d),  d = x - x0,
 * where S is the covariance matrix of |psi|^2 (m^2, symmetric positive
 * definite; diagonal = squared widths), k0 the mean wave number and C the
 * chirp (phase curvature, 1/m^2, symmetric): the local wave number is
 * k0 + C d, so C = m * rate / hbar describes a cloud expanding with velocity
 * rate * d.  N makes the state normalised in infinite space. */
typedef struct pf_gaussian_spec {
    double center[PF_MAX_DIM];
    double wavenumber[PF_MAX_DIM];
    double covariance[PF_MAX_DIM][PF_MAX_DIM];
    double chirp[PF_MAX_DIM][PF_MAX_DIM];
} pf_gaussian_spec;

/* Sets spec to a round, unchirped packet at rest at the origin with the
 * given width (m) on every axis. */
void pf_gaussian_spec_init(pf_gaussian_spec *spec, double width);

pf_status pf_build_gaussian(pf_wave *w, const pf_gaussian_spec *spec, int normalize);

/* One diffraction order: the envelope packet shifted by n * step in wave
 * number, with a complex amplitude (modulus and phase). */
typedef struct pf_order {
    int n;
    double complex amplitude;
} pf_order;

/* Coherent superposition sum_j a_j G(x) exp(i n_j q.(x - x0)) of momentum
 * orders sharing one Gaussian envelope G (spec) and spaced by the wave-number
 * vector q (step, 1/m).  count >= 1; the n_j need not be distinct but |a_j|
 * must not all be zero. */
pf_status pf_build_orders(pf_wave *w, const pf_gaussian_spec *envelope, const double *step,
                          const pf_order *orders, size_t count, int normalize);

/* Harmonic-oscillator eigenstate prod_a psi_{n_a}((x_a - c_a)/l_a) / sqrt(l_a)
 * with l_a = sqrt(hbar / m omega_a), omega in rad/s (> 0), 0 <= n_a <=
 * PF_HERMITE_MAX_ORDER, multiplied by exp(i k0.(x - c)) (a moving trap
 * state).  center and wavenumber may be NULL (zero). */
pf_status pf_build_oscillator(pf_wave *w, const double *omega, const int *n, const double *center,
                              const double *wavenumber, int normalize);

/* Ground state of a harmonic trap: the Gaussian with widths
 * sigma_a = sqrt(hbar / (2 m omega_a)).  center, wavenumber may be NULL. */
pf_status pf_build_ground_state(pf_wave *w, const double *omega, const double *center,
                                const double *wavenumber, int normalize);

typedef enum pf_flat_shape {
    PF_FLAT_BOX = 0,  /* product over axes: prod_a f((k_a - k0_a)/kappa_a) */
    PF_FLAT_ROUND = 1 /* radial: f(|(k - k0)/kappa|), not separable */
} pf_flat_shape;

/* Super-Gaussian (flat-top) momentum distribution
 *   phi(k) = N exp(-(1/2) u^(2p)) exp(-i k.x0),  u = |k - k0| / kappa,
 * so |phi|^2 = exp(-u^(2p)): p = 1 is a Gaussian of momentum width
 * hbar kappa / sqrt 2, large p approaches a box of half-width kappa (1/m).
 * order p is a real number >= 1 (at most 50). */
pf_status pf_build_flat_top(pf_wave *w, const double *center, const double *wavenumber,
                            const double *half_width, double order, pf_flat_shape shape, int normalize);

/* Thomas-Fermi profile: |psi|^2 proportional to max(0, 1 - sum_a
 * ((x_a - c_a)/R_a)^2), radii R (m, > 0), times exp(i k0.(x - c)). */
pf_status pf_build_thomas_fermi(pf_wave *w, const double *center, const double *radius,
                                const double *wavenumber, int normalize);

typedef enum pf_interp {
    PF_INTERP_LINEAR = 0, /* multilinear, any dimension */
    PF_INTERP_CUBIC = 1   /* natural cubic spline, 1D only */
} pf_interp;

/* Samples on a rectilinear mesh interpolated onto the grid.  counts[a] >= 2
 * strictly increasing coordinates axes[a][0..counts[a]-1] (m, or 1/m when
 * rep is PF_MOMENTUM); values row-major (last axis fastest), psi(x) or phi(k)
 * in physical units.  Grid points outside the sampled box get 0. */
pf_status pf_build_sampled(pf_wave *w, pf_rep rep, const size_t *counts, const double *const *axes,
                           const double complex *values, pf_interp method, int normalize);

#endif
