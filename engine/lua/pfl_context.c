/* pfl_context.c - the engine context of a Lua state, error raising, warnings,
 * strict mode, and the pf.setup / pf.run_info functions. */
#include <errno.h>
#include <limits.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <fftw3.h>
#include "pfl.h"
#include "../core/pf_version.h"

/* Library state lives in the Lua state (a userdata in the registry), never in
 * C globals, so two states in one process do not share settings. */
typedef struct pfl_state {
    pf_context *ctx;
    lua_State *L;         /* the thread currently calling into the engine */
    int strict;
    int pending;          /* a strict-mode warning waits to be raised */
    char pending_text[1024];
    pfl_error_kind last_kind;
    unsigned long long seed; /* base seed of the run's random generators */
    char *output_dir;        /* folder the run writes into, NULL: none chosen */
    char last_text[1600];  /* message of the last error raised with a kind */
    unsigned long warnings;  /* warnings emitted so far (run manifest) */
} pfl_state;

static const char STATE_KEY = 'S';

static int state_gc(lua_State *L)
{
    pfl_state *st = lua_touserdata(L, 1);
    if (st->ctx) {
        pf_context_release(st->ctx);
        st->ctx = NULL;
    }
    free(st->output_dir);
    st->output_dir = NULL;
    return 0;
}

static void warn_handler(void *user, const char *text)
{
    pfl_state *st = user;
    st->warnings++;
    if (st->strict) {
        /* The core cannot raise; remember the text and raise after the call. */
        if (!st->pending) {
            st->pending = 1;
            snprintf(st->pending_text, sizeof st->pending_text, "%s", text);
        }
        return;
    }
    lua_State *L = st->L;
    const char *where = "";
    if (L) {
        luaL_where(L, 1);
        where = lua_tostring(L, -1);
    }
    fprintf(stderr, "psiflight: warning: %s%s\n", where ? where : "", text);
    if (L) lua_pop(L, 1);
}

/* PSIFLIGHT_FAIL_ALLOC=N (developers, DEVELOPERS.md): the N-th engine
 * allocation of the run fails as if out of memory, so tests can walk every
 * failure path of a script.  Anything but a positive integer is refused. */
static void fault_injection(lua_State *L, pf_context *ctx)
{
    const char *v = getenv("PSIFLIGHT_FAIL_ALLOC");
    if (!v || !*v) return;
    char *end;
    errno = 0;
    unsigned long long n = strtoull(v, &end, 10);
    if (*end || errno || n == 0 || n > ULONG_MAX || v[0] == '-' || v[0] == '+')
        luaL_error(L, "PSIFLIGHT_FAIL_ALLOC must be a positive integer (allocation number), got '%s'", v);
    pf_context_fail_allocation(ctx, (unsigned long)n);
}

static pfl_state *get_state(lua_State *L)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &STATE_KEY) == LUA_TUSERDATA) {
        pfl_state *st = lua_touserdata(L, -1);
        lua_pop(L, 1);
        st->L = L;
        return st;
    }
    lua_pop(L, 1);
    pfl_state *st = lua_newuserdatauv(L, sizeof *st, 0);
    memset(st, 0, sizeof *st);
    lua_createtable(L, 0, 1);
    lua_pushcfunction(L, state_gc);
    lua_setfield(L, -2, "__gc");
    lua_setmetatable(L, -2);
    st->seed = 1;
    st->ctx = pf_context_new();
    if (!st->ctx) luaL_error(L, "psiflight: out of memory creating the engine context");
    st->L = L;
    pf_context_set_warn_handler(st->ctx, warn_handler, st);
    lua_rawsetp(L, LUA_REGISTRYINDEX, &STATE_KEY);
    fault_injection(L, st->ctx);
    return st;
}

pf_context *pfl_ctx(lua_State *L) { return get_state(L)->ctx; }

static int raise_kind(lua_State *L, pfl_state *st, pfl_error_kind kind, const char *text)
{
    st->last_kind = kind;
    luaL_where(L, 1);
    lua_pushstring(L, text);
    lua_concat(L, 2);
    snprintf(st->last_text, sizeof st->last_text, "%s", lua_tostring(L, -1));
    return lua_error(L);
}

