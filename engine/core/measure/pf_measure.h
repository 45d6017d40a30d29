/* pf_measure.h - regions of space and the observables that need them or a
 * second state: probability in a region and fidelity.
 *
 * A region is described by a small value (pf_region).  Geometric regions
 * (box, half-space, ball) select grid points by their centre: weight 1 inside
 * (boundary included), 0 outside, so a region is a projector on the grid.  A
 * mask region carries one weight in [0, 1] per grid point (a soft region:
 * the measurement it defines is a two-outcome POVM with effects m and 1 - m). */
#ifndef PF_MEASURE_H
#define PF_MEASURE_H

#include <complex.h>
#include "pf_field.h"
#include "pf_wave.h"

typedef enum pf_region_kind {
    PF_REGION_BOX = 0,    /* lo[a] <= x_a <= hi[a] on every axis */
    PF_REGION_HALF_SPACE, /* (x - point) . normal >= 0 */
    PF_REGION_BALL,       /* |x - center| <= radius */
    PF_REGION_MASK        /* weights given per grid point */
} pf_region_kind;

typedef struct pf_region {
    pf_region_kind kind;
    double lo[PF_MAX_DIM], hi[PF_MAX_DIM]; /* box corners (m); +-INFINITY leaves an axis open */
    double point[PF_MAX_DIM];              /* half-space: a point on the plane; ball: centre */
    double normal[PF_MAX_DIM];             /* half-space: normal pointing into the region */
    double radius;                         /* ball radius (m) */
    const double *mask;                    /* mask: pf_grid_total weights, row-major natural order; borrowed */
    /* A mask of a grid split over MPI ranks may hold only this rank's
     * points: mask[i] is the weight of global offset mask_first + i, for
     * mask_count points (0: every point of the grid, mask_first 0). */
    size_t mask_first, mask_count;
} pf_region;

/* Checks the region's numbers against grid g (finite, ordered corners,
 * non-zero normal, positive radius, mask weights in [0, 1]). */
pf_status pf_region_check(const pf_grid *g, const pf_region *r);
/* Writes the weight of every position grid point (pf_grid_total doubles). */
pf_status pf_region_weights(const pf_grid *g, const pf_region *r, double *out);
/* 1 when position x (dim coordinates) lies in geometric region r (box,
 * half-space or ball; boundary included), else 0: the rule of
 * pf_region_weights at one point. */
int pf_region_contains(int dim, const pf_region *r, const double *x);
/* Integral of weight times the field (a position field on g's geometry). */
pf_status pf_field_region_integral(const pf_field *f, const pf_grid *g, const pf_region *r, double *out);

/* Probability that a position measurement finds the state in the region:
 * integral of weight |psi|^2 divided by the norm (so it stays a conditional
 * probability after masks removed part of the state). */
pf_status pf_wave_region_probability(pf_wave *w, const pf_region *r, double *p);
/* Fidelity |<a|b>|^2 / (<a|a><b|b>), between 0 and 1, with <a|b> from
 * pf_wave_inner (pf_algebra.h): same grid and mass. */
pf_status pf_wave_fidelity(pf_wave *a, pf_wave *b, double *out);

#endif
