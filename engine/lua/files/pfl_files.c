/* pfl_files.c - data files from scripts: HDF5 files being written
 * (pf.h5file and its put_* methods), CSV tables (pf.write_csv, pf.read_csv)
 * and loading a wave function back from either (pf.load_wave).
 *
 * An HDF5 file is a userdata born open on a temporary name; close() (or the
 * end of a successful run) moves it to its final name; an error, discard()
 * or a failed run removes it, so no half-written file ever appears. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_h5.h"
#include "pf_picture.h"
#include "pf_samples.h"
#include "pf_table.h"
#include "pfl.h"
#include "pfl_options.h"
#include "pfl_params.h"
#include "pfl_suffix.h"

static const pfl_options_decl H5FILE_OPTIONS = {"pf.h5file", (const char *const[]){"overwrite", NULL}};
static const pfl_options_decl PUT_WAVE_OPTIONS = {"h5file:put_wave", (const char *const[]){"parts", NULL}};
static const pfl_options_decl PUT_IMAGE_OPTIONS = {
    "h5file:put_image", (const char *const[]){"pixel", "x", "y", "value_name", "value_unit", NULL}};
static const pfl_options_decl WRITE_CSV_OPTIONS = {"pf.write_csv", (const char *const[]){"overwrite", NULL}};
static const pfl_options_decl WRITE_CSV_COLUMN = {"pf.write_csv columns[i]", (const char *const[]){"name", "unit", "values", NULL}};
static const pfl_options_decl PUT_TABLE_COLUMN = {"h5file:put_table columns[i]", (const char *const[]){"name", "unit", "values", NULL}};
static const pfl_options_decl LOAD_WAVE_OPTIONS = {
    "pf.load_wave", (const char *const[]){"item", "dataset", "real", "imag", "axes", "space", "grid", "mass",
                                          "interpolate", "normalize", NULL}};
#include "pfl_params.h"

#define PFL_H5_TYPE "psiflight.h5file"

typedef struct { pf_h5 *f; } pfl_h5_box;

/* ---- columns ---- */

/* Reads the column list at arg: an array of {name=, unit=, values=} or
 * {name, unit, values} tables; values are numbers, or strings for a text
 * column.  Everything the returned columns point to stays anchored on the
 * stack (five slots per column) until the caller returns. */
/* Raw read of a field of a positional column table (which may mix in
 * names; only the named form is checked as options). */
static int raw_field(lua_State *L, int t, const char *field)
{
    lua_pushstring(L, field);
    return lua_rawget(L, t);
}

