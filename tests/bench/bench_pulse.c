/* bench_pulse.c - cost of the light pulses of pf_pulse.c against a raw FFTW
 * forward+backward pair on the same 1D grid of 2^20 points.
 *
 * Reported, each as ms and as a ratio to the FFT pair (paired, alternating
 * timing; median of per-pair ratios, quartiles as the noise):
 *   square      a square Raman pulse on a pair of level waves (one 2x2
 *               rotation per momentum pair: a sqrt, a sine, a cosine and a
 *               complex exponential per point);
 *   gaussian/s  one integration step of a Gaussian Raman pulse (three
 *               rotations per point), i.e. the cost per substep;
 *   bragg/s     one integration step of a Bragg pulse (three Jacobi-Anger
 *               coupling sweeps and three kinetic passes);
 * and on a 3D grid of 2^20 points (64 x 128 x 128), against the 3D pair:
 *   3d-square   a square Raman pulse kicking along the last axis: the
 *               separable path (per-axis phase tables, the rotation a table
 *               along the kicked axis: no trigonometry per point);
 *   3d-gauss/s  one step of a Gaussian pulse on that path;
 *   3d-2axes    a square pulse kicking along two axes: the per-point path
 *               (what every 2D/3D pulse cost before the tables).
 * The waves stay in momentum representation, so no transform is timed
 * inside a pulse.  Usage: bench_pulse [quick] (quick: 2^18 points). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
#include "pf_constants.h"
#include "pf_grid.h"
#include "pf_pulse.h"
#include "pf_wave.h"

static const double MASS = 1.443160648e-25; /* 87Rb-like; the value does not affect the timing */

static int fill_gauss(void *user, const double *x, double complex *v)
{
    int dim = user ? *(const int *)user : 1;
    double r2 = 0;
    for (int a = 0; a < dim; a++) r2 += x[a] * x[a];
    *v = exp(-r2 / (2 * 20e-6 * 20e-6));
    return 0;
}

typedef struct pulse_arg {
    pf_wave *a, *b;
    pf_pulse_shape shape;
    pf_pulse_light light;
    int bragg;
} pulse_arg;

static void run_pulse(void *user)
{
    pulse_arg *p = user;
    pf_status s = p->bragg ? pf_pulse_bragg(p->a, &p->shape, &p->light)
                           : pf_pulse_two_level(p->a, p->b, &p->shape, &p->light);
    if (s) {
        fprintf(stderr, "bench: pulse failed: %s\n", pf_context_message(pf_grid_context(pf_wave_grid(p->a))));
        exit(1);
    }
}

static void report(const char *name, double ms_pair, double ms, double ratio, const double *q)
{
    printf("%-11s %9.3f ms   FFT pair %8.3f ms   ratio %5.2f pairs (quartiles %.2f-%.2f)\n", name, ms, ms_pair,
           ratio, q[0], q[1]);
}

