/* pfl_record.c - what a run leaves behind: the output folder, the list of
 * files it wrote, the scalar results it reported (pf.report), and the
 * provenance manifest written at the end of the run.
 *
 * The record lives in the Lua state (a userdata in the registry), like the
 * engine context, so two states in one process keep separate records. */
#include <fftw3.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include "pf_version.h"
#include "pf_manifest.h"
#include "pf_sha256.h"
#include "pf_safefile.h"
#include "pfl.h"
#include "pfl_params.h"

typedef struct pfl_result {
    char *name, *unit;
    double value;
} pfl_result;

typedef struct pfl_module {
    char *name, *source;
    char sha256[65];
} pfl_module;

typedef struct pfl_record {
    char *script;        /* script path from the runner, NULL: unknown */
    char script_sha256[65]; /* its digest when the runner knows it, "" otherwise */
    int default_allowed;    /* the default output folder joined the sandbox's roots */
    int quiet, overwrite;
    char *folder;        /* output folder, fixed at the first write */
    char **outputs;      /* final paths of committed files, in order */
    size_t noutputs, outcap;
    pfl_result *results;
    size_t nresults, rescap;
    double edge_x, edge_k; /* largest guard figures seen, -1: none */
    pfl_module *modules;   /* Lua modules the script loaded, in load order */
    size_t nmodules, modcap;
} pfl_record;

static const char RECORD_KEY = 'R';
static const char OPEN_KEY = 'O';

static int record_gc(lua_State *L)
{
    pfl_record *r = lua_touserdata(L, 1);
    free(r->script);
    free(r->folder);
    for (size_t i = 0; i < r->noutputs; i++) free(r->outputs[i]);
    free(r->outputs);
    for (size_t i = 0; i < r->nresults; i++) {
        free(r->results[i].name);
        free(r->results[i].unit);
    }
    free(r->results);
    for (size_t i = 0; i < r->nmodules; i++) {
        free(r->modules[i].name);
        free(r->modules[i].source);
    }
    free(r->modules);
    memset(r, 0, sizeof *r);
    return 0;
}

static pfl_record *get_record(lua_State *L)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &RECORD_KEY) == LUA_TUSERDATA) {
        pfl_record *r = lua_touserdata(L, -1);
        lua_pop(L, 1);
        return r;
    }
    lua_pop(L, 1);
    pfl_record *r = pfl_new_gc_box(L, sizeof *r, record_gc);
    r->edge_x = r->edge_k = -1;
    lua_rawsetp(L, LUA_REGISTRYINDEX, &RECORD_KEY);
    return r;
}

int pfl_overwrite_default(lua_State *L) { return get_record(L)->overwrite; }
int pfl_quiet(lua_State *L) { return get_record(L)->quiet; }

int pfl_progress_wanted(lua_State *L)
{
    return !get_record(L)->quiet && isatty(fileno(stderr));
}

int pfl_overwrite_option(lua_State *L, int opts)
{
    if (lua_type(L, opts) != LUA_TTABLE) return pfl_overwrite_default(L);
    return pfl_field_boolean(L, opts, "overwrite", 0) || pfl_overwrite_default(L);
}

void pfl_note_guards(lua_State *L, const pf_wave *w)
{
    pfl_record *r = get_record(L);
    const pf_steplog *log = pf_wave_steplog(w);
    for (size_t i = 0; i < log->count; i++) {
        if (log->steps[i].edge_x > r->edge_x) r->edge_x = log->steps[i].edge_x;
        if (log->steps[i].edge_k > r->edge_k) r->edge_k = log->steps[i].edge_k;
    }
}

void pfl_record_configure(lua_State *L, const char *script, const char *sha256, int quiet, int overwrite)
{
    pfl_record *r = get_record(L);
    free(r->script);
    r->script = script ? strdup(script) : NULL;
    snprintf(r->script_sha256, sizeof r->script_sha256, "%s", sha256 ? sha256 : "");
    r->quiet = quiet;
    r->overwrite = overwrite;
}

