/* bench_scaled.c - speed of the scaled-grid long flight against one raw FFT.
 *
 * For each size and thread count it reports
 *   onto    a single-FFT scaled flight from position representation onto a
 *           grid that already exists (steady state: the flight alternates
 *           between two grids, t then -t, so plans and tables are reused;
 *           the flight runs in place: chirp pass, FFT, chirp pass),
 *   new     the same flight onto a grid made for it (pf_wave_fly_scaled:
 *           grid tables and a plan, from wisdom after the first),
 * in ms and as a ratio to ONE raw FFTW transform of the same size, planning
 * flags and threads.  Target: onto/fft <= 1.5.  The raw transform and the
 * flights are timed in interleaved rounds (best of each kept), so a burst of
 * load from other processes hits both alike; then the onto ratio once more
 * in alternation call by call (bench_paired, median of per-pair ratios).
 * Usage: bench_scaled [quick | 3d]  (quick: 2D 1024^2 and 1D 2^22; 3d: the
 * 3D 128^3 rows alone). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
#include "pf_constants.h"
#include "pf_grid.h"
#include "pf_longflight.h"
#include "pf_wave.h"

static const double MASS = 1.443160648e-25; /* 87Rb-like; the value does not affect the timing */

typedef struct onto_arg {
    pf_wave *w;
    pf_grid *there, *back;
    double t;
    int flip;
} onto_arg;

static void run_onto(void *user)
{
    onto_arg *a = user;
    if (a->flip ^= 1) pf_wave_fly_onto(a->w, a->t, a->there);
    else pf_wave_fly_onto(a->w, -a->t, a->back);
}

static void run_new(void *user)
{
    onto_arg *a = user;
    pf_wave_fly_scaled(a->w, (a->flip ^= 1) ? a->t : -a->t, NULL, NULL);
}

/* CPU milliseconds per call of fn (best of `blocks` blocks of >= 0.1 s of
 * CPU): with one thread this ignores time the process spends descheduled,
 * which makes the ratio robust on a machine shared with other jobs. */
static double cpu_ms(bench_fn fn, void *user, int blocks)
{
    double best = 1e300;
    for (int b = 0; b < blocks; b++) {
        struct timespec a, z;
        int reps = 0;
        clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &a);
        double used;
        do {
            fn(user);
            reps++;
            clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &z);
            used = (double)(z.tv_sec - a.tv_sec) + 1e-9 * (double)(z.tv_nsec - a.tv_nsec);
        } while (used < 0.1);
        best = fmin(best, 1e3 * used / reps);
    }
    return best;
}

/* One unnormalised forward transform multiplies the norm by sqrt(N); undone
 * (untimed) so that repeated transforms neither overflow nor sink into
 * subnormal numbers. */
static void fft_one_rescale(void *user)
{
    bench_fft_pair *p = user;
    double inv = 1.0 / sqrt((double)p->total);
    for (size_t i = 0; i < p->total; i++) p->run[i] *= inv;
}

static int fill_gauss(void *user, const double *x, double complex *v)
{
    const int *dim = user;
    double r2 = 0;
    for (int a = 0; a < *dim; a++) r2 += x[a] * x[a];
    *v = exp(-r2 / (4 * 1e-12));
    return 0;
}

