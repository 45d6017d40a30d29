/* pf_histogram.c - equal-width binning (conventions in pf_histogram.h). */
#include "pf_histogram.h"
#include <math.h>

static double bin_width(const pf_histogram_spec *spec)
{
    return (spec->to - spec->from) / (double)spec->bins;
}

ptrdiff_t pf_histogram_bin(const pf_histogram_spec *spec, double x)
{
    double b = floor((x - spec->from) / bin_width(spec));
    /* Written so that NaN fails the test and counts as outside. */
    if (!(b >= 0 && b < (double)spec->bins)) return -1;
    return (ptrdiff_t)b;
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
