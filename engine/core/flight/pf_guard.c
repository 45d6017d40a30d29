/* pf_guard.c - grid guards: outer-band probabilities, state extents, and the
 * once-per-axis warnings with their remedies (see pf_guard.h). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_advise.h"
#include "pf_constants.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_observe.h"

/* The band sums are split into this many fixed chunks whatever the thread
 * count, and the chunk partials are added in order: same bits on any machine. */
#define GUARD_CHUNKS 64
/* Remedies aim for content inside the inner region with this much room. */
#define GUARD_REMEDY_MARGIN 1.1

pf_status pf_context_set_guard_threshold(pf_context *ctx, double threshold)
{
    if (!(threshold > 0) || isnan(threshold))
        return pf_fail(ctx, PF_EINVAL, "guard threshold must be a positive probability, got %g", threshold);
    ctx->guard_threshold = threshold;
    return PF_OK;
}

double pf_context_guard_threshold(const pf_context *ctx)
{
    return ctx->guard_threshold > 0 ? ctx->guard_threshold : PF_GUARD_DEFAULT_THRESHOLD;
}

size_t pf_guard_band_points(size_t n)
{
    size_t b = n / PF_GUARD_BAND_DIVISOR;
    return b ? b : 1;
}

double pf_guard_inner_fraction(size_t n) { return 1.0 - 2.0 * (double)pf_guard_band_points(n) / (double)n; }

size_t pf_guard_momentum_band_start(size_t n) { return (n + 1) / 2 - pf_guard_band_points(n); }

/* Band layout.  Position: the first b and the last b points of the axis.
 * Momentum (FFT storage order): ascending k starts at storage index
 * ceil(n/2), so the b most negative and b most positive k form the
 * contiguous storage range [ceil(n/2) - b, ceil(n/2) + b). */

/* Sum of |z|^2 over the band of axis a, reading band points only.  Seen as
 * outer x n_a x inner, the band is, for each outer index, one contiguous run
 * (momentum: the ascending-order ends meet in the middle of FFT storage) or
 * two (position: both ends) of b * inner values.  The concatenated runs are
 * cut into GUARD_CHUNKS fixed pieces, summed in parallel and added in piece
 * order, so the figure does not depend on the thread count; inside a piece
 * the loop is over contiguous memory, with one division per run. */
static double band_sum(const pf_wave *w, int a)
{
    const pf_grid *g = w->grid;
    if (g->dist) return pf_dist_band_sum(w, a); /* over MPI ranks, in a fixed block order */
    size_t outer = 1, inner = 1;
    for (int i = 0; i < a; i++) outer *= g->n[i];
    for (int i = a + 1; i < g->dim; i++) inner *= g->n[i];
    const size_t n = g->n[a], b = pf_guard_band_points(n);
    const pf_rep rep = w->rep;
    const size_t per_outer = rep == PF_MOMENTUM ? 1 : 2;
    const size_t run = (rep == PF_MOMENTUM ? 2 * b : b) * inner;
    const size_t total = outer * per_outer * run;
    const double complex *z = w->store;
    double part[GUARD_CHUNKS];
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (int c = 0; c < GUARD_CHUNKS; c++) {
        size_t e = total * (size_t)c / GUARD_CHUNKS, e1 = total * (size_t)(c + 1) / GUARD_CHUNKS;
        double acc = 0;
        while (e < e1) {
            size_t r = e / run, off = e % run;
            size_t o = r / per_outer, which = r % per_outer;
            size_t first = rep == PF_MOMENTUM ? pf_guard_momentum_band_start(n) : (which ? n - b : 0);
            const double complex *seg = z + (o * n + first) * inner + off;
            size_t len = run - off < e1 - e ? run - off : e1 - e;
            for (size_t i = 0; i < len; i++) acc += creal(seg[i]) * creal(seg[i]) + cimag(seg[i]) * cimag(seg[i]);
            e += len;
        }
        part[c] = acc;
    }
    double sum = 0;
    for (int c = 0; c < GUARD_CHUNKS; c++) sum += part[c];
    return sum;
}

