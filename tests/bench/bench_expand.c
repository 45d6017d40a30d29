/* bench_expand.c - the expanding mean-field run (long flights of a condensate): a 3D release of
 * an elongated 87Rb condensate (15 x 150 x 150 Hz, mu = 12 hbar omega_perp,
 * invented numbers) evolved with w:expand's core (Castin-Dum frame, default
 * steps and handover) to 25 ms of flight.
 *
 * Reports the wall time of the whole expansion, the steps taken, ms per step
 * and the ratio of one step to one raw FFTW forward+backward pair of the
 * same size, planning and threads timed in the same run (a Strang step
 * costs one pair, one potential pass with a cexp per point, and the
 * step-size and energy reductions).  Also prints the final radii against
 * lambda of the Castin-Dum law as a sanity figure (Thomas-Fermi limit;
 * tests/ref/test_expand_scipy.sh holds the real check).  Usage:
 * bench_expand [quick] (quick: 64 x 32 x 32 instead of 128 x 64 x 64). */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "bench_util.h"
#include "pf_constants.h"
#include "pf_build.h"
#include "pf_expand.h"
#include "pf_grid.h"
#include "pf_observe.h"
#include "pf_relax.h"
#include "pf_wave.h"

static const double MASS = 1.443160648e-25; /* 87Rb, AME2020 (as in the species table), for realistic scales */

static int run(pf_context *ctx, const int *n, int threads)
{
    pf_context_set_threads(ctx, threads);
    const double omega[3] = {2 * PF_PI * 15, 2 * PF_PI * 150, 2 * PF_PI * 150};
    const double mu = 12 * PF_HBAR * omega[1];
    double R[3], span[3];
    size_t points[3];
    for (int a = 0; a < 3; a++) {
        R[a] = sqrt(2 * mu / (MASS * omega[a] * omega[a]));
        span[a] = 3.0 * R[a];
        points[a] = (size_t)n[a];
    }
    /* Thomas-Fermi normalisation (textbook): 1 = (8 pi / 15)(mu / g) R_x R_y R_z. */
    const double g = 8 * PF_PI / 15 * mu * R[0] * R[1] * R[2];
    const double zero[3] = {0, 0, 0};
    pf_grid *grid = NULL;
    pf_wave *w = NULL;
    if (pf_grid_new(ctx, 3, points, span, NULL, &grid) || pf_wave_new(grid, MASS, &w) ||
        pf_build_thomas_fermi(w, zero, R, zero, 1)) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        return 1;
    }
    /* Heal the sharp Thomas-Fermi edge with a short relaxation (not timed). */
    double *V = malloc(pf_grid_total(grid) * sizeof *V);
    size_t idx[3] = {0, 0, 0};
    for (size_t i = 0; i < pf_grid_total(grid); i++) {
        double v = 0;
        for (int a = 0; a < 3; a++) {
            double x = pf_grid_x(grid, a, idx[a]);
            v += 0.5 * MASS * omega[a] * omega[a] * x * x;
        }
        V[i] = v;
        for (int a = 2; a >= 0; a--) {
            if (++idx[a] < points[a]) break;
            idx[a] = 0;
        }
    }
    pf_relax_spec rs = {.potential = V, .g = g, .tolerance = 1e-7, .max_steps = 400, .check_every = 20};
    pf_relax_info ri;
    double t0 = bench_now();
    pf_wave_relax(w, &rs, &ri);
    double relax_s = bench_now() - t0;
    double s0[3];
    pf_wave_position_moments(w, NULL, s0);
    pf_expand_spec sp = {.g = g, .scaling = PF_SCALING_CASTIN_DUM, .order = 2, .handover = 1e-3};
    memcpy(sp.omega, omega, sizeof omega);
    pf_expand_info info;
    t0 = bench_now();
    pf_status st = pf_wave_expand(w, 25e-3, &sp, &info);
    double wall = bench_now() - t0;
    if (st) {
        fprintf(stderr, "bench: %s\n", pf_context_message(ctx));
        return 1;
    }
    double s1[3];
    pf_wave_position_moments(w, NULL, s1);
    double one = 0, pair = bench_raw_fft_ms(3, n, threads, FFTW_MEASURE, &one);
    double per_step = info.steps ? 1e3 * wall / (double)info.steps : 0;
    printf("expand  %dx%dx%d threads %d   25 ms of flight in %7.2f s wall   %4zu steps%s   %8.2f ms/step   "
           "fft pair %7.2f ms   step/pair %5.2f   (relax before: %zu steps, %.1f s, not counted)\n",
           n[0], n[1], n[2], threads, wall, info.steps, info.handed_over ? " + free" : "", per_step, pair,
           per_step / pair, ri.steps, relax_s);
    printf("expand  %dx%dx%d threads %d   lambda %.4f %.4f %.4f   sigma/sigma0/lambda - 1: %+.1e %+.1e %+.1e\n", n[0],
           n[1], n[2], threads, info.lambda[0], info.lambda[1], info.lambda[2],
           sqrt(s1[0] / s0[0]) / info.lambda[0] - 1, sqrt(s1[1] / s0[1]) / info.lambda[1] - 1,
           sqrt(s1[2] / s0[2]) / info.lambda[2] - 1);
    free(V);
    pf_wave_free(w);
    pf_grid_release(grid);
    return 0;
}

int main(int argc, char **argv)
{
    int quick = argc > 1 && strcmp(argv[1], "quick") == 0;
    const char *wisdom = getenv("PSIFLIGHT_WISDOM");
    pf_context *ctx = pf_context_new();
    if (wisdom && *wisdom) pf_context_set_wisdom_path(ctx, wisdom);
    const int full[3] = {128, 64, 64}, small[3] = {64, 32, 32};
    int rc = run(ctx, quick ? small : full, 2);
    pf_context_release(ctx);
    return rc;
}
