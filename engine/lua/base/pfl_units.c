/* pfl_units.c - pf.units, pf.constants and the species table for scripts:
 * pf.species(label), pf.mass(label), pf.species_list(), the photon helpers,
 * and the shared reading of a builder's mass field.
 *
 * pf.units and pf.constants are read-only views: a misspelt name raises an
 * error with close matches instead of quietly giving nil, and assignments
 * are refused so one script line cannot change a unit for the rest. */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_species.h"
#include "pf_units.h"
#include "pfl_options.h"

/* The metamethods of a view share three upvalues: 1 the values, 2 the
 * view's name for messages, 3 the names in documentation order. */

/* __index(proxy, key) */
static int view_index(lua_State *L)
{
    lua_pushvalue(L, 2);
    if (lua_rawget(L, lua_upvalueindex(1)) != LUA_TNIL) return 1;
    const char *view = lua_tostring(L, lua_upvalueindex(2));
    const char *key = lua_tostring(L, 2);
    if (!key) return luaL_error(L, "%s has no entry for a %s key", view, luaL_typename(L, 2));
    /* Collect the nearest names (at most 5, nearest first): within one edit
     * for short keys, a third of the key for longer ones. */
    int limit = (int)strlen(key) / 3;
    if (limit < 1) limit = 1;
    char close[200] = "";
    int found = 0;
    /* Walk the names in table order (upvalue 3), not in hash order, so the
     * message is the same on every run. */
    lua_Integer count = luaL_len(L, lua_upvalueindex(3));
    for (int d = 0; d <= limit && found < 5; d++)
        for (lua_Integer i = 1; i <= count && found < 5; i++) {
            lua_geti(L, lua_upvalueindex(3), i);
            const char *name = lua_tostring(L, -1);
            if (pf_edit_distance(key, name) == d) {
                size_t used = strlen(close);
                snprintf(close + used, sizeof close - used, "%s%s", found++ ? ", " : "", name);
            }
            lua_pop(L, 1);
        }
    if (found) return luaL_error(L, "%s has no entry '%s'; close matches: %s", view, key, close);
    return luaL_error(L, "%s has no entry '%s' (see docs/states.md for the list)", view, key);
}

static int view_newindex(lua_State *L)
{
    const char *view = lua_tostring(L, lua_upvalueindex(2));
    const char *key = lua_tostring(L, 2);
    return luaL_error(L, "%s is read-only (tried to set '%s'); use a local variable instead", view, key ? key : "?");
}

/* Iterator over the hidden values, so pairs() works on a view without
 * relying on the global 'next' (which a sandbox may remove). */
static int view_next(lua_State *L)
{
    luaL_checktype(L, 1, LUA_TTABLE);
    lua_settop(L, 2);
    if (lua_next(L, 1)) return 2;
    lua_pushnil(L);
    return 1;
}

static int view_pairs(lua_State *L)
{
    lua_pushcfunction(L, view_next);
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_pushnil(L);
    return 3;
}

/* Turns the values table (below the array of its names, on top) into a
 * read-only view named view and leaves the view in their place. */
static void make_view(lua_State *L, const char *view)
{
    int names = lua_gettop(L), values = names - 1;
    static const luaL_Reg view_meta[] = {
        {"__index", view_index}, {"__newindex", view_newindex}, {"__pairs", view_pairs}, {NULL, NULL}};
    lua_newtable(L);          /* the proxy */
    lua_createtable(L, 0, 4); /* its metatable */
    lua_pushvalue(L, values); /* the metamethods' shared upvalues */
    lua_pushstring(L, view);
    lua_pushvalue(L, names);
    luaL_setfuncs(L, view_meta, 3);
    lua_pushboolean(L, 0);
    lua_setfield(L, -2, "__metatable");
    lua_setmetatable(L, -2);
    lua_replace(L, values);
    lua_settop(L, values);
}

/* Pushes the values table and the array of names (in table order), then
 * adds funcs (may be NULL) to both. */
static void push_quantities(lua_State *L, const pf_quantity *q, size_t n, const luaL_Reg *funcs)
{
    lua_createtable(L, 0, (int)n + 4);
    lua_createtable(L, (int)n + 4, 0);
    lua_Integer k = 0;
    for (size_t i = 0; i < n; i++) {
        lua_pushnumber(L, q[i].value);
        lua_setfield(L, -3, q[i].name);
        lua_pushstring(L, q[i].name);
        lua_rawseti(L, -2, ++k);
    }
    for (; funcs && funcs->name; funcs++) {
        lua_pushcfunction(L, funcs->func);
        lua_setfield(L, -3, funcs->name);
        lua_pushstring(L, funcs->name);
        lua_rawseti(L, -2, ++k);
    }
}

/* pf.units.angular(f) -> 2 pi f (rad/s for f in Hz). */
static int l_angular(lua_State *L)
{
    lua_pushnumber(L, PF_TWO_PI * pfl_check_finite(L, 1, "frequency"));
    return 1;
}

/* pf.units.as_temperature(E) -> E / kB (K); pf.units.as_frequency(E) -> E / h (Hz). */
static int l_as_temperature(lua_State *L)
{
    lua_pushnumber(L, pf_energy_as_temperature(pfl_check_finite(L, 1, "energy")));
    return 1;
}

static int l_as_frequency(lua_State *L)
{
    lua_pushnumber(L, pf_energy_as_frequency(pfl_check_finite(L, 1, "energy")));
    return 1;
}

