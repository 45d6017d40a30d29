/* pf_longflight.h - long free flights on a grid that follows the packet.
 *
 * The free propagator in the single-FFT Fresnel form,
 *   psi(x, t) = sqrt(m / 2 pi i hbar t) exp(i m x^2 / 2 hbar t)
 *               * integral exp(-i m x x' / hbar t) exp(i m x'^2 / 2 hbar t) psi(x') dx',
 * is one FFT between chirp multiplications when the output points are spaced
 * D = 2 pi hbar |t| / (m N dx) per axis (N points, input spacing dx).  The
 * result is the exact wave function sampled on a new, coarser grid whose
 * window grows with t, so a cloud can expand a thousandfold without a giant
 * grid.  The propagator factorises over axes, so every axis may have its own
 * stage duration; the chirps are per-axis tables (no trigonometry per point).
 *
 * A scaled flight moves the wave function to the new grid in place (same
 * object, clock and step log continue), leaving it in position representation.
 *
 * The two-stage form reaches a chosen output spacing D (and point count):
 * per axis a scaled stage of duration t_a = m N dx D / (2 pi hbar) lands on
 * the target grid, then an exact same-grid stage of t - t_a (either sign)
 * completes the flight.
 *
 * When each form is valid (docs/long-flights.md): with the state's extent
 * [x_lo, x_hi] and wave-number extent [k_lo, k_hi] per axis (all but the
 * guard threshold of probability), the classical image at time t is
 *   I(t) = [x_lo + min(hbar t k / m), x_hi + max(hbar t k / m)].
 *   same-grid: I(s) stays inside the grid box for 0 <= s <= t (no wrap-around);
 *   scaled:    I(t_a) fits the output window N D, which is the condition that
 *              the chirped integrand exp(i m x'^2 / 2 hbar t_a) psi(x') is
 *              sampled without aliasing (its local wave number k + m x' / hbar t_a
 *              spans less than 2 pi / dx); a second stage also needs I(t)
 *              inside the window and the wave numbers inside +-pi/D.
 * Both use the inner region of the grid (outside the guard bands). */
#ifndef PF_LONGFLIGHT_H
#define PF_LONGFLIGHT_H

#include "pf_grid.h"
#include "pf_wave.h"

typedef enum pf_flight_method {
    PF_FLIGHT_AUTO = 0,      /* choose from the sampling criteria */
    PF_FLIGHT_SAME_GRID = 1, /* exact momentum-space flight on the wave's grid (pf_wave_fly) */
    PF_FLIGHT_SCALED = 2     /* single-FFT Fresnel form, or two-stage for a chosen spacing */
} pf_flight_method;

/* Short names "auto", "same-grid", "scaled". */
const char *pf_flight_method_name(pf_flight_method m);

/* Single-FFT scaled flight of t seconds (finite, non-zero).  points (NULL:
 * the wave's own) gives the output point count per axis: the input is padded
 * with zeros or cropped about its origin to that count first.  centre (NULL:
 * the input grid's origin) is the output grid's origin.  Output spacing per
 * axis is 2 pi hbar |t| / (m N_out dx).  Records a "flight" step with method
 * "scaled-fresnel"; probability cropped away is logged as removed. */
pf_status pf_wave_fly_scaled(pf_wave *w, double t, const size_t *points, const double *centre);

/* Two-stage flight of t seconds onto the given grid (same dimension): per
 * axis a scaled stage chosen so that it lands on target's spacing, then an
 * exact same-grid stage for the rest.  The wave ends on target (retained).
 * Method name "scaled-2stage" ("scaled-fresnel" when the second stage is
 * empty on every axis). */
pf_status pf_wave_fly_onto(pf_wave *w, double t, pf_grid *target);

/* Options of the choosing flight; zero-initialise, then set what you need. */
typedef struct pf_long_flight_opts {
    pf_flight_method method;
    pf_grid *grid;                 /* target grid, or NULL */
    size_t points[PF_MAX_DIM];     /* output points per axis, 0: the wave's own */
    double spacing[PF_MAX_DIM];    /* output spacing per axis (m), 0: natural single-FFT spacing */
    double centre[PF_MAX_DIM];     /* output origin per axis (m) when has_centre */
    int has_centre;
} pf_long_flight_opts;

/* What the choosing flight found and did. */
typedef struct pf_long_flight_report {
    pf_flight_method method;       /* the method used */
    int stages;                    /* 1, or 2 for the two-stage scaled form */
    int same_grid_ok, scaled_ok;   /* the criteria above, for this flight */
    double x_lo[PF_MAX_DIM], x_hi[PF_MAX_DIM];   /* state extent before the flight (m) */
    double k_lo[PF_MAX_DIM], k_hi[PF_MAX_DIM];   /* wave-number extent (1/m) */
    double image_lo[PF_MAX_DIM], image_hi[PF_MAX_DIM]; /* predicted extent after t (m) */
    double box[PF_MAX_DIM];        /* usable width of the wave's grid (m) */
    double window[PF_MAX_DIM];     /* usable width of the scaled output grid (m) */
    double out_spacing[PF_MAX_DIM];/* output spacing of the scaled form (m) */
    double out_centre[PF_MAX_DIM]; /* output origin of the scaled form (m) */
    size_t out_points[PF_MAX_DIM];
    double scaled_time[PF_MAX_DIM];/* stage-one duration per axis (s) */
    double chirp_time[PF_MAX_DIM]; /* m N dx^2 / (2 pi hbar): from here on D >= dx */
    char reason[480];              /* one sentence on why this method */
} pf_long_flight_report;

/* Flies w for t seconds with the requested or chosen method (see above).
 * Measures the state's extents first (this may cost up to two transforms).
 * A forced method that fails its criterion, or an automatic choice where
 * neither is valid, still flies but emits a guard warning (an error in strict
 * mode).  report may be NULL. */
pf_status pf_wave_fly_long(pf_wave *w, double t, const pf_long_flight_opts *opts, pf_long_flight_report *report);

#endif
