/* pf_fringe.h - fringe period, visibility and phase of a 1D profile, as read
 * out from interferometer images.
 *
 * Model: y(x) = A [1 + V cos(q x + phase)] over the chosen window, with x the
 * absolute coordinate (so the phase refers to x = 0).  The wave number q is
 * found as the peak of the profile's Fourier component |sum (y - mean)
 * exp(-i q x)| (scanned at 4x the window's natural resolution, then refined
 * by golden-section search for the least-squares residual's minimum); A, V
 * and phase
 * come from the linear least-squares fit of 1, cos qx, sin qx at that q.
 * V = (max - min) / (max + min) for a pure cosine. */
#ifndef PF_FRINGE_H
#define PF_FRINGE_H

#include <stddef.h>
#include "pf_context.h"

typedef struct pf_fringe_fit {
    double wavenumber;  /* q (rad/m) */
    double period;      /* 2 pi / q (m) */
    double visibility;  /* V = amplitude / offset */
    double phase;       /* in (-pi, pi] */
    double offset;      /* A */
    double amplitude;   /* A V */
    size_t points;      /* samples inside the window */
} pf_fringe_fit;

/* Fits the samples (x[i], y[i]) with from <= x <= to.  period_guess > 0
 * restricts the search to periods within 30% of it; 0 searches from two
 * samples per period up to the window length.  Needs at least 8 samples. */
pf_status pf_fringe_analyse(pf_context *ctx, const double *x, const double *y, size_t n, double from, double to,
                            double period_guess, pf_fringe_fit *out);

#endif
