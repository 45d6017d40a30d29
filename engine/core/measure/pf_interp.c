/* pf_interp.c - the band-limited interpolant of a wave function evaluated at
 * arbitrary points (contract in pf_interp.h).
 *
 * Per point and axis a table e_a[m] = exp(i k_m (x_a - x_0a)) in FFT order
 * is built by multiplying the step exp(i dk u), re-anchored with a direct
 * exponential every ANCHOR entries (rounding stays at a few ulp without one
 * sine per entry); then the sum over the grid is contracted axis by axis,
 * last axis innermost, which reads the storage in memory order. */
#include <math.h>
#include "pf_constants.h"
#include "pf_frame.h"
#include "pf_guard.h"
#include "pf_interp.h"
#include "pf_internal.h"
#ifdef _OPENMP
#include <omp.h>
#endif

#define ANCHOR 32

/* e[j] for FFT-order index j of an n-point axis with spacing dk at offset u. */
static void phase_table(size_t n, double dk, double u, double complex *e)
{
    size_t half = (n + 1) / 2; /* indices 0 .. half-1 carry m = j >= 0 */
    double complex step = cexp(I * dk * u), z = 1.0;
    for (size_t j = 0; j < half; j++) {
        if (j % ANCHOR == 0) z = cexp(I * dk * u * (double)j);
        e[j] = z;
        z *= step;
    }
    /* Negative m = j - n, from m = -1 downwards. */
    z = 1.0;
    for (size_t q = 1; q <= n - half; q++) {
        if (q % ANCHOR == 1) z = cexp(-I * dk * u * (double)q);
        else z *= conj(step);
        e[n - q] = z;
    }
    if (n % 2 == 0) e[n / 2] = cos(dk * u * (double)(n / 2)); /* Nyquist: cos K u */
}

pf_status pf_wave_values_at(pf_wave *w, size_t count, const double *points, double complex *out)
{
    pf_grid *g = w->grid;
    pf_context *ctx = g->ctx;
    int d = g->dim;
    /* Lab points: the grid coordinate is xi = x - X (the frame's offset). */
    pf_frame f;
    pf_wave_frame(w, &f);
    for (size_t i = 0; i < count; i++) {
        for (int a = 0; a < d; a++) {
            double x = points[i * (size_t)d + a];
            double lo = g->x[a][0] - 0.5 * g->dx[a] + f.position[a], hi = lo + g->span[a];
            if (!isfinite(x) || x < lo || x > hi)
                return pf_fail(ctx, PF_EINVAL,
                               "point %zu: coordinate %g m on axis %d lies outside the grid's cell [%g, %g] m (lab); "
                               "the grid holds psi only there",
                               i + 1, x, a + 1, lo, hi);
        }
    }
    int moved = pf_wave_frame_moved(w);
    pf_status s = pf_wave_to(w, PF_MOMENTUM);
    if (s) return s;
    /* The interpolant is the wave function only where the grid resolves the
     * state: with content at the Nyquist limit (an aliased chirp after a
     * scaled flight, say) values between points are not psi.  Say so. */
    pf_guard_figures gf;
    if ((s = pf_wave_guard(w, &gf))) return s;
    for (int a = 0; a < d; a++)
        if (gf.known[PF_MOMENTUM] && gf.band[PF_MOMENTUM][a] > gf.threshold)
            pf_context_warn(ctx,
                            "values between grid points: %.3g of the probability lies near the Nyquist limit of "
                            "axis %d, so the grid does not resolve the state there and the interpolant between "
                            "points is not the wave function (exact at the grid points only); use a finer grid",
                            gf.band[PF_MOMENTUM][a], a + 1);
    size_t per = 0;
    for (int a = 0; a < d; a++) per += g->n[a];
    int threads = ctx->threads > 0 ? ctx->threads : 1;
    size_t bytes = pf_bytes(per * (size_t)threads, sizeof(double complex));
    double complex *scratch = pf_alloc(ctx, bytes);
    if (!scratch) return pf_context_status(ctx);
    const double complex *S = w->store;
    size_t n0 = g->n[0], n1 = d > 1 ? g->n[1] : 1, n2 = d > 2 ? g->n[2] : 1;
#pragma omp parallel for num_threads(threads) schedule(static)
    for (size_t i = 0; i < count; i++) {
        int t = 0;
#ifdef _OPENMP
        t = omp_get_thread_num();
#endif
        double complex *e[PF_MAX_DIM] = {NULL, NULL, NULL}, *base = scratch + (size_t)t * per;
        for (int a = 0; a < d; a++) {
            e[a] = base;
            base += g->n[a];
            phase_table(g->n[a], PF_TWO_PI / g->span[a], points[i * (size_t)d + a] - f.position[a] - g->x[a][0],
                        e[a]);
        }
        double complex sum0 = 0;
        for (size_t j0 = 0; j0 < n0; j0++) {
            double complex sum1 = 0;
            for (size_t j1 = 0; j1 < n1; j1++) {
                const double complex *row = S + (j0 * n1 + j1) * n2;
                double complex sum2 = 0;
                if (d > 2)
                    for (size_t j2 = 0; j2 < n2; j2++) sum2 += row[j2] * e[2][j2];
                else
                    sum2 = row[0];
                sum1 += d > 1 ? sum2 * e[1][j1] : sum2;
            }
            sum0 += sum1 * e[0][j0];
        }
        if (moved) {
            /* psi_lab(x) = exp(i (theta + K.xi)) chi(xi) (pf_frame.h). */
            double ph = f.phase;
            for (int a = 0; a < d; a++) ph += f.wavenumber[a] * (points[i * (size_t)d + a] - f.position[a]);
            sum0 *= cexp(I * ph);
        }
        out[i] = sum0;
    }
    pf_free(ctx, scratch, bytes);
    return PF_OK;
}
