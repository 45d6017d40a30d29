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

static pf_status current_whole(pf_wave *w, void *user, double *out)
{
    return pf_wave_current(w, *(const int *)user, out);
}

pf_status pf_wave_current(pf_wave *w, int axis, double *out)
{
    pf_grid *g = w->grid;
    if (axis < 0 || axis >= g->dim) return pf_fail(g->ctx, PF_EINVAL, "current axis must be 1..%d", g->dim);
    /* Split over MPI ranks: computed on the wave gathered onto rank 0, the
     * whole table broadcast (every rank's out holds g->total values). */
    if (g->dist) return pf_dist_on_whole(w, PF_MOMENTUM, current_whole, &axis, out, g->total);
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

/* Sums a quantity of each transverse line (current: Im(conj(f) g), else
 * |f|^2, with f = sum_m S e_m and g = sum_m S i k_m e_m along the axis),
 * weighted by the line's transverse weight.  Each line is summed by one
 * thread and the lines are added in order, so the result does not depend
 * on threads. */
static double sum_over_lines(const pf_wave *w, const plane_eval *p, double *line_sum, int current)
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
        if (current) {
            for (size_t m = 0; m < p->na; m++) {
                double complex z = base[m * p->inner];
                f += z * p->e[m];
                gsum += z * p->ike[m];
            }
            line_sum[l] = p->line_weight[l] * cimag(conj(f) * gsum);
        } else {
            for (size_t m = 0; m < p->na; m++) f += base[m * p->inner] * p->e[m];
            line_sum[l] = p->line_weight[l] * (creal(f) * creal(f) + cimag(f) * cimag(f));
        }
    }
    double total = 0;
    for (size_t l = 0; l < lines; l++) total += line_sum[l];
    return total;
}

/* J = factor * sum over transverse modes of Im(conj(f) g). */
static double plane_flux(const pf_wave *w, const plane_eval *p, double *line_sum)
{
    return sum_over_lines(w, p, line_sum, 1) * p->factor;
}

/* integral |psi|^2 dA = (transverse spans) * sum over transverse modes of
 * |f|^2 (Parseval across the plane). */
static double plane_density(const pf_wave *w, const plane_eval *p, double *line_sum)
{
    return sum_over_lines(w, p, line_sum, 0) * p->factor * w->mass / PF_HBAR; /* factor holds hbar/m times the spans */
}

/* The flux through a plane and, when density is not NULL, the density
 * integrated over it: one set-up (momentum representation, plane tables)
 * serves both figures. */
/* A plane's axis and position, for the figures of a wave split over MPI
 * ranks (pf_dist_on_whole runs them on rank 0 on the gathered wave). */
typedef struct plane_args {
    int axis;
    double at;
} plane_args;

static pf_status plane_figures_whole(pf_wave *w, void *user, double *out)
{
    const plane_args *a = user;
    return pf_wave_plane_figures(w, a->axis, a->at, &out[0], &out[1]);
}

static pf_status beyond_whole(pf_wave *w, void *user, double *out)
{
    const plane_args *a = user;
    return pf_wave_beyond(w, a->axis, a->at, out);
}

pf_status pf_wave_plane_figures(pf_wave *w, int axis, double at, double *flux, double *density)
{
    pf_grid *g = w->grid;
    pf_status s = check_plane(g, axis, at);
    if (s) return s;
    if (g->dist) {
        plane_args a = {axis, at};
        double out[2] = {0, 0};
        s = pf_dist_on_whole(w, PF_MOMENTUM, plane_figures_whole, &a, out, 2);
        if (!s) {
            *flux = out[0];
            if (density) *density = out[1];
        }
        return s;
    }
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
    if (density) *density = plane_density(w, &p, lines);
    pf_context_free(g->ctx, lines);
    pf_context_free(g->ctx, p.e);
    pf_context_free(g->ctx, p.line_weight);
    return PF_OK;
}

pf_status pf_wave_flux(pf_wave *w, int axis, double at, double *flux)
{
    return pf_wave_plane_figures(w, axis, at, flux, NULL);
}

/* Lines of one block of pf_wave_beyond share one partial sum; the block
 * size is fixed, so the order of additions (and the rounding) does not
 * depend on the thread count. */
#define BEYOND_BLOCK_LINES ((size_t)64)

/* The padded plans of one axis: single-threaded (each block of lines runs
 * on one thread) and FFTW_ESTIMATE whatever the planning mode, so the same
 * grid gives the same bits in every run; they are small 1D transforms. */
