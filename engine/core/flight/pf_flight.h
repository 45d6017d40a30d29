/* pf_flight.h - exact free flight in momentum space.
 *
 * Free evolution multiplies phi(k) by exp(-i hbar |k|^2 t / 2m).  The phase is
 * the product of per-axis 1D tables, so no trigonometry is evaluated per grid
 * point; tables are cached on the grid and reused by flights of the same
 * hbar t / m.  The wave is left in momentum representation, so consecutive
 * flights cost one pass over memory each and no FFT. */
#ifndef PF_FLIGHT_H
#define PF_FLIGHT_H

#include "pf_wave.h"

/* Flies the state for t seconds (t may be negative: backwards in time; must be
 * finite).  Records a "flight" step in the wave's log. */
pf_status pf_wave_fly(pf_wave *w, double t);

#endif
