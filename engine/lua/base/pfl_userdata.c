/* pfl_userdata.c - the two ways the binding makes userdata types: a named
 * type registered once per module opening, and an anonymous box that only
 * needs freeing.  One place each, so every type's metatable is built the same
 * way and a change to the layout is made once. */
#include <string.h>
#include "pfl.h"

void pfl_register_type(lua_State *L, int mod, const pfl_type_spec *spec)
{
    mod = lua_absindex(L, mod);
    luaL_newmetatable(L, spec->type); /* also sets __name to the type */
    if (spec->meta) luaL_setfuncs(L, spec->meta, 0);
    if (spec->methods) {
        /* what luaL_newlib does for an array, which it needs to see to size */
        int count = 0;
        while (spec->methods[count].name) count++;
        luaL_checkversion(L);
        lua_createtable(L, 0, count);
        luaL_setfuncs(L, spec->methods, 0);
        lua_setfield(L, -2, spec->methods_field ? spec->methods_field : "__index");
    }
    lua_pop(L, 1);
    if (spec->guard_prefix) pfl_frame_name_functions(L, spec->guard_prefix, spec->methods);
    if (spec->funcs) pfl_add_functions(L, mod, spec->funcs);
}

void *pfl_new_gc_box(lua_State *L, size_t size, lua_CFunction gc)
{
    void *box = lua_newuserdatauv(L, size, 0);
    memset(box, 0, size); /* gc may run on a box that was never filled */
    lua_createtable(L, 0, 1);
    lua_pushcfunction(L, gc);
    lua_setfield(L, -2, "__gc");
    lua_setmetatable(L, -2);
    return box;
}
