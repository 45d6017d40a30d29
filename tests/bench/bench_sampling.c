/* bench_sampling.c - speed of Born-rule sampling: 10^6 detection events from
 * the density of a 1024 x 1024 state (target: well under a second).
 *
 * Reports, in ms: the density (|psi|^2 into a field), the cumulative and
 * guide tables, and the drawing of the events, plus a raw FFTW pair of the
 * same size (measured plan, the run's wisdom) and the ratio of the total to
 * it, for scale.  Sampling is serial by design (one generator stream,
 * so events do not depend on the thread count).  Usage: bench_sampling [quick]. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
#include "pf_field.h"
#include "pf_sample.h"
#include "pf_wave.h"

static int fill_cloud(void *user, const double *x, double complex *v)
{
    (void)user;
    /* Two overlapping clouds, so the density is not separable. */
    double a = exp(-(x[0] * x[0] + x[1] * x[1]) / (4 * 64e-12));
    double b = exp(-((x[0] - 8e-6) * (x[0] - 8e-6) + x[1] * x[1]) / (4 * 25e-12));
    *v = a + 0.5 * b * cexp(I * 3e6 * x[1]);
    return 0;
}

typedef struct run_arg {
    pf_wave *w;
    pf_field *f;
    pf_sampler *s;
    pf_rng *r;
    double *events;
    size_t count;
} run_arg;

static void run_density(void *user)
{
    run_arg *a = user;
    memset(a->f->values, 0, a->f->total * sizeof(double));
    pf_field_add_density(a->f, a->w, PF_POSITION, 1.0, NULL);
}

static void run_tables(void *user)
{
    run_arg *a = user;
    pf_sampler_free(a->s);
    pf_sampler_init(a->s, a->f);
}

static void run_draw(void *user)
{
    run_arg *a = user;
    pf_sampler_draw(a->s, a->r, a->count, 1, a->events);
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0;
    int n[2] = {1024, 1024};
    size_t pts[2] = {1024, 1024};
    double span[2] = {100e-6, 100e-6}, origin[2] = {0, 0};
    pf_context *ctx = pf_context_new();
    const char *wisdom = getenv("PSIFLIGHT_WISDOM");
    if (wisdom && *wisdom) pf_context_set_wisdom_path(ctx, wisdom);
    pf_grid *g;
    pf_wave *w;
    if (pf_grid_new(ctx, 2, pts, span, origin, &g) || pf_wave_new(g, 1.44e-25, &w) ||
        pf_wave_fill(w, PF_POSITION, fill_cloud, NULL) || pf_wave_normalize(w)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        return 1;
    }
    pf_field f;
    pf_sampler s = {0};
    pf_rng r;
    pf_rng_seed(&r, 1, 0);
    size_t count = 1000000;
    double *events = malloc(2 * count * sizeof *events);
    if (pf_field_for_grid(g, PF_POSITION, &f) || !events) {
        fprintf(stderr, "bench: out of memory\n");
        return 1;
    }
    run_arg a = {w, &f, &s, &r, events, count};
    int blocks = quick ? 1 : 3;
    double t_density = bench_ms(run_density, &a, blocks, 0.2);
    pf_sampler_init(&s, &f);
    double t_tables = bench_ms(run_tables, &a, blocks, 0.2);
    double t_draw = bench_ms(run_draw, &a, blocks, 0.2);
    /* Plan through the grid first (loads and stores the wisdom), so the raw
     * pair is timed with the same measured plan and no planning inside. */
    pf_wave_to(w, PF_MOMENTUM);
    pf_wave_to(w, PF_POSITION);
    double pair = bench_raw_fft_ms(2, n, 1, FFTW_MEASURE, NULL);
    char shape[64];
    bench_shape(2, n, shape, sizeof shape);
    printf("sample  %-16s threads 1   events %zu   density %7.2f ms   tables %7.2f ms   draw %7.2f ms   "
           "total %7.2f ms   fft pair %7.2f ms   ratio %5.2f\n",
           shape, count, t_density, t_tables, t_draw, t_density + t_tables + t_draw, pair,
           (t_density + t_tables + t_draw) / pair);
    free(events);
    pf_sampler_free(&s);
    pf_field_free(&f);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
    return 0;
}
