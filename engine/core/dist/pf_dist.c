/* pf_dist.c - grids split over MPI ranks in slabs (pf_dist.h): the slab
 * layout and FFTW-MPI plans, transforms and the exact flight on the
 * transposed layout, sampling at a rank's own points, reductions in a global
 * block order that does not depend on the rank count, and gathering a wave
 * onto rank 0.
 *
 * Built with FFTW's MPI layer only when the Makefile finds it (PF_HAVE_DIST);
 * otherwise the functions below answer for a single process and no grid is
 * ever distributed. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_kernels.h"

pf_status pf_dist_refuse(pf_context *ctx, const char *what)
{
    return pf_fail(ctx, PF_ESTATE,
                   "%s is not available for a grid distributed over MPI ranks (yet); docs/distributed.md lists what "
                   "is, or run without pf.setup{distribute = true}",
                   what);
}

void pf_context_set_distribute(pf_context *ctx, int on) { ctx->distribute = on != 0; }
int pf_context_distribute(const pf_context *ctx) { return ctx->distribute; }
int pf_grid_distributed(const pf_grid *g) { return g->dist != NULL; }
int pf_wave_distributed(const pf_wave *w) { return w->grid->dist != NULL; }

/* Advisor arithmetic, the same with or without MPI: FFTW-MPI's slab split
 * gives ceil(n0 / ranks) planes to the busiest rank, and its work array for
 * the transposed output is the larger of the two slabs. */
/* FFTW-MPI's default split gives ceil(n / ranks) planes to the busiest
 * rank; its transposed-output work array is the larger of the two slabs. */
static size_t slab_values(int dim, const size_t *points, size_t ranks)
{
    size_t plane0 = 1, plane1 = 1;
    for (int a = 1; a < dim; a++) plane0 *= points[a];
    for (int a = 0; a < dim; a++)
        if (a != 1) plane1 *= points[a];
    size_t p0 = (points[0] + ranks - 1) / ranks, p1 = (points[1] + ranks - 1) / ranks;
    return p0 * plane0 > p1 * plane1 ? p0 * plane0 : p1 * plane1;
}

size_t pf_dist_planned_values(const pf_context *ctx, int dim, const size_t *points, size_t total)
{
    if (!ctx->distribute || dim < 2 || !pf_dist_running()) return total;
    return slab_values(dim, points, (size_t)pf_dist_ranks());
}

size_t pf_dist_advise_ranks(int dim, const size_t *points, double waves, double bytes_per_rank, double *need)
{
    if (dim < 2 || !(waves > 0) || !(bytes_per_rank > 0)) return 0;
    for (size_t r = 1; r <= points[0]; r++) {
        /* waves wave functions and one planning scratch, 16 bytes a value */
        double bytes = (waves + 1.0) * (double)slab_values(dim, points, r) * 16.0;
        if (bytes <= bytes_per_rank) {
            if (need) *need = bytes;
            return r;
        }
    }
    return 0;
}

/* Rows of a wave every process holds whole (see pf_wave_gather_rows). */
static pf_status whole_rows(pf_wave *w, pf_rep rep, size_t first, size_t count, double complex *out)
{
    pf_status s = pf_wave_to(w, rep);
    if (s) return s;
    const double complex *z = pf_wave_data_const(w);
    if (!z) return pf_context_status(w->grid->ctx);
    const size_t n0 = w->grid->n[0], plane = w->grid->total / n0;
    for (size_t i = 0; i < count; i++) memcpy(out + i * plane, z + ((first + i) % n0) * plane, plane * sizeof *out);
    return PF_OK;
}

#ifndef PF_HAVE_DIST