void pfl_record_script(lua_State *L, const char **path, const char **sha256)
{
    pfl_record *r = get_record(L);
    *path = r->script ? r->script : "";
    *sha256 = r->script_sha256;
}

int pfl_record_module(lua_State *L, const char *name, const char *source, const char *sha256)
{
    pfl_record *r = get_record(L);
    for (size_t i = 0; i < r->nmodules; i++)
        if (strcmp(r->modules[i].source, source) == 0 && strcmp(r->modules[i].sha256, sha256) == 0) return 0;
    if (r->nmodules == r->modcap) {
        size_t cap = r->modcap ? 2 * r->modcap : 8;
        pfl_module *p = realloc(r->modules, cap * sizeof *p);
        if (!p) return -1;
        r->modules = p;
        r->modcap = cap;
    }
    pfl_module *m = &r->modules[r->nmodules];
    m->name = strdup(name);
    m->source = strdup(source);
    if (!m->name || !m->source) {
        free(m->name);
        free(m->source);
        return -1;
    }
    snprintf(m->sha256, sizeof m->sha256, "%s", sha256);
    r->nmodules++;
    return 0;
}

/* Default folder out/<script stem>: beside nothing in particular, in the
 * working folder, so a run never writes into the folder of its script. */
static char *default_folder(const pfl_record *r)
{
    const char *base = "psiflight";
    size_t len = strlen(base);
    if (r->script) {
        const char *slash = strrchr(r->script, '/');
        base = slash ? slash + 1 : r->script;
        len = strlen(base);
        if (len > 4 && strcmp(base + len - 4, ".lua") == 0) len -= 4;
        if (!len) base = "psiflight", len = strlen(base);
    }
    char *p = malloc(len + 5);
    if (p) snprintf(p, len + 5, "out/%.*s", (int)len, base);
    return p;
}

/* The folder of this run; chosen (and fixed) on first use. */
static const char *run_folder(lua_State *L, pfl_record *r)
{
    if (!r->folder) {
        const char *given = pfl_output_dir(L);
        r->folder = given ? strdup(given) : default_folder(r);
        if (!r->folder) luaL_error(L, "out of memory");
        size_t n = strlen(r->folder);
        while (n > 1 && r->folder[n - 1] == '/') r->folder[--n] = '\0';
    }
    return r->folder;
}

const char *pfl_output_resolve(lua_State *L, const char *path, const char *fname)
{
    pfl_params_before_work(L); /* --help never writes */
    pfl_record *r = get_record(L);
    if (!path || !*path) {
        luaL_error(L, "%s: the file name is empty", fname);
        return NULL;
    }
    if (path[0] == '/') {
        /* Outside the output folder: only where the sandbox allows. */
        pfl_files_check(L, path, PFL_ACCESS_WRITE, fname);
        lua_pushstring(L, path);
        return lua_tostring(L, -1);
    }
    /* ".." would leave the folder and break the manifest's relative paths. */
    for (const char *p = path; *p;) {
        const char *e = strchr(p, '/');
        size_t n = e ? (size_t)(e - p) : strlen(p);
        if (n == 2 && p[0] == '.' && p[1] == '.') {
            luaL_error(L, "%s: '%s' must stay inside the output folder (no '..'); use an absolute path to write elsewhere",
                       fname, path);
            return NULL;
        }
        p += n;
        if (*p == '/') p++;
    }
    while (path[0] == '.' && path[1] == '/') path += 2;
    const char *folder = run_folder(L, r);
    lua_pushfstring(L, "%s/%s", folder, path);
    const char *full = lua_tostring(L, -1);
    if (pfl_files_enforced(L)) {
        /* The default folder (no --out) is the engine's choice, not the
         * script's, so it joins the allowed roots once created.  The path is
         * checked before any folder below the run folder is made: a link
         * inside the run folder must not get folders made through it. */
        if (!pfl_output_dir(L) && !r->default_allowed) {
            lua_pushfstring(L, "%s/", folder);
            pfl_check(L, pf_make_folders(pfl_ctx(L), lua_tostring(L, -1)), fname);
            lua_pop(L, 1);
            pfl_files_allow(L, folder, PFL_ACCESS_WRITE);
            r->default_allowed = 1;
        }
        pfl_files_check(L, full, PFL_ACCESS_WRITE, fname);
        pfl_check(L, pf_make_folders(pfl_ctx(L), full), fname);
    }
    return full;
}