static void bench_size(pf_context *ctx, int dim, const int *n, int threads, int quick)
{
    char shape[64];
    size_t points[3];
    double span[3], span_there[3];
    pf_context_set_threads(ctx, threads);
    /* A 1 um packet on a box of 64 um per axis; t = 2 t_c, so the output
     * spacing is twice the input spacing. */
    double t = 0;
    for (int a = 0; a < dim; a++) {
        points[a] = (size_t)n[a];
        span[a] = 64e-6;
    }
    double dx = span[0] / (double)points[0];
    t = 2 * MASS * (double)points[0] * dx * dx / (PF_TWO_PI * PF_HBAR);
    for (int a = 0; a < dim; a++) {
        double dxa = span[a] / (double)points[a];
        span_there[a] = PF_TWO_PI * PF_HBAR * t / (MASS * dxa);
    }
    pf_grid *g, *there;
    pf_wave *w;
    if (pf_grid_new(ctx, dim, points, span, NULL, &g) || pf_grid_new(ctx, dim, points, span_there, NULL, &there) ||
        pf_wave_new(g, MASS, &w)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        exit(1);
    }
    pf_wave_fill(w, PF_POSITION, fill_gauss, &dim);
    onto_arg arg = {w, there, g, t, 0};
    run_onto(&arg); /* plans both grids (wisdom) before the raw FFT is timed */
    run_onto(&arg);
    bench_fft_pair raw; /* only its forward transform is timed */
    bench_fft_pair_init(&raw, dim, n, threads, FFTW_MEASURE);
    double one = 1e300, onto = 1e300, fresh = 1e300;
    for (int round = 0; round < 5; round++) {
        one = fmin(one, bench_ms(bench_fft_one_run, &raw, 1, 0.1));
        onto = fmin(onto, bench_ms(run_onto, &arg, 1, 0.1));
        fresh = fmin(fresh, bench_ms(run_new, &arg, 1, 0.1));
    }
    double cpu_one = 0, cpu_onto = 0;
    if (threads == 1) {
        cpu_one = 1e300;
        cpu_onto = 1e300;
        for (int round = 0; round < 3; round++) {
            cpu_one = fmin(cpu_one, cpu_ms(bench_fft_one_run, &raw, 1));
            cpu_onto = fmin(cpu_onto, cpu_ms(run_onto, &arg, 1));
        }
    }
    /* The same ratio timed in alternation, call by call (bench_paired). */
    double ms_one, ms_onto, q[2];
    double paired = bench_paired(bench_fft_one_run, &raw, fft_one_rescale, run_onto, &arg, quick ? 0.5 : 1.5, &ms_one,
                                 &ms_onto, q);
    bench_fft_pair_free(&raw);
    bench_shape(dim, n, shape, sizeof shape);
    printf("scaled  %-16s threads %d   paired: onto %9.3f ms   one fft %9.3f ms   ratio %5.3f (quartiles "
           "%5.3f-%5.3f; target <= 1.5) %s\n",
           shape, threads, ms_onto, ms_one, paired, q[0], q[1], bench_mark(paired, 1.5));
    printf("scaled  %-16s threads %d   onto %9.3f ms   new grid %9.3f ms   one fft %9.3f ms   "
           "ratio onto/fft %5.3f   new/fft %5.3f\n",
           shape, threads, onto, fresh, one, onto / one, fresh / one);
    if (threads == 1)
        printf("scaled  %-16s threads 1   cpu time: onto %9.3f ms   one fft %9.3f ms   ratio %5.3f (target <= 1.5) %s\n",
               shape, cpu_onto, cpu_one, cpu_onto / cpu_one, bench_mark(cpu_onto / cpu_one, 1.5));
    fflush(stdout);
    pf_wave_free(w);
    pf_grid_release(there);
    pf_grid_release(g);
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0;
    const char *wisdom = getenv("PSIFLIGHT_WISDOM");
    pf_context *ctx = pf_context_new();
    if (wisdom && *wisdom) pf_context_set_wisdom_path(ctx, wisdom);
    static const int sizes[][4] = {{2, 1024, 1024}, {1, 1 << 22}, {3, 128, 128, 128}};
    int count = quick ? 2 : (int)(sizeof sizes / sizeof sizes[0]); /* quick: 2D 1024^2, 1D 2^22 */
    int first = argc > 1 && strcmp(argv[1], "3d") == 0 ? 2 : 0;
    for (int s = first; s < count; s++)
        for (int threads = 1; threads <= 2; threads++) bench_size(ctx, sizes[s][0], sizes[s] + 1, threads, quick);
    pf_context_release(ctx);
    return 0;
}
