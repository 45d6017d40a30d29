/* pf_ensemble.h - incoherent mixtures of wave functions and the thermal
 * ensemble of a harmonic trap.
 *
 * A mixture rho = sum_i w_i |psi_i><psi_i| (weights w_i >= 0 summing to 1,
 * members on grids of one geometry) is a borrowed view (pf_mixture): the
 * caller owns the members.  Every distribution of a mixture is the weighted
 * sum of the members' distributions, so the field functions of pf_field.h
 * and everything built on them (moments, detectors, sampling) apply.
 *
 * Thermal state of a harmonic trap (frequency omega_a per axis, temperature
 * T): in the Glauber-Sudarshan P representation it is a Gaussian mixture of
 * coherent states |alpha> with Re alpha and Im alpha independent normals of
 * variance nbar/2 per axis, nbar = 1 / (exp(hbar omega / kB T) - 1).  A
 * coherent state is the ground-state Gaussian (width sigma0 = sqrt(hbar / 2 m
 * omega)) displaced to x = c + 2 sigma0 Re alpha with mean wave number
 * Im alpha / sigma0.  The mixture is integrated either with a deterministic
 * Gauss-Hermite product rule of M nodes per quadrature (M^(2d) members; exact
 * for all moments up to order 2M - 1 of the displacement, so exact in the
 * second moments for any M >= 2) or sampled with K members from a generator,
 * or, as a third scheme, expanded in Boltzmann-weighted trap eigenstates
 * (pf_thermal_levels; exact up to the truncation of the Boltzmann tail).
 * Either way sigma_x^2 = sigma0^2 coth(hbar omega / 2 kB T) and
 * sigma_p^2 = (hbar / 2 sigma0)^2 coth(...) exactly (quadrature) or in
 * expectation (sampling). */
#ifndef PF_ENSEMBLE_H
#define PF_ENSEMBLE_H

#include "pf_collapse.h"
#include "pf_field.h"
#include "pf_random.h"
#include "pf_units.h" /* PF_BOLTZMANN */


typedef struct pf_mixture {
    size_t count;
    pf_wave *const *members;
    const double *weights;
} pf_mixture;

/* Checks count >= 1, weights finite and >= 0 with a positive sum, and that
 * all members share one grid geometry. */
pf_status pf_mixture_check(const pf_mixture *m);
/* Weighted density of the mixture as a new field on the members' grid. */
pf_status pf_mixture_field(const pf_mixture *m, pf_rep rep, pf_field *out);
/* Region measurement on a mixture: P(outcome) = sum_i w_i p_i(outcome); each
 * member with p_i > 0 collapses as in pf_wave_measure_region, and
 * new_weights[i] = w_i p_i / P (Bayes' rule; members with p_i = 0 get 0 and
 * are left unchanged).  forced as in pf_wave_measure_region. */
pf_status pf_mixture_measure_region(const pf_mixture *m, const pf_region *reg, pf_rng *r, int forced,
                                    int *outcome, double *probability, double *new_weights);

/* Gauss-Hermite rule for the standard normal: nodes z_i and weights w_i
 * (sum 1) with sum w_i f(z_i) = E f(Z) exact for polynomials of degree
 * <= 2M - 1.  Newton iteration on the orthonormal Hermite recurrence.
 * M = 1..64. */
pf_status pf_gauss_hermite_normal(pf_context *ctx, int M, double *nodes, double *weights);

/* One member of a thermal mixture: displacement (m) and mean wave number
 * (1/m) per axis, and its weight. */
typedef struct pf_thermal_member {
    double shift[PF_MAX_DIM];
    double kmean[PF_MAX_DIM];
    double weight;
} pf_thermal_member;

typedef struct pf_thermal_spec {
    int dim;
    double mass;                 /* kg */
    double omega[PF_MAX_DIM];    /* trap angular frequencies (rad/s) */
    double temperature;          /* K, > 0 */
    int nodes;                   /* Gauss-Hermite nodes per quadrature, 0: sample */
    size_t samples;              /* members when sampling */
} pf_thermal_spec;

/* Ground-state width sqrt(hbar / 2 m omega) and mean occupation
 * 1/(exp(hbar omega / kB T) - 1) of one axis. */
double pf_thermal_sigma0(double mass, double omega);
double pf_thermal_nbar(double omega, double temperature);
/* Makes the member list (malloc'd, caller frees with free()) and its length.
 * Sampling draws from r; the quadrature rule ignores it.  At most 1e6 members. */
pf_status pf_thermal_members(pf_context *ctx, const pf_thermal_spec *spec, pf_rng *r, pf_thermal_member **out,
                             size_t *count);
/* Alternative scheme: Boltzmann-weighted trap eigenstates.  Levels
 * n = (n_1..n_d) with prod q_a^n_a >= tol, q_a = exp(-hbar omega_a / kB T),
 * weights prod (1 - q_a) q_a^n_a renormalised over the kept levels;
 * *kept receives the weight before renormalising (1 - truncation).  At most
 * max_count levels (else PF_ELIMIT naming the count).  The list is malloc'd. */
typedef struct pf_thermal_level {
    int n[PF_MAX_DIM];
    double weight;
} pf_thermal_level;
pf_status pf_thermal_levels(pf_context *ctx, const pf_thermal_spec *spec, double tol, size_t max_count,
                            pf_thermal_level **out, size_t *count, double *kept);

/* Fills w with the coherent state of the trap centred at center + shift with
 * mean wave number kmean (sigma0 per axis from the trap), normalised, in
 * position representation, and records a "build" step. */
pf_status pf_wave_fill_coherent(pf_wave *w, const double *center, const double *sigma0, const double *shift,
                                const double *kmean);

#endif
