/* pf_longflight.c - scaled-grid free flight (single-FFT Fresnel form and its
 * two-stage variant) and the flight that chooses between it and the exact
 * same-grid flight from the sampling criteria (see pf_longflight.h). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_cis.h"
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_flight.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_longflight.h"

const char *pf_flight_method_name(pf_flight_method m)
{
    switch (m) {
    case PF_FLIGHT_SAME_GRID: return "same-grid";
    case PF_FLIGHT_SCALED: return "scaled";
    default: return "auto";
    }
}

/* The kernels see every grid as n[0] x n[1] x n[2] with the real axes last
 * (a 1D grid is 1 x 1 x N), so the innermost loop is always the longest
 * contiguous run.  lead = 3 - dim is the offset from grid axis to slot. */
typedef struct shape3 {
    size_t n[3];
    int lead;
} shape3;

static shape3 shape_of(const pf_grid *g)
{
    shape3 s = {{1, 1, 1}, 3 - g->dim};
    for (int a = 0; a < g->dim; a++) s.n[s.lead + a] = g->n[a];
    return s;
}

static const double complex ONE = 1.0;

/* Per-axis table pointers in slot order (absent axes get the table {1}). */
static void slot_tables(const shape3 *s, double complex *const *axis_tab, const double complex **slot)
{
    for (int i = 0; i < 3; i++) slot[i] = i < s->lead ? &ONE : axis_tab[i - s->lead];
}

/* Phase 2 pi q / n of an integer multiple q, reduced exactly first. */
static double turn_phase(size_t q, size_t n) { return PF_TWO_PI * (double)(q % n) / (double)n; }

/* Builds the input and output chirp tables of one axis for a stage of
 * duration ta (see the derivation in docs/long-flights.md):
 *   psi(xi_l) = A sum_j pre_j psi_j exp(-+2 pi i j l / N) post_l,
 * with eta = (j - h) dx, xi = (l - h) D, h = floor(N/2), delta the shift of
 * the output origin from the input origin, beta = m / hbar ta, s = sign ta:
 *   pre_j  = exp(i beta (eta^2 / 2 - delta eta) + i s 2 pi h j / N),
 *   post_l = A exp(i beta (delta + xi)^2 / 2 + i s 2 pi h l / N - i s 2 pi h^2 / N),
 *   A = sqrt(m / 2 pi hbar |ta|) dx exp(-i s pi / 4). */
void pf_scaled_chirp_tables(double mass, double ta, size_t n, double dx, double D, double delta, double complex *pre,
                         double complex *post)
{
    const double beta = mass / (PF_HBAR * ta);
    const double s = ta > 0 ? 1.0 : -1.0;
    const size_t h = n / 2;
    const double complex amp =
        sqrt(mass / (PF_TWO_PI * PF_HBAR * fabs(ta))) * dx * cexp(-I * (s * PF_PI / 4 + s * turn_phase(h * h, n)));
    for (size_t j = 0; j < n; j++) {
        double eta = ((double)j - (double)h) * dx;
        pre[j] = cexp(I * (beta * (0.5 * eta * eta - delta * eta) + s * turn_phase(h * j, n)));
        double X = delta + ((double)j - (double)h) * D;
        post[j] = amp * cexp(I * (0.5 * beta * X * X + s * turn_phase(h * j, n)));
    }
}

/* Points per piece of the 1D chirp pass (the unit shared out among the
 * threads): whole segments of PF_PHASE_SEG points. */
#define CHIRP_PIECE 512
#define CHIRP_SEGS (CHIRP_PIECE / PF_PHASE_SEG)

/* The 1D stage's chirp applied in place, evaluated point by point (the same
 * phase as chirp_tables; post: the output chirp times the amplitude).  A
 * table of N points made for each call cost more than the FFT at N = 2^22;
 * an exponential per point still cost about as many instructions as the FFT.
 * The phase is quadratic in the index, so on a segment of PF_PHASE_SEG
 * points starting at j0
 *   phi(j0 + t) = phi(j0) + r t + c t^2,
 * with r = beta X(j0) D (output) or beta dx (eta(j0) - delta) (input), plus
 * the turn per index, and c = beta D^2 / 2 or beta dx^2 / 2: each point is
 * a start factor times a ratio to the power t times a 32-entry chirp, the
 * flight's segment kernel (pf_flight.c), and only two exponentials per
 * segment are evaluated (pf_cis.h).  The start phase is formed from the
 * index directly, as for a single point, so no error accumulates along the
 * grid; along a segment the powers add a few ulp (the ratio's phase is at
 * most about pi for a sampled chirp).  n must be below 2^32 (the integer
 * turn h j mod n is formed in 64 bits). */
