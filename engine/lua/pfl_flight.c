/* pfl_flight.c - Lua methods that evolve a wave function in time. */
#include "../core/pf_flight.h"
#include "pfl.h"

/* w:fly(t) - exact free flight for t seconds (negative: backwards). */
static int l_fly(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    pfl_check(L, pf_wave_fly(w, t), "fly");
    lua_settop(L, 1);
    return 1;
}

void pfl_open_flight(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {{"fly", l_fly}, {NULL, NULL}};
    pfl_add_wave_methods(L, methods);
}
