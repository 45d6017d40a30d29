/* pf_field.c - fields: construction from densities, marginals, slices,
 * radial profiles and moments.  These are reductions over arrays that a
 * script asks for a few times per run, so they are written serially and are
 * therefore deterministic for any thread count. */
#include <math.h>
#include <string.h>
#include "pf_field.h"
#include "pf_internal.h"

pf_status pf_field_new(pf_context *ctx, int dim, const size_t *n, const double *first, const double *step,
                       pf_field *out)
{
    memset(out, 0, sizeof *out);
    out->ctx = ctx;
    if (dim < 1 || dim > PF_MAX_DIM) return pf_fail(ctx, PF_EINVAL, "field dimension must be 1..3, got %d", dim);
    size_t total = 1;
    for (int a = 0; a < PF_MAX_DIM; a++) {
        out->n[a] = 1;
        out->first[a] = 0;
        out->step[a] = 1;
    }
    for (int a = 0; a < dim; a++) {
        if (n[a] < 1) return pf_fail(ctx, PF_EINVAL, "field axis %d needs at least one sample", a + 1);
        if (!(step[a] > 0) || !isfinite(step[a]) || !isfinite(first[a]))
            return pf_fail(ctx, PF_EINVAL, "field axis %d needs a finite positive spacing, got %g", a + 1, step[a]);
        total = pf_bytes(total, n[a]);
        if (!total) return pf_fail(ctx, PF_ELIMIT, "field size overflows");
        out->n[a] = n[a];
        out->first[a] = first[a];
        out->step[a] = step[a];
    }
    size_t bytes = pf_bytes(total, sizeof(double));
    double *v = pf_alloc(ctx, bytes);
    if (!v) return pf_context_status(ctx);
    memset(v, 0, bytes);
    out->dim = dim;
    out->total = total;
    out->values = v;
    return PF_OK;
}

void pf_field_free(pf_field *f)
{
    if (f->values) pf_free(f->ctx, f->values, f->total * sizeof(double));
    f->values = NULL;
    f->total = 0;
}

pf_status pf_field_for_grid(const pf_grid *g, pf_rep rep, pf_field *out)
{
    double first[PF_MAX_DIM], step[PF_MAX_DIM];
    for (int a = 0; a < g->dim; a++) {
        if (rep == PF_POSITION) {
            first[a] = g->x[a][0];
            step[a] = g->dx[a];
        } else {
            first[a] = g->k[a][pf_grid_fft_index(g, a, 0)];
            step[a] = pf_grid_kspacing(g, a);
        }
    }
    return pf_field_new(g->ctx, g->dim, g->n, first, step, out);
}

pf_status pf_field_add_density(pf_field *f, pf_wave *w, pf_rep rep, double weight, double *scratch)
{
    pf_grid *g = w->grid;
    if (f->dim != g->dim) return pf_fail(g->ctx, PF_ESTATE, "field and wave function differ in dimension");
    for (int a = 0; a < g->dim; a++)
        if (f->n[a] != g->n[a]) return pf_fail(g->ctx, PF_ESTATE, "field and wave function differ in shape");
    double *buf = scratch;
    size_t bytes = g->total * sizeof(double);
    if (!buf) {
        buf = pf_alloc(g->ctx, bytes);
        if (!buf) return pf_context_status(g->ctx);
    }
    pf_status s = pf_wave_density(w, rep, buf);
    if (s == PF_OK)
        for (size_t i = 0; i < f->total; i++) f->values[i] += weight * buf[i];
    if (!scratch) pf_free(g->ctx, buf, bytes);
    return s;
}

static double cell_volume(const pf_field *f)
{
    double v = 1;
    for (int a = 0; a < f->dim; a++) v *= f->step[a];
    return v;
}

double pf_field_integral(const pf_field *f)
{
    double s = 0;
    for (size_t i = 0; i < f->total; i++) s += f->values[i];
    return s * cell_volume(f);
}

double pf_field_coord(const pf_field *f, int axis, size_t j) { return f->first[axis] + (double)j * f->step[axis]; }

size_t pf_field_nearest(const pf_field *f, int axis, double c)
{
    double j = nearbyint((c - f->first[axis]) / f->step[axis]);
    if (!(j > 0)) return 0;
    if (j >= (double)(f->n[axis] - 1)) return f->n[axis] - 1;
    return (size_t)j;
}

/* Unravels a row-major offset into per-axis indices (axes beyond dim are 0). */
static void unravel(const pf_field *f, size_t off, size_t *idx)
{
    for (int a = PF_MAX_DIM - 1; a >= 0; a--) {
        if (a >= f->dim) {
            idx[a] = 0;
            continue;
        }
        idx[a] = off % f->n[a];
        off /= f->n[a];
    }
}

/* The field over the axes f keeps (keep[a] != 0), with their points,
 * first values and steps; map[b] is the axis of f behind axis b of out. */
static pf_status kept_field(const pf_field *f, const int *keep, int *map, pf_field *out)
{
    size_t n[PF_MAX_DIM];
    double first[PF_MAX_DIM], step[PF_MAX_DIM];
    int kept = 0;
    for (int a = 0; a < f->dim; a++) {
        if (!keep[a]) continue;
        map[kept] = a;
        n[kept] = f->n[a];
        first[kept] = f->first[a];
        step[kept] = f->step[a];
        kept++;
    }
    return pf_field_new(f->ctx, kept, n, first, step, out);
}

