/* bench_splitstep.c - speed of one split-step Fourier step in a static
 * potential against a raw FFTW forward+backward pair.
 *
 * A Strang step is one forward FFT, one kinetic pass, one backward FFT and
 * one potential pass, so its floor is the FFT pair; target step/pair <= 1.5
 * at 256^3.  The per-call set-up (exponentiating the potential, kinetic
 * tables) is separated out by timing evolutions of 1 and 5 steps and taking
 * the difference (best of interleaved repeats).  Also reported: the fourth-order step (three Strang
 * sub-steps, about 3 pairs) and the mean-field step (exponential per point).
 * Prints: name size threads ms_per_step ratio_to_fft_pair (wall clock) and
 * cpu_ratio, the same ratio in process CPU time, which a busy shared machine
 * disturbs far less (exact for one thread; with two, idle spinning of the
 * OpenMP threads counts too).
 * Usage: bench_splitstep [quick | big]  (quick: 128^3 only; big: 256^3 only). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
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

/* Process CPU time (s): with one thread it measures the work done and is
 * barely disturbed by other load on a shared machine, unlike wall time. */
static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

typedef struct timing { double wall, cpu; } timing; /* ms */

static void keep_best(timing *best, timing t)
{
    if (t.wall < best->wall) best->wall = t.wall;
    if (t.cpu < best->cpu) best->cpu = t.cpu;
}

/* One evolve call of `steps` steps of the scheme. */
static timing evolve_once(pf_wave *w, const pf_evolve_spec *spec, int steps)
{
    double t0 = bench_now(), c0 = cpu_now();
    if (pf_wave_evolve(w, spec->dt * steps, spec, NULL) != PF_OK) {
        fprintf(stderr, "bench: evolve failed: %s\n", pf_context_message(pf_grid_context(pf_wave_grid(w))));
        exit(1);
    }
    return (timing){1e3 * (bench_now() - t0), 1e3 * (cpu_now() - c0)};
}

typedef struct raw_pair {
    fftw_plan fwd, bwd;
    fftw_complex *data;
} raw_pair;

static timing raw_pair_once(raw_pair *p)
{
    double t0 = bench_now(), c0 = cpu_now();
    fftw_execute(p->fwd);
    fftw_execute(p->bwd);
    return (timing){1e3 * (bench_now() - t0), 1e3 * (cpu_now() - c0)};
}

static void bench_size(pf_context *ctx, int dim, const int *n, int threads)
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
    pf_wave_to(w, PF_MOMENTUM); /* plan (and store wisdom) outside the timing */
    pf_wave_to(w, PF_POSITION);
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
    raw_pair raw;
    raw.data = fftw_malloc(total * sizeof(fftw_complex));
    if (!raw.data) {
        fprintf(stderr, "bench: out of memory\n");
        exit(1);
    }
    fftw_plan_with_nthreads(threads);
    raw.fwd = fftw_plan_dft(dim, n, raw.data, raw.data, FFTW_FORWARD, flags);
    raw.bwd = fftw_plan_dft(dim, n, raw.data, raw.data, FFTW_BACKWARD, flags);
    for (size_t i = 0; i < total; i++) raw.data[i] = 1e-3 * (double)(i % 17) + I * 1e-3 * (double)(i % 5);
    bench_shape(dim, n, shape, sizeof shape);
    static const struct { const char *name; int order; double g; } kinds[] = {
        {"splitstep-strang", 2, 0.0}, {"splitstep-yoshida4", 4, 0.0}, {"splitstep-strang-gp", 2, 1e-40},
    };
    /* The raw pair and the two evolutions are timed in turn, and the best of
     * each is kept, so a burst of load on a shared machine spoils one sample
     * rather than the ratio.  (1 + LONG) steps minus 1 step removes the
     * per-call set-up from the per-step figure. */
    enum { LONG = 4 };
    const int REPS = total > ((size_t)1 << 22) ? 3 : 7; /* fewer repeats where one step takes long */
    raw_pair_once(&raw); /* warm-up */
    for (size_t k = 0; k < sizeof kinds / sizeof kinds[0]; k++) {
        pf_evolve_spec spec = {.potential = V, .dt = 1e-6, .order = kinds[k].order, .g = kinds[k].g};
        timing pair = {1e300, 1e300}, t1 = pair, tl = pair;
        evolve_once(w, &spec, 1); /* warm-up: first touch of the workspace */
        for (int r = 0; r < REPS; r++) {
            /* The raw array sat idle during the evolutions; the kernel may
             * have reclaimed or split its pages meanwhile (seen on this kind
             * of VM), so touch it with one untimed pair first. */
            raw_pair_once(&raw);
            keep_best(&pair, raw_pair_once(&raw));
            keep_best(&t1, evolve_once(w, &spec, 1));
            keep_best(&tl, evolve_once(w, &spec, 1 + LONG));
        }
        double step = (tl.wall - t1.wall) / LONG, setup = t1.wall - step;
        double step_cpu = (tl.cpu - t1.cpu) / LONG;
        printf("%-20s %-16s threads %d   %9.3f ms/step   ratio_to_fft_pair %5.3f   cpu_ratio %5.3f   "
               "(fft pair %8.3f ms; per-call set-up %8.3f ms)\n",
               kinds[k].name, shape, threads, step, step / pair.wall, step_cpu / pair.cpu, pair.wall, setup);
        fflush(stdout);
    }
    fftw_destroy_plan(raw.fwd);
    fftw_destroy_plan(raw.bwd);
    fftw_free(raw.data);
    free(V);
    pf_wave_free(w);
    pf_grid_release(g);
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0, big = argc > 1 && strcmp(argv[1], "big") == 0;
    const char *wisdom = getenv("PSIFLIGHT_WISDOM");
    const char *planning = getenv("PSIFLIGHT_BENCH_PLANNING");
    pf_context *ctx = pf_context_new();
    pf_context_set_warn_handler(ctx, quiet, NULL);
    if (planning && strcmp(planning, "estimate") == 0) pf_context_set_planning(ctx, PF_PLAN_ESTIMATE);
    else if (wisdom && *wisdom) pf_context_set_wisdom_path(ctx, wisdom);
    static const int sizes[][4] = {{1, 1 << 20}, {2, 1024, 1024}, {3, 128, 128, 128}, {3, 256, 256, 256}};
    int first = quick ? 2 : big ? 3 : 0, last = quick ? 2 : 3;
    for (int s = first; s <= last; s++)
        for (int threads = 1; threads <= 2; threads++) bench_size(ctx, sizes[s][0], sizes[s] + 1, threads);
    pf_context_release(ctx);
    return 0;
}
