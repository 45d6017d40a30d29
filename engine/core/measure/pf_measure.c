/* pf_measure.c - region weights, region probabilities and fidelity (with <a|b> from pf_wave_inner). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_algebra.h"
#include "pf_dist_measure.h"
#include "pf_internal.h"
#include "pf_measure.h"
#include "pf_observe.h"

pf_status pf_region_check(const pf_grid *g, const pf_region *r)
{
    const int d = g->dim;
    switch (r->kind) {
    case PF_REGION_BOX:
        for (int a = 0; a < d; a++)
            if (isnan(r->lo[a]) || isnan(r->hi[a]) || r->lo[a] > r->hi[a])
                return pf_fail(g->ctx, PF_EINVAL, "box corner on axis %d must satisfy min <= max, got %g and %g",
                               a + 1, r->lo[a], r->hi[a]);
        return PF_OK;
    case PF_REGION_HALF_SPACE: {
        double nn = 0;
        for (int a = 0; a < d; a++) {
            if (!isfinite(r->point[a]) || !isfinite(r->normal[a]))
                return pf_fail(g->ctx, PF_EINVAL, "half-space point and normal must be finite");
            nn += r->normal[a] * r->normal[a];
        }
        if (!(nn > 0)) return pf_fail(g->ctx, PF_EINVAL, "half-space normal must not be zero");
        return PF_OK;
    }
    case PF_REGION_BALL:
        for (int a = 0; a < d; a++)
            if (!isfinite(r->point[a])) return pf_fail(g->ctx, PF_EINVAL, "ball centre must be finite");
        if (!(r->radius > 0) || !isfinite(r->radius))
            return pf_fail(g->ctx, PF_EINVAL, "ball radius must be positive, got %g", r->radius);
        return PF_OK;
    case PF_REGION_MASK:
        if (!r->mask) return pf_fail(g->ctx, PF_EINVAL, "mask region has no weights");
        for (size_t i = 0; i < (r->mask_count ? r->mask_count : g->total); i++)
            if (!(r->mask[i] >= 0 && r->mask[i] <= 1))
                return pf_fail(g->ctx, PF_EINVAL, "mask weight %zu must lie in [0, 1], got %g", r->mask_first + i + 1,
                               r->mask[i]);
        return PF_OK;
    }
    return pf_fail(g->ctx, PF_EINVAL, "unknown region kind %d", (int)r->kind);
}

/* The geometric rule at one position (boundary included). */
int pf_region_contains(int dim, const pf_region *r, const double *x)
{
    if (r->kind == PF_REGION_BOX) {
        for (int a = 0; a < dim; a++)
            if (x[a] < r->lo[a] || x[a] > r->hi[a]) return 0;
        return 1;
    }
    if (r->kind == PF_REGION_HALF_SPACE) {
        double dot = 0;
        for (int a = 0; a < dim; a++) dot += (x[a] - r->point[a]) * r->normal[a];
        return dot >= 0;
    }
    double r2 = 0;
    for (int a = 0; a < dim; a++) r2 += (x[a] - r->point[a]) * (x[a] - r->point[a]);
    return r2 <= r->radius * r->radius;
}

pf_status pf_region_weights(const pf_grid *g, const pf_region *r, double *out)
{
    pf_status s = pf_region_check(g, r);
    if (s) return s;
    if (r->kind == PF_REGION_MASK) {
        if (r->mask_count) return pf_fail(g->ctx, PF_ESTATE, "a mask sampled on one MPI rank's points has no whole table");
        memcpy(out, r->mask, g->total * sizeof(double));
        return PF_OK;
    }
    const int d = g->dim;
    size_t idx[PF_MAX_DIM] = {0, 0, 0};
    for (size_t off = 0; off < g->total; off++) {
        double x[PF_MAX_DIM];
        for (int a = 0; a < d; a++) x[a] = g->x[a][idx[a]];
        out[off] = pf_region_contains(g->dim, r, x) ? 1.0 : 0.0;
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < g->n[a]) break;
            idx[a] = 0;
        }
    }
    return PF_OK;
}

pf_status pf_field_region_integral(const pf_field *f, const pf_grid *g, const pf_region *r, double *out)
{
    if (f->total != g->total || f->dim != g->dim)
        return pf_fail(g->ctx, PF_ESTATE, "distribution and region grid differ in shape");
    size_t bytes = g->total * sizeof(double);
    double *wts = pf_alloc(g->ctx, bytes);
    if (!wts) return pf_context_status(g->ctx);
    pf_status s = pf_region_weights(g, r, wts);
    if (s == PF_OK) {
        double sum = 0;
        for (size_t i = 0; i < g->total; i++) sum += wts[i] * f->values[i];
        *out = sum * pf_grid_cell_volume(g);
    }
    pf_free(g->ctx, wts, bytes);
    return s;
}

pf_status pf_wave_region_probability(pf_wave *w, const pf_region *r, double *p)
{
    /* Split over MPI ranks: summed over each rank's planes in turn. */
    if (w->grid->dist) return pf_dist_region_probability(w, r, p);
    pf_field f;
    pf_status s = pf_field_for_grid(w->grid, PF_POSITION, &f);
    if (s) return s;
    s = pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL);
    double inside = 0;
    if (s == PF_OK) s = pf_field_region_integral(&f, w->grid, r, &inside);
    double norm = s == PF_OK ? pf_field_integral(&f) : 0;
    pf_field_free(&f);
    if (s) return s;
    if (!(norm > 0)) return pf_fail(w->grid->ctx, PF_EINVAL, "region probability of a zero state is undefined");
    *p = inside / norm;
    return PF_OK;
}

pf_status pf_wave_fidelity(pf_wave *a, pf_wave *b, double *out)
{
    double complex o;
    pf_status s = pf_wave_inner(a, b, &o);
    if (s) return s;
    double na = pf_wave_norm(a), nb = pf_wave_norm(b);
    if (!(na > 0) || !(nb > 0)) return pf_fail(a->grid->ctx, PF_EINVAL, "fidelity with a zero state is undefined");
    double f = (creal(o) * creal(o) + cimag(o) * cimag(o)) / (na * nb);
    *out = f > 1 ? 1 : f;
    return PF_OK;
}
