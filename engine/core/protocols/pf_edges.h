/* pf_edges.h - transmission of amplitude masks whose edges lie anywhere,
 * not only on grid points.
 *
 * A hard mask sampled on the grid switches whole cells: an edge moves in
 * steps of dx, and the error of everything downstream falls only as dx.
 * The exact construction used here instead takes the mask's Fourier
 * coefficients on the grid's periodic window analytically (an interval,
 * a comb of equal intervals, a disk) and keeps those the grid can hold:
 * the grid values are the band-limited mask, and the product with a
 * band-limited wave function is exact for every momentum component that
 * does not reach the band edge.  Grid values of a hard edge ring (Gibbs);
 * they are not clipped, because clipping would undo the exactness.
 *
 * A soft edge (width = Gaussian rms sigma > 0) is the hard mask convolved
 * with a normalised Gaussian: each coefficient is multiplied by
 * exp(-k^2 sigma^2 / 2); the edge profile is then an error function, and a
 * width of a few dx leaves no content near the Nyquist limit, so the
 * momentum guard stays quiet. */
#ifndef PF_EDGES_H
#define PF_EDGES_H

#include <complex.h>
#include "pf_grid.h"

typedef enum pf_edge_mode {
    PF_EDGES_CELLS = 0, /* sample the mask at grid points (open or shut per cell) */
    PF_EDGES_EXACT = 1  /* band-limited: exact Fourier coefficients of the mask */
} pf_edge_mode;

typedef struct pf_edges {
    pf_edge_mode mode;
    double width; /* Gaussian rms of a soft edge (m); 0 = hard.  Only with PF_EDGES_EXACT. */
} pf_edges;

/* Checks an edge description: mode known, width finite and >= 0, a width
 * only with the exact mode.  Fails with PF_EINVAL naming the bad value. */
pf_status pf_edges_check(pf_grid *g, const pf_edges *e);

/* A comb of equal open intervals [start + i pitch, start + i pitch + open),
 * i = first .. last (indices held as doubles: last - first may be huge, an
 * unbounded grating passes the index range it wants). */
typedef struct pf_edges_comb {
    double start; /* left edge of the interval with index 0 (m) */
    double open;  /* width of each open interval (m), > 0 */
    double pitch; /* interval-to-interval distance (m), >= open when first < last */
    double first; /* first index */
    double last;  /* last index, >= first */
} pf_edges_comb;

/* Transmission table of one axis (n[axis] values, natural order) for the
 * union of the comb's open intervals; only the intervals meeting the grid
 * window are visited, the interior ones in closed form.  Intervals are
 * clipped to the grid window [x_0, x_0 + span).  e->mode must be
 * PF_EDGES_EXACT. */
pf_status pf_edges_comb_table(pf_grid *g, int axis, const pf_edges_comb *comb, const pf_edges *e,
                              double complex *table);

/* Transmission field of a disk of radius r centred at (c_a, c_b) in the
 * plane of axes a != b, for the whole grid (row-major, natural order; on a
 * grid split over MPI ranks, this rank's position samples, pf_grid_local_range),
 * constant along a third axis.  Coefficients: 2 pi r^2 J1(kr) / (kr), the
 * disk's two-dimensional Fourier transform (standard result). */
pf_status pf_edges_disk_field(pf_grid *g, int axis_a, int axis_b, double c_a, double c_b, double radius,
                              const pf_edges *e, double complex *field);

#endif
