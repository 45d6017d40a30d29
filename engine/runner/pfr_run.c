/* pfr_run.c - `psiflight run` and `psiflight recipe`: builds a Lua state with
 * the engine preloaded, the sandbox, the module search and the resource
 * limits, declares the command-line parameters, runs the script under
 * protection and turns failures into a message on stderr and a documented
 * exit status.  pfr_main dispatches the commands. */
#define _DEFAULT_SOURCE /* realpath */
#include <errno.h>
#include <limits.h>
#include <locale.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include <lauxlib.h>
#include <lua.h>
#include <lualib.h>
#include "pf_version.h"
#include "pfl.h"
#include "pf_sha256.h"
#include "pfl_params.h"
#include "pfr_exit.h"
#include "pfr_limits.h"
#include "pfr_modules.h"
#include "pfr_mpi.h"
#include "pfr_run.h"
#include "pfr_sandbox.h"
#include "pfr_stop.h"
#include "pfr_record.h"
#include "pfr_sweep.h"
#include "pfr_traceback.h"

/* The chunk that runs a bundled recipe as a script. */
static const char RECIPE_DRIVER[] =
    "local pf = require 'psiflight'\n"
    "local recipe = require(" "'" PFR_RECIPE_PREFIX "' .. ...)\n"
    "return recipe.main(pf.parameters(recipe.parameters))\n";

static const char *recipe_name(const char *script)
{
    size_t n = strlen(PFR_RECIPE_SCHEME);
    return strncmp(script, PFR_RECIPE_SCHEME, n) == 0 ? script + n : NULL;
}

int pfr_script_digest(const char *script, char hex[65])
{
    const char *name = recipe_name(script);
    if (!name) return pf_sha256_file(script, hex);
    const pfr_bundled_recipe *r = pfr_recipe_find(name);
    if (!r) return -1;
    pf_sha256_buffer(r->source, r->length, hex);
    return 0;
}

int pfr_make_folders(const char *path)
{
    char buf[PATH_MAX];
    if (snprintf(buf, sizeof buf, "%s", path) >= (int)sizeof buf) return errno = ENAMETOOLONG, -1;
    for (char *p = buf + 1; *p; p++) {
        if (*p != '/') continue;
        *p = 0;
        if (mkdir(buf, 0777) != 0 && errno != EEXIST) return -1;
        *p = '/';
    }
    if (mkdir(buf, 0777) != 0 && errno != EEXIST) return -1;
    return 0;
}

int pfr_path_has_dotdot(const char *path)
{
    for (const char *p = path; *p;) {
        size_t n = strcspn(p, "/");
        if (n == 2 && p[0] == '.' && p[1] == '.') return 1;
        p += n;
        p += *p == '/';
    }
    return 0;
}

/* Checks --out before the script starts, so a refusal costs no computation
 * and touches nothing: the sandbox's rule on "..", a folder that can be
 * created and written, and no earlier run there unless --overwrite (a
 * refused rerun leaves the earlier files and manifest as they were).
 * --help writes nothing and creates no folder. */
static int check_out_folder(const pfr_options *o)
{
    if (!o->out || o->help) return PFR_EXIT_OK;
    if (!o->trusted && pfr_path_has_dotdot(o->out)) {
        fprintf(stderr, "psiflight: --out %s: the sandbox refuses output folders with '..'; give a folder below "
                        "the working folder or an absolute path (or run a script you trust with --trusted)\n", o->out);
        return PFR_EXIT_SANDBOX;
    }
    if (pfr_make_folders(o->out) != 0)
        return pfr_usage_error("cannot create the output folder %s: %s", o->out, strerror(errno));
    if (access(o->out, W_OK | X_OK) != 0) {
        fprintf(stderr, "psiflight: --out %s: the folder is not writable: %s\n", o->out, strerror(errno));
        return PFR_EXIT_USAGE;
    }
    char manifest[PATH_MAX];
    snprintf(manifest, sizeof manifest, "%s/manifest.json", o->out);
    if (!o->overwrite && access(manifest, F_OK) == 0) {
        fprintf(stderr, "psiflight: --out %s already holds a run (%s); nothing was run and nothing changed - "
                        "give --overwrite to replace that run's files, or choose another folder\n", o->out, manifest);
        return PFR_EXIT_USAGE;
    }
    return PFR_EXIT_OK;
}

typedef struct run_setup {
    const pfr_options *o;
    const char *script_dir; /* resolved folder of the script, NULL for a recipe */
    const char *label;
    const char *digest;
} run_setup;