/* The offset in out (kept_field) of the point of f at idx. */
static size_t kept_offset(const pf_field *out, const int *map, const size_t *idx)
{
    size_t o = 0;
    for (int b = 0; b < out->dim; b++) o = o * out->n[b] + idx[map[b]];
    return o;
}

pf_status pf_field_marginal(const pf_field *f, const int *keep, pf_field *out)
{
    double weight = 1;
    int kept = 0, map[PF_MAX_DIM];
    for (int a = 0; a < f->dim; a++) {
        if (keep[a]) kept++;
        else weight *= f->step[a];
    }
    if (!kept) return pf_fail(f->ctx, PF_EINVAL, "a marginal must keep at least one axis");
    pf_status s = kept_field(f, keep, map, out);
    if (s) return s;
    size_t idx[PF_MAX_DIM];
    for (size_t off = 0; off < f->total; off++) {
        unravel(f, off, idx);
        out->values[kept_offset(out, map, idx)] += f->values[off] * weight;
    }
    return PF_OK;
}

void pf_column_integrals(const double *values, size_t rows, size_t count, double step, double *out)
{
    for (size_t r = 0; r < rows; r++) {
        double sum = 0;
        for (size_t k = 0; k < count; k++) sum += values[r * count + k];
        out[r] = sum * step;
    }
}

pf_status pf_field_slice(const pf_field *f, const size_t *fixed, pf_field *out)
{
    int keep[PF_MAX_DIM] = {0}, kept = 0, map[PF_MAX_DIM];
    for (int a = 0; a < f->dim; a++) {
        if (fixed[a] == PF_FREE_AXIS) {
            keep[a] = 1;
            kept++;
        } else if (fixed[a] >= f->n[a]) {
            return pf_fail(f->ctx, PF_EINVAL, "slice index %zu on axis %d is outside 0..%zu", fixed[a], a + 1,
                           f->n[a] - 1);
        }
    }
    if (!kept) return pf_fail(f->ctx, PF_EINVAL, "a slice needs at least one free axis");
    pf_status s = kept_field(f, keep, map, out);
    if (s) return s;
    size_t idx[PF_MAX_DIM];
    for (size_t off = 0; off < f->total; off++) {
        unravel(f, off, idx);
        int on = 1;
        for (int a = 0; a < f->dim; a++)
            if (fixed[a] != PF_FREE_AXIS && idx[a] != fixed[a]) on = 0;
        if (on) out->values[kept_offset(out, map, idx)] = f->values[off];
    }
    return PF_OK;
}

pf_status pf_field_radial(const pf_field *f, const double *center, double bin, size_t nbins, double *profile,
                          double *count)
{
    if (f->dim < 2) return pf_fail(f->ctx, PF_EINVAL, "a radial profile needs a 2D or 3D distribution");
    if (!(bin > 0) || !isfinite(bin)) return pf_fail(f->ctx, PF_EINVAL, "radial bin width must be positive, got %g", bin);
    if (nbins < 1) return pf_fail(f->ctx, PF_EINVAL, "a radial profile needs at least one bin");
    for (size_t b = 0; b < nbins; b++) profile[b] = count[b] = 0;
    size_t idx[PF_MAX_DIM];
    for (size_t off = 0; off < f->total; off++) {
        unravel(f, off, idx);
        double r2 = 0;
        for (int a = 0; a < f->dim; a++) {
            double d = pf_field_coord(f, a, idx[a]) - center[a];
            r2 += d * d;
        }
        double b = floor(sqrt(r2) / bin);
        if (b >= (double)nbins) continue;
        profile[(size_t)b] += f->values[off];
        count[(size_t)b] += 1;
    }
    for (size_t b = 0; b < nbins; b++)
        if (count[b] > 0) profile[b] /= count[b];
    return PF_OK;
}

pf_status pf_field_moments(const pf_field *f, double *mean, double *cov)
{
    const int d = f->dim;
    double s0 = 0, s1[PF_MAX_DIM] = {0, 0, 0};
    size_t idx[PF_MAX_DIM];
    for (size_t off = 0; off < f->total; off++) {
        unravel(f, off, idx);
        double v = f->values[off];
        s0 += v;
        for (int a = 0; a < d; a++) s1[a] += v * pf_field_coord(f, a, idx[a]);
    }
    if (!(s0 > 0)) return pf_fail(f->ctx, PF_EINVAL, "moments of a zero distribution are undefined");
    double m[PF_MAX_DIM];
    for (int a = 0; a < d; a++) m[a] = s1[a] / s0;
    if (mean)
        for (int a = 0; a < d; a++) mean[a] = m[a];
    if (!cov) return PF_OK;
    /* Second pass about the mean, so a cloud far from the origin keeps its
     * small variance to full precision. */
    double s2[PF_MAX_DIM * PF_MAX_DIM] = {0};
    for (size_t off = 0; off < f->total; off++) {
        unravel(f, off, idx);
        double v = f->values[off], dx[PF_MAX_DIM];
        for (int a = 0; a < d; a++) dx[a] = pf_field_coord(f, a, idx[a]) - m[a];
        for (int a = 0; a < d; a++)
            for (int b = a; b < d; b++) s2[a * d + b] += v * dx[a] * dx[b];
    }
    for (int a = 0; a < d; a++)
        for (int b = a; b < d; b++) cov[a * d + b] = cov[b * d + a] = s2[a * d + b] / s0;
    return PF_OK;
}
