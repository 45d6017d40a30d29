/* pfr_run.c - `psiflight run SCRIPT.lua [options]`: builds a Lua state with the
 * engine preloaded, passes --set parameters, runs the script under protection
 * and turns failures into a message on stderr and a documented exit status. */
#include <locale.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <lauxlib.h>
#include <lua.h>
#include <lualib.h>
#include "../core/pf_version.h"
#include "../lua/pfl.h"
#include "pfr_run.h"
#include "pfr_exit.h"
#include "pfr_record.h"

typedef struct pfr_options {
    const char *script;
    int nsets;
    char **sets;          /* "NAME=VALUE" strings, in command-line order */
    int threads;          /* 0: leave the engine default (1) */
    int strict;
    const char *planning; /* NULL: default */
    const char *wisdom;   /* NULL: default, "off" disables */
    const char *out;      /* output folder, NULL: none */
    long long seed;       /* -1: default */
    int quiet;            /* --quiet: no progress bars */
    int overwrite;        /* --overwrite: writers may replace existing files */
} pfr_options;

static void usage(FILE *f)
{
    fputs("usage: psiflight run SCRIPT.lua [--set NAME=VALUE]... [--threads N] [--strict]\n"
          "                     [--planning measure|estimate] [--wisdom PATH|off]\n"
          "                     [--seed N] [--out DIR] [--quiet] [--overwrite]\n"
          "       psiflight --version\n"
          "Runs a psiflight Lua script headlessly; see docs/runner.md.\n",
          f);
}

static int usage_error(const char *fmt, const char *arg)
{
    fprintf(stderr, "psiflight: ");
    fprintf(stderr, fmt, arg);
    fputc('\n', stderr);
    usage(stderr);
    return PFR_EXIT_USAGE;
}

static int parse_options(int argc, char **argv, pfr_options *o)
{
    memset(o, 0, sizeof *o);
    o->seed = -1;
    o->sets = calloc((size_t)argc, sizeof *o->sets);
    if (!o->sets) return usage_error("%s", "out of memory");
    for (int i = 2; i < argc; i++) {
        const char *a = argv[i];
        if (strcmp(a, "--set") == 0) {
            if (++i >= argc) return usage_error("%s needs NAME=VALUE", a);
            if (!strchr(argv[i], '=') || argv[i][0] == '=')
                return usage_error("--set needs NAME=VALUE, got '%s'", argv[i]);
            o->sets[o->nsets++] = argv[i];
        } else if (strcmp(a, "--threads") == 0) {
            if (++i >= argc) return usage_error("%s needs a count", a);
            char *end;
            long n = strtol(argv[i], &end, 10);
            if (*end || n < 1 || n > 1024) return usage_error("--threads needs a count of 1..1024, got '%s'", argv[i]);
            o->threads = (int)n;
        } else if (strcmp(a, "--strict") == 0) {
            o->strict = 1;
        } else if (strcmp(a, "--planning") == 0) {
            if (++i >= argc) return usage_error("%s needs measure or estimate", a);
            if (strcmp(argv[i], "measure") && strcmp(argv[i], "estimate"))
                return usage_error("--planning must be measure or estimate, got '%s'", argv[i]);
            o->planning = argv[i];
        } else if (strcmp(a, "--wisdom") == 0) {
            if (++i >= argc) return usage_error("%s needs a path or off", a);
            o->wisdom = argv[i];
        } else if (strcmp(a, "--seed") == 0) {
            if (++i >= argc) return usage_error("%s needs a non-negative integer", a);
            char *end;
            long long n = strtoll(argv[i], &end, 10);
            if (*end || end == argv[i] || n < 0) return usage_error("--seed needs a non-negative integer, got '%s'", argv[i]);
            o->seed = n;
        } else if (strcmp(a, "--out") == 0) {
            if (++i >= argc || !argv[i][0]) return usage_error("%s needs a folder", a);
            o->out = argv[i];
        } else if (strcmp(a, "--quiet") == 0) {
            o->quiet = 1;
        } else if (strcmp(a, "--overwrite") == 0) {
            o->overwrite = 1;
        } else if (a[0] == '-' && a[1] == '-') {
            return usage_error("unknown option '%s'", a);
        } else if (!o->script) {
            o->script = a;
        } else {
            return usage_error("unexpected argument '%s' (one script per run)", a);
        }
    }
    if (!o->script) return usage_error("%s", "run needs a script file");
    return PFR_EXIT_OK;
}

/* Message handler: keeps the error text and appends a traceback. */
static int message_handler(lua_State *L)
{
    const char *msg = lua_tostring(L, 1);
    if (!msg) {
        if (luaL_callmeta(L, 1, "__tostring") && lua_type(L, -1) == LUA_TSTRING) msg = lua_tostring(L, -1);
        else msg = lua_pushfstring(L, "(error object is a %s value)", luaL_typename(L, 1));
    }
    luaL_traceback(L, L, msg, 1);
    return 1;
}

/* Converts "1e-6" to a number and leaves anything else a string. */
static void push_param_value(lua_State *L, const char *text)
{
    if (lua_stringtonumber(L, text) == 0) lua_pushstring(L, text);
}