void pf_scaled_chirp_1d(double complex *data, size_t n, double mass, double ta, double dx, double D, double delta,
                        int post, int threads)
{
    const double beta = mass / (PF_HBAR * ta);
    const double s = ta > 0 ? 1.0 : -1.0;
    const size_t h = n / 2;
    const double complex amp =
        post ? sqrt(mass / (PF_TWO_PI * PF_HBAR * fabs(ta))) * dx * cexp(-I * (s * PF_PI / 4 + s * turn_phase(h * h, n)))
             : 1.0;
    const double turn = s * PF_TWO_PI / (double)n;
    const double step = post ? D : dx; /* the spacing the phase is quadratic in */
    const double curv = 0.5 * beta * step * step;
    double complex chirp[PF_PHASE_SEG];
    for (size_t t = 0; t < PF_PHASE_SEG; t++) chirp[t] = cexp(I * (curv * (double)(t * t)));
    /* The turn h j mod n per index: h (reduced) when n is odd; for even n
     * it is pi on odd j, so the ratio's turn is exactly s pi and whole
     * segments start on even j with no turn. */
    const double turn_step = turn * (double)h;
    const pf_phase_segment_fn segment = pf_phase_segment_kernel();
    const size_t whole = n / PF_PHASE_SEG; /* segments; a short tail is done point by point */
    const ptrdiff_t pieces = (ptrdiff_t)((n + CHIRP_PIECE - 1) / CHIRP_PIECE);
#pragma omp parallel for num_threads(threads) schedule(static)
    for (ptrdiff_t b = 0; b < pieces; b++) {
        double phase[2 * CHIRP_SEGS > CHIRP_PIECE ? 2 * CHIRP_SEGS : CHIRP_PIECE];
        double complex factor[2 * CHIRP_SEGS];
        const size_t j0 = (size_t)b * CHIRP_PIECE, m = n - j0 < CHIRP_PIECE ? n - j0 : CHIRP_PIECE;
        const size_t q0 = j0 / PF_PHASE_SEG, segs = (q0 + CHIRP_SEGS <= whole ? CHIRP_SEGS : whole - q0);
        /* Start and ratio phases of the piece's whole segments, then their
         * exponentials at once (pf_cis_minus takes exp(-i phase)). */
        for (size_t k = 0; k < segs; k++) {
            size_t j = j0 + k * PF_PHASE_SEG;
            double u = (double)j - (double)h, start, rate;
            if (post) {
                double X = delta + u * D;
                start = 0.5 * beta * X * X;
                rate = beta * X * D;
            } else {
                double eta = u * dx;
                start = beta * (0.5 * eta * eta - delta * eta);
                rate = beta * dx * (eta - delta);
            }
            if (n % 2 == 0) {
                rate += s * PF_PI;
            } else {
                start += turn * (double)((h % n) * (j % n) % n);
                rate += turn_step;
            }
            phase[2 * k] = -start;
            phase[2 * k + 1] = -rate;
        }
        pf_cis_minus(phase, factor, 2 * segs);
        for (size_t k = 0; k < segs; k++)
            segment(data + j0 + k * PF_PHASE_SEG, chirp, amp * factor[2 * k], factor[2 * k + 1]);
        /* The short tail (n not a multiple of the segment): one exponential
         * per point. */
        const size_t done = segs * PF_PHASE_SEG;
        if (done < m) {
            for (size_t i = done; i < m; i++) {
                size_t j = j0 + i;
                double u = (double)j - (double)h;
                double X = delta + u * D, eta = u * dx;
                double ph = post ? 0.5 * beta * X * X : beta * (0.5 * eta * eta - delta * eta);
                phase[i - done] = -(ph + turn * (double)((h % n) * (j % n) % n));
            }
            double complex *tail = data + j0 + done;
            pf_cis_multiply(tail, phase, m - done);
            if (post)
                for (size_t i = 0; i < m - done; i++) tail[i] *= amp;
        }
    }
}

/* data *= T0[i0] T1[i1] T2[i2] in place.  The row factor r is formed once
 * per row, and the row goes through the vectorised phase kernel
 * (pf_flight.c: row[i2] *= r T2[i2], the same bits on every vector path):
 * the scalar loop it replaced took about three times the instructions.
 * Each point is independent, so the bits do not depend on the threads. */
static void chirp_pass(double complex *data, const shape3 *s, const double complex *const *T, int threads)
{
    const size_t n1 = s->n[1], n2 = s->n[2];
    const double *t2 = (const double *)T[2];
    const pf_phase_row_fn row_kernel = pf_phase_kernel();
#pragma omp parallel for collapse(2) num_threads(threads) schedule(static)
    for (ptrdiff_t i0 = 0; i0 < (ptrdiff_t)s->n[0]; i0++) {
        for (ptrdiff_t i1 = 0; i1 < (ptrdiff_t)n1; i1++) {
            const double complex r = T[0][i0] * T[1][i1];
            double *row = (double *)(data + ((size_t)i0 * n1 + (size_t)i1) * n2);
            row_kernel(row, t2, creal(r), cimag(r), n2);
        }
    }
}

/* Probability (relative to norm) of the input points that fall outside the
 * output index box when the input is cropped; one serial pass, only run when
 * some axis shrinks. */
static double cropped_probability(const pf_wave *w, const long *shift, const size_t *nout, double norm)
{
    const pf_grid *g = w->grid;
    size_t idx[PF_MAX_DIM] = {0, 0, 0};
    double lost = 0;
    for (size_t off = 0; off < g->total; off++) {
        int outside = 0;
        for (int a = 0; a < g->dim; a++) {
            long o = (long)idx[a] + shift[a];
            if (o < 0 || o >= (long)nout[a]) outside = 1;
        }
        if (outside) lost += creal(w->store[off]) * creal(w->store[off]) + cimag(w->store[off]) * cimag(w->store[off]);
        for (int a = g->dim - 1; a >= 0; a--) {
            if (++idx[a] < g->n[a]) break;
            idx[a] = 0;
        }
    }
    return norm > 0 ? lost * pf_grid_cell_volume(g) / norm : 0;
}

typedef struct crop_job {
    const pf_wave *w;
    const long *shift;
    const size_t *nout;
} crop_job;

/* One block of a split wave's cropped probability: local offsets, the
 * global multi-index of begin (position layout) carried along. */
static void crop_block(void *user, size_t begin, size_t end, const size_t *start, double *acc)
{
    const crop_job *job = user;
    const pf_grid *g = job->w->grid;
    const double complex *z = job->w->store;
    size_t idx[PF_MAX_DIM] = {start[0], start[1], start[2]};
    for (size_t off = begin; off < end; off++) {
        int outside = 0;
        for (int a = 0; a < g->dim; a++) {
            long o = (long)idx[a] + job->shift[a];
            if (o < 0 || o >= (long)job->nout[a]) outside = 1;
        }
        if (outside) acc[0] += creal(z[off]) * creal(z[off]) + cimag(z[off]) * cimag(z[off]);
        for (int a = g->dim - 1; a >= 0; a--) {
            if (++idx[a] < g->n[a]) break;
            idx[a] = 0;
        }
    }
}

/* cropped_probability of a wave split over MPI ranks: fixed blocks in
 * global order over the ranks (pf_dist_reduce), the same bits on every
 * rank and at every rank count. */