static void set_string(lua_State *L, int t, const char *key, const char *value)
{
    lua_pushstring(L, value);
    lua_setfield(L, t, key);
}

/* Opens the libraries and the engine, applies the options, publishes
 * psiflight.params and psiflight.script, fixes the file policy and the module
 * search.  Runs under lua_pcall: a failure here is a usage error. */
static int prepare(lua_State *L)
{
    const run_setup *rs = lua_touserdata(L, 1);
    const pfr_options *o = rs->o;
    int sandboxed = !o->trusted;
    pfr_sandbox_open_libs(L, sandboxed);
    luaL_requiref(L, "psiflight", luaopen_psiflight, 0);
    int mod = lua_gettop(L);
    lua_getfield(L, mod, "setup");
    lua_createtable(L, 0, 8);
    if (o->threads) {
        lua_pushinteger(L, o->threads);
        lua_setfield(L, -2, "threads");
    }
    if (o->planning) set_string(L, lua_gettop(L), "planning", o->planning);
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
    if (o->out) set_string(L, lua_gettop(L), "output_dir", o->out);
    if (o->memory_cap) {
        lua_pushnumber(L, (lua_Number)o->memory_cap);
        lua_setfield(L, -2, "memory_cap");
    }
    lua_call(L, 1, 0);
    if (sandboxed) pfr_sandbox_guard_setup(L, mod, pf_context_memory_cap(pfl_ctx(L)));
    /* psiflight.script: what is running, for reports and file names. */
    lua_createtable(L, 0, 4);
    set_string(L, lua_gettop(L), "path", o->script);
    set_string(L, lua_gettop(L), "label", rs->label);
    set_string(L, lua_gettop(L), "sha256", rs->digest);
    if (rs->script_dir) set_string(L, lua_gettop(L), "folder", rs->script_dir);
    lua_setfield(L, mod, "script");
    pfl_params_configure(L, o->nsets, o->sets, o->help, rs->label);
    pfl_params_publish(L, mod);
    if (sandboxed) {
        /* The script folder is read-only: a recipe must not rewrite files it
         * did not create (its own .lua files, its neighbours' data); outputs
         * go to the output folder. */
        if (rs->script_dir && pfl_files_allow(L, rs->script_dir, PFL_ACCESS_READ) != 0)
            return luaL_error(L, "cannot resolve the script folder %s: %s", rs->script_dir, strerror(errno));
        for (int i = 0; i < o->ndata; i++)
            if (pfl_files_allow(L, o->data[i], PFL_ACCESS_READ) != 0)
                return luaL_error(L, "--data %s: %s", o->data[i], strerror(errno));
        /* --help writes nothing, so its --out need not exist. */
        const char *out = o->help ? NULL : o->out;
        if (out && pfl_files_allow(L, out, PFL_ACCESS_WRITE) != 0)
            return luaL_error(L, "--out %s: %s", out, strerror(errno));
        /* A bundled recipe run without --out or --data has no folder at
         * all; an empty policy would allow everything, so it gets one
         * harmless read-only root instead. */
        if (!rs->script_dir && !o->ndata && !out) pfl_files_allow(L, "/dev/null", PFL_ACCESS_READ);
    }
    pfr_modules_install(L, rs->script_dir, sandboxed);
    return 0;
}

static int exit_for_kind(pfl_error_kind k)
{
    switch (k) {
    case PFL_ERROR_GUARD: return PFR_EXIT_GUARD;
    case PFL_ERROR_LIMIT: return PFR_EXIT_LIMIT;
    case PFL_ERROR_SANDBOX: return PFR_EXIT_SANDBOX;
    case PFL_ERROR_USAGE: return PFR_EXIT_USAGE;
    default: return PFR_EXIT_SCRIPT;
    }
}

static int panic(lua_State *L)
{
    const char *msg = lua_tostring(L, -1);
    fprintf(stderr, "psiflight: unprotected Lua error: %s\n", msg ? msg : "(not a string)");
    return 0;
}

/* Loads the script (text only in the sandbox) or the recipe driver. */
/* Whether the file holds a precompiled chunk (after an optional first '#'
 * line, as luaL_loadfilex reads it): the sandbox's refusal is then known
 * from the file itself, not from the wording of Lua's message. */
