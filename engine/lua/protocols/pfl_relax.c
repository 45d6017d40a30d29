/* pfl_relax.c - w:relax, the imaginary-time ground state, and w:energy, the
 * energy functional (pf_relax.h), in a potential given in the lab (sampled
 * at lab positions for a wave in a moved frame, docs/frames.md) with an
 * optional 'acceleration' (the uniform force -m a.x).  Potentials and
 * energies are in J, times in s. */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_frame.h"
#include "pf_relax.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

static const pfl_options_decl RELAX_OPTIONS = {
    "wave:relax", (const char *const[]){"potential", "dt", "g", "tolerance", "max_steps", "check_every",
                                       "acceleration", NULL}};
static const pfl_options_decl ENERGY_OPTIONS = {"wave:energy", (const char *const[]){"potential", "g", "acceleration", NULL}};

static int dim_of(pf_wave *w) { return pf_grid_dim(pf_wave_grid(w)); }

/* w:relax{potential = f | table, dt = s, g = J m^d, tolerance = 1e-10,
 *         max_steps = 100000, check_every = 10, acceleration = m/s^2 | false}
 *   -> w, {energy, chemical_potential, steps, converged, change, dt} */
static int l_relax(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pfl_options_check(L, 2, &RELAX_OPTIONS);
    pf_grid *g = pf_wave_grid(w);
    pf_relax_spec spec;
    memset(&spec, 0, sizeof spec);
    spec.dt = pfl_field_positive_opt(L, 2, "dt", "s", "relax");
    spec.g = pfl_field_number(L, 2, "g", 0, 0);
    spec.tolerance = pfl_field_number(L, 2, "tolerance", 1e-10, 0);
    if (!(spec.tolerance > 0)) return luaL_error(L, "relax: field 'tolerance' must be positive, got %g", spec.tolerance);
    spec.max_steps = (size_t)pfl_field_integer(L, 2, "max_steps", 100000, 1, "relax");
    spec.check_every = (size_t)pfl_field_integer(L, 2, "check_every", 10, 1, "relax");
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 2, dim_of(w), acc, "wave:relax");
    double offset[PF_MAX_DIM];
    pfl_sampler_frame_offset(w, PF_POSITION, offset);
    const double *V;
    pf_evolve_cache *object;
    int fn = pfl_potential_option(L, 2, g, "relax", 0, &V, &object, offset);
    if (!V) return luaL_error(L, "relax: field 'potential' is required (function of the coordinates or table, J)");
    int tilted = pfl_tilt_wanted(w, acc, accelerated);
    pf_evolve_cache *unused;
    if (tilted && object) spec.potential = pfl_potential_tilted(L, fn, pfl_test_potential(L, fn), pf_wave_mass(w), acc, &unused);
    else if (tilted) {
        size_t first_point, held = pfl_held_points(g, &first_point);
        spec.potential = pfl_tilted_static(L, V, pfl_tilt_values(L, w, acc, accelerated), held);
    }
    else spec.potential = V;
    pfl_check(L, pf_wave_frame_fold(w, "a potential"), "relax");
    pf_relax_info info;
    pfl_check(L, pf_wave_relax(w, &spec, &info), "relax");
    /* The grid's energies lack the force's constant -m a.X (lab energy). */
    double c = tilted ? pf_frame_tilt_constant(w, acc) : 0.0;
    lua_settop(L, 1);
    lua_createtable(L, 0, 6);
    pfl_set_number(L, "energy", info.energy + c);
    pfl_set_number(L, "chemical_potential", info.chemical_potential + c);
    pfl_set_number(L, "steps", (double)info.steps);
    pfl_set_number(L, "change", info.change);
    pfl_set_number(L, "dt", info.dt);
    lua_pushboolean(L, info.converged);
    lua_setfield(L, -2, "converged");
    return 2;
}

/* w:energy{potential = f | table, g = 0, acceleration = m/s^2 | false}
 *   -> E, mu (J, lab: kinetic with the frame's momentum, potential at lab
 *   positions, the uniform force's -m a.x) */
static int l_energy(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    if (lua_isnoneornil(L, 2)) {
        lua_settop(L, 1);
        lua_newtable(L);
    }
    pfl_options_check(L, 2, &ENERGY_OPTIONS);
    double g = pfl_field_number(L, 2, "g", 0, 0);
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 2, dim_of(w), acc, "wave:energy");
    double offset[PF_MAX_DIM];
    pfl_sampler_frame_offset(w, PF_POSITION, offset);
    const double *V;
    pfl_potential_option(L, 2, pf_wave_grid(w), "energy", 0, &V, NULL, offset);
    double e = 0, mu = 0;
    pfl_check(L, pf_wave_lab_energy(w, V, g, accelerated ? acc : NULL, &e, &mu), "energy");
    lua_pushnumber(L, e);
    lua_pushnumber(L, mu);
    return 2;
}

void pfl_open_relax(lua_State *L, int mod)
{
    (void)mod;
    static const pfl_options_decl *const options[] = {&RELAX_OPTIONS, &ENERGY_OPTIONS, NULL};
    pfl_options_declare(L, options);
    static const luaL_Reg methods[] = {
        {"relax", l_relax},
        {"energy", l_energy},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
