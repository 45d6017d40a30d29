/* pf_collapse.c - region and Gaussian-resolution position measurements. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_collapse.h"
#include "pf_constants.h"
#include "pf_internal.h"
#include "pf_observe.h"
#include "pf_sample.h"

/* The region measurement without its log step (logged by the callers). */
static pf_status region_core(pf_wave *w, const pf_region *reg, pf_rng *r, int forced, int *outcome,
                             double *probability)
{
    pf_grid *g = w->grid;
    size_t bytes = g->total * sizeof(double);
    double *m = pf_alloc(g->ctx, bytes);
    if (!m) return pf_context_status(g->ctx);
    pf_status s = pf_region_weights(g, reg, m);
    if (s == PF_OK) s = pf_wave_to(w, PF_POSITION);
    if (s) {
        pf_free(g->ctx, m, bytes);
        return s;
    }
    double in = 0, all = 0;
    for (size_t i = 0; i < g->total; i++) {
        double rho = creal(w->store[i]) * creal(w->store[i]) + cimag(w->store[i]) * cimag(w->store[i]);
        in += m[i] * rho;
        all += rho;
    }
    if (!(all > 0)) {
        pf_free(g->ctx, m, bytes);
        return pf_fail(g->ctx, PF_EINVAL, "cannot measure a zero state");
    }
    double p_yes = in / all;
    int yes = forced >= 0 ? forced : pf_rng_uniform(r) < p_yes;
    double p = yes ? p_yes : 1 - p_yes;
    if (!(p > 0)) {
        pf_free(g->ctx, m, bytes);
        return pf_fail(g->ctx, PF_EINVAL, "forced outcome '%s' has probability 0", yes ? "yes" : "no");
    }
    /* sqrt(E) psi, normalised in the same pass: |sqrt(E) psi|^2 sums to p * all. */
    double scale = 1.0 / sqrt(p * all * pf_grid_cell_volume(g));
    for (size_t i = 0; i < g->total; i++) w->store[i] *= sqrt(yes ? m[i] : 1 - m[i]) * scale;
    pf_free(g->ctx, m, bytes);
    *outcome = yes;
    *probability = p;
    return PF_OK;
}

typedef struct region_job {
    const pf_region *reg;
    pf_rng *r;
    int forced;
} region_job;

static pf_status region_whole(pf_wave *w, void *user, double *out)
{
    const region_job *job = user;
    int yes = 0;
    double p = 0;
    pf_status s = region_core(w, job->reg, job->r, job->forced, &yes, &p);
    out[0] = yes;
    out[1] = p;
    return s;
}

pf_status pf_wave_measure_region(pf_wave *w, const pf_region *reg, pf_rng *r, int forced, int *outcome,
                                 double *probability)
{
    pf_grid *g = w->grid;
    if (forced < -1 || forced > 1) return pf_fail(g->ctx, PF_EINVAL, "forced outcome must be -1, 0 or 1");
    if (forced < 0 && !r) return pf_fail(g->ctx, PF_EINVAL, "a drawn outcome needs a random generator");
    /* Over MPI ranks: measured on the wave gathered onto rank 0 and
     * scattered back; its draw is the single process's, and every rank's
     * generator takes rank 0's state afterwards. */
    region_job job = {reg, r, forced};
    double out[2] = {0, 0};
    pf_status s = pf_dist_on_whole_update(w, region_whole, &job, out, 2, r, r ? sizeof *r : 0);
    if (s) return s;
    *outcome = out[0] != 0;
    *probability = out[1];
    pf_wave_log_step(w, "measure", *outcome ? "region-yes" : "region-no", 0.0, 1 - out[1], -1.0);
    return PF_OK;
}

/* Draws a Born-rule position (one event from |psi|^2 with in-cell jitter). */
static pf_status born_position(pf_wave *w, pf_rng *r, double *x)
{
    pf_field f;
    pf_status s = pf_field_for_grid(w->grid, PF_POSITION, &f);
    if (s) return s;
    s = pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL);
    pf_sampler sm;
    if (s == PF_OK) s = pf_sampler_init(&sm, &f);
    if (s == PF_OK) {
        pf_sampler_draw(&sm, r, 1, 1, x);
        pf_sampler_free(&sm);
    }
    pf_field_free(&f);
    return s;
}