/* Probability per unit of sum |stored value|^2 in representation rep. */
static double band_unit(const pf_grid *g, pf_rep rep)
{
    double unit = pf_grid_cell_volume(g);
    if (rep == PF_MOMENTUM) unit *= (double)g->total; /* Parseval for S = DFT/N */
    return unit;
}

/* A state holding less probability than this is empty for the guards: an
 * internal level emptied by a pulse keeps only rounding noise, spread over
 * the whole grid, whose band fraction would raise a false alarm. */
#define GUARD_EMPTY_NORM 1e-20

/* Band probabilities of the current representation, relative to norm. */
static void measure_bands(pf_wave *w, double norm, double *out)
{
    const pf_grid *g = w->grid;
    const double unit = band_unit(g, w->rep);
    for (int a = 0; a < g->dim; a++) out[a] = norm > GUARD_EMPTY_NORM ? band_sum(w, a) * unit / norm : 0.0;
}

/* Marginal probabilities per axis in natural (position) or ascending-k
 * (momentum) order; marg[a] has n[a] entries.  One serial pass: this runs
 * for warnings, the flight chooser and the advisor, never per step. */
static pf_status marginals(const pf_wave *w, double **marg)
{
    const pf_grid *g = w->grid;
    for (int a = 0; a < g->dim; a++) {
        marg[a] = pf_calloc(g->ctx, g->n[a], sizeof(double));
        if (!marg[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, marg[b]);
            return pf_context_status(g->ctx);
        }
    }
    size_t idx[PF_MAX_DIM] = {0, 0, 0};
    if (g->dist) {
        pf_status s = pf_dist_marginals(w, marg);
        if (s) {
            for (int a = 0; a < g->dim; a++) pf_context_free(g->ctx, marg[a]);
            return s;
        }
    }
    for (size_t off = 0; !g->dist && off < g->total; off++) {
        double complex v = w->store[off];
        double rho = creal(v) * creal(v) + cimag(v) * cimag(v);
        for (int a = 0; a < g->dim; a++) marg[a][idx[a]] += rho;
        for (int a = g->dim - 1; a >= 0; a--) {
            if (++idx[a] < g->n[a]) break;
            idx[a] = 0;
        }
    }
    if (w->rep == PF_MOMENTUM) {
        /* Reorder FFT storage order into ascending k. */
        for (int a = 0; a < g->dim; a++) {
            size_t n = g->n[a];
            double *asc = pf_alloc(g->ctx, n * sizeof(double));
            if (!asc) {
                for (int b = 0; b < g->dim; b++) pf_context_free(g->ctx, marg[b]);
                return pf_context_status(g->ctx);
            }
            for (size_t j = 0; j < n; j++) asc[pf_grid_ascending_index(g, a, j)] = marg[a][j];
            pf_context_free(g->ctx, marg[a]);
            marg[a] = asc;
        }
    }
    return PF_OK;
}

/* Coordinate of ascending index i on axis a in the current representation. */
static double coord(const pf_grid *g, pf_rep rep, int a, size_t i)
{
    if (rep == PF_POSITION) return g->x[a][i];
    return g->k[a][pf_grid_fft_index(g, a, i)];
}

static void extent_from_marginals(const pf_grid *g, pf_rep rep, double **marg, double eps, double *lo, double *hi)
{
    for (int a = 0; a < g->dim; a++) {
        size_t n = g->n[a];
        double total = 0;
        for (size_t i = 0; i < n; i++) total += marg[a][i];
        double cut = 0.5 * eps * total, acc = 0;
        size_t i0 = 0, i1 = n - 1;
        for (size_t i = 0; i < n; i++) {
            acc += marg[a][i];
            if (acc > cut) { i0 = i; break; }
        }
        acc = 0;
        for (size_t i = n; i-- > 0;) {
            acc += marg[a][i];
            if (acc > cut) { i1 = i; break; }
        }
        if (i1 < i0) i1 = i0;
        double step = rep == PF_POSITION ? g->dx[a] : PF_TWO_PI / g->span[a];
        lo[a] = coord(g, rep, a, i0) - 0.5 * step;
        hi[a] = coord(g, rep, a, i1) + 0.5 * step;
    }
}

