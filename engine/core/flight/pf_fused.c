/* pf_fused.c - the free-flight step (forward transform, phase, backward
 * transform) on a 2D or 3D grid as one fused sweep.
 *
 * Done separately, the step is a forward FFT, a phase pass and a backward
 * FFT: FFTW's multidimensional transforms each sweep memory about twice (the
 * trailing axes, then axis 0), and the phase pass is one more sweep, five in
 * all.  Here the axis-0 transforms of both directions and the phase meet in
 * the middle: for each block of columns (fixed axis-1/2 indices), the block
 * is gathered into a small buffer, transformed along axis 0, multiplied by
 * the phase, transformed back and scattered, all while it sits in cache.
 * Three sweeps: trailing axes forward, column blocks, trailing axes backward.
 * The trailing-axes transforms run chunk by chunk (pf_fused_chunks) with
 * one-thread plans, which the split step also uses to put pointwise work
 * between a backward and the next forward transform; measured against one
 * threaded FFTW plan over all slabs, head to head on the loaded reference
 * machine, the chunks took 0.81-0.98 of its time (2D 1024^2, 2048^2, 3D
 * 128^3; 1 and 2 threads).
 *
 * Neither the block nor the chunk layout depends on the thread count
 * (blocks and chunks are divided among threads, each with its own buffer
 * and the same one-thread plans), so neither do the results, whatever the
 * planning mode.
 *
 * While a block is in momentum representation the grid guard's momentum
 * bands can be summed on the way (when the guard does not know them yet):
 * per-block partial sums, added in block order. */
#include <omp.h>
#include <stdlib.h>
#include <string.h>
#include "pf_guard.h"
#include "pf_internal.h"

/* Columns per block.  32 columns make each gathered row piece 512 bytes,
 * which keeps the strided gather cheap (fewer pages and TLB entries per
 * byte).  Measured on the reference machine against 16 and 64: within 3 %
 * of the best at every benchmark size, and clearly best at 2 threads in 3D
 * (256^3: 0.87 of an FFT pair against 1.03 with 16). */
#define FUSED_BLOCK ((size_t)32)

void pf_fused_release(pf_grid *g)
{
    pf_fused_plans *fp = &g->fused;
    fftw_plan *plans[] = {&fp->col_fwd, &fp->col_bwd, &fp->tail_fwd, &fp->tail_bwd, &fp->chunk_fwd, &fp->chunk_bwd, &fp->chunk_tail_fwd, &fp->chunk_tail_bwd};
    for (size_t i = 0; i < sizeof plans / sizeof plans[0]; i++) {
        if (*plans[i]) fftw_destroy_plan(*plans[i]);
        *plans[i] = NULL;
    }
    if (fp->buf) pf_free(g->ctx, fp->buf, fp->buf_bytes);
    pf_context_free(g->ctx, fp->part);
    memset(fp, 0, sizeof *fp);
}

static fftw_plan column_plan(const pf_grid *g, size_t width, double complex *buf, int sign, unsigned flags)
{
    int n0 = (int)g->n[0];
    return fftw_plan_many_dft(1, &n0, (int)width, buf, NULL, 1, (int)g->fused.ld, buf, NULL, 1, (int)g->fused.ld,
                              sign, flags);
}

