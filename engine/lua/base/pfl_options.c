/* pfl_options.c - the one checker for option tables, the raw field reader
 * that goes with it, and the registry of declared option sets (see
 * pfl_options.h for the rules).
 *
 * One place decides the wording of every "unknown option" error, so a typo
 * reads the same whichever function it was passed to, and no function can
 * fall back to a default because a key was misspelt. */
#include <stdio.h>
#include <string.h>
#include "pf_units.h"
#include "pfl_options.h"

/* Registry slots, keyed by the addresses of these statics (lua_rawgetp: no
 * string hashing on every option read). */
static const char DECLS_SLOT = 'D';   /* function name -> light userdata decl */
static const char CHECKED_SLOT = 'C'; /* weak keys: checked table -> light userdata decl */
#define DECLS_KEY (&DECLS_SLOT)
#define CHECKED_KEY (&CHECKED_SLOT)
#define MAX_LUA_KEYS 64 /* keys a recipe may declare (pf.check_options) */

/* Pushes the registry table stored under slot, creating it (weak keys when
 * weak) on first use. */
static void push_registry_table(lua_State *L, const char *slot, int weak)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, slot) == LUA_TTABLE) return;
    lua_pop(L, 1);
    lua_newtable(L);
    if (weak) {
        lua_createtable(L, 0, 1);
        lua_pushliteral(L, "k");
        lua_setfield(L, -2, "__mode");
        lua_setmetatable(L, -2);
    }
    lua_pushvalue(L, -1);
    lua_rawsetp(L, LUA_REGISTRYINDEX, slot);
}


/* Pushes "chunk:line: " of the first Lua function at or above level (like
 * luaL_where, but skipping C frames: pf.setup may be reached through a C
 * wrapper such as the runner's sandbox guard, and the message should still
 * name the script line). */
void pfl_options_where(lua_State *L, int level)
{
    lua_Debug ar;
    for (; lua_getstack(L, level, &ar); level++) {
        lua_getinfo(L, "Sl", &ar);
        if (ar.currentline > 0) {
            lua_pushfstring(L, "%s:%d: ", ar.short_src, ar.currentline);
            return;
        }
    }
    lua_pushliteral(L, "");
}

/* Spellings the API once used or that a user may reach for, each refused
 * in favour of the one spelling of its concept.  Listed because the edit
 * distance alone would not suggest the preferred word. */
static const struct {
    const char *refused, *preferred;
} ONE_SPELLING[] = {
    {"centre", "center"},       /* British spelling; the API spells center */
    {"representation", "space"}, /* position or momentum: 'space' everywhere */
    {"trap", "omega"},           /* trap angular frequency, as the state builders spell it */
};

static int declared(const char *const *keys, const char *key)
{
    for (const char *const *k = keys; *k; k++)
        if (strcmp(*k, key) == 0) return 1;
    return 0;
}

/* Raises the error for an unknown key at the stack top, placed at level. */
static void unknown_key(lua_State *L, const char *function, const char *const *keys, int level)
{
    const char *key = lua_tostring(L, -1);
    const char *near = NULL;
    int best = 1 << 20;
    for (const char *const *k = keys; *k; k++) {
        int d = pf_edit_distance(key, *k);
        if (d < best) best = d, near = *k;
    }
    for (size_t i = 0; i < sizeof ONE_SPELLING / sizeof ONE_SPELLING[0]; i++)
        if (strcmp(key, ONE_SPELLING[i].refused) == 0 && declared(keys, ONE_SPELLING[i].preferred))
            near = ONE_SPELLING[i].preferred, best = 0;
    char shown[80];
    snprintf(shown, sizeof shown, "%.60s%s", key, strlen(key) > 60 ? "..." : "");
    pfl_options_where(L, level);
    if (near && (best == 0 || pf_edit_suggestible(key, best))) {
        lua_pushfstring(L, "%s: unknown option '%s' (did you mean '%s'?)", function, shown, near);
    } else {
        luaL_Buffer b;
        luaL_buffinit(L, &b);
        for (const char *const *k = keys; *k; k++) {
            if (k != keys) luaL_addstring(&b, ", ");
            luaL_addstring(&b, *k);
        }
        luaL_pushresult(&b);
        lua_pushfstring(L, "%s: unknown option '%s' (known options: %s)", function, shown, lua_tostring(L, -1));
        lua_remove(L, -2);
    }
    lua_concat(L, 2);
    lua_error(L);
}

/* Raises fmt (one or two %s: a, then b) at the script line of level. */
static void raise_at(lua_State *L, int level, const char *fmt, const char *a, const char *b)
{
    pfl_options_where(L, level);
    lua_pushfstring(L, fmt, a, b);
    lua_concat(L, 2);
    lua_error(L);
}

/* The check itself, for a C declaration or keys given from Lua. */
static void check_keys(lua_State *L, int idx, const char *function, const char *const *keys, int level)
{
    idx = lua_absindex(L, idx);
    if (lua_type(L, idx) != LUA_TTABLE) {
        char buf[80];
        raise_at(L, level, "%s: options must be a table, got %s", function, pfl_describe(L, idx, buf, sizeof buf));
    }
    if (lua_getmetatable(L, idx))
        raise_at(L, level, "%s: the options table must be a plain table (this one has a metatable)", function, NULL);
    lua_pushnil(L);
    while (lua_next(L, idx)) {
        lua_pop(L, 1);
        if (lua_type(L, -1) != LUA_TSTRING) {
            char buf[80];
            raise_at(L, level, "%s: option names must be strings, got the key %s", function,
                     pfl_describe(L, -1, buf, sizeof buf));
        }
        if (!declared(keys, lua_tostring(L, -1))) unknown_key(L, function, keys, level);
    }
}

