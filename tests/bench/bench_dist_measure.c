/* bench_dist_measure.c - speed of the per-slab density measurements on a
 * grid split over MPI ranks (pf_dist_measure.h), for make bench.
 *
 * Usage: mpirun -n R bench_dist_measure N0 N1 N2 [REPS]: times REPS column
 * densities along the split axis (the running partial handed from rank to
 * rank, pipelined in chunks), REPS along the last axis (each rank's own
 * cells) and REPS position covariances (two passes, the ranks in turn);
 * prints one line per measurement on rank 0 with the time per call.
 * Without mpirun the same program times the single process's path (the
 * whole density field, then pf_field_marginal / pf_field_moments), the
 * reference row.  Every rank makes the same calls; the repetition count is
 * fixed, never timed. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include "pf_context.h"
#include "pf_dist.h"
#include "pf_dist_measure.h"
#include "pf_ensemble.h"
#include "pf_grid.h"
#include "pf_wave.h"

static int fill_gauss(void *user, const double *x, double complex *v)
{
    (void)user;
    *v = exp(-(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]) / 0.02);
    return 0;
}

/* One measurement: 0 column along axis 1, 1 column along axis 3, 2 the
 * covariance.  Returns a figure of the result so nothing is optimised away. */
static double measure(pf_wave *w, int which)
{
    const int keep[3][3] = {{0, 1, 1}, {1, 1, 0}, {1, 1, 1}};
    pf_field geom, out, whole;
    double cov[9] = {0}, figure = 0;
    pf_status s;
    pf_field_geometry(pf_wave_grid(w), PF_POSITION, &geom);
    if (pf_wave_distributed(w)) {
        s = which < 2 ? pf_dist_marginal(w, PF_POSITION, &geom, keep[which], &out)
                      : pf_dist_moments(w, PF_POSITION, &geom, NULL, cov);
    } else {
        pf_wave *one[1] = {w};
        const double unit = 1.0;
        pf_mixture m = {1, one, &unit};
        s = pf_mixture_field(&m, PF_POSITION, &whole);
        if (s == PF_OK) {
            s = which < 2 ? pf_field_marginal(&whole, keep[which], &out) : pf_field_moments(&whole, NULL, cov);
            pf_field_free(&whole);
        }
    }
    if (s != PF_OK) return NAN;
    if (which < 2) {
        figure = out.values[out.total / 2];
        pf_field_free(&out);
    } else {
        figure = cov[0];
    }
    return figure;
}

int main(int argc, char **argv)
{
    if (argc < 4) {
        fprintf(stderr, "usage: [mpirun -n R] bench_dist_measure N0 N1 N2 [REPS]\n");
        return 2;
    }
    int mpi = pf_dist_start();
    size_t n[3] = {(size_t)atol(argv[1]), (size_t)atol(argv[2]), (size_t)atol(argv[3])};
    int reps = argc > 4 ? atoi(argv[4]) : 5;
    double span[3] = {1, 1, 1};
    pf_grid *g;
    pf_wave *w;
    pf_context *ctx = pf_context_new();
    if (!ctx) return 1;
    pf_context_set_distribute(ctx, 1);
    if (pf_grid_new(ctx, 3, n, span, NULL, &g) != PF_OK || pf_wave_new(g, 1e-25, &w) != PF_OK ||
        pf_wave_fill(w, PF_POSITION, fill_gauss, NULL) != PF_OK) {
        fprintf(stderr, "bench_dist_measure: %s\n", pf_context_message(ctx));
        return 1;
    }
    static const char *const names[3] = {"column along the split axis", "column along the last axis ",
                                         "position covariance        "};
    for (int which = 0; which < 3; which++) {
        double check = measure(w, which); /* untimed: first touch */
        double t0 = pf_dist_seconds();
        for (int r = 0; r < reps; r++) check += measure(w, which);
        double ms = 1e3 * (pf_dist_seconds() - t0) / reps;
        if (pf_dist_rank() == 0)
            printf("ranks %d  grid %zux%zux%zu  %s  %s %9.2f ms%s\n", pf_dist_ranks(), n[0], n[1], n[2],
                   pf_grid_distributed(g) ? "per slab   " : "one process", names[which], ms,
                   isfinite(check) ? "" : "  (failed)");
    }
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
    if (mpi) pf_dist_stop();
    return 0;
}
