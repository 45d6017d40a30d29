/* pfl_evolve.c - Lua methods for evolution between instantaneous steps:
 * w:fall (exact uniform-force flight), w:evolve (split-step flight in a
 * potential, optional mean field), w:relax (imaginary-time ground state) and
 * w:energy (the energy functional).  Potentials are in J, times in s.
 *
 * Potentials and forces are given in the lab: for a wave in a moved frame
 * the functions are sampled at lab positions, the frame's momentum is folded
 * onto the grid first (pf_wave_frame_fold) and an 'acceleration' adds the
 * uniform force -m a.x (the pf.setup default included, as for every flight;
 * docs/frames.md). */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_force.h"
#include "pf_frame.h"
#include "pf_relax.h"
#include "pf_splitstep.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

static const pfl_options_decl EVOLVE_OPTIONS = {
    "wave:evolve", (const char *const[]){"potential", "time_dependent", "envelope", "dt", "order", "g", "acceleration",
                                        NULL}};
static const pfl_options_decl RELAX_OPTIONS = {
    "wave:relax", (const char *const[]){"potential", "dt", "g", "tolerance", "max_steps", "check_every",
                                       "acceleration", NULL}};
static const pfl_options_decl ENERGY_OPTIONS = {"wave:energy", (const char *const[]){"potential", "g", "acceleration", NULL}};

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
    pfl_check(L, pf_wave_lab_fall(w, t, a), "fall");
    lua_settop(L, 1);
    return 1;
}

/* A pf.potential object holds values at fixed lab positions: it fits a wave
 * only when its grid sits at the same lab offset (docs/frames.md). */
static void check_object_offset(lua_State *L, const pfl_potential_box *pb, const pf_grid *g, const double *offset,
                                const char *name)
{
    int d = pf_grid_dim(g);
    for (int a = 0; a < d; a++)
        if (pb->offset[a] != offset[a]) {
            char msg[400];
            snprintf(msg, sizeof msg,
                     "%s: the potential was sampled for a grid whose coordinate 0 sits at %g m on axis %d (lab), but "
                     "the wave's grid sits at %g m (its frame moved); sample it for this wave with pf.potential(w, f)",
                     name, pb->offset[a], a + 1, offset[a]);
            luaL_error(L, "%s", msg);
        }
}

/* Reads the optional 'potential' field of the options table at t: a
 * pf.potential object (its values and cache), a function or a table
 * (sampled now, at the grid coordinates plus offset, into a userdata left
 * on the stack), or, when time_dependent, a function left on the stack for
 * a sampler (its index is returned). */
static int potential_field(lua_State *L, int t, pf_grid *g, const char *name, int time_dependent, const double **V,
                           pf_evolve_cache **cache, const double *offset)
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
        check_object_offset(L, pb, g, offset, name);
        *V = pb->values;
        if (cache) *cache = &pb->cache;
        return fn;
    }
    if (time_dependent) {
        if (type != LUA_TFUNCTION)
            luaL_error(L, "%s: a time-dependent potential must be a function of the coordinates and t", name);
        return fn;
    }
    *V = pfl_read_potential(L, fn, g, name, 0, 0, offset);
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

/* Points of the grid this process holds: all, or its rank's slab
 * (pf_dist.h), whose potentials are sampled at its own points only. */
static size_t held_points(const pf_grid *g, size_t *first)
{
    size_t end;
    pf_grid_local_range(g, first, &end);
    return end - *first;
}

/* Whether an 'acceleration' adds a uniform force (a non-zero value on some
 * axis). */
static int tilt_wanted(lua_State *L, pf_wave *w, const double *acc, int accelerated)
{
    (void)L;
    int any = 0;
    for (int a = 0; accelerated && a < dim_of(w); a++) any = any || acc[a] != 0.0;
    return any;
}

/* The uniform force of an 'acceleration' as a potential on the grid
 * (-m a.xi, pf_frame_tilt_add) in a userdata left on the stack; NULL when
 * there is no acceleration or it is zero. */
static double *tilt_values(lua_State *L, pf_wave *w, const double *acc, int accelerated)
{
    if (!tilt_wanted(L, w, acc, accelerated)) return NULL;
    pf_grid *g = pf_wave_grid(w);
    size_t first, n = held_points(g, &first);
    double *T = lua_newuserdatauv(L, (n ? n : 1) * sizeof(double), 0);
    memset(T, 0, n * sizeof(double));
    pf_frame_tilt_add_range(g, pf_wave_mass(w), acc, first, n, T);
    return T;
}

/* V + tilt for a static V (NULL: the tilt alone), in a userdata left on
 * the stack. */
static const double *tilted_static(lua_State *L, const double *V, const double *T, size_t n)
{
    if (!V) return T;
    double *S = lua_newuserdatauv(L, n * sizeof(double), 0);
    for (size_t i = 0; i < n; i++) S[i] = V[i] + T[i];
    return S;
}

