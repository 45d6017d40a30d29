/* pf_farfield.h - the far-field (Fraunhofer) time-of-flight image predicted
 * from the momentum distribution.
 *
 * After a long free flight each momentum component has moved to
 * x = hbar k t / m, so the density approaches
 *   n(x, t) ~ (m / hbar t)^d |phi(m x / hbar t)|^2.
 * The mapping neglects the source's own size: it holds when the far-field
 * (Fraunhofer) number N_F = m sigma^2 / (hbar t) is small on every axis,
 * sigma the rms width of the source.  For a Gaussian source without chirp the
 * peak density of the mapping differs from the exact one by the factor
 * sqrt(1 + 4 N_F^2), so the error falls as N_F^2; a source displaced from the
 * origin by x0 gives an image displaced by -x0 relative to the true one. */
#ifndef PF_FARFIELD_H
#define PF_FARFIELD_H

#include "pf_wave.h"

typedef struct pf_far_field_info {
    double spacing[PF_MAX_DIM];    /* image point spacing hbar t dk / m (m) */
    double fraunhofer[PF_MAX_DIM]; /* m sigma^2 / (hbar t) per axis */
    double width[PF_MAX_DIM];      /* rms width of the source (m) */
    double centre[PF_MAX_DIM];     /* mean position of the source (m) */
} pf_far_field_info;

/* Writes the far-field image at flight time t (> 0, finite) into out
 * (pf_grid_total doubles, row-major, ascending x = hbar k t / m on every axis,
 * so it lies on the grid of the same point count with origin 0 and the
 * reported spacing).  Units m^-d.  Transforms w as needed; w is unchanged
 * otherwise.  info may be NULL. */
pf_status pf_wave_far_field(pf_wave *w, double t, double *out, pf_far_field_info *info);

#endif
