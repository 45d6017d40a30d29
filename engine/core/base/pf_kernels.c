/* pf_kernels.c - the multiply kernels behind pulses, masks, forces and
 * split-step evolution (see pf_kernels.h). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_internal.h"
#include "pf_kernels.h"
#include "pf_cis.h"

static double abs2(double complex z) { return creal(z) * creal(z) + cimag(z) * cimag(z); }

/* Same block size as pf_reduce.c: the split of every sum is fixed. */
#define PF_KERNEL_BLOCK ((size_t)16384)
/* The mask kernels keep one partial per block in the grid's reduction
 * buffer, which holds at least one per PF_REDUCE_BLOCK points. */
_Static_assert(PF_KERNEL_BLOCK >= PF_REDUCE_BLOCK, "kernel partials fit the grid's reduction buffer");

/* A grid split over MPI ranks (pf_dist.h): the position slab's planes
 * [first, first + count) of axis 0, data indexed from the slab's start. */
static void dist_axis_multiply(pf_grid *g, double complex *data, const double complex *const *tables,
                               double complex scale)
{
    size_t first, end;
    pf_grid_local_range(g, &first, &end);
    const size_t plane = g->total / g->n[0], inner = g->dim == 3 ? g->n[2] : g->n[1];
    const size_t rows = (end - first) / inner, per_plane = plane / inner;
    const double complex *t0 = tables[0], *t1 = tables[1], *t2 = g->dim > 2 ? tables[2] : NULL;
    ptrdiff_t nr = (ptrdiff_t)rows;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t r = 0; r < nr; r++) {
        size_t i = first / plane + (size_t)r / per_plane, j = (size_t)r % per_plane;
        double complex *row = data + (size_t)r * inner;
        if (g->dim == 2) {
            double complex f = t0 ? scale * t0[i] : scale;
            if (t1)
                for (size_t k = 0; k < inner; k++) row[k] *= f * t1[k];
            else
                for (size_t k = 0; k < inner; k++) row[k] *= f;
            continue;
        }
        double complex f = scale;
        if (t0) f *= t0[i];
        if (t1) f *= t1[j];
        if (t2)
            for (size_t k = 0; k < inner; k++) row[k] *= f * t2[k];
        else
            for (size_t k = 0; k < inner; k++) row[k] *= f;
    }
}

/* Points per piece of the 1D kinetic pass shared out among threads. */
#define AXIS_PIECE ((size_t)8192)

void pf_kernel_axis_multiply(pf_grid *g, double complex *data, const double complex *const *tables,
                             double complex scale)
{
    if (g->dist) {
        dist_axis_multiply(g, data, tables, scale);
        return;
    }
    const size_t n0 = g->n[0], n1 = g->n[1], n2 = g->n[2];
    const double complex *t0 = tables[0], *t1 = g->dim > 1 ? tables[1] : NULL,
                         *t2 = g->dim > 2 ? tables[2] : NULL;
    const int threads = g->ctx->threads;
    if (g->dim == 1) {
        ptrdiff_t n = (ptrdiff_t)n0;
        if (t0) {
            /* The vectorised phase kernel (pf_flight.c): the same products
             * in the same order as data[i] *= scale * t0[i], on pieces of a
             * fixed size (each point is independent: the bits depend on
             * neither the split nor the vector path). */
            const pf_phase_row_fn row = pf_phase_kernel();
            const ptrdiff_t pieces = (n + (ptrdiff_t)AXIS_PIECE - 1) / (ptrdiff_t)AXIS_PIECE;
#pragma omp parallel for num_threads(threads) schedule(static)
            for (ptrdiff_t b = 0; b < pieces; b++) {
                size_t i0 = (size_t)b * AXIS_PIECE, m = n0 - i0 < AXIS_PIECE ? n0 - i0 : AXIS_PIECE;
                row((double *)(data + i0), (const double *)(t0 + i0), creal(scale), cimag(scale), m);
            }
        } else {
#pragma omp parallel for num_threads(threads) schedule(static)
            for (ptrdiff_t i = 0; i < n; i++) data[i] *= scale;
        }
        return;
    }
    if (g->dim == 2) {
#pragma omp parallel for num_threads(threads) schedule(static)
        for (ptrdiff_t i = 0; i < (ptrdiff_t)n0; i++) {
            double complex r = t0 ? scale * t0[i] : scale;
            double complex *row = data + (size_t)i * n1;
            if (t1)
                pf_phase_kernel()((double *)row, (const double *)t1, creal(r), cimag(r), n1);
            else
                for (size_t j = 0; j < n1; j++) row[j] *= r;
        }
        return;
    }
#pragma omp parallel for collapse(2) num_threads(threads) schedule(static)
    for (ptrdiff_t i = 0; i < (ptrdiff_t)n0; i++) {
        for (ptrdiff_t j = 0; j < (ptrdiff_t)n1; j++) {
            double complex r = scale;
            if (t0) r *= t0[i];
            if (t1) r *= t1[j];
            double complex *row = data + ((size_t)i * n1 + (size_t)j) * n2;
            if (t2)
                pf_phase_kernel()((double *)row, (const double *)t2, creal(r), cimag(r), n2);
            else
                for (size_t k = 0; k < n2; k++) row[k] *= r;
        }
    }
}


