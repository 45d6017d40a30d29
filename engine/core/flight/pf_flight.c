/* pf_flight.c - exact free flight: phi(k) -> phi(k) exp(-i hbar |k|^2 t / 2m). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_kernels.h"

/* The 1D segment tables (see PF_PHASE_SEG): on a large grid, reading the
 * full-length table in the phase pass would add half again to its memory
 * traffic; these are 1/16 of it.  Allocated once per grid; without them (small
 * grids, or no memory) the full table is used. */
static void segment_tables(pf_grid *g, double tau)
{
    pf_flight_tables *ft = &g->flight;
    const size_t n = g->n[0], segs = (n + PF_PHASE_SEG - 1) / PF_PHASE_SEG;
    if (n < PF_PHASE_SEG_MIN) return;
    if (!ft->seg_start) {
        ft->seg_start = pf_alloc(g->ctx, segs * sizeof(double complex));
        ft->seg_ratio = pf_alloc(g->ctx, segs * sizeof(double complex));
        if (!ft->seg_start || !ft->seg_ratio) {
            pf_context_free(g->ctx, ft->seg_start);
            pf_context_free(g->ctx, ft->seg_ratio);
            ft->seg_start = ft->seg_ratio = NULL;
            return;
        }
    }
    double dk = PF_TWO_PI / g->span[0];
    double c = 0.5 * tau * dk * dk;
    for (size_t s = 0; s < PF_PHASE_SEG; s++) ft->chirp[s] = cexp(-I * (c * (double)(s * s)));
    for (size_t q = 0; q < segs; q++) {
        size_t j0 = q * PF_PHASE_SEG;
        double m0 = nearbyint(g->k[0][j0] / dk);
        ft->seg_start[q] = ft->phase[0][j0]; /* a compact copy: read contiguously in the pass */
        ft->seg_ratio[q] = cexp(-I * (2.0 * c * m0));
    }
}

/* Fills the per-axis phase tables for tau = hbar t / m, unless they already
 * hold that tau.  exp(-i tau |k|^2 / 2) = prod_a exp(-i tau k_a^2 / 2). */
static void flight_tables(pf_grid *g, double tau)
{
    if (g->flight.valid && g->flight.tau == tau) return;
    for (int a = 0; a < g->dim; a++) {
        double dk = PF_TWO_PI / g->span[a];
        double c = 0.5 * tau * dk * dk; /* phase = c m^2 for the integer m */
        double complex *t = g->flight.phase[a];
        const size_t n = g->n[a];
        const ptrdiff_t evaluated = (ptrdiff_t)PF_KERNEL_MIRROR_FROM(n);
        /* One libm exponential per |m| (the entry of -m is a copy, the
         * same bits), long axes shared among threads (pf_kernels.h). */
#pragma omp parallel num_threads(g->ctx->threads) if (n >= PF_KERNEL_TABLE_THREADED)
        {
#pragma omp for schedule(static)
            for (ptrdiff_t j = 0; j < evaluated; j++) {
                double m = pf_kernel_axis_m(n, (size_t)j);
                t[j] = cexp(-I * (c * m * m));
            }
#pragma omp for schedule(static)
            for (ptrdiff_t j = evaluated; j < (ptrdiff_t)n; j++) t[j] = t[n - (size_t)j];
        }
    }
    if (g->dim == 1) segment_tables(g, tau);
    g->flight.tau = tau;
    g->flight.valid = 1;
}

void pf_flight_fill_tables(pf_grid *g, double tau) { flight_tables(g, tau); }

/* row[j] *= q * p[j] for j < n, on interleaved (re, im) doubles.
 *
 * The phase pass is bound by arithmetic, not memory (two complex products
 * per point against cache-resident tables), so on x86-64 it uses AVX-512 or
 * AVX2 when the processor has them (pf_vecpath.h), plain C otherwise.  The
 * vector paths do the plain path's products and sums in the same order and
 * fuse no multiply with an add, so every path gives the same bits
 * (tests/unit/base/test_vector_paths.c). */
