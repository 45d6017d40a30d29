/* pf_grid.c - grid construction, coordinate tables and the shared FFTW plans. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_internal.h"

/* Largest point count per axis; beyond it the coordinate tables alone would be
 * absurd, and the product check below stays far from overflow. */
#define PF_MAX_AXIS_POINTS ((size_t)1 << 30)

static pf_status validate(pf_context *ctx, int dim, const size_t *points, const double *span,
                          const double *origin, size_t *total)
{
    if (dim < 1 || dim > PF_MAX_DIM)
        return pf_fail(ctx, PF_EINVAL, "grid dimension must be 1, 2 or 3, got %d", dim);
    size_t t = 1;
    for (int a = 0; a < dim; a++) {
        if (points[a] < PF_GRID_MIN_POINTS)
            return pf_fail(ctx, PF_EINVAL, "points on axis %d must be at least %d, got %zu", a + 1,
                           PF_GRID_MIN_POINTS, points[a]);
        if (points[a] > PF_MAX_AXIS_POINTS)
            return pf_fail(ctx, PF_EINVAL, "points on axis %d must be at most %zu, got %zu", a + 1,
                           PF_MAX_AXIS_POINTS, points[a]);
        if (!isfinite(span[a]) || span[a] <= 0)
            return pf_fail(ctx, PF_EINVAL, "span on axis %d must be finite and positive, got %g", a + 1, span[a]);
        if (span[a] > PF_GRID_MAX_EXTENT)
            return pf_fail(ctx, PF_EINVAL,
                           "span on axis %d must be at most %g m (beyond it moments and volumes overflow), got %g m",
                           a + 1, PF_GRID_MAX_EXTENT, span[a]);
        if (!(span[a] / (double)points[a] >= PF_GRID_MIN_SPACING))
            return pf_fail(ctx, PF_EINVAL,
                           "spacing on axis %d (span / points) must be at least %g m (below it norms and wave "
                           "numbers overflow), got %g m (span %g m over %zu points)",
                           a + 1, PF_GRID_MIN_SPACING, span[a] / (double)points[a], span[a], points[a]);
        if (origin && !(fabs(origin[a]) <= PF_GRID_MAX_EXTENT))
            return pf_fail(ctx, PF_EINVAL, "origin on axis %d must be finite and at most %g m in size, got %g", a + 1,
                           PF_GRID_MAX_EXTENT, origin[a]);
        size_t next = pf_bytes(t, points[a]);
        if (next == 0)
            return pf_fail(ctx, PF_ELIMIT, "grid point count overflows");
        t = next;
    }
    *total = t;
    return PF_OK;
}

static void grid_destroy(pf_grid *g)
{
    pf_context *ctx = g->ctx;
    pf_dist_grid_release(g);
    if (g->forward) fftw_destroy_plan(g->forward);
    if (g->backward) fftw_destroy_plan(g->backward);
    pf_fused_release(g);
    pf_evolve_tables_release(g);
    for (int a = 0; a < PF_MAX_DIM; a++) {
        if (g->beyond[a].bwd) fftw_destroy_plan(g->beyond[a].bwd);
        if (g->beyond[a].fwd) fftw_destroy_plan(g->beyond[a].fwd);
        pf_context_free(ctx, g->x[a]);
        pf_context_free(ctx, g->k[a]);
        pf_context_free(ctx, g->kfactor[a]);
        pf_context_free(ctx, g->flight.phase[a]);
    }
    pf_context_free(ctx, g->flight.seg_start);
    pf_context_free(ctx, g->flight.seg_ratio);
    pf_context_free(ctx, g->reduce_part);
    pf_context_free(ctx, g);
    pf_context_release(ctx);
}

/* fmod(y, 1.0), bit for bit (y - trunc(y) is exact, and a zero keeps the
 * sign of y), without libm's general fmod, which cost about 160
 * instructions per point here (half of a 1D grid's set-up). */
static double fractional_turns(double y)
{
    double f = y - trunc(y);
    return f == 0 ? copysign(0.0, y) : f;
}

