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

typedef struct bench_fft_pair {
    fftw_plan fwd, bwd;
    fftw_complex *data;
} bench_fft_pair;

static void bench_fft_pair_run(void *user)
{
    bench_fft_pair *p = user;
    fftw_execute(p->fwd);
    fftw_execute(p->bwd);
}

static void bench_fft_one_run(void *user)
{
    bench_fft_pair *p = user;
    fftw_execute(p->fwd);
}

/* Times raw in-place FFTW on an array of the given shape with the given
 * planner flags and threads: ms per forward+backward pair, and ms per single
 * forward transform in *one_ms (may be NULL). */
static inline double bench_raw_fft_ms(int dim, const int *n, int threads, unsigned flags, double *one_ms)
{
    size_t total = 1;
    for (int a = 0; a < dim; a++) total *= (size_t)n[a];
    bench_fft_pair p;
    p.data = fftw_malloc(total * sizeof(fftw_complex));
    if (!p.data) {
        fprintf(stderr, "bench: out of memory\n");
        exit(1);
    }
    fftw_plan_with_nthreads(threads);
    p.fwd = fftw_plan_dft(dim, n, p.data, p.data, FFTW_FORWARD, flags);
    p.bwd = fftw_plan_dft(dim, n, p.data, p.data, FFTW_BACKWARD, flags);
    for (size_t i = 0; i < total; i++) p.data[i] = 1e-3 * (double)(i % 17) + I * 1e-3 * (double)(i % 5);
    double pair = bench_ms(bench_fft_pair_run, &p, 3, 0.2);
    if (one_ms) *one_ms = bench_ms(bench_fft_one_run, &p, 3, 0.2);
    fftw_destroy_plan(p.fwd);
    fftw_destroy_plan(p.bwd);
    fftw_free(p.data);
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