/* Applies the engine options and publishes the parameters as psiflight.params. */
static int prepare(lua_State *L)
{
    const pfr_options *o = lua_touserdata(L, 1);
    luaL_openlibs(L);
    luaL_requiref(L, "psiflight", luaopen_psiflight, 0);
    int mod = lua_gettop(L);
    lua_newtable(L);
    for (int i = 0; i < o->nsets; i++) {
        const char *eq = strchr(o->sets[i], '=');
        lua_pushlstring(L, o->sets[i], (size_t)(eq - o->sets[i]));
        push_param_value(L, eq + 1);
        lua_settable(L, -3);
    }
    lua_setfield(L, mod, "params");
    lua_getfield(L, mod, "setup");
    lua_createtable(L, 0, 4);
    if (o->threads) {
        lua_pushinteger(L, o->threads);
        lua_setfield(L, -2, "threads");
    }
    if (o->planning) {
        lua_pushstring(L, o->planning);
        lua_setfield(L, -2, "planning");
    }
    if (o->wisdom) {
        if (strcmp(o->wisdom, "off") == 0) lua_pushboolean(L, 0); else lua_pushstring(L, o->wisdom);
        lua_setfield(L, -2, "wisdom");
    }
    lua_pushboolean(L, o->strict);
    lua_setfield(L, -2, "strict");
    if (o->seed >= 0) {
        lua_pushinteger(L, (lua_Integer)o->seed);
        lua_setfield(L, -2, "seed");
    }
    if (o->out) {
        lua_pushstring(L, o->out);
        lua_setfield(L, -2, "output_dir");
    }
    lua_call(L, 1, 0);
    /* Modules beside the script come first on the search path. */
    lua_getglobal(L, "package");
    const char *slash = strrchr(o->script, '/');
    if (slash) {
        lua_pushlstring(L, o->script, (size_t)(slash - o->script));
        lua_pushliteral(L, "/?.lua;");
        lua_concat(L, 2);
    } else {
        lua_pushliteral(L, "./?.lua;");
    }
    lua_getfield(L, -2, "path");
    lua_concat(L, 2);
    lua_setfield(L, -2, "path");
    lua_pop(L, 1);
    return 0;
}

static int exit_for_kind(pfl_error_kind k)
{
    switch (k) {
    case PFL_ERROR_GUARD: return PFR_EXIT_GUARD;
    case PFL_ERROR_LIMIT: return PFR_EXIT_LIMIT;
    case PFL_ERROR_SANDBOX: return PFR_EXIT_SANDBOX;
    default: return PFR_EXIT_SCRIPT;
    }
}

static int run_script(const pfr_options *o)
{
    lua_State *L = luaL_newstate();
    if (!L) {
        fprintf(stderr, "psiflight: cannot create a Lua state (out of memory)\n");
        return PFR_EXIT_LIMIT;
    }
    int status = PFR_EXIT_OK;
    lua_pushcfunction(L, message_handler);
    int handler = lua_gettop(L);
    lua_pushcfunction(L, prepare);
    lua_pushlightuserdata(L, (void *)o);
    if (lua_pcall(L, 1, 0, handler) != LUA_OK) {
        fprintf(stderr, "psiflight: %s\n", lua_tostring(L, -1));
        lua_close(L);
        return PFR_EXIT_USAGE;
    }
    pfr_record_begin(L, o->script, o->quiet, o->overwrite);
    if (luaL_loadfile(L, o->script) != LUA_OK) {
        /* Syntax errors already carry file:line; a missing file is a usage error. */
        const char *msg = lua_tostring(L, -1);
        int missing = msg && strstr(msg, "cannot open") != NULL;
        fprintf(stderr, "psiflight: %s\n", msg);
        if (!missing) pfr_record_end(L, PFR_EXIT_SCRIPT, msg, o->nsets, o->sets);
        lua_close(L);
        return missing ? PFR_EXIT_USAGE : PFR_EXIT_SCRIPT;
    }
    if (lua_pcall(L, 0, 0, handler) != LUA_OK) {
        const char *full = lua_tostring(L, -1);
        /* Our kind is recorded against the bare message, before the traceback. */
        const char *tb = full ? strstr(full, "\nstack traceback:") : NULL;
        lua_pushlstring(L, full ? full : "", tb ? (size_t)(tb - full) : (full ? strlen(full) : 0));
        status = exit_for_kind(pfl_error_kind_of(L, -1));
        lua_pop(L, 1);
        fprintf(stderr, "psiflight: %s\n", full ? full : "error");
    }
    status = pfr_record_end(L, status, status == PFR_EXIT_OK ? NULL : lua_tostring(L, -1), o->nsets, o->sets);
    fflush(stdout);
    lua_close(L);
    return status;
}

int pfr_main(int argc, char **argv)
{
    /* Numbers are printed and parsed in the C locale whatever the user's
     * environment says, so output is identical everywhere. */
    setlocale(LC_ALL, "C");
    if (argc >= 2 && (strcmp(argv[1], "--version") == 0)) {
        printf("psiflight %s\n", PF_VERSION);
        return PFR_EXIT_OK;
    }
    if (argc >= 2 && (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0)) {
        usage(stdout);
        return PFR_EXIT_OK;
    }
    if (argc < 2 || strcmp(argv[1], "run") != 0) {
        usage(stderr);
        return PFR_EXIT_USAGE;
    }
    pfr_install_interrupt_cleanup();
    pfr_options o;
    int st = parse_options(argc, argv, &o);
    if (st == PFR_EXIT_OK) st = run_script(&o);
    free(o.sets);
    return st;
}