#include <time.h>
int pf_dist_start(void) { return 0; }
void pf_dist_stop(void) {}
double pf_dist_seconds(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}
int pf_dist_built(void) { return 0; }
int pf_dist_running(void) { return 0; }
int pf_dist_rank(void) { return 0; }
int pf_dist_ranks(void) { return 1; }
pf_status pf_dist_grid_attach(pf_grid *g) { (void)g; return PF_OK; }
void pf_dist_planner_ready(int distribute) { (void)distribute; }
int pf_dist_planners_registered(void) { return 0; }
void pf_dist_grid_release(pf_grid *g) { (void)g; }
size_t pf_dist_local_values(const pf_grid *g) { return g->total; }
pf_status pf_dist_wave_to(pf_wave *w, pf_rep rep) { return pf_dist_refuse(w->grid->ctx, "a distributed transform"); }
pf_status pf_dist_fly(pf_wave *w, double t, double tau)
{
    (void)t, (void)tau;
    return pf_dist_refuse(w->grid->ctx, "a distributed flight");
}
pf_status pf_dist_fill(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user)
{
    (void)rep, (void)fn, (void)user;
    return pf_dist_refuse(w->grid->ctx, "a distributed fill");
}
void pf_dist_reduce(pf_grid *g, pf_rep layout, int width, pf_reduce_block_fn block, void *user, double *sums)
{
    (void)layout;
    pf_reduce_blocks(g, width, block, user, sums);
}
pf_status pf_dist_axis_moments(pf_wave *w, const double *const *weights, double *sums)
{
    return pf_reduce_axis_moments(w->grid, w->store, weights, sums);
}
pf_status pf_dist_sums(pf_grid *g, const double complex *z, pf_rep rep, const double *const *weights, double *sums)
{
    (void)rep;
    return pf_reduce_axis_moments(g, z, weights, sums);
}
void pf_dist_forward(pf_grid *g, double complex *data) { (void)g, (void)data; }
size_t pf_dist_rep_values(const pf_grid *g, pf_rep rep) { (void)rep; return g->total; }
pf_status pf_dist_sample(pf_grid *g, pf_rep rep, pf_sample_fn fn, void *user, double complex *out)
{
    return pf_grid_sample(g, rep, fn, user, NULL, out);
}
double pf_dist_field_mask(pf_grid *g, pf_rep rep, double complex *data, const double complex *field, int want_removed)
{
    (void)rep;
    return pf_kernel_field_mask(g, data, field, want_removed);
}
double pf_dist_band_sum(const pf_wave *w, int a) { (void)w, (void)a; return 0.0; }
size_t pf_dist_position_values(const pf_grid *g) { return g->total; }
void pf_dist_minmax(const pf_grid *g, double *lo, double *hi) { (void)g, (void)lo, (void)hi; }
int pf_dist_any(const pf_grid *g, int flag) { (void)g; return flag; }
void pf_dist_kinetic(pf_grid *g, double complex *data, double complex *const *tables, double scale)
{
    (void)g, (void)data, (void)tables, (void)scale;
}
void pf_dist_backward(pf_grid *g, double complex *data) { (void)g, (void)data; }
pf_status pf_dist_momentum_unscaled(pf_wave *w, double *scale)
{
    *scale = 1.0;
    return pf_dist_refuse(w->grid->ctx, "a distributed transform");
}
void pf_dist_momentum_multiply(pf_grid *g, double complex *data, const double complex *const *tables, double scale)
{
    (void)g, (void)data, (void)tables, (void)scale;
}
pf_status pf_dist_on_whole(pf_wave *w, pf_rep rep, pf_dist_whole_fn fn, void *user, double *out, size_t n)
{
    (void)rep, (void)n;
    return fn(w, user, out);
}
double pf_dist_momentum_axis_mask(pf_grid *g, double complex *data, const double complex *const *tables)
{
    return pf_kernel_axis_mask(g, data, tables);
}
pf_status pf_dist_on_whole_update(pf_wave *w, pf_dist_whole_fn fn, void *user, double *out, size_t n, void *state,
                                  size_t state_bytes)
{
    (void)n, (void)state, (void)state_bytes;
    return fn(w, user, out);
}
pf_status pf_dist_shared_density(pf_wave *w, pf_rep rep, double *out)
{
    (void)rep, (void)out;
    return pf_dist_refuse(w->grid->ctx, "a distributed density");
}
void pf_grid_local_range(const pf_grid *g, size_t *begin, size_t *end)
{
    *begin = 0;
    *end = g->total;
}
pf_status pf_dist_marginals(const pf_wave *w, double **marg)
{
    (void)marg;
    return pf_dist_refuse(w->grid->ctx, "distributed marginals");
}
void pf_grid_slab(const pf_grid *g, pf_rep rep, size_t *first, size_t *count)
{
    *first = 0;
    *count = g->n[rep == PF_MOMENTUM && g->dim > 1 ? 1 : 0];
}
pf_status pf_wave_gather_density(pf_wave *w, pf_rep rep, double *out) { return pf_wave_density(w, rep, out); }
pf_status pf_wave_gather_rows(pf_wave *w, pf_rep rep, size_t first, size_t count, double complex *out)
{
    return whole_rows(w, rep, first, count, out);
}
size_t pf_grid_local_bytes(const pf_grid *g) { return pf_bytes(g->total, sizeof(double complex)); }
pf_status pf_wave_gather(pf_wave *w, pf_rep rep, double complex *out)
{
    pf_status s = pf_wave_to(w, rep);
    if (s) return s;
    const double complex *d = pf_wave_data_const(w);
    if (!d) return pf_context_status(w->grid->ctx);
    memcpy(out, d, pf_grid_local_bytes(w->grid));
    return PF_OK;
}

#else /* PF_HAVE_DIST */

#include "pf_dist_grid.h"

int pf_dist_built(void) { return 1; }

int pf_dist_start(void)
{
    if (pf_dist_running()) return 1;
    if (!getenv("OMPI_COMM_WORLD_SIZE") && !getenv("PMI_SIZE") && !getenv("PMIX_RANK")) return 0;
    return MPI_Init(NULL, NULL) == MPI_SUCCESS;
}

void pf_dist_stop(void)
{
    if (pf_dist_running()) MPI_Finalize();
}

double pf_dist_seconds(void) { return MPI_Wtime(); }

int pf_dist_running(void)
{
    int init = 0, fin = 0;
    MPI_Initialized(&init);
    if (init) MPI_Finalized(&fin);
    return init && !fin;
}

int pf_dist_rank(void)
{
    int r = 0;
    if (pf_dist_running()) MPI_Comm_rank(MPI_COMM_WORLD, &r);
    return r;
}

int pf_dist_ranks(void)
{
    int n = 1;
    if (pf_dist_running()) MPI_Comm_size(MPI_COMM_WORLD, &n);
    return n;
}

size_t pf_dist_local_values(const pf_grid *g)
{
    /* FFTW may give a rank no planes (more ranks than planes); keep one
     * value so its storage is a real allocation. */
    return g->dist ? (g->dist->alloc > 0 ? (size_t)g->dist->alloc : 1) : g->total;
}

size_t pf_grid_local_bytes(const pf_grid *g) { return pf_bytes(pf_dist_local_values(g), sizeof(double complex)); }

void pf_grid_slab(const pf_grid *g, pf_rep rep, size_t *first, size_t *count)
{
    if (!g->dist) {
        *first = 0;
        *count = g->n[rep == PF_MOMENTUM && g->dim > 1 ? 1 : 0];
        return;
    }
    *first = (size_t)(rep == PF_MOMENTUM ? g->dist->start1 : g->dist->start0);
    *count = (size_t)(rep == PF_MOMENTUM ? g->dist->n1loc : g->dist->n0loc);
}

void pf_grid_local_range(const pf_grid *g, size_t *begin, size_t *end)
{
    if (!g->dist) {
        *begin = 0;
        *end = g->total;
        return;
    }
    *begin = (size_t)g->dist->start0 * g->dist->plane;
    *end = *begin + (size_t)g->dist->n0loc * g->dist->plane;
}

size_t pf_dist_position_values(const pf_grid *g)
{
    return g->dist ? (size_t)g->dist->n0loc * g->dist->plane : g->total;
}

void pf_dist_minmax(const pf_grid *g, double *lo, double *hi)
{
    if (!g->dist) return;
    MPI_Allreduce(MPI_IN_PLACE, lo, 1, MPI_DOUBLE, MPI_MIN, MPI_COMM_WORLD);
    MPI_Allreduce(MPI_IN_PLACE, hi, 1, MPI_DOUBLE, MPI_MAX, MPI_COMM_WORLD);
}

