/* pf_splitstep.c - split-step Fourier evolution in a potential, Strang and
 * fourth-order Yoshida composition, optional mean field (see pf_splitstep.h). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_cis.h"
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_kernels.h"
#include "pf_splitstep.h"

#define MAX_STAGES 3
#define MAX_STEPS 1000000000.0

/* A scheme: kinetic fractions c[0..s-1] of the step; potential fractions at
 * the stage boundaries follow as (c[j-1] + c[j]) / 2. */
typedef struct scheme {
    int stages;
    double c[MAX_STAGES];
} scheme;

static scheme make_scheme(int order)
{
    scheme s;
    memset(&s, 0, sizeof s);
    if (order == 2) {
        s.stages = 1;
        s.c[0] = 1.0;
    } else {
        double cbrt2 = cbrt(2.0);
        double w1 = 1.0 / (2.0 - cbrt2), w0 = -cbrt2 / (2.0 - cbrt2);
        s.stages = 3;
        s.c[0] = w1;
        s.c[1] = w0;
        s.c[2] = w1;
    }
    return s;
}

/* Workspace of one evolve call. */
typedef struct evolve_ws {
    pf_grid *g;
    pf_wave *w;
    const pf_evolve_spec *spec;
    scheme sc;
    double h;                       /* step (s) */
    double complex **kin[2];        /* kinetic tables for c = w1 (or 1) and w0 (g->evolve_kin) */
    double complex *e[3];           /* static factors by kind of sub-step (pf_evolve_cache.e) */
    unsigned *formed;               /* bit k: e[k] is formed (the cache's, or own_formed) */
    unsigned own_formed;
    double fe[3];                   /* phase per J of V of the exponential each kind is formed with */
    int borrowed;                   /* e[] belong to spec->cache */
    double *vbuf;                   /* V(x, t) samples */
    double vbuf_time;               /* time of the samples in vbuf */
    int vbuf_valid;                 /* vbuf holds V at vbuf_time (the start probe) */
    size_t bytes_c, bytes_r;
    /* Measuring on the way (see seg_probe): */
    struct seg_probe *probe;        /* one per segment (g->evolve_probe), NULL: no pass measures;
                                       with them the last pass always finds the peak it leaves */
    size_t probe_segs, seg_len;
    int probe_range;                /* the first pass finds V's range over the occupied points */
    double cut;                     /* occupied: |psi|^2 >= cut (OCCUPIED_FRACTION of the peak) */
    int passes;                     /* potential passes planned so far */
    int peak_measured;              /* the last pass measured the peak it leaves */
} evolve_ws;

static void ws_free(evolve_ws *ws)
{
    pf_context *ctx = ws->g->ctx;
    /* kin[][] belong to the grid (g->evolve_kin). */
    for (int k = 0; k < 3; k++)
        if (ws->e[k] && !ws->borrowed) pf_free(ctx, ws->e[k], ws->bytes_c);
    if (ws->vbuf) pf_free(ctx, ws->vbuf, ws->bytes_r);
}

/* min and max of V; PF_EINVAL naming the point when a value is not finite.
 * On a grid split over MPI ranks (pf_dist.h) V holds this rank's points,
 * and every rank learns the extremes and whether any rank failed. */
static pf_status potential_range(pf_grid *g, const double *V, double *lo, double *hi)
{
    double a = INFINITY, b = -INFINITY;
    const size_t n = pf_dist_position_values(g);
    size_t bad = n;
    for (size_t i = 0; i < n && bad == n; i++) {
        double v = V[i];
        if (!isfinite(v)) bad = i;
        if (v < a) a = v;
        if (v > b) b = v;
    }
    if (pf_dist_any(g, bad < n)) {
        if (bad == n) return pf_fail(g->ctx, PF_EINVAL, "the potential is not finite at a point another MPI rank holds");
        size_t first, end;
        pf_grid_local_range(g, &first, &end);
        return pf_fail(g->ctx, PF_EINVAL, "the potential at point %zu is %g, not finite", first + bad + 1, V[bad]);
    }
    pf_dist_minmax(g, &a, &b);
    *lo = a;
    *hi = b;
    return PF_OK;
}

/* Density below this fraction of the peak does not count as "occupied" when
 * judging the potential phase per step. */
#define OCCUPIED_FRACTION 1e-12

/* Range of V over the points the state occupies (density >= OCCUPIED_FRACTION
 * of its peak).  A trap's values at the grid edges, where the state is
 * absent, do not limit the step. */
static void occupied_range(const pf_wave *w, const double *V, double peak, double *lo, double *hi)
{
    double a = INFINITY, b = -INFINITY, cut = OCCUPIED_FRACTION * peak;
    const ptrdiff_t n = (ptrdiff_t)pf_dist_position_values(w->grid);
    const double complex *store = w->store;
    /* Extremes do not depend on the order they are found in: threaded. */
#pragma omp parallel for num_threads(w->grid->ctx->threads) schedule(static) reduction(min : a) reduction(max : b)
    for (ptrdiff_t i = 0; i < n; i++) {
        double complex z = store[i];
        if (creal(z) * creal(z) + cimag(z) * cimag(z) < cut) continue;
        if (V[i] < a) a = V[i];
        if (V[i] > b) b = V[i];
    }
    pf_dist_minmax(w->grid, &a, &b);
    if (a > b) a = b = 0;
    *lo = a;
    *hi = b;
}