/* The 3D rows (see the head of the file). */
static int bench_3d(pf_context *ctx, int quick)
{
    int n[3] = {64, 128, 128};
    if (quick) n[0] = 16;
    size_t points[3] = {(size_t)n[0], (size_t)n[1], (size_t)n[2]};
    double span[3] = {2e-4, 2e-4, 2e-4};
    pf_grid *g;
    pf_wave *a, *b;
    if (pf_grid_new(ctx, 3, points, span, NULL, &g) || pf_wave_new(g, MASS, &a) || pf_wave_new(g, MASS, &b)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        return 1;
    }
    int dim = 3;
    pf_wave_fill(a, PF_POSITION, fill_gauss, &dim);
    pf_wave_normalize(a);
    pf_wave_to(a, PF_MOMENTUM);
    pf_wave_to(b, PF_MOMENTUM);
    unsigned flags = pf_context_planning(ctx) == PF_PLAN_ESTIMATE ? FFTW_ESTIMATE : FFTW_MEASURE;
    bench_fft_pair raw;
    bench_fft_pair_init(&raw, 3, n, 1, flags);
    char shape[64];
    printf("%s, 1 thread\n", bench_shape(3, n, shape, sizeof shape));
    double K = 20 * pf_grid_kspacing(g, 2);
    double wr = PF_HBAR * K * K / (2 * MASS);
    pulse_arg sq = {a, b, {.envelope = PF_ENVELOPE_SQUARE, .duration = 10e-6, .rabi = 1e5}, {.kick = {0, 0, K}, .detuning = wr}, 0};
    pulse_arg ga = {a, b, {.envelope = PF_ENVELOPE_GAUSSIAN, .duration = 10e-6, .width = 2e-6, .rabi = 1e5, .substeps = 1},
                    {.kick = {0, 0, K}, .detuning = wr}, 0};
    pulse_arg two = {a, b, {.envelope = PF_ENVELOPE_SQUARE, .duration = 10e-6, .rabi = 1e5}, {.kick = {0, K, K}, .detuning = wr}, 0};
    double ms_pair, ms, q[2], r;
    r = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_pulse, &sq, quick ? 0.3 : 1.0, &ms_pair, &ms, q);
    report("3d-square", ms_pair, ms, r, q);
    r = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_pulse, &ga, quick ? 0.3 : 1.0, &ms_pair, &ms, q);
    report("3d-gauss/s", ms_pair, ms, r, q);
    r = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_pulse, &two, quick ? 0.3 : 1.0, &ms_pair, &ms, q);
    report("3d-2axes", ms_pair, ms, r, q);
    bench_fft_pair_free(&raw);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
    return 0;
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0;
    int n = quick ? 1 << 18 : 1 << 20;
    pf_context *ctx = pf_context_new();
    if (!ctx) return 1;
    size_t points = (size_t)n;
    double span = 2e-3;
    pf_grid *g;
    pf_wave *a, *b;
    if (pf_grid_new(ctx, 1, &points, &span, NULL, &g) || pf_wave_new(g, MASS, &a) || pf_wave_new(g, MASS, &b)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        return 1;
    }
    pf_wave_fill(a, PF_POSITION, fill_gauss, NULL);
    pf_wave_normalize(a);
    pf_wave_to(a, PF_MOMENTUM);
    pf_wave_to(b, PF_MOMENTUM);
    unsigned flags = pf_context_planning(ctx) == PF_PLAN_ESTIMATE ? FFTW_ESTIMATE : FFTW_MEASURE;
    bench_fft_pair raw;
    bench_fft_pair_init(&raw, 1, &n, 1, flags);
    char shape[64];
    printf("%s, 1 thread\n", bench_shape(1, &n, shape, sizeof shape));

    double K = 1000 * pf_grid_kspacing(g, 0);
    double wr = PF_HBAR * K * K / (2 * MASS);
    pulse_arg sq = {a, b, {.envelope = PF_ENVELOPE_SQUARE, .duration = 10e-6, .rabi = 1e5}, {.kick = {K}, .detuning = wr}, 0};
    pulse_arg ga = {a, b, {.envelope = PF_ENVELOPE_GAUSSIAN, .duration = 10e-6, .width = 2e-6, .rabi = 1e5, .substeps = 1},
                    {.kick = {K}, .detuning = wr}, 0};
    pulse_arg br = {a, NULL, {.envelope = PF_ENVELOPE_SQUARE, .duration = 1e-6, .rabi = 1e5, .substeps = 1},
                    {.kick = {K}}, 1};
    double ms_pair, ms, q[2], r;
    r = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_pulse, &sq, quick ? 0.3 : 1.0, &ms_pair, &ms, q);
    report("square", ms_pair, ms, r, q);
    r = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_pulse, &ga, quick ? 0.3 : 1.0, &ms_pair, &ms, q);
    report("gaussian/s", ms_pair, ms, r, q);
    r = bench_paired(bench_fft_pair_run, &raw, bench_fft_pair_rescale, run_pulse, &br, quick ? 0.3 : 1.0, &ms_pair, &ms, q);
    report("bragg/s", ms_pair, ms, r, q);
    bench_fft_pair_free(&raw);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
    int rc = bench_3d(ctx, quick);
    pf_context_release(ctx);
    return rc;
}