pf_status pf_wave_extent(pf_wave *w, pf_rep rep, double eps, double *lo, double *hi)
{
    pf_grid *g = w->grid;
    if (!(eps >= 0 && eps < 1)) return pf_fail(g->ctx, PF_EINVAL, "extent tail probability must be in [0, 1), got %g", eps);
    pf_status s = pf_wave_to(w, rep);
    if (s) return s;
    double *marg[PF_MAX_DIM] = {NULL, NULL, NULL};
    s = marginals(w, marg);
    if (s) return s;
    extent_from_marginals(g, rep, marg, eps, lo, hi);
    for (int a = 0; a < g->dim; a++) pf_context_free(g->ctx, marg[a]);
    return PF_OK;
}

double pf_flight_extent_tail(const pf_context *ctx) { return fmin(pf_context_guard_threshold(ctx), 1e-2); }

pf_status pf_wave_flight_extents(pf_wave *w, double *x_lo, double *x_hi, double *k_lo, double *k_hi)
{
    double eps = pf_flight_extent_tail(w->grid->ctx);
    pf_rep first = w->rep, second = first == PF_POSITION ? PF_MOMENTUM : PF_POSITION;
    pf_status s = pf_wave_extent(w, first, eps, first == PF_POSITION ? x_lo : k_lo, first == PF_POSITION ? x_hi : k_hi);
    if (!s) s = pf_wave_extent(w, second, eps, second == PF_POSITION ? x_lo : k_lo, second == PF_POSITION ? x_hi : k_hi);
    return s;
}

/* Point count of a remedy that scales the axis by f: a finite count within
 * what a grid may have, so a degenerate extent can never turn into an
 * out-of-range (undefined) conversion to size_t. */
static size_t remedy_points(double f, size_t n)
{
    const double cap = (double)((size_t)1 << 30); /* pf_grid.c's largest axis */
    double want = ceil(f * (double)n);
    if (!(want >= (double)n)) want = (double)n;
    if (want > cap) want = cap;
    return pf_fft_good_size((size_t)want);
}

/* Warns about axis a of the current representation with figures and a
 * remedy computed from the state's extent on that axis. */
