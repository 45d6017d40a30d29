/* pfl_coupling.c - pf.coupling as a Lua function: the mean-field g that
 * evolve and relax take, from scattering length, atom number, mass and
 * confinement.  The physics is in engine/core/states/pf_coupling.c; this
 * file only reads options and pushes results. */
#include <stdio.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_coupling.h"
#include "pfl_options.h"
#include "pfl_params.h"

static const pfl_options_decl COUPLING_OPTIONS = {
    "pf.coupling", (const char *const[]){"scattering_length", "atoms", "mass", "dim", "transverse_omega",
                                         "transverse_frequency", "olshanii", NULL}};

/* pf.coupling{scattering_length = m, atoms = N, mass = kg | label, dim = 1|2|3,
 *             transverse_omega = rad/s | transverse_frequency = Hz (1D, 2D),
 *             olshanii = false (1D)}
 * -> {g =, g_one_atom =, confinement_length =, correction =, dim =, unit =} */
static int l_coupling(lua_State *L)
{
    pfl_options_check(L, 1, &COUPLING_OPTIONS);
    pfl_params_before_work(L); /* --help never computes */
    pf_coupling_spec s;
    memset(&s, 0, sizeof s);
    s.scattering_length = pfl_field_number(L, 1, "scattering_length", 0, 1);
    s.atoms = pfl_field_number(L, 1, "atoms", 0, 1);
    s.mass = pfl_field_mass(L, 1, "coupling");
    double dim = pfl_field_number(L, 1, "dim", 0, 1);
    if (dim != 1 && dim != 2 && dim != 3) {
        char buf[40]; /* lua_pushfstring has no %g */
        snprintf(buf, sizeof buf, "%g", dim);
        return luaL_error(L, "coupling: field 'dim' must be 1, 2 or 3, got %s", buf);
    }
    s.dim = (int)dim;
    /* Angular frequency in rad/s, or the same in Hz, as pf.thermal takes a trap. */
    int has_w = pfl_option_get(L, 1, "transverse_omega") != LUA_TNIL;
    lua_pop(L, 1);
    int has_f = pfl_option_get(L, 1, "transverse_frequency") != LUA_TNIL;
    lua_pop(L, 1);
    if (has_w && has_f)
        return luaL_error(L, "coupling: give one of 'transverse_omega' (rad/s) or 'transverse_frequency' (Hz), not both");
    if (s.dim < 3 && !has_w && !has_f)
        return luaL_error(L, "coupling: in %dD give the %s confinement as 'transverse_omega' (rad/s) or "
                             "'transverse_frequency' (Hz)", s.dim, s.dim == 1 ? "transverse" : "axial");
    if (has_w) s.transverse_omega = pfl_field_number(L, 1, "transverse_omega", 0, 1);
    if (has_f) s.transverse_omega = 2 * PF_PI * pfl_field_number(L, 1, "transverse_frequency", 0, 1);
    s.olshanii = pfl_field_boolean(L, 1, "olshanii", 0);
    pf_coupling_result r;
    pfl_check(L, pf_coupling_compute(pfl_ctx(L), &s, &r), "coupling");
    lua_createtable(L, 0, 6);
    pfl_set_number(L, "g", r.g);
    pfl_set_number(L, "g_one_atom", r.g_one_atom);
    pfl_set_number(L, "confinement_length", r.confinement_length);
    pfl_set_number(L, "correction", r.correction);
    lua_pushinteger(L, s.dim);
    lua_setfield(L, -2, "dim");
    lua_pushstring(L, s.dim == 1 ? "J m" : s.dim == 2 ? "J m^2" : "J m^3");
    lua_setfield(L, -2, "unit");
    return 1;
}

void pfl_open_coupling(lua_State *L, int mod)
{
    static const pfl_options_decl *const decls[] = {&COUPLING_OPTIONS, NULL};
    pfl_options_declare(L, decls);
    static const luaL_Reg funcs[] = {{"coupling", l_coupling}, {NULL, NULL}};
    pfl_add_functions(L, mod, funcs);
}
