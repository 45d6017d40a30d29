/* pf_samples.h - complex amplitudes sampled on axes read from a file, and
 * their transfer onto a wave function's grid (exact when the grids agree,
 * multilinear interpolation when asked). */
#ifndef PF_SAMPLES_H
#define PF_SAMPLES_H

#include <complex.h>
#include "pf_wave.h"

typedef struct pf_samples {
    int dim;
    size_t n[PF_MAX_DIM];
    double *axis[PF_MAX_DIM];     /* coordinates per axis (m or 1/m), NULL: unknown */
    double complex *values;       /* row-major, last axis fastest; only the slab below */
    int slab_axis;                /* values hold entries [slab_first, slab_first + slab_count) */
    size_t slab_first, slab_count; /* of this axis only (slab_count 0: all n[slab_axis]) */
    pf_rep rep;                   /* psi(x) or phi(k) */
    double mass;                  /* kg, 0 when the file does not say */
    double clock;                 /* s, 0 when the file does not say */
    char origin[24];              /* "hdf5" or "csv", for the step log */
    int has_grid;                 /* the file also gives the grid it was made on: */
    double span[PF_MAX_DIM], grid_origin[PF_MAX_DIM]; /* spans and origins (m) */
    pf_context *charged_ctx;      /* the context whose memory cap carries these buffers */
    size_t charged;               /* bytes charged to it, discharged by pf_samples_free */
} pf_samples;

/* Frees the buffers and gives their bytes back to the memory cap. */
void pf_samples_free(pf_samples *s);

/* Extent of axis a the values hold, and the number of values held. */
size_t pf_samples_held(const pf_samples *s, int a);
size_t pf_samples_count(const pf_samples *s);

/* The slab of the file a rank of a distributed grid g needs to fill its own
 * points from samples shaped like meta (read with any slab: only its shape,
 * axes and representation are used): axis 0 in position, axis 1 in
 * momentum (the transposed layout), the entries covering the rank's
 * coordinates on that axis, with one more on each side when interpolating. */
void pf_samples_slab_for(const pf_samples *meta, const pf_grid *g, int *axis, size_t *first, size_t *count);

/* Puts the samples into w (which must be on the grid to fill) in s->rep.
 * Grids "agree" when every axis has the same point count and every file
 * coordinate lies within 1e-6 spacings of the grid's (momentum axes in
 * ascending order); missing file axes agree when the counts match.  When they
 * do not agree and interpolate is 0 the call fails with PF_ESTATE and a
 * message comparing both grids; with interpolate the samples are
 * interpolated multilinearly (file axes must ascend strictly) and points
 * outside the file's range get zero.  what names the source in messages. */
pf_status pf_samples_to_wave(pf_context *ctx, const pf_samples *s, pf_wave *w, int interpolate, const char *what);

#endif
