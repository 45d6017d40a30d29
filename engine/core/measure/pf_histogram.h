/* pf_histogram.h - counting values (detection events, arrival times) in
 * equal bins over a range.
 *
 * Bins of width w = (to - from) / bins, edges e_b = from + b w as
 * pf_histogram_edges gives them: bin b holds [e_b, e_(b+1)), left edge in,
 * right edge out, and a value at e_bins (`to` to rounding) or beyond, or
 * below `from`, is outside (the convention of GSL's gsl_histogram).  The
 * index is found from floor((x - from) / w) and then checked against the
 * two edges, so a value within rounding of an edge still lands on the side
 * the printed edges say. */
#ifndef PF_HISTOGRAM_H
#define PF_HISTOGRAM_H

#include <stddef.h>
#include "pf_context.h"

typedef struct pf_histogram_spec {
    double from, to; /* the range, finite, from < to */
    size_t bins;     /* >= 1 */
} pf_histogram_spec;

/* Bin of x, 0 .. bins - 1, or -1 when x lies outside [from, to) (NaN too).
 * spec must be valid (pf_histogram_count checks it). */
ptrdiff_t pf_histogram_bin(const pf_histogram_spec *spec, double x);

/* bins + 1 edges from + b w, b = 0 .. bins (the last one from + bins w,
 * which may differ from `to` by rounding). */
void pf_histogram_edges(const pf_histogram_spec *spec, double *edges);

/* bins centres from + (b + 1/2) w. */
void pf_histogram_centers(const pf_histogram_spec *spec, double *centers);

/* Counts the n values into counts[0 .. bins - 1] (overwritten) and the
 * values outside the range into *outside.  Fails (PF_EINVAL) on a range
 * that is not finite with from < to, or no bins; counts are then untouched. */
pf_status pf_histogram_count(pf_context *ctx, const pf_histogram_spec *spec, const double *values, size_t n,
                             double *counts, double *outside);

#endif
