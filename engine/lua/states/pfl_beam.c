/* pfl_beam.c - pf.beam as a Lua function: the relativistic de Broglie
 * wavelength and the distance-to-time mapping of a particle beam.  The
 * physics is in engine/core/states/pf_beam.c; this file only reads options
 * and pushes results. */
#include "pf_beam.h"
#include "pf_species.h"
#include "pfl_options.h"
#include "pfl_params.h"

static const pfl_options_decl BEAM_OPTIONS = {
    "pf.beam", (const char *const[]){"particle", "mass", "kinetic_energy", NULL}};

/* beam.flight_time(L): upvalue 1 is a userdata holding the pf_beam. */
static int l_beam_flight_time(lua_State *L)
{
    const pf_beam *b = lua_touserdata(L, lua_upvalueindex(1));
    double d = pfl_check_finite(L, 1, "distance");
    double t;
    pfl_check(L, pf_beam_flight_time(pfl_ctx(L), b, d, &t), "flight_time");
    lua_pushnumber(L, t);
    return 1;
}

static double beam_mass(lua_State *L)
{
    int has_p = pfl_option_get(L, 1, "particle") != LUA_TNIL;
    lua_pop(L, 1);
    int has_m = pfl_option_get(L, 1, "mass") != LUA_TNIL;
    lua_pop(L, 1);
    if (has_p == has_m)
        luaL_error(L, "beam: give exactly one of 'particle' (a label such as \"e\", \"n\", \"p\") or 'mass' (kg)");
    if (has_m) return pfl_field_mass(L, 1, "beam");
    char buf[80];
    if (pfl_option_get(L, 1, "particle") != LUA_TSTRING)
        luaL_error(L, "beam: field 'particle' must be a label such as \"e\", \"n\" or \"p\", got %s",
                   pfl_describe(L, -1, buf, sizeof buf));
    const char *label = lua_tostring(L, -1);
    const pf_species *s = pf_species_find(label);
    if (!s) luaL_error(L, "beam: unknown particle '%s'; see pf.species_list() or give 'mass' in kg", label);
    lua_pop(L, 1);
    return s->mass_kg;
}

/* pf.beam{particle = "e" | mass = kg, kinetic_energy = J}
 * -> {wavelength, wavenumber, momentum, velocity, gamma, transverse_mass,
 *     rest_mass, kinetic_energy, flight_time = function(distance) -> s} */
static int l_beam(lua_State *L)
{
    pfl_options_check(L, 1, &BEAM_OPTIONS);
    pfl_params_before_work(L); /* --help never computes */
    double m0 = beam_mass(L);
    double ek = pfl_field_number(L, 1, "kinetic_energy", 0, 1);
    pf_beam b;
    pfl_check(L, pf_beam_compute(pfl_ctx(L), m0, ek, &b), "beam");
    lua_createtable(L, 0, 9);
    const struct { const char *name; double v; } f[] = {
        {"wavelength", b.wavelength}, {"wavenumber", b.wavenumber}, {"momentum", b.momentum},
        {"velocity", b.velocity}, {"gamma", b.gamma}, {"transverse_mass", b.transverse_mass},
        {"rest_mass", b.rest_mass}, {"kinetic_energy", b.kinetic_energy},
    };
    for (size_t i = 0; i < sizeof f / sizeof f[0]; i++) {
        lua_pushnumber(L, f[i].v);
        lua_setfield(L, -2, f[i].name);
    }
    pf_beam *held = lua_newuserdatauv(L, sizeof *held, 0);
    *held = b;
    lua_pushcclosure(L, l_beam_flight_time, 1);
    lua_setfield(L, -2, "flight_time");
    return 1;
}

void pfl_open_beam(lua_State *L, int mod)
{
    static const pfl_options_decl *const decls[] = {&BEAM_OPTIONS, NULL};
    pfl_options_declare(L, decls);
    static const luaL_Reg funcs[] = {{"beam", l_beam}, {NULL, NULL}};
    pfl_add_functions(L, mod, funcs);
}
