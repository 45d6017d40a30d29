/* pf_reduce.c - weighted sums of |z|^2 that give the same bits for any thread
 * count.
 *
 * Floating-point addition is not associative, so a parallel sum whose split
 * depends on the number of threads changes the last bits of every observable.
 * Here the split is fixed: blocks of PF_REDUCE_BLOCK elements, each summed
 * serially, then the block partials added in block order. */
#include <stdlib.h>
#include <string.h>
#include "pf_internal.h"


pf_status pf_reduce_reserve(pf_grid *g)
{
    const size_t nblocks = (g->total + PF_REDUCE_BLOCK - 1) / PF_REDUCE_BLOCK;
    g->reduce_part = PF_ALLOC_N(g->ctx, nblocks * (size_t)(2 * (1 + 2 * g->dim)), sizeof(double));
    return g->reduce_part ? PF_OK : pf_context_status(g->ctx);
}

void pf_reduce_blocks(pf_grid *g, int width, pf_reduce_block_fn block, void *user, double *sums)
{
    /* A distributed grid: the same blocks, over the ranks (position layout). */
    if (g->dist) {
        pf_dist_reduce(g, PF_POSITION, width, block, user, sums);
        return;
    }
    const int d = g->dim;
    const size_t nblocks = (g->total + PF_REDUCE_BLOCK - 1) / PF_REDUCE_BLOCK;
    /* Every block writes its whole partial below, so the grid's reserved
     * buffer needs no clearing and a norm never fails for want of memory. */
    double *part = g->reduce_part;
    ptrdiff_t nb = (ptrdiff_t)nblocks;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t b = 0; b < nb; b++) {
        size_t begin = (size_t)b * PF_REDUCE_BLOCK;
        size_t end = begin + PF_REDUCE_BLOCK < g->total ? begin + PF_REDUCE_BLOCK : g->total;
        size_t idx[PF_MAX_DIM] = {0, 0, 0};
        size_t rest = begin;
        for (int a = d - 1; a >= 0; a--) {
            idx[a] = rest % g->n[a];
            rest /= g->n[a];
        }
        double acc[PF_REDUCE_MAX_WIDTH] = {0};
        block(user, begin, end, idx, acc);
        memcpy(part + (size_t)b * (size_t)width, acc, (size_t)width * sizeof(double));
    }
    pf_reduce_sum_parts(part, nblocks, width, sums);
}

/* Adds the per-block partials in block order: the one summation order every
 * reduction (threaded or distributed) ends with, so their bits agree. */
void pf_reduce_sum_parts(const double *part, size_t nblocks, int width, double *sums)
{
    for (int c = 0; c < width; c++) sums[c] = 0;
    for (size_t b = 0; b < nblocks; b++)
        for (int c = 0; c < width; c++) sums[c] += part[b * (size_t)width + (size_t)c];
}

typedef struct moments_job {
    const pf_grid *g;
    const double complex *z;
    const double *const *weights;
} moments_job;

/* One block of pf_reduce_axis_moments: |z|^2 and its weighted moments. */
static void moments_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    const moments_job *job = user;
    const int d = job->g->dim;
    const double complex *z = job->z;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    if (job->weights) { /* compensated (pf_sum_add): compensations in acc[W ..] */
        const int W = 1 + 2 * d;
        for (size_t off = begin; off < end; off++) {
            double rho = creal(z[off]) * creal(z[off]) + cimag(z[off]) * cimag(z[off]);
            pf_sum_add(&acc[0], &acc[W], rho);
            for (int a = 0; a < d; a++) {
                double wa = job->weights[a] ? job->weights[a][idx[a]] : 1.0;
                pf_sum_add(&acc[1 + a], &acc[W + 1 + a], wa * rho);
                pf_sum_add(&acc[1 + d + a], &acc[W + 1 + d + a], wa * wa * rho);
            }
            pf_index_next(job->g, idx);
        }
        return;
    }
    for (size_t off = begin; off < end; off++) {
        double rho = creal(z[off]) * creal(z[off]) + cimag(z[off]) * cimag(z[off]);
        acc[0] += rho;
        for (int a = 0; a < d; a++) {
            acc[1 + a] += rho;
            acc[1 + d + a] += rho;
        }
        pf_index_next(job->g, idx);
    }
}

pf_status pf_reduce_axis_moments(pf_grid *g, const double complex *z, const double *const *weights,
                                 double *sums)
{
    moments_job job = {g, z, weights};
    const int W = 1 + 2 * g->dim;
    double all[PF_REDUCE_MAX_WIDTH];
    pf_reduce_blocks(g, weights ? 2 * W : W, moments_block, &job, all);
    for (int c = 0; c < W; c++) sums[c] = weights ? all[c] + all[W + c] : all[c];
    return PF_OK;
}