/* The position measurement without its log step (logged by the callers). */
static pf_status position_core(pf_wave *w, const double *sigma, pf_rng *r, const double *forced, double *outcome,
                               double *density)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    int measured = 0;
    for (int a = 0; a < d; a++) {
        if (!(sigma[a] >= 0) || !isfinite(sigma[a]))
            return pf_fail(g->ctx, PF_EINVAL, "resolution on axis %d must be >= 0 (m), got %g", a + 1, sigma[a]);
        if (sigma[a] > 0) measured++;
        if (forced && sigma[a] > 0 && !isfinite(forced[a]))
            return pf_fail(g->ctx, PF_EINVAL, "forced outcome on axis %d must be finite", a + 1);
    }
    if (!measured) return pf_fail(g->ctx, PF_EINVAL, "a position measurement needs a resolution on at least one axis");
    if (!forced && !r) return pf_fail(g->ctx, PF_EINVAL, "a drawn outcome needs a random generator");
    double y[PF_MAX_DIM];
    if (forced) {
        for (int a = 0; a < d; a++) y[a] = forced[a];
    } else {
        pf_status s = born_position(w, r, y);
        if (s) return s;
        for (int a = 0; a < d; a++)
            if (sigma[a] > 0) y[a] += sigma[a] * pf_rng_normal(r);
    }
    pf_status s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    /* Separable Kraus amplitude: one table per axis, no exp per grid point. */
    double *K[PF_MAX_DIM] = {NULL, NULL, NULL};
    for (int a = 0; a < d; a++) {
        K[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double));
        if (!K[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, K[b]);
            return pf_context_status(g->ctx);
        }
        for (size_t j = 0; j < g->n[a]; j++) {
            if (sigma[a] > 0) {
                double u = g->x[a][j] - y[a];
                K[a][j] = pow(PF_TWO_PI * sigma[a] * sigma[a], -0.25) * exp(-u * u / (4 * sigma[a] * sigma[a]));
            } else {
                K[a][j] = 1.0;
            }
        }
    }
    /* Two passes: the outcome density first, so a forced outcome of zero
     * density fails before the state is touched. */
    double p = 0, norm = 0;
    for (int pass = 0; pass < 2; pass++) {
        double scale = pass ? 1.0 / sqrt(p * pf_grid_cell_volume(g)) : 0;
        size_t idx[PF_MAX_DIM] = {0, 0, 0};
        for (size_t off = 0; off < g->total; off++) {
            double k = 1;
            for (int a = 0; a < d; a++) k *= K[a][idx[a]];
            double complex z = w->store[off];
            if (pass) {
                w->store[off] = z * (k * scale);
            } else {
                double rho = creal(z) * creal(z) + cimag(z) * cimag(z);
                norm += rho;
                p += k * k * rho;
            }
            for (int a = d - 1; a >= 0; a--) {
                if (++idx[a] < g->n[a]) break;
                idx[a] = 0;
            }
        }
        if (!pass && (!(p > 0) || !(norm > 0))) {
            for (int a = 0; a < d; a++) pf_context_free(g->ctx, K[a]);
            return pf_fail(g->ctx, PF_EINVAL, "the outcome has zero probability density (state left unchanged)");
        }
    }
    for (int a = 0; a < d; a++) pf_context_free(g->ctx, K[a]);
    for (int a = 0; a < d; a++) outcome[a] = sigma[a] > 0 ? y[a] : NAN;
    *density = p / norm;
    return PF_OK;
}

typedef struct position_job {
    const double *sigma;
    pf_rng *r;
    const double *forced;
} position_job;

static pf_status position_whole(pf_wave *w, void *user, double *out)
{
    const position_job *job = user;
    return position_core(w, job->sigma, job->r, job->forced, out, out + PF_MAX_DIM);
}

pf_status pf_wave_measure_position(pf_wave *w, const double *sigma, pf_rng *r, const double *forced,
                                   double *outcome, double *density)
{
    /* Over MPI ranks: on the wave gathered onto rank 0 (the single
     * process's draw), scattered back; generators follow rank 0's. */
    position_job job = {sigma, r, forced};
    double out[PF_MAX_DIM + 1] = {0, 0, 0, 0};
    pf_status s = pf_dist_on_whole_update(w, position_whole, &job, out, PF_MAX_DIM + 1, r, r ? sizeof *r : 0);
    if (s) return s;
    for (int a = 0; a < w->grid->dim; a++) outcome[a] = out[a];
    *density = out[PF_MAX_DIM];
    pf_wave_log_step(w, "measure", "position-gauss", 0.0, 0.0, -1.0);
    return PF_OK;
}
