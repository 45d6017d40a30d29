/* pf_wigner.h - Wigner function of a 1D state, of a 1D cut through a 2D/3D
 * state, or of the reduced one-axis state (partial trace over the others).
 *
 * W(x, k) = (1/pi) integral conj(psi(x + y)) psi(x - y) exp(2 i k y) dy, on the
 * grid's position points x_j and wave numbers k_m (ascending), normalised so
 * that integral W dx dk = 1 (W(x, p) = W(x, k) / hbar).  The correlation is
 * taken at half-cell steps y = s dx / 2, the half-cell values coming from the
 * band-limited interpolant (an exact shift in momentum space), so the k axis
 * is the grid's own with no aliasing; |y| < span / 2.  The x marginal is
 * |psi(x_j)|^2 exactly; the k marginal is |phi(k_m)|^2 up to the state's
 * correlation across half the box (negligible for a state well inside it). */
#ifndef PF_WIGNER_H
#define PF_WIGNER_H

#include "pf_wave.h"

typedef enum pf_wigner_mode {
    PF_WIGNER_CUT = 0,     /* psi along the axis through one grid point, renormalised to 1 */
    PF_WIGNER_REDUCED = 1  /* sum over all lines along the axis, weighted by the transverse cell */
} pf_wigner_mode;

/* Writes W(x_j, k_m) into out[j * n + m] (n = points on the axis, m in
 * ascending-k order).  through holds the grid index on every other axis for
 * a cut (ignored for the reduced mode and in 1D).  Adds weight * W to out when
 * accumulate is non-zero (for mixtures), else overwrites. */
pf_status pf_wave_wigner(pf_wave *w, int axis, pf_wigner_mode mode, const size_t *through, double weight,
                         int accumulate, double *out);

#endif
