/* pfl_aware.c - which Lua functions handle a wave in a moved frame and
 * which handle a wave or grid split over MPI ranks: one table of script
 * names, a flag for each kind.
 *
 * A wave whose frame is moved (pf_frame.h) stores its cloud on a co-moving
 * grid, and a distributed wave only this rank's slab; a function written
 * for plain grid states would report grid coordinates as the lab's, or one
 * rank's share as the whole.  So the guards (pfl_frame_guard in pfl_frame.c,
 * pfl_dist_guard in pfl_dist.c) refuse such a wave unless the running
 * function has the flag here.  A function that converts to the lab (through
 * the core's pf_wave_lab_* functions or by hand) gets FRAME; one that
 * handles slabs (through the core's distributed paths, with a test under
 * mpirun in tests/runner) gets DIST; nothing else needs to change.
 *
 * Names are script names: "wave:NAME" for methods, "pf.NAME" for module
 * functions, "h5file:", "camera:" and "ensemble:" for those objects' own
 * methods.  Grid methods read the tables every rank holds whole and need no
 * DIST entry; module functions that take a grid do.  Keep the table sorted:
 * tests/lua/test_frame.lua checks that every FRAME entry names an existing
 * function and that the list is in order. */
#include <string.h>
#include "pfl.h"

enum { FRAME = PFL_AWARE_FRAME, DIST = PFL_AWARE_DIST };

static const struct aware {
    const char *name;
    unsigned flags;
} AWARE[] = {
    {"camera:absorb", FRAME | DIST},
    {"camera:expose", FRAME | DIST},
    {"ensemble:copy", FRAME},
    {"ensemble:each", FRAME},
    {"ensemble:kinetic_energy", FRAME},
    {"ensemble:member", FRAME},
    {"ensemble:momentum_mean", FRAME},
    {"ensemble:momentum_variance", FRAME},
    {"ensemble:momentum_width", FRAME},
    {"ensemble:norm", FRAME},
    {"ensemble:position_mean", FRAME},
    {"ensemble:position_variance", FRAME},
    {"ensemble:position_width", FRAME},
    {"ensemble:velocity_mean", FRAME},
    {"ensemble:wavenumber_mean", FRAME},
    {"ensemble:wavenumber_width", FRAME},
    {"h5file:put_density", FRAME | DIST},
    {"h5file:put_wave", FRAME | DIST},
    {"pf.flat_top", DIST},
    {"pf.gaussian", DIST},
    {"pf.ground_state", DIST},
    {"pf.load_wave", DIST},
    {"pf.mixture", FRAME},
    {"pf.momentum_orders", DIST},
    {"pf.oscillator", DIST},
    {"pf.picture_carpet", FRAME},
    {"pf.picture_map", FRAME | DIST},
    {"pf.potential", FRAME | DIST},
    {"pf.thomas_fermi", DIST},
    {"pf.wave", DIST},
    {"wave:__add", FRAME},
    {"wave:__div", FRAME},
    {"wave:__mul", FRAME},
    {"wave:__sub", FRAME},
    {"wave:__unm", FRAME},
    {"wave:add", FRAME},
    {"wave:aperture", FRAME | DIST},
    {"wave:arrival_times", FRAME | DIST},
    {"wave:beyond", FRAME | DIST},
    {"wave:clock", FRAME | DIST},
    {"wave:close", FRAME | DIST},
    {"wave:column_density", FRAME | DIST},
    {"wave:copy", FRAME | DIST},
    {"wave:current", FRAME | DIST},
    {"wave:density", FRAME | DIST},
    {"wave:density_at", FRAME},
    {"wave:distribution", FRAME | DIST},
    {"wave:energy", FRAME | DIST},
    {"wave:evolve", FRAME | DIST},
    {"wave:expand", FRAME | DIST},
    {"wave:fall", FRAME | DIST},
    {"wave:far_field", FRAME | DIST},
    {"wave:fidelity", FRAME},
    {"wave:flux", FRAME | DIST},
    {"wave:fly", FRAME | DIST},
    {"wave:fly_long", FRAME | DIST},
    {"wave:fly_scaled", FRAME | DIST},
    {"wave:frame", FRAME | DIST},
    {"wave:fringes", FRAME | DIST},
    {"wave:grating", FRAME | DIST},
    {"wave:grid", FRAME | DIST},
    {"wave:grid_advice", FRAME | DIST},
    {"wave:guard", FRAME},
    {"wave:imprint", FRAME | DIST},
    {"wave:inner", FRAME},
    {"wave:k_axis", FRAME | DIST},
    {"wave:kick", FRAME | DIST},
    {"wave:kinetic_energy", FRAME | DIST},
    {"wave:lens", FRAME},
    {"wave:log", FRAME | DIST},
    {"wave:log_columns", FRAME},
    {"wave:log_text", FRAME | DIST},
    {"wave:marginal", FRAME | DIST},
    {"wave:mark_periodic", FRAME},
    {"wave:mask", FRAME | DIST},
    {"wave:mask_grating", FRAME | DIST},
    {"wave:mass", FRAME | DIST},
    {"wave:measure_position", FRAME | DIST},
    {"wave:measure_region", FRAME | DIST},
    {"wave:momentum_covariance", FRAME | DIST},
    {"wave:momentum_density", FRAME | DIST},
    {"wave:momentum_mask", FRAME | DIST},
    {"wave:momentum_mean", FRAME | DIST},
    {"wave:momentum_variance", FRAME | DIST},
    {"wave:momentum_width", FRAME | DIST},
    {"wave:norm", FRAME | DIST},
    {"wave:normalize", FRAME | DIST},
    {"wave:phi", FRAME | DIST},
    {"wave:position_covariance", FRAME | DIST},
    {"wave:position_mean", FRAME | DIST},
    {"wave:position_momentum_covariance", FRAME | DIST},
    {"wave:position_variance", FRAME | DIST},
    {"wave:position_width", FRAME | DIST},
    {"wave:probability_in", FRAME | DIST},
    {"wave:profile", FRAME | DIST},
    {"wave:psi", FRAME | DIST},
    {"wave:psi_at", FRAME},
    {"wave:radial_profile", FRAME | DIST},
    {"wave:relax", FRAME | DIST},
    {"wave:representation", FRAME | DIST},
    {"wave:sample", FRAME | DIST},
    {"wave:scale", FRAME | DIST},
    {"wave:select_velocity", FRAME | DIST},
    {"wave:set_phi", FRAME | DIST},
    {"wave:set_psi", FRAME | DIST},
    {"wave:shift", FRAME | DIST},
    {"wave:slice", FRAME | DIST},
    {"wave:slit", FRAME | DIST},
    {"wave:slits", FRAME | DIST},
    {"wave:velocity_mean", FRAME | DIST},
    {"wave:wavenumber_mean", FRAME | DIST},
    {"wave:wavenumber_width", FRAME | DIST},
    {"wave:wigner", FRAME | DIST},
    {"wave:x_axis", FRAME | DIST},
    {NULL, 0},
};

int pfl_aware(const char *name, unsigned kind)
{
    for (const struct aware *a = AWARE; a->name; a++)
        if (strcmp(a->name, name) == 0) return (a->flags & kind) != 0;
    return 0;
}

void pfl_push_aware_list(lua_State *L, unsigned kind)
{
    lua_newtable(L);
    lua_Integer i = 0;
    for (const struct aware *a = AWARE; a->name; a++) {
        if (!(a->flags & kind)) continue;
        lua_pushstring(L, a->name);
        lua_rawseti(L, -2, ++i);
    }
}
