/* pf_two_photon.h - a two-photon (Raman) transition between levels a and b
 * through a far-detuned intermediate level e, reduced to the effective
 * two-level pulse of pf_pulse.h by adiabatic elimination of e.
 *
 * Model (rotating-wave approximation, no spontaneous emission): beam 1
 * couples a and e with the single-photon Rabi frequency O1, beam 2 couples
 * b and e with O2, both detuned by Delta = omega_L - omega_ea (laser minus
 * transition; Delta > 0 blue) from the intermediate level.  In the frame of
 * docs/internal-states.md, with amplitudes (c_a, c_e, c_b),
 *     H / hbar = [ 0       O1/2    0          ]
 *                [ O1/2    -Delta  O2/2       ]
 *                [ 0       O2/2    -delta     ]
 * (delta the two-photon detuning).  For |Delta| >> O1, O2, |delta| the
 * intermediate amplitude follows the ground ones, c_e = (O1 c_a + O2 c_b) /
 * (2 Delta), and a and b see
 *     H_eff / hbar = [ O1^2 / (4 Delta)     O1 O2 / (4 Delta)         ]
 *                    [ O1 O2 / (4 Delta)    O2^2 / (4 Delta) - delta  ]
 * which is pf_pulse.h's two-level Hamiltonian with
 *     Omega_eff = O1 O2 / (2 |Delta|),  s_a = O1^2 / (4 Delta),
 *     s_b = O2^2 / (4 Delta),           phase + pi when Delta < 0
 * (the off-diagonal O1 O2 / (4 Delta) is then negative: its modulus is
 * Omega_eff / 2, its sign a phase of pi).  Corrections are of order
 * O / Delta; the intermediate population (O / 2 Delta)^2 is not kept. */
#ifndef PF_TWO_PHOTON_H
#define PF_TWO_PHOTON_H

#include "pf_context.h"

typedef struct pf_two_photon_spec {
    double beam_rabi[2];        /* O1 (a - e), O2 (b - e): single-photon Rabi frequencies (rad/s), finite, >= 0 */
    double one_photon_detuning; /* Delta = omega_L - omega_ea (rad/s), finite, non-zero */
} pf_two_photon_spec;

/* The effective two-level pulse: rabi goes into pf_pulse_shape, the shifts
 * into pf_pulse_light, and phase is added to the laser phase there. */
typedef struct pf_two_photon_pulse {
    double rabi;             /* Omega_eff = O1 O2 / (2 |Delta|) (rad/s), >= 0 */
    double shift_a, shift_b; /* light shifts O1^2 / (4 Delta), O2^2 / (4 Delta) (rad/s) */
    double phase;            /* pi when Delta < 0, else 0 (rad) */
} pf_two_photon_pulse;

/* Fills out from spec.  Fails (PF_EINVAL, naming the bad value) on a
 * negative or non-finite beam Rabi frequency or a zero or non-finite
 * one-photon detuning; out is then untouched. */
pf_status pf_two_photon_pulse_from(pf_context *ctx, const pf_two_photon_spec *spec, pf_two_photon_pulse *out);

#endif
