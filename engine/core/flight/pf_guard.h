/* pf_guard.h - grid guards: how much probability sits at the edges of the
 * position grid (wrap-around risk) and of the momentum grid (aliasing risk).
 *
 * A periodic grid gives silently wrong physics once the state reaches its
 * edge: in position the packet re-enters on the other side; in momentum the
 * content beyond the Nyquist limit pi/dx folds back.  The guard measures, per
 * axis, the probability in the outer band (the outermost n/32 points, at least
 * one, at each end of the axis; in momentum the band next to +-pi/dx).  When a
 * band holds more than the threshold (default 1e-6, pf.setup{guard_threshold})
 * the engine warns once per wave function, representation and axis, with the
 * figures and a remedy.  In strict mode the binding turns that warning into a
 * guard error (runner exit code 3).
 *
 * Cost: only the band points of the representation the wave is in are read
 * (a small fraction of the grid); the other representation is measured when
 * the wave is next transformed into it, and the figure is attributed to the
 * last logged step.  |phi| does not change in a same-grid free flight, so the
 * momentum band is not measured again after one. */
#ifndef PF_GUARD_H
#define PF_GUARD_H

#include <stddef.h>
#include "pf_steplog.h"
#include "pf_wave.h"

#define PF_GUARD_DEFAULT_THRESHOLD 1e-6
/* The band is the outermost n / PF_GUARD_BAND_DIVISOR points at each end. */
#define PF_GUARD_BAND_DIVISOR 32

/* Threshold on the band probability above which guards warn; finite or +inf
 * (inf switches the warnings off), > 0.  Default PF_GUARD_DEFAULT_THRESHOLD. */
pf_status pf_context_set_guard_threshold(pf_context *ctx, double threshold);
double pf_context_guard_threshold(const pf_context *ctx);

/* Points in the band at each end of an axis of n points (>= 1, <= n/2). */
size_t pf_guard_band_points(size_t n);
/* Fraction of an axis of n points outside the two guard bands: the usable
 * share of a grid's span that long flights and the grid advisor plan with
 * (15/16 except on tiny grids). */
double pf_guard_inner_fraction(size_t n);
/* First FFT-storage index of an axis's momentum band: the band is the
 * contiguous range of 2 pf_guard_band_points(n) indices from there (the most
 * positive and most negative wave numbers meet in the middle of storage). */
size_t pf_guard_momentum_band_start(size_t n);

/* The guard figures of one wave function, for scripts and reports. */
typedef struct pf_guard_figures {
    int dim;
    double threshold;
    size_t band_points[PF_MAX_DIM];  /* per end of each axis */
    int known[2];                    /* [PF_POSITION], [PF_MOMENTUM]: figures describe the current state */
    double band[2][PF_MAX_DIM];      /* probability in the outer band per axis (valid where known) */
    int warned[2][PF_MAX_DIM];       /* a warning was given for this representation and axis */
    int periodic;                    /* marked periodic: the position figures are not a failure */
} pf_guard_figures;

/* Marks w periodic by design (on != 0) or not: the position-edge guards
 * (warnings, the figures' verdict, the builders' measured edge check) then
 * leave position alone; the momentum guard still watches Nyquist.  Copies
 * keep the mark. */
void pf_wave_set_periodic(pf_wave *w, int on);
int pf_wave_is_periodic(const pf_wave *w);

/* Measures the band of the representation w is in now (no transform) and
 * fills *out; the other representation's figures are reported when still
 * current.  May emit the guard warning. */
pf_status pf_wave_guard(pf_wave *w, pf_guard_figures *out);

/* Per axis, the coordinate interval [lo[a], hi[a]] (cell edges; m for
 * position, 1/m for momentum in ascending k) outside which at most eps/2 of
 * the probability lies on each side.  Transforms w into rep when needed.
 * eps in [0, 1).  A state touching both edges gives the whole axis. */
pf_status pf_wave_extent(pf_wave *w, pf_rep rep, double eps, double *lo, double *hi);

/* The tail probability the flight planners leave outside a state's extents:
 * the guard threshold, at most 1e-2. */
double pf_flight_extent_tail(const pf_context *ctx);
/* The state's extents in both representations, as the long flight and the
 * grid advisor measure them: pf_wave_extent with pf_flight_extent_tail, in
 * the representation w is in first (the other costs one transform).  Any
 * output pointer may not be NULL. */
pf_status pf_wave_flight_extents(pf_wave *w, double *x_lo, double *x_hi, double *k_lo, double *k_hi);

/* ---- hooks for the core's own files (pf_wave.c, pf_longflight.c) ---- */
/* Called by pf_wave_log_step before it appends *st: measures the band of the
 * current representation unless still known, fills st->edge_x / edge_k,
 * marks the other representation for lazy measurement, warns. */
void pf_guard_step(pf_wave *w, pf_step *st);
/* Called by pf_wave_to after a change of representation: measures a pending
 * band and records it in the last log entry. */
void pf_guard_after_transform(pf_wave *w);
/* The data changed without a logged step: forget the figures. */
void pf_guard_forget(pf_wave *w);
/* Whether the momentum band of the current state is known (a flight keeps
 * it), so a deferred flight may skip momentum representation. */
int pf_guard_momentum_known(const pf_wave *w);
/* Momentum band figures summed elsewhere while the state passed through
 * momentum representation (pf_fused.c: per axis, sum of |S|^2 over the
 * band).  Records them for the last logged step and returns 0; returns 1,
 * recording nothing, when one calls for a warning not given yet: the caller
 * then brings the state to momentum representation, where the guard measures
 * it again and words the warning with its remedy. */
int pf_guard_take_momentum_sums(pf_wave *w, const double *sums);
/* The wave moved to another grid: forget figures and earlier warnings. */
void pf_guard_rebind(pf_wave *w);

#endif
