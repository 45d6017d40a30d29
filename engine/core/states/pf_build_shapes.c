/* pf_build_shapes.c - flat-top (super-Gaussian) momentum distributions and
 * Thomas-Fermi profiles. */
#include <math.h>
#include <stdlib.h>
#include "pf_build.h"
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_internal.h"
#include "pf_resolution.h"

/* |phi|^2 = exp(-u^2p) falls below 1e-9 of its peak beyond u^2p = 20.7. */
#define FLAT_DENSITY_FLOOR 20.7233
#define FLAT_MAX_ORDER 50.0
/* Momentum reach of a Thomas-Fermi state for the Nyquist check, in units of
 * 1/R.  The sharp edge of the profile makes the tail decay only as a power
 * (|phi|^2 ~ k^-(d+2)), so some probability always sits beyond any limit;
 * this checks the bulk of the distribution. */
#define TF_K_REACH 8.0

/* A builder's per-axis parameter: its name in messages, its d values and
 * whether they must be positive (widths, radii) or only finite. */
typedef struct axis_param {
    const char *what;
    const double *v;
    int positive;
} axis_param;

/* Checks the n parameters in the order given; the first bad value fails. */
static pf_status check_params(pf_context *ctx, int d, const axis_param *p, int n)
{
    for (int i = 0; i < n; i++)
        for (int a = 0; a < d; a++) {
            if (!isfinite(p[i].v[a]))
                return pf_fail(ctx, PF_EINVAL, "%s on axis %d must be finite, got %g", p[i].what, a + 1, p[i].v[a]);
            if (p[i].positive && !(p[i].v[a] > 0))
                return pf_fail(ctx, PF_EINVAL, "%s on axis %d must be positive, got %g", p[i].what, a + 1, p[i].v[a]);
        }
    return PF_OK;
}

/* Volume of the d-dimensional unit ball: 2, pi, 4 pi / 3. */
static double unit_ball(int d) { return d == 1 ? 2.0 : d == 2 ? PF_PI : 4.0 * PF_PI / 3.0; }

/* The per-axis tables of the separable builders: axis a has nn[a] entries
 * (1 beyond the grid's dimension) starting at offs[a], in a real table u2
 * (u_a^2 or an axis profile) and a complex one ph (a phase). */
typedef struct axis_tables {
    size_t nn[PF_MAX_DIM], offs[PF_MAX_DIM + 1];
    double *u2;
    double complex *ph;
} axis_tables;

/* Lays out and allocates the tables; on failure records the error and
 * returns non-zero with nothing allocated. */
static int axis_tables_new(const pf_grid *g, axis_tables *t)
{
    t->offs[0] = 0;
    for (int a = 0; a < PF_MAX_DIM; a++) {
        t->nn[a] = a < g->dim ? g->n[a] : 1;
        t->offs[a + 1] = t->offs[a] + t->nn[a];
    }
    t->u2 = pf_alloc(g->ctx, t->offs[PF_MAX_DIM] * sizeof *t->u2);
    t->ph = pf_alloc(g->ctx, t->offs[PF_MAX_DIM] * sizeof *t->ph);
    if (t->u2 && t->ph) return 0;
    pf_context_free(g->ctx, t->u2);
    pf_context_free(g->ctx, t->ph);
    return 1;
}

static void axis_tables_free(const pf_grid *g, axis_tables *t)
{
    pf_context_free(g->ctx, t->u2);
    pf_context_free(g->ctx, t->ph);
}