static void phase_row_plain(double *restrict row, const double *restrict p, double qr, double qi, size_t n)
{
    for (size_t j = 0; j < n; j++) {
        double pr = p[2 * j], pi = p[2 * j + 1];
        double fr = qr * pr - qi * pi, fi = qr * pi + qi * pr;
        double a = row[2 * j], b = row[2 * j + 1];
        row[2 * j] = a * fr - b * fi;
        row[2 * j + 1] = a * fi + b * fr;
    }
}

#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#include <immintrin.h>
#define PF_HAVE_X86_PHASE 1

/* (t1 - t2) in the real lanes, (t1 + t2) in the imaginary ones: the
 * unfused add-subtract (AVX-512 has no instruction for it). */
__attribute__((target("avx512f"))) static inline __m512d addsub512(__m512d t1, __m512d t2)
{
    return _mm512_mask_sub_pd(_mm512_add_pd(t1, t2), 0x55, t1, t2);
}

/* x * y for four complex numbers per register (interleaved re, im):
 * (xr yr - xi yi, xi yr + xr yi), the plain products in the plain order. */
__attribute__((target("avx512f"))) static inline __m512d cmul512(__m512d x, __m512d y)
{
    return addsub512(_mm512_mul_pd(x, _mm512_movedup_pd(y)), _mm512_mul_pd(_mm512_permute_pd(x, 0x55), _mm512_permute_pd(y, 0xFF)));
}

/* x * y for two complex numbers per register. */
__attribute__((target("avx2"))) static inline __m256d cmul256(__m256d x, __m256d y)
{
    return _mm256_addsub_pd(_mm256_mul_pd(x, _mm256_movedup_pd(y)), _mm256_mul_pd(_mm256_permute_pd(x, 0x5), _mm256_permute_pd(y, 0xF)));
}

/* Four complex numbers per step: f = q p, then row *= f. */
__attribute__((target("avx512f"))) static void phase_row_avx512(double *restrict row, const double *restrict p,
                                                                 double qr, double qi, size_t n)
{
    const __m512d qre = _mm512_set1_pd(qr), qim = _mm512_set1_pd(qi);
    size_t j = 0;
    for (; j + 4 <= n; j += 4) {
        __m512d pv = _mm512_loadu_pd(p + 2 * j);
        __m512d f = addsub512(_mm512_mul_pd(qre, pv), _mm512_mul_pd(qim, _mm512_permute_pd(pv, 0x55)));
        __m512d a = _mm512_loadu_pd(row + 2 * j);
        _mm512_storeu_pd(row + 2 * j, cmul512(a, f));
    }
    /* Clean upper register halves before the plain (SSE-encoded) tail: gcc
     * leaves them dirty across this tail call, and every SSE instruction
     * after it - the tail, libm's cexp in the kinetic tables, the engine's
     * plain loops - then ran up to 20 times slower (docs/performance.md). */
    _mm256_zeroupper();
    phase_row_plain(row + 2 * j, p + 2 * j, qr, qi, n - j);
}

/* Two complex numbers per step, same scheme. */
__attribute__((target("avx2"))) static void phase_row_avx2(double *restrict row, const double *restrict p, double qr,
                                                            double qi, size_t n)
{
    const __m256d qre = _mm256_set1_pd(qr), qim = _mm256_set1_pd(qi);
    size_t j = 0;
    for (; j + 2 <= n; j += 2) {
        __m256d pv = _mm256_loadu_pd(p + 2 * j);
        __m256d f = _mm256_addsub_pd(_mm256_mul_pd(qre, pv), _mm256_mul_pd(qim, _mm256_permute_pd(pv, 0x5)));
        __m256d a = _mm256_loadu_pd(row + 2 * j);
        _mm256_storeu_pd(row + 2 * j, cmul256(a, f));
    }
    _mm256_zeroupper(); /* as in phase_row_avx512 */
    phase_row_plain(row + 2 * j, p + 2 * j, qr, qi, n - j);
}
#endif

pf_phase_row_fn pf_phase_kernel_on(pf_vector_path path)
{
    if (!pf_vector_path_runs(path)) return NULL;
#ifdef PF_HAVE_X86_PHASE
    if (path == PF_PATH_AVX512) return phase_row_avx512;
    if (path == PF_PATH_AVX2) return phase_row_avx2;
#endif
    return phase_row_plain;
}

