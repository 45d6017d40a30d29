/* pf_wigner.c - discrete Wigner function on the grid's phase-space axes. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_internal.h"
#include "pf_wigner.h"

/* Working buffers for one axis: a 1D grid of the axis geometry supplies the
 * FFT plans (the wave's own grid when it is 1D). */
typedef struct wig_work {
    pf_grid *g1;
    int own_grid;
    size_t n;
    double complex *line, *half, *u, *gbuf;
} wig_work;

static void work_free(pf_context *ctx, wig_work *k)
{
    size_t b = k->n * sizeof(double complex);
    pf_free(ctx, k->line, b);
    pf_free(ctx, k->half, b);
    pf_free(ctx, k->u, 2 * b);
    pf_free(ctx, k->gbuf, b);
    if (k->own_grid) pf_grid_release(k->g1);
}

static pf_status work_init(pf_wave *w, int axis, wig_work *k)
{
    pf_grid *g = w->grid;
    memset(k, 0, sizeof *k);
    k->n = g->n[axis];
    if (g->dim == 1) {
        k->g1 = g;
    } else {
        double span = g->span[axis], origin = g->origin[axis];
        pf_status s = pf_grid_new(g->ctx, 1, &k->n, &span, &origin, &k->g1);
        if (s) return s;
        k->own_grid = 1;
    }
    size_t b = k->n * sizeof(double complex);
    k->line = pf_alloc(g->ctx, b);
    k->half = pf_alloc(g->ctx, b);
    k->u = pf_alloc(g->ctx, 2 * b);
    k->gbuf = pf_alloc(g->ctx, b);
    if (!k->line || !k->half || !k->u || !k->gbuf) {
        work_free(g->ctx, k);
        return pf_context_status(g->ctx);
    }
    return PF_OK;
}

/* Adds weight * W of the line in k->line to out. */
static pf_status line_wigner(wig_work *k, double dx, double weight, double *out)
{
    const size_t n = k->n;
    pf_grid *g1 = k->g1;
    /* Half-cell values: shift by dx/2 exactly in momentum space. */
    memcpy(k->half, k->line, n * sizeof(double complex));
    pf_status s = pf_grid_fft(g1, k->half, -1);
    if (s) return s;
    for (size_t m = 0; m < n; m++) {
        double mode = nearbyint(g1->k[0][m] / pf_grid_kspacing(g1, 0));
        /* An even axis's Nyquist mode is split between +-k_N (as for the
         * current, pf_flux.h): cos(pi/2) = 0 at the half-cell points. */
        if (n % 2 == 0 && m == n / 2) k->half[m] = 0;
        else k->half[m] *= cexp(I * PF_PI * mode / (double)n) / (double)n;
    }
    s = pf_grid_fft(g1, k->half, +1);
    if (s) return s;
    for (size_t j = 0; j < n; j++) {
        k->u[2 * j] = k->line[j];
        k->u[2 * j + 1] = k->half[j];
    }
    const size_t n2 = 2 * n;
    const double h = 0.5 * dx;
    for (size_t j = 0; j < n; j++) {
        /* g[r] = f(r) + f(r - n), f(s) = conj(u[2j + s]) u[2j - s], with the
         * state taken as zero outside the box (no periodic wrap): a wrapped
         * correlation would put a ghost copy of the state half a period away. */
        for (size_t r = 0; r < n; r++) {
            double complex v = 0;
            ptrdiff_t c = (ptrdiff_t)(2 * j), sp = (ptrdiff_t)r, sm = (ptrdiff_t)r - (ptrdiff_t)n;
            if (c + sp < (ptrdiff_t)n2 && c - sp >= 0) v += conj(k->u[c + sp]) * k->u[c - sp];
            if (r > 0 && c + sm >= 0 && c - sm < (ptrdiff_t)n2) v += conj(k->u[c + sm]) * k->u[c - sm];
            k->gbuf[r] = v;
        }
        s = pf_grid_fft(g1, k->gbuf, +1);
        if (s) return s;
        double *row = out + j * n;
        for (size_t m = 0; m < n; m++)
            row[pf_grid_ascending_index(g1, 0, m)] += weight * (h / PF_PI) * creal(k->gbuf[m]);
    }
    return PF_OK;
}

typedef struct wigner_args {
    int axis, accumulate;
    pf_wigner_mode mode;
    const size_t *through;
    double weight;
} wigner_args;

static pf_status wigner_whole(pf_wave *w, void *user, double *out)
{
    const wigner_args *a = user;
    return pf_wave_wigner(w, a->axis, a->mode, a->through, a->weight, a->accumulate, out);
}

pf_status pf_wave_wigner(pf_wave *w, int axis, pf_wigner_mode mode, const size_t *through, double weight,
                         int accumulate, double *out)
{
    pf_grid *g = w->grid;
    if (axis < 0 || axis >= g->dim) return pf_fail(g->ctx, PF_EINVAL, "Wigner axis must be 1..%d", g->dim);
    if (mode == PF_WIGNER_CUT && g->dim > 1)
        for (int a = 0; a < g->dim; a++)
            if (a != axis && through[a] >= g->n[a])
                return pf_fail(g->ctx, PF_EINVAL, "cut index %zu on axis %d is outside the grid", through[a], a + 1);
    if (g->dist) {
        /* Split over MPI ranks: computed on the position wave gathered onto
         * rank 0 (the single process's bits), the n x n table broadcast. */
        wigner_args a = {axis, accumulate, mode, through, weight};
        return pf_dist_on_whole(w, PF_POSITION, wigner_whole, &a, out, g->n[axis] * g->n[axis]);
    }
    pf_status s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    wig_work k;
    s = work_init(w, axis, &k);
    if (s) return s;
    const size_t n = k.n;
    if (!accumulate) memset(out, 0, n * n * sizeof(double));
    size_t inner = 1, outer = 1;
    for (int a = 0; a < axis; a++) outer *= g->n[a];
    for (int a = axis + 1; a < g->dim; a++) inner *= g->n[a];
    double dx = g->dx[axis];
    if (mode == PF_WIGNER_CUT) {
        size_t o = 0, i = 0;
        for (int a = 0; a < axis; a++) o = o * g->n[a] + (g->dim > 1 ? through[a] : 0);
        for (int a = axis + 1; a < g->dim; a++) i = i * g->n[a] + through[a];
        double norm = 0;
        for (size_t m = 0; m < n; m++) {
            k.line[m] = w->store[(o * n + m) * inner + i];
            norm += creal(k.line[m] * conj(k.line[m]));
        }
        norm *= dx;
        if (!(norm > 0)) s = pf_fail(g->ctx, PF_EINVAL, "the state vanishes along the chosen cut");
        else s = line_wigner(&k, dx, weight / norm, out);
    } else {
        double cell = 1;
        for (int a = 0; a < g->dim; a++)
            if (a != axis) cell *= g->dx[a];
        for (size_t o = 0; o < outer && !s; o++)
            for (size_t i = 0; i < inner && !s; i++) {
                for (size_t m = 0; m < n; m++) k.line[m] = w->store[(o * n + m) * inner + i];
                s = line_wigner(&k, dx, weight * cell, out);
            }
    }
    work_free(g->ctx, &k);
    return s;
}
