/* pf_field.h - sampled distributions on regular axes (pf_field) and the
 * reductions a physicist reads off them: marginals and column densities,
 * slices, radial profiles, integrals and moments.
 *
 * A field is a row-major array of real values with, per axis, the coordinate
 * of the first sample and the spacing.  The density of a wave function is a
 * field in position space (axes in m, values in m^-d) or in wave-number space
 * (axes in 1/m ascending, values in m^d).  Fields are what detector models,
 * samplers and the ensemble sums work on, so pure states and mixtures share
 * one code path. */
#ifndef PF_FIELD_H
#define PF_FIELD_H

#include <stddef.h>
#include "pf_wave.h"

typedef struct pf_field {
    pf_context *ctx;     /* accounts the storage; not retained */
    int dim;
    size_t n[PF_MAX_DIM];
    double first[PF_MAX_DIM], step[PF_MAX_DIM];
    size_t total;
    double *values;      /* owned, pf_field_free releases it */
} pf_field;

/* Makes a zeroed field (dim 1..3, n[a] >= 1, step[a] > 0).  On failure the
 * field is left empty (values NULL) and the reason recorded in ctx. */
pf_status pf_field_new(pf_context *ctx, int dim, const size_t *n, const double *first, const double *step,
                       pf_field *out);
/* Releases the values; harmless on an empty field. */
void pf_field_free(pf_field *f);
/* Makes a zeroed field with the geometry of grid g in the representation rep
 * (position: x axes; momentum: ascending wave-number axes). */
pf_status pf_field_for_grid(const pf_grid *g, pf_rep rep, pf_field *out);
/* Adds weight * |psi|^2 (or |phi|^2) of w to f, which must have w's grid
 * geometry in that representation.  scratch holds pf_grid_total doubles or is
 * NULL (then allocated here).  Transforms w if needed. */
pf_status pf_field_add_density(pf_field *f, pf_wave *w, pf_rep rep, double weight, double *scratch);
/* Integral of the field: sum of values times the cell volume. */
double pf_field_integral(const pf_field *f);
/* Coordinate of sample j on an axis. */
double pf_field_coord(const pf_field *f, int axis, size_t j);
/* Index of the sample nearest to coordinate c on an axis (clamped). */
size_t pf_field_nearest(const pf_field *f, int axis, double c);

/* Integrates over every axis whose keep[a] is 0 (value times spacing) and
 * returns the remaining axes in order as a new field.  At least one axis must
 * be kept.  A column density is the marginal that drops the imaging axis. */
pf_status pf_field_marginal(const pf_field *f, const int *keep, pf_field *out);
/* Column integrals along the last axis of a row-major array of rows x count
 * values: out[r] = (the values of row r summed in order) * step.  This is the
 * column density pf.picture_map draws for a 3D wave: one product per row,
 * where pf_field_marginal weights each value (the two agree to rounding, not
 * bit for bit); the distributed picture calls it row by row, so it gives the
 * single process's bits.  out may be values: out[r] is written after row r is
 * read. */
void pf_column_integrals(const double *values, size_t rows, size_t count, double step, double *out);
/* Values along the free axes (fixed[a] == PF_FREE_AXIS) with the other axes
 * held at the given indices.  At least one axis must be free. */
#define PF_FREE_AXIS ((size_t)-1)
pf_status pf_field_slice(const pf_field *f, const size_t *fixed, pf_field *out);
/* Mean of the values in rings (2D) or shells (3D) of width bin around center:
 * profile[b] averages the samples with b*bin <= r < (b+1)*bin, count[b] is
 * their number (profile is 0 where count is 0).  Needs dim >= 2. */
pf_status pf_field_radial(const pf_field *f, const double *center, double bin, size_t nbins, double *profile,
                          double *count);
/* Normalised mean (per axis) and covariance matrix (dim x dim, row-major) of
 * the coordinates weighted by the values.  Either output may be NULL. */
pf_status pf_field_moments(const pf_field *f, double *mean, double *cov);

#endif
