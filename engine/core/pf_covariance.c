/* pf_covariance.c - symmetrised position-momentum covariance from the
 * spectral derivative and centred grid positions, in fixed-order sums. */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_covariance.h"
#include "pf_internal.h"
#include "pf_observe.h"

/* Re <psi| (x_a - m_a) p_b |psi> = hbar sum_x (x_a - m_a) Im(conj(psi) dpsi_b)
 * (p_b = -i hbar d_b).  Its real part is the symmetrised moment, since
 * <p x> = conj(<x p>); centring the positions on their means subtracts
 * <x_a><p_b> exactly (the Re <p_b> term times zero) without cancellation.
 * Block partials of PF_REDUCE_BLOCK points in block order, in the grid's
 * reserved reduction buffer (d <= 1 + 2d values per block). */
static void centred_sums(pf_grid *g, const double complex *psi, const double complex *dpsi, const double *const *xc,
                         double *sums)
{
    const int d = g->dim;
    const size_t nblocks = (g->total + PF_REDUCE_BLOCK - 1) / PF_REDUCE_BLOCK;
    double *part = g->reduce_part;
    const size_t *n = g->n;
    ptrdiff_t nb = (ptrdiff_t)nblocks;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t b = 0; b < nb; b++) {
        size_t begin = (size_t)b * PF_REDUCE_BLOCK;
        size_t end = begin + PF_REDUCE_BLOCK < g->total ? begin + PF_REDUCE_BLOCK : g->total;
        size_t idx[PF_MAX_DIM] = {0, 0, 0}, rest = begin;
        for (int a = d - 1; a >= 0; a--) {
            idx[a] = rest % n[a];
            rest /= n[a];
        }
        double acc[PF_MAX_DIM] = {0, 0, 0};
        for (size_t off = begin; off < end; off++) {
            double j = creal(psi[off]) * cimag(dpsi[off]) - cimag(psi[off]) * creal(dpsi[off]);
            for (int a = 0; a < d; a++) acc[a] += xc[a][idx[a]] * j;
            for (int a = d - 1; a >= 0; a--) {
                if (++idx[a] < n[a]) break;
                idx[a] = 0;
            }
        }
        memcpy(part + (size_t)b * (size_t)d, acc, (size_t)d * sizeof(double));
    }
    for (int a = 0; a < d; a++) sums[a] = 0;
    for (size_t b = 0; b < nblocks; b++)
        for (int a = 0; a < d; a++) sums[a] += part[b * (size_t)d + (size_t)a];
}

pf_status pf_wave_position_momentum_covariance(pf_wave *w, double *cov)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    double mean[PF_MAX_DIM];
    pf_status s = pf_wave_position_moments(w, mean, NULL);
    if (s) return s;
    double sums[1 + 2 * PF_MAX_DIM];
    s = pf_reduce_axis_moments(g, w->store, NULL, sums);
    if (s) return s;
    double norm = sums[0];
    size_t bytes = pf_bytes(g->total, sizeof(double complex));
    double complex *dpsi = pf_alloc(g->ctx, bytes);
    double *xc[PF_MAX_DIM] = {NULL, NULL, NULL};
    size_t xbytes = 0;
    for (int a = 0; a < d; a++) xbytes += g->n[a] * sizeof(double);
    double *xmem = dpsi ? pf_alloc(g->ctx, xbytes) : NULL;
    if (!dpsi || !xmem) {
        if (dpsi) pf_free(g->ctx, dpsi, bytes);
        return pf_context_status(g->ctx);
    }
    for (int a = 0, at = 0; a < d; at += (int)g->n[a], a++) {
        xc[a] = xmem + at;
        for (size_t j = 0; j < g->n[a]; j++) xc[a][j] = g->x[a][j] - mean[a];
    }
    for (int b = 0; s == PF_OK && b < d; b++) {
        s = pf_wave_to(w, PF_MOMENTUM);
        if (s) break;
        size_t inner = 1;
        for (int a = b + 1; a < d; a++) inner *= g->n[a];
        size_t nb = g->n[b];
        size_t nyq = nb % 2 == 0 ? nb / 2 : (size_t)-1;
        const double *k = g->k[b];
        for (size_t off = 0; off < g->total; off++) {
            size_t m = (off / inner) % nb;
            dpsi[off] = m == nyq ? 0 : I * k[m] * w->store[off];
        }
        s = pf_grid_fft(g, dpsi, +1);
        if (s == PF_OK) s = pf_wave_to(w, PF_POSITION);
        if (s) break;
        double col[PF_MAX_DIM];
        centred_sums(g, w->store, dpsi, (const double *const *)xc, col);
        for (int a = 0; a < d; a++) cov[a * d + b] = PF_HBAR * col[a] / norm;
    }
    pf_free(g->ctx, dpsi, bytes);
    pf_free(g->ctx, xmem, xbytes);
    return s;
}