int pf_dist_any(const pf_grid *g, int flag)
{
    if (!g->dist) return flag;
    MPI_Allreduce(MPI_IN_PLACE, &flag, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
    return flag;
}

void pf_dist_momentum_multiply(pf_grid *g, double complex *data, const double complex *const *tables, double scale)
{
    const struct pf_dist_grid *D = g->dist;
    /* Transposed layout: axis 1 slowest, then axis 0, then axis 2 (3D). */
    const size_t n0 = g->n[0], row = g->dim == 3 ? g->n[2] : n0;
    const size_t rows = (size_t)D->n1loc * D->tplane / row;
    const double complex *T0 = tables[0], *T1 = tables[1], *Tr = g->dim == 3 ? tables[2] : T0;
    ptrdiff_t nr = (ptrdiff_t)rows;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t r = 0; r < nr; r++) {
        size_t j1 = (size_t)D->start1 + (g->dim == 3 ? (size_t)r / n0 : (size_t)r);
        double complex q = T1 ? scale * T1[j1] : scale;
        if (g->dim == 3 && T0) q *= T0[(size_t)r % n0];
        double complex *z = data + (size_t)r * row;
        if (Tr)
            for (size_t k = 0; k < row; k++) z[k] *= q * Tr[k];
        else
            for (size_t k = 0; k < row; k++) z[k] *= q;
    }
}

void pf_dist_kinetic(pf_grid *g, double complex *data, double complex *const *tables, double scale)
{
    const struct pf_dist_grid *D = g->dist;
    fftw_mpi_execute_dft(D->fwd, data, data);
    pf_dist_momentum_multiply(g, data, (const double complex *const *)tables, scale);
    fftw_mpi_execute_dft(D->bwd, data, data);
}

void pf_dist_backward(pf_grid *g, double complex *data) { fftw_mpi_execute_dft(g->dist->bwd, data, data); }

pf_status pf_dist_momentum_unscaled(pf_wave *w, double *scale)
{
    *scale = 1.0;
    if (w->rep == PF_MOMENTUM) return PF_OK;
    /* The 1/N of the forward transform rides on the caller's pass, as
     * pf_dist_fly does with its phase pass. */
    fftw_mpi_execute_dft(w->grid->dist->fwd, w->store, w->store);
    *scale = 1.0 / (double)w->grid->total;
    w->rep = PF_MOMENTUM;
    return PF_OK;
}

/* FFTW-MPI needs fftw_mpi_init once per process, after the threads layer
 * (pf_context_prepare_planner) and MPI_Init; like FFTW's planner this is
 * process-global state. */
static int fftw_mpi_registered;

static void fftw_mpi_once(void)
{
    if (!fftw_mpi_registered) {
        fftw_mpi_init();
        fftw_mpi_registered = 1;
    }
}

void pf_dist_planner_ready(int distribute)
{
    if (distribute && pf_dist_running()) fftw_mpi_once();
}

int pf_dist_planners_registered(void) { return fftw_mpi_registered; }

void pf_dist_grid_release(pf_grid *g)
{
    struct pf_dist_grid *D = g->dist;
    if (!D) return;
    pf_context *ctx = g->ctx;
    /* The plans belong to the context's cache (pf_dist_plans). */
    pf_context_free(ctx, D->range[0]);
    pf_context_free(ctx, D->range[1]);
    pf_context_free(ctx, D->local_part);
    pf_context_free(ctx, D->counts);
    pf_context_free(ctx, D->displs);
    pf_context_free(ctx, D);
    g->dist = NULL;
}

pf_status pf_dist_grid_attach(pf_grid *g)
{
    pf_context *ctx = g->ctx;
    if (!ctx->distribute || g->dim < 2 || !pf_dist_running()) return PF_OK;
    struct pf_dist_grid *D = pf_calloc(ctx, 1, sizeof *D);
    if (!D) return pf_context_status(ctx);
    g->dist = D;
    MPI_Comm_rank(MPI_COMM_WORLD, &D->rank);
    MPI_Comm_size(MPI_COMM_WORLD, &D->size);
    const int d = g->dim;
    ptrdiff_t n[PF_MAX_DIM];
    for (int a = 0; a < d; a++) n[a] = (ptrdiff_t)g->n[a];
    pf_context_prepare_planner(ctx);
    fftw_mpi_once();
    D->alloc = fftw_mpi_local_size_transposed(d, n, MPI_COMM_WORLD, &D->n0loc, &D->start0, &D->n1loc, &D->start1);
    D->plane = g->total / g->n[0];
    D->tplane = g->total / g->n[1];
    for (int a = 0; a < PF_MAX_DIM; a++) D->lay[0][a] = D->lay[1][a] = g->n[a];
    D->lay[1][0] = g->n[1];
    D->lay[1][1] = g->n[0];
    /* Every rank's sample range in both layouts, for the reductions' carry
     * chain (a rank without planes has an empty range). */
    long long mine[4] = {(long long)D->start0 * (long long)D->plane, (long long)(D->start0 + D->n0loc) * (long long)D->plane,
                         (long long)D->start1 * (long long)D->tplane, (long long)(D->start1 + D->n1loc) * (long long)D->tplane};
    if (D->n0loc == 0) mine[0] = mine[1] = (long long)g->total;
    if (D->n1loc == 0) mine[2] = mine[3] = (long long)g->total;
    long long *all = pf_alloc(ctx, (size_t)D->size * sizeof mine);
    D->range[0] = PF_ALLOC_N(ctx, 2 * (size_t)D->size, sizeof(size_t));
    D->range[1] = PF_ALLOC_N(ctx, 2 * (size_t)D->size, sizeof(size_t));
    D->counts = PF_ALLOC_N(ctx, (size_t)D->size, sizeof(int));
    D->displs = PF_ALLOC_N(ctx, (size_t)D->size, sizeof(int));
    /* Partials: at most one per block touched, which is the slab's blocks
     * plus the two it shares with its neighbours. */
    size_t largest = (size_t)(D->alloc > 0 ? D->alloc : 1);
    D->local_part_cap = (largest / PF_REDUCE_BLOCK + 2) * (size_t)(2 * (1 + 2 * d));
    D->local_part = PF_ALLOC_N(ctx, D->local_part_cap, sizeof(double));
    /* Allocation failures stay local until the collective calls below have
     * been made by everyone, so no rank waits alone. */
    int ok = all && D->range[0] && D->range[1] && D->counts && D->displs && D->local_part;
    int all_ok = 0;
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_ok) {
        pf_context_free(ctx, all);
        pf_dist_grid_release(g);
        return ok ? pf_fail(ctx, PF_ENOMEM, "another MPI rank ran out of memory setting up a distributed grid")
                  : pf_context_status(ctx);
    }
    MPI_Allgather(mine, 4, MPI_LONG_LONG, all, 4, MPI_LONG_LONG, MPI_COMM_WORLD);
    for (int r = 0; r < D->size; r++) {
        D->range[0][2 * r] = (size_t)all[4 * r];
        D->range[0][2 * r + 1] = (size_t)all[4 * r + 1];
        D->range[1][2 * r] = (size_t)all[4 * r + 2];
        D->range[1][2 * r + 1] = (size_t)all[4 * r + 3];
    }
    pf_context_free(ctx, all);
    /* Plans: shared with every grid of these counts (pf_dist_long.c). */
    pf_status s = pf_dist_plans(g, 1, &D->fwd, &D->bwd);
    if (s) pf_dist_grid_release(g);
    return s;
}

