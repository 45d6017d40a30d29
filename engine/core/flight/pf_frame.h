/* pf_frame.h - the moving frame a wave function carries: the grid holds the
 * cloud in a co-moving frame, and the frame relates it to the lab.
 *
 * With X the position offset, K the wave-number offset and theta the phase,
 * the lab wave function is
 *     psi_lab(x) = exp(i (theta + K.(x - X))) * chi(x - X),
 * chi being what the grid stores (grid coordinate xi = x - X).  In momentum
 * space phi_lab(k) = exp(i theta - i k.X) * chi~(k - K).
 *
 * Flight under a uniform acceleration a (H = p^2/2m - m a.x) keeps this form
 * exactly (the Avron-Herbst factorisation): chi flies freely on the grid and
 *     K' = m a / hbar,   X' = hbar K / m,   theta' = L / hbar,
 *     L = m |hbar K/m|^2 / 2 + m a.X        (the classical Lagrangian),
 * which integrates in closed form over a step of length t (pf_frame_advance).
 * Substituting the ansatz into the Schroedinger equation gives these three
 * conditions (derivation in docs/frames.md).  A constant velocity offset is
 * the case a = 0.  An unmoved frame (all zero) is the plain grid state. */
#ifndef PF_FRAME_H
#define PF_FRAME_H

#include <complex.h>
#include "pf_farfield.h"
#include "pf_flux.h"
#include "pf_grid.h"
#include "pf_longflight.h"
#include "pf_wave.h"

typedef struct pf_frame {
    double position[PF_MAX_DIM];   /* X (m), lab position of the grid's coordinate 0 */
    double wavenumber[PF_MAX_DIM]; /* K (rad/m), lab wave number of the grid's k = 0 */
    double phase;                  /* theta (rad), not reduced: reducing modulo a rounded 2 pi
                                    * would add an error of its own */
} pf_frame;

/* The wave's frame (all zero for a wave that was never moved). */
void pf_wave_frame(const pf_wave *w, pf_frame *out);
/* True when any offset or the phase is non-zero. */
int pf_wave_frame_moved(const pf_wave *w);
/* Replaces the frame (every value finite, else PF_EINVAL). */
pf_status pf_wave_set_frame(pf_wave *w, const pf_frame *f);

/* The frame after t seconds under acceleration accel (m/s^2 per axis, NULL
 * for none) for mass m, in closed form (no integration error). */
void pf_frame_advance(pf_frame *f, int dim, double mass, double t, const double *accel);

/* Flies t seconds (finite) under the uniform acceleration accel (NULL or all
 * zero: none), keeping the cloud on the grid: chi flies freely (pf_wave_fly)
 * and the frame advances.  The step is logged as a flight with method
 * "moving-frame" when the frame moves.  Unmoved frame and no acceleration:
 * exactly pf_wave_fly. */
pf_status pf_wave_fly_in_frame(pf_wave *w, double t, const double *accel);

/* The long flights of pf_longflight.h in the frame: chi flies by the chosen
 * method (same grid, scaled, two-stage; its grid may change) and the frame
 * advances under accel (NULL: none).  The Avron-Herbst relation holds for
 * any exact free flight of chi, so the method does not matter to the frame.
 * Grids, origins and points in the options are co-moving (grid) ones. */
pf_status pf_wave_fly_long_in_frame(pf_wave *w, double t, const pf_long_flight_opts *opts,
                                    pf_long_flight_report *report, const double *accel);
pf_status pf_wave_fly_scaled_in_frame(pf_wave *w, double t, const size_t *points, const double *centre,
                                      const double *accel);
/* The far-field image of pf_wave_far_field for a wave in a frame that
 * flies t under accel: the image of chi, and in lab_origin[a] the lab
 * position of the image's x = 0 (the frame position after the flight). */
pf_status pf_wave_far_field_in_frame(pf_wave *w, double t, const double *accel, double *out,
                                     pf_far_field_info *info, double *lab_origin);

/* Puts the lab momentum kick exp(i dk.x) into the frame instead of on the
 * grid: K += dk, theta += dk.X (dk in rad/m, finite). */
