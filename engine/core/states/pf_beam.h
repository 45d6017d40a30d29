/* pf_beam.h - a particle beam (electrons, neutrons, ...) described by its
 * kinetic energy: relativistic de Broglie wavelength, speed, and the mapping
 * of a distance along the beam to the flight time of the transverse
 * Schrodinger evolution.
 *
 * p = sqrt(2 m0 E_k (1 + E_k / (2 m0 c^2))), lambda = h / p, k = 2 pi / lambda,
 * gamma = 1 + E_k / (m0 c^2), v = p c^2 / E_total = p / (gamma m0).
 * Paraxial approximation: the transverse part of the wave obeys a free
 * Schrodinger equation in t = z / v with the mass gamma m0, since the
 * paraxial propagator's phase k_perp^2 z / (2 k) equals
 * hbar k_perp^2 t / (2 gamma m0) exactly when t = z gamma m0 / p = z / v.
 * No spin, no space charge, no fields along the path. */
#ifndef PF_BEAM_H
#define PF_BEAM_H

#include "pf_context.h"

typedef struct pf_beam {
    double rest_mass;       /* m0 (kg) */
    double kinetic_energy;  /* E_k (J) */
    double momentum;        /* p (kg m/s) */
    double wavelength;      /* lambda = h / p (m) */
    double wavenumber;      /* k = 2 pi / lambda (1/m) */
    double gamma;           /* Lorentz factor */
    double velocity;        /* v (m/s) */
    double transverse_mass; /* gamma m0 (kg): the mass for the transverse evolution */
} pf_beam;

/* Fills *out.  PF_EINVAL (message in ctx) unless rest_mass and
 * kinetic_energy are finite and positive. */
pf_status pf_beam_compute(pf_context *ctx, double rest_mass, double kinetic_energy, pf_beam *out);

/* Flight time t = distance / v of the transverse evolution for a distance
 * along the beam.  PF_EINVAL unless distance is finite and >= 0. */
pf_status pf_beam_flight_time(pf_context *ctx, const pf_beam *b, double distance, double *time);

#endif