static double max_density(pf_wave *w)
{
    double m = 0, unused = 0;
    const ptrdiff_t n = (ptrdiff_t)pf_dist_position_values(w->grid);
    const double complex *store = w->store;
#pragma omp parallel for num_threads(w->grid->ctx->threads) schedule(static) reduction(max : m)
    for (ptrdiff_t i = 0; i < n; i++) {
        double complex z = store[i];
        double r = creal(z) * creal(z) + cimag(z) * cimag(z);
        if (r > m) m = r;
    }
    pf_dist_minmax(w->grid, &unused, &m);
    return m;
}

/* The peak density the last evolve call measured in its last pass
 * (pf_wave.peak_kept), when nothing can have touched the data since: every
 * logged step and every unlogged change through pf_wave_data or with
 * pf_guard_forget drop it, and the checks here catch the rest - a change of
 * representation (a transform there and back changes the samples by
 * rounding), storage, log length or carried norm, or of the value at the
 * peak's own point. */
static int kept_peak(const pf_wave *w, double *peak)
{
    const double complex *z = w->store;
    if (!w->peak_kept.valid || w->grid->dist || w->deferred.active || w->rep != w->peak_kept.rep ||
        z != w->peak_kept.store || w->log.count != w->peak_kept.log_count ||
        memcmp(&w->norm_now, &w->peak_kept.norm, sizeof w->norm_now) != 0 ||
        memcmp(&z[w->peak_kept.at], &w->peak_kept.z, sizeof *z) != 0)
        return 0;
    *peak = w->peak_kept.value;
    return 1;
}

static double start_peak(pf_wave *w)
{
    double peak;
    return kept_peak(w, &peak) ? peak : max_density(w);
}

/* The state's peak density and the range of V over the occupied points
 * ([0, 0] without V): two threaded passes over the state, or one when the
 * last call left the peak (kept_peak).  One pass that
 * kept each block's own peak and range and read again only the blocks
 * straddling the global cut gave the same values but measured slower on the
 * reference machine (set-up rows of bench_splitstep, 2D/3D, 1-2 threads:
 * 0.72-1.06 steps against 0.44-0.67 for the repeat call), so the two
 * vectorised passes stay. */
static void state_extent(pf_wave *w, const double *V, double *peak, double *lo, double *hi)
{
    *peak = start_peak(w);
    *lo = *hi = 0;
    if (V) occupied_range(w, V, *peak, lo, hi);
}

/* One potential sub-step as a pointwise factor: either exp(-i (V + g
 * |psi|^2) f) evaluated per point (mean field, V(x, t), or no stored
 * exponentials), or a product of the stored static exponentials. */
typedef struct pot_pass {
    int active;                     /* 0: the factor is 1, nothing to do */
    int direct;                     /* evaluate per point (V, f, gc) */
    const double *V;                /* V per point, NULL: 0 (static: V to form from) */
    double f, gc;                   /* f = coef h / hbar; gc = g (static: the exponent's f) */
    const double complex *e;        /* static: the stored factor of this kind */
    /* Static, first pass of this kind for this potential and step: the
     * pass forms the factor into form (== e) piece by piece, just before
     * using each piece, from V (kind 0: e1 = exp(-i V f)) or from the
     * formed e1 (kind 1: e1 e1; kind 2: e1 exp(-i V f)). */
    double complex *form;
    int kind;
    const double complex *e1;
    /* Measured on the way, per segment (seg_probe; NULL: not by this pass). */
    struct seg_probe *range_rec;    /* first pass: V's range over the occupied points, before the factor */
    const double *range_V;
    double cut;
    struct seg_probe *peak_rec;     /* last pass: the peak density the factor leaves */
    size_t seg_len;
} pot_pass;

/* What a call's first and last potential passes measure while the data are
 * in cache, per segment: a chunk of the fused sweeps or a block of the
 * separate passes, each handled by one pot_apply call, so no two threads
 * share a record; the segments do not depend on the thread count, and
 * minima and maxima not on the order they are combined in.  The first pass
 * finds the range of V over the occupied points (the same comparison as
 * occupied_range, on the same samples, before its factor changes them);
 * the last finds the peak density and its first point, kept on the wave
 * for the next call (kept_peak). */
typedef struct seg_probe {
    double lo, hi;
    double peak;
    size_t at, len;                 /* the piece [at, at + len) where the peak first appears */
} seg_probe;

/* Both probes keep LANES independent minima / maxima and combine them at
 * the end: one running extreme is a chain of dependent instructions (and
 * an OpenMP simd reduction kept it in memory), which measured 0.8 ns per
 * point on data already in cache; extremes do not depend on the order they
 * are found in, so the values are the same. */
#define LANES 4