/* The kernel of this process's vector path (a process-wide fact, like
 * FFTW's own choice of SIMD codelets). */
pf_phase_row_fn pf_phase_kernel(void) { return pf_phase_kernel_on(pf_vector_path_chosen()); }

/* One 1D segment: d[s] *= a * chirp[s] * b^s for s < PF_PHASE_SEG.  Four
 * lanes carry a b^v, v = 0..3, each advanced by b^4 per step, so the powers
 * take at most 8 products (a few ulp) and the lanes are independent. */
static void phase_segment_plain(double complex *restrict d, const double complex *restrict chirp, double complex a,
                                double complex b)
{
    double complex b2 = b * b, b4 = b2 * b2;
    double complex cv[4] = {a, a * b, a * b2, a * b2 * b};
    for (size_t u = 0; u < PF_PHASE_SEG; u += 4)
        for (int v = 0; v < 4; v++) {
            d[u + v] *= cv[v] * chirp[u + v];
            cv[v] *= b4;
        }
}

#ifdef PF_HAVE_X86_PHASE
__attribute__((target("avx512f"))) static void phase_segment_avx512(double complex *restrict d,
                                                                     const double complex *restrict chirp,
                                                                     double complex a, double complex b)
{
    double complex b2 = b * b, b4 = b2 * b2;
    double complex init[4] = {a, a * b, a * b2, a * b2 * b};
    __m512d cv = _mm512_loadu_pd((const double *)init);
    const __m512d step = _mm512_set_pd(cimag(b4), creal(b4), cimag(b4), creal(b4), cimag(b4), creal(b4), cimag(b4),
                                       creal(b4));
    for (size_t u = 0; u < PF_PHASE_SEG; u += 4) {
        __m512d f = cmul512(cv, _mm512_loadu_pd((const double *)(chirp + u)));
        _mm512_storeu_pd((double *)(d + u), cmul512(_mm512_loadu_pd((const double *)(d + u)), f));
        cv = cmul512(cv, step);
    }
    /* Clean upper register halves on return, explicitly: gcc's own
     * vzeroupper at the exit was missing in the sanitizer build (ASan's
     * epilogue), and the row kernels clear them the same way. */
    _mm256_zeroupper();
}

/* The same four lanes as phase_segment_plain, in two registers. */
__attribute__((target("avx2"))) static void phase_segment_avx2(double complex *restrict d,
                                                                const double complex *restrict chirp, double complex a,
                                                                double complex b)
{
    double complex b2 = b * b, b4 = b2 * b2;
    double complex init[4] = {a, a * b, a * b2, a * b2 * b};
    __m256d lo = _mm256_loadu_pd((const double *)init), hi = _mm256_loadu_pd((const double *)(init + 2));
    const __m256d step = _mm256_set_pd(cimag(b4), creal(b4), cimag(b4), creal(b4));
    for (size_t u = 0; u < PF_PHASE_SEG; u += 4) {
        __m256d f0 = cmul256(lo, _mm256_loadu_pd((const double *)(chirp + u)));
        __m256d f1 = cmul256(hi, _mm256_loadu_pd((const double *)(chirp + u + 2)));
        _mm256_storeu_pd((double *)(d + u), cmul256(_mm256_loadu_pd((const double *)(d + u)), f0));
        _mm256_storeu_pd((double *)(d + u + 2), cmul256(_mm256_loadu_pd((const double *)(d + u + 2)), f1));
        lo = cmul256(lo, step);
        hi = cmul256(hi, step);
    }
    _mm256_zeroupper(); /* as in phase_segment_avx512 */
}
#endif

pf_phase_segment_fn pf_phase_segment_on(pf_vector_path path)
{
    if (!pf_vector_path_runs(path)) return NULL;
#ifdef PF_HAVE_X86_PHASE
    if (path == PF_PATH_AVX512) return phase_segment_avx512;
    if (path == PF_PATH_AVX2) return phase_segment_avx2;
#endif
    return phase_segment_plain;
}

pf_phase_segment_fn pf_phase_segment_kernel(void) { return pf_phase_segment_on(pf_vector_path_chosen()); }

