/* pf_dist_long.c - the distributed pieces of long flights (pf_longflight.c,
 * docs/distributed.md): the Fourier transform of a scaled flight in the
 * position slab layout, and the per-axis marginals the flight chooser
 * measures extents from, combined alike on every rank.
 *
 * A scaled stage keeps the point count, so the new grid has the old one's
 * slabs (FFTW-MPI's split depends on the counts only) and every rank keeps
 * its planes: the chirps are per-axis tables applied to each rank's own
 * planes (pf_longflight.c), and only the one FFT between them needs the ranks
 * together.  Its output must be a position-space wave in the position slab
 * layout, which the grid's TRANSPOSED_OUT plans do not give; plans without
 * the transposed flags make FFTW-MPI transpose back inside the transform
 * (one more global transpose than the exact flight pays, and no transform
 * of our own).
 *
 * Plans depend on the point counts, never on the spacing, and every stage
 * of a scaled flight or an expansion makes a new grid of the same counts:
 * so the context keeps one pair per counts, layout, planner flags and
 * threads (pf_dist_plans), which every such grid shares.  Planning anew
 * for each grid cost several flights' time on 2 ranks (FFTW-MPI plans and
 * exchanges wisdom collectively). */
#include <stdlib.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_internal.h"

pf_status pf_dist_check_regrid(const pf_grid *g, const pf_grid *target, const char *what)
{
    /* pf_dist_grid_attach's rule for a grid made now. */
    int now = g->ctx->distribute && g->dim >= 2 && pf_dist_running();
    int split = g->dist != NULL;
    if (now == split && (!target || (target->dist != NULL) == split)) return PF_OK;
    return pf_fail(g->ctx, PF_ESTATE,
                   "%s would move a wave %s onto a grid %s (pf.setup{distribute} changed since the wave was made, "
                   "or the target grid was made under the other setting); set pf.setup{distribute = %s} again "
                   "before this flight",
                   what, split ? "split over MPI ranks" : "held whole", split ? "held whole" : "split over MPI ranks",
                   split ? "true" : "false");
}

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

pf_status pf_dist_plans(pf_grid *g, int transposed, void *fwd, void *bwd)
{
    (void)transposed, (void)fwd, (void)bwd;
    return pf_dist_refuse(g->ctx, "a distributed transform");
}

void pf_dist_plans_free(pf_context *ctx) { (void)ctx; }

#else

#include "pf_dist_grid.h"

/* One pair of plans of the cache: the key is everything an FFTW-MPI plan
 * depends on (the spacing is not). */
typedef struct plan_entry {
    int dim, transposed, threads;
    unsigned flags;
    size_t n[PF_MAX_DIM];
    fftw_plan fwd, bwd;
} plan_entry;

struct pf_dist_plan_cache {
    size_t count, cap;
    plan_entry *entry;
};

void pf_dist_plans_free(pf_context *ctx)
{
    struct pf_dist_plan_cache *c = ctx->dist_plans;
    if (!c) return;
    for (size_t i = 0; i < c->count; i++) {
        fftw_destroy_plan(c->entry[i].fwd);
        fftw_destroy_plan(c->entry[i].bwd);
    }
    free(c->entry);
    free(c);
    ctx->dist_plans = NULL;
}

/* Plans g's pair (collective: every rank plans together, from rank 0's
 * wisdom, and rank 0 keeps what everyone learnt).  Planning with
 * FFTW_MEASURE overwrites its arrays, so it plans on scratch; a rank out of
 * memory fails every rank together. */
