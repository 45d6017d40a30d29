/* pf_wave.c - wave-function storage, representation changes, filling and
 * element access in physical units. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_observe.h"

/* A distributed grid's waves hold this rank's slab only (pf_dist.h). */
static size_t data_bytes(const pf_grid *g) { return pf_grid_local_bytes(g); }

pf_status pf_wave_new(pf_grid *g, double mass, pf_wave **out)
{
    pf_context *ctx = g->ctx;
    *out = NULL;
    if (!isfinite(mass) || mass <= 0)
        return pf_fail(ctx, PF_EINVAL, "mass must be finite and positive (kg), got %g", mass);
    pf_wave *w = pf_calloc(ctx, 1, sizeof *w);
    if (!w) return pf_context_status(ctx);
    w->store = pf_alloc(ctx, data_bytes(g));
    if (!w->store) {
        pf_context_free(ctx, w);
        return pf_context_status(ctx);
    }
    memset(w->store, 0, data_bytes(g));
    w->grid = g;
    pf_grid_retain(g);
    w->mass = mass;
    w->rep = PF_POSITION;
    pf_steplog_init(&w->log);
    w->norm_now = 0.0; /* all zero */
    *out = w;
    return PF_OK;
}

pf_status pf_wave_copy(const pf_wave *src, pf_wave **out)
{
    pf_status s = pf_wave_new(src->grid, src->mass, out);
    if (s) return s;
    pf_wave *w = *out;
    memcpy(w->store, src->store, data_bytes(src->grid));
    w->rep = src->rep;
    w->deferred = src->deferred; /* the copy carries the same deferred flight */
    w->clock = src->clock;
    w->norm_now = src->norm_now;
    w->guard = src->guard; /* a copy has been warned about already */
    w->scaled_from = src->scaled_from;
    w->expanded = src->expanded;
    w->frame = src->frame;
    w->periodic = src->periodic;
    if (pf_steplog_copy(&w->log, &src->log) != PF_OK) {
        pf_wave_free(w);
        *out = NULL;
        return pf_fail(src->grid->ctx, PF_ENOMEM, "out of memory copying a step log");
    }
    return PF_OK;
}

void pf_wave_free(pf_wave *w)
{
    if (!w) return;
    pf_grid *g = w->grid;
    pf_free(g->ctx, w->store, data_bytes(g));
    pf_steplog_clear(&w->log);
    pf_context_free(g->ctx, w); /* before the grid, which may hold the last reference to the context */
    pf_grid_release(g);
}

pf_grid *pf_wave_grid(const pf_wave *w) { return w->grid; }
double pf_wave_mass(const pf_wave *w) { return w->mass; }
pf_rep pf_wave_rep(const pf_wave *w) { return w->rep; }
double pf_wave_clock(const pf_wave *w) { return w->clock; }
void pf_wave_set_clock(pf_wave *w, double t) { w->clock = t; }
/* Writable storage: whoever asks may change the data, so the carried norm is
 * forgotten (it is measured again when next needed). */
double complex *pf_wave_data(pf_wave *w)
{
    double complex *d = pf_wave_settled(w);
    w->norm_now = -1.0;
    w->peak_kept.valid = 0;
    return d;
}

/* Settling a deferred flight changes how the state is stored, not the state,
 * so it is allowed on a const wave (every pf_wave is heap-allocated and
 * writable underneath). */
const double complex *pf_wave_data_const(const pf_wave *w) { return pf_wave_settled((pf_wave *)w); }

/* Raw samples for kernels written for a whole grid: a distributed wave's
 * slab is not that, so such kernels fail cleanly (pf_dist.h). */
double complex *pf_wave_settled(pf_wave *w)
{
    if (w->grid->dist) {
        pf_dist_refuse(w->grid->ctx, "this operation");
        return NULL;
    }
    return pf_wave_settle(w) == PF_OK ? w->store : NULL;
}

double complex *pf_wave_overwrite(pf_wave *w)
{
    if (w->grid->dist) {
        pf_dist_refuse(w->grid->ctx, "this builder");
        return NULL;
    }
    w->deferred.active = 0;
    return w->store;
}

double complex *pf_wave_overwrite_planes(pf_wave *w, size_t *first, size_t *count)
{
    w->deferred.active = 0;
    pf_grid_slab(w->grid, PF_POSITION, first, count);
    return w->store;
}

double complex pf_wave_momentum_factor(const pf_wave *w, const size_t *index)
{
    const pf_grid *g = w->grid;
    double complex f = 1.0;
    for (int a = 0; a < g->dim; a++) f *= g->kfactor[a][index[a]];
    return f;
}

