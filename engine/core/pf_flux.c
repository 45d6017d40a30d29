/* pf_flux.c - current, plane flux, probability beyond a plane and
 * arrival-time series from the momentum-space storage. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_flux.h"
#include "pf_internal.h"

static pf_status check_plane(pf_grid *g, int axis, double at)
{
    if (axis < 0 || axis >= g->dim)
        return pf_fail(g->ctx, PF_EINVAL, "plane axis must be 1..%d, got %d", g->dim, axis + 1);
    double lo = g->x[axis][0] - 0.5 * g->dx[axis], hi = lo + g->span[axis];
    if (!isfinite(at) || at < lo || at > hi)
        return pf_fail(g->ctx, PF_EINVAL, "plane position %g m lies outside the grid [%g, %g] m on axis %d", at, lo, hi,
                       axis + 1);
    return PF_OK;
}

pf_status pf_wave_current(pf_wave *w, int axis, double *out)
{
    pf_grid *g = w->grid;
    if (axis < 0 || axis >= g->dim) return pf_fail(g->ctx, PF_EINVAL, "current axis must be 1..%d", g->dim);
    size_t bytes = g->total * sizeof(double complex);
    double complex *d = pf_alloc(g->ctx, bytes);
    if (!d) return pf_context_status(g->ctx);
    pf_status s = pf_wave_to(w, PF_MOMENTUM);
    if (s) {
        pf_free(g->ctx, d, bytes);
        return s;
    }
    /* d = i k_axis S, then back to position: d psi / dx_axis. */
    size_t inner = 1;
    for (int a = axis + 1; a < g->dim; a++) inner *= g->n[a];
    size_t na = g->n[axis];
    /* The Nyquist mode of an even axis is split evenly between +k and -k
     * (see pf_flux.h), so its first derivative vanishes on the grid. */
    size_t nyq = na % 2 == 0 ? na / 2 : (size_t)-1;
    for (size_t off = 0; off < g->total; off++) {
        size_t m = (off / inner) % na;
        d[off] = m == nyq ? 0 : I * g->k[axis][m] * w->store[off];
    }
    s = pf_grid_fft(g, d, +1);
    if (s == PF_OK) s = pf_wave_to(w, PF_POSITION);
    if (s == PF_OK) {
        double c = PF_HBAR / w->mass;
        for (size_t i = 0; i < g->total; i++) out[i] = c * cimag(conj(w->store[i]) * d[i]);
    }
    pf_free(g->ctx, d, bytes);
    return s;
}

/* Plane evaluation state: per-axis exponentials e_m = exp(i k_m (at - x0))
 * and the per-transverse-line partial sums. */
typedef struct plane_eval {
    int axis;
    size_t na, inner, outer;    /* data index = (o * na + m) * inner + i */
    double complex *e, *ike;    /* e_m and i k_m e_m */
    double *line_weight;        /* Parseval weight of each transverse mode */
    double factor;              /* (hbar / m) * transverse spans */
} plane_eval;

/* Weight of a transverse mode in the transverse Parseval sum: 1, or 1/2
 * for each even transverse axis on which it is the (split) Nyquist mode. */
static double *transverse_weights(const pf_grid *g, int axis)
{
    size_t lines = g->total / g->n[axis];
    double *w = pf_alloc(g->ctx, lines * sizeof *w);
    if (!w) return NULL;
    for (size_t l = 0; l < lines; l++) {
        size_t rest = l;
        double f = 1;
        for (int a = g->dim - 1; a >= 0; a--) {
            if (a == axis) continue;
            size_t j = rest % g->n[a];
            rest /= g->n[a];
            if (g->n[a] % 2 == 0 && j == g->n[a] / 2) f *= 0.5;
        }
        w[l] = f;
    }
    return w;
}

