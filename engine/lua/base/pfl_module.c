/* pfl_module.c - the psiflight Lua module: creates the module table and runs
 * every group's opener in order.  To add a group, write pfl_open_NAME in its
 * own file, declare it in pfl.h and add one line to the table below. */
#include "pfl.h"

typedef void (*pfl_opener)(lua_State *L, int mod);

/* Order matters only in that pfl_open_wave creates the wave metatable that
 * later groups add methods to. */
static const pfl_opener openers[] = {
    pfl_open_options,
    pfl_open_context,
    pfl_open_complex,
    pfl_open_grid,
    pfl_open_wave,
    pfl_open_flight,
    pfl_open_observe,
    pfl_open_units,
    pfl_open_build,
    pfl_open_algebra,
    pfl_open_guard,
    pfl_open_longflight,
    pfl_open_farfield,
    pfl_open_advise,
    pfl_open_params,
    pfl_open_record,
    pfl_open_files,
    pfl_open_pictures,
    pfl_open_progress,
    pfl_open_random,
    pfl_open_ensemble, /* before the measurement groups, which add to it */
    pfl_open_measure,
    pfl_open_field,
    pfl_open_sample,
    pfl_open_fringe,
    pfl_open_flux,
    pfl_open_detector,
    pfl_open_ops,
    pfl_open_force,
    pfl_open_splitstep,
    pfl_open_relax,
    pfl_open_coupling,
    pfl_open_beam,
    pfl_open_expand,
    pfl_open_levels,
    pfl_open_frame,
    pfl_open_dist,
    pfl_open_interp,
};

int luaopen_psiflight(lua_State *L)
{
    lua_newtable(L);
    int mod = lua_gettop(L);
    for (size_t i = 0; i < sizeof openers / sizeof openers[0]; i++) openers[i](L, mod);
    lua_settop(L, mod);
    return 1;
}