void pfl_output_register(lua_State *L, const char *final_path)
{
    pfl_record *r = get_record(L);
    for (size_t i = 0; i < r->noutputs; i++)
        if (strcmp(r->outputs[i], final_path) == 0) return; /* rewritten: hashed at the end anyway */
    if (r->noutputs == r->outcap) {
        size_t cap = r->outcap ? 2 * r->outcap : 16;
        char **p = realloc(r->outputs, cap * sizeof *p);
        if (!p) {
            luaL_error(L, "out of memory recording outputs");
            return;
        }
        r->outputs = p;
        r->outcap = cap;
    }
    char *copy = strdup(final_path);
    if (!copy) {
        luaL_error(L, "out of memory recording outputs");
        return;
    }
    r->outputs[r->noutputs++] = copy;
}

double *pfl_scratch_doubles(lua_State *L, size_t n)
{
    if (n > ((size_t)1 << 40) / sizeof(double)) {
        luaL_error(L, "array of %I numbers is too large", (lua_Integer)n);
        return NULL;
    }
    return lua_newuserdatauv(L, (n ? n : 1) * sizeof(double), 0);
}

/* ---- open outputs ---- */

static void push_open_table(lua_State *L)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &OPEN_KEY) != LUA_TTABLE) {
        lua_pop(L, 1);
        lua_newtable(L);
        lua_pushvalue(L, -1);
        lua_rawsetp(L, LUA_REGISTRYINDEX, &OPEN_KEY);
    }
}

void pfl_track_output(lua_State *L, int idx)
{
    idx = lua_absindex(L, idx);
    push_open_table(L);
    /* Keyed by a counter so outputs are finished in the order they opened. */
    lua_Integer n = (lua_Integer)luaL_len(L, -1);
    lua_pushvalue(L, idx);
    lua_rawseti(L, -2, n + 1);
    lua_pop(L, 1);
}

void pfl_untrack_output(lua_State *L, int idx)
{
    idx = lua_absindex(L, idx);
    push_open_table(L);
    lua_Integer n = (lua_Integer)luaL_len(L, -1);
    for (lua_Integer i = 1; i <= n; i++) {
        lua_rawgeti(L, -1, i);
        int same = lua_rawequal(L, -1, idx);
        lua_pop(L, 1);
        if (same) {
            /* Shift down to keep a proper sequence. */
            for (lua_Integer j = i; j < n; j++) {
                lua_rawgeti(L, -1, j + 1);
                lua_rawseti(L, -2, j);
            }
            lua_pushnil(L);
            lua_rawseti(L, -2, n);
            break;
        }
    }
    lua_pop(L, 1);
}

/* Calls __finish(self, ok) on every output still open; errors become
 * messages on stderr (the run is over, nothing can be raised to). */
