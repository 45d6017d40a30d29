/* pf_beam.c - relativistic de Broglie wavelength and the paraxial
 * distance-to-time mapping of a beam (formulas in pf_beam.h). */
#include <math.h>
#include "pf_constants.h"
#include "pf_units.h"
#include "pf_beam.h"

pf_status pf_beam_compute(pf_context *ctx, double m0, double ek, pf_beam *out)
{
    if (!(m0 > 0) || !isfinite(m0)) return pf_fail(ctx, PF_EINVAL, "rest mass must be positive (kg), got %g", m0);
    if (!(ek > 0) || !isfinite(ek))
        return pf_fail(ctx, PF_EINVAL, "kinetic energy must be positive (J), got %g", ek);
    double c = PF_SPEED_OF_LIGHT, rest = m0 * c * c;
    /* E_k / rest is formed directly, not as (E_total - rest), so slow
     * neutrons (E_k / m0 c^2 ~ 1e-11) keep every digit. */
    double x = ek / rest;
    out->rest_mass = m0;
    out->kinetic_energy = ek;
    out->momentum = sqrt(2 * m0 * ek * (1 + 0.5 * x));
    out->wavelength = PF_PLANCK / out->momentum;
    out->wavenumber = out->momentum / PF_HBAR;
    out->gamma = 1 + x;
    out->transverse_mass = out->gamma * m0;
    /* v = p c^2 / E_total with E_total = gamma m0 c^2. */
    out->velocity = out->momentum / out->transverse_mass;
    return PF_OK;
}

pf_status pf_beam_flight_time(pf_context *ctx, const pf_beam *b, double distance, double *time)
{
    if (!(distance >= 0) || !isfinite(distance))
        return pf_fail(ctx, PF_EINVAL, "distance along the beam must be finite and >= 0 (m), got %g", distance);
    *time = distance / b->velocity;
    return PF_OK;
}
