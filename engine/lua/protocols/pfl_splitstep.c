/* pfl_splitstep.c - w:evolve, the split-step flight in a potential
 * (pf_splitstep.h): static, time-dependent or enveloped potentials, an
 * optional mean field, and an 'acceleration' that adds the uniform force
 * -m a.x.  Potentials are in J, times in s.
 *
 * Potentials are given in the lab: for a wave in a moved frame the functions
 * are sampled at lab positions, the frame's momentum is folded onto the grid
 * first (pf_wave_frame_fold) and an 'acceleration' adds the uniform force
 * -m a.x (the pf.setup default included, as for every flight;
 * docs/frames.md). */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_frame.h"
#include "pf_splitstep.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

static const pfl_options_decl EVOLVE_OPTIONS = {
    "wave:evolve", (const char *const[]){"potential", "time_dependent", "envelope", "dt", "order", "g", "acceleration",
                                        NULL}};

static int dim_of(pf_wave *w) { return pf_grid_dim(pf_wave_grid(w)); }

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
    spec.dt = pfl_field_positive_opt(L, 3, "dt", "s", "evolve");
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
    int fn = pfl_potential_option(L, 3, g, "evolve", varying, &V, &cache, offset);
    pfl_sampler s = {L, fn, dim_of(w), PF_POSITION, "evolve", "potential", 1, 0, g, {0, 0, 0}};
    memcpy(s.offset, offset, sizeof s.offset);
    size_t first_point, held = pfl_held_points(g, &first_point);
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
    int tilted = pfl_tilt_wanted(w, acc, accelerated);
    const double *T = NULL;
    tilt_call tc = {spec.varying, spec.user, NULL, held};
    if (tilted && cache && !spec.varying) {
        /* A pf.potential object keeps V - m a.xi and its exponentials for
         * the acceleration and mass of the last call (pfl_potential_tilted). */
        spec.potential = pfl_potential_tilted(L, fn, pfl_test_potential(L, fn), pf_wave_mass(w), acc, &spec.cache);
    } else if (tilted) {
        T = pfl_tilt_values(L, w, acc, accelerated);
        tc.T = T;
        if (spec.varying) {
            spec.varying = tilt_cb;
            spec.user = &tc;
        } else {
            /* The tilted values are new each call: no exponentials to keep. */
            spec.potential = pfl_tilted_static(L, V, T, held);
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
    pfl_set_number(L, "steps", (double)info.steps);
    pfl_set_number(L, "dt", info.dt);
    pfl_set_number(L, "phase_per_step", info.phase_per_step);
    return 2;
}

void pfl_open_splitstep(lua_State *L, int mod)
{
    pfl_register_potential(L, mod);
    static const pfl_options_decl *const options[] = {&EVOLVE_OPTIONS, NULL};
    pfl_options_declare(L, options);
    static const luaL_Reg methods[] = {
        {"evolve", l_evolve},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