static pf_status beyond_plans(pf_grid *g, int axis, size_t len)
{
    pf_context *ctx = g->ctx;
    if (g->beyond[axis].bwd && g->beyond[axis].len == len) return PF_OK;
    size_t bytes = pf_bytes(len, sizeof(double complex));
    double complex *scratch = pf_alloc(ctx, bytes);
    if (!scratch) return pf_context_status(ctx);
    pf_context_prepare_planner(ctx);
    fftw_plan_with_nthreads(1);
    fftw_plan bwd = fftw_plan_dft_1d((int)len, scratch, scratch, FFTW_BACKWARD, FFTW_ESTIMATE);
    fftw_plan fwd = fftw_plan_dft_1d((int)len, scratch, scratch, FFTW_FORWARD, FFTW_ESTIMATE);
    fftw_plan_with_nthreads(ctx->threads);
    pf_free(ctx, scratch, bytes);
    if (!bwd || !fwd) {
        if (bwd) fftw_destroy_plan(bwd);
        if (fwd) fftw_destroy_plan(fwd);
        return pf_fail(ctx, PF_EFFT, "FFTW could not plan the %zu-point transform of a plane probability", len);
    }
    g->beyond[axis].bwd = bwd;
    g->beyond[axis].fwd = fwd;
    g->beyond[axis].len = len;
    fftw_plan pair[2] = {bwd, fwd};
    return pf_context_note_plans(ctx, "beyond", g, pair, 2);
}

/* Where each mode m of the axis sits in a padded transform of M points:
 * its integer mode number k_m / dk, modulo M. */
static void padded_slots(const pf_grid *g, int axis, size_t M, size_t *slot)
{
    double kstep = pf_grid_kspacing(g, axis);
    for (size_t m = 0; m < g->n[axis]; m++) {
        long mode = lround(g->k[axis][m] / kstep);
        slot[m] = (size_t)((mode % (long)M + (long)M) % (long)M);
    }
}

/* The integral from `at` to the window's end of the trigonometric
 * polynomial sum_D C[D] / M exp(i q_D (x - x0)), D = -(L-1)..(L-1), q_D =
 * 2 pi D / span, with C the M-point forward transform (M C[D] at index D mod
 * M):  sum_D C[D] integral_at^b exp(i q_D (x - x0)) dx, b = x0 + span - dx/2,
 * so exp(i q_D (b - x0)) = exp(-i q_D dx / 2).  Not yet times the
 * transverse area. */
static double complex integral_beyond(const pf_grid *g, int axis, double at, const double complex *C, size_t M,
                                      size_t L)
{
    size_t na = g->n[axis];
    double x0 = g->x[axis][0], dx = g->dx[axis], span = g->span[axis];
    double b = x0 + span - 0.5 * dx, u = (at - x0) / span;
    double complex sum = C[0] / (double)M * (b - at);
    for (long D = -(long)(L - 1); D <= (long)(L - 1); D++) {
        if (D == 0) continue;
        double complex c = C[(size_t)((D + (long)M) % (long)M)] / (double)M;
        double q = PF_TWO_PI * (double)D / span;
        double complex eb = cexp(-I * PF_PI * (double)D / (double)na);
        double complex ea = cexp(I * PF_TWO_PI * fmod((double)D * u, 1.0));
        sum += c * (eb - ea) / (I * q);
    }
    return sum;
}