void pfl_check(lua_State *L, pf_status s, const char *name)
{
    pfl_state *st = get_state(L);
    if (s != PF_OK) {
        char text[1400];
        snprintf(text, sizeof text, "%s: %s", name, pf_context_message(st->ctx));
        st->pending = 0;
        /* Out of memory is a resource failure like the cap: same error kind
         * (exit 5); the message says which of the two it was. */
        raise_kind(L, st, s == PF_ELIMIT || s == PF_ENOMEM ? PFL_ERROR_LIMIT : PFL_ERROR_SCRIPT, text);
    }
    if (st->pending) {
        char text[1400];
        /* Warnings often name their function already; say it once. */
        size_t len = strlen(name);
        const char *rest = st->pending_text;
        if (strncmp(rest, name, len) == 0 && rest[len] == ':' && rest[len + 1] == ' ') rest += len + 2;
        snprintf(text, sizeof text, "%s: strict mode: %s", name, rest);
        st->pending = 0;
        raise_kind(L, st, PFL_ERROR_GUARD, text);
    }
}

int pfl_error(lua_State *L, pfl_error_kind kind, const char *fmt, ...)
{
    pfl_state *st = get_state(L);
    char text[1400];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(text, sizeof text, fmt, ap);
    va_end(ap);
    return raise_kind(L, st, kind, text);
}

pfl_error_kind pfl_error_kind_of(lua_State *L, int idx)
{
    pfl_state *st = get_state(L);
    const char *msg = lua_tostring(L, idx);
    /* A script may catch one of our errors and later fail otherwise; only an
     * error whose text is the one we raised carries our kind. */
    if (msg && strcmp(msg, st->last_text) == 0) return st->last_kind;
    return PFL_ERROR_SCRIPT;
}
void pfl_set_strict(lua_State *L, int strict) { get_state(L)->strict = strict; }
unsigned long long pfl_seed(lua_State *L) { return get_state(L)->seed; }
const char *pfl_output_dir(lua_State *L) { return get_state(L)->output_dir; }
int pfl_strict(lua_State *L) { return get_state(L)->strict; }
unsigned long pfl_warning_count(lua_State *L) { return get_state(L)->warnings; }

/* pf.setup{threads=, planning="measure"|"estimate", wisdom=path|false,
 *          memory_cap=bytes, strict=bool, seed=integer, output_dir=path} */
static int l_setup(lua_State *L)
{
    luaL_checktype(L, 1, LUA_TTABLE);
    pfl_state *st = get_state(L);
    pf_context *ctx = st->ctx;
    if (lua_getfield(L, 1, "threads") != LUA_TNIL) {
        lua_Integer n;
        int ok;
        n = lua_tointegerx(L, -1, &ok);
        if (!ok) {
            char buf[64];
            return luaL_error(L, "setup: field 'threads' must be an integer, got %s", pfl_describe(L, -1, buf, sizeof buf));
        }
        if (n < 1 || n > 1024) return luaL_error(L, "setup: field 'threads' must be 1..1024, got %d", (int)n);
        pfl_check(L, pf_context_set_threads(ctx, (int)n), "setup");
    }
    lua_pop(L, 1);
    if (lua_getfield(L, 1, "planning") != LUA_TNIL) {
        const char *m = lua_tostring(L, -1);
        if (m && strcmp(m, "measure") == 0)
            pfl_check(L, pf_context_set_planning(ctx, PF_PLAN_MEASURE), "setup");
        else if (m && strcmp(m, "estimate") == 0)
            pfl_check(L, pf_context_set_planning(ctx, PF_PLAN_ESTIMATE), "setup");
        else {
            char buf[64];
            return luaL_error(L, "setup: field 'planning' must be \"measure\" or \"estimate\", got %s",
                              pfl_describe(L, -1, buf, sizeof buf));
        }
    }
    lua_pop(L, 1);
    int t = lua_getfield(L, 1, "wisdom");
    if (t == LUA_TBOOLEAN && !lua_toboolean(L, -1))
        pfl_check(L, pf_context_set_wisdom_path(ctx, NULL), "setup");
    else if (t == LUA_TSTRING)
        pfl_check(L, pf_context_set_wisdom_path(ctx, lua_tostring(L, -1)), "setup");
    else if (t != LUA_TNIL)
        return luaL_error(L, "setup: field 'wisdom' must be a path or false");
    lua_pop(L, 1);
    if (lua_getfield(L, 1, "memory_cap") != LUA_TNIL) {
        double b = lua_tonumber(L, -1);
        if (!(b >= 1) || b > 1e18) {
            char buf[64];
            return luaL_error(L, "setup: field 'memory_cap' must be a positive byte count, got %s",
                              pfl_describe(L, -1, buf, sizeof buf));
        }
        pfl_check(L, pf_context_set_memory_cap(ctx, (size_t)b), "setup");
    }
    lua_pop(L, 1);
    if (lua_getfield(L, 1, "strict") != LUA_TNIL) st->strict = lua_toboolean(L, -1);
    lua_pop(L, 1);
    if (lua_getfield(L, 1, "seed") != LUA_TNIL) {
        int ok;
        lua_Integer seed = lua_tointegerx(L, -1, &ok);
        if (!ok || seed < 0) {
            char buf[64];
            return luaL_error(L, "setup: field 'seed' must be a non-negative integer, got %s",
                              pfl_describe(L, -1, buf, sizeof buf));
        }
        st->seed = (unsigned long long)seed;
    }
    lua_pop(L, 1);
    if (lua_getfield(L, 1, "output_dir") != LUA_TNIL) {
        const char *dir = lua_tostring(L, -1);
        if (lua_type(L, -1) != LUA_TSTRING || !*dir)
            return luaL_error(L, "setup: field 'output_dir' must be a non-empty path");
        char *copy = strdup(dir);
        if (!copy) return luaL_error(L, "setup: out of memory");
        free(st->output_dir);
        st->output_dir = copy;
    }
    lua_pop(L, 1);
    return 0;
}