static pf_column *check_columns(lua_State *L, int arg, const char *fname, const pfl_options_decl *column_decl,
                                size_t *ncols)
{
    luaL_checktype(L, arg, LUA_TTABLE);
    arg = lua_absindex(L, arg);
    lua_Integer n = luaL_len(L, arg);
    if (n < 1) luaL_error(L, "%s: the column list is empty", fname);
    pf_column *cols = lua_newuserdatauv(L, (size_t)n * sizeof *cols, 0);
    memset(cols, 0, (size_t)n * sizeof *cols);
    char buf[80];
    for (lua_Integer c = 1; c <= n; c++) {
        luaL_checkstack(L, 8, "too many columns");
        if (lua_geti(L, arg, c) != LUA_TTABLE) luaL_error(L, "%s: column %d must be a table {name, unit, values}", fname, (int)c);
        int t = lua_gettop(L);
        static const char *const fields[] = {"name", "unit", "values"};
        /* The named form {name=, unit=, values=} is an options table: a
         * misspelt 'unti' must not silently drop the unit. */
        int named = lua_rawlen(L, t) == 0;
        if (named) pfl_options_check(L, t, column_decl);
        for (int k = 0; k < 3; k++) {
            if ((named ? pfl_option_get(L, t, fields[k]) : raw_field(L, t, fields[k])) == LUA_TNIL) {
                lua_pop(L, 1);
                lua_geti(L, t, k + 1);
            }
        }
        if (lua_type(L, t + 1) != LUA_TSTRING) luaL_error(L, "%s: column %d needs a name (string)", fname, (int)c);
        const char *name = lua_tostring(L, t + 1);
        if (!lua_isnil(L, t + 2) && lua_type(L, t + 2) != LUA_TSTRING)
            luaL_error(L, "%s: column '%s' unit must be a string", fname, name);
        if (lua_type(L, t + 3) != LUA_TTABLE)
            luaL_error(L, "%s: column '%s' needs values (an array of numbers or strings)", fname, name);
        size_t len = (size_t)luaL_len(L, t + 3);
        lua_rawgeti(L, t + 3, 1);
        int text = lua_type(L, -1) == LUA_TSTRING;
        lua_pop(L, 1);
        void *store = lua_newuserdatauv(L, (len ? len : 1) * (text ? sizeof(char *) : sizeof(double)), 0);
        for (size_t i = 0; i < len; i++) {
            int ty = lua_rawgeti(L, t + 3, (lua_Integer)i + 1);
            if (text ? ty != LUA_TSTRING : ty != LUA_TNUMBER)
                luaL_error(L, "%s: column '%s' entry %d must be a %s like the first, got %s", fname, name, (int)i + 1,
                           text ? "string" : "number", pfl_describe(L, -1, buf, sizeof buf));
            if (text) ((const char **)store)[i] = lua_tostring(L, -1); /* anchored by the values table */
            else ((double *)store)[i] = lua_tonumber(L, -1);
            lua_pop(L, 1);
        }
        cols[c - 1].name = name;
        cols[c - 1].unit = lua_isnil(L, t + 2) ? "" : lua_tostring(L, t + 2);
        cols[c - 1].values = text ? NULL : store;
        cols[c - 1].text = text ? store : NULL;
        cols[c - 1].count = len;
    }
    *ncols = (size_t)n;
    return cols;
}

/* ---- HDF5 files being written ---- */

static pfl_h5_box *check_box(lua_State *L, int arg) { return luaL_checkudata(L, arg, PFL_H5_TYPE); }

static pf_h5 *check_open(lua_State *L, int arg)
{
    pfl_h5_box *b = check_box(L, arg);
    if (!b->f) luaL_argerror(L, arg, "HDF5 file is closed");
    return b->f;
}

static int compare_parameters(const void *a, const void *b)
{
    return strcmp(((const pf_h5_parameter *)a)->name, ((const pf_h5_parameter *)b)->name);
}

/* Gives the new file (userdata at the top) its provenance group: the run's
 * script, digest, seed and the declared parameters, each in SI
 * with its unit when its text is a number with a unit, sorted by name so
 * that reruns write the same bytes.  On failure the file is abandoned. */
static void write_provenance(lua_State *L, pfl_h5_box *b)
{
    pfl_params_push_text(L);
    int texts = lua_gettop(L);
    size_t n = 0;
    lua_pushnil(L);
    while (lua_next(L, texts)) {
        lua_pop(L, 1);
        n++;
    }
    pf_h5_parameter *ps = lua_newuserdatauv(L, (n ? n : 1) * sizeof *ps, 0); /* freed by Lua */
    size_t i = 0;
    lua_pushnil(L);
    while (lua_next(L, texts) && i < n) {
        /* Keys and values stay alive in the texts table. */
        pf_h5_parameter *q = &ps[i++];
        memset(q, 0, sizeof *q);
        q->name = lua_tostring(L, -2);
        q->as_given = lua_tostring(L, -1);
        const pfl_unit *u = NULL;
        char err[160];
        if (lua_type(L, -1) == LUA_TSTRING && pfl_value_parse(q->as_given, &q->value, &u, err, sizeof err) == 0) {
            if (u) {
                q->value *= u->si;
                q->unit = pfl_unit_si_name(u->quantity);
            }
            if (!q->unit) q->unit = "1";
        } else {
            q->text_value = q->as_given ? q->as_given : "";
        }
        lua_pop(L, 1);
    }
    qsort(ps, i, sizeof *ps, compare_parameters);
    const char *script, *sha;
    pfl_record_script(L, &script, &sha);
    /* The file name only: the same script run from another folder (or an
     * installed copy) writes the same bytes; the manifest has the path. */
    const char *slash = strrchr(script, '/');
    if (slash) script = slash + 1;
    pf_h5_provenance prov = {.script = script, .script_sha256 = sha, .seed = pfl_seed(L), .nparams = i, .params = ps};
    pf_status s = pf_h5_set_provenance(b->f, &prov);
    lua_settop(L, texts - 1);
    if (s) {
        pf_h5_abandon(b->f);
        b->f = NULL;
        pfl_check(L, s, "h5file");
    }
}

