/* pfl_random.c - the random generator of a Lua state (PCG64 from the run
 * seed) and pf.random{seed=, stream=} generator objects for scripts. */
#include <math.h>
#include <string.h>
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl RANDOM_OPTIONS = {"pf.random", (const char *const[]){"seed", "stream", NULL}};

typedef struct pfl_random_box {
    pf_rng rng;
    unsigned long long seed;
    int ready;
} pfl_random_box;

static const char RNG_KEY = 'R';

pf_rng *pfl_rng(lua_State *L)
{
    pfl_random_box *b;
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &RNG_KEY) == LUA_TUSERDATA) {
        b = lua_touserdata(L, -1);
    } else {
        lua_pop(L, 1);
        b = lua_newuserdatauv(L, sizeof *b, 0);
        memset(b, 0, sizeof *b);
        lua_pushvalue(L, -1);
        lua_rawsetp(L, LUA_REGISTRYINDEX, &RNG_KEY);
    }
    lua_pop(L, 1); /* the registry keeps it alive */
    unsigned long long seed = pfl_seed(L);
    if (!b->ready || b->seed != seed) {
        pf_rng_seed(&b->rng, seed, 0);
        b->seed = seed;
        b->ready = 1;
    }
    return &b->rng;
}

pf_rng *pfl_opt_rng(lua_State *L, int opts, pf_rng *local)
{
    if (!opts) return pfl_rng(L);
    if (pfl_option_get(L, opts, "generator") != LUA_TNIL) {
        pfl_random_box *b = luaL_testudata(L, -1, PFL_RANDOM_TYPE);
        if (!b) luaL_error(L, "%s: field 'generator' must be a pf.random object", pfl_caller_name(L));
        lua_pop(L, 1);
        return &b->rng;
    }
    lua_pop(L, 1);
    if (pfl_option_get(L, opts, "seed") != LUA_TNIL) {
        int ok;
        lua_Integer s = pfl_tointegerx(L, -1, &ok);
        if (!ok || s < 0) {
            char buf[64];
            luaL_error(L, "%s: field 'seed' must be a non-negative integer, got %s", pfl_caller_name(L),
                       pfl_describe(L, -1, buf, sizeof buf));
        }
        lua_pop(L, 1);
        pf_rng_seed(local, (uint64_t)s, 0);
        return local;
    }
    lua_pop(L, 1);
    return pfl_rng(L);
}

/* pf.random{seed = integer (default: the run seed), stream = integer (default 0)} */
static int l_random(lua_State *L)
{
    lua_Integer seed = (lua_Integer)pfl_seed(L), stream = 0;
    if (!lua_isnoneornil(L, 1)) {
        pfl_options_check(L, 1, &RANDOM_OPTIONS);
        int ok = 1;
        if (pfl_option_get(L, 1, "seed") != LUA_TNIL) seed = pfl_tointegerx(L, -1, &ok);
        if (!ok || seed < 0) return luaL_error(L, "random: field 'seed' must be a non-negative integer");
        lua_pop(L, 1);
        if (pfl_option_get(L, 1, "stream") != LUA_TNIL) stream = pfl_tointegerx(L, -1, &ok);
        if (!ok || stream < 0) return luaL_error(L, "random: field 'stream' must be a non-negative integer");
        lua_pop(L, 1);
    }
    pfl_random_box *b = lua_newuserdatauv(L, sizeof *b, 0);
    memset(b, 0, sizeof *b);
    pf_rng_seed(&b->rng, (uint64_t)seed, (uint64_t)stream);
    b->seed = (unsigned long long)seed;
    b->ready = 1;
    luaL_setmetatable(L, PFL_RANDOM_TYPE);
    return 1;
}

static pf_rng *check_gen(lua_State *L) { return &((pfl_random_box *)luaL_checkudata(L, 1, PFL_RANDOM_TYPE))->rng; }

static int l_uniform(lua_State *L) { lua_pushnumber(L, pf_rng_uniform(check_gen(L))); return 1; }
static int l_normal(lua_State *L) { lua_pushnumber(L, pf_rng_normal(check_gen(L))); return 1; }
static int l_raw(lua_State *L) { lua_pushinteger(L, (lua_Integer)pf_rng_next(check_gen(L))); return 1; }

static int l_poisson(lua_State *L)
{
    pf_rng *r = check_gen(L);
    double m = pfl_check_finite(L, 2, "Poisson mean");
    if (m < 0 || m > 1e15) return luaL_argerror(L, 2, "Poisson mean must be in [0, 1e15]");
    lua_pushnumber(L, pf_rng_poisson(r, m));
    return 1;
}

static int l_tostring(lua_State *L)
{
    pfl_random_box *b = luaL_checkudata(L, 1, PFL_RANDOM_TYPE);
    lua_pushfstring(L, "random generator (PCG64, seed %I)", (lua_Integer)b->seed);
    return 1;
}

void pfl_open_random(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"uniform", l_uniform}, {"normal", l_normal}, {"poisson", l_poisson}, {"raw", l_raw}, {NULL, NULL},
    };
    static const luaL_Reg meta[] = {{"__tostring", l_tostring}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {{"random", l_random}, {NULL, NULL}};
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_RANDOM_TYPE, .meta = meta, .methods = methods, .funcs = funcs});
    static const pfl_options_decl *const options[] = {&RANDOM_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
