/* pf_relax.h - ground states by imaginary-time relaxation (normalised
 * gradient flow), and the energy functional it minimises.
 *
 * Replacing t by -i tau in the split-step scheme damps every eigenstate by
 * exp(-E tau / hbar); renormalising after each step leaves the lowest state
 * that overlaps the start.  One step is
 *   exp(-V_eff dtau / 2 hbar) exp(-T dtau / hbar) exp(-V_eff dtau / 2 hbar),
 * then psi -> psi / ||psi||, with V_eff = V + g |psi|^2 (Gross-Pitaevskii).
 * The fixed point differs from the true ground state by O(dtau^2) (Strang
 * splitting); the energy reported is the functional of the final state,
 *   E = <T> + <V> + (g/2) integral |psi|^4,
 * and the chemical potential mu = <T> + <V> + g integral |psi|^4. */
#ifndef PF_RELAX_H
#define PF_RELAX_H

#include <stddef.h>
#include "pf_wave.h"

typedef struct pf_relax_spec {
    const double *potential;   /* V(x) in J, natural order (required) */
    double dt;                 /* imaginary-time step (s); <= 0: PF_RELAX_DEFAULT_FRACTION hbar / (E_start - min V) */
    double g;                  /* mean-field coefficient (J m^d) for psi normalised to 1 */
    double tolerance;          /* converged when |E_now - E_prev| <= tolerance |E_now| */
    size_t max_steps;          /* step limit (>= 1) */
    size_t check_every;        /* steps between energy evaluations (>= 1) */
} pf_relax_spec;

/* Default step as a fraction of hbar / (E - min V) of the starting state. */
#define PF_RELAX_DEFAULT_FRACTION 0.05

typedef struct pf_relax_info {
    size_t steps;              /* steps taken */
    int converged;             /* 1 when the energy criterion was met */
    double energy;             /* E of the final state (J) */
    double chemical_potential; /* mu of the final state (J) */
    double change;             /* last relative energy change between checks */
    double dt;                 /* step used (s) */
} pf_relax_info;

/* Relaxes w in place from its current state (which must overlap the ground
 * state: the flow keeps the symmetry of the start).  Leaves the wave
 * normalised to 1 in position representation, clock unchanged, and records a
 * "relax" step.  When the step limit is reached first, it warns and returns
 * PF_OK with converged = 0.  Fails on a missing or non-finite potential, a
 * zero state or invalid settings. */
pf_status pf_wave_relax(pf_wave *w, const pf_relax_spec *spec, pf_relax_info *info);

/* Energy functional E and chemical potential mu (J) of w (normalised
 * expectation values, so any norm is fine) in potential V (may be NULL: 0)
 * with mean-field g.  Leaves the wave's data and representation unchanged
 * (works on a scratch copy for the kinetic part). */
pf_status pf_wave_energy(pf_wave *w, const double *potential, double g, double *energy, double *mu);

#endif
