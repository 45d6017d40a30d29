/* pf_build_sampled.c - states given as samples on a rectilinear mesh,
 * interpolated onto the grid (multilinear, or a natural cubic spline in 1D). */
#include <math.h>
#include <stdlib.h>
#include "pf_build.h"
#include "pf_internal.h"
#include "pf_resolution.h"

#define MAX_SAMPLES_PER_AXIS ((size_t)1 << 24)

/* For each grid coordinate on one axis: the lower mesh index and the
 * fractional position inside the mesh cell, or index -1 outside the mesh. */
static void locate(const double *mesh, size_t m, const double *coord, size_t n, long *lower, double *frac)
{
    size_t c = 0;
    for (size_t j = 0; j < n; j++) {
        double x = coord[j];
        if (x < mesh[0] || x > mesh[m - 1]) {
            lower[j] = -1;
            frac[j] = 0;
            continue;
        }
        /* Coordinates arrive sorted on position axes but in FFT order on
         * momentum axes, so search afresh when the walk would go back. */
        if (x < mesh[c]) c = 0;
        while (c + 2 < m && x > mesh[c + 1]) c++;
        lower[j] = (long)c;
        frac[j] = (x - mesh[c]) / (mesh[c + 1] - mesh[c]);
    }
}

/* Natural cubic spline second derivatives of complex data (tridiagonal
 * solve, Thomas algorithm); m >= 2. */
static int spline_second(pf_context *ctx, const double *x, const double complex *y, size_t m, double complex *y2)
{
    double *c = pf_alloc(ctx, m * sizeof *c);
    if (!c) return 0;
    y2[0] = 0;
    c[0] = 0;
    for (size_t i = 1; i + 1 < m; i++) {
        double h0 = x[i] - x[i - 1], h1 = x[i + 1] - x[i];
        double diag = 2.0 * (h0 + h1) - h0 * c[i - 1];
        double complex rhs = 6.0 * ((y[i + 1] - y[i]) / h1 - (y[i] - y[i - 1]) / h0) - h0 * y2[i - 1];
        c[i] = h1 / diag;
        y2[i] = rhs / diag;
    }
    y2[m - 1] = 0;
    for (size_t i = m - 1; i-- > 1;) y2[i] -= c[i] * y2[i + 1];
    pf_context_free(ctx, c);
    return 1;
}

/* The samples: 2..MAX_SAMPLES_PER_AXIS finite, strictly increasing
 * coordinates per axis, finite values, a method that fits the dimension. */
static pf_status check_samples(pf_context *ctx, int d, const size_t *counts, const double *const *axes,
                               const double complex *values, pf_interp method)
{
    size_t total = 1;
    for (int a = 0; a < d; a++) {
        if (counts[a] < 2 || counts[a] > MAX_SAMPLES_PER_AXIS)
            return pf_fail(ctx, PF_EINVAL, "samples on axis %d: need 2..%zu coordinates, got %zu", a + 1,
                           MAX_SAMPLES_PER_AXIS, counts[a]);
        for (size_t i = 0; i < counts[a]; i++) {
            if (!isfinite(axes[a][i]))
                return pf_fail(ctx, PF_EINVAL, "sample coordinate %zu on axis %d must be finite, got %g", i + 1,
                               a + 1, axes[a][i]);
            if (i > 0 && !(axes[a][i] > axes[a][i - 1]))
                return pf_fail(ctx, PF_EINVAL,
                               "sample coordinates on axis %d must increase strictly, got %g after %g at entry %zu",
                               a + 1, axes[a][i], axes[a][i - 1], i + 1);
        }
        total *= counts[a];
    }
    for (size_t i = 0; i < total; i++)
        if (!isfinite(creal(values[i])) || !isfinite(cimag(values[i])))
            return pf_fail(ctx, PF_EINVAL, "sample value %zu must be finite, got %g%+gi", i + 1, creal(values[i]),
                           cimag(values[i]));
    if (method == PF_INTERP_CUBIC && d != 1)
        return pf_fail(ctx, PF_EINVAL, "cubic interpolation is available in 1D only; use linear for %dD samples", d);
    if (method != PF_INTERP_LINEAR && method != PF_INTERP_CUBIC)
        return pf_fail(ctx, PF_EINVAL, "unknown interpolation method %d", (int)method);
    return PF_OK;
}

/* The samples and where each grid coordinate falls among them: per axis a
 * (at offs[a] in lower and frac) the lower mesh index (-1: outside) and the
 * fraction inside the mesh cell; y2 the spline's second derivatives (cubic). */
typedef struct sample_mesh {
    int d;
    pf_interp method;
    const double *const *axes;
    const double complex *values;
    size_t m1, m2;               /* sample counts of axes 2 and 3 (1 when absent) */
    const long *lower;
    const double *frac;
    const double complex *y2;
} sample_mesh;

/* The interpolated value at the grid point whose per-axis entries in lower
 * and frac are t[a] into *v; returns 0 (v untouched) outside the sampled box. */
