/* pf_flux.h - probability current, flux through a detector plane, the
 * probability beyond a plane, and arrival-time distributions.
 *
 * The plane is x_axis = at, perpendicular to one grid axis, at any position
 * (not only grid points).  All three use the band-limited (trigonometric)
 * interpolant of the grid state, psi(x) = sum_m S_m exp(i k_m (x - x0)),
 * which is the function the exact momentum-space flight evolves; for it the
 * continuity equation d/dt P_beyond = J holds exactly, so flux and
 * probability agree to rounding.  On an axis with an even point count the
 * Nyquist amplitude is split evenly between +k_N and -k_N (both get the same
 * flight phase), so a real state has a real interpolant and zero current, as
 * is usual for spectral derivatives.  The far side of "beyond" is the periodic
 * cell edge x0 + span - dx/2 (the state must be negligible there). */
#ifndef PF_FLUX_H
#define PF_FLUX_H

#include "pf_wave.h"

/* Probability current j_axis = (hbar/m) Im(conj(psi) d psi/dx_axis) at every
 * position grid point (1/(s m^(d-1))), into out (pf_grid_total doubles,
 * natural order).  The derivative is spectral (i k in momentum space). */
pf_status pf_wave_current(pf_wave *w, int axis, double *out);
/* Flux through the plane (1/s): the current integrated over the plane,
 * J = (hbar/m) integral Im(conj(psi) d psi/dx_axis) dA.  Positive along +axis.
 * Leaves the wave in momentum representation. */
pf_status pf_wave_flux(pf_wave *w, int axis, double at, double *flux);
/* The flux as pf_wave_flux and, from the same plane evaluation, the
 * probability per unit length across the plane, integral |psi|^2 dA (1/m;
 * |psi(at)|^2 in 1D).  A moving frame (pf_frame.c) needs both: its lab flux
 * is the grid flux plus the frame velocity times this density.  Leaves the
 * wave in momentum representation.  density may be NULL (then only the
 * flux). */
pf_status pf_wave_plane_figures(pf_wave *w, int axis, double at, double *flux, double *density);
/* Probability in at <= x_axis < far cell edge (band-limited integral, exact
 * through the autocorrelation of the amplitudes along the axis, made with
 * zero-padded FFTs: cost O(N log N), whatever representation the wave is in;
 * leaves the wave in momentum representation; the same bits on any thread
 * count). */
pf_status pf_wave_beyond(pf_wave *w, int axis, double at, double *probability);
/* A detector plane x_axis = at and the times at which the flux through it
 * is taken: t_k = clock + start + k dt, k = 0..count-1 (shared by
 * pf_wave_arrival and the moving-frame pf_wave_lab_arrival). */
typedef struct pf_arrival_window {
    int axis;     /* 0-based grid axis the plane is perpendicular to */
    double at;    /* plane position (m) */
    double start; /* first time after the wave's clock (s), finite */
    double dt;    /* step between times (s), > 0 */
    size_t count; /* number of times, >= 1 */
} pf_arrival_window;
/* PF_EINVAL (with a message in ctx) unless start and dt are finite, dt > 0
 * and count >= 1; the plane itself is checked by each caller (a lab plane
 * may lie outside the co-moving grid). */
pf_status pf_arrival_window_check(pf_context *ctx, const pf_arrival_window *window);
/* Flux through the plane at the window's times into flux[k].  The wave
 * itself is not changed: a copy is flown in steps of dt (the flight phase
 * table is made once and reused), and only the plane is evaluated at each
 * step. */
pf_status pf_wave_arrival(pf_wave *w, const pf_arrival_window *window, double *flux);

#endif
