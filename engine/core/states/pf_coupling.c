/* pf_coupling.c - the mean-field coupling from scattering length, atom
 * number, mass and confinement (formulas and sources in pf_coupling.h). */
#include <math.h>
#include "pf_constants.h"
#include "pf_coupling.h"

pf_status pf_coupling_compute(pf_context *ctx, const pf_coupling_spec *s, pf_coupling_result *out)
{
    if (s->dim < 1 || s->dim > 3) return pf_fail(ctx, PF_EINVAL, "dim must be 1, 2 or 3, got %d", s->dim);
    if (!isfinite(s->scattering_length))
        return pf_fail(ctx, PF_EINVAL, "scattering length must be a finite number (m), got %g", s->scattering_length);
    if (!(s->atoms > 0) || !isfinite(s->atoms))
        return pf_fail(ctx, PF_EINVAL, "atom number must be positive, got %g", s->atoms);
    if (!(s->mass > 0) || !isfinite(s->mass))
        return pf_fail(ctx, PF_EINVAL, "mass must be positive (kg), got %g", s->mass);
    double a = s->scattering_length, n = s->atoms, m = s->mass, w = s->transverse_omega;
    out->confinement_length = 0;
    out->correction = 1;
    if (s->dim == 3) {
        /* A transverse frequency in 3D means the caller picked the wrong
         * dimension; ignoring it would hide that. */
        if (w != 0)
            return pf_fail(ctx, PF_EINVAL, "a transverse frequency has no meaning in 3D (got %g rad/s); "
                                           "use dim 1 or 2 for a tightly confined gas", w);
        if (s->olshanii) return pf_fail(ctx, PF_EINVAL, "the Olshanii correction applies in 1D only");
        out->g_one_atom = 4 * PF_PI * PF_HBAR * PF_HBAR * a / m;
        out->g = n * out->g_one_atom;
        return PF_OK;
    }
    if (!(w > 0) || !isfinite(w))
        return pf_fail(ctx, PF_EINVAL, "the %s confinement frequency (rad/s) must be given and positive in %dD, got %g",
                       s->dim == 1 ? "transverse" : "axial", s->dim, w);
    double len = sqrt(PF_HBAR / (m * w));
    out->confinement_length = len;
    /* Both reduced-dimension forms are derived for |a| << a_perp; at
     * |a| >= a_perp they do not describe the gas at all. */
    if (fabs(a) >= len)
        return pf_fail(ctx, PF_EINVAL, "|scattering length| %g m must be well below the %s length %g m "
                                       "(the quasi-%dD form needs |a| << a_%s)",
                       a, s->dim == 1 ? "transverse oscillator" : "axial oscillator", len, s->dim,
                       s->dim == 1 ? "perp" : "z");
    if (s->dim == 2) {
        if (s->olshanii) return pf_fail(ctx, PF_EINVAL, "the Olshanii correction applies in 1D only");
        out->g_one_atom = 2 * sqrt(2 * PF_PI) * PF_HBAR * PF_HBAR * a / (m * len);
        out->g = n * out->g_one_atom;
        return PF_OK;
    }
    double g1 = 2 * PF_HBAR * w * a;
    if (s->olshanii) {
        double d = 1 - PF_OLSHANII_C * a / len;
        /* The corrected coupling diverges at a = a_perp / C (the
         * confinement-induced resonance) and changes sign beyond it. */
        if (!(d > 0))
            return pf_fail(ctx, PF_EINVAL, "scattering length %g m reaches the confinement-induced resonance "
                                           "a_perp / C = %g m, where the Olshanii form diverges", a, len / PF_OLSHANII_C);
        out->correction = 1 / d;
        g1 *= out->correction;
    }
    out->g_one_atom = g1;
    out->g = n * g1;
    return PF_OK;
}
