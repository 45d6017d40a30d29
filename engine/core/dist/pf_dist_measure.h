/* pf_dist_measure.h - measurements of the density of a wave split over MPI
 * ranks (pf_dist.h) whose result is small, computed on each rank's own
 * planes without ever holding the whole density (docs/distributed.md).
 *
 * Each function returns what the single process's code gives from the whole
 * density field (pf_field.h, pf_measure.h), to the bit: every output cell
 * (or running sum) receives its terms in the single process's order.  Where
 * a cell's terms lie on one rank only (the split axis is kept, slices,
 * column pictures), each rank fills its cells and the cells are combined by
 * adding exact zeros; otherwise the running partial travels from rank to
 * rank in the single process's order (position: rank order over the planes
 * of axis 0; momentum: for each wave number of axis 0 in ascending order,
 * over the ascending runs of axis 1 each rank holds), and the rank that
 * finishes it broadcasts it.  Ranks take turns on such a chain, so it costs
 * about the single process's time, but no rank holds more than its slab, the
 * result and one row of work.
 *
 * geom is the whole density's geometry (pf_field_geometry, its axes possibly
 * shifted to lab coordinates by the caller; values unused).  All functions
 * are collective and fail on every rank together.  Without MPI they refuse
 * (they are only called for distributed waves). */
#ifndef PF_DIST_MEASURE_H
#define PF_DIST_MEASURE_H

#include "pf_field.h"
#include "pf_measure.h"
#include "pf_random.h"

/* The geometry pf_field_for_grid gives (dim, n, first, step, total), with
 * no values allocated. */
void pf_field_geometry(const pf_grid *g, pf_rep rep, pf_field *out);

/* pf_field_marginal of the density of w in rep (keep[a] != 0 keeps axis a). */
pf_status pf_dist_marginal(pf_wave *w, pf_rep rep, const pf_field *geom, const int *keep, pf_field *out);
/* pf_field_slice of the density (fixed[a] an index or PF_FREE_AXIS). */
pf_status pf_dist_slice(pf_wave *w, pf_rep rep, const pf_field *geom, const size_t *fixed, pf_field *out);
/* pf_field_radial of the density. */
pf_status pf_dist_radial(pf_wave *w, pf_rep rep, const pf_field *geom, const double *center, double bin, size_t nbins,
                         double *profile, double *count);
/* pf_field_moments of the density (mean and/or cov may be NULL). */
pf_status pf_dist_moments(pf_wave *w, pf_rep rep, const pf_field *geom, double *mean, double *cov);
/* pf_wave_region_probability (position density, the grid's own axes). */
pf_status pf_dist_region_probability(pf_wave *w, const pf_region *r, double *p);
/* pf_sampler_draw's count events (out: count * dim coordinates, event
 * major) from the density of w in rep, on every rank: the same generator
 * draws, cells and coordinates as the single process's sampler on the whole
 * field, from a running sum handed along the ranks in field order; each
 * rank keeps only its slab, the events and the entry sums of its runs. */
pf_status pf_dist_draw_events(pf_wave *w, pf_rep rep, const pf_field *geom, pf_rng *rng, size_t count, int jitter,
                         double *out);
/* 1 on every rank when flag is set on any rank of g's split (flag itself
 * when g is held whole): a failure of one rank's own work fails all. */
int pf_dist_flag_any(const pf_grid *g, int flag);
/* The column density along the last axis of a 3D wave, n0 x n1 values
 * (pf_column_integrals of each row), as pf.picture_map draws it, on every
 * rank. */
pf_status pf_dist_column_picture(pf_wave *w, pf_rep rep, double *out);

#endif
