/* pfl_guard.c - grid guards in Lua: w:guard() and the guard_threshold figure
 * of pf.run_info.
 *
 * pf.run_info is extended by wrapping the function pfl_context.c registered
 * (this opener runs after it).  The guard_threshold setting itself is one of
 * pf.setup's declared options (pfl_context.c), so the setup table is checked
 * and read once, in one place. */
#include <math.h>
#include <stdio.h>
#include "pf_guard.h"
#include "pfl.h"

static void push_band(lua_State *L, const pf_guard_figures *f, int r, const char *name)
{
    if (!f->known[r]) return;
    lua_createtable(L, f->dim, 0);
    for (int a = 0; a < f->dim; a++) {
        lua_pushnumber(L, f->band[r][a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, name);
}

/* w:guard() -> {threshold=, band_points={..}, position={..}, momentum={..},
 *               warned_position={..}, warned_momentum={..}, ok=bool} */
static int l_guard(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pf_guard_figures f;
    pfl_check(L, pf_wave_guard(w, &f), "guard");
    lua_createtable(L, 0, 7);
    lua_pushnumber(L, f.threshold);
    lua_setfield(L, -2, "threshold");
    lua_createtable(L, f.dim, 0);
    for (int a = 0; a < f.dim; a++) {
        lua_pushinteger(L, (lua_Integer)f.band_points[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, "band_points");
    push_band(L, &f, PF_POSITION, "position");
    push_band(L, &f, PF_MOMENTUM, "momentum");
    int ok = 1;
    const char *wname[2] = {"warned_position", "warned_momentum"};
    for (int r = 0; r < 2; r++) {
        lua_createtable(L, f.dim, 0);
        for (int a = 0; a < f.dim; a++) {
            lua_pushboolean(L, f.warned[r][a]);
            lua_rawseti(L, -2, a + 1);
            /* A periodic state's cell edge is no edge (w:mark_periodic). */
            if (r == PF_POSITION && f.periodic) continue;
            if (f.warned[r][a] || (f.known[r] && f.band[r][a] > f.threshold)) ok = 0;
        }
        lua_setfield(L, -2, wname[r]);
    }
    lua_pushboolean(L, ok);
    lua_setfield(L, -2, "ok");
    lua_pushboolean(L, f.periodic);
    lua_setfield(L, -2, "periodic");
    return 1;
}

/* w:mark_periodic([on = true]) -> w: the state is periodic by design (a
 * grating, a Talbot carpet, a commensurate comb); the position-edge guards
 * leave it alone, the momentum guard still watches Nyquist. */
static int l_mark_periodic(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    int on = 1;
    if (!lua_isnoneornil(L, 2)) {
        luaL_checktype(L, 2, LUA_TBOOLEAN);
        on = lua_toboolean(L, 2);
    }
    pf_wave_set_periodic(w, on);
    lua_settop(L, 1);
    return 1;
}

/* pf.run_info() with guard_threshold added. */
static int l_run_info(lua_State *L)
{
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_call(L, 0, 1);
    if (lua_istable(L, -1)) {
        lua_pushnumber(L, pf_context_guard_threshold(pfl_ctx(L)));
        lua_setfield(L, -2, "guard_threshold");
    }
    return 1;
}

static void wrap(lua_State *L, int mod, const char *name, lua_CFunction fn)
{
    lua_getfield(L, mod, name);
    if (!lua_isfunction(L, -1)) {
        lua_pop(L, 1);
        return;
    }
    lua_pushcclosure(L, fn, 1);
    lua_setfield(L, mod, name);
}

void pfl_open_guard(lua_State *L, int mod)
{
    mod = lua_absindex(L, mod);
    static const luaL_Reg methods[] = {{"guard", l_guard}, {"mark_periodic", l_mark_periodic}, {NULL, NULL}};
    pfl_add_wave_methods(L, methods);
    wrap(L, mod, "run_info", l_run_info);
}
