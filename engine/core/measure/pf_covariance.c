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
typedef struct centred_job {
    const pf_grid *g;
    const double complex *psi, *dpsi;
    const double *const *xc;
} centred_job;

static void centred_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    const centred_job *job = user;
    const int d = job->g->dim;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    for (size_t off = begin; off < end; off++) {
        double j = creal(job->psi[off]) * cimag(job->dpsi[off]) - cimag(job->psi[off]) * creal(job->dpsi[off]);
        for (int a = 0; a < d; a++) acc[a] += job->xc[a][idx[a]] * j;
        pf_index_next(job->g, idx);
    }
}

static void centred_sums(pf_grid *g, const double complex *psi, const double complex *dpsi, const double *const *xc,
                         double *sums)
{
    centred_job job = {g, psi, dpsi, xc};
    pf_reduce_blocks(g, g->dim, centred_block, &job, sums);
}

static pf_status covariance_whole(pf_wave *w, void *user, double *out)
{
    (void)user;
    return pf_wave_position_momentum_covariance(w, out);
}

pf_status pf_wave_position_momentum_covariance(pf_wave *w, double *cov)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    /* Split over MPI ranks: the derivative transforms of every axis run on
     * the wave gathered onto rank 0, and the matrix is broadcast. */
    if (g->dist) return pf_dist_on_whole(w, PF_POSITION, covariance_whole, NULL, cov, d * d);
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
