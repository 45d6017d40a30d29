/* pfl_dist.c - the binding's side of grids split over MPI ranks (pf_dist.h):
 * the refusal of a distributed wave or grid by every Lua function not
 * flagged DIST in pfl_aware.c, and pf.mpi_info().
 *
 * A distributed wave stores only this rank's slab; a function written for
 * whole grids would read past it or report one rank's share as the whole.
 * So pfl_check_wave and pfl_check_grid ask the guards below, which refuse a
 * distributed object unless the running Lua function is flagged DIST in
 * pfl_aware.c.  A function that handles slabs (through the core's
 * distributed paths, with a test under mpirun in tests/runner) gets the
 * flag there; nothing else changes. */
#include <math.h>
#include <string.h>
#include "pf_dist.h"
#include "pfl.h"
#include "pfl_options.h"
#include "pfl_params.h"

static const pfl_options_decl RANK_ADVICE_OPTIONS = {
    "pf.rank_advice", (const char *const[]){"points", "memory_per_rank", "waves", NULL}};

static void refuse(lua_State *L, int arg, const char *what)
{
    pfl_push_running_name(L);
    const char *name = lua_tostring(L, -1);
    if (name && pfl_aware(name, PFL_AWARE_DIST)) {
        lua_pop(L, 1);
        return;
    }
    const char *shown = name ? name : "this function";
    lua_pushfstring(L,
                    "%s does not handle a %s distributed over %d MPI ranks yet (docs/distributed.md lists what "
                    "does; or run without pf.setup{distribute = true})",
                    shown, what, pf_dist_ranks());
    luaL_argerror(L, arg, lua_tostring(L, -1));
}

void pfl_dist_guard(lua_State *L, int arg, const pf_wave *w)
{
    if (pf_wave_distributed(w)) refuse(L, arg, "wave function");
}

void pfl_dist_grid_guard(lua_State *L, int arg, const pf_grid *g)
{
    if (!pf_grid_distributed(g)) return;
    /* Grid methods only read the coordinate tables every rank holds whole. */
    pfl_push_running_name(L);
    const char *name = lua_tostring(L, -1);
    int module_function = name && strncmp(name, "pf.", 3) == 0;
    lua_pop(L, 1);
    if (module_function) refuse(L, arg, "grid");
}

/* pf.mpi_info() -> {rank =, ranks =, built =, distribute =}: where this
 * copy of the script runs.  Every rank runs the whole script; only rank 0
 * prints and writes files (docs/distributed.md). */
static int l_mpi_info(lua_State *L)
{
    lua_createtable(L, 0, 4);
    lua_pushinteger(L, pf_dist_rank());
    lua_setfield(L, -2, "rank");
    lua_pushinteger(L, pf_dist_ranks());
    lua_setfield(L, -2, "ranks");
    lua_pushboolean(L, pf_dist_built());
    lua_setfield(L, -2, "built");
    lua_pushboolean(L, pf_context_distribute(pfl_ctx(L)) && pf_dist_running());
    lua_setfield(L, -2, "distribute");
    return 1;
}

/* pf._dist_aware() -> the names of the functions that handle a distributed
 * wave (pfl_aware.c), sorted (for the tests). */
static int l_dist_aware(lua_State *L)
{
    pfl_push_aware_list(L, PFL_AWARE_DIST);
    return 1;
}

/* pf.rank_advice{points = {n0, n1 [, n2]}, memory_per_rank = bytes, waves = 2}
 *   -> {ranks, bytes_per_rank, planes_per_rank} or {ranks = false, ...}
 * The fewest MPI ranks whose share of `waves` wave functions (and FFTW-MPI's
 * planning scratch) fits memory_per_rank, for pf.setup{distribute = true};
 * at most one plane of axis 1 per rank.  Pure arithmetic: the slab sizes
 * FFTW-MPI gives (ceil(n / ranks) planes), 16 bytes a sample. */
static int l_rank_advice(lua_State *L)
{
    pfl_params_before_work(L);
    pfl_options_check(L, 1, &RANK_ADVICE_OPTIONS);
    size_t points[3] = {0, 0, 0};
    int t = pfl_option_get(L, 1, "points");
    if (t != LUA_TTABLE) return luaL_error(L, "pf.rank_advice: field 'points' must be a table of 2 or 3 point counts");
    int dim = (int)luaL_len(L, -1);
    if (dim < 2 || dim > 3) return luaL_error(L, "pf.rank_advice: field 'points' must hold 2 or 3 counts, got %d", dim);
    for (int a = 0; a < dim; a++) {
        lua_geti(L, -1, a + 1);
        int ok = 0;
        lua_Integer v = lua_tointegerx(L, -1, &ok);
        if (!ok || v < 4 || v > (lua_Integer)1 << 30)
            return luaL_error(L, "pf.rank_advice: points[%d] must be an integer from 4 to 2^30", a + 1);
        points[a] = (size_t)v;
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    double memory = pfl_field_number(L, 1, "memory_per_rank", 0, 1);
    if (!(memory > 0)) return luaL_error(L, "pf.rank_advice: field 'memory_per_rank' must be a positive byte count");
    double waves = pfl_field_number(L, 1, "waves", 2, 0);
    if (!(waves >= 1) || waves > 1e6) return luaL_error(L, "pf.rank_advice: field 'waves' must be from 1 to 1e6");
    double need = 0;
    size_t r = pf_dist_advise_ranks(dim, points, waves, memory, &need);
    lua_createtable(L, 0, 3);
    if (r == 0) {
        lua_pushboolean(L, 0);
        lua_setfield(L, -2, "ranks");
        return 1;
    }
    lua_pushinteger(L, (lua_Integer)r);
    lua_setfield(L, -2, "ranks");
    lua_pushnumber(L, need);
    lua_setfield(L, -2, "bytes_per_rank");
    lua_pushinteger(L, (lua_Integer)((points[0] + r - 1) / r));
    lua_setfield(L, -2, "planes_per_rank");
    return 1;
}

void pfl_open_dist(lua_State *L, int mod)
{
    static const luaL_Reg funcs[] = {
        {"mpi_info", l_mpi_info}, {"_dist_aware", l_dist_aware}, {"rank_advice", l_rank_advice}, {NULL, NULL}};
    static const pfl_options_decl *const options[] = {&RANK_ADVICE_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_add_functions(L, mod, funcs);
}