/* Makes the plans and buffers for the context's current thread count. */
static pf_status fused_plan(pf_grid *g)
{
    pf_context *ctx = g->ctx;
    pf_fused_plans *fp = &g->fused;
    if (fp->threads == ctx->threads) return PF_OK;
    pf_fused_release(g);
    const size_t n0 = g->n[0], plane = g->total / n0;
    fp->block = plane < FUSED_BLOCK ? plane : FUSED_BLOCK;
    fp->tail = plane % fp->block;
    fp->blocks = plane / fp->block + (fp->tail ? 1 : 0);
    /* Gathered columns are padded apart: at a power-of-two stride they
     * would all fall into the same cache sets.  Multiples of 4 values keep
     * every column on a 64-byte boundary. */
    fp->ld = (n0 + 3) / 4 * 4 + 4;
    fp->buf_bytes = pf_bytes(pf_bytes((size_t)ctx->threads * fp->block, fp->ld), sizeof(double complex));
    fp->buf = pf_alloc(ctx, fp->buf_bytes);
    if (!fp->buf) {
        memset(fp, 0, sizeof *fp);
        return pf_context_status(ctx);
    }
    fp->part = pf_calloc(g->ctx, fp->blocks * PF_MAX_DIM, sizeof(double));
    if (!fp->part) {
        pf_fused_release(g);
        return pf_context_status(ctx);
    }
    unsigned flags = pf_context_prepare_planner(ctx);
    /* Each column block runs on one thread; the blocks are shared out. */
    fftw_plan_with_nthreads(1);
    fp->col_fwd = column_plan(g, fp->block, fp->buf, FFTW_FORWARD, flags);
    fp->col_bwd = column_plan(g, fp->block, fp->buf, FFTW_BACKWARD, flags);
    if (fp->tail) {
        fp->tail_fwd = column_plan(g, fp->tail, fp->buf, FFTW_FORWARD, flags);
        fp->tail_bwd = column_plan(g, fp->tail, fp->buf, FFTW_BACKWARD, flags);
    }
    fftw_plan_with_nthreads(ctx->threads);
    if (!fp->col_fwd || !fp->col_bwd || (fp->tail && (!fp->tail_fwd || !fp->tail_bwd))) {
        pf_fused_release(g);
        return pf_fail(ctx, PF_EFFT, "FFTW could not plan the fused flight transforms of %zu points", g->total);
    }
    fp->threads = ctx->threads;
    pf_context_store_wisdom(ctx);
    fftw_plan set[4] = {fp->col_fwd, fp->col_bwd, fp->tail_fwd, fp->tail_bwd};
    return pf_context_note_plans(ctx, "fused", g, set, 4);
}

/* buf[j * ld + i] = data[i * plane + j] for i < n0, j < width, and back. */
static void gather(const double complex *restrict data, size_t plane, size_t n0, size_t width,
                   double complex *restrict buf, size_t ld)
{
    for (size_t i = 0; i < n0; i++) {
        const double complex *src = data + i * plane;
        for (size_t j = 0; j < width; j++) buf[j * ld + i] = src[j];
    }
}

static void scatter(const double complex *restrict buf, size_t ld, size_t n0, size_t width,
                    double complex *restrict data, size_t plane)
{
    for (size_t i = 0; i < n0; i++) {
        double complex *dst = data + i * plane;
        for (size_t j = 0; j < width; j++) dst[j] = buf[j * ld + i];
    }
}

/* Momentum guard bands of one block (raw DFT values): part[0] sums the
 * axis-0 band of every column, part[a] the whole columns whose axis-a index
 * lies in that axis's band (band layout: pf_guard_momentum_band_start). */
static void block_bands(const pf_grid *g, const double complex *buf, size_t ld, size_t q0, size_t width, double *part)
{
    const size_t n0 = g->n[0], n2 = g->dim == 3 ? g->n[2] : 1;
    size_t lo[PF_MAX_DIM], hi[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) {
        lo[a] = pf_guard_momentum_band_start(g->n[a]);
        hi[a] = lo[a] + 2 * pf_guard_band_points(g->n[a]);
    }
    for (int a = 0; a < PF_MAX_DIM; a++) part[a] = 0;
    for (size_t j = 0; j < width; j++) {
        const double complex *c = buf + j * ld;
        size_t q = q0 + j, i1 = g->dim == 3 ? q / n2 : q, i2 = q % n2;
        int in1 = i1 >= lo[1] && i1 < hi[1], in2 = g->dim == 3 && i2 >= lo[2] && i2 < hi[2];
        double band = 0, all = 0;
        for (size_t i = lo[0]; i < hi[0]; i++) band += creal(c[i]) * creal(c[i]) + cimag(c[i]) * cimag(c[i]);
        if (in1 || in2)
            for (size_t i = 0; i < n0; i++) all += creal(c[i]) * creal(c[i]) + cimag(c[i]) * cimag(c[i]);
        part[0] += band;
        if (in1) part[1] += all;
        if (in2) part[2] += all;
    }
}

