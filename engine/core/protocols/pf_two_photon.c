/* pf_two_photon.c - the effective two-level pulse of a two-photon
 * transition by adiabatic elimination (model in pf_two_photon.h). */
#include "pf_two_photon.h"
#include <math.h>
#include "pf_constants.h"

pf_status pf_two_photon_pulse_from(pf_context *ctx, const pf_two_photon_spec *spec, pf_two_photon_pulse *out)
{
    for (int i = 0; i < 2; i++)
        if (!isfinite(spec->beam_rabi[i]) || spec->beam_rabi[i] < 0)
            return pf_fail(ctx, PF_EINVAL, "beam Rabi frequency %d must be finite and >= 0 (rad/s), got %g", i + 1,
                           spec->beam_rabi[i]);
    const double O1 = spec->beam_rabi[0], O2 = spec->beam_rabi[1], Delta = spec->one_photon_detuning;
    if (!isfinite(Delta) || Delta == 0)
        return pf_fail(ctx, PF_EINVAL, "one-photon detuning must be finite and non-zero (rad/s), got %g", Delta);
    out->rabi = O1 * O2 / (2.0 * fabs(Delta));
    out->shift_a = O1 * O1 / (4.0 * Delta);
    out->shift_b = O2 * O2 / (4.0 * Delta);
    /* O1 O2 / (4 Delta) < 0 is the coupling Omega_eff / 2 with its sign as a phase of pi. */
    out->phase = Delta < 0 ? PF_PI : 0.0;
    return PF_OK;
}