void pfl_options_check_at(lua_State *L, int idx, const pfl_options_decl *decl, int level)
{
    idx = lua_absindex(L, idx);
    push_registry_table(L, DECLS_KEY, 0);
    lua_getfield(L, -1, decl->function);
    if (lua_touserdata(L, -1) != (void *)decl)
        luaL_error(L, "%s: internal error: option set not declared (pfl_options_declare)", decl->function);
    lua_pop(L, 2);
    check_keys(L, idx, decl->function, decl->keys, level);
    push_registry_table(L, CHECKED_KEY, 1);
    lua_pushvalue(L, idx);
    lua_pushlightuserdata(L, (void *)decl);
    lua_rawset(L, -3);
    lua_pop(L, 1);
}

void pfl_options_check(lua_State *L, int idx, const pfl_options_decl *decl)
{
    pfl_options_check_at(L, idx, decl, 1);
}

int pfl_options_opt(lua_State *L, int idx, const pfl_options_decl *decl)
{
    if (lua_isnoneornil(L, idx)) return 0;
    idx = lua_absindex(L, idx);
    pfl_options_check_at(L, idx, decl, 1);
    return idx;
}

int pfl_option_get(lua_State *L, int t, const char *key)
{
    t = lua_absindex(L, t);
    push_registry_table(L, CHECKED_KEY, 1);
    lua_pushvalue(L, t);
    lua_rawget(L, -2);
    const pfl_options_decl *decl = lua_touserdata(L, -1);
    lua_pop(L, 2);
    /* Both failures are bugs in the binding, not in the script: reading a
     * table nobody checked, or a key its declaration does not list. */
    if (!decl) luaL_error(L, "internal error: option '%s' read from a table that was not checked", key);
    if (!declared(decl->keys, key))
        luaL_error(L, "%s: internal error: option '%s' is read but not declared", decl->function, key);
    lua_pushstring(L, key);
    return lua_rawget(L, t);
}

void pfl_options_declare(lua_State *L, const pfl_options_decl *const *decls)
{
    push_registry_table(L, DECLS_KEY, 0);
    for (; *decls; decls++) {
        if (lua_getfield(L, -1, (*decls)->function) != LUA_TNIL)
            luaL_error(L, "internal error: option set '%s' declared twice", (*decls)->function);
        lua_pop(L, 1);
        lua_pushlightuserdata(L, (void *)*decls);
        lua_setfield(L, -2, (*decls)->function);
    }
    lua_pop(L, 1);
}

/* pf.check_options(tbl, "recipe.name", {"key", ...} [, level]) -> tbl: the
 * same check for options tables taken by Lua code (the bundled recipes).
 * The error is placed like error(msg, level): by default (2) at the line
 * that called the function which called pf.check_options. */
static int l_check_options(lua_State *L)
{
    const char *function = luaL_checkstring(L, 2);
    luaL_checktype(L, 3, LUA_TTABLE);
    const char *keys[MAX_LUA_KEYS + 1];
    lua_Integer n = (lua_Integer)lua_rawlen(L, 3);
    if (n > MAX_LUA_KEYS) return luaL_error(L, "check_options: at most %d keys, got %d", MAX_LUA_KEYS, (int)n);
    for (lua_Integer i = 1; i <= n; i++) {
        if (lua_rawgeti(L, 3, i) != LUA_TSTRING) return luaL_error(L, "check_options: key %d must be a string", (int)i);
        keys[i - 1] = lua_tostring(L, -1); /* stays alive: table 3 holds it */
        lua_pop(L, 1);
    }
    keys[n] = NULL;
    lua_Integer level = luaL_optinteger(L, 4, 2);
    if (level < 1 || level > 100) return luaL_error(L, "check_options: level must be 1..100, got %d", (int)level);
    check_keys(L, 1, function, keys, (int)level);
    lua_settop(L, 1);
    return 1;
}

/* pf._option_sets() -> {["pf.grid"] = {"points", ...}, ...}: every declared
 * option set, for the test that passes a bogus key to each. */
static int l_option_sets(lua_State *L)
{
    lua_newtable(L);
    push_registry_table(L, DECLS_KEY, 0);
    lua_pushnil(L);
    while (lua_next(L, -2)) {
        const pfl_options_decl *decl = lua_touserdata(L, -1);
        lua_pop(L, 1);
        lua_newtable(L);
        for (int i = 0; decl->keys[i]; i++) {
            lua_pushstring(L, decl->keys[i]);
            lua_rawseti(L, -2, i + 1);
        }
        lua_pushvalue(L, -2);
        lua_insert(L, -2);
        lua_rawset(L, -5);
    }
    lua_pop(L, 1);
    return 1;
}

void pfl_open_options(lua_State *L, int mod)
{
    static const luaL_Reg funcs[] = {{"check_options", l_check_options}, {"_option_sets", l_option_sets}, {NULL, NULL}};
    pfl_add_functions(L, mod, funcs);
}
