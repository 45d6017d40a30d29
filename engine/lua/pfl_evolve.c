/* pfl_evolve.c - Lua methods for evolution between instantaneous steps:
 * w:fall (exact uniform-force flight), w:evolve (split-step flight in a
 * potential, optional mean field), w:relax (imaginary-time ground state) and
 * w:energy (the energy functional).  Potentials are in J, times in s. */
#include <math.h>
#include <string.h>
#include "../core/pf_force.h"
#include "../core/pf_relax.h"
#include "../core/pf_splitstep.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

static const pfl_options_decl EVOLVE_OPTIONS = {
    "wave:evolve", (const char *const[]){"potential", "time_dependent", "envelope", "dt", "order", "g", NULL}};
static const pfl_options_decl RELAX_OPTIONS = {
    "wave:relax", (const char *const[]){"potential", "dt", "g", "tolerance", "max_steps", "check_every", NULL}};
static const pfl_options_decl ENERGY_OPTIONS = {"wave:energy", (const char *const[]){"potential", "g", NULL}};

static int dim_of(pf_wave *w) { return pf_grid_dim(pf_wave_grid(w)); }

/* w:fall(t, a) - flight for t seconds under the constant acceleration a
 * (m/s^2: a number in 1D, else one value per axis, e.g. {0, -9.81}). */
static int l_fall(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "fall time (s)");
    double a[PF_MAX_DIM];
    if (lua_isnoneornil(L, 3)) return luaL_argerror(L, 3, "acceleration (m/s^2, one value per axis) expected");
    pfl_check_axis_values(L, 3, dim_of(w), a, "acceleration (m/s^2)");
    pfl_check(L, pf_wave_fall(w, t, a), "fall");
    lua_settop(L, 1);
    return 1;
}

/* Reads the optional 'potential' field of the options table at t: a
 * pf.potential object (its values and cache), a function or a table
 * (sampled now into a userdata left on the stack), or, when time_dependent,
 * a function left on the stack for a sampler (its index is returned). */
static int potential_field(lua_State *L, int t, pf_grid *g, const char *name, int time_dependent, const double **V,
                           pf_evolve_cache **cache)
{
    *V = NULL;
    if (cache) *cache = NULL;
    int type = pfl_option_get(L, t, "potential");
    if (type == LUA_TNIL) {
        lua_pop(L, 1);
        if (time_dependent) luaL_error(L, "%s: 'time_dependent' needs a 'potential' function of the coordinates and t", name);
        return 0;
    }
    int fn = lua_gettop(L);
    pfl_potential_box *pb = type == LUA_TUSERDATA ? pfl_test_potential(L, fn) : NULL;
    if (pb) {
        if (time_dependent) luaL_error(L, "%s: a pf.potential object is static; give a function of the coordinates and t", name);
        if (!pf_grid_same(pb->grid, g)) luaL_error(L, "%s: the potential was sampled on a different grid", name);
        *V = pb->values;
        if (cache) *cache = &pb->cache;
        return fn;
    }
    if (time_dependent) {
        if (type != LUA_TFUNCTION)
            luaL_error(L, "%s: a time-dependent potential must be a function of the coordinates and t", name);
        return fn;
    }
    *V = pfl_read_potential(L, fn, g, name, 0, 0);
    return fn;
}

/* V(x, t) = envelope(t) V(x): one Lua call per sample time, then one pass. */
typedef struct envelope_call {
    lua_State *L;
    int fn;            /* the envelope function */
    const double *V;   /* the static shape */
    size_t n;
} envelope_call;

static int envelope_cb(void *user, double t, double *out)
{
    envelope_call *e = user;
    lua_State *L = e->L;
    int base = lua_gettop(L);
    lua_pushvalue(L, e->fn);
    lua_pushnumber(L, t);
    if (lua_pcall(L, 1, 1, 0) != LUA_OK) return 1;
    int isnum;
    double s = lua_tonumberx(L, -1, &isnum);
    if (!isnum || !isfinite(s)) {
        char buf[80];
        const char *got = pfl_describe(L, -1, buf, sizeof buf);
        lua_settop(L, base);
        lua_pushfstring(L, "evolve: the envelope function must return a finite number; at t = %f it returned %s", t, got);
        return 1;
    }
    lua_settop(L, base);
    for (size_t i = 0; i < e->n; i++) out[i] = s * e->V[i];
    return 0;
}

static void push_info_number(lua_State *L, const char *k, double v)
{
    lua_pushnumber(L, v);
    lua_setfield(L, -2, k);
}

/* w:evolve(t, {potential = P | f | table, time_dependent = false,
 *              envelope = function(t), dt = s, order = 2 | 4, g = J m^d})
 *   -> w, {steps, dt, phase_per_step} */