static void probe_range(seg_probe *r, const double complex *d, const double *V, double cut, size_t m)
{
    const double *z = (const double *)d;
    double lo[LANES], hi[LANES];
    for (int k = 0; k < LANES; k++) {
        lo[k] = r->lo;
        hi[k] = r->hi;
    }
    size_t i = 0;
    for (; i + LANES <= m; i += LANES) {
        for (int k = 0; k < LANES; k++) {
            const double *p = z + 2 * (i + k);
            /* the comparison of occupied_range, on the same samples */
            int in = !(p[0] * p[0] + p[1] * p[1] < cut);
            double v = V[i + k], low = in ? v : INFINITY, high = in ? v : -INFINITY;
            lo[k] = low < lo[k] ? low : lo[k];
            hi[k] = high > hi[k] ? high : hi[k];
        }
    }
    for (; i < m; i++) {
        const double *p = z + 2 * i;
        if (p[0] * p[0] + p[1] * p[1] < cut) continue;
        lo[0] = V[i] < lo[0] ? V[i] : lo[0];
        hi[0] = V[i] > hi[0] ? V[i] : hi[0];
    }
    for (int k = 0; k < LANES; k++) {
        if (lo[k] < r->lo) r->lo = lo[k];
        if (hi[k] > r->hi) r->hi = hi[k];
    }
}

static void probe_peak(seg_probe *r, const double complex *d, size_t at, size_t m)
{
    const double *z = (const double *)d;
    double t[LANES];
    for (int k = 0; k < LANES; k++) t[k] = -1.0;
    size_t i = 0;
    for (; i + LANES <= m; i += LANES) {
        for (int k = 0; k < LANES; k++) {
            const double *p = z + 2 * (i + k);
            double dens = p[0] * p[0] + p[1] * p[1];
            t[k] = dens > t[k] ? dens : t[k];
        }
    }
    for (; i < m; i++) {
        double dens = z[2 * i] * z[2 * i] + z[2 * i + 1] * z[2 * i + 1];
        t[0] = dens > t[0] ? dens : t[0];
    }
    double top = t[0];
    for (int k = 1; k < LANES; k++) top = t[k] > top ? t[k] : top;
    /* A new peak for this segment: only its piece is kept.  On a rising
     * profile most pieces hold a new peak, and finding the point in each
     * was a scalar scan of half a piece; keep_peak finds the point in the
     * one piece that holds the call's peak (the last pass leaves the data
     * as they were measured). */
    if (!(top > r->peak)) return;
    r->peak = top;
    r->at = at;
    r->len = m;
}

/* The first point of the piece [at, at + len) whose density is top. */
static size_t first_at_peak(const double complex *d, size_t at, size_t len, double top)
{
    const double *z = (const double *)(d + at);
    size_t i = 0;
    while (i + 1 < len && !(z[2 * i] * z[2 * i] + z[2 * i + 1] * z[2 * i + 1] == top)) i++;
    return at + i;
}

/* Points whose phases are formed before one call of pf_cis_multiply. */
#define PIECE 512

/* Forms the points [at, at + m) (m <= PIECE) of a stored factor (see
 * pot_pass.form).  The products are formed as pot_apply formed them per
 * piece in every pass before they were kept: a copy of e1 times e1 (or e2)
 * through the phase kernel with the factor 1. */
static void form_piece(const pot_pass *p, size_t at, size_t m)
{
    double phase[PIECE];
    double complex e2[PIECE];
    double complex *out = p->form + at;
    if (p->kind != 1)
        for (size_t i = 0; i < m; i++) phase[i] = p->V[at + i] * p->f;
    if (p->kind == 0) {
        pf_cis_minus(phase, out, m);
        return;
    }
    const double complex *e1 = p->e1 + at, *other = e1;
    if (p->kind == 2) {
        pf_cis_minus(phase, e2, m);
        other = e2;
    }
    memcpy(out, e1, m * sizeof *out);
    pf_phase_kernel()((double *)out, (const double *)other, 1.0, 0.0, m);
}

/* The direct factor exp(-i (V + g |psi|^2) f) on the points [at, at + m)
 * (m <= PIECE): phases of the piece, then one vectorised exp(-i phase). */
static void direct_piece(const pot_pass *p, double complex *restrict d, size_t at, size_t m)
{
    const double *V = p->V ? p->V + at : NULL;
    const double f = p->f, gc = p->gc;
    const double *z = (const double *)d;
    double phase[PIECE];
    /* One branch-free loop per case, so each vectorises; every case forms
     * exactly the expression of the general one, u = (V or 0.0) + gc
     * |z|^2, phase = u f (no contraction: the build has no fused
     * multiply-add), so the bits are unchanged. */
    if (V && gc != 0) {
#pragma omp simd
        for (size_t i = 0; i < m; i++)
            phase[i] = (V[i] + gc * (z[2 * i] * z[2 * i] + z[2 * i + 1] * z[2 * i + 1])) * f;
    } else if (gc != 0) {
#pragma omp simd
        for (size_t i = 0; i < m; i++) phase[i] = (0.0 + gc * (z[2 * i] * z[2 * i] + z[2 * i + 1] * z[2 * i + 1])) * f;
    } else if (V) {
#pragma omp simd
        for (size_t i = 0; i < m; i++) phase[i] = V[i] * f;
    } else {
        for (size_t i = 0; i < m; i++) phase[i] = 0.0 * f;
    }
    pf_cis_multiply(d, phase, m);
}

/* Applies the factor to d[0..count), the points [begin, begin + count),
 * a piece at a time: a static factor's first pass forms it a piece at a
 * time, each piece used while in cache, and the measurements on the way
 * (seg_probe) read each piece just before and after its factor.  The
 * stored factors multiply through the vectorised phase kernel
 * (pf_flight.c), which forms the same products in the same order as plain
 * complex multiplication, piece or whole row alike. */