/* ---- reductions ---- */

/* Multi-index (layout order) of global offset off. */
static void unravel(const size_t *lay, int d, size_t off, size_t *idx)
{
    idx[0] = idx[1] = idx[2] = 0;
    for (int a = d - 1; a >= 0; a--) {
        idx[a] = off % lay[a];
        off /= lay[a];
    }
}

/* Nearest rank before (step -1) or after (+1) r holding samples. */
static int neighbour(const struct pf_dist_grid *D, int layout, int r, int step)
{
    for (int q = r + step; q >= 0 && q < D->size; q += step)
        if (D->range[layout][2 * q + 1] > D->range[layout][2 * q]) return q;
    return -1;
}

/* The global array, in the layout's order, is cut into blocks of
 * PF_REDUCE_BLOCK values exactly as pf_reduce_blocks cuts a single
 * process's array.  A block inside this rank's range is summed here; a
 * block that crosses into the next rank is summed in order across the
 * boundary: this rank sends its running partial (the carry) to the next rank
 * holding samples, which continues it.  Messages only go to higher ranks,
 * and a rank sends the carry it does not need first, so nobody waits in a
 * cycle.  The completed partials, gathered in rank order, are the block
 * partials in block order; every rank adds them in that order.  In position
 * layout this is the single process's sum, to the bit. */
void pf_dist_reduce(pf_grid *g, pf_rep layout, int width, pf_reduce_block_fn block, void *user, double *sums)
{
    struct pf_dist_grid *D = g->dist;
    if (!D) {
        pf_reduce_blocks(g, width, block, user, sums);
        return;
    }
    const int L = layout == PF_MOMENTUM ? 1 : 0, d = g->dim;
    const size_t B = PF_REDUCE_BLOCK, N = g->total;
    const size_t lo = D->range[L][2 * D->rank], hi = D->range[L][2 * D->rank + 1];
    const size_t *lay = D->lay[L];
    size_t done = 0; /* partials completed here */
    if (hi > lo) {
        const size_t bl = lo / B, bh = (hi - 1) / B;
        const int carry_in = bl * B < lo;
        const size_t bh_end = (bh + 1) * B < N ? (bh + 1) * B : N;
        const int carry_out = bh_end > hi;
        const int prev = neighbour(D, L, D->rank, -1), next = neighbour(D, L, D->rank, +1);
        double acc[PF_REDUCE_MAX_WIDTH];
        size_t idx[PF_MAX_DIM];
        /* The last block's share, when it starts here and continues on the next rank. */
        if (carry_out && bh * B >= lo) {
            memset(acc, 0, sizeof acc);
            unravel(lay, d, bh * B, idx);
            block(user, bh * B - lo, hi - lo, idx, acc);
            MPI_Send(acc, width, MPI_DOUBLE, next, 17, MPI_COMM_WORLD);
        }
        /* The first block's share, continuing the previous rank's carry. */
        size_t first_full = bl;
        if (carry_in) {
            memset(acc, 0, sizeof acc);
            MPI_Recv(acc, width, MPI_DOUBLE, prev, 17, MPI_COMM_WORLD, MPI_STATUS_IGNORE);
            size_t end = (bl + 1) * B < hi ? (bl + 1) * B : hi;
            unravel(lay, d, lo, idx);
            block(user, 0, end - lo, idx, acc);
            if (end == hi && carry_out) {
                MPI_Send(acc, width, MPI_DOUBLE, next, 17, MPI_COMM_WORLD);
            } else {
                memcpy(D->local_part, acc, (size_t)width * sizeof(double));
                done = 1;
            }
            first_full = bl + 1;
        }
        /* Blocks that start here and end here (the array's last block ends
         * at N, complete wherever it starts). */
        size_t last_full = carry_out ? bh : bh + 1; /* exclusive */
        if (last_full > first_full) {
            double *part = D->local_part + done * (size_t)width;
            ptrdiff_t nb = (ptrdiff_t)(last_full - first_full);
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
            for (ptrdiff_t i = 0; i < nb; i++) {
                size_t b = first_full + (size_t)i;
                size_t begin = b * B, end = begin + B < N ? begin + B : N;
                size_t bidx[PF_MAX_DIM];
                unravel(lay, d, begin, bidx);
                double bacc[PF_REDUCE_MAX_WIDTH] = {0};
                block(user, begin - lo, end - lo, bidx, bacc);
                memcpy(part + (size_t)i * (size_t)width, bacc, (size_t)width * sizeof(double));
            }
            done += (size_t)nb;
        }
    }
    int mine = (int)(done * (size_t)width);
    MPI_Allgather(&mine, 1, MPI_INT, D->counts, 1, MPI_INT, MPI_COMM_WORLD);
    int at = 0;
    for (int r = 0; r < D->size; r++) {
        D->displs[r] = at;
        at += D->counts[r];
    }
    double *part = g->reduce_part;
    MPI_Allgatherv(D->local_part, mine, MPI_DOUBLE, part, D->counts, D->displs, MPI_DOUBLE, MPI_COMM_WORLD);
    pf_reduce_sum_parts(part, (size_t)at / (size_t)width, width, sums);
}