static double split_cropped_probability(pf_wave *w, const long *shift, const size_t *nout, double norm)
{
    crop_job job = {w, shift, nout};
    double lost = 0;
    pf_dist_reduce(w->grid, PF_POSITION, 1, crop_block, &job, &lost);
    return norm > 0 ? lost * pf_grid_cell_volume(w->grid) / norm : 0;
}

/* Progress of a long flight inside its method: each scaled stage is three
 * passes (input chirp, FFT, output chirp), each reported to the context as
 * the fraction done of the whole call under the caller's task name
 * ("fly_long"); no task: silent (pf_wave_fly_onto from other callers). */
typedef struct pass_progress {
    const char *task;
    int done, total;
} pass_progress;

static void pass_done(pf_context *ctx, pass_progress *pp)
{
    if (!pp || !pp->task) return;
    pp->done++;
    /* Never 1 before the call returns: the caller reports the end. */
    pf_context_progress(ctx, pp->task, (double)pp->done / (double)(pp->total + 1), 1);
}

/* Index shift per axis from the input to the output grid (the centres
 * meet); *removed receives the probability that cropping to fewer output
 * points removes, with a warning above the guard threshold.  Returns whether
 * some axis grows (padded) in *padded, shrinks in *cropped. */
static void stage_layout(pf_wave *w, const pf_grid *gout, double norm, long *shift, int *padded, int *cropped,
                         double *removed)
{
    const pf_grid *gin = w->grid;
    pf_context *ctx = gin->ctx;
    *removed = 0;
    *padded = *cropped = 0;
    for (int a = 0; a < gin->dim; a++) {
        shift[a] = (long)(gout->n[a] / 2) - (long)(gin->n[a] / 2);
        if (gout->n[a] > gin->n[a]) *padded = 1;
        if (gout->n[a] < gin->n[a]) *cropped = 1;
    }
    if (!*cropped) return;
    *removed = gin->dist ? split_cropped_probability(w, shift, gout->n, norm) : cropped_probability(w, shift, gout->n, norm);
    double thr = pf_context_guard_threshold(ctx);
    if (*removed > thr)
        pf_context_warn(ctx,
                        "scaled flight: cropping the input to the output point count removed %.3g of the "
                        "probability (threshold %.3g); give at least as many output points as the wave's grid has",
                        *removed, thr);
}

/* The wave takes out (NULL: its own storage, transformed in place) on gout,
 * in position representation. */
static void adopt_output(pf_wave *w, pf_grid *gout, double complex *out)
{
    pf_grid *gin = w->grid;
    if (out && out != w->store) {
        pf_free(gin->ctx, w->store, pf_grid_local_bytes(gin));
        w->store = out;
    }
    pf_grid_retain(gout);
    w->grid = gout;
    pf_grid_release(gin);
    w->rep = PF_POSITION;
    pf_guard_rebind(w);
}

/* The 1D stage with an unchanged point count: chirps evaluated by segments
 * (pf_scaled_chirp_1d), no tables and no new storage. */
static pf_status stage_1d_in_place(pf_wave *w, const double *ta, pf_grid *gout, pass_progress *pp)
{
    const pf_grid *gin = w->grid;
    pf_context *ctx = gin->ctx;
    const double delta = gout->origin[0] - gin->origin[0];
    pf_scaled_chirp_1d(w->store, gout->n[0], w->mass, ta[0], gin->dx[0], gout->dx[0], delta, 0, ctx->threads);
    pass_done(ctx, pp);
    pf_status s = pf_grid_fft(gout, w->store, ta[0] > 0 ? -1 : +1);
    if (s) return s;
    pass_done(ctx, pp);
    pf_scaled_chirp_1d(w->store, gout->n[0], w->mass, ta[0], gin->dx[0], gout->dx[0], delta, 1, ctx->threads);
    pass_done(ctx, pp);
    adopt_output(w, gout, NULL);
    return PF_OK;
}

/* The input chirp into a zero-padded (or cropped) copy: input index range
 * [lo, hi) per slot lands at the output index shifted by sh. */
static void chirp_copy_pass(double complex *out, const double complex *in, const shape3 *si, const shape3 *so,
                            const long *sh, const size_t *lo, const size_t *hi, const double complex *const *P,
                            int threads)
{
#pragma omp parallel for collapse(2) num_threads(threads) schedule(static)
    for (ptrdiff_t i0 = (ptrdiff_t)lo[0]; i0 < (ptrdiff_t)hi[0]; i0++) {
        for (ptrdiff_t i1 = (ptrdiff_t)lo[1]; i1 < (ptrdiff_t)hi[1]; i1++) {
            size_t o0 = (size_t)(i0 + sh[0]), o1 = (size_t)(i1 + sh[1]);
            double complex r = P[0][o0] * P[1][o1];
            const double complex *src = in + ((size_t)i0 * si->n[1] + (size_t)i1) * si->n[2];
            double complex *dst = out + (o0 * so->n[1] + o1) * so->n[2] + sh[2];
            const double complex *p2 = P[2] + sh[2];
            for (size_t i2 = lo[2]; i2 < hi[2]; i2++) dst[i2] = src[i2] * (r * p2[i2]);
        }
    }
}

/* Per-axis chirp tables of a stage onto gout (pre: input chirp, post:
 * output chirp and amplitude) in one allocation, returned (NULL: the
 * context holds the reason). */
static double complex *stage_chirp_tables(const pf_wave *w, const double *ta, const pf_grid *gout, double complex **pre,
                                          double complex **post)
{
    const pf_grid *gin = w->grid;
    size_t table_len = 0;
    for (int a = 0; a < gin->dim; a++) table_len += 2 * gout->n[a];
    double complex *tables = pf_alloc(gin->ctx, table_len * sizeof(double complex));
    if (!tables) return NULL;
    double complex *p = tables;
    for (int a = 0; a < gin->dim; a++) {
        pre[a] = p;
        post[a] = p + gout->n[a];
        p += 2 * gout->n[a];
        pf_scaled_chirp_tables(w->mass, ta[a], gout->n[a], gin->dx[a], gout->dx[a], gout->origin[a] - gin->origin[a],
                               pre[a], post[a]);
    }
    return tables;
}