static pf_status plan_pair(pf_grid *g, int transposed, unsigned flags, fftw_plan *fwd, fftw_plan *bwd)
{
    struct pf_dist_grid *D = g->dist;
    pf_context *ctx = g->ctx;
    ptrdiff_t n[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) n[a] = (ptrdiff_t)g->n[a];
    *fwd = *bwd = NULL;
    size_t bytes = pf_grid_local_bytes(g);
    double complex *scratch = pf_alloc(ctx, bytes);
    int ok = scratch != NULL, all_ok = 0;
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_ok) {
        pf_context_free(ctx, scratch);
        return ok ? pf_fail(ctx, PF_ENOMEM, "another MPI rank ran out of memory planning a distributed transform")
                  : pf_context_status(ctx);
    }
    fftw_mpi_broadcast_wisdom(MPI_COMM_WORLD);
    *fwd = fftw_mpi_plan_dft(g->dim, n, scratch, scratch, MPI_COMM_WORLD, FFTW_FORWARD,
                             flags | (transposed ? FFTW_MPI_TRANSPOSED_OUT : 0));
    *bwd = fftw_mpi_plan_dft(g->dim, n, scratch, scratch, MPI_COMM_WORLD, FFTW_BACKWARD,
                             flags | (transposed ? FFTW_MPI_TRANSPOSED_IN : 0));
    pf_free(ctx, scratch, bytes);
    fftw_mpi_gather_wisdom(MPI_COMM_WORLD);
    /* FFTW-MPI plans collectively: one rank's failure is every rank's. */
    if (!*fwd || !*bwd) {
        if (*fwd) fftw_destroy_plan(*fwd);
        if (*bwd) fftw_destroy_plan(*bwd);
        *fwd = *bwd = NULL;
        return pf_fail(ctx, PF_EFFT, "FFTW-MPI could not plan a distributed transform of %zu points", g->total);
    }
    if (D->rank == 0) pf_context_store_wisdom(ctx);
    fftw_plan pair[2] = {*fwd, *bwd};
    return pf_context_note_plans(ctx, transposed ? "distributed" : "distributed-natural", g, pair, 2);
}

pf_status pf_dist_plans(pf_grid *g, int transposed, void *fwd_out, void *bwd_out)
{
    pf_context *ctx = g->ctx;
    fftw_plan *fwd = fwd_out, *bwd = bwd_out;
    const unsigned flags = pf_context_prepare_planner(ctx);
    const int threads = ctx->threads;
    struct pf_dist_plan_cache *c = ctx->dist_plans;
    for (size_t i = 0; c && i < c->count; i++) {
        const plan_entry *e = &c->entry[i];
        int same = e->dim == g->dim && e->transposed == transposed && e->threads == threads && e->flags == flags;
        for (int a = 0; same && a < g->dim; a++) same = e->n[a] == g->n[a];
        if (same) {
            *fwd = e->fwd;
            *bwd = e->bwd;
            return PF_OK;
        }
    }
    /* Room first (bookkeeping outside the memory cap, as FFTW's own plan
     * storage is), so a plan once made is never lost; a rank without it
     * fails every rank before the collective planning. */
    int ok = 1, all_ok = 0;
    if (!c) {
        c = calloc(1, sizeof *c);
        ok = c != NULL;
        ctx->dist_plans = c;
    }
    if (ok && c->count == c->cap) {
        size_t cap = c->cap ? 2 * c->cap : 4;
        plan_entry *grown = realloc(c->entry, cap * sizeof *grown);
        ok = grown != NULL;
        if (ok) {
            c->entry = grown;
            c->cap = cap;
        }
    }
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_ok)
        return pf_fail(ctx, PF_ENOMEM, "%s ran out of memory keeping a distributed plan",
                       ok ? "another MPI rank" : "this MPI rank");
    pf_status s = plan_pair(g, transposed, flags, fwd, bwd);
    if (!*fwd) return s;
    /* Kept even when noting it for the manifest failed (s). */
    plan_entry *e = &c->entry[c->count++];
    memset(e, 0, sizeof *e);
    e->dim = g->dim;
    e->transposed = transposed;
    e->threads = threads;
    e->flags = flags;
    for (int a = 0; a < g->dim; a++) e->n[a] = g->n[a];
    e->fwd = *fwd;
    e->bwd = *bwd;
    return s;
}

pf_status pf_dist_fft_natural(pf_grid *g, double complex *data, int sign)
{
    struct pf_dist_grid *D = g->dist;
    if (!D->nat_fwd) {
        pf_status s = pf_dist_plans(g, 0, &D->nat_fwd, &D->nat_bwd);
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