static void pot_apply(const pot_pass *p, double complex *restrict d, size_t begin, size_t count)
{
    const pf_phase_row_fn row = pf_phase_kernel();
    seg_probe *range = p->range_rec ? p->range_rec + begin / p->seg_len : NULL;
    seg_probe *peak = p->peak_rec ? p->peak_rec + begin / p->seg_len : NULL;
    if (!p->direct && !p->form && !range && !peak) {
        row((double *)d, (const double *)(p->e + begin), 1.0, 0.0, count);
        return;
    }
    for (size_t b = 0; b < count; b += PIECE) {
        size_t m = count - b < PIECE ? count - b : PIECE;
        if (range) probe_range(range, d + b, p->range_V + begin + b, p->cut, m);
        if (p->direct) {
            direct_piece(p, d + b, begin + b, m);
        } else {
            if (p->form) form_piece(p, begin + b, m);
            row((double *)(d + b), (const double *)(p->e + begin + b), 1.0, 0.0, m);
        }
        if (peak) probe_peak(peak, d + b, begin + b, m);
    }
}

static void pot_chunk(void *user, double complex *chunk, size_t begin, size_t count)
{
    pot_apply(user, chunk, begin, count);
}

/* The factor over the whole grid (the separate-steps path): blocks of a
 * fixed size shared out among threads. */
#define POT_BLOCK ((size_t)16384)
static void pot_apply_all(evolve_ws *ws, const pot_pass *p)
{
    if (!p->active) return;
    double complex *d = ws->w->store;
    const size_t total = pf_dist_position_values(ws->g); /* this rank's points when split */
    const ptrdiff_t blocks = (ptrdiff_t)((total + POT_BLOCK - 1) / POT_BLOCK);
#pragma omp parallel for num_threads(ws->g->ctx->threads) schedule(static)
    for (ptrdiff_t b = 0; b < blocks; b++) {
        size_t begin = (size_t)b * POT_BLOCK, count = total - begin < POT_BLOCK ? total - begin : POT_BLOCK;
        pot_apply(p, d + begin, begin, count);
    }
}

/* The potential for fraction coef of the step at clock time t, as a pass
 * (a V(x, t) callback is sampled here).  kind: 0 an end half (c1/2), 1 a
 * merged boundary (c1), 2 an inner boundary ((c1 + c0)/2) - the static
 * arrays are indexed by it. */
static pf_status potential_factor(evolve_ws *ws, double coef, int kind, double t, pot_pass *p)
{
    const pf_evolve_spec *sp = ws->spec;
    memset(p, 0, sizeof *p);
    if (sp->varying) {
        if (!(ws->vbuf_valid && ws->vbuf_time == t)) {
            if (sp->varying(sp->user, t, ws->vbuf) != 0) return PF_ECALLBACK;
            double lo, hi;
            pf_status s = potential_range(ws->g, ws->vbuf, &lo, &hi);
            if (s) return s;
        }
        ws->vbuf_valid = 0;
        p->V = ws->vbuf;
    } else if (sp->g != 0 || !sp->potential) {
        if (!sp->potential && sp->g == 0) return PF_OK;
        p->V = sp->potential;
    } else {
        p->active = 1;
        p->e = ws->e[kind];
        if (!(*ws->formed & (1u << kind))) {
            p->form = ws->e[kind];
            p->kind = kind;
            p->e1 = ws->e[0];
            p->V = sp->potential;
            p->f = ws->fe[kind];
        }
        return PF_OK;
    }
    p->active = 1;
    p->direct = 1;
    p->f = coef * ws->h / PF_HBAR;
    p->gc = sp->g;
    return PF_OK;
}

/* The measurements a pass makes on the way: the first pass of a call the
 * occupied range (when asked), the last one (kind 0 after the first) the
 * peak it leaves. */
static void attach_probes(evolve_ws *ws, pot_pass *p, int kind)
{
    const int first = ws->passes++ == 0;
    if (!p->active || !ws->probe) return;
    p->seg_len = ws->seg_len;
    if (first && ws->probe_range) {
        p->range_rec = ws->probe;
        p->range_V = ws->spec->potential;
        p->cut = ws->cut;
    }
    if (!first && kind == 0) {
        p->peak_rec = ws->probe;
        ws->peak_measured = 1;
    }
}

static pf_status potential_plan(evolve_ws *ws, double coef, int kind, double t, pot_pass *p)
{
    pf_status s = potential_factor(ws, coef, kind, t, p);
    if (!s) attach_probes(ws, p, kind);
    return s;
}

/* After a whole pass: the factor it formed is kept for the passes after
 * it (and, in a cache, for later calls). */
static void pass_done(evolve_ws *ws, const pot_pass *p)
{
    if (p->form) *ws->formed |= 1u << p->kind;
}

static pf_status potential_step(evolve_ws *ws, double coef, int kind, double t)
{
    pot_pass p;
    pf_status s = potential_plan(ws, coef, kind, t, &p);
    if (s) return s;
    pot_apply_all(ws, &p);
    pass_done(ws, &p);
    return PF_OK;
}

