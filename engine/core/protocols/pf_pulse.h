/* pf_pulse.h - light and microwave pulses acting on internal levels and on
 * momentum, as exact propagators in momentum representation.
 *
 * Two pulse models, both in the rotating-wave approximation, without
 * spontaneous emission, with the kinetic energy acting during the pulse
 * (so the wave's clock advances by the pulse duration); an external force
 * and a chirped detuning act during a two-level pulse only through
 * pf_pulse_two_level_moving:
 *
 *  - two-level pulses (pf_pulse_two_level): levels a and b, one pf_wave
 *    each, coupled by an effective Rabi frequency Omega(t).  A microwave or
 *    RF pulse transfers no momentum (kick = 0); a two-photon Raman pulse
 *    pairs phi_a(k) with phi_b(k + K), K = k_eff.  Per pair the Hamiltonian
 *    (rad/s) in the frame of docs/internal-states.md is
 *        [ w(k) + s_a            (Omega/2) e^(-i phase) ]
 *        [ (Omega/2) e^(i phase)  w(k+K) + s_b - delta  ]
 *    with w(k) = hbar |k|^2 / 2m, delta = omega_L - omega_ba the detuning
 *    from the bare level splitting, s_a and s_b the light shifts.  The
 *    Doppler shift K.v and the recoil come out of w(k+K) - w(k).  A square
 *    pulse is one closed-form 2x2 rotation per pair; a Gaussian one is a
 *    fourth-order composition (Yoshida triple jump) of exact rotations at
 *    the stage midpoints.
 *
 *  - Bragg pulses (pf_pulse_bragg): one level, coupling k with k +- K by the
 *    moving standing wave hbar Omega(t) cos(K.x - delta t + phase):
 *        i dc_n/dt = w(k + nK) c_n + Omega/2 [e^(i chi) c_(n-1) + e^(-i chi) c_(n+1)],
 *    chi = phase - delta t.  Every momentum order on the grid takes part, so
 *    the Bragg and the Raman-Nath regimes come from the same equations.
 *    Integrated by Strang splitting (exact kinetic phase; exact coupling
 *    step by the Jacobi-Anger sum of Bessel functions, a cyclic shift in
 *    momentum per term), composed to fourth order (Yoshida triple jump).
 *
 * Amplitudes are held in the frame rotating with each level's own energy
 * offset (the "level frame"); the laser phase is referred to the wave's
 * clock, so the detuning accumulates phase delta * t between pulses, which
 * is what makes Ramsey fringes.  K must be a whole number of momentum
 * spacings on every axis: the transfer is then an exact shift on the grid
 * (cyclic, as a periodic grid has it; the grid guards warn near Nyquist). */
#ifndef PF_PULSE_H
#define PF_PULSE_H

#include "pf_grid.h"
#include "pf_wave.h"

typedef enum pf_envelope { PF_ENVELOPE_SQUARE = 0, PF_ENVELOPE_GAUSSIAN = 1 } pf_envelope;

/* Time course of the Rabi frequency over the pulse window [t0, t0 + duration]
 * (t0 the wave's clock when the pulse starts). */
typedef struct pf_pulse_shape {
    pf_envelope envelope;
    double duration; /* s, finite, > 0 */
    double rabi;     /* peak Rabi frequency Omega (rad/s), finite, >= 0 */
    double width;    /* Gaussian only: rms width sigma (s) of Omega(t) =
                        rabi exp(-(t - centre)^2 / (2 sigma^2)), centred in the window */
    int substeps;    /* integration steps (Gaussian two-level, Bragg); 0: automatic */
    double peak_offset; /* Gaussian only: the peak lies this long (s) after the window's centre;
                           0 for a whole pulse, the slice's offset for a slice of a longer one */
} pf_pulse_shape;

/* What the light (or microwave) does besides its envelope. */
typedef struct pf_pulse_light {
    double kick[PF_MAX_DIM]; /* K = k_eff (rad/m) per axis; 0 for microwave and RF */
    double detuning;         /* delta (rad/s): two-level: omega_L - omega_ba; Bragg: frequency difference of the beams */
    double phase;            /* laser phase (rad) */
    double shift_a, shift_b; /* two-level only: light shifts of levels a and b during the pulse (rad/s) */
} pf_pulse_light;

/* Omega(t) of the shape at time s after the start of the window. */
double pf_pulse_rabi_at(const pf_pulse_shape *shape, double s);

/* Applies a two-level pulse to the pair (a, b): the same grid and mass, the
 * same clock (to 1e-12 relative), distinct waves.  Leaves both in momentum
 * representation with their clocks advanced by the duration, and logs a
 * "pulse" step in each.  Fails (PF_EINVAL) on a bad shape, a kick that is
 * not a whole number of momentum spacings, or mismatched waves. */
pf_status pf_pulse_two_level(pf_wave *a, pf_wave *b, const pf_pulse_shape *shape, const pf_pulse_light *light);

/* The two-level pulse with a uniform force on each level (accel_a, accel_b:
 * m/s^2 per axis, NULL for none) and a linearly chirped detuning
 * delta(t) = light->detuning + chirp t (t the wave's clock; the laser phase
 * is then phase - detuning t - chirp t^2 / 2) acting during it: Strang
 * splitting into `slices` pulses between force kicks (error of order
 * (duration / slices)^2; slices = 1 with no force and no chirp is the plain
 * pulse).  A Gaussian envelope is cut into slices of itself (each slice a
 * window of the same Gaussian, peak_offset placing its peak). */
pf_status pf_pulse_two_level_moving(pf_wave *a, pf_wave *b, const pf_pulse_shape *shape, const pf_pulse_light *light,
                                    double chirp, const double *accel_a, const double *accel_b, int slices);

/* Applies a Bragg pulse to w (kick must be non-zero; shift_a/shift_b are
 * ignored).  Leaves w in momentum representation, clock advanced by the
 * duration, and logs a "bragg" step. */
pf_status pf_pulse_bragg(pf_wave *w, const pf_pulse_shape *shape, const pf_pulse_light *light);

/* The number of integration steps a shape with substeps = 0 is given for a
 * pulse of this kind: two-level (bragg = 0) or Bragg (bragg = 1, with the
 * recoil frequency hbar K^2 / 2m of the kick, rad/s). */
int pf_pulse_auto_substeps(const pf_pulse_shape *shape, int bragg, double recoil);

/* Probability in the momentum orders n = -nmax .. nmax of the kick K:
 * order n holds the points whose k.K/|K| - center lies in
 * [(n - 1/2)|K|, (n + 1/2)|K|) (center in rad/m along K).  out receives
 * 2 nmax + 1 values, order -nmax first.  Leaves w in momentum representation. */
pf_status pf_wave_order_populations(pf_wave *w, const double *kick, double center, int nmax, double *out);

#endif