/* pf.run_info() -> table describing the engine configuration of this run. */
static int l_run_info(lua_State *L)
{
    pfl_state *st = get_state(L);
    pf_context *ctx = st->ctx;
    char digest[17];
    pf_context_wisdom_digest(ctx, digest);
    lua_createtable(L, 0, 10);
    lua_pushstring(L, PF_VERSION);
    lua_setfield(L, -2, "engine_version");
    lua_pushstring(L, LUA_RELEASE);
    lua_setfield(L, -2, "lua_version");
    lua_pushstring(L, fftw_version);
    lua_setfield(L, -2, "fftw_version");
    lua_pushinteger(L, pf_context_threads(ctx));
    lua_setfield(L, -2, "threads");
    lua_pushstring(L, pf_context_planning_name(ctx));
    lua_setfield(L, -2, "planning");
    lua_pushstring(L, digest);
    lua_setfield(L, -2, "wisdom_digest");
    const char *wp = pf_context_wisdom_path(ctx);
    if (wp) lua_pushstring(L, wp); else lua_pushboolean(L, 0);
    lua_setfield(L, -2, "wisdom_path");
    lua_pushnumber(L, (lua_Number)pf_context_memory_cap(ctx));
    lua_setfield(L, -2, "memory_cap");
    lua_pushnumber(L, (lua_Number)pf_context_memory_used(ctx));
    lua_setfield(L, -2, "memory_used");
    /* For developers sizing a PSIFLIGHT_FAIL_ALLOC walk. */
    lua_pushinteger(L, (lua_Integer)pf_context_allocations(ctx));
    lua_setfield(L, -2, "engine_allocations");
    lua_pushboolean(L, st->strict);
    lua_setfield(L, -2, "strict");
    lua_pushinteger(L, (lua_Integer)st->seed);
    lua_setfield(L, -2, "seed");
    if (st->output_dir) lua_pushstring(L, st->output_dir); else lua_pushboolean(L, 0);
    lua_setfield(L, -2, "output_dir");
    return 1;
}

/* Default wisdom location: $PSIFLIGHT_WISDOM ("off" disables), else
 * $XDG_CACHE_HOME/psiflight/fftw-wisdom, else ~/.cache/psiflight/fftw-wisdom. */
static void default_wisdom(pf_context *ctx)
{
    const char *env = getenv("PSIFLIGHT_WISDOM");
    char path[4096];
    if (env) {
        if (*env && strcmp(env, "off") != 0) pf_context_set_wisdom_path(ctx, env);
        return;
    }
    const char *xdg = getenv("XDG_CACHE_HOME");
    const char *home = getenv("HOME");
    if (xdg && *xdg)
        snprintf(path, sizeof path, "%s/psiflight/fftw-wisdom", xdg);
    else if (home && *home)
        snprintf(path, sizeof path, "%s/.cache/psiflight/fftw-wisdom", home);
    else
        return;
    pf_context_set_wisdom_path(ctx, path);
}

void pfl_open_context(lua_State *L, int mod)
{
    pfl_state *st = get_state(L);
    if (!pf_context_wisdom_path(st->ctx)) default_wisdom(st->ctx);
    static const luaL_Reg funcs[] = {
        {"setup", l_setup},
        {"run_info", l_run_info},
        {NULL, NULL},
    };
    pfl_add_functions(L, mod, funcs);
    lua_pushstring(L, PF_VERSION);
    lua_setfield(L, mod, "version");
}