static pf_status fill_tables(pf_grid *g)
{
    for (int a = 0; a < g->dim; a++) {
        size_t n = g->n[a];
        g->x[a] = pf_alloc(g->ctx, n * sizeof(double));
        g->k[a] = g->x[a] ? pf_alloc(g->ctx, n * sizeof(double)) : NULL;
        g->kfactor[a] = g->k[a] ? pf_alloc(g->ctx, n * sizeof(double complex)) : NULL;
        g->flight.phase[a] = g->kfactor[a] ? pf_alloc(g->ctx, n * sizeof(double complex)) : NULL;
        if (!g->flight.phase[a]) return pf_context_status(g->ctx);
        double dk = PF_TWO_PI / g->span[a];
        size_t half = n / 2;
        double x0 = g->origin[a] - (double)half * g->dx[a];
        double amp = g->span[a] / sqrt(PF_TWO_PI);
        for (size_t j = 0; j < n; j++) {
            g->x[a][j] = g->origin[a] + ((double)j - (double)half) * g->dx[a];
            /* FFT order: 0..ceil(n/2)-1 non-negative, the rest negative. */
            double m = j < (n + 1) / 2 ? (double)j : (double)j - (double)n;
            g->k[a][j] = m * dk;
            /* phi/S = (span/sqrt(2pi)) exp(-i k x0); the exponent is reduced
             * exactly on the integer lattice: k x0 = 2 pi m x0 / span. */
            double turns = fractional_turns(m * (x0 / g->span[a]));
            g->kfactor[a][j] = amp * cexp(-I * PF_TWO_PI * turns);
        }
    }
    return PF_OK;
}

pf_status pf_grid_new(pf_context *ctx, int dim, const size_t *points, const double *span,
                      const double *origin, pf_grid **out)
{
    size_t total = 0;
    *out = NULL;
    pf_status s = validate(ctx, dim, points, span, origin, &total);
    if (s) return s;
    /* One wave function plus the planning scratch must fit under the cap
     * (on a distributed grid: this rank's share of them). */
    size_t held = pf_dist_planned_values(ctx, dim, points, total);
    size_t need = pf_bytes(held, 2 * sizeof(double complex));
    if (need == 0 || need > ctx->memory_cap - ctx->memory_used)
        return pf_fail(ctx, PF_ELIMIT,
                       "a grid of %zu points needs about %.1f MiB for one wave function and planning%s, "
                       "over the memory cap of %.1f MiB (%.1f MiB in use); use fewer points or raise the cap",
                       total, need / 1048576.0, held < total ? " on this MPI rank" : "", ctx->memory_cap / 1048576.0,
                       ctx->memory_used / 1048576.0);
    pf_grid *g = pf_calloc(ctx, 1, sizeof *g);
    if (!g) return pf_context_status(ctx);
    g->refs = 1;
    g->ctx = ctx;
    pf_context_retain(ctx);
    g->dim = dim;
    g->total = total;
    for (int a = 0; a < PF_MAX_DIM; a++) {
        g->n[a] = a < dim ? points[a] : 1;
        g->span[a] = a < dim ? span[a] : 1.0;
        g->origin[a] = (a < dim && origin) ? origin[a] : 0.0;
        g->dx[a] = g->span[a] / (double)g->n[a];
    }
    s = fill_tables(g);
    if (!s) s = pf_reduce_reserve(g);
    if (!s) s = pf_dist_grid_attach(g);
    if (s) {
        grid_destroy(g);
        return s;
    }
    *out = g;
    return PF_OK;
}

void pf_grid_retain(pf_grid *g)
{
    if (g) g->refs++;
}

void pf_grid_release(pf_grid *g)
{
    if (g && --g->refs == 0) grid_destroy(g);
}

