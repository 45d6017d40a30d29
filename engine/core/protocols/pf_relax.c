/* pf_relax.c - imaginary-time relaxation and the Gross-Pitaevskii energy
 * functional (see pf_relax.h). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_guard.h"
#include "pf_kernels.h"
#include "pf_observe.h"
#include "pf_relax.h"

#define BLOCK ((size_t)16384)

typedef struct sums_job {
    const double complex *z;
    const double *V;
} sums_job;

/* One block of position_sums on a grid split over MPI ranks (local offsets). */
static void sums_block(void *user, size_t begin, size_t end, const size_t *idx, double *acc)
{
    (void)idx;
    const sums_job *job = user;
    const double complex *z = job->z;
    for (size_t i = begin; i < end; i++) {
        double rho = creal(z[i]) * creal(z[i]) + cimag(z[i]) * cimag(z[i]);
        acc[0] += rho;
        if (job->V) acc[1] += job->V[i] * rho;
        acc[2] += rho * rho;
    }
}

/* Deterministic sums over position data: s[0] = sum rho, s[1] = sum V rho,
 * s[2] = sum rho^2 (fixed blocks, partials added in order; over MPI ranks
 * the same blocks in the same order, pf_dist_reduce). */
static pf_status position_sums(pf_grid *g, const double complex *z, const double *V, double *s)
{
    if (g->dist) {
        sums_job job = {z, V};
        _Static_assert(BLOCK == PF_REDUCE_BLOCK, "the distributed blocks are the single process's");
        pf_dist_reduce(g, PF_POSITION, 3, sums_block, &job, s);
        return PF_OK;
    }
    size_t nblocks = (g->total + BLOCK - 1) / BLOCK;
    double *part = pf_calloc(g->ctx, 3 * nblocks, sizeof(double));
    if (!part) return pf_context_status(g->ctx);
    ptrdiff_t nb = (ptrdiff_t)nblocks;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t b = 0; b < nb; b++) {
        size_t begin = (size_t)b * BLOCK, end = begin + BLOCK < g->total ? begin + BLOCK : g->total;
        double a0 = 0, a1 = 0, a2 = 0;
        for (size_t i = begin; i < end; i++) {
            double rho = creal(z[i]) * creal(z[i]) + cimag(z[i]) * cimag(z[i]);
            a0 += rho;
            if (V) a1 += V[i] * rho;
            a2 += rho * rho;
        }
        part[3 * b] = a0;
        part[3 * b + 1] = a1;
        part[3 * b + 2] = a2;
    }
    s[0] = s[1] = s[2] = 0;
    for (size_t b = 0; b < nblocks; b++)
        for (int c = 0; c < 3; c++) s[c] += part[3 * b + (size_t)c];
    pf_context_free(g->ctx, part);
    return PF_OK;
}

/* E and mu of position data z; scratch holds a full complex array. */
static pf_status energy_of(pf_wave *w, const double complex *z, const double *V, double g, double complex *scratch,
                           double *energy, double *mu)
{
    pf_grid *gr = w->grid;
    double s[3] = {0, 0, 0};
    pf_status st = position_sums(gr, z, V, s);
    if (st) return st;
    if (!(s[0] > 0)) return pf_fail(gr->ctx, PF_EINVAL, "energy of a zero state is undefined");
    double dv = pf_grid_cell_volume(gr);
    double pot = s[1] / s[0];
    /* integral |psi|^4 for psi normalised to 1: sum rho^2 dv / (sum rho dv)^2 */
    double quartic = s[2] / (s[0] * s[0] * dv);
    memcpy(scratch, z, pf_bytes(pf_dist_position_values(gr), sizeof(double complex)));
    if (gr->dist) pf_dist_forward(gr, scratch); /* transposed momentum slab */
    else if ((st = pf_grid_fft(gr, scratch, -1))) return st;
    double sums[1 + 2 * PF_MAX_DIM];
    const double *k[PF_MAX_DIM];
    for (int a = 0; a < gr->dim; a++) k[a] = gr->k[a];
    if ((st = pf_dist_sums(gr, scratch, PF_MOMENTUM, k, sums))) return st;
    double k2 = 0;
    for (int a = 0; a < gr->dim; a++) k2 += sums[1 + gr->dim + a] / sums[0];
    double kin = PF_HBAR * PF_HBAR * k2 / (2.0 * w->mass);
    *energy = kin + pot + 0.5 * g * quartic;
    *mu = kin + pot + g * quartic;
    return PF_OK;
}

