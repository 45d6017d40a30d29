/* bench_gravity.c - speed of a 3D time-of-flight under gravity with the
 * cloud kept on a co-moving grid (pf_wave_fly_in_frame) against a raw FFTW
 * forward+backward pair of the same size, threads and planning flags.
 *
 * One step is a flight of the co-moving grid under standard gravity from
 * position representation back to position representation (the deferred
 * 2D/3D flight carried out by reading the data: one fused sweep) plus the
 * frame's closed-form update.  For comparison, w:fall on the same grid (the
 * drop written onto the grid: two transforms and two passes) is timed too.
 * Both are timed in interleaved rounds with the raw pair (best of each), so
 * load from other processes hits all alike.  Ratios, never assertions.
 * Usage: bench_gravity [quick]. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
#include "pf_constants.h"
#include "pf_force.h"
#include "pf_frame.h"
#include "pf_grid.h"
#include "pf_wave.h"

static const double MASS = 1.443160648e-25; /* 87Rb-like; the value does not affect the timing */
static const double GRAVITY[3] = {0.0, -9.80665, 0.0};

typedef struct step_arg {
    pf_wave *w;
    double t;
    int flip;
} step_arg;

/* Alternating +t and -t keeps the state (and the frame) bounded over many
 * repetitions; both directions cost the same. */
static void run_frame(void *user)
{
    step_arg *a = user;
    pf_wave_fly_in_frame(a->w, (a->flip ^= 1) ? a->t : -a->t, GRAVITY);
    pf_wave_data(a->w); /* carries out the deferred flight */
}

static void run_fall(void *user)
{
    step_arg *a = user;
    pf_wave_fall(a->w, (a->flip ^= 1) ? a->t : -a->t, GRAVITY);
}

static int fill_gauss(void *user, const double *x, double complex *v)
{
    (void)user;
    *v = exp(-(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]) / (4 * 4e-12));
    return 0;
}

static void bench_size(pf_context *ctx, const int *n, int threads)
{
    size_t points[3];
    double span[3];
    for (int a = 0; a < 3; a++) {
        points[a] = (size_t)n[a];
        span[a] = 40e-6;
    }
    pf_context_set_threads(ctx, threads);
    pf_grid *g;
    pf_wave *wf, *wg;
    if (pf_grid_new(ctx, 3, points, span, NULL, &g) || pf_wave_new(g, MASS, &wf) || pf_wave_new(g, MASS, &wg)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        exit(1);
    }
    pf_wave_fill(wf, PF_POSITION, fill_gauss, NULL);
    pf_wave_fill(wg, PF_POSITION, fill_gauss, NULL);
    step_arg af = {wf, 1e-4, 0}, ag = {wg, 1e-4, 0};
    run_frame(&af); /* plans (wisdom) before the raw pair is timed */
    run_frame(&af);
    run_fall(&ag);
    run_fall(&ag);
    bench_fft_pair raw;
    bench_fft_pair_init(&raw, 3, n, threads, FFTW_MEASURE);
    double pair = 1e300, frame = 1e300, fall = 1e300;
    for (int round = 0; round < 5; round++) {
        pair = fmin(pair, bench_ms(bench_fft_pair_run, &raw, 1, 0.1));
        bench_fft_pair_rescale(&raw);
        frame = fmin(frame, bench_ms(run_frame, &af, 1, 0.1));
        fall = fmin(fall, bench_ms(run_fall, &ag, 1, 0.1));
    }
    bench_fft_pair_free(&raw);
    char shape[64];
    bench_shape(3, n, shape, sizeof shape);
    printf("gravity %-16s threads %d   frame step %9.3f ms   fall step %9.3f ms   fft pair %9.3f ms   "
           "ratio frame/pair %5.2f   fall/pair %5.2f\n",
           shape, threads, frame, fall, pair, frame / pair, fall / pair);
    fflush(stdout);
    pf_wave_free(wf);
    pf_wave_free(wg);
    pf_grid_release(g);
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0;
    const char *wisdom = getenv("PSIFLIGHT_WISDOM");
    pf_context *ctx = pf_context_new();
    if (wisdom && *wisdom) pf_context_set_wisdom_path(ctx, wisdom);
    pf_context_set_warn_handler(ctx, NULL, NULL);
    static const int sizes[][3] = {{64, 64, 64}, {128, 128, 128}};
    int first = quick ? 0 : 1, last = quick ? 0 : 1;
    for (int s = first; s <= last; s++)
        for (int threads = 1; threads <= 2; threads++) bench_size(ctx, sizes[s], threads);
    pf_context_release(ctx);
    return 0;
}