/* Raises "NAME: unknown species 'X'; close matches: ..." */
static int species_error(lua_State *L, const char *fname, const char *label)
{
    const pf_species *near[6];
    size_t n = pf_species_suggest(label, near, 6);
    luaL_Buffer b;
    luaL_buffinit(L, &b);
    for (size_t i = 0; i < n; i++) {
        if (i) luaL_addstring(&b, ", ");
        luaL_addstring(&b, near[i]->label);
    }
    luaL_pushresult(&b);
    if (n) return luaL_error(L, "%s: unknown species '%s'; close matches: %s", fname, label, lua_tostring(L, -1));
    return luaL_error(L, "%s: unknown species '%s'; see pf.species_list() or give the mass in kg", fname, label);
}

static const pf_species *check_species(lua_State *L, int arg, const char *fname)
{
    const char *label = luaL_checkstring(L, arg);
    const pf_species *s = pf_species_find(label);
    if (!s) species_error(L, fname, label);
    return s;
}

/* pf.species(label) -> {label=, symbol=, name=, atomic_number= (atoms), mass_number=,
 *                       mass= kg, uncertainty= kg, mass_u=, uncertainty_u=,
 *                       mass_micro_u= "86909180.529", uncertainty_micro_u= "0.006",
 *                       source=, reference=}
 * The micro-u values are strings so that the published digits reach a script
 * unrounded; the numbers are the doubles nearest to them. */
static int l_species(lua_State *L)
{
    const pf_species *s = check_species(L, 1, "species");
    lua_createtable(L, 0, 13);
    lua_pushstring(L, s->label);
    lua_setfield(L, -2, "label");
    lua_pushstring(L, s->symbol);
    lua_setfield(L, -2, "symbol");
    lua_pushstring(L, s->name);
    lua_setfield(L, -2, "name");
    if (s->atomic_number > 0) {
        lua_pushinteger(L, s->atomic_number);
        lua_setfield(L, -2, "atomic_number");
    }
    lua_pushinteger(L, s->mass_number);
    lua_setfield(L, -2, "mass_number");
    lua_pushnumber(L, s->mass_kg);
    lua_setfield(L, -2, "mass");
    lua_pushnumber(L, pf_species_uncertainty_kg(s));
    lua_setfield(L, -2, "uncertainty");
    lua_pushnumber(L, s->mass_u);
    lua_setfield(L, -2, "mass_u");
    lua_pushnumber(L, s->uncertainty_u);
    lua_setfield(L, -2, "uncertainty_u");
    lua_pushstring(L, s->mass_micro_u);
    lua_setfield(L, -2, "mass_micro_u");
    lua_pushstring(L, s->uncertainty_micro_u);
    lua_setfield(L, -2, "uncertainty_micro_u");
    lua_pushstring(L, s->source);
    lua_setfield(L, -2, "source");
    lua_pushstring(L, s->reference);
    lua_setfield(L, -2, "reference");
    return 1;
}

/* pf.mass(label) -> kg */
static int l_mass(lua_State *L)
{
    lua_pushnumber(L, check_species(L, 1, "mass")->mass_kg);
    return 1;
}

/* pf.species_list() -> array of canonical labels in table order. */
static int l_species_list(lua_State *L)
{
    size_t n;
    const pf_species *t = pf_species_table(&n);
    lua_createtable(L, (int)n, 0);
    for (size_t i = 0; i < n; i++) {
        lua_pushstring(L, t[i].label);
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
    return 1;
}

/* pf.photon_momentum(wavelength) -> h / lambda (kg m/s);
 * pf.photon_wavenumber(wavelength) -> 2 pi / lambda (1/m). */
static int l_photon_momentum(lua_State *L)
{
    lua_pushnumber(L, PF_PLANCK / pfl_check_positive(L, 1, "wavelength"));
    return 1;
}

static int l_photon_wavenumber(lua_State *L)
{
    lua_pushnumber(L, PF_TWO_PI / pfl_check_positive(L, 1, "wavelength"));
    return 1;
}

double pfl_field_mass(lua_State *L, int t, const char *fname)
{
    char buf[80];
    int type = pfl_option_get(L, t, "mass");
    double m = 0;
    if (type == LUA_TSTRING) {
        const char *label = lua_tostring(L, -1);
        const pf_species *s = pf_species_find(label);
        if (!s) species_error(L, fname, label);
        m = s->mass_kg;
    } else if (type == LUA_TNUMBER) {
        m = lua_tonumber(L, -1);
        if (!isfinite(m) || !(m > 0))
            luaL_error(L, "%s: field 'mass' must be a positive mass in kg or a species label, got %s", fname,
                       pfl_describe(L, -1, buf, sizeof buf));
    } else {
        luaL_error(L, "%s: field 'mass' must be a mass in kg or a species label such as \"87Rb\", got %s", fname,
                   pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    return m;
}

void pfl_open_units(lua_State *L, int mod)
{
    size_t n;
    const pf_quantity *q = pf_units_table(&n);
    static const luaL_Reg unit_funcs[] = {
        {"angular", l_angular}, {"as_temperature", l_as_temperature}, {"as_frequency", l_as_frequency}, {NULL, NULL},
    };
    push_quantities(L, q, n, unit_funcs);
    make_view(L, "pf.units");
    lua_setfield(L, mod, "units");
    q = pf_constants_table(&n);
    push_quantities(L, q, n, NULL);
    make_view(L, "pf.constants");
    lua_setfield(L, mod, "constants");
    static const luaL_Reg funcs[] = {
        {"species", l_species}, {"mass", l_mass}, {"species_list", l_species_list},
        {"photon_momentum", l_photon_momentum}, {"photon_wavenumber", l_photon_wavenumber}, {NULL, NULL},
    };
    pfl_add_functions(L, mod, funcs);
}
