/* pf_hermite.h - normalised Hermite functions (harmonic-oscillator
 * eigenfunctions in dimensionless form).
 *
 *   psi_n(xi) = (2^n n! sqrt(pi))^(-1/2) H_n(xi) exp(-xi^2 / 2),
 *   integral psi_n(xi)^2 dxi = 1.
 *
 * Evaluated by the three-term recurrence of the normalised functions,
 *   psi_{k+1} = sqrt(2/(k+1)) xi psi_k - sqrt(k/(k+1)) psi_{k-1},
 * which never forms n! or H_n and is stable in both the oscillating and the
 * decaying region; the Gaussian factor is applied at the end in log form so
 * large |xi| neither overflows nor underflows early. */
#ifndef PF_HERMITE_H
#define PF_HERMITE_H

/* Largest order the builders accept; the recurrence itself has no limit but
 * such states need more grid points than any practical grid has. */
#define PF_HERMITE_MAX_ORDER 5000

/* psi_n(xi) for n >= 0 (n < 0 gives 0). */
double pf_hermite_function(int n, double xi);
/* psi_0..psi_nmax at xi into out[0..nmax] (nmax >= 0). */
void pf_hermite_functions(int nmax, double xi, double *out);

#endif
