/* pfl_context.c - the engine context of a Lua state, error raising, warnings,
 * strict mode, and the pf.setup / pf.run_info functions. */
#include <errno.h>
#include <limits.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <fftw3.h>
#include "pf_dist.h"
#include "pf_guard.h"
#include "pf_version.h"
#include "pf_progress.h"
#include "pfl_options.h"

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
    /* The engine's progress reports (progress_hook): the task under way,
     * when it started, and its bar once it has run long enough to show. */
    double progress_delay; /* seconds before a bar shows (PSIFLIGHT_PROGRESS_DELAY) */
    char task[24];
    double task_start;
    int task_active;
    pf_progress bar;
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
    /* Under mpirun every rank runs the same script and meets the same
     * warnings (figures are combined across ranks): rank 0 says them once. */
    if (pf_dist_rank() != 0) return;
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

static double monotonic_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* A long engine call shows a bar on stderr once it has run for half a
 * second, when stderr is a terminal and the run is not quiet (the same rule
 * as pf.progress): short calls stay silent, and nothing goes to stdout or
 * into a file, so output bytes never depend on it. */
#define PROGRESS_DELAY_S 0.5

static void progress_hook(void *user, const char *task, double done, double total)
{
    pfl_state *st = user;
    if (done == 0 || !st->task_active || strcmp(task, st->task) != 0) {
        /* A new task (an earlier one that never reported its end is closed). */
        pf_progress_end(&st->bar);
        memset(&st->bar, 0, sizeof st->bar);
        snprintf(st->task, sizeof st->task, "%s", task);
        st->task_start = monotonic_s();
        st->task_active = 1;
    }
    int ending = done < 0 || done >= total;
    if (!st->bar.enabled && !ending && monotonic_s() - st->task_start >= st->progress_delay && st->L &&
        pfl_progress_wanted(st->L)) {
        pf_progress_begin(&st->bar, stderr, 1, total, task);
        st->bar.start = st->task_start; /* elapsed counts from the call's start */
    }
    if (st->bar.enabled) {
        st->bar.done = done < 0 ? st->bar.done : done;
        pf_progress_advance(&st->bar, 0);
    }
    if (ending) {
        if (done < 0 && st->bar.enabled) {
            /* An early end (an error, a stop): keep the bar as it stood. */
            fputc('\n', stderr);
            st->bar.enabled = 0;
        }
        pf_progress_end(&st->bar);
        memset(&st->bar, 0, sizeof st->bar);
        st->task_active = 0;
    }
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
    pfl_state *st = pfl_new_gc_box(L, sizeof *st, state_gc);
    st->seed = 1;
    st->ctx = pf_context_new();
    if (!st->ctx) luaL_error(L, "psiflight: out of memory creating the engine context");
    st->L = L;
    pf_context_set_warn_handler(st->ctx, warn_handler, st);
    /* PSIFLIGHT_PROGRESS_DELAY (seconds) replaces the half second: tests
     * set 0 so that a bar does not depend on how fast the machine is. */
    const char *env = getenv("PSIFLIGHT_PROGRESS_DELAY");
    char *end = NULL;
    double delay = env ? strtod(env, &end) : PROGRESS_DELAY_S;
    st->progress_delay = env && end != env && delay >= 0 ? delay : PROGRESS_DELAY_S;
    pf_context_set_progress(st->ctx, progress_hook, st);
    lua_rawsetp(L, LUA_REGISTRYINDEX, &STATE_KEY);
    fault_injection(L, st->ctx);
    return st;
}

pf_context *pfl_ctx(lua_State *L) { return get_state(L)->ctx; }

/* ---- engine blocks owned by userdata ---- */
#define ENGINE_BLOCK_TYPE "psiflight.engine_block"

typedef struct engine_block {
    pf_context *ctx; /* a reference of its own: the block may outlive the state's */
    double *p;
} engine_block;

static void engine_block_release(engine_block *b)
{
    if (b->p) pf_context_free(b->ctx, b->p);
    if (b->ctx) pf_context_release(b->ctx);
    b->p = NULL;
    b->ctx = NULL;
}

static int engine_block_gc(lua_State *L)
{
    engine_block_release(luaL_checkudata(L, 1, ENGINE_BLOCK_TYPE));
    return 0;
}

