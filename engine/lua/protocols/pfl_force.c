/* pfl_force.c - w:fall, the exact flight under a uniform force (pf_force.h),
 * given as an acceleration in the lab (pf_wave_lab_fall: a wave in a moved
 * frame falls in the lab, docs/frames.md). */
#include "pf_force.h"
#include "pf_frame.h"
#include "pfl_protocol.h"

static int dim_of(pf_wave *w) { return pf_grid_dim(pf_wave_grid(w)); }

/* w:fall(t, a) - flight for t seconds under the constant acceleration a
 * (m/s^2: a number in 1D, else one value per axis, e.g. {0, -9.81}). */
static int l_fall(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "fall time (s)");
    double a[PF_MAX_DIM];
    if (lua_isnoneornil(L, 3)) return luaL_argerror(L, 3, "acceleration (m/s^2, one value per axis) expected");
    pfl_check_axis_values(L, 3, dim_of(w), a, "acceleration (m/s^2)");
    return pfl_return_self(L, pf_wave_lab_fall(w, t, a), "fall");
}

void pfl_open_force(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {
        {"fall", l_fall},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