static int is_binary_chunk(const char *path)
{
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    int c = getc(f);
    if (c == '#')
        while (c != EOF && c != '\n') c = getc(f);
    if (c == '\n') c = getc(f);
    fclose(f);
    return c == LUA_SIGNATURE[0];
}

/* Loads the script: 0 or 1 (arguments pushed) on success; -1 for an error
 * of the script (message on the stack), -2 when the sandbox refused a
 * precompiled chunk. */
static int load_script(lua_State *L, const pfr_options *o, const char *recipe)
{
    if (recipe) {
        char chunk[256];
        snprintf(chunk, sizeof chunk, "=%s", o->script); /* shown as recipe:NAME:LINE */
        if (luaL_loadbufferx(L, RECIPE_DRIVER, sizeof RECIPE_DRIVER - 1, chunk, "t") != LUA_OK) return -1;
        lua_pushstring(L, recipe);
        return 1;
    }
    if (luaL_loadfilex(L, o->script, o->trusted ? NULL : "t") == LUA_OK) return 0;
    return !o->trusted && is_binary_chunk(o->script) ? -2 : -1;
}

/* Runs the loaded chunk and maps the outcome onto an exit status. */
static int execute(lua_State *L, const pfr_options *o, pfr_limits *lim, int handler, int nargs)
{
    pfr_stop_begin(L, o->time_limit);
    int rc = lua_pcall(L, nargs, 0, handler);
    pfr_stop_end(L);
    if (pfr_stop_pending()) {
        /* However the script ended (the stop error, an engine call's
         * PF_ESTOP, or a normal return just after the request), it was
         * stopped: say why, from the stop state, not from the message. */
        const char *full = rc != LUA_OK ? lua_tostring(L, -1) : NULL;
        fprintf(stderr, "psiflight: run stopped: %s\n", pfr_stop_reason());
        if (full) fprintf(stderr, "psiflight: %s\n", full);
        if (rc == LUA_OK) lua_pushstring(L, pfr_stop_reason()); /* the message pfr_record_end is given */
        return pfr_stop_exit_status(PFR_EXIT_SCRIPT);
    }
    if (o->help && (rc == LUA_OK || pfl_params_is_help_stop(L, -1))) {
        /* Stopped at pf.parameters after the listing, or before the first
         * engine computation of a script that declares nothing. */
        if (!pfl_params_declared(L))
            printf("%s declares no parameters (it does not call pf.parameters before its first computation); "
                   "nothing was run\n", o->script);
        return PFR_EXIT_OK;
    }
    if (rc == LUA_OK) {
        /* A --set that nothing declared or read changed nothing: the run
         * did not do what was asked, so it fails as a usage error. */
        const char *unused = pfl_params_unused(L);
        if (unused) {
            const char *value = "";
            size_t n = strlen(unused);
            for (int i = 0; i < o->nsets; i++) /* the last --set of a name wins */
                if (strncmp(o->sets[i], unused, n) == 0 && o->sets[i][n] == '=') value = o->sets[i] + n + 1;
            lua_pushfstring(L, "--set %s=%s: the script neither declares '%s' (pf.parameters) nor reads pf.params.%s, "
                               "so the value had no effect", unused, value, unused, unused);
            fprintf(stderr, "psiflight: %s\n", lua_tostring(L, -1));
            return PFR_EXIT_USAGE;
        }
        return PFR_EXIT_OK;
    }
    if (rc == LUA_ERRMEM || lim->cap_hit) {
        fprintf(stderr, "psiflight: %s: memory limit: the script's Lua heap reached its cap of %zu bytes "
                        "(raise it with --memory-cap, or keep large data in engine objects)\n",
                o->script, lim->cap);
        return PFR_EXIT_LIMIT;
    }
    const char *full = lua_tostring(L, -1);
    if (!full) full = "error";
    const char *tb = strstr(full, PFR_TRACEBACK_MARK);
    lua_pushlstring(L, full, tb ? (size_t)(tb - full) : strlen(full));
    int status = exit_for_kind(pfl_error_kind_of(L, -1));
    lua_pop(L, 1);
    fprintf(stderr, "psiflight: %s\n", full);
    return status;
}

static int run_one(const pfr_options *o);

/* Removes a rank's private output folder (a flat folder of files, plus the
 * manifest's), best effort. */
static void remove_scratch(const char *dir)
{
    char cmd[PATH_MAX + 32];
    /* Only folders this function's caller made with mkdtemp get here. */
    if (snprintf(cmd, sizeof cmd, "rm -rf -- '%s'", dir) < (int)sizeof cmd && !strchr(dir, '\''))
        if (system(cmd) != 0) fprintf(stderr, "psiflight: could not remove %s\n", dir);
}

