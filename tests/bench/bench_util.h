/* bench_util.h - shared timing helpers for the benchmark programs.
 *
 * Every benchmark reports a ratio against raw FFTW timed in the same run, on
 * the same machine, with the same size, planning flags and thread count, so
 * the figures mean the same thing on any machine.  Timings are the best of a
 * few blocks, each long enough (>= 0.2 s) that the clock's resolution and
 * one-off page faults do not matter. */
#ifndef BENCH_UTIL_H
#define BENCH_UTIL_H

#include <complex.h>
#include <fftw3.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

static inline double bench_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

typedef void (*bench_fn)(void *user);

/* The mark printed beside a measured ratio and its target (a ratio at or
 * below the target meets it), so that a run's misses can be found with
 * grep MISSED.  One run on a shared machine is not the verdict: the
 * targets are judged on two consecutive quiet full runs. */
static inline const char *bench_mark(double value, double target) { return value <= target ? "[met]" : "[MISSED]"; }

/* Milliseconds per call of fn: best of `blocks` blocks, each repeating fn
 * until at least min_seconds have passed. */
static inline double bench_ms(bench_fn fn, void *user, int blocks, double min_seconds)
{
    double best = 1e300;
    fn(user); /* warm up: first touch of pages, caches */
    for (int b = 0; b < blocks; b++) {
        int reps = 0;
        double t0 = bench_now(), t1;
        do {
            fn(user);
            reps++;
            t1 = bench_now();
        } while (t1 - t0 < min_seconds);
        double ms = 1e3 * (t1 - t0) / reps;
        if (ms < best) best = ms;
    }
    return best;
}

/* Paired timing of two operations a and b, for a ratio b/a that does not
 * depend on how busy the machine happens to be.  On a shared or virtual
 * machine the speed drifts by 10-20 % over seconds, so timing a for a while
 * and then b for a while compares two different machines.  Instead the calls
 * alternate (a b, b a, a b, ...), each timed on its own, and the ratio is the
 * median of the per-pair ratios: both halves of a pair ran within a few
 * milliseconds of each other.  `after_a` (may be NULL) runs untimed after
 * each call of a, e.g. to undo the growth of unnormalised FFT data.  Runs
 * until both have used min_seconds and at least 15 pairs are in; *ms_a and
 * *ms_b get the medians of the single timings, quartiles (may be NULL) the
 * lower and upper quartile of the per-pair ratios, a measure of the noise.  Every operation timed here
 * takes milliseconds, so one call is far above the clock's resolution. */
#define BENCH_MAX_PAIRS 4001

static inline int bench_cmp_double(const void *x, const void *y)
{
    double a = *(const double *)x, b = *(const double *)y;
    return (a > b) - (a < b);
}

static inline double bench_median(double *v, int count)
{
    qsort(v, (size_t)count, sizeof *v, bench_cmp_double);
    return count % 2 ? v[count / 2] : 0.5 * (v[count / 2 - 1] + v[count / 2]);
}

static inline double bench_paired(bench_fn a, void *ua, bench_fn after_a, bench_fn b, void *ub, double min_seconds,
                                  double *ms_a, double *ms_b, double quartiles[2])
{
    static double ta[BENCH_MAX_PAIRS], tb[BENCH_MAX_PAIRS], ratio[BENCH_MAX_PAIRS];
    a(ua); /* warm up: first touch of pages, caches, plans */
    if (after_a) after_a(ua);
    b(ub);
    double sum_a = 0, sum_b = 0;
    int count = 0;
    while (count < BENCH_MAX_PAIRS && (count < 15 || sum_a < min_seconds || sum_b < min_seconds)) {
        for (int half = 0; half < 2; half++) {
            int do_a = (half == 0) == (count % 2 == 0);
            double t0 = bench_now();
            if (do_a) a(ua); else b(ub);
            double dt = bench_now() - t0;
            if (do_a) {
                ta[count] = dt;
                if (after_a) after_a(ua);
            } else {
                tb[count] = dt;
            }
        }
        sum_a += ta[count];
        sum_b += tb[count];
        ratio[count] = tb[count] / ta[count];
        count++;
    }
    double r = bench_median(ratio, count); /* sorts ratio[] */
    if (quartiles) {
        quartiles[0] = ratio[count / 4];
        quartiles[1] = ratio[(3 * count) / 4];
    }
    *ms_a = 1e3 * bench_median(ta, count);
    *ms_b = 1e3 * bench_median(tb, count);
    return r;
}