static pf_status kinetic_step(evolve_ws *ws, int table)
{
    if (ws->g->dist) {
        pf_dist_kinetic(ws->g, ws->w->store, ws->kin[table], 1.0 / (double)ws->g->total);
        return PF_OK;
    }
    pf_status s = pf_grid_fft(ws->g, ws->w->store, -1);
    if (s) return s;
    pf_kernel_axis_multiply(ws->g, ws->w->store, (const double complex *const *)ws->kin[table],
                            1.0 / (double)ws->g->total);
    return pf_grid_fft(ws->g, ws->w->store, +1);
}

/* Which kinetic table stage j uses, and the potential sub-step that follows
 * it: fraction, kind (see potential_plan) and clock time. */
static int stage_table(const scheme *sc, int j) { return sc->stages == 1 || j != 1 ? 0 : 1; }

static void stage_potential(const evolve_ws *ws, size_t step, size_t n, int j, double tau, double t0, double t,
                            double *coef, int *kind, double *when)
{
    const scheme *sc = &ws->sc;
    if (j + 1 < sc->stages) {
        *coef = 0.5 * (sc->c[j] + sc->c[j + 1]);
        *kind = 2;
        *when = t0 + ws->h * ((double)step + tau);
    } else if (step + 1 < n) {
        *coef = 0.5 * (sc->c[j] + sc->c[0]);
        *kind = 1;
        *when = t0 + ws->h * (double)(step + 1);
    } else {
        *coef = 0.5 * sc->c[j];
        *kind = 0;
        *when = t0 + t;
    }
}

/* The separate steps: P(c0/2) K(c0) P((c0+c1)/2) K(c1) ... K(c_last)
 * P(merged or c_last/2), each K a full forward and backward transform. */
static pf_status run_separate(evolve_ws *ws, size_t n, double t0, double t)
{
    const scheme *sc = &ws->sc;
    pf_status s = potential_step(ws, 0.5 * sc->c[0], 0, t0);
    for (size_t step = 0; step < n && !s; step++) {
        /* One poll per step (a few FFTs): a stop request ends a long evolve
         * within one step instead of at its end. */
        if ((s = pf_context_poll_stop(ws->g->ctx))) break;
        if (step) pf_context_progress(ws->g->ctx, "evolve", (double)step, (double)n);
        double tau = 0;
        for (int j = 0; j < sc->stages && !s; j++) {
            s = kinetic_step(ws, stage_table(sc, j));
            if (s) break;
            tau += sc->c[j];
            double coef, when;
            int kind;
            stage_potential(ws, step, n, j, tau, t0, t, &coef, &kind, &when);
            s = potential_step(ws, coef, kind, when);
        }
    }
    return s;
}

/* The same sequence in two sweeps over memory per kinetic sub-step on a
 * 2D/3D grid (pf_fused_chunks, pf_fused_columns): between sub-steps the data
 * stay transformed over the trailing axes, and each chunk goes backward,
 * takes the potential factor and goes forward again while in cache; the
 * kinetic factor is applied to column blocks between their axis-0
 * transforms.  A stop or a failing callback first brings the data back to
 * position representation. */
static pf_status run_fused(evolve_ws *ws, size_t n, double t0, double t)
{
    pf_grid *g = ws->g;
    double complex *d = ws->w->store;
    const scheme *sc = &ws->sc;
    const double scale = 1.0 / (double)g->total;
    pot_pass p;
    pf_status s = potential_plan(ws, 0.5 * sc->c[0], 0, t0, &p);
    if (s) return s;
    pf_fused_chunks(g, d, 0, p.active ? pot_chunk : NULL, &p, 1);
    pass_done(ws, &p);
    for (size_t step = 0; step < n; step++) {
        if ((s = pf_context_poll_stop(g->ctx))) break;
        if (step) pf_context_progress(g->ctx, "evolve", (double)step, (double)n);
        double tau = 0;
        for (int j = 0; j < sc->stages; j++) {
            pf_fused_columns(g, d, scale, ws->kin[stage_table(sc, j)]);
            tau += sc->c[j];
            double coef, when;
            int kind;
            stage_potential(ws, step, n, j, tau, t0, t, &coef, &kind, &when);
            if ((s = potential_plan(ws, coef, kind, when, &p))) break;
            int last = step + 1 == n && j + 1 == sc->stages;
            pf_fused_chunks(g, d, 1, p.active ? pot_chunk : NULL, &p, !last);
            pass_done(ws, &p);
            if (last) return PF_OK;
        }
        if (s) break;
    }
    pf_fused_chunks(g, d, 1, NULL, NULL, 0);
    return s;
}

void pf_evolve_cache_init(pf_evolve_cache *c) { memset(c, 0, sizeof *c); }

void pf_evolve_cache_clear(pf_evolve_cache *c)
{
    for (int k = 0; k < 3; k++)
        if (c->e[k]) pf_free(c->ctx, c->e[k], c->bytes);
    pf_evolve_cache_init(c);
}

void pf_evolve_tables_release(pf_grid *g)
{
    for (int k = 0; k < 2; k++) {
        for (int a = 0; a < PF_MAX_DIM; a++) pf_context_free(g->ctx, g->evolve_kin[k].table[a]);
        memset(&g->evolve_kin[k], 0, sizeof g->evolve_kin[k]);
    }
    if (g->evolve_probe) pf_free(g->ctx, g->evolve_probe, g->evolve_probe_bytes);
    g->evolve_probe = NULL;
    g->evolve_probe_bytes = 0;
}

