/* bench_splitstep.c - speed of the split step in a static potential
 * against a raw FFTW forward+backward pair of the same size, threads and
 * planning, timed in alternation (bench_paired: median of per-pair ratios).
 *
 * Rows, with their speed targets (docs/performance.md): the Strang step (<= 1.15 pairs), the
 * Strang step with mean field g |psi|^2 (<= 1.25), the fourth-order step
 * (three Strang sub-steps, <= 3.2), and each call's set-up in steps
 * (<= 1): a repeat call with the same potential and step (a pf.potential's
 * cache and the grid's kept tables: nothing to make), and a call with a new
 * step (exponentials and kinetic tables made afresh), both as a 1-step call
 * and in a call of several steps.
 * Each 1D row is followed by its floor row: the raw FFTW pair plus the
 * streaming passes no split step can avoid (floor_run), timed in the same
 * run, printed with the target and the measured step.  Each Strang row is
 * also followed by the floor of the set-up (setup_floor_run), in steps.
 * Usage: bench_splitstep [quick | big | 1d | setup]  (full: 1D 2^20, 2D
 * 1024^2 and 3D 128^3; quick: 1D 2^18, 2D 512^2 and 3D 128^3, shorter
 * timing; big: 3D 256^3 only, about ten minutes on the reference machine,
 * which is why the full `make bench` leaves it out; 1d: the full run's 1D
 * 2^20 rows only; setup: the full run's rows without the 1D floor rows, for
 * work on the set-up). */
#include <stddef.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
#include "pf_cis.h"
#include "pf_constants.h"
#include "pf_grid.h"
#include "pf_splitstep.h"
#include "pf_wave.h"

static int fill_gauss(void *user, const double *x, double complex *v)
{
    const int *dim = user;
    double r2 = 0;
    for (int a = 0; a < *dim; a++) r2 += x[a] * x[a];
    *v = exp(-r2 / 0.02);
    return 0;
}

static void quiet(void *user, const char *text) { (void)user; (void)text; }

/* One evolve call of `steps` steps; `dts` > 1 cycles the step through that
 * many values a part in 1e9 apart, so that no call finds its kinetic
 * tables or exponentials kept from the call before (the grid keeps two
 * step sizes): the set-up of a call with a new step. */
typedef struct evolve_arg {
    pf_wave *w;
    pf_evolve_spec spec;
    int steps, dts, turn;
} evolve_arg;

static void run_evolve(void *user)
{
    evolve_arg *e = user;
    pf_evolve_spec spec = e->spec;
    if (e->dts > 1) spec.dt *= 1.0 + 1e-9 * (double)(e->turn++ % e->dts);
    if (pf_wave_evolve(e->w, spec.dt * e->steps, &spec, NULL) != PF_OK) {
        fprintf(stderr, "bench: evolve failed: %s\n", pf_context_message(pf_grid_context(pf_wave_grid(e->w))));
        exit(1);
    }
}

/* The floor of a 1D split step: what any split step of that kind must do
 * per step, written as raw loops beside the raw FFTW pair (no engine code),
 * so that a target below it is out of reach on this machine whatever the
 * engine does.  Per Strang step: the forward transform, one pass
 * multiplying by the kinetic table (with the 1/N of the unnormalised
 * pair), the backward transform and one pass multiplying by the potential
 * factor (consecutive steps merge their half steps into one factor, so one
 * pass).  The mean-field floor's potential pass also reads V and forms
 * (V + g |psi|^2) f per point, but multiplies by a stored table instead of
 * evaluating exp(-i phase): it leaves out the exponential, which the
 * engine evaluates vectorised (docs/performance.md gives its cost from
 * callgrind), so it is a lower bound.  The fourth-order step is three
 * Strang sub-steps: three pairs and six passes. */
typedef struct floor_op {
    const bench_fft_pair *raw;
    fftw_complex *d;            /* the data, same size and alignment as raw->data */
    const fftw_complex *kin;    /* unit-modulus phases times 1/N */
    const fftw_complex *pot;    /* unit-modulus phases */
    const double *V;            /* mean field only: the potential, read per point */
    double gc;                  /* mean field: g (the phase is V + g |psi|^2, scaled so it stays small) */
    int substeps, threads;
} floor_op;

/* d[i] *= t[i] (written out: C's complex product would call the
 * inf/nan-careful helper, which no engine kernel pays). */
static inline void multiply_piece(double *restrict d, const double *restrict t, size_t n)
{
    for (size_t i = 0; i < n; i++) {
        double a = d[2 * i], b = d[2 * i + 1], c = t[2 * i], e = t[2 * i + 1];
        d[2 * i] = a * c - b * e;
        d[2 * i + 1] = a * e + b * c;
    }
}