static int interpolate_at(const sample_mesh *sm, const size_t *t, double complex *v)
{
    const int d = sm->d;
    const long *lower = sm->lower;
    const double *frac = sm->frac;
    for (int a = 0; a < d; a++)
        if (lower[t[a]] < 0) return 0;
    double complex sum = 0;
    if (sm->method == PF_INTERP_CUBIC) {
        const double *x = sm->axes[0];
        const double complex *y = sm->values, *y2 = sm->y2;
        size_t c = (size_t)lower[t[0]];
        double h = x[c + 1] - x[c], b = frac[t[0]], a0 = 1.0 - b;
        *v = a0 * y[c] + b * y[c + 1] + ((a0 * a0 * a0 - a0) * y2[c] + (b * b * b - b) * y2[c + 1]) * h * h / 6.0;
        return 1;
    }
    /* Sum over the 2^d corners of the mesh cell. */
    for (int corner = 0; corner < (1 << d); corner++) {
        double weight = 1.0;
        size_t idx[PF_MAX_DIM] = {0, 0, 0};
        for (int a = 0; a < d; a++) {
            int up = (corner >> a) & 1;
            double f = frac[t[a]];
            weight *= up ? f : 1.0 - f;
            idx[a] = (size_t)lower[t[a]] + (size_t)up;
        }
        if (weight != 0) sum += weight * sm->values[(idx[0] * sm->m1 + idx[1]) * sm->m2 + idx[2]];
    }
    *v = sum;
    return 1;
}

pf_status pf_build_sampled(pf_wave *w, pf_rep rep, const size_t *counts, const double *const *axes,
                           const double complex *values, pf_interp method, int normalize)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    pf_status failed = check_samples(g->ctx, d, counts, axes, values, method);
    if (failed) return failed;
    size_t nn[PF_MAX_DIM], offs[PF_MAX_DIM + 1];
    offs[0] = 0;
    for (int a = 0; a < PF_MAX_DIM; a++) {
        nn[a] = a < d ? g->n[a] : 1;
        offs[a + 1] = offs[a] + nn[a];
    }
    long *lower = pf_alloc(g->ctx, offs[PF_MAX_DIM] * sizeof *lower);
    double *frac = pf_alloc(g->ctx, offs[PF_MAX_DIM] * sizeof *frac);
    double complex *y2 = method == PF_INTERP_CUBIC ? pf_alloc(g->ctx, counts[0] * sizeof *y2) : NULL;
    if (!lower || !frac || (method == PF_INTERP_CUBIC && !y2))
        failed = pf_context_status(g->ctx);
    else if (method == PF_INTERP_CUBIC && !spline_second(g->ctx, axes[0], values, counts[0], y2))
        failed = pf_context_status(g->ctx);
    if (failed) {
        pf_context_free(g->ctx, lower);
        pf_context_free(g->ctx, frac);
        pf_context_free(g->ctx, y2);
        return failed;
    }
    for (int a = 0; a < PF_MAX_DIM; a++) {
        if (a >= d) {
            lower[offs[a]] = 0;
            frac[offs[a]] = 0;
            continue;
        }
        const double *coord = rep == PF_POSITION ? g->x[a] : g->k[a];
        locate(axes[a], counts[a], coord, nn[a], lower + offs[a], frac + offs[a]);
    }
    const sample_mesh sm = {d, method, axes, values, d > 1 ? counts[1] : 1, d > 2 ? counts[2] : 1, lower, frac, y2};
    double complex *data = pf_wave_overwrite(w);
    ptrdiff_t n0 = (ptrdiff_t)nn[0];
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t i = 0; i < n0; i++)
        for (size_t j = 0; j < nn[1]; j++)
            for (size_t k = 0; k < nn[2]; k++) {
                size_t t[PF_MAX_DIM] = {offs[0] + (size_t)i, offs[1] + j, offs[2] + k};
                double complex v = 0;
                if (!interpolate_at(&sm, t, &v)) {
                    data[((size_t)i * nn[1] + j) * nn[2] + k] = 0;
                    continue;
                }
                if (rep == PF_MOMENTUM) {
                    double complex f = 1.0;
                    for (int a = 0; a < d; a++) f *= g->kfactor[a][t[a] - offs[a]];
                    v /= f;
                }
                data[((size_t)i * nn[1] + j) * nn[2] + k] = v;
            }
    pf_context_free(g->ctx, lower);
    pf_context_free(g->ctx, frac);
    pf_context_free(g->ctx, y2);
    w->rep = rep;
    pf_status s;
    if (normalize && (s = pf_wave_normalize(w))) return s;
    pf_wave_log_step(w, "build", "samples", 0.0, 0.0, -1.0);
    /* Arbitrary data have no analytic extent: measure both edges. */
    s = pf_resolution_check_edges(w, PF_POSITION, "samples", NULL);
    if (!s) s = pf_resolution_check_edges(w, PF_MOMENTUM, "samples", NULL);
    return s;
}
