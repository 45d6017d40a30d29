/* pf_resolution.c - grid-fit, feature-size and Nyquist checks for built
 * states, analytic (from the builder's known extent) or measured. */
#include <math.h>
#include <stdlib.h>
#include "pf_constants.h"
#include "pf_internal.h"
#include "pf_observe.h"
#include "pf_guard.h"
#include "pf_resolution.h"

void pf_extent_clear(pf_extent *e)
{
    for (int a = 0; a < PF_MAX_DIM; a++)
        e->x_lo[a] = e->x_hi[a] = e->k_lo[a] = e->k_hi[a] = e->feature[a] = NAN;
}

/* Smallest count >= n whose only prime factors are 2, 3 and 5 (FFTW is
 * fastest on such sizes), so the suggested remedy is also a good size. */
static size_t smooth_count(double n)
{
    if (!(n < 1e12)) return (size_t)-1;
    size_t m = n < 2 ? 2 : (size_t)ceil(n);
    for (;; m++) {
        size_t r = m;
        while (r % 2 == 0) r /= 2;
        while (r % 3 == 0) r /= 3;
        while (r % 5 == 0) r /= 5;
        if (r == 1) return m;
    }
}

double pf_resolution_max_spacing(double feature, double kmax)
{
    double dx = INFINITY;
    if (feature > 0) dx = fmin(dx, feature / PF_MIN_FEATURE_SPACINGS);
    if (kmax > 0) dx = fmin(dx, PF_PI / kmax);
    return dx;
}

int pf_resolution_check(pf_grid *g, const char *builder, const pf_extent *e)
{
    int warned = 0;
    for (int a = 0; a < g->dim; a++) {
        size_t n = g->n[a];
        double dx = g->dx[a], span = g->span[a];
        double lo = g->x[a][0], hi = g->x[a][n - 1];
        if (!isnan(e->x_lo[a]) && !isnan(e->x_hi[a]) && (e->x_lo[a] < lo || e->x_hi[a] > hi)) {
            double need = e->x_hi[a] - e->x_lo[a] + dx;
            pf_context_warn(g->ctx,
                            "%s: axis %d: the state extends over [%.4g, %.4g] m but the grid covers "
                            "[%.4g, %.4g] m; use a span of at least %.4g m (now %.4g m) with the origin "
                            "near %.4g m",
                            builder, a + 1, e->x_lo[a], e->x_hi[a], lo, hi, need > span ? need : span, span,
                            0.5 * (e->x_lo[a] + e->x_hi[a]));
            warned++;
        }
        if (!isnan(e->feature[a]) && dx > pf_resolution_max_spacing(e->feature[a], NAN)) {
            pf_context_warn(g->ctx,
                            "%s: axis %d: the smallest feature (%.3g m) spans only %.2f grid spacings "
                            "(spacing %.3g m, want at least %.0f); use at least %zu points for the span of "
                            "%.4g m",
                            builder, a + 1, e->feature[a], e->feature[a] / dx, dx, PF_MIN_FEATURE_SPACINGS,
                            smooth_count(PF_MIN_FEATURE_SPACINGS * span / e->feature[a]), span);
            warned++;
        }
        double kmax = fmax(fabs(e->k_lo[a]), fabs(e->k_hi[a]));
        double kn = PF_PI / dx;
        if (!isnan(kmax) && dx > pf_resolution_max_spacing(NAN, kmax)) {
            pf_context_warn(g->ctx,
                            "%s: axis %d: momentum content reaches |k| = %.4g 1/m (hbar k = %.4g kg m/s), "
                            "beyond the grid's Nyquist limit %.4g 1/m; use a spacing of at most %.3g m "
                            "(at least %zu points for the span of %.4g m)",
                            builder, a + 1, kmax, PF_HBAR * kmax, kn, PF_PI / kmax,
                            smooth_count(span * kmax / PF_PI), span);
            warned++;
        }
    }
    return warned;
}

pf_status pf_resolution_check_edges(pf_wave *w, pf_rep rep, const char *builder, int *warnings)
{
    pf_grid *g = w->grid;
    if (rep == PF_POSITION && w->periodic) return PF_OK; /* periodic by design: no edge */
    pf_status s = pf_wave_to(w, rep);
    if (s) return s;
    double *mask[PF_MAX_DIM] = {NULL, NULL, NULL};
    size_t strip[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) {
        size_t n = g->n[a];
        strip[a] = n / 32 ? n / 32 : 1;
        mask[a] = pf_calloc(g->ctx, n, sizeof(double));
        if (!mask[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, mask[b]);
            return pf_context_status(g->ctx);
        }
        for (size_t j = 0; j < n; j++) {
            int edge;
            if (rep == PF_POSITION) {
                edge = j < strip[a] || j >= n - strip[a];
            } else {
                /* |m| within strip of the largest |m| = n/2 (FFT order). */
                double m = fabs(g->k[a][j]) / pf_grid_kspacing(g, a);
                edge = m > (double)(n / 2) - (double)strip[a];
            }
            mask[a][j] = edge ? 1.0 : 0.0;
        }
    }
    double sums[1 + 2 * PF_MAX_DIM];
    s = pf_reduce_axis_moments(g, w->store, (const double *const *)mask, sums);
    for (int a = 0; a < g->dim; a++) pf_context_free(g->ctx, mask[a]);
    if (s) return s;
    int warned = 0;
    for (int a = 0; a < g->dim && sums[0] > 0; a++) {
        double frac = sums[1 + a] / sums[0];
        if (!(frac > pf_context_guard_threshold(g->ctx))) continue;
        if (rep == PF_POSITION)
            pf_context_warn(g->ctx,
                            "%s: axis %d: probability %.2e lies in the outer %zu points at either grid edge "
                            "(span %.4g m); use a larger span (or move the origin) so the state fits",
                            builder, a + 1, frac, strip[a], g->span[a]);
        else
            pf_context_warn(g->ctx,
                            "%s: axis %d: probability %.2e lies within %zu momentum points of the Nyquist "
                            "limit %.4g 1/m; use a smaller spacing (more points for the span of %.4g m)",
                            builder, a + 1, frac, strip[a], pf_grid_knyquist(g, a), g->span[a]);
        warned++;
    }
    if (warnings) *warnings += warned;
    return PF_OK;
}