/* The same over the whole array, shared among threads. */
static void floor_multiply(double *restrict d, const double *restrict t, size_t n, int threads)
{
#pragma omp parallel for num_threads(threads) schedule(static)
    for (ptrdiff_t i = 0; i < (ptrdiff_t)n; i++) multiply_piece(d + 2 * i, t + 2 * i, 1);
}

/* The mean-field pass without the exponential: the phase (V + g |d|^2) is
 * formed per point and added to the stored factor's angle at first order,
 * d *= t (1 - i phase), so the data stay bounded and the work is the
 * multiply count of phase and product. */
static void floor_mean_field(double *restrict d, const double *restrict t, const double *restrict V, double gc,
                             size_t n, int threads)
{
#pragma omp parallel for num_threads(threads) schedule(static)
    for (ptrdiff_t i = 0; i < (ptrdiff_t)n; i++) {
        double a = d[2 * i], b = d[2 * i + 1];
        double u = V[i] + gc * (a * a + b * b);
        double c = t[2 * i] + u * t[2 * i + 1], e = t[2 * i + 1] - u * t[2 * i];
        d[2 * i] = a * c - b * e;
        d[2 * i + 1] = a * e + b * c;
    }
}

static void floor_run(void *user)
{
    const floor_op *f = user;
    const size_t n = f->raw->total;
    for (int s = 0; s < f->substeps; s++) {
        fftw_execute_dft(f->raw->fwd, f->d, f->d);
        floor_multiply((double *)f->d, (const double *)f->kin, n, f->threads);
        fftw_execute_dft(f->raw->bwd, f->d, f->d);
        if (f->V) floor_mean_field((double *)f->d, (const double *)f->pot, f->V, f->gc, n, f->threads);
        else floor_multiply((double *)f->d, (const double *)f->pot, n, f->threads);
    }
}

/* Times the floor of one kind against the raw pair (paired, same run) and
 * prints it beside the kind's target and measured step. */
static void floor_row(const char *name, const char *shape, int threads, bench_fft_pair *raw, int substeps,
                      int mean_field, double measured, double target, double secs)
{
    const size_t n = raw->total;
    fftw_complex *d = fftw_malloc(n * sizeof *d), *kin = fftw_malloc(n * sizeof *kin),
                 *pot = fftw_malloc(n * sizeof *pot);
    double *V = malloc(n * sizeof *V);
    if (!d || !kin || !pot || !V) {
        fprintf(stderr, "bench: out of memory\n");
        exit(1);
    }
    for (size_t i = 0; i < n; i++) {
        double a = 1e-3 * (double)i, b = 2e-3 * (double)(i % 1000);
        kin[i] = (cos(a) + I * sin(a)) / (double)n;
        pot[i] = cos(b) - I * sin(b);
        V[i] = 1e-9 * (double)(i % 100);
        d[i] = exp(-1e-10 * (double)i * (double)i) + 0.0 * I;
    }
    floor_op f = {raw, d, kin, pot, mean_field ? V : NULL, 1e-9, substeps, threads};
    double pair, ms, q[2];
    double r = bench_paired(bench_fft_pair_run, raw, bench_fft_pair_rescale, floor_run, &f, secs, &pair, &ms, q);
    printf("%-26s %-16s threads %d   floor %5.3f fft pairs (%d pair%s + %d passes%s)   measured %5.3f   target <= %.2f %s"
           "   [floor quartiles %5.3f-%5.3f]\n",
           name, shape, threads, r, substeps, substeps > 1 ? "s" : "", 2 * substeps,
           mean_field ? ", no exponential" : "", measured, target,
           target < r ? "[target below floor]" : "[target above floor]", q[0], q[1]);
    fflush(stdout);
    fftw_free(d);
    fftw_free(kin);
    fftw_free(pot);
    free(V);
}

/* The floor of an evolve call's set-up, in steps: what a one-step call
 * must do beyond a step of a longer call.  Both cost the same transforms
 * (a one-step call splits the step's backward-forward sweep into a forward
 * sweep at its start and a backward one at its end), so the one-step call
 * adds one sweep over the data with its potential factor: read and write
 * the data and read the factor (a repeat call), and with a new step the
 * factor exp(-i V dt / 2 hbar) formed in that sweep - V read, the
 * exponential evaluated and the factor written for the passes after it.
 * Written as plain loops over pieces of 512 points in blocks shared among
 * threads, as the engine's passes are; the exponential is the engine's
 * vectorised one (pf_cis_minus: libm's is slower, so this is the lower
 * figure).  The sweep's transforms are left out, so this is a lower bound
 * of the set-up whatever the engine does. */
typedef struct setup_floor {
    double complex *d, *e;
    const double *V;
    double f;
    size_t n;
    int threads, form;
} setup_floor;

enum { FLOOR_PIECE = 512, FLOOR_BLOCK = 16384 };

