/* pf_observe.c - norm, moments and kinetic energy from deterministic sums. */
#include <math.h>
#include <stdlib.h>
#include "pf_constants.h"
#include "pf_internal.h"
#include "pf_observe.h"

double pf_wave_norm(pf_wave *w)
{
    pf_grid *g = w->grid;
    double sums[1 + 2 * PF_MAX_DIM];
    /* A deferred flight is not carried out for this: free flight keeps the
     * norm, so the stored (pre-flight) data give it. */
    if (pf_dist_axis_moments(w, NULL, sums) != PF_OK) return NAN;
    double v = pf_grid_cell_volume(g);
    /* Parseval for S = DFT/N: sum |psi|^2 = N sum |S|^2. */
    if (w->rep == PF_MOMENTUM) v *= (double)g->total;
    return sums[0] * v;
}

/* Mean and central second moment along each axis with the given per-axis
 * coordinate tables; two passes so the variance does not suffer cancellation
 * when the mean is far from the origin. */
static pf_status axis_moments(pf_wave *w, const double *const *coords, double *mean, double *var)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    double sums[1 + 2 * PF_MAX_DIM];
    pf_status s = pf_dist_axis_moments(w, coords, sums);
    if (s) return s;
    if (!(sums[0] > 0)) return pf_fail(g->ctx, PF_EINVAL, "moments of a zero state are undefined");
    double m[PF_MAX_DIM];
    for (int a = 0; a < d; a++) m[a] = sums[1 + a] / sums[0];
    if (mean)
        for (int a = 0; a < d; a++) mean[a] = m[a];
    if (!var) return PF_OK;
    double *shifted[PF_MAX_DIM] = {NULL, NULL, NULL};
    for (int a = 0; a < d; a++) {
        shifted[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double));
        if (!shifted[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, shifted[b]);
            return pf_context_status(g->ctx);
        }
        for (size_t j = 0; j < g->n[a]; j++) shifted[a][j] = coords[a][j] - m[a];
    }
    s = pf_dist_axis_moments(w, (const double *const *)shifted, sums);
    for (int a = 0; a < d; a++) pf_context_free(g->ctx, shifted[a]);
    if (s) return s;
    for (int a = 0; a < d; a++) var[a] = sums[1 + d + a] / sums[0];
    return PF_OK;
}

/* Moments over the grid's positions (PF_POSITION) or wave numbers: in
 * momentum representation |phi|^2 is |S|^2 times a constant, so the
 * storage weights give the normalised moments directly. */
static pf_status rep_moments(pf_wave *w, pf_rep rep, double *mean, double *variance)
{
    pf_status s = pf_wave_to(w, rep);
    if (s) return s;
    const double *coords[PF_MAX_DIM];
    for (int a = 0; a < w->grid->dim; a++) coords[a] = rep == PF_POSITION ? w->grid->x[a] : w->grid->k[a];
    return axis_moments(w, coords, mean, variance);
}

pf_status pf_wave_position_moments(pf_wave *w, double *mean, double *variance)
{
    return rep_moments(w, PF_POSITION, mean, variance);
}

pf_status pf_wave_wavenumber_moments(pf_wave *w, double *mean, double *variance)
{
    return rep_moments(w, PF_MOMENTUM, mean, variance);
}

pf_status pf_wave_kinetic_energy(pf_wave *w, double *energy)
{
    pf_grid *g = w->grid;
    pf_status s = pf_wave_to(w, PF_MOMENTUM);
    if (s) return s;
    const double *coords[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) coords[a] = g->k[a];
    double sums[1 + 2 * PF_MAX_DIM];
    s = pf_dist_axis_moments(w, coords, sums);
    if (s) return s;
    if (!(sums[0] > 0)) return pf_fail(g->ctx, PF_EINVAL, "kinetic energy of a zero state is undefined");
    double k2 = 0;
    for (int a = 0; a < g->dim; a++) k2 += sums[1 + g->dim + a] / sums[0];
    *energy = PF_HBAR * PF_HBAR * k2 / (2.0 * w->mass);
    return PF_OK;
}