/* The input chirp on a chunk of whole planes of the output grid (the
 * chunk sweep of pf_fused_transform): the same per-row products as
 * chirp_pass. */
typedef struct pre_chirp {
    const pf_grid *g;
    double complex *const *pre;
    pf_phase_row_fn row;
} pre_chirp;

static void pre_chirp_chunk(void *user, double complex *chunk, size_t begin, size_t count)
{
    const pre_chirp *c = user;
    const pf_grid *g = c->g;
    const int last = g->dim - 1;
    const size_t n_last = g->n[last], rows = count / n_last, first = begin / n_last;
    const size_t n1 = g->dim == 3 ? g->n[1] : 1;
    for (size_t r = 0; r < rows; r++) {
        size_t row = first + r, i0 = row / n1, i1 = row % n1;
        double complex f = g->dim == 3 ? c->pre[0][i0] * c->pre[1][i1] : c->pre[0][i0];
        c->row((double *)(chunk + r * n_last), (const double *)c->pre[last], creal(f), cimag(f), n_last);
    }
}

/* A 2D/3D single-process stage in place (same point count): the input
 * chirp fused into the chunk sweep before the trailing-axes transforms and
 * the output chirp into the column sweep after the axis-0 transforms
 * (pf_fused.c), two passes over memory in all instead of the chirp pass,
 * FFTW's own two sweeps and the second chirp pass. */
static pf_status fused_stage(pf_wave *w, const double *ta, pf_grid *gout, pass_progress *pp)
{
    pf_context *ctx = w->grid->ctx;
    double complex *pre[PF_MAX_DIM], *post[PF_MAX_DIM];
    double complex *tables = stage_chirp_tables(w, ta, gout, pre, post);
    if (!tables) return pf_context_status(ctx);
    pre_chirp c = {gout, pre, pf_phase_kernel()};
    pf_status s = pf_fused_transform(gout, w->store, ta[0] > 0 ? -1 : +1, pre_chirp_chunk, &c, post);
    pf_context_free(ctx, tables);
    if (s) return s;
    pass_done(ctx, pp);
    pass_done(ctx, pp);
    pass_done(ctx, pp);
    adopt_output(w, gout, NULL);
    return PF_OK;
}

/* The scaled stage: w (position representation) goes to gout with per-axis
 * durations ta; *removed receives the probability cropped away.  Three
 * passes (input chirp, FFT, output chirp) over per-axis chirp tables, in
 * place when the point count stays, else into a padded or cropped copy. */
static pf_status scaled_stage(pf_wave *w, const double *ta, pf_grid *gout, double norm, double *removed,
                              pass_progress *pp)
{
    pf_grid *gin = w->grid;
    pf_context *ctx = gin->ctx;
    const int d = gin->dim;
    long shift[PF_MAX_DIM] = {0, 0, 0};
    int padded, cropped;
    stage_layout(w, gout, norm, shift, &padded, &cropped, removed);
    /* Plan before allocating the output, so planning scratch and output
     * storage are never held at the same time. */
    pf_status s = gout->dist ? PF_OK : pf_grid_plan(gout); /* a split grid plans at its first FFT */
    if (s) return s;
    size_t bytes = pf_grid_local_bytes(gout); /* this rank's share when split */
    /* Same point count: the stage runs in place, with no new storage (the
     * usual case, and the one the benchmark measures). */
    const int in_place = !padded && !cropped;
    if (in_place && d == 1 && gout->n[0] < ((size_t)1 << 32)) return stage_1d_in_place(w, ta, gout, pp);
    if (in_place && d >= 2 && !gout->dist) return fused_stage(w, ta, gout, pp);
    double complex *out = in_place ? w->store : pf_alloc(ctx, bytes);
    if (!out) return pf_context_status(ctx);
    double complex *pre[PF_MAX_DIM], *post[PF_MAX_DIM];
    double complex *tables = stage_chirp_tables(w, ta, gout, pre, post);
    if (!tables) {
        if (!in_place) pf_free(ctx, out, bytes);
        return pf_context_status(ctx);
    }
    shape3 si = shape_of(gin), so = shape_of(gout);
    const double complex *P[3], *Q[3];
    slot_tables(&so, pre, P);
    slot_tables(&so, post, Q);
    /* A grid split over MPI ranks (the same count on axis 0, so the same
     * planes in and out): the passes and the padded or cropped copy run over
     * this rank's planes of axis 0 (slot lead), with the axis-0 tables read
     * from its first plane; each point gets the single process's factors. */
    if (gout->dist) {
        size_t first, count;
        pf_grid_slab(gout, PF_POSITION, &first, &count);
        si.n[so.lead] = so.n[so.lead] = count;
        P[so.lead] += first;
        Q[so.lead] += first;
    }
    const shape3 sl = so;
    long sh[3] = {0, 0, 0};
    for (int a = 0; a < d; a++) sh[so.lead + a] = shift[a];
    /* Input index range that lands inside the output box, per slot. */
    size_t lo[3], hi[3];
    for (int i = 0; i < 3; i++) {
        long l = sh[i] < 0 ? -sh[i] : 0;
        long h = (long)si.n[i] < (long)so.n[i] - sh[i] ? (long)si.n[i] : (long)so.n[i] - sh[i];
        lo[i] = (size_t)l;
        hi[i] = (size_t)h;
    }
    if (padded) memset(out, 0, bytes);
    const int threads = ctx->threads;
    /* Pass 1: the input chirp; a zero-padded (or cropped) copy when the point
     * count changes. */
    if (in_place) chirp_pass(out, &sl, P, threads);
    else chirp_copy_pass(out, w->store, &si, &so, sh, lo, hi, P, threads);
    pass_done(ctx, pp);
    int forward = ta[0] > 0; /* all stage durations share the flight's sign */
    s = gout->dist ? pf_dist_fft_natural(gout, out, forward ? -1 : +1) : pf_grid_fft(gout, out, forward ? -1 : +1);
    if (s) {
        pf_context_free(ctx, tables);
        if (!in_place) pf_free(ctx, out, bytes);
        return s;
    }
    pass_done(ctx, pp);
    /* Pass 2: output chirp and amplitude. */
    chirp_pass(out, &sl, Q, threads);
    pass_done(ctx, pp);
    pf_context_free(ctx, tables);
    adopt_output(w, gout, out);
    return PF_OK;
}

