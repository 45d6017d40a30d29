/* pf_grid.h - uniform periodic grids in 1, 2 or 3 dimensions.
 *
 * Axis a has n[a] points at x = origin[a] + (j - floor(n[a]/2)) * dx[a],
 * j = 0..n[a]-1, and period span[a] = n[a] * dx[a].  Momentum (wave-number)
 * axes are k = 2 pi m / span with m in FFT order: 0, 1, .., then the negative
 * values; for even n the Nyquist value -n/2 is stored as negative, as numpy's
 * fftfreq does.  Data are row-major: the last axis varies fastest.
 * A grid owns the FFTW plans for its shape; every wave function on the grid
 * shares them (new-array execute). */
#ifndef PF_GRID_H
#define PF_GRID_H

#include <stddef.h>
#include "pf_context.h"

#define PF_MAX_DIM 3

/* Range of grids the engine accepts.  Within it every derived quantity stays
 * a normal double with wide margin: moments (x^2 <= 1e60), cell volumes and
 * their inverses in 3D (dx^3 >= 1e-90, span^3 <= 1e90), energies from
 * k^2 <= (pi / 1e-30 m)^2.  Outside it results would overflow to inf,
 * underflow to 0 or lose all precision without notice. */
#define PF_GRID_MIN_POINTS 4         /* per axis: the guards need points inside their edge bands */
#define PF_GRID_MAX_EXTENT 1e30      /* m: largest span, and largest |origin| */
#define PF_GRID_MIN_SPACING 1e-30    /* m: smallest span / points */

typedef struct pf_grid pf_grid;

/* Creates a grid.  dim is 1..3; points[a] >= PF_GRID_MIN_POINTS; span[a]
 * at most PF_GRID_MAX_EXTENT with span[a] / points[a] at least
 * PF_GRID_MIN_SPACING; origin may be NULL (all zero) or values of magnitude
 * at most PF_GRID_MAX_EXTENT.  The estimated storage of
 * one wave function plus planning scratch is checked against the context's
 * memory cap first.  On success *out holds a grid with one reference. */
pf_status pf_grid_new(pf_context *ctx, int dim, const size_t *points,
                      const double *span, const double *origin, pf_grid **out);
void pf_grid_retain(pf_grid *g);
void pf_grid_release(pf_grid *g);

pf_context *pf_grid_context(const pf_grid *g);
int pf_grid_dim(const pf_grid *g);
size_t pf_grid_points(const pf_grid *g, int axis);
size_t pf_grid_total(const pf_grid *g);
double pf_grid_span(const pf_grid *g, int axis);
double pf_grid_spacing(const pf_grid *g, int axis);
double pf_grid_origin(const pf_grid *g, int axis);
/* Momentum spacing 2 pi / span and the largest |k| on the axis (pi / dx). */
double pf_grid_kspacing(const pf_grid *g, int axis);
double pf_grid_knyquist(const pf_grid *g, int axis);
/* Volume element dx*dy*dz of the position grid. */
double pf_grid_cell_volume(const pf_grid *g);

/* Coordinate of point j on an axis (position, natural order). */
double pf_grid_x(const pf_grid *g, int axis, size_t j);
/* Wave number of storage index j (FFT order). */
double pf_grid_k(const pf_grid *g, int axis, size_t j);
/* Converts between ascending-k order (i = 0 is the most negative k) and FFT
 * storage order on one axis. */
size_t pf_grid_fft_index(const pf_grid *g, int axis, size_t ascending);
size_t pf_grid_ascending_index(const pf_grid *g, int axis, size_t fft_index);
/* Pointers to the per-axis coordinate tables (valid while the grid lives). */
const double *pf_grid_x_table(const pf_grid *g, int axis);
const double *pf_grid_k_table(const pf_grid *g, int axis);

/* One axis of the grid on which n >= 2 samples were taken, from their
 * coordinates ax (ascending, uniform: each within 1e-6 of a step of where
 * the first and last put it).  Positions (wave_numbers 0, m): the grid's
 * points are the coordinates, span n dx and origin ax[n / 2] (the origin is
 * the point at index floor(n/2)).  Wave numbers (wave_numbers 1, rad/m,
 * spacing dk): the position grid whose transform has that spacing, span
 * 2 pi / dk (the DFT relation dk = 2 pi / (N dx)); phi(k) alone does not say
 * where the cloud sits, so the origin is 0.  Fails with PF_EINVAL (n < 2,
 * not ascending or not uniform), leaving span and origin alone. */
pf_status pf_grid_axis_from_samples(pf_context *ctx, const double *ax, size_t n, int wave_numbers, double *span,
                                    double *origin);

/* True when both grids have the same dimension, points, spans and origins. */
int pf_grid_same(const pf_grid *a, const pf_grid *b);

#endif