pf_status pf_wave_to(pf_wave *w, pf_rep rep)
{
    if (w->grid->dist) return pf_dist_wave_to(w, rep);
    if (w->deferred.active) return pf_wave_settle_to(w, rep);
    if (w->rep == rep) return PF_OK;
    pf_grid *g = w->grid;
    if (rep == PF_MOMENTUM) {
        pf_status s = pf_grid_fft(g, w->store, -1);
        if (s) return s;
        /* S = DFT(psi) / N: the backward transform then needs no scaling. */
        double inv = 1.0 / (double)g->total;
        double complex *d = w->store;
        ptrdiff_t n = (ptrdiff_t)g->total;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
        for (ptrdiff_t i = 0; i < n; i++) d[i] *= inv;
    } else {
        pf_status s = pf_grid_fft(g, w->store, +1);
        if (s) return s;
    }
    w->rep = rep;
    pf_guard_after_transform(w); /* lazy band measurement (pf_guard.c) */
    return PF_OK;
}

/* Linear storage offset of a multi-index (row-major). */
static size_t offset_of(const pf_grid *g, const size_t *index)
{
    size_t off = 0;
    for (int a = 0; a < g->dim; a++) off = off * g->n[a] + index[a];
    return off;
}

static pf_status check_index(const pf_grid *g, const size_t *index)
{
    for (int a = 0; a < g->dim; a++)
        if (index[a] >= g->n[a])
            return pf_fail(g->ctx, PF_EINVAL, "index %zu on axis %d is outside 0..%zu", index[a], a + 1,
                           g->n[a] - 1);
    return PF_OK;
}

pf_status pf_grid_sample(const pf_grid *g, pf_rep rep, pf_sample_fn fn, void *user, const double complex *const *divide,
                         double complex *out)
{
    size_t idx[PF_MAX_DIM] = {0, 0, 0};
    double coord[PF_MAX_DIM] = {0, 0, 0};
    for (size_t off = 0; off < g->total; off++) {
        /* Unravel off into a row-major multi-index. */
        size_t rest = off;
        for (int a = g->dim - 1; a >= 0; a--) {
            idx[a] = rest % g->n[a];
            rest /= g->n[a];
            coord[a] = rep == PF_POSITION ? g->x[a][idx[a]] : g->k[a][idx[a]];
        }
        double complex v = 0;
        if (fn(user, coord, &v) != 0) return PF_ECALLBACK;
        if (divide)
            for (int a = 0; a < g->dim; a++) v /= divide[a][idx[a]];
        out[off] = v;
    }
    return PF_OK;
}

pf_status pf_wave_fill(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user)
{
    const pf_grid *g = w->grid;
    if (g->dist) return pf_dist_fill(w, rep, fn, user);
    /* phi(k) values become storage values S = phi / prod c_a (pf_wave.h). */
    pf_status s = pf_grid_sample(g, rep, fn, user, rep == PF_MOMENTUM ? (const double complex *const *)g->kfactor : NULL,
                                 w->store);
    w->deferred.active = 0; /* new data: a deferred flight of the old ones is void */
    w->rep = rep;
    w->norm_now = -1.0;
    return s;
}

pf_status pf_wave_value(pf_wave *w, pf_rep rep, const size_t *index, double complex *out)
{
    pf_status s = check_index(w->grid, index);
    if (s) return s;
    s = pf_wave_to(w, rep);
    if (s) return s;
    /* A distributed wave: the holder of the sample broadcasts it. */
    double complex v = w->grid->dist ? pf_dist_stored_value(w->grid, rep, w->store, index)
                                     : w->store[offset_of(w->grid, index)];
    if (rep == PF_MOMENTUM) v *= pf_wave_momentum_factor(w, index);
    *out = v;
    return PF_OK;
}

pf_status pf_wave_set_value(pf_wave *w, pf_rep rep, const size_t *index, double complex v)
{
    pf_status s = check_index(w->grid, index);
    if (s) return s;
    if (!isfinite(creal(v)) || !isfinite(cimag(v)))
        return pf_fail(w->grid->ctx, PF_EINVAL, "value must be finite, got %g%+gi", creal(v), cimag(v));
    s = pf_wave_to(w, rep);
    if (s) return s;
    if (rep == PF_MOMENTUM) v /= pf_wave_momentum_factor(w, index);
    if (w->grid->dist) pf_dist_store_value(w->grid, rep, w->store, index, v); /* the holder's slab */
    else w->store[offset_of(w->grid, index)] = v;
    pf_guard_forget(w); /* the data changed without a logged step */
    w->norm_now = -1.0;
    return PF_OK;
}