/* Stage durations that land on the target's spacing D with N points.
 * Single FFT when D is the natural spacing 2 pi hbar |t| / (m N dx) on every
 * axis (within 1e-12; then t1 = t exactly).  Otherwise two Fresnel stages
 * t1 + t2 = t through an intermediate grid: D = |t2 / t1| dx for r = D / dx.
 * Opposite signs (t1 = t / (1 - r), t2 = -r t1) make |t1| largest, which
 * eases the first stage's chirp criterion; they need r on the same side of 1
 * on every axis (one FFT direction per stage) and away from 1.  Otherwise
 * the same-sign split t1 = t / (1 + r), t2 = r t1 is used. */
static int stage_times(const pf_wave *w, double t, const size_t *n, const double *D, double *t1, double *t2)
{
    const int d = w->grid->dim;
    int single = 1, below = 0, above = 0, near_one = 0;
    double r[PF_MAX_DIM];
    for (int a = 0; a < d; a++) {
        double natural = PF_TWO_PI * PF_HBAR * fabs(t) / (w->mass * (double)n[a] * w->grid->dx[a]);
        if (fabs(D[a] - natural) > 1e-12 * natural) single = 0;
        r[a] = D[a] / w->grid->dx[a];
        if (r[a] < 1) below = 1; else above = 1;
        if (fabs(1 - r[a]) < 0.1) near_one = 1;
    }
    int opposite = !(below && above) && !near_one;
    for (int a = 0; a < d; a++) {
        if (single) {
            t1[a] = t;
            t2[a] = 0;
        } else if (opposite) {
            t1[a] = t / (1 - r[a]);
            t2[a] = -r[a] * t1[a];
        } else {
            t1[a] = t / (1 + r[a]);
            t2[a] = r[a] * t1[a];
        }
    }
    return !single;
}

/* Intermediate grid of the two-stage form: N points per axis at the spacing
 * the first stage produces, centred where the packet's centre is at t1 when
 * it moves linearly from the input origin to the output origin. */
static pf_status intermediate_grid(const pf_wave *w, double t, const double *t1, const pf_grid *gout, pf_grid **out)
{
    const pf_grid *g = w->grid;
    double span[PF_MAX_DIM], origin[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) {
        span[a] = PF_TWO_PI * PF_HBAR * fabs(t1[a]) / (w->mass * g->dx[a]);
        origin[a] = g->origin[a] + (gout->origin[a] - g->origin[a]) * t1[a] / t;
    }
    return pf_grid_new(g->ctx, g->dim, gout->n, span, origin, out);
}

/* A flight so long that the image would not fit the engine's range of grids
 * (pf_grid.h) is refused with the flight time in the message, before the
 * output grid's own check would report only a span the script never gave. */
static pf_status check_image_span(pf_context *ctx, double t, const double *span, int d)
{
    for (int a = 0; a < d; a++)
        if (!(span[a] <= PF_GRID_MAX_EXTENT))
            return pf_fail(ctx, PF_EINVAL,
                           "a flight of %g s spreads the state over %g m on axis %d, beyond the largest grid span "
                           "of %g m (the widths and densities would overflow); fly a shorter time",
                           t, span[a], a + 1, PF_GRID_MAX_EXTENT);
    return PF_OK;
}

static pf_status check_time(pf_context *ctx, double t)
{
    if (!isfinite(t) || t == 0)
        return pf_fail(ctx, PF_EINVAL, "scaled flight time must be finite and non-zero, got %g", t);
    return PF_OK;
}

/* On a grid split over MPI ranks a scaled flight keeps the point count of
 * the first axis: FFTW-MPI's position slabs depend on that count only, so
 * the output grid has the input's planes and every rank keeps its own
 * (padding or cropping the other axes happens inside each plane).  Another
 * count on the first axis would move planes between ranks. */
static pf_status check_split_points(const pf_wave *w, const size_t *n, const char *what)
{
    const pf_grid *g = w->grid;
    if (!g->dist || n[0] == g->n[0]) return PF_OK;
    return pf_fail(g->ctx, PF_EINVAL,
                   "%s of a wave distributed over %d MPI ranks keeps the point count of axis 1, the axis split "
                   "over the ranks: %zu points on axis 1 (the wave has %zu) would move planes between ranks; give "
                   "%zu there (the other axes may change; docs/distributed.md)",
                   what, pf_dist_ranks(), n[0], g->n[0], g->n[0]);
}

static pf_status fly_onto(pf_wave *w, double t, pf_grid *target, const char *task);

pf_status pf_wave_fly_onto(pf_wave *w, double t, pf_grid *target) { return fly_onto(w, t, target, NULL); }

/* pf_wave_fly_onto, reporting its passes under task (NULL: silently). */
static pf_status fly_onto(pf_wave *w, double t, pf_grid *target, const char *task)
{
    pf_context *ctx = w->grid->ctx;
    pf_status s = check_time(ctx, t);
    if (s) return s;
    if (!target || target->dim != w->grid->dim)
        return pf_fail(ctx, PF_EINVAL, "scaled flight: the target grid must have the wave's dimension (%d)", w->grid->dim);
    if (target->ctx != ctx) return pf_fail(ctx, PF_EINVAL, "scaled flight: the target grid belongs to another context");
    s = check_split_points(w, target->n, "a scaled flight onto a grid");
    if (!s) s = pf_dist_check_regrid(w->grid, target, "a scaled flight");
    if (s) return s;
    double t1[PF_MAX_DIM], t2[PF_MAX_DIM];
    int two = stage_times(w, t, target->n, target->dx, t1, t2);
    pass_progress pp = {task, 0, two ? 6 : 3};
    double norm = pf_wave_last_logged_norm(w);
    double src_origin[PF_MAX_DIM];
    memcpy(src_origin, w->grid->origin, sizeof src_origin);
    s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    pf_grid_retain(target); /* the target may be the wave's own grid */
    double removed = 0, none = 0;
    if (two) {
        pf_grid *mid;
        s = intermediate_grid(w, t, t1, target, &mid);
        if (!s) s = scaled_stage(w, t1, mid, norm, &removed, &pp);
        pf_grid_release(mid); /* the wave holds it until the second stage */
        if (!s) s = scaled_stage(w, t2, target, norm, &none, &pp);
    } else {
        s = scaled_stage(w, t1, target, norm, &removed, &pp);
    }
    pf_grid_release(target);
    if (s) return s;
    w->clock += t;
    pf_wave_log_step(w, "flight", two ? "scaled-2stage" : "scaled-fresnel", t, removed, norm * (1 - removed));
    if (removed == 0) {
        w->scaled_from.log_count = w->log.count;
        w->scaled_from.duration = t;
        memcpy(w->scaled_from.origin, src_origin, sizeof src_origin);
    }
    return PF_OK;
}