/* A time-dependent potential plus the static tilt. */
typedef struct tilt_call {
    pf_potential_fn inner;
    void *user;
    const double *T;
    size_t n;
} tilt_call;

static int tilt_cb(void *user, double t, double *out)
{
    tilt_call *c = user;
    if (c->inner(c->user, t, out)) return 1;
    for (size_t i = 0; i < c->n; i++) out[i] += c->T[i];
    return 0;
}

/* w:evolve(t, {potential = P | f | table, time_dependent = false,
 *              envelope = function(t), dt = s, order = 2 | 4, g = J m^d,
 *              acceleration = m/s^2 per axis | false})
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
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 3, dim_of(w), acc, "wave:evolve");
    int varying = pfl_field_boolean(L, 3, "time_dependent", 0);
    double offset[PF_MAX_DIM];
    pfl_sampler_frame_offset(w, PF_POSITION, offset);
    const double *V;
    pf_evolve_cache *cache;
    int fn = potential_field(L, 3, g, "evolve", varying, &V, &cache, offset);
    pfl_sampler s = {L, fn, dim_of(w), PF_POSITION, "evolve", "potential", 1, 0, g, {0, 0, 0}};
    memcpy(s.offset, offset, sizeof s.offset);
    size_t first_point, held = held_points(g, &first_point);
    envelope_call env = {L, 0, V, held};
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
    int tilted = tilt_wanted(L, w, acc, accelerated);
    const double *T = NULL;
    tilt_call tc = {spec.varying, spec.user, NULL, held};
    if (tilted && cache && !spec.varying) {
        /* A pf.potential object keeps V - m a.xi and its exponentials for
         * the acceleration and mass of the last call (pfl_potential_tilted). */
        spec.potential = pfl_potential_tilted(L, fn, pfl_test_potential(L, fn), pf_wave_mass(w), acc, &spec.cache);
    } else if (tilted) {
        T = tilt_values(L, w, acc, accelerated);
        tc.T = T;
        if (spec.varying) {
            spec.varying = tilt_cb;
            spec.user = &tc;
        } else {
            /* The tilted values are new each call: no exponentials to keep. */
            spec.potential = tilted_static(L, V, T, held);
            spec.cache = NULL;
        }
    }
    /* Everything is read: now the lab potential may take the frame's momentum. */
    pfl_check(L, pf_wave_frame_fold(w, "a potential or force"), "evolve");
    pf_evolve_info info;
    pf_status st = pf_wave_evolve(w, t, &spec, &info);
    if (st == PF_ECALLBACK) return pfl_raise_callback(L, "evolve");
    pfl_check(L, st, "evolve");
    if (tilted) pf_frame_tilt_phase(w, acc, t);
    lua_settop(L, 1);
    lua_createtable(L, 0, 3);
    push_info_number(L, "steps", (double)info.steps);
    push_info_number(L, "dt", info.dt);
    push_info_number(L, "phase_per_step", info.phase_per_step);
    return 2;
}

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
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 2, dim_of(w), acc, "wave:relax");
    double offset[PF_MAX_DIM];
    pfl_sampler_frame_offset(w, PF_POSITION, offset);
    const double *V;
    pf_evolve_cache *object;
    int fn = potential_field(L, 2, g, "relax", 0, &V, &object, offset);
    if (!V) return luaL_error(L, "relax: field 'potential' is required (function of the coordinates or table, J)");
    int tilted = tilt_wanted(L, w, acc, accelerated);
    pf_evolve_cache *unused;
    if (tilted && object) spec.potential = pfl_potential_tilted(L, fn, pfl_test_potential(L, fn), pf_wave_mass(w), acc, &unused);
    else if (tilted) {
        size_t first_point, held = held_points(g, &first_point);
        spec.potential = tilted_static(L, V, tilt_values(L, w, acc, accelerated), held);
    }
    else spec.potential = V;
    pfl_check(L, pf_wave_frame_fold(w, "a potential"), "relax");
    pf_relax_info info;
    pfl_check(L, pf_wave_relax(w, &spec, &info), "relax");
    /* The grid's energies lack the force's constant -m a.X (lab energy). */
    double c = tilted ? pf_frame_tilt_constant(w, acc) : 0.0;
    lua_settop(L, 1);
    lua_createtable(L, 0, 6);
    push_info_number(L, "energy", info.energy + c);
    push_info_number(L, "chemical_potential", info.chemical_potential + c);
    push_info_number(L, "steps", (double)info.steps);
    push_info_number(L, "change", info.change);
    push_info_number(L, "dt", info.dt);
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
    potential_field(L, 2, pf_wave_grid(w), "energy", 0, &V, NULL, offset);
    double e = 0, mu = 0;
    pfl_check(L, pf_wave_lab_energy(w, V, g, accelerated ? acc : NULL, &e, &mu), "energy");
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
