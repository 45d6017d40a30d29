/* pf_samples.c - transfer of sampled amplitudes onto a grid: exact copy when
 * the grids agree, multilinear interpolation on request. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_samples.h"

void pf_samples_free(pf_samples *s)
{
    for (int a = 0; a < PF_MAX_DIM; a++) free(s->axis[a]);
    free(s->values);
    if (s->charged_ctx) {
        pf_context_discharge(s->charged_ctx, s->charged);
        pf_context_release(s->charged_ctx);
    }
    memset(s, 0, sizeof *s);
}

size_t pf_samples_held(const pf_samples *s, int a)
{
    return s->slab_count && a == s->slab_axis ? s->slab_count : s->n[a];
}

size_t pf_samples_count(const pf_samples *s)
{
    size_t total = 1;
    for (int a = 0; a < s->dim; a++) total *= pf_samples_held(s, a);
    return total;
}

/* Grid coordinate j on axis a in the representation's natural reading order
 * (position: as stored; momentum: ascending k). */
static double grid_coord(const pf_grid *g, pf_rep rep, int a, size_t j)
{
    return rep == PF_POSITION ? pf_grid_x(g, a, j) : pf_grid_k(g, a, pf_grid_fft_index(g, a, j));
}

static double grid_step(const pf_grid *g, pf_rep rep, int a)
{
    return rep == PF_POSITION ? pf_grid_spacing(g, a) : pf_grid_kspacing(g, a);
}

typedef struct sampler {
    const pf_samples *s;
    const double *axis[PF_MAX_DIM];
    double tol[PF_MAX_DIM];       /* coordinate tolerance for "on a node" */
} sampler;

/* Locates c on an ascending axis: node j and fraction t in [0,1) towards
 * j+1; t = 0 exactly when c is within tol of node j.  Returns 0 outside. */
static int locate(const double *ax, size_t n, double tol, double c, size_t *j, double *t)
{
    if (c < ax[0] - tol || c > ax[n - 1] + tol) return 0;
    size_t lo = 0, hi = n - 1;
    while (hi - lo > 1) {
        size_t mid = lo + (hi - lo) / 2;
        if (ax[mid] <= c) lo = mid; else hi = mid;
    }
    if (fabs(c - ax[lo]) <= tol) { *j = lo; *t = 0; return 1; }
    if (fabs(c - ax[hi]) <= tol) { *j = hi; *t = 0; return 1; }
    *j = lo;
    *t = (c - ax[lo]) / (ax[hi] - ax[lo]);
    return 1;
}

static int sample_at(void *user, const double *coord, double complex *value)
{
    sampler *sp = user;
    const pf_samples *s = sp->s;
    size_t j[PF_MAX_DIM] = {0, 0, 0};
    double t[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < s->dim; a++) {
        if (!locate(sp->axis[a], s->n[a], sp->tol[a], coord[a], &j[a], &t[a])) {
            *value = 0;
            return 0;
        }
    }
    /* Sum over the 2^dim corners; corners with zero weight are skipped, so a
     * point on a node reads exactly the stored value. */
    double complex sum = 0;
    for (int corner = 0; corner < (1 << s->dim); corner++) {
        double wgt = 1;
        size_t off = 0;
        for (int a = 0; a < s->dim; a++) {
            int up = (corner >> a) & 1;
            double wa = up ? t[a] : 1 - t[a];
            if (wa == 0) { wgt = 0; break; }
            wgt *= wa;
            /* Only a slab of this axis may be held (pf_samples_slab_for
             * chose it to cover every point this rank asks for). */
            size_t at = j[a] + (size_t)up, first = s->slab_count && a == s->slab_axis ? s->slab_first : 0;
            if (at < first || at - first >= pf_samples_held(s, a)) return -1;
            off = off * pf_samples_held(s, a) + (at - first);
        }
        if (wgt != 0) sum += wgt * s->values[off];
    }
    *value = sum;
    return 0;
}

static void describe_axis(char *buf, size_t size, const char *who, size_t n, double first, double last, const char *unit)
{
    snprintf(buf, size, "%s has %zu points from %.9g to %.9g %s", who, n, first, last, unit);
}

