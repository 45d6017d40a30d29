/* pf_sample.h - Born-rule sampling: detection events drawn from a probability
 * distribution sampled on a regular grid (a pf_field).
 *
 * Method: a cumulative table over the cells in row-major order and a guide
 * table (Chen and Asau, 1974) that maps each of n equal slices of [0, 1) to
 * its first candidate cell, so a draw costs one table look-up and, on
 * average, about one comparison - linear in the number of events, and about
 * 16 bytes per cell of set-up.  The chosen cell's centre is then displaced by
 * a uniform offset within the cell on every axis (jitter), which treats the
 * density as constant over a cell; without jitter events sit on cell centres. */
#ifndef PF_SAMPLE_H
#define PF_SAMPLE_H

#include <stddef.h>
#include "pf_field.h"
#include "pf_random.h"

typedef struct pf_sampler {
    pf_context *ctx;
    const pf_field *field;   /* borrowed: must outlive the sampler */
    double *cdf;             /* running sums, cdf[i] = sum of values 0..i */
    size_t *guide;           /* guide[s] = first i with cdf[i] > s * total / nguide */
    size_t nguide;
    double total;
} pf_sampler;

/* Builds the tables for a field of non-negative values with a positive sum.
 * The field is borrowed (its values must not change while sampling). */
pf_status pf_sampler_init(pf_sampler *s, const pf_field *f);
void pf_sampler_free(pf_sampler *s);
/* Row-major index of the cell a uniform u in [0, 1) selects. */
size_t pf_sampler_cell(const pf_sampler *s, double u);
/* Draws count events into out (count * dim coordinates, event-major:
 * out[e * dim + a]).  jitter: displace uniformly within the cell. */
void pf_sampler_draw(const pf_sampler *s, pf_rng *r, size_t count, int jitter, double *out);

#endif