/* 1D: data *= scale * P0 by segments; a segment that holds the jump of the
 * FFT order from positive to negative wave numbers, or the short last one,
 * uses the full table. */
static void apply_phase_1d(pf_grid *g, double complex *data, double scale, size_t j0, size_t len)
{
    const pf_flight_tables *ft = &g->flight;
    const pf_phase_row_fn phase_row = pf_phase_kernel();
    if (!ft->seg_start) {
        phase_row((double *)(data + j0), (const double *)(ft->phase[0] + j0), scale, 0.0, len);
        return;
    }
    const pf_phase_segment_fn seg = pf_phase_segment_kernel();
    const size_t n = g->n[0], jump = (n + 1) / 2;
    for (size_t j = j0; j < j0 + len; j += PF_PHASE_SEG) {
        size_t q = j / PF_PHASE_SEG, end = j + PF_PHASE_SEG;
        if (end > n || (j < jump && jump < end))
            phase_row((double *)(data + j), (const double *)(ft->phase[0] + j), scale, 0.0, (end > n ? n : end) - j);
        else
            seg(data + j, ft->chirp, scale * ft->seg_start[q], ft->seg_ratio[q]);
    }
}

/* 1D data are cut into rows of this many points so the pass runs in
 * parallel; the split does not affect the result (each point is independent). */
#define PHASE_CHUNK ((size_t)8192)

/* data *= scale * P0[i] * P1[j] * P2[k]; the outer products are formed per
 * row, so the inner loop is one complex multiply by a table entry and one by
 * the row factor per point. */
static void apply_phase(pf_grid *g, double complex *data, double scale)
{
    const size_t n0 = g->n[0], n1 = g->n[1], n2 = g->n[2];
    double complex *const *P = g->flight.phase;
    const int threads = g->ctx->threads;
    const pf_phase_row_fn phase_row = pf_phase_kernel();
    if (g->dim == 1) {
        const ptrdiff_t chunks = (ptrdiff_t)((n0 + PHASE_CHUNK - 1) / PHASE_CHUNK);
#pragma omp parallel for num_threads(threads) schedule(static)
        for (ptrdiff_t c = 0; c < chunks; c++) {
            size_t j0 = (size_t)c * PHASE_CHUNK, len = n0 - j0 < PHASE_CHUNK ? n0 - j0 : PHASE_CHUNK;
            apply_phase_1d(g, data, scale, j0, len);
        }
        return;
    }
    if (g->dim == 2) {
#pragma omp parallel for num_threads(threads) schedule(static)
        for (ptrdiff_t i = 0; i < (ptrdiff_t)n0; i++) {
            double complex r = scale * P[0][i];
            phase_row((double *)(data + (size_t)i * n1), (const double *)P[1], creal(r), cimag(r), n1);
        }
        return;
    }
#pragma omp parallel for collapse(2) num_threads(threads) schedule(static)
    for (ptrdiff_t i = 0; i < (ptrdiff_t)n0; i++) {
        for (ptrdiff_t j = 0; j < (ptrdiff_t)n1; j++) {
            double complex r = scale * P[0][i] * P[1][j];
            double *row = (double *)(data + ((size_t)i * n1 + (size_t)j) * n2);
            phase_row(row, (const double *)P[2], creal(r), cimag(r), n2);
        }
    }
}

/* Flights from position representation on 2D/3D grids are deferred and
 * then fused (pf_fused.c).  In 1D there is no fused form: FFTW's 1D
 * transforms leave no axis to fuse the phase into. */
static int can_defer(const pf_wave *w)
{
    return w->grid->dim >= 2 && w->rep == PF_POSITION;
}

/* The flight phase c m^2 is computed in doubles; beyond 2^52 rad their
 * spacing exceeds a radian and the phases, hence the result, are noise.
 * Physical flights on a grid that holds the state stay near n rad at the
 * Nyquist limit, so only absurd times reach this. */
#define FLIGHT_PHASE_MAX 4503599627370496.0 /* 2^52 */