static void setup_floor_run(void *user)
{
    const setup_floor *s = user;
    const ptrdiff_t blocks = (ptrdiff_t)((s->n + FLOOR_BLOCK - 1) / FLOOR_BLOCK);
#pragma omp parallel for num_threads(s->threads) schedule(static)
    for (ptrdiff_t b = 0; b < blocks; b++) {
        double phase[FLOOR_PIECE];
        size_t end = (size_t)(b + 1) * FLOOR_BLOCK < s->n ? (size_t)(b + 1) * FLOOR_BLOCK : s->n;
        for (size_t at = (size_t)b * FLOOR_BLOCK; at < end; at += FLOOR_PIECE) {
            size_t m = end - at < FLOOR_PIECE ? end - at : FLOOR_PIECE;
            if (s->form) {
                for (size_t i = 0; i < m; i++) phase[i] = s->V[at + i] * s->f;
                pf_cis_minus(phase, s->e + at, m);
            }
            multiply_piece((double *)(s->d + at), (const double *)(s->e + at), m);
        }
    }
}

/* Times both set-up floors against the raw pair and prints them in steps
 * of the engine's measured step beside the measured set-ups. */
static void setup_floor_row(const char *shape, int threads, bench_fft_pair *raw, const double *V, double dt,
                            double step, double measured_repeat, double measured_new, double secs)
{
    const size_t n = raw->total;
    double complex *d = fftw_malloc(n * sizeof *d), *e = fftw_malloc(n * sizeof *e);
    if (!d || !e) {
        fprintf(stderr, "bench: out of memory\n");
        exit(1);
    }
    for (size_t i = 0; i < n; i++) {
        d[i] = exp(-1e-10 * (double)i * (double)i);
        e[i] = 1.0;
    }
    /* The end half step's phase V dt / 2 hbar. */
    setup_floor rep = {d, e, V, 0.5 * dt / PF_HBAR, n, threads, 0}, fresh = rep;
    fresh.form = 1;
    double pair, ms, q[2];
    double r_rep = bench_paired(bench_fft_pair_run, raw, bench_fft_pair_rescale, setup_floor_run, &rep, secs, &pair,
                                &ms, q);
    double r_new = bench_paired(bench_fft_pair_run, raw, bench_fft_pair_rescale, setup_floor_run, &fresh, secs, &pair,
                                &ms, q);
    printf("%-26s %-16s threads %d   set-up floor: repeat call %5.2f steps (measured %5.2f), new dt %5.2f steps "
           "(measured %5.2f)   [one sweep with the factor, formed in it for a new dt; step %5.3f pairs]\n",
           "splitstep-strang-setup-floor", shape, threads, r_rep / step, measured_repeat, r_new / step, measured_new,
           step);
    fflush(stdout);
    fftw_free(d);
    fftw_free(e);
}

/* The speed targets (docs/performance.md), as ratios to the raw FFTW pair timed alongside. */
typedef struct kind {
    const char *name;
    int order;
    double g;
    double target;
} kind;