pf_status pf_wave_frame_kick(pf_wave *w, const double *dk);

/* Lab position of grid point idx (multi-index, natural order) into x. */
void pf_wave_lab_position(const pf_wave *w, const size_t *idx, double *x);
/* Lab wave number of momentum storage index idx (FFT order) into k. */
void pf_wave_lab_wavenumber(const pf_wave *w, const size_t *idx, double *k);
/* Grid coordinate of a lab position (xi = x - X). */
void pf_wave_grid_position(const pf_wave *w, const double *lab_x, double *xi);

/* The exact lab displacement psi_lab(x) -> psi_lab(x - d) (d in m): the
 * cloud moves on the grid (pf_wave_shift) and theta loses K.d.  Unmoved
 * frame: exactly pf_wave_shift. */
pf_status pf_wave_lab_shift(pf_wave *w, const double *d);

/* Moves the cloud's centre of mass onto the grid's origin and its mean wave
 * number into the frame, leaving the lab state unchanged: chi is shifted
 * exactly (pf_wave_shift) by the mean position's offset d from the origin
 * (X += d, theta += K.d) and kicked by -<k> (K += <k>).  Offsets below 1e-9
 * of a cell (or of a wave-number cell) are left alone.  *moved (may be NULL)
 * tells whether anything moved.  Used by pf_wave_expand so the scaled grid
 * expands about the cloud and the frame carries its drift. */
pf_status pf_wave_frame_centre(pf_wave *w, int *moved);

/* Two-wave figures and sums of lab states (pf_measure.h, pf_algebra.h):
 * the waves' frames must agree in X and K (else PF_EINVAL naming both); the
 * phases may differ and are applied: <a|b>_lab = exp(i (theta_b - theta_a))
 * <chi_a|chi_b>, and y += alpha x adds alpha exp(i (theta_x - theta_y)) chi_x
 * to chi_y.  Unmoved frames: exactly the grid functions. */
pf_status pf_wave_lab_inner(pf_wave *a, pf_wave *b, double complex *out);
pf_status pf_wave_lab_fidelity(pf_wave *a, pf_wave *b, double *out);
pf_status pf_wave_lab_axpy(pf_wave *y, double complex alpha, pf_wave *x);

/* Lab value at a multi-index: psi_lab at the lab position of grid point idx
 * (position), or phi_lab at the lab wave number of storage index idx
 * (momentum).  Same conventions as pf_wave_value otherwise. */
pf_status pf_wave_lab_value(pf_wave *w, pf_rep rep, const size_t *idx, double complex *out);

/* Sets the value so that the lab value at idx becomes v (the inverse of
 * pf_wave_lab_value; same conventions as pf_wave_set_value). */
pf_status pf_wave_lab_set_value(pf_wave *w, pf_rep rep, const size_t *idx, double complex v);

/* The lab momentum kick exp(i q.x) on the grid state: chi gets exp(i q.xi)
 * and theta gains q.X (q in rad/m).  Unmoved frame: exactly pf_wave_kick. */
pf_status pf_wave_lab_kick(pf_wave *w, const double *q);

/* Flux (1/s, positive along +axis) through the lab plane x_axis = at at
 * the times t_k = clock + start + k dt, k < count, into flux[k], while a copy
 * of w flies under accel (m/s^2 per axis, NULL: none) in its frame; w is not
 * changed.  J_lab = J_grid(at - X) + V rho(at - X) (V = hbar K / m, rho the
 * probability per unit length across the plane, pf_wave_plane_figures).
 * While the plane lies outside the co-moving grid cell the flux is 0: the
 * cloud is negligible there (the grid guards watch that). */
/* The flux (1/s) through the lab plane x_axis = at, and the probability
 * beyond it (between the plane and the far edge of the grid): the grid's
 * figures at at - X, the flux plus V rho(at - X).  A plane outside the
 * co-moving grid is refused.  Unmoved frame: pf_wave_flux, pf_wave_beyond. */
