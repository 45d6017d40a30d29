/* pf_kernels.h - multiply kernels shared by the protocol steps (pulses, masks,
 * uniform-force flight, split-step evolution).
 *
 * Core-internal, like pf_internal.h.  Two shapes of factor cover every step:
 * a product of per-axis tables (separable pulses and masks, kinetic phases)
 * and a full-grid array (non-separable masks, potentials).  The kernels that
 * also measure the removed probability use the same fixed block split as
 * pf_reduce.c, so the figure does not depend on the thread count. */
#ifndef PF_KERNELS_H
#define PF_KERNELS_H

#include "pf_internal.h"

/* data[i,j,k] *= scale * T0[i] * T1[j] * T2[k]; a NULL table stands for 1.
 * Used on hot paths: the outer products are formed per row, so the inner
 * loop costs one complex multiply per point. */
void pf_kernel_axis_multiply(pf_grid *g, double complex *data, const double complex *const *tables,
                             double complex scale);

/* Same product, and returns sum over points of |z|^2 (1 - |f|^2) taken with the
 * factor f before the multiply: the storage-unit probability a mask removes
 * (callers multiply by the cell volume, and by N in momentum storage). */
double pf_kernel_axis_mask(pf_grid *g, double complex *data, const double complex *const *tables);

/* data[i] *= field[i] for every point; returns sum |z|^2 (1 - |f|^2) like
 * pf_kernel_axis_mask when want_removed, else 0 (no reduction pass). */
double pf_kernel_field_mask(pf_grid *g, double complex *data, const double complex *field, int want_removed);
/* One block of the axis mask (a pf_reduce_block_fn): each point times
 * tables[0][i0] tables[1][i1] (tables[2][i2]) in axis order (NULL tables
 * skipped), acc[0] += |psi|^2 (1 - |f|^2) before it.  The block walks an
 * index layout lay[] from start[]; swap: index 0 is axis 1 and index 1
 * axis 0 (a distributed grid's transposed momentum slab, pf_dist.c), so
 * each point gets the single process's factor, to the bit. */
typedef struct pf_mask_job {
    double complex *data;
    const double complex *const *tables;
    int dim;
    const size_t *lay;
    int swap;
} pf_mask_job;
void pf_kernel_mask_block(void *user, size_t begin, size_t end, const size_t *start, double *acc);

/* One block of that mask (a pf_reduce_block_fn; the distributed grid's
 * mask runs the same body over its ranks' blocks, pf_dist.c): data[i] *=
 * field[i], acc[0] += |data[i]|^2 (1 - |field[i]|^2) before it. */
typedef struct pf_field_job {
    double complex *data;
    const double complex *field;
} pf_field_job;
void pf_kernel_field_block(void *user, size_t begin, size_t end, const size_t *start, double *acc);

/* exp(-i c m^2) per axis storage index, m the integer wave-number index, so
 * tables[a][j] = exp(-i tau k_a^2 / 2) with tau = hbar t / m exactly reduced
 * on the integer lattice (as the free flight does).  Extra translation by b[a]
 * metres (exp(-i k b)) when shift is not NULL.  tables[a] hold g->n[a]
 * entries each. */
void pf_kernel_kinetic_tables(const pf_grid *g, double tau, const double *shift, double complex **tables);

/* The integer wave-number index m of entry j of an axis of n points in FFT
 * order, as pf_grid.c lays the axis out (k[j] = m dk): 0..ceil(n/2)-1
 * non-negative, the rest negative.  Arithmetic on the index, not a
 * division and rounding of k[j] per entry: the same m, to the bit, at a
 * fraction of the cost on a 1D axis of a million points. */
static inline double pf_kernel_axis_m(size_t n, size_t j)
{
    return j < (n + 1) / 2 ? (double)j : (double)j - (double)n;
}

/* Tables of exp(-i c m^2) per axis entry (kinetic, flight) hold the same
 * value at m and -m, and (c (-m)) (-m) is (c m) m to the bit: the entries
 * j >= PF_KERNEL_MIRROR_FROM(n) hold negative m whose mirror n - j (with +m)
 * lies on the axis, so they are copied rather than evaluated again.  For
 * even n the entry n/2 (m = -n/2) has no mirror and is evaluated. */
#define PF_KERNEL_MIRROR_FROM(n) ((n) / 2 + 1)
/* Entries whose phases are formed before one vectorised exponential. */
#define PF_KERNEL_TABLE_BLOCK 512
/* Axes at least this long have their tables filled by all threads (a 1D
 * grid's axis holds every point; 2D and 3D axes are short). */
#define PF_KERNEL_TABLE_THREADED ((size_t)8192)

/* Sum of |z|^2 over the grid in storage units, deterministic (pf_reduce). */
double pf_kernel_sum_abs2(pf_grid *g, const double complex *data);

/* Probability (in physical units) of storage-unit sum s for the wave's
 * current representation. */
double pf_kernel_probability(const pf_wave *w, double s);

#endif
