/* pf_ops.h - instantaneous operations on a wave function: phase pulses
 * (imprint, standing-wave grating, lens, kick), amplitude masks (slits,
 * gratings, apertures, user transmission), exact displacement and momentum
 * masks (velocity selection).
 *
 * Every operation takes no time (the clock is unchanged), appends one entry to
 * the wave's step log, and reports failures through pf_status with a message
 * naming the bad argument.  Axes are 0-based here; the binding speaks 1-based.
 * Masks return the probability they removed (physical units, the integral of
 * |psi|^2 that was absorbed) and record it in the log's `removed` column.
 * Position-space operations bring the wave into position representation;
 * displacement and momentum masks leave it in momentum representation. */
#ifndef PF_OPS_H
#define PF_OPS_H

#include "pf_edges.h"
#include "pf_wave.h"

/* psi(x) *= exp(i phase(x)); fn writes the phase (rad) into the real part of
 * *value at each position.  The phase is sampled into a temporary array
 * first, so a failing callback (PF_ECALLBACK) or a non-finite phase
 * (PF_EINVAL) leaves the wave untouched. */
pf_status pf_wave_imprint(pf_wave *w, pf_sample_fn fn, void *user);

/* Thin standing-wave phase grating (Raman-Nath regime: the atoms do not move
 * during the pulse): psi *= exp(i depth cos(2 pi x_axis / period + phase)).
 * depth in rad (finite), period in m (finite, > 0), phase in rad. */
pf_status pf_wave_grating(pf_wave *w, int axis, double depth, double period, double phase);

/* Thin quadratic-phase lens of focal time f (s): psi *= exp(-i m (x - c)^2 /
 * (2 hbar f)) along the axis (axis < 0: every axis).  A classical particle at
 * x leaves with velocity -(x - c)/f, so f > 0 focuses after a flight of f and
 * f < 0 defocuses.  f must be finite and non-zero; center may be NULL (0). */
pf_status pf_wave_lens(pf_wave *w, int axis, double focal_time, const double *center);

/* Momentum kick: psi *= exp(i k.x), k per axis in rad/m (momentum hbar k).
 * Exact on the grid when each k is a multiple of the grid's k spacing; other
 * values leave a phase seam at the cell boundary, harmless while the state is
 * negligible there. */
pf_status pf_wave_kick(pf_wave *w, const double *k);

/* Edges of the amplitude masks below: `edges` NULL (or mode PF_EDGES_CELLS)
 * samples the mask at grid points, each point open or shut (a point on an
 * edge is open); mode PF_EDGES_EXACT puts the edges where they are, between
 * points, through the mask's band-limited Fourier series, optionally with a
 * Gaussian soft edge (pf_edges.h). */

/* N equal slits of full width `width` (m), centres center + (i - (N-1)/2)
 * pitch along the axis; everything outside the slits is blocked.
 * count >= 1; pitch > width when count > 1 (unused for one slit). */
typedef struct pf_slits_spec {
    int axis;      /* 0-based */
    int count;     /* number of slits, >= 1 */
    double width;  /* full width of each slit (m), > 0 */
    double pitch;  /* centre-to-centre distance (m), > width when count > 1 */
    double center; /* centre of the slit set (m) */
} pf_slits_spec;
pf_status pf_wave_slits(pf_wave *w, const pf_slits_spec *spec, const pf_edges *edges, double *removed);

/* Periodic amplitude grating: open where frac((x - offset)/period) < open_fraction.
 * period > 0, 0 < open_fraction <= 1. */
pf_status pf_wave_mask_grating(pf_wave *w, int axis, double period, double open_fraction, double offset,
                               const pf_edges *edges, double *removed);

/* Rectangular aperture: open where |x_a - center_a| <= size_a / 2 on every
 * axis; size_a = INFINITY leaves axis a unbounded.  center may be NULL. */
pf_status pf_wave_aperture_rect(pf_wave *w, const double *center, const double *size, const pf_edges *edges,
                                double *removed);

/* Circular aperture in the plane of axes (a, b) (a != b, grid dim >= 2):
 * open where (x_a - c0)^2 + (x_b - c1)^2 <= radius^2; in 3D it is a round
 * hole extending along the remaining axis.  center may be NULL. */
pf_status pf_wave_aperture_circle(pf_wave *w, int axis_a, int axis_b, const double *center, double radius,
                                  const pf_edges *edges, double *removed);

/* User transmission amplitude t(x) (rep PF_POSITION) or t(k) (PF_MOMENTUM,
 * coordinates are wave numbers in rad/m): psi *= t.  |t| must not exceed 1
 * (a mask absorbs, it never amplifies); checked before the wave changes. */
pf_status pf_wave_mask(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user, double *removed);

/* Exact displacement psi(x) -> psi(x - d) by d per axis (m), done in momentum
 * space: phi(k) *= exp(-i k.d).  Band-limited, so any distance works; the
 * grid is periodic, so a state pushed over an edge re-enters at the other. */
pf_status pf_wave_shift(pf_wave *w, const double *d);

/* Velocity selection along one axis: box (gaussian == 0) keeps |v - center|
 * <= width / 2; gaussian transmits probability exp(-(v - center)^2 /
 * (2 width^2)) (amplitude exp(-(v-center)^2 / (4 width^2))).  v = hbar k / m. */
pf_status pf_wave_select_velocity(pf_wave *w, int axis, double center, double width, int gaussian,
                                  double *removed);

#endif