pf_status pf_samples_to_wave(pf_context *ctx, const pf_samples *s, pf_wave *w, int interpolate, const char *what)
{
    pf_grid *g = pf_wave_grid(w);
    int d = pf_grid_dim(g);
    const char *unit = s->rep == PF_POSITION ? "m" : "1/m";
    if (s->dim != d)
        return pf_fail(ctx, PF_ESTATE, "%s is %dD but the grid is %dD", what, s->dim, d);
    sampler sp = {s, {NULL, NULL, NULL}, {0, 0, 0}};
    double *made[PF_MAX_DIM] = {NULL, NULL, NULL};
    pf_status st = PF_OK;
    for (int a = 0; a < d && !st; a++) {
        size_t gn = pf_grid_points(g, a);
        double step = grid_step(g, s->rep, a);
        sp.tol[a] = 1e-6 * step;
        if (!s->axis[a]) {
            if (s->n[a] != gn) {
                st = pf_fail(ctx, PF_ESTATE,
                             "%s: axis %d has %zu samples but the grid has %zu points, and the file gives no "
                             "coordinates to interpolate from",
                             what, a + 1, s->n[a], gn);
                break;
            }
            made[a] = malloc(gn * sizeof *made[a]);
            if (!made[a]) { st = pf_fail(ctx, PF_ENOMEM, "out of memory"); break; }
            for (size_t j = 0; j < gn; j++) made[a][j] = grid_coord(g, s->rep, a, j);
            sp.axis[a] = made[a];
            continue;
        }
        sp.axis[a] = s->axis[a];
        int agree = s->n[a] == gn;
        for (size_t j = 0; agree && j < gn; j++)
            agree = fabs(s->axis[a][j] - grid_coord(g, s->rep, a, j)) <= sp.tol[a];
        if (agree) continue;
        for (size_t j = 1; j < s->n[a]; j++) {
            if (!(s->axis[a][j] > s->axis[a][j - 1])) {
                st = pf_fail(ctx, PF_EINVAL, "%s: coordinates on axis %d do not ascend (entry %zu is %.9g, entry %zu is %.9g)",
                             what, a + 1, j, s->axis[a][j - 1], j + 1, s->axis[a][j]);
                break;
            }
        }
        if (st) break;
        if (!interpolate) {
            char fa[160], ga[160];
            describe_axis(fa, sizeof fa, "the file", s->n[a], s->axis[a][0], s->axis[a][s->n[a] - 1], unit);
            describe_axis(ga, sizeof ga, "the grid", gn, grid_coord(g, s->rep, a, 0), grid_coord(g, s->rep, a, gn - 1), unit);
            st = pf_fail(ctx, PF_ESTATE, "grid mismatch on axis %d of %s: %s, %s; pass interpolate=true to resample",
                         a + 1, what, fa, ga);
        }
    }
    if (!st) {
        st = pf_wave_fill(w, s->rep, sample_at, &sp);
        if (st == PF_ECALLBACK) st = pf_fail(ctx, PF_ECALLBACK, "%s: sampling failed", what);
    }
    for (int a = 0; a < PF_MAX_DIM; a++) free(made[a]);
    return st;
}

void pf_samples_slab_for(const pf_samples *meta, const pf_grid *g, int *axis, size_t *first, size_t *count)
{
    const pf_rep rep = meta->rep;
    const int a = rep == PF_MOMENTUM ? 1 : 0;
    size_t f, c;
    pf_grid_slab(g, rep, &f, &c);
    *axis = a;
    *first = 0;
    *count = meta->n[a];
    if (c == 0 || meta->dim != pf_grid_dim(g) || a >= meta->dim) return; /* all: the transfer reports any mismatch */
    /* The rank's coordinates on axis a (momentum: storage order, so take
     * the extremes over the slab, which may wrap round k = 0's far side). */
    double lo = INFINITY, hi = -INFINITY;
    size_t ilo = SIZE_MAX, ihi = 0; /* file entries when the file gives no coordinates */
    for (size_t j = f; j < f + c; j++) {
        double x = rep == PF_POSITION ? pf_grid_x(g, a, j) : pf_grid_k(g, a, j);
        size_t i = rep == PF_POSITION ? j : pf_grid_ascending_index(g, a, j);
        lo = x < lo ? x : lo;
        hi = x > hi ? x : hi;
        ilo = i < ilo ? i : ilo;
        ihi = i > ihi ? i : ihi;
    }
    const double *ax = meta->axis[a];
    size_t n = meta->n[a];
    if (!ax) {
        if (ihi < n) {
            *first = ilo;
            *count = ihi - ilo + 1;
        }
        return;
    }
    /* Entries bracketing [lo, hi], with the tolerance pf_samples_to_wave
     * uses for "on a node", plus one on each side for interpolation. */
    double tol = 1e-6 * (rep == PF_POSITION ? pf_grid_spacing(g, a) : pf_grid_kspacing(g, a));
    size_t b = 0, e = n - 1;
    while (b + 1 < n && ax[b + 1] <= lo - tol) b++;
    while (e > 0 && ax[e - 1] >= hi + tol) e--;
    if (e < b) return; /* not ascending: read all, the transfer reports it */
    *first = b;
    *count = e - b + 1;
}
