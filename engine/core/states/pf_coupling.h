/* pf_coupling.h - the mean-field coupling g that evolve and relax take,
 * computed from lab quantities: s-wave scattering length, atom number, mass
 * and, in reduced dimension, the frequency of the tight confinement.
 *
 * Convention (pf_splitstep.h, docs/protocols.md): the mean-field term is
 * g |psi|^2 with psi normalised to 1, so g = N g1 with g1 the one-atom
 * coupling of the dimension the grid has:
 *   3D  g = 4 pi hbar^2 a N / m                                   (J m^3)
 *   1D  g = 2 hbar omega_perp a N [/ (1 - C a / a_perp)]          (J m)
 *       a_perp = sqrt(hbar / (m omega_perp)), C = 1.0326 (Olshanii's
 *       confinement-induced correction, Phys. Rev. Lett. 81, 938 (1998))
 *   2D  g = 2 sqrt(2 pi) hbar^2 a N / (m a_z)                     (J m^2)
 *       a_z = sqrt(hbar / (m omega_z)) (Petrov, Holzmann, Shlyapnikov,
 *       Phys. Rev. Lett. 84, 2551 (2000), weak-interaction limit a << a_z).
 * All are s-wave, dilute-gas results; the reduced-dimension forms assume the
 * gas is frozen in the transverse ground state (mu << hbar omega_perp). */
#ifndef PF_COUPLING_H
#define PF_COUPLING_H

#include "pf_context.h"

/* Olshanii's constant C = -zeta(1/2) / sqrt(2) = 1.4603 / sqrt(2) = 1.0326 (PRL 81, 938). */
#define PF_OLSHANII_C 1.0326

typedef struct pf_coupling_spec {
    int dim;                   /* 1, 2 or 3: the dimension of the grid evolve runs on */
    double scattering_length;  /* a (m), may be negative (attractive) */
    double atoms;              /* N > 0 (1 gives the one-atom coupling) */
    double mass;               /* m (kg) > 0 */
    double transverse_omega;   /* omega_perp (1D) or omega_z (2D), rad/s; must be 0 in 3D */
    int olshanii;              /* 1D only: apply 1/(1 - C a/a_perp) */
} pf_coupling_spec;

typedef struct pf_coupling_result {
    double g;                  /* what evolve/relax take for psi normalised to 1 (J m^dim) */
    double g_one_atom;         /* g / N */
    double confinement_length; /* a_perp or a_z (m); 0 in 3D */
    double correction;         /* Olshanii factor 1/(1 - C a/a_perp); 1 when not applied */
} pf_coupling_result;

/* Fills *out.  PF_EINVAL (message in ctx) for: dim not 1-3, a non-finite
 * number, N or m not positive, omega missing (<= 0) in 1D/2D or given in 3D,
 * olshanii outside 1D, |a| >= the confinement length (the quasi-1D/2D
 * derivations need |a| << a_perp), or 1 - C a/a_perp <= 0 (the corrected
 * form diverges). */
pf_status pf_coupling_compute(pf_context *ctx, const pf_coupling_spec *spec, pf_coupling_result *out);

#endif