static int l_evolve(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "evolve time (s)");
    if (lua_isnoneornil(L, 3)) {
        lua_settop(L, 2);
        lua_newtable(L);
    }
    pfl_options_check(L, 3, &EVOLVE_OPTIONS);
    pf_grid *g = pf_wave_grid(w);
    pf_evolve_spec spec;
    memset(&spec, 0, sizeof spec);
    spec.dt = pfl_field_number(L, 3, "dt", 0, 0);
    if (pfl_option_get(L, 3, "dt") != LUA_TNIL && !(spec.dt > 0)) {
        char buf[80];
        return luaL_error(L, "evolve: field 'dt' must be positive (s), got %s", pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    spec.order = (int)pfl_field_integer(L, 3, "order", 2, 0, "evolve");
    if (spec.order != 2 && spec.order != 4)
        return luaL_error(L, "evolve: field 'order' must be 2 (Strang) or 4 (Yoshida), got %d", spec.order);
    spec.g = pfl_field_number(L, 3, "g", 0, 0);
    int varying = pfl_field_boolean(L, 3, "time_dependent", 0);
    const double *V;
    pf_evolve_cache *cache;
    int fn = potential_field(L, 3, g, "evolve", varying, &V, &cache);
    pfl_sampler s = {L, fn, dim_of(w), PF_POSITION, "evolve", "potential", 1, 0, g};
    envelope_call env = {L, 0, V, pf_grid_total(g)};
    int te = pfl_option_get(L, 3, "envelope");
    if (te != LUA_TNIL) {
        if (te != LUA_TFUNCTION) return luaL_error(L, "evolve: field 'envelope' must be a function of t");
        if (varying || !V)
            return luaL_error(L, "evolve: 'envelope' scales a static 'potential' (object, function of the coordinates or table)");
        env.fn = lua_gettop(L);
    }
    if (env.fn) {
        spec.varying = envelope_cb;
        spec.user = &env;
    } else if (varying) {
        spec.varying = pfl_potential_cb;
        spec.user = &s;
    } else {
        spec.potential = V;
        spec.cache = cache;
    }
    pf_evolve_info info;
    pf_status st = pf_wave_evolve(w, t, &spec, &info);
    if (st == PF_ECALLBACK) return pfl_raise_callback(L, "evolve");
    pfl_check(L, st, "evolve");
    lua_settop(L, 1);
    lua_createtable(L, 0, 3);
    push_info_number(L, "steps", (double)info.steps);
    push_info_number(L, "dt", info.dt);
    push_info_number(L, "phase_per_step", info.phase_per_step);
    return 2;
}

/* w:relax{potential = f | table, dt = s, g = J m^d, tolerance = 1e-10,
 *         max_steps = 100000, check_every = 10}
 *   -> w, {energy, chemical_potential, steps, converged, change, dt} */
static int l_relax(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pfl_options_check(L, 2, &RELAX_OPTIONS);
    pf_grid *g = pf_wave_grid(w);
    pf_relax_spec spec;
    memset(&spec, 0, sizeof spec);
    spec.dt = pfl_field_number(L, 2, "dt", 0, 0);
    if (pfl_option_get(L, 2, "dt") != LUA_TNIL && !(spec.dt > 0)) {
        char buf[80];
        return luaL_error(L, "relax: field 'dt' must be positive (s), got %s", pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    spec.g = pfl_field_number(L, 2, "g", 0, 0);
    spec.tolerance = pfl_field_number(L, 2, "tolerance", 1e-10, 0);
    if (!(spec.tolerance > 0)) return luaL_error(L, "relax: field 'tolerance' must be positive, got %g", spec.tolerance);
    spec.max_steps = (size_t)pfl_field_integer(L, 2, "max_steps", 100000, 1, "relax");
    spec.check_every = (size_t)pfl_field_integer(L, 2, "check_every", 10, 1, "relax");
    const double *V;
    potential_field(L, 2, g, "relax", 0, &V, NULL);
    if (!V) return luaL_error(L, "relax: field 'potential' is required (function of the coordinates or table, J)");
    spec.potential = V;
    pf_relax_info info;
    pfl_check(L, pf_wave_relax(w, &spec, &info), "relax");
    lua_settop(L, 1);
    lua_createtable(L, 0, 6);
    push_info_number(L, "energy", info.energy);
    push_info_number(L, "chemical_potential", info.chemical_potential);
    push_info_number(L, "steps", (double)info.steps);
    push_info_number(L, "change", info.change);
    push_info_number(L, "dt", info.dt);
    lua_pushboolean(L, info.converged);
    lua_setfield(L, -2, "converged");
    return 2;
}

/* w:energy{potential = f | table, g = 0} -> E, mu (J) */
static int l_energy(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    if (lua_isnoneornil(L, 2)) {
        lua_settop(L, 1);
        lua_newtable(L);
    }
    pfl_options_check(L, 2, &ENERGY_OPTIONS);
    double g = pfl_field_number(L, 2, "g", 0, 0);
    const double *V;
    potential_field(L, 2, pf_wave_grid(w), "energy", 0, &V, NULL);
    double e = 0, mu = 0;
    pfl_check(L, pf_wave_energy(w, V, g, &e, &mu), "energy");
    lua_pushnumber(L, e);
    lua_pushnumber(L, mu);
    return 2;
}

void pfl_open_evolve(lua_State *L, int mod)
{
    pfl_register_potential(L, mod);
    static const pfl_options_decl *const options[] = {&EVOLVE_OPTIONS, &RELAX_OPTIONS, &ENERGY_OPTIONS, NULL};
    pfl_options_declare(L, options);
    static const luaL_Reg methods[] = {
        {"fall", l_fall},
        {"evolve", l_evolve},
        {"relax", l_relax},
        {"energy", l_energy},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
