/* pfl_potential.c - potentials sampled once on a grid (pf.potential), so a
 * protocol that calls w:evolve many times pays neither the Lua call per grid
 * point nor the per-point exponential again.
 *
 * The samples live in a plain userdata kept as the object's user value (so
 * the collector frees them, also after an error while sampling); the split-
 * step exponentials for the last (step, order) are cached in the core's
 * pf_evolve_cache and freed by close() or the collector.
 *
 * On a grid distributed over MPI ranks (docs/distributed.md) each rank
 * samples, keeps and exponentiates its own points only, as evolve does with
 * a function given directly; range() combines the ranks' extremes. */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_frame.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

pfl_potential_box *pfl_test_potential(lua_State *L, int idx)
{
    pfl_potential_box *b = luaL_testudata(L, idx, PFL_POTENTIAL_TYPE);
    if (b && !b->grid) luaL_error(L, "potential is closed");
    return b;
}

const double *pfl_potential_tilted(lua_State *L, int idx, pfl_potential_box *b, double mass, const double *acc,
                                   pf_evolve_cache **cache)
{
    idx = lua_absindex(L, idx);
    int d = pf_grid_dim(b->grid), same = b->tilted != NULL && b->tilt_mass == mass;
    for (int a = 0; a < d; a++) same = same && b->tilt_acc[a] == acc[a];
    *cache = &b->tilt_cache;
    if (same) {
        b->tilt_reuses++;
        return b->tilted;
    }
    /* On a distributed grid the object holds this rank's points only. */
    size_t first, end;
    pf_grid_local_range(b->grid, &first, &end);
    size_t n = end - first;
    double *S = lua_newuserdatauv(L, (n ? n : 1) * sizeof(double), 0);
    memset(S, 0, n * sizeof(double));
    pf_frame_tilt_add_range(b->grid, mass, acc, first, n, S);
    for (size_t i = 0; i < n; i++) S[i] = b->values[i] + S[i]; /* the sum evolve forms without the object */
    /* The old exponentials belong to the old table, whose memory the
     * collector may hand out again: drop them before the new table is used. */
    pf_evolve_cache_clear(&b->tilt_cache);
    lua_setiuservalue(L, idx, 2);
    b->tilted = S;
    b->tilt_mass = mass;
    for (int a = 0; a < PF_MAX_DIM; a++) b->tilt_acc[a] = a < d ? acc[a] : 0.0;
    b->tilt_builds++;
    return S;
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

int pfl_potential_option(lua_State *L, int t, pf_grid *g, const char *name, int time_dependent, const double **V,
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

size_t pfl_held_points(const pf_grid *g, size_t *first)
{
    size_t end;
    pf_grid_local_range(g, first, &end);
    return end - *first;
}

int pfl_tilt_wanted(const pf_wave *w, const double *acc, int accelerated)
{
    int any = 0;
    for (int a = 0; accelerated && a < pf_grid_dim(pf_wave_grid(w)); a++) any = any || acc[a] != 0.0;
    return any;
}

double *pfl_tilt_values(lua_State *L, pf_wave *w, const double *acc, int accelerated)
{
    if (!pfl_tilt_wanted(w, acc, accelerated)) return NULL;
    pf_grid *g = pf_wave_grid(w);
    size_t first, n = pfl_held_points(g, &first);
    double *T = lua_newuserdatauv(L, (n ? n : 1) * sizeof(double), 0);
    memset(T, 0, n * sizeof(double));
    pf_frame_tilt_add_range(g, pf_wave_mass(w), acc, first, n, T);
    return T;
}

const double *pfl_tilted_static(lua_State *L, const double *V, const double *T, size_t n)
{
    if (!V) return T;
    double *S = lua_newuserdatauv(L, n * sizeof(double), 0);
    for (size_t i = 0; i < n; i++) S[i] = V[i] + T[i];
    return S;
}

/* pf.potential(grid | wave, f | table) -> potential object.  Given a wave,
 * the function is sampled at the lab positions of the wave's grid points
 * (its frame offset added, docs/frames.md), and the object remembers that
 * offset so evolve and relax can check it still matches. */
static int l_potential(lua_State *L)
{
    double offset[PF_MAX_DIM] = {0, 0, 0};
    pf_grid *g;
    if (luaL_testudata(L, 1, PFL_WAVE_TYPE)) {
        pf_wave *w = pfl_check_wave(L, 1);
        g = pf_wave_grid(w);
        pfl_sampler_frame_offset(w, PF_POSITION, offset);
    } else {
        g = pfl_check_grid(L, 1);
    }
    if (lua_type(L, 2) != LUA_TFUNCTION && lua_type(L, 2) != LUA_TTABLE)
        return luaL_argerror(L, 2, "potential: a function of the coordinates or a table of values (J) expected");
    pfl_potential_box *b = lua_newuserdatauv(L, sizeof *b, 2);
    memset(b, 0, sizeof *b);
    pf_evolve_cache_init(&b->cache);
    pf_evolve_cache_init(&b->tilt_cache);
    luaL_setmetatable(L, PFL_POTENTIAL_TYPE);
    const double *V = pfl_read_potential(L, 2, g, "potential", 0, 0, offset);
    lua_setiuservalue(L, -2, 1);
    for (int a = 0; a < PF_MAX_DIM; a++) b->offset[a] = offset[a];
    b->values = V;
    b->grid = g;
    pf_grid_retain(g);
    return 1;
}

static int l_close(lua_State *L)
{
    pfl_potential_box *b = luaL_checkudata(L, 1, PFL_POTENTIAL_TYPE);
    if (b->grid) {
        pf_evolve_cache_clear(&b->cache);
        pf_evolve_cache_clear(&b->tilt_cache);
        pf_grid_release(b->grid);
        b->grid = NULL;
        b->values = NULL;
        b->tilted = NULL;
        lua_pushnil(L);
        lua_setiuservalue(L, 1, 1);
        lua_pushnil(L);
        lua_setiuservalue(L, 1, 2);
    }
    return 0;
}

/* p:range() -> min, max of V (J) */
static int l_range(lua_State *L)
{
    pfl_potential_box *b = luaL_checkudata(L, 1, PFL_POTENTIAL_TYPE);
    if (!b->grid) return luaL_error(L, "potential is closed");
    /* This rank's points (all of them on a grid held whole), then the whole
     * grid's extremes, the same on every rank. */
    size_t first, end;
    pf_grid_local_range(b->grid, &first, &end);
    double lo = HUGE_VAL, hi = -HUGE_VAL;
    for (size_t i = 0; i < end - first; i++) {
        if (b->values[i] < lo) lo = b->values[i];
        if (b->values[i] > hi) hi = b->values[i];
    }
    pf_grid_combine_range(b->grid, &lo, &hi);
    lua_pushnumber(L, lo);
    lua_pushnumber(L, hi);
    return 2;
}

/* p:cache_status() -> {tilted_builds = n, tilted_reuses = n, acceleration =
 * {m/s^2 per axis} of the kept tilted table (absent when none)}: how often
 * evolve and relax built V - m a.xi for this object and how often they
 * reused it. */
static int l_cache_status(lua_State *L)
{
    pfl_potential_box *b = luaL_checkudata(L, 1, PFL_POTENTIAL_TYPE);
    if (!b->grid) return luaL_error(L, "potential is closed");
    lua_createtable(L, 0, 3);
    lua_pushinteger(L, (lua_Integer)b->tilt_builds);
    lua_setfield(L, -2, "tilted_builds");
    lua_pushinteger(L, (lua_Integer)b->tilt_reuses);
    lua_setfield(L, -2, "tilted_reuses");
    if (b->tilted) {
        int d = pf_grid_dim(b->grid);
        lua_createtable(L, d, 0);
        for (int a = 0; a < d; a++) {
            lua_pushnumber(L, b->tilt_acc[a]);
            lua_rawseti(L, -2, a + 1);
        }
        lua_setfield(L, -2, "acceleration");
    }
    return 1;
}

static int l_tostring(lua_State *L)
{
    pfl_potential_box *b = luaL_checkudata(L, 1, PFL_POTENTIAL_TYPE);
    if (!b->grid) lua_pushliteral(L, "potential (closed)");
    else lua_pushfstring(L, "potential on a %dD grid of %d points", pf_grid_dim(b->grid), (int)pf_grid_total(b->grid));
    return 1;
}

void pfl_register_potential(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {{"close", l_close}, {"range", l_range}, {"cache_status", l_cache_status}, {NULL, NULL}};
    static const luaL_Reg meta[] = {{"__gc", l_close}, {"__close", l_close}, {"__tostring", l_tostring}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {{"potential", l_potential}, {NULL, NULL}};
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_POTENTIAL_TYPE, .meta = meta, .methods = methods, .funcs = funcs});
}