static pf_status plane_init(pf_wave *w, int axis, double at, plane_eval *p)
{
    pf_grid *g = w->grid;
    p->axis = axis;
    p->na = g->n[axis];
    p->inner = 1;
    p->outer = 1;
    for (int a = 0; a < axis; a++) p->outer *= g->n[a];
    for (int a = axis + 1; a < g->dim; a++) p->inner *= g->n[a];
    p->e = pf_alloc(g->ctx, 2 * p->na * sizeof(double complex));
    p->line_weight = transverse_weights(g, axis);
    if (!p->e || !p->line_weight) {
        pf_context_free(g->ctx, p->e);
        pf_context_free(g->ctx, p->line_weight);
        p->e = NULL;
        p->line_weight = NULL;
        return pf_context_status(g->ctx);
    }
    p->ike = p->e + p->na;
    double u = (at - g->x[axis][0]) / g->span[axis]; /* plane position in periods */
    for (size_t m = 0; m < p->na; m++) {
        double mode = nearbyint(g->k[axis][m] / pf_grid_kspacing(g, axis));
        /* Reduce the phase exactly on the integer lattice before cexp. */
        double turns = fmod(mode * u, 1.0);
        if (p->na % 2 == 0 && m == p->na / 2) {
            /* Nyquist, split between +-k_N: S cos(theta), derivative -k_N S sin(theta). */
            double kn = fabs(g->k[axis][m]);
            double th = PF_TWO_PI * fmod(fabs(mode) * u, 1.0);
            p->e[m] = cos(th);
            p->ike[m] = -kn * sin(th);
            continue;
        }
        p->e[m] = cexp(I * PF_TWO_PI * turns);
        p->ike[m] = I * g->k[axis][m] * p->e[m];
    }
    double f = PF_HBAR / w->mass;
    for (int a = 0; a < g->dim; a++)
        if (a != axis) f *= g->span[a];
    p->factor = f;
    return PF_OK;
}

/* J = factor * sum over transverse modes of Im(conj(f) g), f = sum_m S e_m,
 * g = sum_m S i k_m e_m.  Each transverse line is summed by one thread and
 * the lines are added in order, so the result does not depend on threads. */
static double plane_flux(const pf_wave *w, const plane_eval *p, double *line_sum)
{
    /* w is in momentum representation (callers transform it), so no flight
     * is deferred (those exist only in position representation). */
    const double complex *S = w->store;
    const size_t lines = p->outer * p->inner;
    ptrdiff_t nl = (ptrdiff_t)lines;
#pragma omp parallel for num_threads(w->grid->ctx->threads) schedule(static)
    for (ptrdiff_t l = 0; l < nl; l++) {
        size_t o = (size_t)l / p->inner, i = (size_t)l % p->inner;
        const double complex *base = S + o * p->na * p->inner + i;
        double complex f = 0, gsum = 0;
        for (size_t m = 0; m < p->na; m++) {
            double complex z = base[m * p->inner];
            f += z * p->e[m];
            gsum += z * p->ike[m];
        }
        line_sum[l] = p->line_weight[l] * cimag(conj(f) * gsum);
    }
    double total = 0;
    for (size_t l = 0; l < lines; l++) total += line_sum[l];
    return total * p->factor;
}

pf_status pf_wave_flux(pf_wave *w, int axis, double at, double *flux)
{
    pf_grid *g = w->grid;
    pf_status s = check_plane(g, axis, at);
    if (s) return s;
    s = pf_wave_to(w, PF_MOMENTUM);
    if (s) return s;
    plane_eval p;
    s = plane_init(w, axis, at, &p);
    if (s) return s;
    double *lines = pf_alloc(g->ctx, p.outer * p.inner * sizeof(double));
    if (!lines) {
        pf_context_free(g->ctx, p.e);
        pf_context_free(g->ctx, p.line_weight);
        return pf_context_status(g->ctx);
    }
    *flux = plane_flux(w, &p, lines);
    pf_context_free(g->ctx, lines);
    pf_context_free(g->ctx, p.e);
    pf_context_free(g->ctx, p.line_weight);
    return PF_OK;
}