static pf_status check_phase_range(pf_grid *g, double t, double tau)
{
    for (int a = 0; a < g->dim; a++) {
        double dk = PF_TWO_PI / g->span[a], m = (double)(g->n[a] / 2);
        double top = fabs(0.5 * tau * dk * dk) * m * m;
        if (!(top <= FLIGHT_PHASE_MAX))
            return pf_fail(g->ctx, PF_EINVAL,
                           "a flight of %g s turns the phase at the Nyquist limit of axis %d by %g rad, beyond %g rad "
                           "where doubles cannot hold a phase to a radian (the result would be noise); fly a shorter "
                           "time, or use w:fly_long(t) for a long flight",
                           t, a + 1, top, FLIGHT_PHASE_MAX);
    }
    return PF_OK;
}

pf_status pf_wave_fly(pf_wave *w, double t)
{
    pf_grid *g = w->grid;
    if (!isfinite(t)) return pf_fail(g->ctx, PF_EINVAL, "flight time must be finite, got %g", t);
    double tau = PF_HBAR * t / w->mass;
    pf_status range = check_phase_range(g, t, w->deferred.active ? w->deferred.tau + tau : tau);
    if (range) return range;
    double norm = pf_wave_last_logged_norm(w); /* carried: a flight keeps it */
    if (g->dist) {
        /* Split over MPI ranks: never deferred, the phase pass runs on the
         * transposed momentum slab (pf_dist.c). */
        pf_status s = pf_dist_fly(w, t, tau);
        if (s) return s;
    } else if (w->deferred.active || can_defer(w)) {
        if (!w->deferred.active) w->deferred.tau = 0.0;
        w->deferred.active = 1;
        w->deferred.tau += tau; /* flights compose: the phases add */
    } else {
        double scale = 1.0;
        if (w->rep == PF_POSITION) {
            /* Fuse the 1/N of the forward transform into the phase pass. */
            pf_status s = pf_grid_fft(g, w->store, -1);
            if (s) return s;
            scale = 1.0 / (double)g->total;
            w->rep = PF_MOMENTUM;
        }
        flight_tables(g, tau);
        apply_phase(g, w->store, scale);
    }
    w->clock += t;
    pf_wave_log_step(w, "flight", "momentum-exact", t, 0.0, norm);
    return PF_OK;
}

/* A deferred flight as separate steps: forward transform, phase pass, and
 * the backward transform when position is wanted. */
static pf_status settle_separately(pf_wave *w, pf_rep rep, double scale)
{
    pf_grid *g = w->grid;
    pf_status s = pf_grid_fft(g, w->store, -1);
    if (s) return s;
    w->deferred.active = 0;
    apply_phase(g, w->store, scale);
    w->rep = PF_MOMENTUM;
    pf_guard_after_transform(w);
    return rep == PF_POSITION ? pf_wave_to(w, PF_POSITION) : PF_OK;
}

pf_status pf_wave_settle_to(pf_wave *w, pf_rep rep)
{
    if (!w->deferred.active) return PF_OK;
    pf_grid *g = w->grid;
    flight_tables(g, w->deferred.tau);
    const double scale = 1.0 / (double)g->total;
    /* Both paths fail only while planning, before the data are touched; the
     * flight then stays deferred and the state stays consistent. */
    if (rep == PF_MOMENTUM) return settle_separately(w, rep, scale);
    /* The momentum guard band, if still unknown, is summed inside the sweep;
     * one over the threshold sends the state through momentum representation
     * once, where the guard words its warning. */
    const int measure = !pf_guard_momentum_known(w);
    double sums[PF_MAX_DIM];
    pf_status s = pf_fused_flight(g, w->store, scale, measure ? sums : NULL);
    /* The sweep's planning needs a scratch array and buffers; under a tight
     * memory cap, or when the system is short of memory, the separate steps,
     * which need neither, still work. */
    if (s == PF_ELIMIT || s == PF_ENOMEM) return settle_separately(w, rep, scale);
    if (s) return s;
    w->deferred.active = 0;
    if (measure && pf_guard_take_momentum_sums(w, sums)) {
        s = pf_wave_to(w, PF_MOMENTUM);
        return s ? s : pf_wave_to(w, PF_POSITION);
    }
    pf_guard_after_transform(w);
    return PF_OK;
}

pf_status pf_wave_settle(pf_wave *w) { return pf_wave_settle_to(w, PF_POSITION); }
