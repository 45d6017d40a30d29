/* pf_advise.h - the grid advisor: from a state's extents, its mass and a
 * planned flight (with optional momentum kicks on the way), propose grids
 * for the same-grid method and for the scaled method, with their memory.
 *
 * The rules are those of pf_longflight.h and pf_guard.h: every state must stay
 * inside the inner region of its grid (outside the guard bands, with a safety
 * margin) in position and in momentum, and a scaled flight needs the chirped
 * integrand sampled without aliasing. */
#ifndef PF_ADVISE_H
#define PF_ADVISE_H

#include <stddef.h>
#include "pf_context.h"
#include "pf_grid.h"

/* Smallest n' >= n whose prime factors are all 2, 3, 5 or 7 (sizes FFTW
 * transforms fastest), and even when n >= 2. */
size_t pf_fft_good_size(size_t n);

typedef struct pf_advice_request {
    int dim;
    double mass;                    /* kg */
    double time;                    /* planned total flight time (s), > 0 */
    double x_lo[PF_MAX_DIM], x_hi[PF_MAX_DIM]; /* state extent now (m) */
    double k_lo[PF_MAX_DIM], k_hi[PF_MAX_DIM]; /* wave-number extent (1/m) */
    size_t nkicks;
    const double *kick_time;        /* nkicks times after now (s), in [0, time] */
    const double *kick_k;           /* nkicks x dim wave-number changes (1/m); a kick may split the state */
    double feature[PF_MAX_DIM];     /* smallest feature per axis (m), 0 = not known; the proposals
                                     * resolve it as the builders require (pf_resolution_max_spacing) */
    double margin;                  /* >= 1: room beyond the extents (default 1.2 when 0) */
    size_t image_points;            /* points across the final image in the scaled plan (default 64 when 0) */
} pf_advice_request;

typedef struct pf_grid_proposal {
    size_t points[PF_MAX_DIM];
    double span[PF_MAX_DIM], spacing[PF_MAX_DIM], origin[PF_MAX_DIM];
} pf_grid_proposal;

typedef struct pf_advice {
    pf_grid_proposal same;          /* one grid for the whole flight */
    double same_bytes;              /* peak engine storage for it (B) */
    pf_grid_proposal scaled_in;     /* grid to build the state and apply the kicks on */
    pf_grid_proposal scaled_out;    /* grid the final scaled flight lands on */
    double scaled_start;            /* the scaled flight starts after the last kick (s) */
    double scaled_time;             /* and lasts this long (s) */
    double scaled_bytes;            /* peak engine storage (input + output) (B) */
    double chirp_time;              /* largest m N dx^2 / (2 pi hbar) of the scaled input grid (s) */
} pf_advice;

/* Fills *out from *q.  Fails with PF_EINVAL on a bad request (message names
 * the field). */
pf_status pf_grid_advise(pf_context *ctx, const pf_advice_request *q, pf_advice *out);

/* z with P(|Z| > z) = tail for a standard normal Z, i.e. erfc(z / sqrt 2) =
 * tail (the two-sided tail quantile; tail in (0, 1)). */
double pf_normal_tail_quantile(double tail);

/* The wave-number width of a minimum-uncertainty state of rms position
 * width `width` (m): 1 / (2 width) (1/m), from sigma_x sigma_k = 1/2. */
double pf_gaussian_min_wavenumber_width(double width);

/* Fills the extents and smallest features of q (q->dim set) for a
 * Gaussian-like state of rms widths width[a] (m) and wave-number widths
 * wavenumber_width[a] (1/m; NULL: minimum uncertainty) about center (m,
 * NULL: 0) and wavenumber (1/m, NULL: 0): each extent reaches z rms widths,
 * z = the tail quantile of pf_flight_extent_tail(ctx) but at least
 * PF_GAUSS_REACH (as far as the builders check a Gaussian), and the
 * smallest feature is the FWHM (pf_resolution.h). */
pf_status pf_advice_gaussian(pf_context *ctx, pf_advice_request *q, const double *width, const double *wavenumber_width,
                             const double *center, const double *wavenumber);

#endif