pf_status pf_wave_beyond(pf_wave *w, int axis, double at, double *probability)
{
    pf_grid *g = w->grid;
    pf_status s = check_plane(g, axis, at);
    if (s) return s;
    if (g->dist) {
        plane_args a = {axis, at};
        return pf_dist_on_whole(w, PF_MOMENTUM, beyond_whole, &a, probability, 1);
    }
    size_t na = g->n[axis];
    /* |psi|^2 of the interpolant along the axis is a trigonometric
     * polynomial with integer modes D = -(L-1)..(L-1), L = na (+1 on an even
     * axis, whose Nyquist amplitude is split between -na/2 and +na/2).  Its
     * coefficients C[D] = sum conj(a_m) a_{m+D} are the autocorrelation of
     * the amplitudes: sampled on M >= 2L - 1 points the interpolant (a
     * zero-padded inverse FFT) squared and transformed forward gives M C[D]
     * without aliasing.  The transverse integral is a weighted sum over
     * transverse modes (Parseval), and summing the squared samples over the
     * lines first leaves one forward transform: cost O(N log N) in all. */
    int even = na % 2 == 0;
    size_t L = na + (even ? 1 : 0);
    size_t M = 2 * L;
    s = beyond_plans(g, axis, M);
    if (s) return s;
    s = pf_wave_to(w, PF_MOMENTUM);
    if (s) return s;
    size_t inner = 1, outer = 1;
    for (int a = 0; a < axis; a++) outer *= g->n[a];
    for (int a = axis + 1; a < g->dim; a++) inner *= g->n[a];
    size_t lines = outer * inner;
    size_t blocks = (lines + BEYOND_BLOCK_LINES - 1) / BEYOND_BLOCK_LINES;
    /* Per block: a padded line buffer (M complex) and a partial sum of the
     * squared samples (M doubles); plus the padded position of each mode. */
    size_t per = M * (sizeof(double complex) + sizeof(double));
    size_t bytes = pf_bytes(blocks, per);
    /* An overflowing size is 0, which pf_alloc refuses as PF_ELIMIT. */
    if (bytes) bytes = bytes + na * sizeof(size_t) > bytes ? bytes + na * sizeof(size_t) : 0;
    unsigned char *mem = pf_alloc(g->ctx, bytes);
    if (!mem) return pf_context_status(g->ctx);
    double *tw = transverse_weights(g, axis);
    if (!tw) {
        pf_context_free(g->ctx, mem);
        return pf_context_status(g->ctx);
    }
    double complex *bufs = (double complex *)mem;            /* blocks x M, FFTW-aligned */
    double *part = (double *)(mem + blocks * M * sizeof(double complex));
    size_t *slot = (size_t *)(mem + blocks * per);
    size_t nyq = even ? na / 2 : (size_t)-1;
    padded_slots(g, axis, M, slot);
    const double complex *S = w->store;
    fftw_plan bwd = g->beyond[axis].bwd, fwd = g->beyond[axis].fwd;
    ptrdiff_t nb = (ptrdiff_t)blocks;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t blk = 0; blk < nb; blk++) {
        double complex *buf = bufs + (size_t)blk * M;
        double *acc = part + (size_t)blk * M;
        for (size_t j = 0; j < M; j++) acc[j] = 0;
        size_t l0 = (size_t)blk * BEYOND_BLOCK_LINES, l1 = l0 + BEYOND_BLOCK_LINES;
        if (l1 > lines) l1 = lines;
        for (size_t l = l0; l < l1; l++) {
            size_t o = l / inner, i = l % inner;
            const double complex *base = S + o * na * inner + i;
            for (size_t j = 0; j < M; j++) buf[j] = 0;
            for (size_t m = 0; m < na; m++) buf[slot[m]] = base[m * inner];
            if (even) {
                /* The split partner of mode +-na/2 sits at the opposite slot. */
                double complex half = 0.5 * base[nyq * inner];
                buf[slot[nyq]] = half;
                buf[M - slot[nyq]] = half;
            }
            fftw_execute_dft(bwd, buf, buf);
            double lw = tw[l];
            for (size_t j = 0; j < M; j++) acc[j] += lw * (creal(buf[j]) * creal(buf[j]) + cimag(buf[j]) * cimag(buf[j]));
        }
    }
    /* Partials in block order, then one forward transform: buf = M C[D]. */
    double complex *C = bufs;
    for (size_t j = 0; j < M; j++) {
        double t = 0;
        for (size_t b = 0; b < blocks; b++) t += part[b * M + j];
        C[j] = t;
    }
    fftw_execute_dft(fwd, C, C);
    double complex sum = integral_beyond(g, axis, at, C, M, L);
    pf_context_free(g->ctx, mem);
    pf_context_free(g->ctx, tw);
    /* |psi|^2 transverse integral: prod spans; storage S needs no other factor. */
    double area = 1;
    for (int ax = 0; ax < g->dim; ax++)
        if (ax != axis) area *= g->span[ax];
    *probability = creal(sum) * area;
    return PF_OK;
}

pf_status pf_arrival_window_check(pf_context *ctx, const pf_arrival_window *window)
{
    if (!isfinite(window->start) || !isfinite(window->dt) || !(window->dt > 0))
        return pf_fail(ctx, PF_EINVAL, "arrival window needs a finite start and a positive step, got %g and %g",
                       window->start, window->dt);
    if (window->count < 1) return pf_fail(ctx, PF_EINVAL, "arrival window needs at least one time");
    return PF_OK;
}

static pf_status arrival_whole(pf_wave *w, void *user, double *out)
{
    return pf_wave_arrival(w, user, out);
}

pf_status pf_wave_arrival(pf_wave *w, const pf_arrival_window *window, double *flux)
{
    pf_grid *g = w->grid;
    const int axis = window->axis;
    const double start = window->start, dt = window->dt;
    const size_t count = window->count;
    pf_status s = check_plane(g, axis, window->at);
    if (s) return s;
    s = pf_arrival_window_check(g->ctx, window);
    if (s) return s;
    if (g->dist) {
        /* Split over MPI ranks: the copy flies on rank 0, from the wave
         * gathered there (two whole waves on rank 0 meanwhile). */
        return pf_dist_on_whole(w, PF_MOMENTUM, arrival_whole, (void *)window, flux, count);
    }
    pf_wave *c;
    s = pf_wave_copy(w, &c);
    if (s) return s;
    plane_eval p = {0};
    s = plane_init(c, axis, window->at, &p);
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