typedef struct moments_job {
    const pf_grid *g;
    const double complex *z;
    const double *const *weights;
    int swap; /* transposed layout: index 0 is axis 1, index 1 axis 0 */
} moments_job;

static void moments_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    const moments_job *job = user;
    const pf_grid *g = job->g;
    const int d = g->dim;
    const size_t *lay = g->dist->lay[job->swap];
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    const int W = 1 + 2 * d;
    for (size_t off = begin; off < end; off++) {
        const double complex z = job->z[off];
        double rho = creal(z) * creal(z) + cimag(z) * cimag(z);
        /* pf_reduce.c's moments: compensated when weighted, else plain */
        if (job->weights) pf_sum_add(&acc[0], &acc[W], rho);
        else acc[0] += rho;
        for (int a = 0; a < d; a++) {
            size_t i = job->swap && a < 2 ? idx[1 - a] : idx[a];
            if (!job->weights) {
                acc[1 + a] += rho;
                acc[1 + d + a] += rho;
                continue;
            }
            double wa = job->weights[a] ? job->weights[a][i] : 1.0;
            pf_sum_add(&acc[1 + a], &acc[W + 1 + a], wa * rho);
            pf_sum_add(&acc[1 + d + a], &acc[W + 1 + d + a], wa * wa * rho);
        }
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < lay[a]) break;
            idx[a] = 0;
        }
    }
}

double pf_dist_momentum_axis_mask(pf_grid *g, double complex *data, const double complex *const *tables)
{
    if (!g->dist) return pf_kernel_axis_mask(g, data, tables);
    /* The transposed slab: index 0 is axis 1, index 1 axis 0. */
    pf_mask_job job = {data, tables, g->dim, g->dist->lay[1], 1};
    double sum = 0;
    pf_dist_reduce(g, PF_MOMENTUM, 1, pf_kernel_mask_block, &job, &sum);
    return sum;
}

pf_status pf_dist_sums(pf_grid *g, const double complex *z, pf_rep rep, const double *const *weights, double *sums)
{
    if (!g->dist) return pf_reduce_axis_moments(g, z, weights, sums);
    moments_job job = {g, z, weights, rep == PF_MOMENTUM};
    const int W = 1 + 2 * g->dim;
    double all[PF_REDUCE_MAX_WIDTH];
    pf_dist_reduce(g, rep, weights ? 2 * W : W, moments_block, &job, all);
    for (int c = 0; c < W; c++) sums[c] = weights ? all[c] + all[W + c] : all[c];
    return PF_OK;
}

pf_status pf_dist_axis_moments(pf_wave *w, const double *const *weights, double *sums)
{
    return pf_dist_sums(w->grid, w->store, w->rep, weights, sums);
}

void pf_dist_forward(pf_grid *g, double complex *data) { fftw_mpi_execute_dft(g->dist->fwd, data, data); }

typedef struct band_job {
    const pf_grid *g;
    const double complex *z;
    int axis, swap;
    size_t from, to; /* storage indices [from, to) of the band (position: outside [from, to)) */
} band_job;

static void band_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    const band_job *job = user;
    const pf_grid *g = job->g;
    const int d = g->dim;
    const size_t *lay = g->dist->lay[job->swap];
    const int slot = job->swap && job->axis < 2 ? 1 - job->axis : job->axis;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    for (size_t off = begin; off < end; off++) {
        size_t i = idx[slot];
        int in = job->swap ? (i >= job->from && i < job->to) : (i < job->from || i >= job->to);
        if (in) acc[0] += creal(job->z[off]) * creal(job->z[off]) + cimag(job->z[off]) * cimag(job->z[off]);
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < lay[a]) break;
            idx[a] = 0;
        }
    }
}

double pf_dist_band_sum(const pf_wave *w, int a)
{
    pf_grid *g = w->grid;
    const size_t n = g->n[a], b = pf_guard_band_points(n);
    band_job job = {g, w->store, a, w->rep == PF_MOMENTUM, b, n - b};
    if (w->rep == PF_MOMENTUM) {
        job.from = pf_guard_momentum_band_start(n);
        job.to = job.from + 2 * b;
    }
    double sum = 0;
    pf_dist_reduce(g, w->rep, 1, band_block, &job, &sum);
    return sum;
}

pf_status pf_dist_marginals(const pf_wave *w, double **marg)
{
    const pf_grid *g = w->grid;
    const struct pf_dist_grid *D = g->dist;
    const int d = g->dim, swap = w->rep == PF_MOMENTUM;
    const size_t *lay = D->lay[swap];
    const size_t lo = D->range[swap][2 * D->rank], hi = D->range[swap][2 * D->rank + 1];
    size_t idx[PF_MAX_DIM];
    unravel(lay, d, lo < hi ? lo : 0, idx);
    for (size_t off = lo; off < hi; off++) {
        double complex v = w->store[off - lo];
        double rho = creal(v) * creal(v) + cimag(v) * cimag(v);
        for (int a = 0; a < d; a++) marg[a][swap && a < 2 ? idx[1 - a] : idx[a]] += rho;
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < lay[a]) break;
            idx[a] = 0;
        }
    }
    /* The flight chooser decides from these on every rank: combined in
     * rank order, the same bits everywhere (pf_dist_long.c). */
    return pf_dist_combine_marginals(g, marg);
}

/* ---- transforms, flight, sampling ---- */

