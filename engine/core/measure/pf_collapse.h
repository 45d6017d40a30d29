/* pf_collapse.h - measurements that change the state (von Neumann / Kraus
 * update): a yes/no region measurement and a finite-resolution position
 * measurement, each with the outcome drawn from the Born rule or forced by
 * the caller (to follow one branch of a protocol).
 *
 * Region measurement: effects E_yes = m(x), E_no = 1 - m(x) with m the region
 * weight (0/1 for geometric regions, so these are projectors).  The outcome
 * probability is <psi|E|psi> / <psi|psi>, and the state becomes
 * sqrt(E) psi, renormalised.
 * Position measurement with resolution sigma_a on the measured axes: Kraus
 * operators K_y(x) = prod_a (2 pi sigma_a^2)^(-1/4) exp(-(x_a - y_a)^2 / 4 sigma_a^2),
 * which satisfy integral K_y^2 dy = 1; the outcome density is
 * p(y) = integral K_y(x)^2 |psi(x)|^2 dx (the density blurred by a Gaussian of
 * variance sigma^2), and the state becomes K_y psi / sqrt(p(y)).  A drawn
 * outcome is a Born-rule position sample plus Gaussian noise of width sigma,
 * which has exactly that distribution. */
#ifndef PF_COLLAPSE_H
#define PF_COLLAPSE_H

#include "pf_measure.h"
#include "pf_random.h"

/* forced: -1 draws the outcome from r, 0 forces "no", 1 forces "yes".  A
 * forced outcome of probability 0 is an error (the branch does not exist).
 * On success *outcome is 0/1 and *probability that outcome's probability.
 * Records a "measure" step (method "region-yes" / "region-no"); its removed
 * field holds the probability of the branch not taken. */
pf_status pf_wave_measure_region(pf_wave *w, const pf_region *reg, pf_rng *r, int forced, int *outcome,
                                 double *probability);
/* sigma[a] > 0 measures axis a with that resolution (m), 0 leaves it alone.
 * forced == NULL draws the outcome from r; otherwise forced[a] is the
 * outcome on each measured axis.  outcome[a] receives the result (unmeasured
 * axes: NAN); *density the outcome's probability density p(y) (m^-k for k
 * measured axes).  A forced outcome of zero density is an error. */
pf_status pf_wave_measure_position(pf_wave *w, const double *sigma, pf_rng *r, const double *forced,
                                   double *outcome, double *density);

#endif
