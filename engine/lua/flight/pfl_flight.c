/* pfl_flight.c - Lua methods that evolve a wave function in time. */
#include "pf_flight.h"
#include "pf_frame.h"
#include "pfl.h"
#include "pfl_options.h"

static const pfl_options_decl FLY_OPTIONS = {"wave:fly", (const char *const[]){"acceleration", NULL}};

/* w:fly(t [, {acceleration = {ax, ay, az}}]) - exact flight for t seconds
 * (negative: backwards).  Under an acceleration (the option, else the
 * pf.setup default) the cloud stays on the grid and the wave's frame falls
 * (pf_frame.h); without one, free flight as before. */
static int l_fly(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    int opts = pfl_options_opt(L, 3, &FLY_OPTIONS);
    double a[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, opts, pf_grid_dim(pf_wave_grid(w)), a, "wave:fly");
    return pfl_return_self(L, pf_wave_fly_in_frame(w, t, accelerated ? a : NULL), "fly");
}

void pfl_open_flight(lua_State *L, int mod)
{
    (void)mod;
    static const pfl_options_decl *const options[] = {&FLY_OPTIONS, NULL};
    pfl_options_declare(L, options);
    static const luaL_Reg methods[] = {{"fly", l_fly}, {NULL, NULL}};
    pfl_add_wave_methods(L, methods);
}