pf_status pf_wave_fly_scaled(pf_wave *w, double t, const size_t *points, const double *centre)
{
    pf_grid *gin = w->grid;
    pf_status s = check_time(gin->ctx, t);
    if (s) return s;
    size_t n[PF_MAX_DIM];
    double span[PF_MAX_DIM], origin[PF_MAX_DIM];
    for (int a = 0; a < gin->dim; a++) {
        n[a] = points && points[a] ? points[a] : gin->n[a];
        if (n[a] < 2) return pf_fail(gin->ctx, PF_EINVAL, "scaled flight: points on axis %d must be at least 2", a + 1);
        double D = PF_TWO_PI * PF_HBAR * fabs(t) / (w->mass * (double)n[a] * gin->dx[a]);
        span[a] = D * (double)n[a];
        origin[a] = centre ? centre[a] : gin->origin[a];
        if (!isfinite(origin[a]))
            return pf_fail(gin->ctx, PF_EINVAL, "scaled flight: centre on axis %d must be finite", a + 1);
    }
    s = check_split_points(w, n, "a scaled flight");
    if (!s) s = pf_dist_check_regrid(gin, NULL, "a scaled flight");
    if (!s) s = check_image_span(gin->ctx, t, span, gin->dim);
    if (s) return s;
    pf_grid *gout;
    s = pf_grid_new(gin->ctx, gin->dim, n, span, origin, &gout);
    if (s) return s;
    s = pf_wave_fly_onto(w, t, gout);
    pf_grid_release(gout);
    return s;
}

/* ---- the choosing flight: validate, measure the extents, plan the scaled
 * form, assess each method, choose, execute ---- */

/* The classical image of the state's extents after t: every part moves
 * with its own wave number (docs/long-flights.md). */
static void image_at(const pf_long_flight_report *r, double mass, double t, int a, double *lo, double *hi)
{
    double v1 = PF_HBAR * t * r->k_lo[a] / mass, v2 = PF_HBAR * t * r->k_hi[a] / mass;
    *lo = r->x_lo[a] + fmin(v1, v2);
    *hi = r->x_hi[a] + fmax(v1, v2);
}

/* How far [lo, hi] overflows the window centred at c of width wd: <= 1 fits. */
static double overflow(double lo, double hi, double c, double wd)
{
    return 2.0 * fmax(c - lo, hi - c) / wd;
}

/* The scaled form of one long flight and how each method fares. */
typedef struct long_plan {
    int has_target;                /* the options name an output grid or part of one */
    size_t n_out[PF_MAX_DIM];      /* the scaled form's output grid ... */
    double D[PF_MAX_DIM], c[PF_MAX_DIM];
    double t1[PF_MAX_DIM], t2[PF_MAX_DIM]; /* ... and its stage durations */
    int two;                       /* two stages */
    double same_over, scaled_over; /* largest use of the box, of the window (<= 1 fits) */
} long_plan;

/* The options alone, before anything is measured or flown. */
static pf_status check_long_options(pf_wave *w, double t, const pf_long_flight_opts *o, int *has_target)
{
    const pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    const int d = g->dim;
    if (!isfinite(t)) return pf_fail(ctx, PF_EINVAL, "flight time must be finite, got %g", t);
    if (o->method != PF_FLIGHT_AUTO && o->method != PF_FLIGHT_SAME_GRID && o->method != PF_FLIGHT_SCALED)
        return pf_fail(ctx, PF_EINVAL, "unknown flight method %d", (int)o->method);
    if (o->grid && o->grid->dim != d)
        return pf_fail(ctx, PF_EINVAL, "target grid has %d axes, the wave has %d", o->grid->dim, d);
    *has_target = o->grid != NULL || o->has_centre;
    for (int a = 0; a < d; a++) {
        if (o->points[a] == 1) return pf_fail(ctx, PF_EINVAL, "points on axis %d must be at least 2", a + 1);
        if (o->spacing[a] < 0 || !isfinite(o->spacing[a]))
            return pf_fail(ctx, PF_EINVAL, "spacing on axis %d must be positive, got %g", a + 1, o->spacing[a]);
        if (o->points[a] || o->spacing[a]) *has_target = 1;
    }
    if (o->method != PF_FLIGHT_SAME_GRID) {
        size_t want[PF_MAX_DIM];
        for (int a = 0; a < d; a++) want[a] = o->grid ? o->grid->n[a] : o->points[a] ? o->points[a] : g->n[a];
        pf_status s = check_split_points(w, want, "a long flight");
        if (!s && (o->grid || o->method == PF_FLIGHT_SCALED)) s = pf_dist_check_regrid(g, o->grid, "a long flight");
        if (s) return s;
    }
    return PF_OK;
}

