/* bench_dist.c - speed of the exact free flight on a grid split over MPI
 * ranks (pf_dist.h), for the strong and weak scaling rows of make bench.
 *
 * Usage: mpirun -n R bench_dist N0 N1 N2 [STEPS [THREADS]]: makes an
 * N0 x N1 x N2 grid with pf.setup{distribute = true}'s setting, and times
 * STEPS flights from position back to position (forward transform with
 * transposed output, phase pass, backward transform) plus one norm to end
 * on a collective; prints one line on rank 0 with the time per step and the
 * bytes of one wave function per rank.  Without mpirun the same program
 * times the single-process flight (fused sweep), the reference row.  A
 * second line times one stage of the scaled flight in the same run and
 * its ratio to the exact step.  Every
 * rank makes the same calls, so the step count is fixed, never timed. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include "pf_constants.h"
#include "pf_context.h"
#include "pf_dist.h"
#include "pf_flight.h"
#include "pf_grid.h"
#include "pf_observe.h"
#include "pf_longflight.h"
#include "pf_wave.h"

static int fill_gauss(void *user, const double *x, double complex *v)
{
    (void)user;
    *v = exp(-(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]) / 0.02);
    return 0;
}

int main(int argc, char **argv)
{
    if (argc < 4) {
        fprintf(stderr, "usage: [mpirun -n R] bench_dist N0 N1 N2 [STEPS [THREADS]]\n");
        return 2;
    }
    int mpi = pf_dist_start();
    size_t n[3] = {(size_t)atol(argv[1]), (size_t)atol(argv[2]), (size_t)atol(argv[3])};
    int steps = argc > 4 ? atoi(argv[4]) : 10;
    int threads = argc > 5 ? atoi(argv[5]) : 1;
    double span[3] = {1, 1, 1};
    pf_grid *g;
    pf_wave *w;
    pf_context *ctx = pf_context_new();
    if (!ctx) return 1;
    pf_context_set_threads(ctx, threads);
    pf_context_set_distribute(ctx, 1);
    if (pf_grid_new(ctx, 3, n, span, NULL, &g) != PF_OK || pf_wave_new(g, 1e-25, &w) != PF_OK ||
        pf_wave_fill(w, PF_POSITION, fill_gauss, NULL) != PF_OK) {
        fprintf(stderr, "bench_dist: %s\n", pf_context_message(ctx));
        return 1;
    }
    /* One untimed step: first touch of the pages, the fused plans of the
     * single-process path. */
    pf_wave_fly(w, 1e-3);
    pf_wave_to(w, PF_POSITION);
    (void)pf_wave_norm(w);
    double t0 = pf_dist_seconds();
    for (int i = 0; i < steps; i++) {
        pf_wave_fly(w, 1e-3);
        pf_wave_to(w, PF_POSITION);
    }
    (void)pf_wave_norm(w);
    double ms = 1e3 * (pf_dist_seconds() - t0) / steps;
    if (pf_dist_rank() == 0)
        printf("ranks %d  threads %d  grid %zux%zux%zu  %s  step %9.2f ms  one wave per rank %8.1f MiB\n",
               pf_dist_ranks(), threads, n[0], n[1], n[2], pf_grid_distributed(g) ? "distributed " : "one process ",
               ms, (double)pf_grid_local_bytes(g) / 1048576.0);
    /* The scaled flight (single-FFT Fresnel form, docs/long-flights.md) in
     * the same run, beside the exact flight: there and back (t, then -t onto
     * the starting grid), each stage a chirp pass, one transform with the
     * slab layout on both sides and a chirp pass.  Each stage makes its new
     * grid, as a script's scaled flights do; the plans are the context's,
     * made in the untimed first pair (pf_dist_plans).  At the chirp time
     * m N dx^2 / (2 pi hbar) the output spacing is the input's, so the
     * packet keeps its size on grids of the same span. */
    const double tc = 1e-25 * (double)n[0] / ((double)n[0] * (double)n[0]) / (PF_TWO_PI * PF_HBAR);
    pf_status st = pf_wave_fly_scaled(w, tc, NULL, NULL);
    if (!st) st = pf_wave_fly_scaled(w, -tc, NULL, NULL);
    t0 = pf_dist_seconds();
    for (int i = 0; !st && i < steps; i++) {
        st = pf_wave_fly_scaled(w, tc, NULL, NULL);
        if (!st) st = pf_wave_fly_scaled(w, -tc, NULL, NULL);
    }
    (void)pf_wave_norm(w);
    double ms_scaled = 1e3 * (pf_dist_seconds() - t0) / (2.0 * steps);
    if (st) {
        fprintf(stderr, "bench_dist: %s\n", pf_context_message(ctx));
        return 1;
    }
    if (pf_dist_rank() == 0)
        printf("ranks %d  threads %d  grid %zux%zux%zu  %s  scaled stage %9.2f ms  (%.2f exact steps)\n",
               pf_dist_ranks(), threads, n[0], n[1], n[2], pf_grid_distributed(pf_wave_grid(w)) ? "distributed " : "one process ",
               ms_scaled, ms_scaled / ms);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
    if (mpi) pf_dist_stop();
    return 0;
}