pf_status pf_build_flat_top(pf_wave *w, const double *center, const double *wavenumber, const double *half_width,
                            double order, pf_flat_shape shape, int normalize)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    const axis_param params[] = {{"center", center, 0}, {"wave number", wavenumber, 0}, {"half width", half_width, 1}};
    pf_status s = check_params(g->ctx, d, params, 3);
    if (s) return s;
    if (!isfinite(order) || order < 1.0 || order > FLAT_MAX_ORDER)
        return pf_fail(g->ctx, PF_EINVAL, "flat-top order must be between 1 and %g, got %g", FLAT_MAX_ORDER, order);
    if (shape != PF_FLAT_BOX && shape != PF_FLAT_ROUND)
        return pf_fail(g->ctx, PF_EINVAL, "unknown flat-top shape %d", (int)shape);
    /* Per axis: u_a^2 (round) or the axis profile (box), and the phase
     * exp(-i k x0) divided by the storage factor phi/S. */
    axis_tables tab;
    if (axis_tables_new(g, &tab)) return pf_context_status(g->ctx);
    for (int a = 0; a < PF_MAX_DIM; a++)
        for (size_t j = 0; j < tab.nn[a]; j++) {
            size_t t = tab.offs[a] + j;
            if (a >= d) {
                tab.u2[t] = shape == PF_FLAT_BOX ? 1.0 : 0.0;
                tab.ph[t] = 1.0;
                continue;
            }
            double u = (g->k[a][j] - wavenumber[a]) / half_width[a];
            tab.u2[t] = shape == PF_FLAT_BOX ? exp(-0.5 * pow(fabs(u), 2.0 * order)) : u * u;
            tab.ph[t] = cexp(-I * g->k[a][j] * center[a]) / g->kfactor[a][j];
        }
    /* Normalisation in infinite k space: integral exp(-u^2p) = 2 Gamma(1 +
     * 1/2p) per axis (box); S_(d-1) Gamma(d/2p) / 2p for the round shape. */
    double integral = 1.0;
    for (int a = 0; a < d; a++) integral *= half_width[a];
    if (shape == PF_FLAT_BOX)
        integral *= pow(2.0 * tgamma(1.0 + 0.5 / order), d);
    else
        integral *= unit_ball(d) * d * tgamma(0.5 * d / order) / (2.0 * order);
    double norm = 1.0 / sqrt(integral);
    size_t first0, count0;
    double complex *data = pf_wave_overwrite_planes(w, &first0, &count0);
    /* A grid split over MPI ranks holds momentum planes of axis 1,
     * transposed (axis 1, axis 0, axis 2: pf_dist.h); one process holds
     * axis 0 first.  Each value is the same product either way. */
    size_t first1 = 0, count1 = tab.nn[1];
    const int transposed = pf_grid_distributed(g);
    if (transposed) pf_grid_slab(g, PF_MOMENTUM, &first1, &count1);
    ptrdiff_t n0 = (ptrdiff_t)(transposed ? count1 : tab.nn[0]);
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t r = 0; r < n0; r++)
        for (size_t j = 0; j < (transposed ? tab.nn[0] : tab.nn[1]); j++)
            for (size_t k = 0; k < tab.nn[2]; k++) {
                size_t i0 = transposed ? j : (size_t)r, i1 = transposed ? first1 + (size_t)r : j;
                size_t t0 = tab.offs[0] + i0, t1 = tab.offs[1] + i1, t2 = tab.offs[2] + k;
                double f = shape == PF_FLAT_BOX ? tab.u2[t0] * tab.u2[t1] * tab.u2[t2]
                                                : exp(-0.5 * pow(tab.u2[t0] + tab.u2[t1] + tab.u2[t2], order));
                size_t at = transposed ? ((size_t)r * tab.nn[0] + j) * tab.nn[2] + k : ((size_t)r * tab.nn[1] + j) * tab.nn[2] + k;
                data[at] = norm * f * tab.ph[t0] * tab.ph[t1] * tab.ph[t2];
            }
    axis_tables_free(g, &tab);
    w->rep = PF_MOMENTUM;
    if (normalize && (s = pf_wave_normalize(w))) return s;
    pf_extent e;
    pf_extent_clear(&e);
    double reach = pow(FLAT_DENSITY_FLOOR, 0.5 / order);
    for (int a = 0; a < d; a++) {
        e.k_lo[a] = wavenumber[a] - reach * half_width[a];
        e.k_hi[a] = wavenumber[a] + reach * half_width[a];
    }
    pf_resolution_check(g, "flat_top", &e);
    pf_wave_log_step(w, "build", "flat_top", 0.0, 0.0, -1.0);
    /* The position extent has no closed form (ringing of the steep edges):
     * measure it. */
    return pf_resolution_check_edges(w, PF_POSITION, "flat_top", NULL);
}

pf_status pf_build_thomas_fermi(pf_wave *w, const double *center, const double *radius, const double *wavenumber,
                                int normalize)
{
    pf_grid *g = w->grid;
    const int d = g->dim;
    const axis_param params[] = {{"center", center, 0}, {"Thomas-Fermi radius", radius, 1}, {"wave number", wavenumber, 0}};
    pf_status s = check_params(g->ctx, d, params, 3);
    if (s) return s;
    axis_tables tab;
    if (axis_tables_new(g, &tab)) return pf_context_status(g->ctx);
    for (int a = 0; a < PF_MAX_DIM; a++)
        for (size_t j = 0; j < tab.nn[a]; j++) {
            size_t t = tab.offs[a] + j;
            double dx = a < d ? g->x[a][j] - center[a] : 0.0;
            double u = a < d ? dx / radius[a] : 0.0;
            tab.u2[t] = u * u;
            tab.ph[t] = a < d ? cexp(I * wavenumber[a] * dx) : 1.0;
        }
    /* integral of (1 - r^2)_+ over the ellipsoid: prod R * V_d * 2 / (d+2). */
    double integral = unit_ball(d) * 2.0 / (d + 2.0);
    for (int a = 0; a < d; a++) integral *= radius[a];
    double norm = 1.0 / sqrt(integral);
    size_t first0, count0; /* this rank's planes of a grid split over MPI ranks */
    double complex *data = pf_wave_overwrite_planes(w, &first0, &count0);
    ptrdiff_t n0 = (ptrdiff_t)count0;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static)
    for (ptrdiff_t i = 0; i < n0; i++)
        for (size_t j = 0; j < tab.nn[1]; j++)
            for (size_t k = 0; k < tab.nn[2]; k++) {
                size_t t0 = tab.offs[0] + first0 + (size_t)i, t1 = tab.offs[1] + j, t2 = tab.offs[2] + k;
                double rest = 1.0 - tab.u2[t0] - tab.u2[t1] - tab.u2[t2];
                data[((size_t)i * tab.nn[1] + j) * tab.nn[2] + k] =
                    rest > 0 ? norm * sqrt(rest) * tab.ph[t0] * tab.ph[t1] * tab.ph[t2] : 0.0;
            }
    axis_tables_free(g, &tab);
    w->rep = PF_POSITION;
    if (normalize && (s = pf_wave_normalize(w))) return s;
    pf_extent e;
    pf_extent_clear(&e);
    for (int a = 0; a < d; a++) {
        e.x_lo[a] = center[a] - radius[a];
        e.x_hi[a] = center[a] + radius[a];
        e.feature[a] = radius[a];
        e.k_lo[a] = wavenumber[a] - TF_K_REACH / radius[a];
        e.k_hi[a] = wavenumber[a] + TF_K_REACH / radius[a];
    }
    pf_resolution_check(g, "thomas_fermi", &e);
    pf_wave_log_step(w, "build", "thomas_fermi", 0.0, 0.0, -1.0);
    return PF_OK;
}