pf_status pf_wave_energy(pf_wave *w, const double *potential, double g, double *energy, double *mu)
{
    pf_grid *gr = w->grid;
    if (!isfinite(g)) return pf_fail(gr->ctx, PF_EINVAL, "g must be finite, got %g", g);
    pf_status settled = pf_wave_settle(w);
    if (settled) return settled;
    /* Over MPI ranks: this rank's slab, with room for the transposed one. */
    const size_t values = pf_dist_local_values(gr);
    size_t bytes = pf_bytes(values, sizeof(double complex));
    double complex *pos = pf_alloc(gr->ctx, 2 * bytes);
    if (!pos) return pf_context_status(gr->ctx);
    double complex *scratch = pos + values;
    memcpy(pos, w->store, bytes);
    pf_status s = PF_OK;
    if (w->rep == PF_MOMENTUM) { /* S = DFT/N: backward gives psi */
        if (gr->dist) pf_dist_backward(gr, pos);
        else s = pf_grid_fft(gr, pos, +1);
    }
    double e = 0, m = 0;
    if (!s) s = energy_of(w, pos, potential, g, scratch, &e, &m);
    pf_free(gr->ctx, pos, 2 * bytes);
    if (s) return s;
    if (energy) *energy = e;
    if (mu) *mu = m;
    return PF_OK;
}

/* data *= exp(-(V - vmin + g|psi|^2) f) per point (f = dtau / 2 hbar); with
 * g = 0 the precomputed factor array is used instead. */
static void damp_potential(pf_grid *g, double complex *d, const double *V, double vmin, double gc, double f,
                           const double *factor)
{
    ptrdiff_t n = (ptrdiff_t)pf_dist_position_values(g); /* this rank's points when split */
    if (factor) {
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (ptrdiff_t i = 0; i < n; i++) d[i] *= factor[i];
        return;
    }
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t i = 0; i < n; i++) {
        double rho = creal(d[i]) * creal(d[i]) + cimag(d[i]) * cimag(d[i]);
        d[i] *= exp(-(V[i] - vmin + gc * rho) * f);
    }
}

/* The spec's numbers, and the potential finite at every point (on every
 * rank); *vmin receives its minimum over the whole grid. */
static pf_status check_relax_spec(const pf_grid *g, const pf_relax_spec *spec, double *vmin)
{
    pf_context *ctx = g->ctx;
    const double *V = spec->potential;
    if (!V) return pf_fail(ctx, PF_EINVAL, "a potential is required");
    if (!isfinite(spec->g)) return pf_fail(ctx, PF_EINVAL, "g must be finite, got %g", spec->g);
    if (!isfinite(spec->dt)) return pf_fail(ctx, PF_EINVAL, "dt must be finite (s), got %g", spec->dt);
    if (!(spec->tolerance > 0) || !isfinite(spec->tolerance))
        return pf_fail(ctx, PF_EINVAL, "tolerance must be finite and positive, got %g", spec->tolerance);
    if (spec->max_steps < 1) return pf_fail(ctx, PF_EINVAL, "max_steps must be at least 1");
    if (spec->check_every < 1) return pf_fail(ctx, PF_EINVAL, "check_every must be at least 1");
    double unused = 0;
    *vmin = INFINITY;
    const size_t nloc = pf_dist_position_values(g); /* g->total unless split over MPI ranks */
    size_t bad = nloc, first, end;
    for (size_t i = 0; i < nloc && bad == nloc; i++) {
        if (!isfinite(V[i])) bad = i;
        else if (V[i] < *vmin) *vmin = V[i];
    }
    if (pf_dist_any(g, bad < nloc)) {
        if (bad == nloc) return pf_fail(ctx, PF_EINVAL, "the potential is not finite at a point another MPI rank holds");
        pf_grid_local_range(g, &first, &end);
        return pf_fail(ctx, PF_EINVAL, "the potential at point %zu is %g, not finite", first + bad + 1, V[bad]);
    }
    pf_dist_minmax(g, vmin, &unused);
    return PF_OK;
}

/* Default step: a twentieth of the time hbar / E of the starting state
 * (energy above the potential's minimum).  The flow is stable for any dtau;
 * the scale set by the state, not by the potential's values at the grid
 * edges where the state is negligible, fixes both the convergence speed and
 * the O(dtau^2) offset of the fixed point. */
static pf_status default_relax_dt(pf_wave *w, const pf_relax_spec *spec, double vmin, double complex *scratch,
                                  double *dt)
{
    double e0 = 0, mu0 = 0;
    pf_status s = energy_of(w, w->store, spec->potential, spec->g, scratch, &e0, &mu0);
    if (s) return s;
    if (!(e0 - vmin > 0))
        return pf_fail(w->grid->ctx, PF_EINVAL, "cannot choose a default dt: the starting energy %g J is not above the "
                       "potential minimum %g J; give dt (imaginary-time step, s)", e0, vmin);
    *dt = PF_RELAX_DEFAULT_FRACTION * PF_HBAR / (e0 - vmin);
    return PF_OK;
}

/* The step's tables: per axis the kinetic factors exp(-hbar dt k^2 / 2m),
 * and without a mean field the potential factors exp(-(V - vmin) dt / 2
 * hbar) per point (NULL with one: they depend on the density).  The caller
 * frees them with free_relax_tables, also after a failure here. */
typedef struct relax_tables {
    double *factor;
    size_t factor_bytes;
    double complex *kin[PF_MAX_DIM];
} relax_tables;

