/* pfl_userdata.c - the two ways the binding makes userdata types: a named
 * type registered once per module opening, and an anonymous box that only
 * needs freeing.  One place each, so every type's metatable is built the same
 * way and a change to the layout is made once. */
#include <string.h>
#include "pfl.h"
#include "pfl_options.h"

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

/* __index of a methods table (upvalue 1: refused name -> kept name,
 * upvalue 2: the script prefix, "wave:").  Placed at the first Lua line up
 * the stack (pfl_options_where): the lookup may come through a C function,
 * the ensemble's forwarder. */
static int refused_method(lua_State *L)
{
    if (lua_type(L, 2) != LUA_TSTRING) return 0;
    lua_pushvalue(L, 2);
    if (lua_rawget(L, lua_upvalueindex(1)) != LUA_TSTRING) return 0;
    const char *prefix = lua_tostring(L, lua_upvalueindex(2));
    pfl_options_where(L, 1);
    lua_pushfstring(L, "%s%s is now %s%s (one spelling per concept)", prefix, lua_tostring(L, 2), prefix,
                    lua_tostring(L, -2));
    lua_concat(L, 2);
    return lua_error(L);
}

void pfl_refuse_methods(lua_State *L, const char *type, const char *prefix, const pfl_renamed *renamed)
{
    luaL_getmetatable(L, type);
    lua_getfield(L, -1, "__index"); /* the methods table */
    lua_createtable(L, 0, 1);       /* its metatable */
    lua_newtable(L);
    for (const pfl_renamed *r = renamed; r->refused; r++) {
        lua_pushstring(L, r->kept);
        lua_setfield(L, -2, r->refused);
    }
    lua_pushstring(L, prefix);
    lua_pushcclosure(L, refused_method, 2);
    lua_setfield(L, -2, "__index");
    lua_setmetatable(L, -2);
    lua_pop(L, 2);
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