/* Values this rank stores in representation rep. */
static size_t local_count(const pf_grid *g, pf_rep rep)
{
    const struct pf_dist_grid *D = g->dist;
    return rep == PF_MOMENTUM ? (size_t)D->n1loc * D->tplane : (size_t)D->n0loc * D->plane;
}

pf_status pf_dist_wave_to(pf_wave *w, pf_rep rep)
{
    pf_grid *g = w->grid;
    if (w->rep == rep) return PF_OK;
    if (rep == PF_MOMENTUM) {
        fftw_mpi_execute_dft(g->dist->fwd, w->store, w->store);
        /* S = DFT(psi) / N, as on one process. */
        const double inv = 1.0 / (double)g->total;
        double complex *z = w->store;
        ptrdiff_t n = (ptrdiff_t)local_count(g, PF_MOMENTUM);
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (ptrdiff_t i = 0; i < n; i++) z[i] *= inv;
    } else {
        fftw_mpi_execute_dft(g->dist->bwd, w->store, w->store);
    }
    w->rep = rep;
    pf_guard_after_transform(w);
    return PF_OK;
}

pf_status pf_dist_fly(pf_wave *w, double t, double tau)
{
    (void)t;
    pf_grid *g = w->grid;
    const struct pf_dist_grid *D = g->dist;
    double scale = 1.0;
    if (w->rep == PF_POSITION) {
        /* The 1/N of the forward transform rides on the phase pass. */
        fftw_mpi_execute_dft(D->fwd, w->store, w->store);
        scale = 1.0 / (double)g->total;
        w->rep = PF_MOMENTUM;
    }
    pf_flight_fill_tables(g, tau);
    /* Transposed layout: axis 1 slowest, then axis 0, then axis 2 (3D). */
    const double complex *P0 = g->flight.phase[0], *P1 = g->flight.phase[1];
    const double complex *row_table = g->dim == 3 ? g->flight.phase[2] : P0;
    const size_t row = g->dim == 3 ? g->n[2] : g->n[0];
    const size_t rows = local_count(g, PF_MOMENTUM) / row;
    const size_t n0 = g->n[0];
    pf_phase_row_fn kernel = pf_phase_kernel();
    double complex *z = w->store;
    ptrdiff_t nr = (ptrdiff_t)rows;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t r = 0; r < nr; r++) {
        size_t j1 = (size_t)D->start1 + (g->dim == 3 ? (size_t)r / n0 : (size_t)r);
        double complex q = scale * P1[j1];
        if (g->dim == 3) q *= P0[(size_t)r % n0];
        kernel((double *)(z + (size_t)r * row), (const double *)row_table, creal(q), cimag(q), row);
    }
    return PF_OK;
}

/* fn at this rank's points of rep into out (divided by the momentum
 * factors for a wave's storage when `divide`); a failure on any rank fails
 * every rank, so none goes on alone into the next collective call. */
static pf_status sample_local(pf_grid *g, pf_rep rep, pf_sample_fn fn, void *user, int divide, double complex *out)
{
    const struct pf_dist_grid *D = g->dist;
    const int d = g->dim, swap = rep == PF_MOMENTUM;
    const size_t *lay = D->lay[swap];
    const size_t lo = D->range[swap][2 * D->rank], hi = D->range[swap][2 * D->rank + 1];
    size_t idx[PF_MAX_DIM];
    unravel(lay, d, lo < hi ? lo : 0, idx);
    pf_status s = PF_OK;
    double coord[PF_MAX_DIM] = {0, 0, 0};
    for (size_t off = lo; off < hi && s == PF_OK; off++) {
        double complex v = 0;
        size_t gi[PF_MAX_DIM];
        for (int a = 0; a < d; a++) gi[a] = swap && a < 2 ? idx[1 - a] : idx[a];
        for (int a = 0; a < d; a++) coord[a] = swap ? g->k[a][gi[a]] : g->x[a][gi[a]];
        if (fn(user, coord, &v) != 0) s = PF_ECALLBACK;
        if (swap && divide)
            for (int a = 0; a < d; a++) v /= g->kfactor[a][gi[a]];
        out[off - lo] = v;
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < lay[a]) break;
            idx[a] = 0;
        }
    }
    int bad = s != PF_OK, any = 0;
    MPI_Allreduce(&bad, &any, 1, MPI_INT, MPI_MAX, MPI_COMM_WORLD);
    if (any && !bad) return pf_fail(g->ctx, PF_ECALLBACK, "the sample function failed on another MPI rank");
    return s;
}

size_t pf_dist_rep_values(const pf_grid *g, pf_rep rep) { return g->dist ? local_count(g, rep) : g->total; }

pf_status pf_dist_sample(pf_grid *g, pf_rep rep, pf_sample_fn fn, void *user, double complex *out)
{
    if (!g->dist) return pf_grid_sample(g, rep, fn, user, NULL, out);
    return sample_local(g, rep, fn, user, 0, out);
}

double pf_dist_field_mask(pf_grid *g, pf_rep rep, double complex *data, const double complex *field, int want_removed)
{
    if (!g->dist) return pf_kernel_field_mask(g, data, field, want_removed);
    if (!want_removed) {
        ptrdiff_t n = (ptrdiff_t)local_count(g, rep);
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (ptrdiff_t i = 0; i < n; i++) data[i] *= field[i];
        return 0;
    }
    pf_field_job job = {data, field};
    double sum = 0;
    pf_dist_reduce(g, rep, 1, pf_kernel_field_block, &job, &sum);
    return sum;
}

pf_status pf_dist_fill(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user)
{
    pf_grid *g = w->grid;
    pf_status s = sample_local(g, rep, fn, user, 1, w->store);
    w->deferred.active = 0;
    w->rep = rep;
    w->norm_now = -1.0;
    return s;
}

/* ---- gathering ---- */

/* The plane layout for moving a whole distributed wave between the slabs
 * and rank 0: a datatype of one plane of the representation's slab axis
 * (counts in planes, so huge grids stay within MPI's int counts), every
 * rank's plane count gathered on rank 0 with its displacement.  Returns this
 * rank's plane count; the caller frees *plane. */
