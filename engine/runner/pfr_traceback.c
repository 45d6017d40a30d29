/* pfr_traceback.c - tracebacks for people: only the frames a script author
 * can act on (files and bundled recipes, with line numbers), none of the C
 * functions of the engine or the Lua libraries. */
#include <string.h>
#include <lauxlib.h>
#include "pfl_params.h"
#include "pfr_stop.h"
#include "pfr_traceback.h"

#define MAX_FRAMES 24

int pfr_traceback(lua_State *L)
{
    if (pfl_params_is_help_stop(L, 1)) return 1;
    const char *msg = lua_tostring(L, 1);
    if (!msg) {
        if (luaL_callmeta(L, 1, "__tostring") && lua_type(L, -1) == LUA_TSTRING) msg = lua_tostring(L, -1);
        else msg = lua_pushfstring(L, "(error object is a %s value)", luaL_typename(L, 1));
    }
    luaL_Buffer b;
    luaL_buffinit(L, &b);
    luaL_addstring(&b, msg);
    lua_Debug ar;
    int shown = 0, skipped = 0;
    for (int level = 1; lua_getstack(L, level, &ar); level++) {
        lua_getinfo(L, "Slnt", &ar);
        if (strcmp(ar.what, "C") == 0 || ar.currentline <= 0) continue;
        if (strcmp(ar.source, "=" PFR_STOP_CHUNK) == 0) continue; /* the runner's pcall wrappers */
        if (shown == MAX_FRAMES) {
            skipped++;
            continue;
        }
        if (shown == 0) luaL_addstring(&b, PFR_TRACEBACK_MARK);
        char line[400];
        if (strcmp(ar.what, "main") == 0)
            snprintf(line, sizeof line, "\n    %s:%d: in main chunk", ar.short_src, ar.currentline);
        else if (ar.name)
            snprintf(line, sizeof line, "\n    %s:%d: in function '%s'", ar.short_src, ar.currentline, ar.name);
        else
            snprintf(line, sizeof line, "\n    %s:%d: in a function defined at line %d", ar.short_src, ar.currentline,
                     ar.linedefined);
        luaL_addstring(&b, line);
        if (ar.istailcall) luaL_addstring(&b, "\n    (...tail calls...)");
        shown++;
    }
    if (skipped) {
        char line[64];
        snprintf(line, sizeof line, "\n    (%d more frames)", skipped);
        luaL_addstring(&b, line);
    }
    luaL_pushresult(&b);
    return 1;
}
