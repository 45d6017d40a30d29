/* pf_resolution.h - checks that a built state is represented faithfully by
 * its grid, with warnings that carry the numbers and the remedy.
 *
 * Three conditions are checked per axis: the state fits inside the grid
 * (position extent), its smallest feature spans at least three grid spacings,
 * and its momentum content stays inside the Nyquist range |k| <= pi / dx.
 * Warnings go through pf_context_warn; strict mode (binding) turns them into
 * errors. */
#ifndef PF_RESOLUTION_H
#define PF_RESOLUTION_H

#include "pf_grid.h"
#include "pf_wave.h"

/* Smallest number of grid spacings a feature may span without a warning. */
#define PF_MIN_FEATURE_SPACINGS 3.0

/* The Gaussian family's extent as the builders check it: the state reaches
 * PF_GAUSS_REACH rms widths in position and in wave number, and its
 * smallest feature is its full width at half maximum. */
#define PF_GAUSS_REACH 6.0
#define PF_GAUSS_FWHM_PER_SIGMA 2.3548200450309493

/* The one definition of "resolved", used by the builders' check below and
 * by the grid advisor (pf_advise.c), so the advisor never proposes a grid a
 * builder rejects: an axis of spacing dx resolves a state whose smallest
 * feature is `feature` (m) and whose wave numbers reach |k| <= kmax (1/m)
 * when dx <= the value returned, i.e. feature >= PF_MIN_FEATURE_SPACINGS dx
 * and kmax <= pi / dx.  A NaN or non-positive field is not a constraint;
 * INFINITY when neither is. */
double pf_resolution_max_spacing(double feature, double kmax);

/* Analytic extent of a state per axis: it lives in [x_lo, x_hi] (m) and
 * [k_lo, k_hi] (1/m); feature is its smallest length scale (m).  A field set
 * to NaN is not checked. */
typedef struct pf_extent {
    double x_lo[PF_MAX_DIM], x_hi[PF_MAX_DIM];
    double k_lo[PF_MAX_DIM], k_hi[PF_MAX_DIM];
    double feature[PF_MAX_DIM];
} pf_extent;

/* Sets every field to NaN (nothing checked). */
void pf_extent_clear(pf_extent *e);

/* Warns (once per axis and condition) when the extent leaves the grid, the
 * feature is under-resolved or the momentum range passes Nyquist.  builder
 * names the caller in the message.  Returns the number of warnings. */
int pf_resolution_check(pf_grid *g, const char *builder, const pf_extent *e);

/* Measured check for states without an analytic extent: warns when more than
 * the guard threshold (pf_context_guard_threshold, default 1e-6) of the probability lies in the outer 1/32 of the points
 * on either side of an axis, in position (rep PF_POSITION) or near the
 * Nyquist limit (PF_MOMENTUM).  Transforms the wave as needed. */
pf_status pf_resolution_check_edges(pf_wave *w, pf_rep rep, const char *builder, int *warnings);

#endif