static int plane_layout(const struct pf_dist_grid *D, int momentum, MPI_Datatype *plane)
{
    MPI_Type_contiguous((int)(2 * (momentum ? D->tplane : D->plane)), MPI_DOUBLE, plane);
    MPI_Type_commit(plane);
    int mine = (int)(momentum ? D->n1loc : D->n0loc);
    MPI_Gather(&mine, 1, MPI_INT, D->counts, 1, MPI_INT, 0, MPI_COMM_WORLD);
    if (D->rank == 0)
        for (int r = 0, at = 0; r < D->size; at += D->counts[r], r++) D->displs[r] = at;
    return mine;
}

pf_status pf_wave_gather(pf_wave *w, pf_rep rep, double complex *out)
{
    pf_grid *g = w->grid;
    const struct pf_dist_grid *D = g->dist;
    if (!D) {
        pf_status s = pf_wave_to(w, rep);
        if (s) return s;
        const double complex *z = pf_wave_data_const(w);
        if (!z) return pf_context_status(g->ctx);
        memcpy(out, z, pf_bytes(g->total, sizeof(double complex)));
        return PF_OK;
    }
    pf_status s = pf_dist_wave_to(w, rep);
    if (s) return s;
    const int L = rep == PF_MOMENTUM;
    MPI_Datatype plane;
    int mine = plane_layout(D, L, &plane);
    double complex *dest = out;
    double complex *tmp = NULL;
    int ok = D->rank != 0 || out != NULL; /* rank 0 without a buffer fails everyone */
    if (ok && L && D->rank == 0) {
        /* The transposed array arrives whole; one pass puts axis 0 first. */
        tmp = PF_ALLOC_N(g->ctx, g->total, sizeof(double complex));
        ok = tmp != NULL;
        dest = tmp;
    }
    int all_ok = 0;
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (!all_ok) {
        MPI_Type_free(&plane);
        return ok ? pf_fail(g->ctx, PF_ENOMEM, "rank 0 ran out of memory gathering a distributed wave")
                  : pf_context_status(g->ctx);
    }
    MPI_Gatherv(w->store, mine, plane, dest, D->counts, D->displs, plane, 0, MPI_COMM_WORLD);
    MPI_Type_free(&plane);
    if (tmp) {
        const size_t n0 = g->n[0], n1 = g->n[1], n2 = g->dim == 3 ? g->n[2] : 1;
        for (size_t j = 0; j < n1; j++)
            for (size_t i = 0; i < n0; i++)
                memcpy(out + (i * n1 + j) * n2, tmp + (j * n0 + i) * n2, n2 * sizeof(double complex));
        pf_context_free(g->ctx, tmp);
    }
    return PF_OK;
}

pf_status pf_wave_gather_density(pf_wave *w, pf_rep rep, double *out)
{
    pf_grid *g = w->grid;
    if (!g->dist) return pf_wave_density(w, rep, out);
    const int root = g->dist->rank == 0;
    double complex *all = root ? PF_ALLOC_N(g->ctx, g->total, sizeof(double complex)) : NULL;
    pf_status s = pf_wave_gather(w, rep, all); /* fails on every rank when rank 0 lacks the buffer */
    if (s || !root) {
        if (all) pf_context_free(g->ctx, all);
        return s;
    }
    pf_grid_density_of(g, rep, all, out); /* pf_wave_density's formulas, so its bits */
    pf_context_free(g->ctx, all);
    return PF_OK;
}

/* Rows [first, first + count) of axis 0 (no wrap) onto rank 0's out.  In
 * position each rank sends the planes it holds among those rows, straight
 * into place.  In momentum each rank holds planes of axis 1 (transposed:
 * axis 1, axis 0, axis 2), and the rows wanted are one contiguous run of
 * count * n2 values in each of them; rank 0 receives them axis 1 first and
 * puts axis 0 first. */
static pf_status gather_row_block(pf_wave *w, pf_rep rep, size_t first, size_t count, double complex *out)
{
    pf_grid *g = w->grid;
    struct pf_dist_grid *D = g->dist;
    pf_context *ctx = g->ctx;
    const int L = rep == PF_MOMENTUM, root = D->rank == 0;
    const size_t n0 = g->n[0], n1 = g->n[1], n2 = g->dim == 3 ? g->n[2] : 1;
    const size_t unit = L ? count * n2 : D->plane; /* values a message counts in */
    double complex *send = w->store, *tmp = NULL;
    int mine = 0, ok = !root || out != NULL;
    for (int r = 0; r < D->size; r++) {
        size_t lo = D->range[L][2 * r] / (L ? D->tplane : D->plane), hi = D->range[L][2 * r + 1] / (L ? D->tplane : D->plane);
        if (L) {
            D->counts[r] = (int)(hi > lo ? hi - lo : 0);
            D->displs[r] = (int)(hi > lo ? lo : 0);
        } else {
            size_t a = lo > first ? lo : first, b = hi < first + count ? hi : first + count;
            D->counts[r] = (int)(b > a ? b - a : 0);
            D->displs[r] = (int)(b > a ? a - first : 0);
            if (r == D->rank && b > a) send = w->store + (a - lo) * D->plane;
        }
    }
    mine = D->counts[D->rank];
    if (L && ok) {
        send = PF_ALLOC_N(ctx, (size_t)(mine > 0 ? mine : 1) * unit, sizeof(double complex));
        if (root && send) tmp = PF_ALLOC_N(ctx, n1 * unit, sizeof(double complex));
        ok = send && (!root || tmp);
        for (int j = 0; ok && j < mine; j++)
            memcpy(send + (size_t)j * unit, w->store + ((size_t)j * n0 + first) * n2, unit * sizeof(double complex));
    }
    int all_ok = 0;
    MPI_Allreduce(&ok, &all_ok, 1, MPI_INT, MPI_MIN, MPI_COMM_WORLD);
    if (all_ok) {
        MPI_Datatype piece;
        MPI_Type_contiguous((int)(2 * unit), MPI_DOUBLE, &piece);
        MPI_Type_commit(&piece);
        MPI_Gatherv(send, mine, piece, L ? tmp : out, D->counts, D->displs, piece, 0, MPI_COMM_WORLD);
        MPI_Type_free(&piece);
    }
    if (tmp && all_ok)
        for (size_t j = 0; j < n1; j++)
            for (size_t i = 0; i < count; i++)
                memcpy(out + (i * n1 + j) * n2, tmp + (j * count + i) * n2, n2 * sizeof(double complex));
    if (L && send) pf_context_free(ctx, send);
    if (tmp) pf_context_free(ctx, tmp);
    if (all_ok) return PF_OK;
    return ok ? pf_fail(ctx, PF_ENOMEM, "another MPI rank ran out of memory gathering rows of a distributed wave")
              : pf_context_status(ctx) ? pf_context_status(ctx)
                                       : pf_fail(ctx, PF_ENOMEM, "out of memory gathering rows of a distributed wave");
}