/* pf.h5file(path [, {overwrite=}]) -> a new HDF5 file being written. */
static int l_h5file(lua_State *L)
{
    lua_settop(L, 2); /* the options stay at 2 when the resolved path is pushed */
    const char *path = pfl_output_resolve(L, luaL_checkstring(L, 1), "h5file");
    pfl_options_opt(L, 2, &H5FILE_OPTIONS);
    int overwrite = pfl_overwrite_option(L, 2);
    pfl_h5_box *b = lua_newuserdatauv(L, sizeof *b, 0);
    b->f = NULL;
    luaL_setmetatable(L, PFL_H5_TYPE);
    pfl_check(L, pf_h5_create(pfl_ctx(L), path, overwrite, &b->f), "h5file");
    pfl_track_output(L, -1);
    write_provenance(L, b);
    return 1;
}

static int parts_option(lua_State *L, int opts)
{
    if (!pfl_options_opt(L, opts, &PUT_WAVE_OPTIONS)) return PF_H5_PSI;
    int t = pfl_option_get(L, opts, "parts");
    const char *p = t == LUA_TSTRING ? lua_tostring(L, -1) : NULL;
    int parts = t == LUA_TNIL ? PF_H5_PSI : p && !strcmp(p, "psi") ? PF_H5_PSI : p && !strcmp(p, "phi") ? PF_H5_PHI
              : p && !strcmp(p, "both") ? PF_H5_PSI | PF_H5_PHI : 0;
    if (!parts) {
        char buf[80];
        luaL_error(L, "put_wave: field 'parts' must be \"psi\", \"phi\" or \"both\", got %s", pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    return parts;
}

static pf_rep rep_option(lua_State *L, int arg, const char *fname)
{
    const char *r = luaL_optstring(L, arg, "position");
    if (!strcmp(r, "position")) return PF_POSITION;
    if (!strcmp(r, "momentum")) return PF_MOMENTUM;
    luaL_error(L, "%s: representation must be \"position\" or \"momentum\", got '%s'", fname, r);
    return PF_POSITION;
}

/* f:put_wave(name, w [, {parts="psi"|"phi"|"both"}]) */
static int l_put_wave(lua_State *L)
{
    pf_h5 *f = check_open(L, 1);
    const char *name = luaL_checkstring(L, 2);
    pf_wave *w = pfl_check_wave(L, 3);
    int parts = parts_option(L, 4);
    pfl_check(L, pf_h5_put_wave(f, name, w, parts), "put_wave");
    pfl_note_guards(L, w);
    lua_settop(L, 1);
    return 1;
}

/* f:put_density(name, w [, "position"|"momentum"]) */
static int l_put_density(lua_State *L)
{
    pf_h5 *f = check_open(L, 1);
    const char *name = luaL_checkstring(L, 2);
    pf_wave *w = pfl_check_wave(L, 3);
    pf_rep rep = rep_option(L, 4, "put_density");
    pfl_check(L, pf_h5_put_density(f, name, w, rep), "put_density");
    pfl_note_guards(L, w);
    lua_settop(L, 1);
    return 1;
}

/* f:put_table(name, columns) */
/* f:put_image(name, rows [, {pixel=, x=, y=, value_name=, value_unit=}]):
 * a 2D array (rows[r][c], r along y) such as a camera or optical-depth
 * image, with its coordinates (m; pixel numbers when none are given). */
static int l_put_image(lua_State *L)
{
    lua_settop(L, 4);
    pf_h5 *f = check_open(L, 1);
    const char *name = luaL_checkstring(L, 2);
    luaL_checktype(L, 3, LUA_TTABLE);
    pfl_options_opt(L, 4, &PUT_IMAGE_OPTIONS);
    pf_map m = {0};
    pfl_array_map(L, 3, 4, &m);
    int plain = m.xa.q == PF_Q_PLAIN;
    const char *vname = m.value_name && strcmp(m.value_name, "value") ? m.value_name : "image";
    return pfl_return_self(L, pf_h5_put_image(f, name, m.nx, m.ny, m.values, m.x, m.y, plain ? "1" : "m", m.value_unit, vname), "put_image");
}

static int l_put_table(lua_State *L)
{
    pf_h5 *f = check_open(L, 1);
    const char *name = luaL_checkstring(L, 2);
    size_t n;
    pf_column *cols = check_columns(L, 3, "put_table", &PUT_TABLE_COLUMN, &n);
    return pfl_return_self(L, pf_h5_put_table(f, name, n, cols), "put_table");
}

/* f:put_value(name, number [, unit]) */
static int l_put_value(lua_State *L)
{
    pf_h5 *f = check_open(L, 1);
    const char *name = luaL_checkstring(L, 2);
    double v = pfl_check_finite(L, 3, "value");
    const char *unit = luaL_optstring(L, 4, "");
    return pfl_return_self(L, pf_h5_put_scalar(f, name, v, unit), "put_value");
}

/* f:close() -> final path.  Moves the finished file into place. */
static int l_h5_close(lua_State *L)
{
    pfl_h5_box *b = check_box(L, 1);
    if (!b->f) return luaL_error(L, "close: HDF5 file is closed already");
    pf_h5 *f = b->f;
    b->f = NULL;
    pfl_untrack_output(L, 1);
    lua_pushstring(L, pf_h5_path(f));
    pfl_check(L, pf_h5_commit(f), "close");
    pfl_output_register(L, lua_tostring(L, -1));
    return 1;
}

/* f:discard() - drops the unfinished file. */
static int l_h5_discard(lua_State *L)
{
    pfl_h5_box *b = check_box(L, 1);
    if (b->f) {
        pf_h5_abandon(b->f);
        b->f = NULL;
        pfl_untrack_output(L, 1);
    }
    return 0;
}

static int l_h5_path(lua_State *L)
{
    lua_pushstring(L, pf_h5_path(check_open(L, 1)));
    return 1;
}

/* __close(self, err): commit on normal exit from the block, discard when it
 * is left by an error. */
static int l_h5_toclose(lua_State *L)
{
    pfl_h5_box *b = check_box(L, 1);
    if (!b->f) return 0;
    if (!lua_isnoneornil(L, 2)) return l_h5_discard(L);
    lua_settop(L, 1);
    return l_h5_close(L);
}

/* __finish(self, ok): the end of the run finishes files left open. */
static int l_h5_finish(lua_State *L)
{
    pfl_h5_box *b = check_box(L, 1);
    if (!b->f) return 0;
    if (!lua_toboolean(L, 2)) return l_h5_discard(L);
    lua_settop(L, 1);
    return l_h5_close(L);
}

/* __gc: a file still open here was never finished by a run (plain Lua use
 * without close); it is incomplete by definition, so it is removed. */
static int l_h5_gc(lua_State *L)
{
    pfl_h5_box *b = check_box(L, 1);
    if (b->f) {
        fprintf(stderr, "psiflight: warning: HDF5 file '%s' was never closed; discarded\n", pf_h5_path(b->f));
        pf_h5_abandon(b->f);
        b->f = NULL;
    }
    return 0;
}

static int l_h5_tostring(lua_State *L)
{
    pfl_h5_box *b = check_box(L, 1);
    if (b->f) lua_pushfstring(L, "HDF5 file '%s' (open)", pf_h5_path(b->f));
    else lua_pushliteral(L, "HDF5 file (closed)");
    return 1;
}

/* ---- CSV ---- */

/* pf.write_csv(path, columns [, {overwrite=}]) -> final path */
static int l_write_csv(lua_State *L)
{
    lua_settop(L, 3); /* the options stay at 3 when the resolved path is pushed */
    const char *path = pfl_output_resolve(L, luaL_checkstring(L, 1), "write_csv");
    int pathidx = lua_gettop(L);
    size_t n;
    pf_column *cols = check_columns(L, 2, "write_csv", &WRITE_CSV_COLUMN, &n);
    pfl_options_opt(L, 3, &WRITE_CSV_OPTIONS);
    pfl_check(L, pf_csv_write(pfl_ctx(L), path, pfl_overwrite_option(L, 3), n, cols), "write_csv");
    pfl_output_register(L, path);
    lua_pushvalue(L, pathidx);
    return 1;
}

static void push_table(lua_State *L, const pf_table *t)
{
    lua_createtable(L, (int)t->ncols, (int)t->ncols);
    for (size_t c = 0; c < t->ncols; c++) {
        lua_createtable(L, 0, 3);
        lua_pushstring(L, t->names[c]);
        lua_setfield(L, -2, "name");
        lua_pushstring(L, t->units[c]);
        lua_setfield(L, -2, "unit");
        lua_createtable(L, (int)t->nrows, 0);
        for (size_t r = 0; r < t->nrows; r++) {
            if (t->values[c]) lua_pushnumber(L, t->values[c][r]);
            else lua_pushstring(L, t->text[c][r]);
            lua_rawseti(L, -2, (lua_Integer)r + 1);
        }
        lua_setfield(L, -2, "values");
        lua_pushvalue(L, -1);
        lua_setfield(L, -3, t->names[c]);
        lua_rawseti(L, -2, (lua_Integer)c + 1);
    }
}

/* The table lives in a userdata while Lua values are built, so an error
 * (out of memory) cannot leak it. */
typedef struct { pf_table t; } table_box;
static int table_box_gc(lua_State *L)
{
    pf_table_free(&((table_box *)lua_touserdata(L, 1))->t);
    return 0;
}

static pf_table *new_table_box(lua_State *L)
{
    table_box *b = pfl_new_gc_box(L, sizeof *b, table_box_gc);
    return &b->t;
}

/* pf.read_csv(path) -> columns: array of {name, unit, values}, also by name. */
static int l_read_csv(lua_State *L)
{
    const char *path = luaL_checkstring(L, 1);
    pfl_files_check(L, path, PFL_ACCESS_READ, "read_csv");
    pf_table *t = new_table_box(L);
    pfl_check(L, pf_csv_read(pfl_ctx(L), path, t), "read_csv");
    push_table(L, t);
    return 1;
}

/* ---- loading a wave ---- */

static const char *opt_string(lua_State *L, int opts, const char *field)
{
    int t = pfl_option_get(L, opts, field);
    if (t == LUA_TNIL) {
        lua_pop(L, 1);
        return NULL;
    }
    if (t != LUA_TSTRING) {
        char buf[80];
        luaL_error(L, "load_wave: field '%s' must be a string, got %s", field, pfl_describe(L, -1, buf, sizeof buf));
    }
    const char *s = lua_tostring(L, -1);
    lua_pop(L, 1); /* the string stays anchored by the options table */
    return s;
}

static int ends_with(const char *s, const char *suffix)
{
    size_t n = strlen(s), m = strlen(suffix);
    return n >= m && strcmp(s + n - m, suffix) == 0;
}

/* Factor from a coordinate unit in a CSV header to SI; 0 when unknown. */
static double unit_factor(const char *u, pf_rep rep)
{
    static const struct { const char *name; double f; } len[] = {
        {"", 1}, {"m", 1}, {"mm", 1e-3}, {"um", 1e-6}, {"\xc2\xb5m", 1e-6}, {"nm", 1e-9},
    };
    const char *rest = u;
    if (rep == PF_MOMENTUM) {
        if (!*u) return 1;
        if (strncmp(u, "1/", 2) != 0) return 0;
        rest = u + 2;
    }
    for (size_t i = 0; i < sizeof len / sizeof len[0]; i++)
        if (strcmp(rest, len[i].name) == 0 && (rep == PF_POSITION || *rest))
            return rep == PF_POSITION ? len[i].f : 1 / len[i].f;
    return 0;
}

/* CSV samples: column x (or k), re, im. */
static void read_csv_samples(lua_State *L, const char *path, pf_samples *s)
{
    pf_table *t = new_table_box(L);
    pfl_check(L, pf_csv_read(pfl_ctx(L), path, t), "load_wave");
    int cx = pf_table_find(t, "x"), ck = pf_table_find(t, "k");
    int cr = pf_table_find(t, "re"), ci = pf_table_find(t, "im");
    if (cr < 0) cr = pf_table_find(t, "real");
    if (ci < 0) ci = pf_table_find(t, "imag");
    if ((cx < 0) == (ck < 0) || cr < 0 || ci < 0)
        luaL_error(L, "load_wave: '%s' needs columns x (or k), re and im; found %d columns", path, (int)t->ncols);
    pf_rep rep = cx >= 0 ? PF_POSITION : PF_MOMENTUM;
    int cc = cx >= 0 ? cx : ck;
    int used[3] = {cc, cr, ci};
    for (int k = 0; k < 3; k++)
        if (!t->values[used[k]])
            luaL_error(L, "load_wave: '%s' column '%s' holds text, not numbers", path, t->names[used[k]]);
    double f = unit_factor(t->units[cc], rep);
    if (f == 0)
        luaL_error(L, "load_wave: '%s' column %s has unit '%s'; use %s", path, t->names[cc], t->units[cc],
                   rep == PF_POSITION ? "m, mm, um or nm" : "1/m, 1/mm, 1/um or 1/nm");
    s->dim = 1;
    s->n[0] = t->nrows;
    s->rep = rep;
    snprintf(s->origin, sizeof s->origin, "csv");
    s->axis[0] = malloc(t->nrows * sizeof(double));
    s->values = malloc(t->nrows * sizeof(double complex));
    if (!s->axis[0] || !s->values) luaL_error(L, "load_wave: out of memory");
    for (size_t r = 0; r < t->nrows; r++) {
        s->axis[0][r] = t->values[cc][r] * f;
        s->values[r] = t->values[cr][r] + I * t->values[ci][r];
        if (!isfinite(s->axis[0][r]) || !isfinite(creal(s->values[r])) || !isfinite(cimag(s->values[r])))
            luaL_error(L, "load_wave: '%s' row %d is not finite", path, (int)r + 1);
    }
}

typedef struct { pf_samples s; } samples_box;
static int samples_box_gc(lua_State *L)
{
    pf_samples_free(&((samples_box *)lua_touserdata(L, 1))->s);
    return 0;
}

/* A uniform grid matching the samples' axes, for loads without grid=. */
static pf_grid *grid_from_samples(lua_State *L, const pf_samples *s, const char *path)
{
    size_t pts[PF_MAX_DIM];
    double span[PF_MAX_DIM], origin[PF_MAX_DIM];
    pf_grid *g;
    if (s->has_grid) {
        /* A psiflight item names the grid it was made on: use it as is. */
        for (int a = 0; a < s->dim; a++) pts[a] = s->n[a];
        pfl_check(L, pf_grid_new(pfl_ctx(L), s->dim, pts, s->span, s->grid_origin, &g), "load_wave");
        return g;
    }
    for (int a = 0; a < s->dim; a++) {
        const double *ax = s->axis[a];
        size_t n = s->n[a];
        if (!ax || n < 2)
            luaL_error(L, "load_wave: '%s' gives no coordinates on axis %d; pass grid=", path, a + 1);
        if (pf_grid_axis_from_samples(pfl_ctx(L), ax, n, s->rep == PF_MOMENTUM, &span[a], &origin[a]))
            luaL_error(L, "load_wave: coordinates on axis %d of '%s' are not uniformly spaced; pass grid= and interpolate=true",
                       a + 1, path);
        pts[a] = n;
    }
    pfl_check(L, pf_grid_new(pfl_ctx(L), s->dim, pts, span, origin, &g), "load_wave");
    return g;
}

/* pf.load_wave(path, {item= | dataset= | real=, imag=, axes={...},
 *   space=, grid=, mass=, interpolate=false, normalize=}) -> wave */
static int l_load_wave(lua_State *L)
{
    pfl_params_before_work(L); /* --help never computes */
    const char *path = luaL_checkstring(L, 1);
    pfl_files_check(L, path, PFL_ACCESS_READ, "load_wave");
    lua_settop(L, 2);
    if (lua_isnil(L, 2)) {
        lua_newtable(L);
        lua_replace(L, 2);
    }
    pfl_options_check(L, 2, &LOAD_WAVE_OPTIONS);
    samples_box *sb = pfl_new_gc_box(L, sizeof *sb, samples_box_gc);
    pf_samples *s = &sb->s;
    pf_h5_source dist_src = {0}; /* slab_count 1: read again for this rank's share */
    int csv = ends_with(path, ".csv") || ends_with(path, ".CSV") || ends_with(path, ".txt");
    pf_rep given = PF_POSITION;
    int rep = pfl_field_space(L, 2, &given) ? (int)given : -1; /* -1: as the file says */
    if (csv) {
        read_csv_samples(L, path, s);
    } else {
        pf_h5_source src = {opt_string(L, 2, "item"), opt_string(L, 2, "dataset"), opt_string(L, 2, "real"),
                            opt_string(L, 2, "imag"), {NULL, NULL, NULL}, rep, 0, 0, 0};
        if (pfl_option_get(L, 2, "axes") == LUA_TTABLE) {
            int n = (int)luaL_len(L, -1);
            if (n > PF_MAX_DIM) return luaL_error(L, "load_wave: field 'axes' names at most %d datasets", PF_MAX_DIM);
            for (int a = 0; a < n; a++) {
                lua_geti(L, -1, a + 1);
                src.axes[a] = lua_tostring(L, -1);
                if (!src.axes[a]) return luaL_error(L, "load_wave: axes entry %d must be a dataset name", a + 1);
                lua_pop(L, 1); /* anchored by the axes table, itself in the options */
            }
        } else if (!lua_isnil(L, -1)) {
            return luaL_error(L, "load_wave: field 'axes' must be an array of dataset names");
        }
        lua_pop(L, 1);
        if (!src.item && !src.dataset && !src.real) src.item = "wave";
        if (pf_context_distribute(pfl_ctx(L)) && pf_dist_running()) {
            /* Grids may be split over MPI ranks: each rank reads only its
             * share.  A first read of one entry gives the shape, axes and
             * representation (and the grid, when none is given); the rank's
             * slab follows once the grid is known (below). */
            src.slab_axis = 0;
            src.slab_first = 0;
            src.slab_count = 1;
            dist_src = src;
        }
        pfl_check(L, pf_h5_read(pfl_ctx(L), path, &src, s), "load_wave");
    }
    if (rep >= 0 && csv && rep != (int)s->rep)
        return luaL_error(L, "load_wave: '%s' holds %s samples, not %s ones", path,
                          s->rep == PF_POSITION ? "position" : "momentum", rep == PF_POSITION ? "position" : "momentum");
    double mass = pfl_field_number(L, 2, "mass", s->mass, 0);
    if (!(mass > 0))
        return luaL_error(L, "load_wave: '%s' does not give the mass; pass mass= (kg)", path);
    int interpolate = pfl_field_boolean(L, 2, "interpolate", 0);
    int normalize = pfl_field_boolean(L, 2, "normalize", csv);
    pf_grid **grid_slot = pfl_push_grid_slot(L); /* Lua holds the grid reference, so errors below do not leak it */
    if (pfl_option_get(L, 2, "grid") != LUA_TNIL) {
        if (!luaL_testudata(L, -1, PFL_GRID_TYPE)) {
            char buf[80];
            return luaL_error(L, "load_wave: field 'grid' must be a grid (pf.grid), got %s", pfl_describe(L, -1, buf, sizeof buf));
        }
        pf_grid_retain(*grid_slot = pfl_check_grid(L, -1));
    } else {
        *grid_slot = grid_from_samples(L, s, path);
    }
    lua_pop(L, 1);
    pf_grid *g = *grid_slot;
    if (dist_src.slab_count) {
        /* This rank's share of the values (all of them when the grid is not
         * distributed, e.g. 1D), counted against the memory cap. */
        pf_samples_slab_for(s, g, &dist_src.slab_axis, &dist_src.slab_first, &dist_src.slab_count);
        if (!pf_grid_distributed(g)) dist_src.slab_count = 0;
        dist_src.rep = (int)s->rep;
        pf_samples_free(s);
        pfl_check(L, pf_h5_read(pfl_ctx(L), path, &dist_src, s), "load_wave");
    }
    pf_wave **slot = pfl_push_wave_slot(L);
    pfl_check(L, pf_wave_new(g, mass, slot), "load_wave");
    pf_wave *w = *slot;
    char what[600];
    snprintf(what, sizeof what, "'%s'", path);
    pfl_check(L, pf_samples_to_wave(pfl_ctx(L), s, w, interpolate, what), "load_wave");
    if (normalize) pfl_check(L, pf_wave_normalize(w), "load_wave");
    pf_wave_set_clock(w, s->clock);
    pf_wave_record(w, "load", interpolate ? "interpolated" : s->origin, 0.0, 0.0);
    pf_samples_free(s); /* now, not at the box's collection: the bytes leave the memory cap */
    pfl_check(L, PF_OK, "load_wave");
    return 1;
}

/* w:log_columns() -> the step log as a column list for pf.write_csv or
 * f:put_table: step, kind, method, duration [s], clock [s], norm, removed,
 * edge_x, edge_k (NaN where a guard figure was not measured). */
static int l_log_columns(lua_State *L)
{
    const pf_steplog *log = pf_wave_steplog(pfl_check_wave(L, 1));
    static const struct { const char *name, *unit; } cols[] = {
        {"step", ""}, {"kind", ""}, {"method", ""}, {"duration", "s"}, {"clock", "s"},
        {"norm", ""}, {"removed", ""}, {"edge_x", ""}, {"edge_k", ""},
    };
    int ncols = (int)(sizeof cols / sizeof cols[0]);
    lua_createtable(L, ncols, 0);
    for (int c = 0; c < ncols; c++) {
        lua_createtable(L, 3, 0);
        lua_pushstring(L, cols[c].name);
        lua_rawseti(L, -2, 1);
        lua_pushstring(L, cols[c].unit);
        lua_rawseti(L, -2, 2);
        lua_createtable(L, (int)log->count, 0);
        for (size_t i = 0; i < log->count; i++) {
            const pf_step *st = &log->steps[i];
            switch (c) {
            case 0: lua_pushinteger(L, (lua_Integer)i + 1); break;
            case 1: lua_pushstring(L, st->kind); break;
            case 2: lua_pushstring(L, st->method[0] ? st->method : "-"); break;
            case 3: lua_pushnumber(L, st->duration); break;
            case 4: lua_pushnumber(L, st->clock); break;
            case 5: lua_pushnumber(L, st->norm); break;
            case 6: lua_pushnumber(L, st->removed); break;
            case 7: lua_pushnumber(L, st->edge_x >= 0 ? st->edge_x : NAN); break;
            default: lua_pushnumber(L, st->edge_k >= 0 ? st->edge_k : NAN); break;
            }
            lua_rawseti(L, -2, (lua_Integer)i + 1);
        }
        lua_rawseti(L, -2, 3);
        lua_rawseti(L, -2, c + 1);
    }
    return 1;
}

void pfl_open_files(lua_State *L, int mod)
{
    static const luaL_Reg wave_methods[] = {{"log_columns", l_log_columns}, {NULL, NULL}};
    pfl_add_wave_methods(L, wave_methods);
    static const luaL_Reg methods[] = {
        {"put_wave", l_put_wave}, {"put_density", l_put_density}, {"put_table", l_put_table}, {"put_image", l_put_image},
        {"put_value", l_put_value}, {"close", l_h5_close}, {"discard", l_h5_discard}, {"path", l_h5_path},
        {NULL, NULL},
    };
    static const luaL_Reg meta[] = {
        {"__gc", l_h5_gc}, {"__close", l_h5_toclose}, {"__finish", l_h5_finish}, {"__tostring", l_h5_tostring},
        {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {
        {"h5file", l_h5file}, {"write_csv", l_write_csv}, {"read_csv", l_read_csv}, {"load_wave", l_load_wave},
        {NULL, NULL},
    };
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_H5_TYPE, .meta = meta, .methods = methods,
                                               .guard_prefix = "h5file:", .funcs = funcs}); /* names: pfl_aware.c */
    static const pfl_options_decl *const options[] = {&H5FILE_OPTIONS, &PUT_WAVE_OPTIONS, &PUT_IMAGE_OPTIONS, &WRITE_CSV_OPTIONS, &WRITE_CSV_COLUMN, &PUT_TABLE_COLUMN,
                                                      &LOAD_WAVE_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