static int finish_open_outputs(lua_State *L, int ok)
{
    int failures = 0;
    push_open_table(L);
    int t = lua_gettop(L);
    while (luaL_len(L, t) > 0) {
        lua_Integer n = (lua_Integer)luaL_len(L, t);
        lua_rawgeti(L, t, 1);
        int ud = lua_gettop(L);
        if (luaL_getmetafield(L, ud, "__finish") == LUA_TFUNCTION) {
            lua_pushvalue(L, ud);
            lua_pushboolean(L, ok);
            if (lua_pcall(L, 2, 0, 0) != LUA_OK) {
                fprintf(stderr, "psiflight: %s\n", lua_tostring(L, -1));
                lua_pop(L, 1);
                failures++;
            }
        }
        lua_settop(L, ud);
        /* __finish untracks; make sure the entry is gone either way. */
        if ((lua_Integer)luaL_len(L, t) == n) pfl_untrack_output(L, ud);
        lua_settop(L, t);
    }
    lua_pop(L, 1);
    return failures;
}

/* ---- the manifest ---- */

/* Path of an output relative to the run folder when it lies inside it. */
static const char *relative_to(const char *path, const char *folder)
{
    size_t n = folder ? strlen(folder) : 0;
    if (n && strncmp(path, folder, n) == 0 && path[n] == '/') return path + n + 1;
    return path;
}

/* 1 when folder holds a manifest (of an earlier run: this run writes its
 * own only after this check). */
static int earlier_manifest(const char *folder)
{
    char path[4096];
    if (snprintf(path, sizeof path, "%s/%s", folder, PF_MANIFEST_NAME) >= (int)sizeof path) return 0;
    return access(path, F_OK) == 0;
}

int pfl_record_finish(lua_State *L, int ok, const char *error, int nsets, char *const *sets)
{
    pfl_record *r = get_record(L);
    if (finish_open_outputs(L, ok)) ok = 0;
    /* A manifest goes with every run that has an output folder: one given
     * on the command line, or the default one a writer chose. */
    if (!r->folder && !pfl_output_dir(L)) return 0;
    const char *folder = run_folder(L, r);
    if (!ok && !r->overwrite && earlier_manifest(folder)) {
        /* A failed run without --overwrite could not replace any earlier
         * file, so the earlier run's manifest still describes them: keep it. */
        fprintf(stderr, "psiflight: this run failed; the earlier run's manifest in %s is kept unchanged\n", folder);
        return 0;
    }
    pf_context *ctx = pfl_ctx(L);
    pf_manifest_param *params = calloc((size_t)nsets + 1, sizeof *params);
    pf_manifest_result *results = calloc(r->nresults + 1, sizeof *results);
    pf_manifest_output *outputs = calloc(r->noutputs + 1, sizeof *outputs);
    pf_manifest_module *modules = calloc(r->nmodules + 1, sizeof *modules);
    char **names = calloc((size_t)nsets + 1, sizeof *names);
    int rc = 0;
    if (!params || !results || !outputs || !modules || !names) {
        fprintf(stderr, "psiflight: out of memory writing the manifest\n");
        rc = -1;
        goto done;
    }
    size_t np = 0;
    for (int i = 0; i < nsets; i++) {
        const char *eq = strchr(sets[i], '=');
        if (!eq) continue;
        char *name = strndup(sets[i], (size_t)(eq - sets[i]));
        if (!name) continue;
        size_t j = 0;
        while (j < np && strcmp(params[j].name, name) != 0) j++;
        if (j == np) {
            names[np] = name;
            params[np++].name = name;
        } else {
            free(name);
        }
        params[j].value = eq + 1; /* the last --set of a name wins, as in psiflight.params */
    }
    for (size_t i = 0; i < r->nresults; i++) {
        results[i].name = r->results[i].name;
        results[i].unit = r->results[i].unit;
        results[i].value = r->results[i].value;
    }
    for (size_t i = 0; i < r->noutputs; i++) {
        outputs[i].file = r->outputs[i];
        outputs[i].path = relative_to(r->outputs[i], folder);
    }
    for (size_t i = 0; i < r->nmodules; i++) {
        modules[i].name = r->modules[i].name;
        modules[i].source = r->modules[i].source;
        modules[i].sha256 = r->modules[i].sha256;
    }
    char firstline[512];
    if (error) {
        snprintf(firstline, sizeof firstline, "%s", error);
        firstline[strcspn(firstline, "\n")] = '\0';
    }
    pf_manifest m = {
        .script_path = r->script,
        .script_sha256 = r->script_sha256,
        .status = ok ? "ok" : "failed",
        .error = ok ? NULL : (error ? firstline : "run did not finish"),
        .seed = pfl_seed(L),
        .threads = pf_context_threads(ctx),
        .planning = pf_context_planning_name(ctx),
        .engine_version = PF_VERSION,
        .lua_version = LUA_RELEASE,
        .fftw_version = fftw_version,
        .strict = pfl_strict(L),
        .warnings = pfl_warning_count(L),
        .edge_x_max = r->edge_x,
        .edge_k_max = r->edge_k,
        .nparams = np,
        .params = params,
        .nresults = r->nresults,
        .results = results,
        .noutputs = r->noutputs,
        .outputs = outputs,
        .nmodules = r->nmodules,
        .modules = modules,
    };
    if (pf_manifest_write(ctx, folder, &m) != PF_OK) {
        fprintf(stderr, "psiflight: cannot write the run manifest: %s\n", pf_context_message(ctx));
        rc = -1;
    }
done:
    for (int i = 0; names && i < nsets; i++) free(names[i]);
    free(names);
    free(params);
    free(results);
    free(outputs);
    free(modules);
    return rc;
}

