/* pf_histogram.c - equal-width binning (conventions in pf_histogram.h). */
#include "pf_histogram.h"
#include <math.h>

static double bin_width(const pf_histogram_spec *spec)
{
    return (spec->to - spec->from) / (double)spec->bins;
}

/* Edge b as pf_histogram_edges prints it. */
static double edge(const pf_histogram_spec *spec, double w, ptrdiff_t b) { return spec->from + (double)b * w; }

ptrdiff_t pf_histogram_bin(const pf_histogram_spec *spec, double x)
{
    const double w = bin_width(spec);
    const ptrdiff_t bins = (ptrdiff_t)spec->bins;
    double q = floor((x - spec->from) / w);
    /* Written so that NaN fails the test and counts as outside; below
     * `from` the difference is negative, so the quotient's floor is too. */
    if (!(q >= 0)) return -1;
    ptrdiff_t b = q < (double)bins ? (ptrdiff_t)q : bins;
    /* The quotient is rounded and can land one bin off next to an edge; the
     * edges as printed decide: bin b holds [edge(b), edge(b + 1)). */
    if (b > 0 && x < edge(spec, w, b)) b--;
    else if (b < bins && !(x < edge(spec, w, b + 1))) b++;
    return b < bins ? b : -1;
}

void pf_histogram_edges(const pf_histogram_spec *spec, double *edges)
{
    const double w = bin_width(spec);
    for (size_t b = 0; b <= spec->bins; b++) edges[b] = spec->from + (double)b * w;
}

void pf_histogram_centers(const pf_histogram_spec *spec, double *centers)
{
    const double w = bin_width(spec);
    for (size_t b = 0; b < spec->bins; b++) centers[b] = spec->from + ((double)b + 0.5) * w;
}

pf_status pf_histogram_count(pf_context *ctx, const pf_histogram_spec *spec, const double *values, size_t n,
                             double *counts, double *outside)
{
    if (!isfinite(spec->from) || !isfinite(spec->to) || !(spec->to > spec->from))
        return pf_fail(ctx, PF_EINVAL, "histogram range must be finite with from < to, got %g and %g", spec->from,
                       spec->to);
    if (spec->bins < 1) return pf_fail(ctx, PF_EINVAL, "histogram needs at least one bin, got %zu", spec->bins);
    for (size_t b = 0; b < spec->bins; b++) counts[b] = 0;
    double out = 0;
    for (size_t i = 0; i < n; i++) {
        ptrdiff_t b = pf_histogram_bin(spec, values[i]);
        if (b < 0) out++;
        else counts[b]++;
    }
    *outside = out;
    return PF_OK;
}