static void bench_size(pf_context *ctx, int dim, const int *n, int threads, int quick, int setup_only)
{
    char shape[64];
    size_t points[3], total = 1;
    double span[3];
    for (int a = 0; a < dim; a++) {
        points[a] = (size_t)n[a];
        span[a] = 1.0;
        total *= points[a];
    }
    pf_context_set_threads(ctx, threads);
    pf_grid *g;
    pf_wave *w;
    if (pf_grid_new(ctx, dim, points, span, NULL, &g) || pf_wave_new(g, 1.0, &w)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        exit(1);
    }
    pf_wave_fill(w, PF_POSITION, fill_gauss, &dim);
    double *V = malloc(total * sizeof *V);
    if (!V) {
        fprintf(stderr, "bench: out of memory\n");
        exit(1);
    }
    for (size_t off = 0; off < total; off++) {
        size_t rest = off;
        double r2 = 0;
        for (int a = dim - 1; a >= 0; a--) {
            double x = pf_grid_x(g, a, rest % points[a]);
            rest /= points[a];
            r2 += x * x;
        }
        V[off] = 1e-30 * r2; /* a harmonic well; the value only sets phases */
    }
    unsigned flags = pf_context_planning(ctx) == PF_PLAN_ESTIMATE ? FFTW_ESTIMATE : FFTW_MEASURE;
    bench_fft_pair raw;
    bench_fft_pair_init(&raw, dim, n, threads, flags);
    bench_shape(dim, n, shape, sizeof shape);
    static const kind kinds[] = {
        {"splitstep-strang", 2, 0.0, 1.15}, {"splitstep-strang-gp", 2, 1e-40, 1.25}, {"splitstep-yoshida4", 4, 0.0, 3.2},
    };
    /* Each evolve call is timed against a raw pair right beside it
     * (bench_paired): the step is the difference of the ratios of calls of
     * 1 + LONG and of 1 step; what is left of the 1-step call is its
     * set-up.  A pf.potential object keeps its exponentials in a cache, as
     * here. */
    enum { LONG = 4 };
    const double secs = quick ? 0.5 : 1.0;
    for (size_t k = 0; k < sizeof kinds / sizeof kinds[0]; k++) {
        pf_evolve_cache cache;
        pf_evolve_cache_init(&cache);
        pf_evolve_spec spec = {.potential = V, .dt = 1e-6, .order = kinds[k].order, .g = kinds[k].g, .cache = &cache};
        evolve_arg one = {w, spec, 1, 1, 0}, many = {w, spec, 1 + LONG, 1, 0}, fresh = {w, spec, 1, 3, 0},
                   fresh_long = {w, spec, 1 + LONG, 3, 0};
        run_evolve(&one); /* plans, tables, first touch */
        double pair, ms1, msl, msf, q[2];
        double r1 = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_evolve, &one, secs, &pair, &ms1, q);
        double rl = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_evolve, &many, secs, &pair, &msl, q);
        double rf = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_evolve, &fresh, secs, &pair, &msf, q);
        /* A new step in a call of 1 + LONG steps: the merged factors a
         * 1-step call never uses are formed in its first steps' passes
         * (pf_splitstep.c), so the 1-step call alone would not show them. */
        double rfl = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_evolve, &fresh_long, secs, &pair,
                                  &msf, q);
        double step = (rl - r1) / LONG;
        double repeat_setup = (r1 - step) / step, new_setup = (rf - step) / step, new_long = (rfl - rl) / step;
        printf("%-20s %-16s threads %d   step %5.3f fft pairs (target <= %.2f) %s   set-up: repeat call %5.2f steps %s, "
               "new dt %5.2f steps %s, new dt in a %d-step call %5.2f steps %s (target <= 1)   [pair %8.3f ms]\n",
               kinds[k].name, shape, threads, step, kinds[k].target, bench_mark(step, kinds[k].target), repeat_setup,
               bench_mark(repeat_setup, 1.0), new_setup, bench_mark(new_setup, 1.0), 1 + LONG, new_long,
               bench_mark(new_long, 1.0), pair);
        fflush(stdout);
        pf_evolve_cache_clear(&cache);
        if (k == 0) setup_floor_row(shape, threads, &raw, V, spec.dt, step, repeat_setup, new_setup, 0.6 * secs);
        if (dim == 1 && !setup_only) {
            char floor_name[64];
            snprintf(floor_name, sizeof floor_name, "%s-floor", kinds[k].name);
            /* 0.6 of the rows' timing: the six floor rows add about 10 s,
             * keeping the full `make bench` under 13 minutes. */
            floor_row(floor_name, shape, threads, &raw, kinds[k].order == 4 ? 3 : 1, kinds[k].g != 0, step,
                      kinds[k].target, 0.6 * secs);
        }
    }
    bench_fft_pair_free(&raw);
    free(V);
    pf_wave_free(w);
    pf_grid_release(g);
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0, big = argc > 1 && strcmp(argv[1], "big") == 0;
    int only1d = argc > 1 && strcmp(argv[1], "1d") == 0, setup_only = argc > 1 && strcmp(argv[1], "setup") == 0;
    const char *wisdom = getenv("PSIFLIGHT_WISDOM");
    const char *planning = getenv("PSIFLIGHT_BENCH_PLANNING");
    pf_context *ctx = pf_context_new();
    pf_context_set_warn_handler(ctx, quiet, NULL);
    if (planning && strcmp(planning, "estimate") == 0) pf_context_set_planning(ctx, PF_PLAN_ESTIMATE);
    else if (wisdom && *wisdom) pf_context_set_wisdom_path(ctx, wisdom);
    static const int sizes[][4] = {{1, 1 << 20}, {2, 1024, 1024}, {3, 128, 128, 128}, {3, 256, 256, 256}};
    /* quick: every dimension, the 1D and 2D grids a quarter of the full
     * ones (the split-step rows in a few minutes on a shared machine) */
    static const int small[][4] = {{1, 1 << 18}, {2, 512, 512}, {3, 128, 128, 128}};
    if (quick) {
        for (int s = 0; s < 3; s++)
            for (int threads = 1; threads <= 2; threads++) bench_size(ctx, small[s][0], small[s] + 1, threads, quick, 0);
    } else {
        for (int s = big ? 3 : 0; s <= (big ? 3 : only1d ? 0 : 2); s++)
            for (int threads = 1; threads <= 2; threads++) bench_size(ctx, sizes[s][0], sizes[s] + 1, threads, quick, setup_only);
    }
    pf_context_release(ctx);
    return 0;
}