/* ---- script functions ---- */

/* pf.report(name, value [, unit]) - a scalar result for the manifest.  A
 * name reported again keeps its latest value. */
static int l_report(lua_State *L)
{
    const char *name = luaL_checkstring(L, 1);
    if (!*name) return luaL_argerror(L, 1, "result name must not be empty");
    double v = pfl_check_finite(L, 2, "reported value");
    const char *unit = luaL_optstring(L, 3, "");
    pfl_record *r = get_record(L);
    size_t i = 0;
    while (i < r->nresults && strcmp(r->results[i].name, name) != 0) i++;
    if (i == r->nresults) {
        if (r->nresults == r->rescap) {
            size_t cap = r->rescap ? 2 * r->rescap : 16;
            pfl_result *p = realloc(r->results, cap * sizeof *p);
            if (!p) return luaL_error(L, "report: out of memory");
            r->results = p;
            r->rescap = cap;
        }
        char *n = strdup(name);
        if (!n) return luaL_error(L, "report: out of memory");
        r->results[i].name = n;
        r->results[i].unit = NULL;
        r->nresults++;
    }
    char *u = strdup(unit);
    if (!u) return luaL_error(L, "report: out of memory");
    free(r->results[i].unit);
    r->results[i].unit = u;
    r->results[i].value = v;
    return 0;
}

/* pf.output_path(name) -> where a writer given `name` puts the file. */
static int l_output_path(lua_State *L)
{
    pfl_output_resolve(L, luaL_checkstring(L, 1), "output_path");
    return 1;
}

/* pf.outputs() -> array of the files this run has written so far. */
static int l_outputs(lua_State *L)
{
    pfl_record *r = get_record(L);
    lua_createtable(L, (int)r->noutputs, 0);
    for (size_t i = 0; i < r->noutputs; i++) {
        lua_pushstring(L, r->outputs[i]);
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
    return 1;
}

/* pf.sha256(text) -> lower-case hex SHA-256 digest of a string. */
static int l_sha256(lua_State *L)
{
    size_t n;
    const char *s = luaL_checklstring(L, 1, &n);
    char hex[65];
    pf_sha256_buffer(s, n, hex);
    lua_pushstring(L, hex);
    return 1;
}

void pfl_open_record(lua_State *L, int mod)
{
    get_record(L);
    static const luaL_Reg funcs[] = {
        {"report", l_report}, {"output_path", l_output_path}, {"outputs", l_outputs}, {"sha256", l_sha256},
        {NULL, NULL},
    };
    pfl_add_functions(L, mod, funcs);
}
