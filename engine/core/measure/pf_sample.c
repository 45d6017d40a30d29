/* pf_sample.c - cumulative and guide tables, and event drawing. */
#include <math.h>
#include <stdlib.h>
#include "pf_internal.h"
#include "pf_sample.h"

pf_status pf_sampler_init(pf_sampler *s, const pf_field *f)
{
    s->ctx = f->ctx;
    s->field = f;
    s->cdf = NULL;
    s->guide = NULL;
    s->nguide = f->total;
    double run = 0;
    for (size_t i = 0; i < f->total; i++) {
        double v = f->values[i];
        if (!(v >= 0) || !isfinite(v))
            return pf_fail(f->ctx, PF_EINVAL, "sampling needs non-negative finite weights; value %zu is %g", i + 1, v);
        run += v;
    }
    if (!(run > 0)) return pf_fail(f->ctx, PF_EINVAL, "cannot sample from a distribution whose total is %g", run);
    s->cdf = pf_alloc(f->ctx, f->total * sizeof(double));
    s->guide = s->cdf ? pf_alloc(f->ctx, s->nguide * sizeof(size_t)) : NULL;
    if (!s->cdf || !s->guide) {
        pf_sampler_free(s);
        return pf_context_status(f->ctx);
    }
    run = 0;
    for (size_t i = 0; i < f->total; i++) {
        run += f->values[i];
        s->cdf[i] = run;
    }
    s->total = run;
    /* guide[g]: first cell whose cumulative sum exceeds g/nguide of the total. */
    size_t i = 0;
    for (size_t g = 0; g < s->nguide; g++) {
        double level = run * (double)g / (double)s->nguide;
        while (i + 1 < f->total && s->cdf[i] <= level) i++;
        s->guide[g] = i;
    }
    return PF_OK;
}

void pf_sampler_free(pf_sampler *s)
{
    if (s->cdf) pf_free(s->ctx, s->cdf, s->field->total * sizeof(double));
    if (s->guide) pf_free(s->ctx, s->guide, s->nguide * sizeof(size_t));
    s->cdf = NULL;
    s->guide = NULL;
}

size_t pf_sampler_cell(const pf_sampler *s, double u)
{
    double level = u * s->total;
    size_t g = (size_t)(u * (double)s->nguide);
    if (g >= s->nguide) g = s->nguide - 1;
    size_t i = s->guide[g];
    size_t last = s->field->total - 1;
    while (i < last && s->cdf[i] <= level) i++;
    /* Cells of zero weight share the cumulative value of their predecessor,
     * so "cdf[i] > level" already skips them. */
    return i;
}

void pf_sampler_draw(const pf_sampler *s, pf_rng *r, size_t count, int jitter, double *out)
{
    const pf_field *f = s->field;
    const int d = f->dim;
    for (size_t e = 0; e < count; e++) {
        size_t cell = pf_sampler_cell(s, pf_rng_uniform(r));
        for (int a = d - 1; a >= 0; a--) {
            size_t j = cell % f->n[a];
            cell /= f->n[a];
            double x = pf_field_coord(f, a, j);
            out[e * (size_t)d + (size_t)a] = x;
        }
        if (jitter)
            for (int a = 0; a < d; a++) out[e * (size_t)d + (size_t)a] += (pf_rng_uniform(r) - 0.5) * f->step[a];
    }
}