/* `psiflight run` under mpirun: every rank runs the whole script (a grid
 * asked to be distributed is split over them, pf_dist.h); rank 0 prints and
 * writes, the other ranks' standard output is discarded and their files go
 * to a private folder removed at the end.  A failed rank ends all of them,
 * since the others may be waiting for it inside a collective call. */
int pfr_run_script(const pfr_options *o)
{
    if (o->help) return run_one(o);
    pfr_mpi mpi;
    if (pfr_mpi_start(&mpi) != 0) {
        fprintf(stderr, "psiflight: started as one of several MPI ranks, but %s\n",
                pfr_mpi_available() ? "MPI could not start" : "this runner was built without MPI (docs/distributed.md)");
        return PFR_EXIT_USAGE;
    }
    if (!mpi.active) return run_one(o);
    pfr_options mine = *o;
    char scratch[PATH_MAX] = "";
    if (mpi.rank != 0) {
        const char *tmp = getenv("TMPDIR");
        snprintf(scratch, sizeof scratch, "%s/psiflight-rank%d-XXXXXX", tmp && *tmp ? tmp : "/tmp", mpi.rank);
        if (!mkdtemp(scratch)) {
            fprintf(stderr, "psiflight: rank %d: cannot make a private output folder: %s\n", mpi.rank, strerror(errno));
            pfr_mpi_abort(&mpi, PFR_EXIT_USAGE);
            return PFR_EXIT_USAGE;
        }
        mine.out = scratch;
        mine.overwrite = 1;
        mine.quiet = 1;
        fflush(stdout);
        if (!freopen("/dev/null", "w", stdout)) fprintf(stderr, "psiflight: rank %d: stdout stays open\n", mpi.rank);
    }
    int status = run_one(&mine);
    if (*scratch) remove_scratch(scratch);
    if (status != PFR_EXIT_OK && mpi.size > 1) pfr_mpi_abort(&mpi, status);
    pfr_mpi_finish(&mpi);
    return status;
}

static int run_one(const pfr_options *o)
{
    const char *recipe = recipe_name(o->script);
    char digest[65] = "";
    char dir[PATH_MAX];
    char label[PATH_MAX + 16];
    const char *script_dir = NULL;
    if (recipe) {
        if (!pfr_recipe_find(recipe))
            return pfr_usage_error("no bundled recipe '%s' (psiflight recipe lists them)", recipe);
        snprintf(label, sizeof label, "recipe %s", recipe);
    } else {
        if (pf_sha256_file(o->script, digest) != 0)
            return pfr_usage_error("cannot read the script %s: %s", o->script, strerror(errno));
        snprintf(dir, sizeof dir, "%s", o->script);
        char *slash = strrchr(dir, '/');
        if (slash == dir) slash[1] = 0;
        else if (slash) *slash = 0;
        else strcpy(dir, ".");
        char *real = realpath(dir, NULL);
        if (!real) return pfr_usage_error("cannot resolve the folder of %s: %s", o->script, strerror(errno));
        snprintf(dir, sizeof dir, "%s", real);
        free(real);
        script_dir = dir;
        snprintf(label, sizeof label, "%s", o->script);
    }
    if (recipe) pfr_script_digest(o->script, digest);
    int st = check_out_folder(o);
    if (st != PFR_EXIT_OK) return st;
    pfr_limits lim;
    memset(&lim, 0, sizeof lim);
    lim.cap = o->memory_cap ? o->memory_cap : PFR_DEFAULT_LUA_HEAP;
    lua_State *L = lua_newstate(pfr_limits_alloc, &lim);
    if (!L) {
        fprintf(stderr, "psiflight: cannot create a Lua state (out of memory)\n");
        return PFR_EXIT_LIMIT;
    }
    lua_atpanic(L, panic);
    lua_pushcfunction(L, pfr_traceback);
    int handler = lua_gettop(L);
    run_setup rs = {o, script_dir, label, digest};
    lua_pushcfunction(L, prepare);
    lua_pushlightuserdata(L, &rs);
    if (lua_pcall(L, 1, 0, handler) != LUA_OK) {
        fprintf(stderr, "psiflight: %s\n", lua_tostring(L, -1));
        lua_close(L);
        return PFR_EXIT_USAGE;
    }
    /* The run's record: outputs, --quiet/--overwrite, and the manifest
     * written at the end (also for a failed run). */
    pfr_record_begin(L, recipe ? label : o->script, digest, o->quiet, o->overwrite);
    int nargs = load_script(L, o, recipe);
    int status;
    if (nargs < 0) {
        /* Syntax errors already carry file:line. */
        const char *msg = lua_tostring(L, -1);
        fprintf(stderr, "psiflight: %s\n", msg ? msg : "cannot load the script");
        status = nargs == -2 ? PFR_EXIT_SANDBOX : PFR_EXIT_SCRIPT;
        status = pfr_record_end(L, status, msg, o->nsets, o->sets);
    } else {
        status = execute(L, o, &lim, handler, nargs);
        /* A --help listing is not a run: it leaves no manifest. */
        if (!o->help)
            status = pfr_record_end(L, status, status == PFR_EXIT_OK ? NULL : lua_tostring(L, -1), o->nsets, o->sets);
    }
    fflush(stdout);
    lua_close(L);
    return status;
}

