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
    double envelope_center; /* x_c of the envelope model (m); NaN without one */
    double envelope_width;  /* sinc2: W, the distance from x_c to the first zero; gaussian: rms s; NaN without */
} pf_fringe_fit;

/* Envelope of the fringes: y(x) = E(x) A [1 + V cos(q x + phase)] with
 * E = 1 (none), sinc^2(pi (x - x_c) / W) (the single-slit envelope of a
 * double slit's Fraunhofer pattern) or exp(-(x - x_c)^2 / (2 s^2)). */
typedef enum pf_fringe_envelope {
    PF_ENVELOPE_NONE = 0,
    PF_ENVELOPE_SINC2 = 1,
    PF_ENVELOPE_GAUSSIAN = 2
} pf_fringe_envelope;

/* Fits the samples (x[i], y[i]) with from <= x <= to.  period_guess > 0
 * restricts the search to periods within 30% of it; 0 searches from two
 * samples per period up to the window length.  Needs at least 8 samples. */
pf_status pf_fringe_analyse(pf_context *ctx, const double *x, const double *y, size_t n, double from, double to,
                            double period_guess, pf_fringe_fit *out);

/* pf_fringe_analyse scanning only wave numbers q >= q_floor when no
 * period guess is given (an envelope's own slow variation then cannot win
 * the scan). */
pf_status pf_fringe_analyse_above(pf_context *ctx, const double *x, const double *y, size_t n, double from,
                                  double to, double period_guess, double q_floor, pf_fringe_fit *out);

/* The same with an envelope model: starts from the plain analysis and the
 * envelope's half-maximum points of the profile averaged over one fringe,
 * then fits all six parameters (A, V, phase, q, x_c, width) by
 * Levenberg-Marquardt least squares, so the period is not biased by the
 * envelope's slope.  Without a period guess the scan looks only above
 * q = 1.5 / w, w the profile's rms width over the window: a Gaussian
 * envelope of rms w has power exp(-q^2 w^2) there, 0.1 of its peak, below
 * a fringe peak of visibility near 1; for weak or few fringes give a
 * period guess.  PF_ENVELOPE_NONE is pf_fringe_analyse.  Fails with
 * PF_EINVAL when the envelope cannot be located (no half-maximum on both
 * sides inside the window) or the fit does not converge. */
pf_status pf_fringe_analyse_envelope(pf_context *ctx, const double *x, const double *y, size_t n, double from,
                                     double to, double period_guess, pf_fringe_envelope env, pf_fringe_fit *out);

#endif