static void warn_axis(pf_wave *w, int a, double p, size_t step, const char *kind)
{
    pf_grid *g = w->grid;
    const double thr = pf_context_guard_threshold(g->ctx);
    const size_t n = g->n[a], b = pf_guard_band_points(n);
    const double inner = 1.0 - 2.0 * (double)b / (double)n; /* fraction of the axis inside the bands */
    double *marg[PF_MAX_DIM] = {NULL, NULL, NULL};
    double lo[PF_MAX_DIM] = {0}, hi[PF_MAX_DIM] = {0};
    int have_extent = marginals(w, marg) == PF_OK;
    if (have_extent) {
        extent_from_marginals(g, w->rep, marg, thr, lo, hi);
        for (int i = 0; i < g->dim; i++) pf_context_free(g->ctx, marg[i]);
    }
    char remedy[600];
    if (w->rep == PF_POSITION) {
        double o = g->origin[a], span = g->span[a];
        double need = have_extent ? 2.0 * fmax(fabs(lo[a] - o), fabs(hi[a] - o)) * GUARD_REMEDY_MARGIN / inner : 2 * span;
        double f = fmax(need / span, 1.25);
        int filled = !have_extent || hi[a] - lo[a] >= 0.98 * span;
        int shift_enough = have_extent && (hi[a] - lo[a]) * GUARD_REMEDY_MARGIN / inner <= span;
        size_t n_new = remedy_points(f, n);
        int len = snprintf(remedy, sizeof remedy,
                           "enlarge the span on axis %d by x%.2f%s (%.4g m -> %.4g m, about %zu points at the same spacing)",
                           a + 1, (double)n_new / (double)n,
                           filled ? " or more (the state fills the axis and may already have wrapped around)" : "",
                           span, span * (double)n_new / (double)n, n_new);
        if (shift_enough && len > 0 && (size_t)len < sizeof remedy)
            len += snprintf(remedy + len, sizeof remedy - (size_t)len,
                            "; or move the grid origin on axis %d to %.4g m, where the state is centred", a + 1,
                            0.5 * (lo[a] + hi[a]));
        if (len > 0 && (size_t)len < sizeof remedy)
            snprintf(remedy + len, sizeof remedy - (size_t)len,
                     "; or, if the spread comes from a long flight, use the scaled method (w:fly_long(t))");
        pf_context_warn(g->ctx,
                        "grid guard: %.3g of the probability is in the outer band of position axis %d "
                        "(outermost %zu of %zu points at each end, beyond %.4g m from the origin) after step %zu (%s), "
                        "above the threshold %.3g; the state is reaching the grid edge, where the periodic grid wraps "
                        "it around to the other side. Remedy: %s",
                        p, a + 1, b, n, 0.5 * span * inner, step, kind, thr, remedy);
    } else {
        double knyq = PF_PI / g->dx[a];
        double kmax = have_extent ? fmax(fabs(lo[a]), fabs(hi[a])) : knyq;
        double f = fmax(kmax * GUARD_REMEDY_MARGIN / (inner * knyq), 1.25);
        size_t n_new = remedy_points(f, n);
        pf_context_warn(g->ctx,
                        "grid guard: %.3g of the probability is in the outer band of momentum axis %d "
                        "(outermost %zu of %zu wave numbers at each end, |k| > %.4g 1/m; Nyquist limit pi/dx = %.4g 1/m) "
                        "after step %zu (%s), above the threshold %.3g; momentum content this close to the Nyquist "
                        "limit folds back (aliases) and the grid no longer resolves the state. Remedy: reduce the "
                        "spacing on axis %d by x%.2f%s (%.4g m -> %.4g m: %zu points over the same span)",
                        p, a + 1, b, n, knyq * inner, knyq, step, kind, thr, a + 1, (double)n_new / (double)n,
                        kmax >= 0.98 * knyq ? " or more (content may already have folded back)" : "", g->dx[a],
                        g->span[a] / (double)n_new, n_new);
    }
}

void pf_wave_set_periodic(pf_wave *w, int on) { w->periodic = on != 0; }
int pf_wave_is_periodic(const pf_wave *w) { return w->periodic; }

static void check_and_warn(pf_wave *w, size_t step, const char *kind)
{
    pf_guard_state *gs = &w->guard;
    const int r = w->rep;
    if (r == PF_POSITION && w->periodic) return; /* the cell edge is no edge for a periodic state */
    const double thr = pf_context_guard_threshold(w->grid->ctx);
    for (int a = 0; a < w->grid->dim; a++) {
        unsigned bit = 1u << (r * PF_MAX_DIM + a);
        if (gs->band[r][a] > thr && !(gs->warned & bit)) {
            gs->warned |= bit;
            warn_axis(w, a, gs->band[r][a], step, kind);
        }
    }
}

static double largest(const double *v, int d)
{
    double m = 0;
    for (int a = 0; a < d; a++) m = fmax(m, v[a]);
    return m;
}

void pf_guard_step(pf_wave *w, pf_step *st)
{
    pf_guard_state *gs = &w->guard;
    const int d = w->grid->dim;
    /* A same-grid flight multiplies phi by a phase: |phi| and so the momentum
     * band are unchanged.  Every other step may change both. */
    int keeps_momentum = strcmp(st->kind, "flight") == 0 && strcmp(st->method, "momentum-exact") == 0;
    gs->known &= keeps_momentum ? (1u << PF_MOMENTUM) : 0u;
    gs->pending = 0;
    const int r = w->rep, other = 1 - r;
    if (w->deferred.active) {
        /* A deferred flight (pf_flight.c): no data are current until it is
         * carried out, when the bands still unknown are measured. */
        gs->pending = ((1u << PF_POSITION) | (1u << PF_MOMENTUM)) & ~gs->known;
    } else {
        if (!(gs->known & (1u << r))) {
            measure_bands(w, st->norm, gs->band[r]);
            gs->known |= 1u << r;
            check_and_warn(w, w->log.count + 1, st->kind);
        }
        if (!(gs->known & (1u << other))) gs->pending |= 1u << other;
    }
    double *fx = &st->edge_x, *fk = &st->edge_k;
    if (gs->known & (1u << PF_POSITION)) *fx = largest(gs->band[PF_POSITION], d);
    if (gs->known & (1u << PF_MOMENTUM)) *fk = largest(gs->band[PF_MOMENTUM], d);
}

