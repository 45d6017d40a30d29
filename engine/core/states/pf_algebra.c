/* pf_algebra.c - superposition and inner products of wave functions. */
#include <math.h>
#include <stdlib.h>
#include "pf_algebra.h"
#include "pf_internal.h"

#define BLOCK ((size_t)16384)

static pf_status compatible(pf_wave *a, pf_wave *b, const char *what)
{
    pf_context *ctx = a->grid->ctx;
    if (!pf_grid_same(a->grid, b->grid))
        return pf_fail(ctx, PF_ESTATE, "%s needs both wave functions on the same grid (points, spans, origins)", what);
    double ma = a->mass, mb = b->mass;
    if (fabs(ma - mb) > 1e-12 * fmax(ma, mb))
        return pf_fail(ctx, PF_ESTATE, "%s needs equal masses, got %.10g kg and %.10g kg", what, ma, mb);
    /* Bring b into a's representation; its physical state is unchanged. */
    pf_status s = pf_wave_settle(a);
    return s ? s : pf_wave_to(b, a->rep);
}

pf_status pf_wave_axpy(pf_wave *y, double complex a, pf_wave *x)
{
    if (!isfinite(creal(a)) || !isfinite(cimag(a)))
        return pf_fail(y->grid->ctx, PF_EINVAL, "coefficient must be finite, got %g%+gi", creal(a), cimag(a));
    if (y == x) return pf_wave_scale(y, 1.0 + a);
    pf_status s = compatible(y, x, "adding states");
    if (s) return s;
    if (y->clock != x->clock)
        pf_context_warn(y->grid->ctx,
                        "adding states at different clocks (%.6g s and %.6g s): the sum mixes two moments of "
                        "the flight; fly one of them first if that is not intended",
                        y->clock, x->clock);
    double complex *d = y->store;
    const double complex *e = x->store;
    ptrdiff_t n = (ptrdiff_t)y->grid->total;
#pragma omp parallel for num_threads(y->grid->ctx->threads) schedule(static)
    for (ptrdiff_t i = 0; i < n; i++) d[i] += a * e[i];
    pf_wave_log_step(y, "build", "combine", 0.0, 0.0, -1.0);
    return PF_OK;
}

pf_status pf_wave_inner(pf_wave *a, pf_wave *b, double complex *out)
{
    pf_status s = a == b ? pf_wave_settle(a) : compatible(a, b, "the inner product");
    if (s) return s;
    pf_grid *g = a->grid;
    size_t nblocks = (g->total + BLOCK - 1) / BLOCK;
    double complex *part = pf_calloc(g->ctx, nblocks, sizeof *part);
    if (!part) return pf_context_status(g->ctx);
    const double complex *x = a->store, *y = b->store;
    ptrdiff_t nb = (ptrdiff_t)nblocks;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t k = 0; k < nb; k++) {
        size_t begin = (size_t)k * BLOCK, end = begin + BLOCK < g->total ? begin + BLOCK : g->total;
        double complex acc = 0;
        for (size_t i = begin; i < end; i++) acc += conj(x[i]) * y[i];
        part[k] = acc;
    }
    double complex sum = 0;
    for (size_t k = 0; k < nblocks; k++) sum += part[k];
    pf_context_free(g->ctx, part);
    /* Position: dV per point.  Momentum storage S = DFT/N: Parseval gives
     * sum conj(psi_a) psi_b = N sum conj(S_a) S_b. */
    double v = pf_grid_cell_volume(g);
    if (a->rep == PF_MOMENTUM) v *= (double)g->total;
    *out = v * sum;
    return PF_OK;
}