/* |psi|^2 of a whole field in representation rep, written in the ascending
 * axis order of pf_wave_density (momentum densities scaled to |phi|^2).
 * Shared by the single-process density and the gathered distributed one so
 * both give the same bits. */
void pf_grid_density_of(const pf_grid *g, pf_rep rep, const double complex *field, double *out)
{
    if (rep == PF_POSITION) {
        for (size_t i = 0; i < g->total; i++) {
            double complex z = field[i];
            out[i] = creal(z) * creal(z) + cimag(z) * cimag(z);
        }
        return;
    }
    double scale = 1.0; /* |phi|^2 / |S|^2 = prod span^2 / 2 pi */
    for (int a = 0; a < g->dim; a++) scale *= g->span[a] * g->span[a] / PF_TWO_PI;
    size_t n0 = g->n[0], n1 = g->n[1], n2 = g->n[2];
    for (size_t i = 0; i < n0; i++) {
        size_t ai = pf_grid_ascending_index(g, 0, i);
        for (size_t j = 0; j < n1; j++) {
            size_t aj = g->dim > 1 ? pf_grid_ascending_index(g, 1, j) : 0;
            for (size_t k = 0; k < n2; k++) {
                size_t ak = g->dim > 2 ? pf_grid_ascending_index(g, 2, k) : 0;
                double complex z = field[(i * n1 + j) * n2 + k];
                out[(ai * n1 + aj) * n2 + ak] = scale * (creal(z) * creal(z) + cimag(z) * cimag(z));
            }
        }
    }
}

pf_status pf_wave_density(pf_wave *w, pf_rep rep, double *out)
{
    pf_grid *g = w->grid;
    /* Split over MPI ranks: the whole table on every rank, so what needs it
     * (the table itself, samples) runs the single process's code on the
     * single process's bits everywhere; the small measurements run on each
     * rank's planes instead (pf_dist_measure.c). */
    if (g->dist) return pf_dist_shared_density(w, rep, out);
    pf_status s = pf_wave_to(w, rep);
    if (s) return s;
    pf_grid_density_of(g, rep, w->store, out);
    return PF_OK;
}

pf_status pf_wave_scale(pf_wave *w, double complex a)
{
    if (!isfinite(creal(a)) || !isfinite(cimag(a)))
        return pf_fail(w->grid->ctx, PF_EINVAL, "scale factor must be finite, got %g%+gi", creal(a), cimag(a));
    /* A constant factor commutes with a deferred flight: no need to settle. */
    double complex *d = w->store;
    ptrdiff_t n = (ptrdiff_t)pf_dist_local_values(w->grid); /* this rank's slab when distributed */
#pragma omp parallel for num_threads(w->grid->ctx->threads) schedule(static)
    for (ptrdiff_t i = 0; i < n; i++) d[i] *= a;
    if (w->norm_now >= 0) w->norm_now *= creal(a) * creal(a) + cimag(a) * cimag(a);
    return PF_OK;
}

pf_status pf_wave_normalize(pf_wave *w)
{
    double norm = pf_wave_norm(w);
    if (!(norm > 0) || !isfinite(norm))
        return pf_fail(w->grid->ctx, PF_EINVAL, "cannot normalise a state whose norm is %g", norm);
    pf_status s = pf_wave_scale(w, 1.0 / sqrt(norm));
    if (s == PF_OK) w->norm_now = 1.0; /* to rounding; measured norm said so */
    return s;
}

void pf_wave_record(pf_wave *w, const char *kind, const char *method, double duration, double removed)
{
    pf_wave_log_step(w, kind, method, duration, removed, -1.0);
}

const pf_steplog *pf_wave_steplog(const pf_wave *w) { return &w->log; }

double pf_wave_last_logged_norm(pf_wave *w)
{
    if (w->norm_now < 0) w->norm_now = pf_wave_norm(w);
    return w->norm_now;
}

void pf_wave_log_step(pf_wave *w, const char *kind, const char *method, double duration, double removed,
                      double norm)
{
    pf_step st;
    memset(&st, 0, sizeof st);
    strncpy(st.kind, kind, sizeof st.kind - 1);
    if (method) strncpy(st.method, method, sizeof st.method - 1);
    st.duration = duration;
    st.clock = w->clock;
    st.norm = norm >= 0 ? norm : pf_wave_norm(w);
    w->norm_now = st.norm;
    st.removed = removed;
    st.edge_x = -1;
    st.edge_k = -1;
    w->peak_kept.valid = 0; /* a logged step changed the data (evolve keeps its own after this) */
    pf_guard_step(w, &st); /* grid guards: fills edge_x / edge_k, may warn */
    (void)pf_steplog_append(&w->log, &st);
}
