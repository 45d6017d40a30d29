/* pf_dist_long.c - the distributed pieces of long flights (pf_scaled.c,
 * docs/distributed.md): the Fourier transform of a scaled flight in the
 * position slab layout, and the per-axis marginals the flight chooser
 * measures extents from, combined alike on every rank.
 *
 * A scaled stage keeps the point count, so the new grid has the old one's
 * slabs (FFTW-MPI's split depends on the counts only) and every rank keeps
 * its planes: the chirps are per-axis tables applied to each rank's own
 * planes (pf_scaled.c), and only the one FFT between them needs the ranks
 * together.  Its output must be a position-space wave in the position slab
 * layout, which the grid's TRANSPOSED_OUT plans do not give; plans without
 * the transposed flags make FFTW-MPI transpose back inside the transform
 * (one more global transpose than the exact flight pays, and no transform
 * of our own).  They are made on the first scaled stage onto a grid and
 * kept with the grid. */
#include <string.h>
#include "pf_dist.h"
#include "pf_internal.h"

#ifndef PF_HAVE_DIST

pf_status pf_dist_fft_natural(pf_grid *g, double complex *data, int sign)
{
    (void)data, (void)sign;
    return pf_dist_refuse(g->ctx, "a distributed scaled flight");
}

pf_status pf_dist_combine_marginals(const pf_grid *g, double **marg)
{
    (void)marg;
    return pf_dist_refuse(g->ctx, "distributed marginals");
}

#else

#include "pf_dist_grid.h"

/* Makes g's natural-layout plans (collective: every rank plans together,
 * from rank 0's wisdom, as pf_dist_grid_attach does).  Planning with
 * FFTW_MEASURE overwrites its arrays, so it plans on scratch; a rank out
 * of memory fails every rank together. */
static pf_status plan_natural(pf_grid *g)
{
    struct pf_dist_grid *D = g->dist;
    pf_context *ctx = g->ctx;
    ptrdiff_t n[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) n[a] = (ptrdiff_t)g->n[a];
    unsigned flags = pf_context_prepare_planner(ctx);
    size_t bytes = pf_grid_local_bytes(g);
    double complex *scratch = pf_alloc(ctx, bytes);
    int ok = scratch != NULL, all_ok = 0;
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_ok) {
        pf_context_free(ctx, scratch);
        return ok ? pf_fail(ctx, PF_ENOMEM, "another MPI rank ran out of memory planning a distributed scaled flight")
                  : pf_context_status(ctx);
    }
    fftw_mpi_broadcast_wisdom(MPI_COMM_WORLD);
    D->nat_fwd = fftw_mpi_plan_dft(g->dim, n, scratch, scratch, MPI_COMM_WORLD, FFTW_FORWARD, flags);
    D->nat_bwd = fftw_mpi_plan_dft(g->dim, n, scratch, scratch, MPI_COMM_WORLD, FFTW_BACKWARD, flags);
    pf_free(ctx, scratch, bytes);
    fftw_mpi_gather_wisdom(MPI_COMM_WORLD);
    /* FFTW-MPI plans collectively: one rank's failure is every rank's. */
    if (!D->nat_fwd || !D->nat_bwd) {
        if (D->nat_fwd) fftw_destroy_plan(D->nat_fwd);
        if (D->nat_bwd) fftw_destroy_plan(D->nat_bwd);
        D->nat_fwd = D->nat_bwd = NULL;
        return pf_fail(ctx, PF_EFFT, "FFTW-MPI could not plan a distributed transform of %zu points", g->total);
    }
    if (D->rank == 0) pf_context_store_wisdom(ctx);
    fftw_plan pair[2] = {D->nat_fwd, D->nat_bwd};
    return pf_context_note_plans(ctx, "distributed-natural", g, pair, 2);
}

pf_status pf_dist_fft_natural(pf_grid *g, double complex *data, int sign)
{
    struct pf_dist_grid *D = g->dist;
    if (!D->nat_fwd) {
        pf_status s = plan_natural(g);
        if (s) return s;
    }
    fftw_mpi_execute_dft(sign < 0 ? D->nat_fwd : D->nat_bwd, data, data);
    return PF_OK;
}

/* Every rank's partial marginals (its own samples' sums), added in rank
 * order: the same bits on every rank, so a flight chosen from them is the
 * same everywhere and no rank waits alone in a different method.  On the
 * split axis only one rank holds a given plane and its sum is the single
 * process's (its plane summed in the same order); the other axes add the
 * ranks' partial sums, which rounds differently from one process's single
 * pass by about 1e-16 relative (the extents are read off at a threshold
 * in whole grid points).  Rank 0's own partials are added first, with no
 * leading zero, as a sum of one term. */
pf_status pf_dist_combine_marginals(const pf_grid *g, double **marg)
{
    const struct pf_dist_grid *D = g->dist;
    pf_context *ctx = g->ctx;
    size_t len = 0;
    for (int a = 0; a < g->dim; a++) len += g->n[a];
    double *mine = PF_ALLOC_N(ctx, len, sizeof(double));
    double *all = mine ? PF_ALLOC_N(ctx, len * (size_t)D->size, sizeof(double)) : NULL;
    int ok = all != NULL, all_ok = 0;
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_ok) {
        pf_context_free(ctx, mine);
        pf_context_free(ctx, all);
        return ok ? pf_fail(ctx, PF_ENOMEM, "another MPI rank ran out of memory measuring a distributed wave's extent")
                  : pf_context_status(ctx);
    }
    for (int a = 0, at = 0; a < g->dim; at += (int)g->n[a], a++) memcpy(mine + at, marg[a], g->n[a] * sizeof(double));
    MPI_Allgather(mine, (int)len, MPI_DOUBLE, all, (int)len, MPI_DOUBLE, MPI_COMM_WORLD);
    for (int a = 0, at = 0; a < g->dim; at += (int)g->n[a], a++)
        for (size_t i = 0; i < g->n[a]; i++) {
            double sum = all[(size_t)at + i];
            for (int r = 1; r < D->size; r++) sum += all[(size_t)r * len + (size_t)at + i];
            marg[a][i] = sum;
        }
    pf_context_free(ctx, mine);
    pf_context_free(ctx, all);
    return PF_OK;
}

#endif