pf_status pf_wave_lab_flux(pf_wave *w, int axis, double at, double *flux);
pf_status pf_wave_lab_beyond(pf_wave *w, int axis, double at, double *probability);

pf_status pf_wave_lab_arrival(pf_wave *w, const double *accel, const pf_arrival_window *window, double *flux);

/* Lab moments: position mean (+ X), wave-number mean (+ K); variances are
 * those of the grid state (a shift does not change them).  Either output
 * may be NULL. */
pf_status pf_wave_lab_position_moments(pf_wave *w, double *mean, double *variance);
pf_status pf_wave_lab_wavenumber_moments(pf_wave *w, double *mean, double *variance);
/* Lab kinetic energy <|p|^2>/2m = E_grid + hbar^2 (K.<k>_grid + |K|^2/2)/m. */
pf_status pf_wave_lab_kinetic_energy(pf_wave *w, double *energy);

/* ---- potentials and forces given in the lab (pf_frame_potential.c) ---- */

/* Moves the frame's wave-number offset onto the grid: chi <- exp(i K.xi) chi,
 * K <- 0 (the lab state is unchanged; X and theta stay).  Afterwards the
 * frame no longer moves, so a lab potential is static on the grid.  Refused
 * (PF_EINVAL, state unchanged) when the folded momentum would pass the
 * Nyquist limit less the guard band on an axis: the message names the
 * momentum, the limit, the spacing that would do and the alternatives.
 * what names the caller in that message.  Logged as a "kick" step with
 * method "frame-fold" (so the guards look at the result).  No-op when K = 0. */
pf_status pf_wave_frame_fold(pf_wave *w, const char *what);

/* PF_OK when accel (NULL: none) holds finite values on every axis of g. */
pf_status pf_frame_check_acceleration(const pf_grid *g, const double *accel);
/* Adds the grid part -m a.xi of a uniform force's potential to V (J, one
 * value per grid point, natural order); accel NULL or zero: nothing. */
void pf_frame_tilt_add(const pf_grid *g, double mass, const double *accel, double *V);
/* The same for global row-major offsets [first, first + count) only, into
 * V[0 .. count) (a rank's points of a grid split over MPI ranks). */
void pf_frame_tilt_add_range(const pf_grid *g, double mass, const double *accel, size_t first, size_t count, double *V);
/* The constant part -m a.X (J) of that potential for w's frame offset. */
double pf_frame_tilt_constant(const pf_wave *w, const double *accel);
/* Adds the phase of that constant over t seconds to the frame's theta. */
void pf_frame_tilt_phase(pf_wave *w, const double *accel, double t);

/* The exact flight of pf_wave_fall (H = p^2/2m - m a.x, x in the lab) for a
 * wave in any frame: K folded onto the grid (pf_wave_frame_fold), the
 * closed-form flight on the grid, the constant -m a.X as a phase in theta.
 * The drop goes onto the grid, as pf_wave_fall promises.  Unmoved frame:
 * exactly pf_wave_fall. */
pf_status pf_wave_lab_fall(pf_wave *w, double t, const double *accel);

/* The lab density |psi_lab|^2 of a 1D wave at the m lab points lo + i dx
 * (dx the grid's spacing), into out: the grid's band-limited function is
 * displaced by the fraction of a cell between those points and the grid
 * points' lab positions (an exact shift of a band-limited state, one FFT
 * pair on a copy) and read at whole cells; points outside the co-moving grid
 * get 0.  For a space-time picture of a cloud whose frame travels (each
 * time's profile placed at its lab offset on one lab axis).  w keeps its
 * state (only its representation may change). */
pf_status pf_wave_lab_density_window(pf_wave *w, double lo, size_t m, double *out);

/* Lab energy functional and chemical potential (J): pf_wave_energy with the
 * potential given at the grid points' lab positions, plus the lab kinetic
 * energy's frame terms hbar^2 (K.<k> + |K|^2/2)/m and, when accel is given,
 * the uniform force's <-m a.x> at lab positions.  The wave is unchanged. */
pf_status pf_wave_lab_energy(pf_wave *w, const double *potential, double g, const double *accel, double *energy,
                             double *mu);

#endif