/* A forced same-grid flight may name only the wave's own grid. */
static pf_status check_same_grid_target(const pf_grid *g, const pf_long_flight_opts *o, int has_target)
{
    if (o->method != PF_FLIGHT_SAME_GRID || !has_target) return PF_OK;
    int own = !o->grid || pf_grid_same(o->grid, g);
    for (int a = 0; a < g->dim && !o->grid; a++)
        if ((o->points[a] && o->points[a] != g->n[a]) || (o->spacing[a] && o->spacing[a] != g->dx[a]) ||
            (o->has_centre && o->centre[a] != g->origin[a]))
            own = 0;
    if (own) return PF_OK;
    return pf_fail(g->ctx, PF_EINVAL,
                   "method \"same-grid\" keeps the wave's grid; a target grid, points, spacing or centre "
                   "needs method \"scaled\" or \"auto\"");
}

/* The state came out of a scaled flight and nothing happened since: its
 * chirp is undersampled on the coarse grid, so fly back to where that
 * flight started (the single-FFT form of -t: the chirps cancel, and with an
 * unchanged point count it lands on the starting grid itself) and fly the
 * whole time from there (*t grows by the way back).  The log shows both
 * steps. */
static pf_status return_to_scaled_start(pf_wave *w, const pf_long_flight_opts *o, double *t, int *returned)
{
    *returned = 0;
    if (o->method == PF_FLIGHT_SAME_GRID || !w->scaled_from.log_count || w->scaled_from.log_count != w->log.count)
        return PF_OK;
    double back = w->scaled_from.duration, origin[PF_MAX_DIM];
    memcpy(origin, w->scaled_from.origin, sizeof origin);
    pf_status s = pf_wave_fly_scaled(w, -back, NULL, origin);
    if (s) return s;
    w->scaled_from.log_count = 0;
    *t += back;
    *returned = 1;
    return PF_OK;
}

/* The scaled form's output grid (point count, spacing) and stage durations. */
static void plan_scaled(const pf_wave *w, double t, const pf_long_flight_opts *o, long_plan *p, pf_long_flight_report *r)
{
    const pf_grid *g = w->grid;
    for (int a = 0; a < g->dim; a++) {
        p->n_out[a] = o->grid ? o->grid->n[a] : o->points[a] ? o->points[a] : g->n[a];
        double natural = PF_TWO_PI * PF_HBAR * fabs(t) / (w->mass * (double)p->n_out[a] * g->dx[a]);
        p->D[a] = o->grid ? o->grid->dx[a] : o->spacing[a] ? o->spacing[a] : natural;
        r->chirp_time[a] = w->mass * (double)g->n[a] * g->dx[a] * g->dx[a] / (PF_TWO_PI * PF_HBAR);
    }
    p->two = stage_times(w, t, p->n_out, p->D, p->t1, p->t2);
}

/* The criteria of pf_longflight.h for both methods, from the extents in r:
 * fills the image, box and window figures and the scaled form's output grid
 * of the report, the validity flags and the overflows of p. */
static void assess_methods(const pf_wave *w, double t, const pf_long_flight_opts *o, long_plan *p,
                           pf_long_flight_report *r)
{
    const pf_grid *g = w->grid;
    int same_ok = 1, scaled_ok = 1;
    double same_over = 0, scaled_over = 0;
    for (int a = 0; a < g->dim; a++) {
        double lo1, hi1, lo_s, hi_s;
        image_at(r, w->mass, t, a, &lo1, &hi1);
        r->image_lo[a] = lo1;
        r->image_hi[a] = hi1;
        /* Same grid: the image must stay in the box from 0 to t (it moves
         * linearly, so the two ends suffice). */
        r->box[a] = pf_guard_inner_fraction(g->n[a]) * g->span[a];
        double ov = fmax(overflow(r->x_lo[a], r->x_hi[a], g->origin[a], r->box[a]),
                         overflow(lo1, hi1, g->origin[a], r->box[a]));
        same_over = fmax(same_over, ov);
        if (ov > 1) same_ok = 0;
        /* Scaled: the output window must hold the image at t ... */
        if (o->grid) p->c[a] = o->grid->origin[a];
        else if (o->has_centre) p->c[a] = o->centre[a];
        else p->c[a] = 0.5 * (lo1 + hi1);
        const size_t n = p->n_out[a];
        r->window[a] = pf_guard_inner_fraction(n) * (double)n * p->D[a];
        double sv = overflow(lo1, hi1, p->c[a], r->window[a]);
        if (p->two) {
            /* ... the first stage's window the image at t1 (chirp criterion
             * of stage one) ... */
            double D1 = PF_TWO_PI * PF_HBAR * fabs(p->t1[a]) / (w->mass * (double)n * g->dx[a]);
            double c1 = g->origin[a] + (p->c[a] - g->origin[a]) * p->t1[a] / t;
            image_at(r, w->mass, p->t1[a], a, &lo_s, &hi_s);
            sv = fmax(sv, overflow(lo_s, hi_s, c1, pf_guard_inner_fraction(n) * (double)n * D1));
            /* ... and the second stage's integrand, whose chirps nearly
             * cancel, spans r (x extent) + hbar |t| (k extent) / m. */
            double rr = p->D[a] / g->dx[a];
            double need = rr * (r->x_hi[a] - r->x_lo[a]) + PF_HBAR * fabs(t) * (r->k_hi[a] - r->k_lo[a]) / w->mass;
            sv = fmax(sv, need / r->window[a]);
        }
        scaled_over = fmax(scaled_over, sv);
        if (sv > 1) scaled_ok = 0;
        r->out_spacing[a] = p->D[a];
        r->out_centre[a] = p->c[a];
        r->out_points[a] = n;
        r->scaled_time[a] = p->t1[a];
    }
    r->same_grid_ok = same_ok;
    r->scaled_ok = scaled_ok;
    p->same_over = same_over;
    p->scaled_over = scaled_over;
}

/* Whether the scaled form would land on the wave's own grid. */
static int target_is_own(const pf_grid *g, const pf_long_flight_opts *o, const long_plan *p)
{
    if (o->grid) return pf_grid_same(o->grid, g);
    if (!p->has_target) return 0;
    for (int a = 0; a < g->dim; a++)
        if (p->n_out[a] != g->n[a] || p->D[a] != g->dx[a] || p->c[a] != g->origin[a]) return 0;
    return 1;
}