double *pfl_push_engine_doubles(lua_State *L, size_t n, const char *name)
{
    pf_context *ctx = pfl_ctx(L);
    engine_block *b = lua_newuserdatauv(L, sizeof *b, 0);
    b->ctx = NULL;
    b->p = NULL;
    if (luaL_newmetatable(L, ENGINE_BLOCK_TYPE)) {
        lua_pushcfunction(L, engine_block_gc);
        lua_setfield(L, -2, "__gc");
    }
    lua_setmetatable(L, -2);
    /* From here on nothing raises until the block is stored. */
    pf_context_retain(ctx);
    b->ctx = ctx;
    if (n > ((size_t)1 << 40) / sizeof(double)) pfl_check(L, pf_fail(ctx, PF_ELIMIT, "%zu values is too many", n), name);
    b->p = pf_context_alloc(ctx, (n ? n : 1) * sizeof(double));
    if (!b->p) pfl_check(L, pf_context_status(ctx), name);
    return b->p;
}

void pfl_engine_doubles_free(lua_State *L, int idx)
{
    engine_block_release(luaL_checkudata(L, idx, ENGINE_BLOCK_TYPE));
}

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

int pfl_return_self(lua_State *L, pf_status s, const char *name)
{
    pfl_check(L, s, name);
    lua_settop(L, 1);
    return 1;
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

int pfl_rethrow_here(lua_State *L)
{
    pfl_state *st = get_state(L);
    pfl_error_kind kind = pfl_error_kind_of(L, -1);
    const char *msg = lua_tostring(L, -1);
    if (!msg) return lua_error(L);
    luaL_where(L, 1);
    const char *where = lua_tostring(L, -1);
    int located = *where && strncmp(msg, where, strlen(where)) == 0;
    lua_pop(L, 1);
    if (located) return lua_error(L);
    char text[1400];
    snprintf(text, sizeof text, "%s", msg);
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

static const pfl_options_decl SETUP_OPTIONS = {
    "pf.setup", (const char *const[]){"threads", "planning", "wisdom", "memory_cap", "strict", "seed", "output_dir",
                                      "guard_threshold", "acceleration", "distribute", NULL}};

/* Every pf.setup field as read once from the table: checked and applied from
 * these same values, so nothing can answer differently the second time. */
typedef struct setup_values {
    int has_threads, has_planning, has_wisdom, has_cap, has_strict, has_seed, has_dir, has_guard;
    lua_Integer threads, seed;
    pf_planning planning;
    const char *wisdom;    /* NULL with has_wisdom: wisdom off */
    double cap, guard;
    int strict;
    const char *dir;
    int has_accel, naccel; /* default flight acceleration (pfl_frame.c) */
    int has_distribute, distribute; /* split 2D/3D grids over MPI ranks (pf_dist.h) */
    double accel[PF_MAX_DIM];
} setup_values;

/* Raises at the script line (past a C wrapper such as the sandbox guard). */
static int setup_type_error(lua_State *L, const char *field, const char *want)
{
    char buf[64];
    pfl_describe(L, -1, buf, sizeof buf);
    pfl_options_where(L, 1);
    lua_pushfstring(L, "pf.setup: field '%s' must be %s, got %s", field, want, buf);
    lua_concat(L, 2);
    return lua_error(L);
}

/* Reads and checks every field (raw reads of a checked plain table); strings
 * stay alive in the table, which is argument 1 for the whole call. */
static void read_setup(lua_State *L, setup_values *v)
{
    memset(v, 0, sizeof *v);
    int ok;
    if ((v->has_threads = pfl_option_get(L, 1, "threads") != LUA_TNIL)) {
        v->threads = lua_tointegerx(L, -1, &ok);
        if (lua_type(L, -1) != LUA_TNUMBER || !ok) setup_type_error(L, "threads", "an integer");
        if (v->threads < 1 || v->threads > 1024) setup_type_error(L, "threads", "1..1024");
    }
    lua_pop(L, 1);
    if ((v->has_planning = pfl_option_get(L, 1, "planning") != LUA_TNIL)) {
        const char *m = lua_type(L, -1) == LUA_TSTRING ? lua_tostring(L, -1) : "";
        if (strcmp(m, "measure") == 0) v->planning = PF_PLAN_MEASURE;
        else if (strcmp(m, "estimate") == 0) v->planning = PF_PLAN_ESTIMATE;
        else setup_type_error(L, "planning", "\"measure\" or \"estimate\"");
    }
    lua_pop(L, 1);
    int t = pfl_option_get(L, 1, "wisdom");
    if ((v->has_wisdom = t != LUA_TNIL)) {
        if (t == LUA_TSTRING && *lua_tostring(L, -1)) v->wisdom = lua_tostring(L, -1);
        else if (!(t == LUA_TBOOLEAN && !lua_toboolean(L, -1))) setup_type_error(L, "wisdom", "a path or false");
    }
    lua_pop(L, 1);
    if ((v->has_cap = pfl_option_get(L, 1, "memory_cap") != LUA_TNIL)) {
        /* A number only: a string such as "1e18" would convert, but it is not
         * what a byte count is, and a guard that checks numbers would miss it. */
        v->cap = lua_tonumber(L, -1);
        if (lua_type(L, -1) != LUA_TNUMBER || !(v->cap >= 1) || v->cap > 1e18)
            setup_type_error(L, "memory_cap", "a positive byte count (a number up to 1e18)");
    }
    lua_pop(L, 1);
    if ((v->has_strict = pfl_option_get(L, 1, "strict") != LUA_TNIL)) {
        if (lua_type(L, -1) != LUA_TBOOLEAN) setup_type_error(L, "strict", "true or false");
        v->strict = lua_toboolean(L, -1);
    }
    lua_pop(L, 1);
    if ((v->has_seed = pfl_option_get(L, 1, "seed") != LUA_TNIL)) {
        v->seed = lua_tointegerx(L, -1, &ok);
        if (lua_type(L, -1) != LUA_TNUMBER || !ok || v->seed < 0) setup_type_error(L, "seed", "a non-negative integer");
    }
    lua_pop(L, 1);
    if ((v->has_dir = pfl_option_get(L, 1, "output_dir") != LUA_TNIL)) {
        if (lua_type(L, -1) != LUA_TSTRING || !*lua_tostring(L, -1)) setup_type_error(L, "output_dir", "a non-empty path");
        v->dir = lua_tostring(L, -1);
    }
    lua_pop(L, 1);
    if ((v->has_guard = pfl_option_get(L, 1, "guard_threshold") != LUA_TNIL)) {
        v->guard = lua_tonumber(L, -1);
        if (lua_type(L, -1) != LUA_TNUMBER || !(v->guard > 0))
            setup_type_error(L, "guard_threshold", "a positive probability (math.huge switches guard warnings off)");
    }
    lua_pop(L, 1);
    if ((v->has_distribute = pfl_option_get(L, 1, "distribute") != LUA_TNIL)) {
        if (lua_type(L, -1) != LUA_TBOOLEAN) setup_type_error(L, "distribute", "true or false");
        v->distribute = lua_toboolean(L, -1);
    }
    lua_pop(L, 1);
    v->has_accel = pfl_frame_setup_read(L, 1, v->accel, &v->naccel);
}

void pfl_setup_check(lua_State *L, int idx) { pfl_options_check(L, idx, &SETUP_OPTIONS); }

/* pf.setup{threads=, planning="measure"|"estimate", wisdom=path|false,
 *          memory_cap=bytes, strict=bool, seed=integer, output_dir=path,
 *          guard_threshold=p}: every field is read once into C values,
 * all are checked, then those values are applied. */
static int l_setup(lua_State *L)
{
    pfl_options_check(L, 1, &SETUP_OPTIONS);
    lua_settop(L, 1);
    pfl_state *st = get_state(L);
    pf_context *ctx = st->ctx;
    setup_values v;
    read_setup(L, &v);
    char *dir = NULL;
    if (v.has_dir && !(dir = strdup(v.dir))) return luaL_error(L, "setup: out of memory");
    if (v.has_threads) {
        pf_status s = pf_context_set_threads(ctx, (int)v.threads);
        if (s) free(dir);
        pfl_check(L, s, "setup");
    }
    pf_status s = PF_OK;
    if (v.has_planning && !s) s = pf_context_set_planning(ctx, v.planning);
    if (v.has_wisdom && !s) s = pf_context_set_wisdom_path(ctx, v.wisdom);
    if (v.has_cap && !s) s = pf_context_set_memory_cap(ctx, (size_t)v.cap);
    if (v.has_guard && !s) s = pf_context_set_guard_threshold(ctx, v.guard);
    if (s) free(dir);
    pfl_check(L, s, "setup");
    if (v.has_strict) st->strict = v.strict;
    if (v.has_seed) st->seed = (unsigned long long)v.seed;
    if (v.has_accel) pfl_frame_setup_apply(L, v.accel, v.naccel);
    if (v.has_distribute) pf_context_set_distribute(ctx, v.distribute);
    if (dir) {
        free(st->output_dir);
        st->output_dir = dir;
    }
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
    static const pfl_options_decl *const options[] = {&SETUP_OPTIONS, NULL};
    pfl_options_declare(L, options);
    lua_pushstring(L, PF_VERSION);
    lua_setfield(L, mod, "version");
}