pf_status pf_wave_gather_rows(pf_wave *w, pf_rep rep, size_t first, size_t count, double complex *out)
{
    pf_grid *g = w->grid;
    if (!g->dist) return whole_rows(w, rep, first, count, out);
    pf_status s = pf_dist_wave_to(w, rep);
    if (s) return s;
    const size_t n0 = g->n[0], plane = g->total / n0;
    first %= n0;
    size_t head = count < n0 - first ? count : n0 - first;
    s = gather_row_block(w, rep, first, head, out);
    if (!s && count > head) s = gather_row_block(w, rep, 0, count - head, out ? out + head * plane : NULL);
    return s;
}

/* MPI counts are ints: broadcast in pieces of at most 2^27 doubles. */
#define BCAST_PIECE ((size_t)1 << 27)

pf_status pf_dist_shared_density(pf_wave *w, pf_rep rep, double *out)
{
    pf_grid *g = w->grid;
    /* Fails on every rank together (pf_wave_gather), so none waits below. */
    pf_status s = pf_wave_gather_density(w, rep, out);
    if (s) return s;
    for (size_t at = 0; at < g->total; at += BCAST_PIECE) {
        size_t n = g->total - at < BCAST_PIECE ? g->total - at : BCAST_PIECE;
        MPI_Bcast(out + at, (int)n, MPI_DOUBLE, 0, MPI_COMM_WORLD);
    }
    return PF_OK;
}

/* pf_dist_on_whole and pf_dist_on_whole_update: gather rep onto rank 0,
 * run fn on a whole view there, scatter the view back when `update`, and
 * broadcast status, figures and the generator's state. */
static pf_status on_whole(pf_wave *w, pf_rep rep, pf_dist_whole_fn fn, void *user, double *out, size_t n, int update,
                          void *state, size_t state_bytes)
{
    pf_grid *g = w->grid;
    struct pf_dist_grid *D = g->dist;
    const int root = D->rank == 0;
    double complex *all = root ? PF_ALLOC_N(g->ctx, g->total, sizeof(double complex)) : NULL;
    pf_status s = pf_wave_gather(w, rep, all); /* fails on every rank when rank 0 lacks the buffer */
    if (s) {
        pf_context_free(g->ctx, all);
        return s;
    }
    int status = PF_OK;
    if (root) {
        /* A view of the whole wave: the grid counts as held whole and the
         * wave's storage is the gathered array while fn runs. */
        double complex *own = w->store;
        const double norm = w->norm_now;
        /* The view's transforms must not move the grid guards' bookkeeping
         * on rank 0 alone: the next guard check is collective. */
        const pf_guard_state guard = w->guard;
        const size_t steps = w->log.count;
        pf_step last;
        if (steps) last = w->log.steps[steps - 1];
        g->dist = NULL;
        w->store = all;
        s = fn(w, user, out);
        if (!s && update) s = pf_wave_to(w, rep); /* what is scattered back */
        g->dist = D;
        w->store = own;
        w->rep = rep;
        w->norm_now = update ? -1.0 : norm;
        w->guard = guard;
        if (steps && w->log.count == steps) w->log.steps[steps - 1] = last;
        status = (int)s;
    }
    MPI_Bcast(&status, 1, MPI_INT, 0, MPI_COMM_WORLD);
    if (status != PF_OK) {
        pf_context_free(g->ctx, all);
        return root ? s : pf_fail(g->ctx, (pf_status)status, "the measurement failed on MPI rank 0 (its message says why)");
    }
    if (update) {
        /* Back to the slabs, plane by plane as pf_wave_gather sent them. */
        const int L = rep == PF_MOMENTUM;
        MPI_Datatype plane;
        int mine = plane_layout(D, L, &plane);
        MPI_Scatterv(all, D->counts, D->displs, plane, w->store, mine, plane, 0, MPI_COMM_WORLD);
        MPI_Type_free(&plane);
        w->norm_now = -1.0;
    }
    pf_context_free(g->ctx, all);
    for (size_t at = 0; at < n; at += BCAST_PIECE) /* MPI counts are ints */
        MPI_Bcast(out + at, (int)(n - at < BCAST_PIECE ? n - at : BCAST_PIECE), MPI_DOUBLE, 0, MPI_COMM_WORLD);
    if (state && state_bytes) MPI_Bcast(state, (int)state_bytes, MPI_BYTE, 0, MPI_COMM_WORLD);
    return PF_OK;
}

pf_status pf_dist_on_whole(pf_wave *w, pf_rep rep, pf_dist_whole_fn fn, void *user, double *out, size_t n)
{
    if (!w->grid->dist) return fn(w, user, out);
    return on_whole(w, rep, fn, user, out, n, 0, NULL, 0);
}

pf_status pf_dist_on_whole_update(pf_wave *w, pf_dist_whole_fn fn, void *user, double *out, size_t n, void *state,
                                  size_t state_bytes)
{
    if (!w->grid->dist) return fn(w, user, out);
    /* Position: the measurements act there; the transposed layout would
     * need a transpose on rank 0 to scatter. */
    return on_whole(w, PF_POSITION, fn, user, out, n, 1, state, state_bytes);
}

#endif /* PF_HAVE_DIST */