void pf_kernel_mask_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    const pf_mask_job *job = user;
    const int d = job->dim;
    const size_t *lay = job->lay;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    for (size_t off = begin; off < end; off++) {
        double complex f = 1.0;
        for (int a = 0; a < d; a++) {
            size_t i = job->swap && a < 2 ? idx[1 - a] : idx[a];
            if (job->tables[a]) f *= job->tables[a][i];
        }
        double rho = abs2(job->data[off]);
        acc[0] += rho * (1.0 - abs2(f));
        job->data[off] *= f;
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < lay[a]) break;
            idx[a] = 0;
        }
    }
}

/* The mask over the fixed blocks of pf_reduce_blocks, the removed
 * probability summed block by block in order (over MPI ranks: the same
 * blocks, so the same bits). */
double pf_kernel_axis_mask(pf_grid *g, double complex *data, const double complex *const *tables)
{
    pf_mask_job job = {data, tables, g->dim, g->n, 0};
    double sum = 0;
    pf_reduce_blocks(g, 1, pf_kernel_mask_block, &job, &sum);
    return sum;
}

void pf_kernel_field_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    (void)start;
    const pf_field_job *job = user;
    for (size_t i = begin; i < end; i++) {
        acc[0] += abs2(job->data[i]) * (1.0 - abs2(job->field[i]));
        job->data[i] *= job->field[i];
    }
}

double pf_kernel_field_mask(pf_grid *g, double complex *data, const double complex *field, int want_removed)
{
    const ptrdiff_t total = (ptrdiff_t)g->total;
    if (!want_removed) {
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (ptrdiff_t i = 0; i < total; i++) data[i] *= field[i];
        return 0;
    }
    pf_field_job job = {data, field};
    double sum = 0;
    pf_reduce_blocks(g, 1, pf_kernel_field_block, &job, &sum);
    return sum;
}

void pf_kernel_kinetic_tables(const pf_grid *g, double tau, const double *shift, double complex **tables)
{
    for (int a = 0; a < g->dim; a++) {
        double dk = PF_TWO_PI / g->span[a];
        double c = 0.5 * tau * dk * dk; /* kinetic phase = c m^2 for the integer index m */
        /* Translation phase k b = 2 pi m (b / span): reduced to turns exactly
         * on the integer lattice, so large shifts keep full precision. */
        double frac = shift ? shift[a] / g->span[a] : 0.0;
        double complex *t = tables[a];
        const size_t n = g->n[a];
        /* Without a shift each |m| is evaluated once (pf_kernels.h). */
        const ptrdiff_t evaluated = (ptrdiff_t)(shift ? n : PF_KERNEL_MIRROR_FROM(n));
        /* The exponentials are the cost of a new step on a 1D grid: each
         * |m| once, through the vectorised exp(-i phase) (pf_cis.h) a block
         * at a time, blocks shared among threads (each entry the same
         * whichever thread makes it). */
        const ptrdiff_t blocks = (evaluated + PF_KERNEL_TABLE_BLOCK - 1) / PF_KERNEL_TABLE_BLOCK;
#pragma omp parallel num_threads(g->ctx->threads) if (n >= PF_KERNEL_TABLE_THREADED)
        {
#pragma omp for schedule(static)
            for (ptrdiff_t b = 0; b < blocks; b++) {
                double phase[PF_KERNEL_TABLE_BLOCK];
                const ptrdiff_t j0 = b * PF_KERNEL_TABLE_BLOCK;
                const size_t len = (size_t)(evaluated - j0 < PF_KERNEL_TABLE_BLOCK ? evaluated - j0 : PF_KERNEL_TABLE_BLOCK);
                for (size_t i = 0; i < len; i++) {
                    double m = pf_kernel_axis_m(n, (size_t)j0 + i);
                    double turns = shift ? fmod(m * frac, 1.0) : 0.0;
                    phase[i] = c * m * m + PF_TWO_PI * turns;
                }
                pf_cis_minus(phase, t + j0, len);
            }
#pragma omp for schedule(static)
            for (ptrdiff_t j = evaluated; j < (ptrdiff_t)n; j++) t[j] = t[n - (size_t)j];
        }
    }
}

double pf_kernel_sum_abs2(pf_grid *g, const double complex *data)
{
    double sums[1 + 2 * PF_MAX_DIM];
    if (pf_reduce_axis_moments(g, data, NULL, sums) != PF_OK) return NAN;
    return sums[0];
}

double pf_kernel_probability(const pf_wave *w, double s)
{
    const pf_grid *g = w->grid;
    double v = pf_grid_cell_volume(g);
    if (w->rep == PF_MOMENTUM) v *= (double)g->total;
    return s * v;
}
