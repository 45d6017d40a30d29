/* pfl_progress.c - pf.progress(total [, label]): a progress bar for long
 * loops in scripts, drawn on stderr only when it is a terminal and the run
 * is not quiet (pf_progress.h). */
#include <stdio.h>
#include "pf_progress.h"
#include "pfl.h"

#define PFL_PROGRESS_TYPE "psiflight.progress"

static pf_progress *check_bar(lua_State *L) { return luaL_checkudata(L, 1, PFL_PROGRESS_TYPE); }

static int l_progress(lua_State *L)
{
    double total = pfl_check_positive(L, 1, "total");
    const char *label = luaL_optstring(L, 2, "progress");
    pf_progress *p = lua_newuserdatauv(L, sizeof *p, 0);
    luaL_setmetatable(L, PFL_PROGRESS_TYPE);
    pf_progress_begin(p, stderr, pfl_progress_wanted(L), total, label);
    return 1;
}

/* bar:advance([amount = 1]) -> bar */
static int l_advance(lua_State *L)
{
    pf_progress *p = check_bar(L);
    double a = lua_isnoneornil(L, 2) ? 1.0 : pfl_check_finite(L, 2, "amount");
    pf_progress_advance(p, a);
    lua_settop(L, 1);
    return 1;
}

static int l_finish(lua_State *L)
{
    pf_progress_end(check_bar(L));
    return 0;
}

static int l_shown(lua_State *L)
{
    lua_pushboolean(L, check_bar(L)->drawn);
    return 1;
}

void pfl_open_progress(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {{"advance", l_advance}, {"finish", l_finish}, {"shown", l_shown}, {NULL, NULL}};
    static const luaL_Reg meta[] = {{"__gc", l_finish}, {"__close", l_finish}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {{"progress", l_progress}, {NULL, NULL}};
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_PROGRESS_TYPE, .meta = meta, .methods = methods, .funcs = funcs});
}