/* Points ws->kin[i] at the grid's tables for tau, making them in a slot
 * this call does not use yet (bit k of *claimed) when neither slot has
 * them. */
static pf_status kinetic_tables(evolve_ws *ws, int i, double tau, unsigned *claimed)
{
    pf_grid *g = ws->g;
    int k = 0;
    while (k < 2 && !(g->evolve_kin[k].valid && g->evolve_kin[k].tau == tau)) k++;
    if (k == 2) {
        /* An empty slot first, else the first one this call leaves free. */
        k = -1;
        for (int j = 0; j < 2 && k < 0; j++)
            if (!(*claimed & (1u << j)) && !g->evolve_kin[j].valid) k = j;
        for (int j = 0; j < 2 && k < 0; j++)
            if (!(*claimed & (1u << j))) k = j;
        g->evolve_kin[k].valid = 0;
        for (int a = 0; a < g->dim; a++) {
            if (!g->evolve_kin[k].table[a]) {
                g->evolve_kin[k].table[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
                if (!g->evolve_kin[k].table[a]) return pf_context_status(g->ctx);
            }
        }
        pf_kernel_kinetic_tables(g, tau, NULL, g->evolve_kin[k].table);
        g->evolve_kin[k].tau = tau;
        g->evolve_kin[k].valid = 1;
    }
    *claimed |= 1u << k;
    ws->kin[i] = g->evolve_kin[k].table;
    return PF_OK;
}

static pf_status prepare(evolve_ws *ws)
{
    pf_grid *g = ws->g;
    const pf_evolve_spec *sp = ws->spec;
    int ntab = ws->sc.stages == 1 ? 1 : 2;
    unsigned claimed = 0;
    for (int i = 0; i < ntab; i++) {
        double c = i == 0 ? ws->sc.c[0] : ws->sc.c[1];
        pf_status s = kinetic_tables(ws, i, PF_HBAR * c * ws->h / ws->w->mass, &claimed);
        if (s) return s;
    }
    if (sp->varying) {
        /* vbuf is the start probe, allocated by pf_wave_evolve. */
    } else if (sp->potential && sp->g == 0) {
        /* The factors themselves are formed by the first pass that uses
         * each (pot_pass.form): the pass touches the data anyway, and a
         * call of one step never uses the merged boundary e1 e1. */
        ws->fe[0] = ws->fe[1] = 0.5 * ws->sc.c[0] * ws->h / PF_HBAR;
        ws->fe[2] = 0.5 * ws->sc.c[1] * ws->h / PF_HBAR;
        ws->formed = &ws->own_formed;
        pf_evolve_cache *c = sp->cache;
        if (c && c->e[0] && c->potential == sp->potential && c->h == ws->h && c->order == sp->order &&
            c->bytes == ws->bytes_c && c->ctx == g->ctx) {
            memcpy(ws->e, c->e, sizeof ws->e);
            ws->formed = &c->formed;
            ws->borrowed = 1;
            return PF_OK;
        }
        const int kinds = ws->sc.stages > 1 ? 3 : 2;
        if (c) {
            /* Arrays of the right size are refilled rather than freed and
             * made again (fresh pages cost a fault each on first touch);
             * they pass to this call, which owns them until it stores them
             * back below.  Others are freed before new ones are made.  The
             * potential's values were still checked. */
            const double *checked = c->checked;
            if (c->ctx == g->ctx && c->bytes == ws->bytes_c) {
                memcpy(ws->e, c->e, sizeof ws->e);
                memset(c->e, 0, sizeof c->e);
            }
            pf_evolve_cache_clear(c);
            c->checked = checked;
            c->ctx = g->ctx;
            for (int k = kinds; k < 3; k++) {
                if (ws->e[k]) pf_free(g->ctx, ws->e[k], ws->bytes_c);
                ws->e[k] = NULL;
            }
        }
        for (int k = 0; k < kinds; k++)
            if (!ws->e[k] && !(ws->e[k] = pf_alloc(g->ctx, ws->bytes_c))) return pf_context_status(g->ctx);
        if (c) {
            /* Nothing formed yet (c->formed is 0 after the clear): the
             * passes of this call set its bits as they form the factors. */
            c->ctx = g->ctx;
            c->potential = sp->potential;
            c->h = ws->h;
            c->order = sp->order;
            memcpy(c->e, ws->e, sizeof c->e);
            c->bytes = ws->bytes_c;
            ws->formed = &c->formed;
            ws->borrowed = 1;
        }
    }
    return PF_OK;
}

/* The arguments a call cannot run with: PF_EINVAL naming the value. */
static pf_status check_spec(pf_context *ctx, int dim, double t, const pf_evolve_spec *spec)
{
    if (!isfinite(t)) return pf_fail(ctx, PF_EINVAL, "time must be finite (s), got %g", t);
    if (spec->order != 2 && spec->order != 4)
        return pf_fail(ctx, PF_EINVAL, "order must be 2 (Strang) or 4 (Yoshida), got %d", spec->order);
    if (!isfinite(spec->g)) return pf_fail(ctx, PF_EINVAL, "g must be finite (J m^%d), got %g", dim, spec->g);
    if (isnan(spec->dt) || isinf(spec->dt) || spec->dt < 0)
        return pf_fail(ctx, PF_EINVAL, "dt must be finite and positive (s; 0 picks the default), got %g", spec->dt);
    return PF_OK;
}

/* The potential's range over the occupied points at the start, for the
 * default step and the phase warning ([0, 0] without a potential).  A V(x,
 * t) is probed into ws->vbuf, which the first sub-step then reuses; a
 * cache vouches for static values checked before (its owner clears it
 * when they change). */
static pf_status starting_range(evolve_ws *ws, int on_the_way, double *peak, double *lo, double *hi)
{
    const pf_evolve_spec *spec = ws->spec;
    pf_wave *w = ws->w;
    pf_context *ctx = ws->g->ctx;
    pf_status s;
    *lo = *hi = 0;
    if (spec->varying) {
        ws->vbuf = pf_alloc(ctx, ws->bytes_r);
        if (!ws->vbuf) return pf_context_status(ctx);
        if (spec->varying(spec->user, w->clock, ws->vbuf) != 0) return PF_ECALLBACK;
        if ((s = potential_range(ws->g, ws->vbuf, lo, hi))) return s;
        state_extent(w, ws->vbuf, peak, lo, hi);
        ws->vbuf_time = w->clock;
        ws->vbuf_valid = 1;
    } else if (spec->potential) {
        pf_evolve_cache *c = spec->cache;
        if (!(c && c->checked == spec->potential && c->ctx == ctx)) {
            if ((s = potential_range(ws->g, spec->potential, lo, hi))) return s;
            if (c) {
                if (c->ctx != ctx) pf_evolve_cache_clear(c);
                c->ctx = ctx;
                c->checked = spec->potential;
            }
        }
        if (on_the_way) {
            /* The range is found by the first pass (probe_range). */
            *peak = start_peak(w);
            *lo = *hi = 0;
            ws->cut = OCCUPIED_FRACTION * *peak;
            ws->probe_range = 1;
        } else {
            state_extent(w, spec->potential, peak, lo, hi);
        }
    } else if (spec->g != 0) {
        /* Without V and mean field nothing here depends on the state. */
        state_extent(w, NULL, peak, lo, hi);
    }
    return PF_OK;
}

/* The range the first pass found (probe_range), as occupied_range gives it. */
static void probed_range(const evolve_ws *ws, double *lo, double *hi)
{
    double a = INFINITY, b = -INFINITY;
    for (size_t k = 0; k < ws->probe_segs; k++) {
        if (ws->probe[k].lo < a) a = ws->probe[k].lo;
        if (ws->probe[k].hi > b) b = ws->probe[k].hi;
    }
    if (a > b) a = b = 0;
    *lo = a;
    *hi = b;
}

/* After the call's step is logged: the peak its last pass found, and the
 * first point holding it, kept for the next call (kept_peak). */
static void keep_peak(const evolve_ws *ws)
{
    pf_wave *w = ws->w;
    double top = -1.0;
    size_t at = 0, len = 1;
    for (size_t k = 0; k < ws->probe_segs; k++) {
        if (ws->probe[k].peak > top) {
            top = ws->probe[k].peak;
            at = ws->probe[k].at;
            len = ws->probe[k].len;
        }
    }
    at = first_at_peak(w->store, at, len, top);
    w->peak_kept.valid = 1;
    w->peak_kept.value = top;
    w->peak_kept.at = at;
    w->peak_kept.z = w->store[at];
    w->peak_kept.log_count = w->log.count;
    w->peak_kept.norm = w->norm_now;
    w->peak_kept.rep = w->rep;
    w->peak_kept.store = w->store;
}

/* The number of steps for t and the step h = t / n: dt when given, else
 * the default phase per step over the spread of V + g |psi|^2 (one step of
 * t when nothing varies). */
static pf_status step_count(evolve_ws *ws, double t, double spread, size_t *steps)
{
    const pf_evolve_spec *spec = ws->spec;
    pf_context *ctx = ws->g->ctx;
    double dt = spec->dt > 0 ? spec->dt : (spread > 0 ? PF_EVOLVE_PHASE_DEFAULT * PF_HBAR / spread : fabs(t));
    double nsteps = t == 0 ? 0 : ceil(fabs(t) / dt * (1.0 - 1e-12));
    if (t != 0 && nsteps < 1) nsteps = 1;
    if (!(nsteps <= MAX_STEPS))
        return pf_fail(ctx, PF_EINVAL, "%g s in steps of %g s needs %.3g steps, more than %.0f; "
                       "give a larger dt", t, dt, nsteps, MAX_STEPS);
    *steps = (size_t)nsteps;
    ws->h = *steps ? t / (double)*steps : 0.0;
    return PF_OK;
}

/* The potential phase per step over the spread of V + g |psi|^2; warns when
 * it is large. */
static double step_phase(const evolve_ws *ws, double spread)
{
    double phase = spread * fabs(ws->h) / PF_HBAR;
    if (phase > PF_EVOLVE_PHASE_WARN)
        pf_context_warn(ws->g->ctx, "evolve: the potential phase per step is %.3g rad (range %.3g J x dt %.3g s / hbar), "
                        "above %.3g rad; the splitting error may be large - use a smaller dt",
                        phase, spread, fabs(ws->h), PF_EVOLVE_PHASE_WARN);
    return phase;
}

/* The steps themselves: fused sweeps on a single-process 2D/3D grid
 * (unless asked for separate steps, or the fused buffers do not fit the
 * memory cap: the separate steps need none), else separate transforms
 * (1D; a grid split over MPI ranks, whose kinetic step runs on the
 * transposed slab, pf_dist_kinetic). */
static pf_status run_steps(evolve_ws *ws, size_t n, double t, int separate)
{
    pf_grid *g = ws->g;
    const double t0 = ws->w->clock;
    int fused = g->dim >= 2 && !separate && !g->dist;
    if (fused) {
        pf_status s = pf_fused_prepare_chunks(g);
        if (s == PF_ELIMIT || s == PF_ENOMEM) fused = 0;
        else if (s) return s;
    }
    if (!g->dist) {
        /* Records for the measurements on the way (seg_probe), one per
         * chunk of the fused sweeps or block of the separate passes. */
        const size_t total = pf_dist_position_values(g);
        ws->seg_len = fused ? g->fused.rows * (g->total / g->n[0]) : POT_BLOCK;
        ws->probe_segs = (total + ws->seg_len - 1) / ws->seg_len;
        const size_t bytes = pf_bytes(ws->probe_segs, sizeof(seg_probe));
        if (g->evolve_probe_bytes < bytes) {
            if (g->evolve_probe) pf_free(g->ctx, g->evolve_probe, g->evolve_probe_bytes);
            g->evolve_probe_bytes = 0;
            if (!(g->evolve_probe = pf_alloc(g->ctx, bytes))) return pf_context_status(g->ctx);
            g->evolve_probe_bytes = bytes;
        }
        ws->probe = g->evolve_probe;
        for (size_t k = 0; k < ws->probe_segs; k++) ws->probe[k] = (seg_probe){INFINITY, -INFINITY, -1.0, 0, 1};
    }
    pf_context_progress(g->ctx, "evolve", 0, (double)n);
    pf_status s = fused ? run_fused(ws, n, t0, t) : run_separate(ws, n, t0, t);
    pf_context_progress(g->ctx, "evolve", s ? -1.0 : (double)n, (double)n);
    return s;
}

static pf_status evolve(pf_wave *w, double t, const pf_evolve_spec *spec, pf_evolve_info *info, int separate)
{
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    pf_status s = check_spec(ctx, g->dim, t, spec);
    if (s) return s;
    double norm = pf_wave_last_logged_norm(w);
    if ((s = pf_wave_to(w, PF_POSITION))) return s;

    evolve_ws ws;
    memset(&ws, 0, sizeof ws);
    ws.g = g;
    ws.w = w;
    ws.spec = spec;
    ws.sc = make_scheme(spec->order);
    ws.bytes_c = pf_bytes(pf_dist_position_values(g), sizeof(double complex));
    ws.bytes_r = pf_bytes(pf_dist_position_values(g), sizeof(double));
    /* From here every exit goes through done: ws owns what it allocated. */
    /* With dt given the step count does not depend on the state, so a
     * static V's range over the occupied points is found by the first
     * potential pass (probe_range) instead of a pass of its own; the phase
     * per step and its warning follow the steps. */
    const int on_the_way = spec->dt > 0 && !spec->varying && !g->dist;
    double lo = 0, hi = 0, peak = 0, phase = 0;
    size_t n = 0;
    if ((s = starting_range(&ws, on_the_way, &peak, &lo, &hi))) goto done;
    if ((s = step_count(&ws, t, (hi - lo) + fabs(spec->g) * peak, &n))) goto done;
    if (!ws.probe_range) phase = step_phase(&ws, (hi - lo) + fabs(spec->g) * peak);
    if (n > 0) {
        const double t0 = w->clock;
        if ((s = prepare(&ws))) goto done;
        if ((s = run_steps(&ws, n, t, separate))) {
            pf_guard_forget(w); /* the data changed part-way without a logged step */
            goto done;
        }
        w->clock = t0 + t;
        if (ws.probe_range) probed_range(&ws, &lo, &hi);
    }
    if (ws.probe_range) phase = step_phase(&ws, (hi - lo) + fabs(spec->g) * peak);
    if (info) {
        info->steps = n;
        info->dt = ws.h;
        info->phase_per_step = phase;
    }
    const char *method = spec->order == 2 ? (spec->g != 0 ? "strang-gp" : "strang")
                                          : (spec->g != 0 ? "yoshida-4-gp" : "yoshida-4");
    /* An empty call logs the scheme's plain name, as before. */
    if (n == 0) method = spec->order == 2 ? "strang" : "yoshida-4";
    pf_wave_log_step(w, "evolve", method, n ? t : 0.0, 0.0, norm);
    if (ws.peak_measured) keep_peak(&ws);
done:
    ws_free(&ws);
    return s;
}

pf_status pf_wave_evolve(pf_wave *w, double t, const pf_evolve_spec *spec, pf_evolve_info *info)
{
    return evolve(w, t, spec, info, 0);
}

pf_status pf_wave_evolve_separate(pf_wave *w, double t, const pf_evolve_spec *spec, pf_evolve_info *info)
{
    return evolve(w, t, spec, info, 1);
}