/* The column-block sweep: for each block of columns, gathered into a
 * thread's buffer, the axis-0 transform of the given sign; guard-band
 * partials when band_sums; each column times scale P0[i] P1[j] P2[k] when
 * P is given (P0 along the column, the rest the column's own factor); the
 * opposite transform when back; scattered back. */
static void column_sweep(pf_grid *g, double complex *data, int sign, double scale, double complex *const *P, int back,
                         int band_sums)
{
    const pf_fused_plans *fp = &g->fused;
    const size_t n0 = g->n[0], plane = g->total / n0, n2 = g->dim == 3 ? g->n[2] : 1;
    const pf_phase_row_fn phase_row = pf_phase_kernel();
#pragma omp parallel for num_threads(fp->threads) schedule(static)
    for (ptrdiff_t b = 0; b < (ptrdiff_t)fp->blocks; b++) {
        const size_t q0 = (size_t)b * fp->block;
        const int partial = q0 + fp->block > plane;
        const size_t width = partial ? fp->tail : fp->block;
        double complex *buf = fp->buf + (size_t)omp_get_thread_num() * fp->block * fp->ld;
        fftw_plan fwd = partial ? fp->tail_fwd : fp->col_fwd, bwd = partial ? fp->tail_bwd : fp->col_bwd;
        gather(data + q0, plane, n0, width, buf, fp->ld);
        fftw_execute_dft(sign < 0 ? fwd : bwd, buf, buf);
        if (band_sums) block_bands(g, buf, fp->ld, q0, width, fp->part + (size_t)b * PF_MAX_DIM);
        if (P)
            for (size_t j = 0; j < width; j++) {
                size_t q = q0 + j;
                double complex f = g->dim == 3 ? scale * P[1][q / n2] * P[2][q % n2] : scale * P[1][q];
                phase_row((double *)(buf + j * fp->ld), (const double *)P[0], creal(f), cimag(f), n0);
            }
        if (back) fftw_execute_dft(sign < 0 ? bwd : fwd, buf, buf);
        scatter(buf, fp->ld, n0, width, data + q0, plane);
    }
}

pf_status pf_fused_flight(pf_grid *g, double complex *data, double scale, double *band_sums)
{
    pf_status s = pf_fused_prepare_chunks(g);
    if (s) return s;
    const pf_fused_plans *fp = &g->fused;
    pf_fused_chunks(g, data, 0, NULL, NULL, 1);
    column_sweep(g, data, -1, scale, g->flight.phase, 1, band_sums != NULL);
    pf_fused_chunks(g, data, 1, NULL, NULL, 0);
    if (band_sums) {
        /* S = DFT / N: |S|^2 = scale^2 |DFT|^2. */
        for (int a = 0; a < g->dim; a++) {
            double sum = 0;
            for (size_t b = 0; b < fp->blocks; b++) sum += fp->part[b * PF_MAX_DIM + (size_t)a];
            band_sums[a] = sum * scale * scale;
        }
    }
    return PF_OK;
}

/* Bytes a chunk aims at: it and FFTW's twiddles stay in a core's L2 cache
 * (1 MB on the reference machine) between the backward transform, the
 * pointwise work and the forward transform. */
#define CHUNK_BYTES ((size_t)256 * 1024)

static fftw_plan chunk_plan(const pf_grid *g, size_t rows, double complex *scratch, int sign, unsigned flags)
{
    int tn[PF_MAX_DIM - 1];
    for (int a = 1; a < g->dim; a++) tn[a - 1] = (int)g->n[a];
    int plane = (int)(g->total / g->n[0]);
    return fftw_plan_many_dft(g->dim - 1, tn, (int)rows, scratch, NULL, 1, plane, scratch, NULL, 1, plane, sign,
                              flags);
}