typedef struct bench_fft_pair {
    fftw_plan fwd, bwd;
    fftw_complex *data; /* the array planned on */
    fftw_complex *run;  /* the array transformed: data, or another array of the same size and alignment */
    size_t total;
} bench_fft_pair;

static void bench_fft_pair_run(void *user)
{
    bench_fft_pair *p = user;
    fftw_execute_dft(p->fwd, p->run, p->run);
    fftw_execute_dft(p->bwd, p->run, p->run);
}

static void bench_fft_one_run(void *user)
{
    bench_fft_pair *p = user;
    fftw_execute_dft(p->fwd, p->run, p->run);
}

/* A raw in-place FFTW forward+backward pair kept alive for paired timing
 * (bench_paired with bench_fft_pair_run and bench_fft_pair_rescale). */
static inline void bench_fft_pair_init(bench_fft_pair *p, int dim, const int *n, int threads, unsigned flags)
{
    size_t total = 1;
    for (int a = 0; a < dim; a++) total *= (size_t)n[a];
    p->data = fftw_malloc(total * sizeof(fftw_complex));
    if (!p->data) {
        fprintf(stderr, "bench: out of memory\n");
        exit(1);
    }
    fftw_plan_with_nthreads(threads);
    p->fwd = fftw_plan_dft(dim, n, p->data, p->data, FFTW_FORWARD, flags);
    p->bwd = fftw_plan_dft(dim, n, p->data, p->data, FFTW_BACKWARD, flags);
    p->total = total;
    p->run = p->data;
    for (size_t i = 0; i < total; i++) p->data[i] = 1e-3 * (double)(i % 17) + I * 1e-3 * (double)(i % 5);
}

/* An unnormalised pair multiplies the data by N; undone (untimed) so the
 * values never overflow to inf, whose arithmetic would not be a fair test. */
static inline void bench_fft_pair_rescale(void *user)
{
    bench_fft_pair *p = user;
    double inv = 1.0 / (double)p->total;
    for (size_t i = 0; i < p->total; i++) p->run[i] *= inv;
}

static inline void bench_fft_pair_free(bench_fft_pair *p)
{
    fftw_destroy_plan(p->fwd);
    fftw_destroy_plan(p->bwd);
    fftw_free(p->data);
}

/* Times raw in-place FFTW on an array of the given shape with the given
 * planner flags and threads: ms per forward+backward pair, and ms per single
 * forward transform in *one_ms (may be NULL). */
static inline double bench_raw_fft_ms(int dim, const int *n, int threads, unsigned flags, double *one_ms)
{
    bench_fft_pair p;
    bench_fft_pair_init(&p, dim, n, threads, flags);
    double pair = bench_ms(bench_fft_pair_run, &p, 3, 0.2);
    if (one_ms) *one_ms = bench_ms(bench_fft_one_run, &p, 3, 0.2);
    bench_fft_pair_free(&p);
    return pair;
}

/* "1D 4194304", "2D 1024x1024", "3D 256x256x256" */
static inline const char *bench_shape(int dim, const int *n, char *buf, size_t size)
{
    int len = snprintf(buf, size, "%dD %d", dim, n[0]);
    for (int a = 1; a < dim; a++) len += snprintf(buf + len, size - (size_t)len, "x%d", n[a]);
    return buf;
}

#endif