pf_status pf_grid_plan(pf_grid *g)
{
    pf_context *ctx = g->ctx;
    if (g->dist) return pf_dist_refuse(ctx, "a transform over the whole grid in one process");
    if (g->forward && g->plan_threads == ctx->threads) return PF_OK;
    if (g->forward) fftw_destroy_plan(g->forward);
    if (g->backward) fftw_destroy_plan(g->backward);
    g->forward = g->backward = NULL;
    g->plan_threads = 0;
    size_t bytes = pf_bytes(g->total, sizeof(double complex));
    /* Planning with FFTW_MEASURE overwrites its arrays, so plan on scratch. */
    double complex *scratch = pf_alloc(ctx, bytes);
    if (!scratch) return pf_context_status(ctx);
    int n[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) n[a] = (int)g->n[a];
    unsigned flags = pf_context_prepare_planner(ctx);
    g->forward = fftw_plan_dft(g->dim, n, scratch, scratch, FFTW_FORWARD, flags);
    g->backward = fftw_plan_dft(g->dim, n, scratch, scratch, FFTW_BACKWARD, flags);
    pf_free(ctx, scratch, bytes);
    if (!g->forward || !g->backward)
        return pf_fail(ctx, PF_EFFT, "FFTW could not plan a transform of %zu points", g->total);
    g->plan_threads = ctx->threads;
    pf_context_store_wisdom(ctx);
    fftw_plan pair[2] = {g->forward, g->backward};
    return pf_context_note_plans(ctx, "grid", g, pair, 2);
}

pf_status pf_grid_fft(pf_grid *g, double complex *data, int sign)
{
    pf_status s = pf_grid_plan(g);
    if (s) return s;
    fftw_execute_dft(sign < 0 ? g->forward : g->backward, data, data);
    return PF_OK;
}

pf_context *pf_grid_context(const pf_grid *g) { return g->ctx; }
int pf_grid_dim(const pf_grid *g) { return g->dim; }
size_t pf_grid_points(const pf_grid *g, int axis) { return g->n[axis]; }
size_t pf_grid_total(const pf_grid *g) { return g->total; }
double pf_grid_span(const pf_grid *g, int axis) { return g->span[axis]; }
double pf_grid_spacing(const pf_grid *g, int axis) { return g->dx[axis]; }
double pf_grid_origin(const pf_grid *g, int axis) { return g->origin[axis]; }
double pf_grid_kspacing(const pf_grid *g, int axis) { return PF_TWO_PI / g->span[axis]; }
double pf_grid_knyquist(const pf_grid *g, int axis) { return PF_PI / g->dx[axis]; }

double pf_grid_cell_volume(const pf_grid *g)
{
    double v = 1.0;
    for (int a = 0; a < g->dim; a++) v *= g->dx[a];
    return v;
}

double pf_grid_x(const pf_grid *g, int axis, size_t j) { return g->x[axis][j]; }
double pf_grid_k(const pf_grid *g, int axis, size_t j) { return g->k[axis][j]; }
const double *pf_grid_x_table(const pf_grid *g, int axis) { return g->x[axis]; }
const double *pf_grid_k_table(const pf_grid *g, int axis) { return g->k[axis]; }

size_t pf_grid_fft_index(const pf_grid *g, int axis, size_t ascending)
{
    size_t n = g->n[axis];
    /* Ascending order starts at the most negative k, which sits at storage
     * index ceil(n/2). */
    return (ascending + (n + 1) / 2) % n;
}

size_t pf_grid_ascending_index(const pf_grid *g, int axis, size_t fft_index)
{
    size_t n = g->n[axis];
    return (fft_index + n / 2) % n;
}

int pf_grid_same(const pf_grid *a, const pf_grid *b)
{
    if (a == b) return 1;
    if (a->dim != b->dim) return 0;
    for (int i = 0; i < a->dim; i++)
        if (a->n[i] != b->n[i] || a->span[i] != b->span[i] || a->origin[i] != b->origin[i]) return 0;
    return 1;
}

pf_status pf_grid_axis_from_samples(pf_context *ctx, const double *ax, size_t n, int wave_numbers, double *span,
                                    double *origin)
{
    if (n < 2) return pf_fail(ctx, PF_EINVAL, "a grid axis needs at least 2 sample coordinates, got %zu", n);
    double step = (ax[n - 1] - ax[0]) / (double)(n - 1);
    for (size_t j = 0; j < n; j++)
        if (!(step > 0) || fabs(ax[j] - (ax[0] + step * (double)j)) > 1e-6 * step)
            return pf_fail(ctx, PF_EINVAL, "sample coordinate %zu (%g) is off the uniform spacing %g", j + 1, ax[j],
                           step);
    if (wave_numbers) {
        *span = 2 * PF_PI / step;
        *origin = 0;
    } else {
        *span = step * (double)n;
        *origin = ax[n / 2];
    }
    return PF_OK;
}