/* `psiflight recipe`: lists the bundled recipes with their one-line summary
 * (the first comment line of each file, after the " - "). */
static int list_recipes(void)
{
    printf("Bundled recipes (run: psiflight run recipe:NAME [--help] [--set NAME=VALUE]...;\n"
           "use from a script: require \"" PFR_RECIPE_PREFIX "NAME\"):\n");
    for (const pfr_bundled_recipe *r = pfr_bundled_recipes; r->name; r++) {
        if (strcmp(r->name, "common") == 0) continue; /* helpers, not a recipe */
        const char *s = (const char *)r->source;
        const char *dash = strstr(s, " - ");
        const char *eol = strchr(s, '\n');
        if (!dash || (eol && dash > eol)) dash = NULL;
        int len = dash ? (int)((eol ? eol : dash + strlen(dash)) - (dash + 3)) : 0;
        printf("  %-18s %.*s\n", r->name, len, dash ? dash + 3 : "");
    }
    return PFR_EXIT_OK;
}

int pfr_main(int argc, char **argv)
{
    /* Numbers are printed and parsed in the C locale whatever the user's
     * environment says, so output is identical everywhere. */
    setlocale(LC_ALL, "C");
    if (argc >= 2 && strcmp(argv[1], "--version") == 0) {
        printf("psiflight %s\n", PF_VERSION);
        return PFR_EXIT_OK;
    }
    if (argc >= 2 && (strcmp(argv[1], "--help") == 0 || strcmp(argv[1], "-h") == 0)) {
        pfr_help(stdout);
        return PFR_EXIT_OK;
    }
    if (argc >= 2 && strcmp(argv[1], "--help-man") == 0) {
        pfr_help_man(stdout); /* psiflight(1), installed by make install */
        return PFR_EXIT_OK;
    }
    if (argc < 2) {
        pfr_usage(stderr);
        return PFR_EXIT_USAGE;
    }
    const char *cmd = argv[1];
    if (strcmp(cmd, "recipe") == 0 && argc == 2) return list_recipes();
    if (strcmp(cmd, "run") != 0 && strcmp(cmd, "sweep") != 0 && strcmp(cmd, "recipe") != 0)
        return pfr_usage_error("unknown command '%s'", cmd);
    pfr_options o;
    int st = pfr_options_parse(argc, argv, 2, cmd, &o);
    char script[PATH_MAX + 16];
    if (st == PFR_EXIT_OK && strcmp(cmd, "recipe") == 0 && !o.script)
        st = pfr_usage_error("psiflight recipe needs a recipe NAME before its options "
                             "(psiflight recipe, alone, lists them)");
    if (st == PFR_EXIT_OK && strcmp(cmd, "recipe") == 0) {
        /* psiflight recipe NAME ... is psiflight run recipe:NAME ... */
        snprintf(script, sizeof script, "%s%s", PFR_RECIPE_SCHEME, o.script);
        o.script = script;
    }
    if (st == PFR_EXIT_OK && strcmp(cmd, "sweep") == 0) {
        st = pfr_sweep_main(&o, argv[0]);
    } else if (st == PFR_EXIT_OK) {
        /* A run stops cleanly on Ctrl-C/SIGTERM and never leaves a
         * half-written file (pfr_record.c); sweeps handle signals themselves. */
        pfr_stop_install_signals();
        st = pfr_run_script(&o);
    }
    pfr_options_free(&o);
    return st;
}