/* The requested method, or the automatic choice with its reason in r. */
static pf_flight_method choose_method(const pf_grid *g, const pf_long_flight_opts *o, const long_plan *p,
                                      pf_long_flight_report *r)
{
    pf_flight_method m = o->method;
    if (m != PF_FLIGHT_AUTO) {
        snprintf(r->reason, sizeof r->reason, "method \"%s\" was requested", pf_flight_method_name(m));
        return m;
    }
    if (p->has_target && !target_is_own(g, o, p)) {
        snprintf(r->reason, sizeof r->reason, "a target grid was requested, which only the scaled method reaches");
        return PF_FLIGHT_SCALED;
    }
    if (r->same_grid_ok) {
        snprintf(r->reason, sizeof r->reason,
                 "the state stays inside its grid for the whole flight (largest use %.2f of the box), so the exact "
                 "same-grid flight applies", p->same_over);
        return PF_FLIGHT_SAME_GRID;
    }
    if (r->scaled_ok) {
        snprintf(r->reason, sizeof r->reason,
                 "the state would leave its grid (needs %.2f times the box) but the chirp is sampled without "
                 "aliasing on the scaled grid (uses %.2f of its window)", p->same_over, p->scaled_over);
        return PF_FLIGHT_SCALED;
    }
    snprintf(r->reason, sizeof r->reason,
             "neither method is valid (same-grid needs %.2f times the box, scaled %.2f times its window); "
             "used the closer one", p->same_over, p->scaled_over);
    return p->scaled_over < p->same_over ? PF_FLIGHT_SCALED : PF_FLIGHT_SAME_GRID;
}

/* The guard warning of a method that fails its criterion. */
static void warn_if_invalid(pf_context *ctx, double t, pf_flight_method m, const long_plan *p,
                            const pf_long_flight_report *r)
{
    if (m == PF_FLIGHT_SAME_GRID && !r->same_grid_ok)
        pf_context_warn(ctx,
                        "flight guard: a same-grid flight of %g s needs %.2f times the grid's usable box: the "
                        "state reaches the edge and wraps around. Remedy: enlarge the span by x%.2f or use the "
                        "scaled method (method=\"scaled\"); the grid advisor (w:grid_advice) proposes both",
                        t, p->same_over, p->same_over * 1.1);
    else if (m != PF_FLIGHT_SAME_GRID && !r->scaled_ok)
        pf_context_warn(ctx,
                        "flight guard: the scaled flight of %g s needs %.2f times the usable output window: "
                        "the chirp exp(i m x^2 / 2 hbar t) is undersampled and the result aliases. Remedy: "
                        "reduce the input spacing by x%.2f (more points over the same span); for a short "
                        "flight use method=\"same-grid\" on a larger grid; see w:grid_advice",
                        t, p->scaled_over, p->scaled_over * 1.1);
}

/* Flies with the chosen method: the same-grid flight, or the scaled form
 * onto the given grid or the planned one. */
static pf_status execute_long(pf_wave *w, double t, const pf_long_flight_opts *o, const long_plan *p,
                              pf_flight_method m, pf_long_flight_report *r)
{
    pf_context *ctx = w->grid->ctx;
    const int d = w->grid->dim;
    r->method = m;
    if (m == PF_FLIGHT_SAME_GRID) {
        r->stages = 1;
        return pf_wave_fly(w, t);
    }
    r->stages = p->two ? 2 : 1;
    if (o->grid) return fly_onto(w, t, o->grid, "fly_long");
    double span[PF_MAX_DIM];
    for (int a = 0; a < d; a++) span[a] = p->D[a] * (double)p->n_out[a];
    pf_status s = check_image_span(ctx, t, span, d);
    if (s) return s;
    pf_grid *gout;
    s = pf_grid_new(ctx, d, p->n_out, span, p->c, &gout);
    if (s) return s;
    s = fly_onto(w, t, gout, "fly_long");
    pf_grid_release(gout);
    return s;
}

static pf_status fly_long(pf_wave *w, double t, const pf_long_flight_opts *o, pf_long_flight_report *r)
{
    memset(r, 0, sizeof *r);
    long_plan p;
    memset(&p, 0, sizeof p);
    pf_status s = check_long_options(w, t, o, &p.has_target);
    if (s) return s;
    if (t == 0) {
        r->method = PF_FLIGHT_SAME_GRID;
        r->stages = 1;
        snprintf(r->reason, sizeof r->reason, "a flight of zero duration changes nothing");
        return pf_wave_fly(w, 0.0);
    }
    s = check_same_grid_target(w->grid, o, p.has_target);
    int returned = 0;
    if (!s) s = return_to_scaled_start(w, o, &t, &returned);
    if (!s) s = pf_wave_flight_extents(w, r->x_lo, r->x_hi, r->k_lo, r->k_hi);
    if (s) return s;
    plan_scaled(w, t, o, &p, r);
    assess_methods(w, t, o, &p, r);
    pf_flight_method m = choose_method(w->grid, o, &p, r);
    warn_if_invalid(w->grid->ctx, t, m, &p, r);
    if (returned) {
        size_t len = strlen(r->reason);
        snprintf(r->reason + len, sizeof r->reason - len,
                 " (the state first flew back to where its last scaled flight started, then %g s in one go)", t);
    }
    return execute_long(w, t, o, &p, m, r);
}

/* The long flight as one reported task: a few transforms of possibly very
 * large grids; a scaled flight also reports each of its passes (chirp, FFT,
 * chirp per stage), so the bar moves while it runs. */
pf_status pf_wave_fly_long(pf_wave *w, double t, const pf_long_flight_opts *o, pf_long_flight_report *report)
{
    pf_context *ctx = w->grid->ctx;
    pf_long_flight_opts none;
    if (!o) {
        memset(&none, 0, sizeof none);
        o = &none;
    }
    pf_long_flight_report local;
    pf_context_progress(ctx, "fly_long", 0, 1);
    pf_status s = fly_long(w, t, o, report ? report : &local);
    pf_context_progress(ctx, "fly_long", s ? -1.0 : 1.0, 1);
    return s;
}
