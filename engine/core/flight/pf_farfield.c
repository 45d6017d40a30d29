/* pf_farfield.c - far-field mapping of the momentum distribution (see
 * pf_farfield.h). */
#include <math.h>
#include "pf_constants.h"
#include "pf_farfield.h"
#include "pf_internal.h"
#include "pf_observe.h"

pf_status pf_wave_far_field(pf_wave *w, double t, double *out, pf_far_field_info *info)
{
    pf_grid *g = w->grid;
    if (!isfinite(t) || !(t > 0))
        return pf_fail(g->ctx, PF_EINVAL, "far-field time must be finite and positive, got %g", t);
    double mean[PF_MAX_DIM], var[PF_MAX_DIM];
    pf_status s = PF_OK;
    if (info) {
        s = pf_wave_position_moments(w, mean, var);
        if (s) return s;
    }
    s = pf_wave_density(w, PF_MOMENTUM, out);
    if (s) return s;
    /* n(x) dx^d = |phi(k)|^2 dk^d with x = hbar t k / m. */
    double jac = 1.0;
    for (int a = 0; a < g->dim; a++) jac *= w->mass / (PF_HBAR * t);
    for (size_t i = 0; i < g->total; i++) out[i] *= jac;
    if (info) {
        for (int a = 0; a < g->dim; a++) {
            info->spacing[a] = PF_HBAR * t * pf_grid_kspacing(g, a) / w->mass;
            info->width[a] = sqrt(var[a]);
            info->centre[a] = mean[a];
            info->fraunhofer[a] = w->mass * var[a] / (PF_HBAR * t);
        }
    }
    return PF_OK;
}