pf_status pf_fused_prepare_chunks(pf_grid *g)
{
    pf_status s = fused_plan(g);
    if (s) return s;
    pf_fused_plans *fp = &g->fused;
    if (fp->chunk_fwd) return PF_OK;
    pf_context *ctx = g->ctx;
    const size_t n0 = g->n[0], plane = g->total / n0;
    size_t rows = CHUNK_BYTES / (plane * sizeof(double complex));
    if (rows < 1) rows = 1;
    if (rows > n0) rows = n0;
    fp->rows = rows;
    fp->rows_tail = n0 % rows;
    fp->chunks = n0 / rows + (fp->rows_tail ? 1 : 0);
    size_t bytes = pf_bytes(rows * plane, sizeof(double complex));
    double complex *scratch = pf_alloc(ctx, bytes);
    if (!scratch) return pf_context_status(ctx);
    unsigned flags = pf_context_prepare_planner(ctx);
    fftw_plan_with_nthreads(1);
    fp->chunk_fwd = chunk_plan(g, rows, scratch, FFTW_FORWARD, flags);
    fp->chunk_bwd = chunk_plan(g, rows, scratch, FFTW_BACKWARD, flags);
    if (fp->rows_tail) {
        fp->chunk_tail_fwd = chunk_plan(g, fp->rows_tail, scratch, FFTW_FORWARD, flags);
        fp->chunk_tail_bwd = chunk_plan(g, fp->rows_tail, scratch, FFTW_BACKWARD, flags);
    }
    fftw_plan_with_nthreads(ctx->threads);
    pf_free(ctx, scratch, bytes);
    if (!fp->chunk_fwd || !fp->chunk_bwd || (fp->rows_tail && (!fp->chunk_tail_fwd || !fp->chunk_tail_bwd))) {
        pf_fused_release(g);
        return pf_fail(ctx, PF_EFFT, "FFTW could not plan the split-step transforms of %zu points", g->total);
    }
    pf_context_store_wisdom(ctx);
    fftw_plan set[4] = {fp->chunk_fwd, fp->chunk_bwd, fp->chunk_tail_fwd, fp->chunk_tail_bwd};
    return pf_context_note_plans(ctx, "chunks", g, set, 4);
}

/* For every chunk, in parallel: the trailing-axes transform of sign
 * before (0: none), fn, the transform of sign after (0: none). */
static void chunk_sweep(pf_grid *g, double complex *data, int before, pf_chunk_fn fn, void *user, int after)
{
    const pf_fused_plans *fp = &g->fused;
    const size_t plane = g->total / g->n[0];
#pragma omp parallel for num_threads(fp->threads) schedule(static)
    for (ptrdiff_t c = 0; c < (ptrdiff_t)fp->chunks; c++) {
        const size_t begin = (size_t)c * fp->rows * plane;
        const int short_one = (size_t)(c + 1) * fp->rows > g->n[0];
        const size_t count = (short_one ? fp->rows_tail : fp->rows) * plane;
        double complex *chunk = data + begin;
        fftw_plan fwd = short_one ? fp->chunk_tail_fwd : fp->chunk_fwd, bwd = short_one ? fp->chunk_tail_bwd : fp->chunk_bwd;
        if (before) fftw_execute_dft(before < 0 ? fwd : bwd, chunk, chunk);
        if (fn) fn(user, chunk, begin, count);
        if (after) fftw_execute_dft(after < 0 ? fwd : bwd, chunk, chunk);
    }
}

void pf_fused_chunks(pf_grid *g, double complex *data, int backward, pf_chunk_fn fn, void *user, int forward)
{
    chunk_sweep(g, data, backward ? +1 : 0, fn, user, forward ? -1 : 0);
}

void pf_fused_columns(pf_grid *g, double complex *data, double scale, double complex *const *tables)
{
    column_sweep(g, data, -1, scale, tables, 1, 0);
}

pf_status pf_fused_transform(pf_grid *g, double complex *data, int sign, pf_chunk_fn before, void *user,
                             double complex *const *after)
{
    pf_status s = pf_fused_prepare_chunks(g);
    if (s) return s;
    chunk_sweep(g, data, 0, before, user, sign);
    column_sweep(g, data, sign, 1.0, after, 0, 0);
    return PF_OK;
}