static pf_status make_relax_tables(pf_wave *w, const pf_relax_spec *spec, double vmin, double dt, relax_tables *t)
{
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    const double f = dt / (2.0 * PF_HBAR);
    const size_t nloc = pf_dist_position_values(g);
    if (spec->g == 0) {
        t->factor_bytes = pf_bytes(nloc, sizeof(double));
        t->factor = pf_alloc(ctx, t->factor_bytes);
        if (!t->factor) return pf_context_status(ctx);
        for (size_t i = 0; i < nloc; i++) t->factor[i] = exp(-(spec->potential[i] - vmin) * f);
    }
    for (int a = 0; a < g->dim; a++) {
        t->kin[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
        if (!t->kin[a]) return pf_context_status(ctx);
        double c = PF_HBAR * dt / (2.0 * w->mass);
        for (size_t j = 0; j < g->n[a]; j++) t->kin[a][j] = exp(-c * g->k[a][j] * g->k[a][j]);
    }
    return PF_OK;
}

static void free_relax_tables(pf_grid *g, relax_tables *t)
{
    if (t->factor) pf_free(g->ctx, t->factor, t->factor_bytes);
    for (int a = 0; a < g->dim; a++) pf_context_free(g->ctx, t->kin[a]);
}

/* One symmetric imaginary-time step: potential half-step, kinetic step,
 * potential half-step, normalisation. */
static pf_status relax_step(pf_wave *w, const pf_relax_spec *spec, double vmin, double f, const relax_tables *t)
{
    pf_grid *g = w->grid;
    const double *V = spec->potential;
    pf_status s;
    damp_potential(g, w->store, V, vmin, spec->g, f, t->factor);
    if (g->dist) {
        pf_dist_kinetic(g, w->store, t->kin, 1.0 / (double)g->total); /* on the transposed slab */
    } else {
        if ((s = pf_grid_fft(g, w->store, -1))) return s;
        pf_kernel_axis_multiply(g, w->store, (const double complex *const *)t->kin, 1.0 / (double)g->total);
        if ((s = pf_grid_fft(g, w->store, +1))) return s;
    }
    /* With a mean field, renormalise before the second half-step too: both
     * halves then see the density of a normalised state, which keeps the
     * step symmetric and the fixed point's offset O(dtau^2) (with the
     * decayed norm in the second half it would be O(dtau)). */
    if (spec->g != 0 && (s = pf_wave_normalize(w))) return s;
    damp_potential(g, w->store, V, vmin, spec->g, f, t->factor);
    return pf_wave_normalize(w);
}

pf_status pf_wave_relax(pf_wave *w, const pf_relax_spec *spec, pf_relax_info *info)
{
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    double vmin;
    pf_status s = check_relax_spec(g, spec, &vmin);
    if (!s) s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    if (!(pf_wave_norm(w) > 0)) return pf_fail(ctx, PF_EINVAL, "the starting state is zero");

    size_t bytes_c = pf_grid_local_bytes(g);
    double complex *scratch = pf_alloc(ctx, bytes_c);
    relax_tables tab;
    memset(&tab, 0, sizeof tab);
    if (!scratch) return pf_context_status(ctx);
    double dt = spec->dt;
    if (dt <= 0 && (s = default_relax_dt(w, spec, vmin, scratch, &dt))) goto done;
    if ((s = make_relax_tables(w, spec, vmin, dt, &tab))) goto done;
    const double f = dt / (2.0 * PF_HBAR);
    double e_prev = NAN, e = NAN, mu = NAN, change = INFINITY;
    int converged = 0;
    size_t step = 0;
    while (step < spec->max_steps) {
        /* One poll per step: a stop request ends a long relaxation at once.
         * Progress counts against the step limit; convergence ends it early. */
        if ((s = pf_context_poll_stop(ctx))) goto done;
        pf_context_progress(ctx, "relax", (double)step, (double)spec->max_steps);
        if ((s = relax_step(w, spec, vmin, f, &tab))) goto done;
        step++;
        if (step % spec->check_every == 0 || step == spec->max_steps) {
            if ((s = energy_of(w, w->store, spec->potential, spec->g, scratch, &e, &mu))) goto done;
            if (isfinite(e_prev)) {
                change = fabs(e - e_prev) / fmax(fabs(e), 1e-300);
                if (change <= spec->tolerance) {
                    converged = 1;
                    break;
                }
            }
            e_prev = e;
        }
    }
    if (!converged)
        pf_context_warn(ctx, "relax: not converged after %zu steps (relative energy change %.3g between checks, "
                        "tolerance %.3g); raise max_steps or dt", step, change, spec->tolerance);
    if (info) {
        info->steps = step;
        info->converged = converged;
        info->energy = e;
        info->chemical_potential = mu;
        info->change = change;
        info->dt = dt;
    }
    pf_wave_log_step(w, "relax", "imaginary-time", 0.0, 0.0, -1.0);
done:
    pf_context_progress(ctx, "relax", s ? -1.0 : (double)spec->max_steps, (double)spec->max_steps);
    if (s) pf_guard_forget(w); /* a failure part-way leaves changed data unlogged */
    pf_free(ctx, scratch, bytes_c);
    free_relax_tables(g, &tab);
    return s;
}