pf_status pf_wave_beyond(pf_wave *w, int axis, double at, double *probability)
{
    pf_grid *g = w->grid;
    pf_status s = check_plane(g, axis, at);
    if (s) return s;
    size_t na = g->n[axis];
    double cost = (double)na * (double)na * (double)(g->total / na);
    if (cost > 2e10)
        return pf_fail(g->ctx, PF_ELIMIT, "probability beyond a plane on this grid needs %.3g operations; use a region "
                       "probability (half-space) instead", cost);
    s = pf_wave_to(w, PF_MOMENTUM);
    if (s) return s;
    size_t inner = 1, outer = 1;
    for (int a = 0; a < axis; a++) outer *= g->n[a];
    for (int a = axis + 1; a < g->dim; a++) inner *= g->n[a];
    /* C[D] = sum over transverse modes and m of conj(a_m) a_{m+D}, with the
     * modes in ascending (integer) order; an even axis has L = na + 1 modes,
     * the Nyquist amplitude halved at -na/2 and +na/2.  D = -(L-1)..(L-1)
     * is stored at D + L - 1. */
    int even = na % 2 == 0;
    size_t L = na + (even ? 1 : 0);
    size_t nc = 2 * L - 1;
    double complex *C = pf_calloc(g->ctx, nc + L, sizeof(double complex));
    if (!C) return pf_context_status(g->ctx);
    double complex *a = C + nc;
    double *tw = transverse_weights(g, axis);
    if (!tw) {
        pf_context_free(g->ctx, C);
        return pf_context_status(g->ctx);
    }
    for (size_t o = 0; o < outer; o++) {
        for (size_t i = 0; i < inner; i++) {
            double lw = tw[o * inner + i];
            for (size_t m = 0; m < na; m++) a[pf_grid_ascending_index(g, axis, m)] = w->store[(o * na + m) * inner + i];
            if (even) {
                a[0] *= 0.5;
                a[na] = a[0];
            }
            for (size_t m = 0; m < L; m++) {
                double complex cm = conj(a[m]);
                if (cm == 0) continue;
                for (size_t m2 = 0; m2 < L; m2++) C[m2 + L - 1 - m] += lw * cm * a[m2];
            }
        }
    }
    /* P = A_perp sum_D C[D] integral_at^b exp(i q_D (x - x0)) dx,
     * b = x0 + span - dx/2, so exp(i q_D (b - x0)) = exp(-i q_D dx / 2). */
    double x0 = g->x[axis][0], dx = g->dx[axis], span = g->span[axis];
    double b = x0 + span - 0.5 * dx, u = (at - x0) / span;
    double complex sum = C[L - 1] * (b - at);
    for (size_t j = 0; j < nc; j++) {
        double D = (double)j - (double)(L - 1);
        if (D == 0) continue;
        double q = PF_TWO_PI * D / span;
        double complex eb = cexp(-I * PF_PI * D / (double)na);
        double complex ea = cexp(I * PF_TWO_PI * fmod(D * u, 1.0));
        sum += C[j] * (eb - ea) / (I * q);
    }
    pf_context_free(g->ctx, C);
    pf_context_free(g->ctx, tw);
    /* |psi|^2 transverse integral: prod spans; storage S needs no other factor. */
    double area = 1;
    for (int ax = 0; ax < g->dim; ax++)
        if (ax != axis) area *= g->span[ax];
    *probability = creal(sum) * area;
    return PF_OK;
}

pf_status pf_wave_arrival(pf_wave *w, int axis, double at, double start, double dt, size_t count, double *flux)
{
    pf_grid *g = w->grid;
    pf_status s = check_plane(g, axis, at);
    if (s) return s;
    if (!isfinite(start) || !isfinite(dt) || !(dt > 0))
        return pf_fail(g->ctx, PF_EINVAL, "arrival window needs a finite start and a positive step, got %g and %g", start,
                       dt);
    if (count < 1) return pf_fail(g->ctx, PF_EINVAL, "arrival window needs at least one time");
    pf_wave *c;
    s = pf_wave_copy(w, &c);
    if (s) return s;
    plane_eval p = {0};
    s = plane_init(c, axis, at, &p);
    double *lines = s ? NULL : pf_alloc(g->ctx, p.outer * p.inner * sizeof(double));
    if (!s && !lines) s = pf_context_status(g->ctx);
    if (!s && start != 0) s = pf_wave_fly(c, start);
    if (!s) s = pf_wave_to(c, PF_MOMENTUM);
    for (size_t k = 0; !s && k < count; k++) {
        if (k) s = pf_wave_fly(c, dt);
        if (!s) flux[k] = plane_flux(c, &p, lines);
    }
    pf_context_free(g->ctx, lines);
    pf_context_free(g->ctx, p.e);
    pf_context_free(g->ctx, p.line_weight);
    pf_wave_free(c);
    return s;
}