void pf_guard_after_transform(pf_wave *w)
{
    pf_guard_state *gs = &w->guard;
    const int r = w->rep;
    if (!(gs->pending & (1u << r)) || w->log.count == 0) return;
    gs->pending &= ~(1u << r);
    pf_step *last = &w->log.steps[w->log.count - 1];
    measure_bands(w, last->norm, gs->band[r]);
    gs->known |= 1u << r;
    double m = largest(gs->band[r], w->grid->dim);
    if (r == PF_POSITION) last->edge_x = m; else last->edge_k = m;
    check_and_warn(w, w->log.count, last->kind);
}

int pf_guard_take_momentum_sums(pf_wave *w, const double *sums)
{
    pf_guard_state *gs = &w->guard;
    const unsigned bit = 1u << PF_MOMENTUM;
    if (!(gs->pending & bit) || w->log.count == 0) return 0;
    const pf_grid *g = w->grid;
    pf_step *last = &w->log.steps[w->log.count - 1];
    const double unit = band_unit(g, PF_MOMENTUM);
    const double thr = pf_context_guard_threshold(g->ctx);
    double band[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < g->dim; a++) {
        band[a] = last->norm > GUARD_EMPTY_NORM ? sums[a] * unit / last->norm : 0.0;
        if (band[a] > thr && !(gs->warned & (1u << (PF_MOMENTUM * PF_MAX_DIM + a)))) return 1;
    }
    memcpy(gs->band[PF_MOMENTUM], band, sizeof band);
    gs->known |= bit;
    gs->pending &= ~bit;
    last->edge_k = largest(band, g->dim);
    return 0;
}

int pf_guard_momentum_known(const pf_wave *w)
{
    return (w->guard.known >> PF_MOMENTUM) & 1u;
}

void pf_guard_forget(pf_wave *w)
{
    w->guard.known = 0;
    w->guard.pending = 0;
    w->scaled_from.log_count = 0; /* no longer the state a scaled flight produced */
    w->peak_kept.valid = 0;       /* nor the one an evolve call measured */
}

void pf_guard_rebind(pf_wave *w)
{
    memset(&w->guard, 0, sizeof w->guard);
}

pf_status pf_wave_guard(pf_wave *w, pf_guard_figures *out)
{
    pf_grid *g = w->grid;
    pf_status settled = pf_wave_settle(w);
    if (settled) return settled;
    pf_guard_state *gs = &w->guard;
    const int r = w->rep;
    if (!(gs->known & (1u << r))) {
        /* Measured outside a step: the norm is measured too, since the data
         * may have changed since the last logged norm. */
        double norm = pf_wave_norm(w);
        measure_bands(w, norm, gs->band[r]);
        gs->known |= 1u << r;
        gs->pending &= ~(1u << r);
        check_and_warn(w, w->log.count, w->log.count ? w->log.steps[w->log.count - 1].kind : "no step");
    }
    memset(out, 0, sizeof *out);
    out->dim = g->dim;
    out->threshold = pf_context_guard_threshold(g->ctx);
    out->periodic = w->periodic;
    for (int a = 0; a < g->dim; a++) out->band_points[a] = pf_guard_band_points(g->n[a]);
    for (int rr = 0; rr < 2; rr++) {
        out->known[rr] = (gs->known >> rr) & 1u;
        for (int a = 0; a < g->dim; a++) {
            out->band[rr][a] = gs->band[rr][a];
            out->warned[rr][a] = (gs->warned >> (rr * PF_MAX_DIM + a)) & 1u;
        }
    }
    return PF_OK;
}
