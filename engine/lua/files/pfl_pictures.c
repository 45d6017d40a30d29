/* pfl_pictures.c - PNG pictures from scripts: density maps of a wave
 * (pf.picture_map), line plots (pf.picture_lines) and the space-time carpet
 * of a 1D state's density during a flight (pf.picture_carpet). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_dist_measure.h"
#include "pf_field.h"
#include "pf_flight.h"
#include "pf_frame.h"
#include "pf_picture.h"
#include "pf_progress.h"
#include "pfl.h"
#include "pfl_options.h"

static const pfl_options_decl MAP_OPTIONS = {
    "pf.picture_map", (const char *const[]){"title", "space", "aspect", "width", "height", "overwrite", "x_range", "y_range",
                                            "crop", "pixel", "x", "y", "value_name", "value_unit", "value_max", NULL}};
static const pfl_options_decl LINES_OPTIONS = {
    "pf.picture_lines", (const char *const[]){"title", "x_name", "x_quantity", "y_name", "y_unit", "y_per_x", "log_y",
                                              "legend", "width", "height", "series", "overwrite", "residual", NULL}};
static const pfl_options_decl RESIDUAL_OPTIONS = {"pf.picture_lines residual",
                                                  (const char *const[]){"result", "formula", NULL}};
static const pfl_options_decl SERIES_OPTIONS = {
    "pf.picture_lines series[i]", (const char *const[]){"x", "y", "label", "dashed", "points", NULL}};
static const pfl_options_decl CARPET_OPTIONS = {
    "pf.picture_carpet", (const char *const[]){"duration", "frames", "title", "x_range", "per_frame", "width", "height",
                                               "overwrite", "marks", "value_max", "acceleration", NULL}};
static const pfl_options_decl MARK_OPTIONS = {"pf.picture_carpet marks[i]", (const char *const[]){"at", "label", NULL}};

static int opt_int(lua_State *L, int opts, const char *field, int def)
{
    if (lua_type(L, opts) != LUA_TTABLE) return def;
    int t = pfl_option_get(L, opts, field);
    lua_pop(L, 1);
    if (t == LUA_TNIL) return def;
    double v = pfl_field_number(L, opts, field, def, 0);
    if (v != floor(v) || v < 1 || v > 100000) luaL_error(L, "field '%s' must be a positive integer, got %f", field, v);
    return (int)v;
}

static const char *opt_str(lua_State *L, int opts, const char *field, const char *def)
{
    if (lua_type(L, opts) != LUA_TTABLE) return def;
    int t = pfl_option_get(L, opts, field);
    const char *s = def;
    if (t == LUA_TSTRING) s = lua_tostring(L, -1);
    else if (t != LUA_TNIL) {
        char buf[80];
        luaL_error(L, "field '%s' must be a string, got %s", field, pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1); /* the string stays anchored by the options table */
    return s;
}

static pf_rep opt_rep(lua_State *L, int opts)
{
    return pfl_opt_space(L, lua_type(L, opts) == LUA_TTABLE ? opts : 0);
}

/* Axis coordinates in reading order (momentum: ascending k). */
/* Lab coordinates of axis a: the grid's plus w's frame offsets (pf_frame.h). */
static double *axis_table(lua_State *L, const pf_wave *w, int a, pf_rep rep)
{
    const pf_grid *g = pf_wave_grid(w);
    pf_frame fr;
    pf_wave_frame(w, &fr);
    size_t n = pf_grid_points(g, a);
    double *v = pfl_scratch_doubles(L, n);
    for (size_t j = 0; j < n; j++)
        v[j] = rep == PF_POSITION ? pf_grid_x(g, a, j) + fr.position[a]
                                  : pf_grid_k(g, a, pf_grid_fft_index(g, a, j)) + fr.wavenumber[a];
    return v;
}

/* value_max= (top of the colour scale, in the units the colour bar shows
 * before any power of ten is folded in: SI); 0 when not given. */
static double value_max_option(lua_State *L, int opts, const char *fname)
{
    if (lua_type(L, opts) != LUA_TTABLE) return 0;
    int t = pfl_option_get(L, opts, "value_max");
    lua_pop(L, 1);
    if (t == LUA_TNIL) return 0;
    double v = pfl_field_number(L, opts, "value_max", 0, 1);
    if (!(v > 0) || !isfinite(v)) luaL_error(L, "%s: field 'value_max' must be a positive number, got %f", fname, v);
    return v;
}

/* marks = {{at = t (s, from the carpet's start), label = "..."}, ...}: the
 * marks array, a userdata left on the stack (the caller's stack indices are
 * absolute); labels stay anchored by the options table. */
static const pf_mark *marks_option(lua_State *L, int opts, size_t *count)
{
    *count = 0;
    if (lua_type(L, opts) != LUA_TTABLE) return NULL;
    if (pfl_option_get(L, opts, "marks") == LUA_TNIL) {
        lua_pop(L, 1);
        return NULL;
    }
    int t = lua_gettop(L);
    if (lua_type(L, t) != LUA_TTABLE) luaL_error(L, "picture_carpet: field 'marks' must be an array of {at =, label =}");
    size_t n = (size_t)luaL_len(L, t);
    if (n > 32) luaL_error(L, "picture_carpet: give at most 32 marks, got %d", (int)n);
    pf_mark *mk = lua_newuserdatauv(L, (n ? n : 1) * sizeof *mk, 0);
    for (size_t i = 0; i < n; i++) {
        if (lua_geti(L, t, (lua_Integer)i + 1) != LUA_TTABLE)
            luaL_error(L, "picture_carpet: mark %d must be a table {at = time, label = text}", (int)i + 1);
        int e = lua_gettop(L);
        pfl_options_check(L, e, &MARK_OPTIONS);
        mk[i].at = pfl_field_number(L, e, "at", 0, 1);
        if (!isfinite(mk[i].at)) luaL_error(L, "picture_carpet: mark %d: 'at' must be a finite time (s)", (int)i + 1);
        mk[i].label = opt_str(L, e, "label", NULL);
        lua_pop(L, 1);
    }
    *count = n;
    return mk;
}

static void commit_picture(lua_State *L, pf_status s, const char *path, const char *fname)
{
    pfl_check(L, s, fname);
    pfl_output_register(L, path);
}

static int aspect_option(lua_State *L, int opts)
{
    const char *a = opt_str(L, opts, "aspect", "equal");
    if (!strcmp(a, "equal")) return 1;
    if (!strcmp(a, "fill")) return 0;
    return luaL_error(L, "picture_map: field 'aspect' must be \"equal\" or \"fill\", got '%s'", a);
}

/* Index range [*lo, *hi] of the ascending axis v (n samples) inside [a, b];
 * an error when fewer than two samples fall inside. */
static void range_indices(lua_State *L, const double *v, size_t n, const double r[2], const char *field, size_t *lo,
                          size_t *hi)
{
    size_t i0 = 0, i1 = n;
    while (i0 < n && v[i0] < r[0]) i0++;
    while (i1 > 0 && v[i1 - 1] > r[1]) i1--;
    if (i1 < i0 + 2)
        luaL_error(L, "picture_map: %s {%g, %g} holds fewer than 2 samples of the axis (%g .. %g)", field, r[0], r[1], v[0],
                   v[n - 1]);
    *lo = i0;
    *hi = i1 - 1;
}

/* Index range holding all but a fraction 2e-4 of sum |values| on each side
 * along one axis (marginal sums), widened by a quarter of its length and
 * two samples on each side: where the probability is, with some room. */
static void where_probability_is(const double *marg, size_t n, size_t *lo, size_t *hi)
{
    double total = 0;
    for (size_t i = 0; i < n; i++) total += marg[i];
    if (!(total > 0)) {
        *lo = 0, *hi = n - 1;
        return;
    }
    double acc = 0, cut = 2e-4 * total;
    size_t i0 = 0, i1 = n - 1;
    for (size_t i = 0; i < n; i++) {
        acc += marg[i];
        if (acc > cut) { i0 = i; break; }
    }
    acc = 0;
    for (size_t i = n; i-- > 0;) {
        acc += marg[i];
        if (acc > cut) { i1 = i; break; }
    }
    size_t pad = (i1 - i0) / 4 + 2;
    *lo = i0 > pad ? i0 - pad : 0;
    *hi = i1 + pad < n ? i1 + pad : n - 1;
    if (*hi < *lo + 7) { /* keep a few cells around a point-like cloud */
        *lo = *lo > 4 ? *lo - 4 : 0;
        *hi = *hi + 4 < n ? *hi + 4 : n - 1;
    }
}

/* Crops m in place to x_range / y_range (coordinates in SI) and, where no
 * range is given and autocrop is set, to where the values are; the cropped
 * samples are copied to scratch memory. */
static void crop_map(lua_State *L, int opts, pf_map *m, int autocrop)
{
    size_t nx = m->nx, ny = m->ny, x0 = 0, x1 = nx - 1, y0 = 0, y1 = ny - 1;
    double r[2];
    int has_x = lua_type(L, opts) == LUA_TTABLE && pfl_field_vector(L, opts, "x_range", 2, r, 0);
    if (has_x) {
        if (!(r[1] > r[0])) luaL_error(L, "picture_map: x_range must be {lo, hi} with lo < hi");
        range_indices(L, m->x, nx, r, "x_range", &x0, &x1);
    }
    int has_y = lua_type(L, opts) == LUA_TTABLE && pfl_field_vector(L, opts, "y_range", 2, r, 0);
    if (has_y) {
        if (!(r[1] > r[0])) luaL_error(L, "picture_map: y_range must be {lo, hi} with lo < hi");
        range_indices(L, m->y, ny, r, "y_range", &y0, &y1);
    }
    if (autocrop && (!has_x || !has_y)) {
        double *mx = pfl_scratch_doubles(L, nx), *my = pfl_scratch_doubles(L, ny);
        for (size_t i = 0; i < nx; i++) mx[i] = 0;
        for (size_t j = 0; j < ny; j++) my[j] = 0;
        for (size_t i = 0; i < nx; i++)
            for (size_t j = 0; j < ny; j++) {
                double v = fabs(m->values[i * ny + j]);
                mx[i] += v;
                my[j] += v;
            }
        if (!has_x) where_probability_is(mx, nx, &x0, &x1);
        if (!has_y) where_probability_is(my, ny, &y0, &y1);
    }
    if (x0 == 0 && x1 == nx - 1 && y0 == 0 && y1 == ny - 1) return;
    size_t cx = x1 - x0 + 1, cy = y1 - y0 + 1;
    double *v = pfl_scratch_doubles(L, cx * cy);
    for (size_t i = 0; i < cx; i++)
        for (size_t j = 0; j < cy; j++) v[i * cy + j] = m->values[(x0 + i) * ny + y0 + j];
    m->values = v;
    m->x += x0;
    m->y += y0;
    m->nx = cx;
    m->ny = cy;
}

/* One coordinate array option (x= or y=) of an array map: n ascending,
 * uniformly spaced numbers (m). */
static const double *array_axis(lua_State *L, int opts, const char *field, size_t n)
{
    if (pfl_option_get(L, opts, field) != LUA_TTABLE) luaL_error(L, "picture_map: '%s' must be an array of %d coordinates (m)", field, (int)n);
    if ((size_t)luaL_len(L, -1) != n)
        luaL_error(L, "picture_map: '%s' has %d coordinates for %d samples", field, (int)luaL_len(L, -1), (int)n);
    int t = lua_gettop(L);
    double *v = pfl_scratch_doubles(L, n);
    for (size_t i = 0; i < n; i++) {
        lua_geti(L, t, (lua_Integer)i + 1);
        int ok;
        v[i] = lua_tonumberx(L, -1, &ok);
        if (!ok || !isfinite(v[i])) luaL_error(L, "picture_map: '%s' entry %d is not a finite number", field, (int)i + 1);
        lua_pop(L, 1);
    }
    lua_remove(L, t); /* the scratch array stays */
    return v;
}

/* A map of a plain 2D array: rows[r][c], row r along y (bottom row first,
 * as image[row][column] of pf.camera and its optical-depth images), column c
 * along x.  Coordinates from x= and y= (m), or pixel= (m, number or
 * {px, py}; centred on the middle of the image), else column and row
 * numbers. */
void pfl_array_map(lua_State *L, int data, int opts, pf_map *m)
{
    size_t ny = (size_t)luaL_len(L, data), nx = 0;
    if (ny < 2) luaL_error(L, "picture_map: a 2D array needs at least 2 rows, got %d", (int)ny);
    for (size_t r = 0; r < ny; r++) {
        if (lua_geti(L, data, (lua_Integer)r + 1) != LUA_TTABLE) luaL_error(L, "picture_map: row %d is not an array of numbers", (int)r + 1);
        size_t len = (size_t)luaL_len(L, -1);
        if (r == 0) nx = len;
        if (len != nx || nx < 2) luaL_error(L, "picture_map: row %d has %d values, row 1 has %d (at least 2)", (int)r + 1, (int)len, (int)nx);
        lua_pop(L, 1);
    }
    double *v = pfl_scratch_doubles(L, nx * ny);
    for (size_t r = 0; r < ny; r++) {
        lua_geti(L, data, (lua_Integer)r + 1);
        for (size_t c = 0; c < nx; c++) {
            lua_geti(L, -1, (lua_Integer)c + 1);
            int ok;
            double x = lua_tonumberx(L, -1, &ok);
            if (!ok) luaL_error(L, "picture_map: row %d, column %d is not a number", (int)r + 1, (int)c + 1);
            v[c * ny + r] = x;
            lua_pop(L, 1);
        }
        lua_pop(L, 1);
    }
    int has_opts = lua_type(L, opts) == LUA_TTABLE;
    double pix[2] = {0, 0};
    int has_pixel = 0;
    if (has_opts && pfl_option_get(L, opts, "pixel") != LUA_TNIL) {
        has_pixel = 1;
        if (lua_type(L, -1) == LUA_TNUMBER) pix[0] = pix[1] = lua_tonumber(L, -1);
        else pfl_field_vector(L, opts, "pixel", 2, pix, 1);
        if (!(pix[0] > 0) || !(pix[1] > 0) || !isfinite(pix[0]) || !isfinite(pix[1]))
            luaL_error(L, "picture_map: 'pixel' must be a positive size in m (or {px, py})");
    }
    if (has_opts) lua_pop(L, 1);
    int has_x = has_opts && pfl_option_get(L, opts, "x") != LUA_TNIL;
    if (has_opts) lua_pop(L, 1);
    int has_y = has_opts && pfl_option_get(L, opts, "y") != LUA_TNIL;
    if (has_opts) lua_pop(L, 1);
    if (has_pixel && (has_x || has_y)) luaL_error(L, "picture_map: give 'pixel' or 'x' and 'y', not both");
    if (has_x != has_y) luaL_error(L, "picture_map: give both 'x' and 'y' coordinate arrays");
    double *xs = NULL, *ys = NULL;
    if (has_x) {
        m->x = array_axis(L, opts, "x", nx);
        m->y = array_axis(L, opts, "y", ny);
    } else {
        xs = pfl_scratch_doubles(L, nx);
        ys = pfl_scratch_doubles(L, ny);
        double px = has_pixel ? pix[0] : 1, py = has_pixel ? pix[1] : 1;
        double cx = has_pixel ? (double)(nx - 1) / 2 : -1, cy = has_pixel ? (double)(ny - 1) / 2 : -1;
        for (size_t i = 0; i < nx; i++) xs[i] = ((double)i - cx) * px;
        for (size_t j = 0; j < ny; j++) ys[j] = ((double)j - cy) * py;
        m->x = xs;
        m->y = ys;
    }
    pf_quantity q = has_x || has_pixel ? PF_Q_LENGTH : PF_Q_PLAIN;
    m->xa = (pf_plot_axis){q == PF_Q_PLAIN ? "column" : "x", q};
    m->ya = (pf_plot_axis){q == PF_Q_PLAIN ? "row" : "y", q};
    m->nx = nx, m->ny = ny;
    m->values = v;
    m->value_name = opt_str(L, opts, "value_name", "value");
    m->value_unit = opt_str(L, opts, "value_unit", "");
    m->per_x = m->per_y = 0;
}

/* pf.picture_map(path, w | rows [, {title=, space=, aspect="equal"|"fill",
 *   x_range=, y_range=, crop=, pixel=, x=, y=, value_name=, value_unit=,
 *   width=, height=}])
 * -> final path.  2D: |psi|^2 over x, y; 3D: the column density along the
 * third axis (what an absorption image along z records); a 2D array of
 * numbers (camera counts, optical depth, anything): its values. */
static int l_picture_map(lua_State *L)
{
    lua_settop(L, 3); /* the options stay at 3 when the resolved path is pushed */
    const char *path = pfl_output_resolve(L, luaL_checkstring(L, 1), "picture_map");
    int pathidx = lua_gettop(L);
    pfl_options_opt(L, 3, &MAP_OPTIONS);
    pf_map m = {.equal_aspect = aspect_option(L, 3), .width = opt_int(L, 3, "width", 0), .height = opt_int(L, 3, "height", 0),
                .value_max = value_max_option(L, 3, "picture_map")};
    int crop = lua_type(L, 3) == LUA_TTABLE ? pfl_field_boolean(L, 3, "crop", -1) : -1;
    pf_wave *w = NULL;
    if (lua_type(L, 2) == LUA_TTABLE) {
        pfl_array_map(L, 2, 3, &m);
        m.title = opt_str(L, 3, "title", "");
        if (lua_type(L, 3) == LUA_TTABLE) {
            int t = pfl_option_get(L, 3, "space");
            lua_pop(L, 1);
            if (t != LUA_TNIL) return luaL_error(L, "picture_map: 'space' applies to a wave function, not to an array");
        }
        crop_map(L, 3, &m, crop == 1);
    } else {
        w = pfl_check_wave(L, 2);
        if (lua_type(L, 3) == LUA_TTABLE)
            for (const char *const *k = (const char *const[]){"pixel", "x", "y", "value_name", "value_unit", NULL}; *k; k++) {
                int t = pfl_option_get(L, 3, *k);
                lua_pop(L, 1);
                if (t != LUA_TNIL) return luaL_error(L, "picture_map: '%s' applies to a 2D array, not to a wave function", *k);
            }
        pf_grid *g = pf_wave_grid(w);
        int d = pf_grid_dim(g);
        if (d < 2) return luaL_error(L, "picture_map: needs a 2D or 3D wave function; for 1D use picture_lines or picture_carpet");
        pf_rep rep = opt_rep(L, 3);
        size_t nx = pf_grid_points(g, 0), ny = pf_grid_points(g, 1), nz = d > 2 ? pf_grid_points(g, 2) : 1;
        double *rho;
        if (d == 3 && pf_wave_distributed(w)) {
            /* Over MPI ranks: the column density from each rank's planes
             * (the same bits), the whole density never held anywhere. */
            rho = pfl_scratch_doubles(L, nx * ny);
            pfl_check(L, pf_dist_column_picture(w, rep, rho), "picture_map");
        } else {
            rho = pfl_scratch_doubles(L, pf_grid_total(g));
            pfl_check(L, pf_wave_density(w, rep, rho), "picture_map");
            if (d == 3) {
                double dz = rep == PF_POSITION ? pf_grid_spacing(g, 2) : pf_grid_kspacing(g, 2);
                pf_column_integrals(rho, nx * ny, nz, dz, rho); /* in place */
            }
        }
        pf_quantity q = rep == PF_POSITION ? PF_Q_LENGTH : PF_Q_WAVENUMBER;
        m.title = opt_str(L, 3, "title", rep == PF_POSITION ? "density" : "momentum density");
        m.xa = (pf_plot_axis){rep == PF_POSITION ? "x" : "k#dx#u", q};
        m.ya = (pf_plot_axis){rep == PF_POSITION ? "y" : "k#dy#u", q};
        m.nx = nx, m.ny = ny;
        m.x = axis_table(L, w, 0, rep), m.y = axis_table(L, w, 1, rep);
        m.values = rho;
        m.value_name = d == 3 ? "column density" : (rep == PF_POSITION ? "|#gq|#u2#d" : "|#gf|#u2#d");
        m.per_x = 1, m.per_y = 1;
        m.smooth = 1; /* a field, not a pixel image: drawn smooth at the panel's resolution */
        /* A state's map shows where the probability is unless told not to. */
        crop_map(L, 3, &m, crop != 0);
    }
    commit_picture(L, pf_picture_map(pfl_ctx(L), path, pfl_overwrite_option(L, 3), &m), path, "picture_map");
    if (w) pfl_note_guards(L, w);
    lua_pushvalue(L, pathidx);
    return 1;
}

static pf_quantity quantity_of(lua_State *L, const char *name)
{
    if (!strcmp(name, "length")) return PF_Q_LENGTH;
    if (!strcmp(name, "wavenumber")) return PF_Q_WAVENUMBER;
    if (!strcmp(name, "time")) return PF_Q_TIME;
    if (!strcmp(name, "plain")) return PF_Q_PLAIN;
    luaL_error(L, "picture_lines: field 'x_quantity' must be \"length\", \"wavenumber\", \"time\" or \"plain\", got '%s'", name);
    return PF_Q_PLAIN;
}

static int legend_corner(lua_State *L, const char *c)
{
    static const char *const names[] = {"upper left", "upper right", "lower left", "lower right"};
    for (int i = 0; i < 4; i++)
        if (!strcmp(c, names[i])) return i;
    luaL_error(L, "picture_lines: field 'legend' must be \"upper left\", \"upper right\", \"lower left\" or \"lower right\", got '%s'", c);
    return 1;
}

static double *number_array(lua_State *L, int t, const char *field, size_t k, size_t *n)
{
    if (pfl_option_get(L, t, field) != LUA_TTABLE)
        luaL_error(L, "picture_lines: series %d needs '%s' (an array of numbers)", (int)k, field);
    size_t len = (size_t)luaL_len(L, -1);
    double *v = pfl_scratch_doubles(L, len);
    for (size_t i = 0; i < len; i++) {
        if (lua_geti(L, -2, (lua_Integer)i + 1) != LUA_TNUMBER)
            luaL_error(L, "picture_lines: series %d '%s' entry %d is not a number", (int)k, field, (int)i + 1);
        v[i] = lua_tonumber(L, -1);
        lua_pop(L, 1);
    }
    lua_remove(L, -2); /* keep the scratch array, drop the Lua table */
    *n = len;
    return v;
}

/* pf.picture_lines(path, {title=, x_name=, x_quantity=, y_name=, y_unit=,
 *   y_per_x=, log_y=, legend="upper right", width=, height=, series = {{x=, y=, label=, dashed=,
 *   points=}, ...}, residual = {result = i, formula = j}}) -> final path */
static int l_picture_lines(lua_State *L)
{
    const char *path = pfl_output_resolve(L, luaL_checkstring(L, 1), "picture_lines");
    int pathidx = lua_gettop(L);
    pfl_options_check(L, 2, &LINES_OPTIONS);
    if (pfl_option_get(L, 2, "series") != LUA_TTABLE) return luaL_error(L, "picture_lines: field 'series' must be an array of series");
    int st = lua_gettop(L);
    size_t ns = (size_t)luaL_len(L, st);
    if (ns < 1 || ns > 64) return luaL_error(L, "picture_lines: give 1 to 64 series, got %d", (int)ns);
    pf_series *series = lua_newuserdatauv(L, ns * sizeof *series, 0);
    for (size_t k = 0; k < ns; k++) {
        luaL_checkstack(L, 6, "too many series");
        if (lua_geti(L, st, (lua_Integer)k + 1) != LUA_TTABLE)
            return luaL_error(L, "picture_lines: series %d must be a table {x=, y=}", (int)k + 1);
        int t = lua_gettop(L);
        pfl_options_check(L, t, &SERIES_OPTIONS);
        size_t nx, ny;
        series[k].x = number_array(L, t, "x", k + 1, &nx);
        series[k].y = number_array(L, t, "y", k + 1, &ny);
        if (nx != ny) return luaL_error(L, "picture_lines: series %d has %d x and %d y values", (int)k + 1, (int)nx, (int)ny);
        series[k].n = nx;
        series[k].label = opt_str(L, t, "label", NULL);
        series[k].dashed = pfl_field_boolean(L, t, "dashed", 0);
        series[k].points = pfl_field_boolean(L, t, "points", 0);
        /* The series table anchors its label; keep it on the stack. */
    }
    pf_lines p = {
        .title = opt_str(L, 2, "title", ""),
        .xa = {opt_str(L, 2, "x_name", "x"), quantity_of(L, opt_str(L, 2, "x_quantity", "plain"))},
        .y_name = opt_str(L, 2, "y_name", "y"),
        .y_unit = opt_str(L, 2, "y_unit", ""),
        .y_per_x = pfl_field_boolean(L, 2, "y_per_x", 0),
        .log_y = pfl_field_boolean(L, 2, "log_y", 0),
        .legend = legend_corner(L, opt_str(L, 2, "legend", "upper right")),
        .nseries = ns,
        .series = series,
        .width = opt_int(L, 2, "width", 0), .height = opt_int(L, 2, "height", 0),
    };
    if (pfl_option_get(L, 2, "residual") != LUA_TNIL) {
        /* residual = {result = i, formula = j}: a panel of series i minus series j. */
        int r = lua_gettop(L);
        if (lua_type(L, r) != LUA_TTABLE)
            return luaL_error(L, "picture_lines: field 'residual' must be a table {result = i, formula = j}");
        pfl_options_check(L, r, &RESIDUAL_OPTIONS);
        double a = pfl_field_number(L, r, "result", 0, 1), b = pfl_field_number(L, r, "formula", 0, 1);
        if (a != floor(a) || b != floor(b) || a < 1 || b < 1 || a > (double)ns || b > (double)ns || a == b)
            return luaL_error(L, "picture_lines: residual needs two different series numbers 1..%d, got %f and %f",
                              (int)ns, a, b);
        p.residual_of = (size_t)a, p.residual_ref = (size_t)b;
    }
    lua_pop(L, 1);
    commit_picture(L, pf_picture_lines(pfl_ctx(L), path, pfl_overwrite_option(L, 2), &p), path, "picture_lines");
    lua_pushvalue(L, pathidx);
    return 1;
}

/* Largest lab window of a carpet whose frame travels (columns at the grid's
 * spacing): beyond it the caller is asked for an x_range. */
#define CARPET_MAX_COLUMNS ((size_t)1 << 20)

/* The lab x axis of a carpet: the columns xs[i0 .. i1-1] shown, and whether
 * the wave's frame travels during it (then xs is one lab axis at the grid's
 * spacing, else the grid's own points). */
typedef struct carpet_columns {
    const double *xs;
    size_t i0, i1;
    int travels;
} carpet_columns;

/* Columns of a carpet of `frames` times dt apart under acceleration acc
 * (NULL: none), cropped to range (lo, hi; NULL: all).  The frame's lab
 * offset at every time comes from the closed form the flights use; a
 * travelling frame gets one lab axis from the lowest to the highest lab
 * point any time's grid reaches, at most CARPET_MAX_COLUMNS wide. */
static void choose_carpet_columns(lua_State *L, pf_wave *w, int frames, double dt, const double *acc,
                                  const double *range, carpet_columns *cc)
{
    pf_grid *g = pf_wave_grid(w);
    pf_frame fr;
    pf_wave_frame(w, &fr);
    double xmin = fr.position[0], xmax = fr.position[0];
    for (int j = 1; j < frames; j++) {
        pf_frame_advance(&fr, 1, pf_wave_mass(w), dt, acc);
        xmin = fmin(xmin, fr.position[0]);
        xmax = fmax(xmax, fr.position[0]);
    }
    cc->travels = xmax > xmin;
    size_t nx = pf_grid_points(g, 0), ncol = nx;
    double dx = pf_grid_spacing(g, 0);
    cc->i0 = 0;
    if (!cc->travels) {
        cc->xs = axis_table(L, w, 0, PF_POSITION); /* the grid's points at its (fixed) lab offset */
        cc->i1 = ncol;
        if (range) {
            while (cc->i0 < ncol && cc->xs[cc->i0] < range[0]) cc->i0++;
            while (cc->i1 > cc->i0 && cc->xs[cc->i1 - 1] > range[1]) cc->i1--;
        }
        return;
    }
    /* One lab axis at the grid's spacing from the lowest to the highest lab
     * point any time's grid reaches; x_range picks columns of it. */
    double lo = pf_grid_x(g, 0, 0) + xmin;
    double cols = floor((xmax - xmin) / dx + 0.5) + (double)nx, c0 = 0, c1 = cols;
    if (range) {
        c0 = fmax(0.0, ceil((range[0] - lo) / dx));
        c1 = fmin(cols, floor((range[1] - lo) / dx) + 1.0);
        if (c1 < c0) c1 = c0;
    }
    if (!(c1 - c0 <= (double)CARPET_MAX_COLUMNS)) {
        char msg[300];
        snprintf(msg, sizeof msg,
                 "picture_carpet: the cloud's frame travels %g m during the carpet, %.0f columns at the grid spacing "
                 "%g m (at most %zu); give x_range (lab, m) to show part of it",
                 xmax - xmin, c1 - c0, dx, CARPET_MAX_COLUMNS);
        luaL_error(L, "%s", msg);
    }
    size_t first = (size_t)c0;
    ncol = (size_t)c1 - first;
    double *v = pfl_scratch_doubles(L, ncol ? ncol : 1);
    for (size_t i = 0; i < ncol; i++) v[i] = lo + (double)(first + i) * dx;
    cc->xs = v;
    cc->i1 = ncol;
}

/* pf.picture_carpet(path, w, {duration=, frames=, title=, x_range={lo, hi},
 *   per_frame=false, value_max=, marks={{at=, label=}, ...}, acceleration=,
 *   width=, height=}) -> final path.  Flies a copy of the
 * 1D state through `frames` equally spaced times from now to now + duration
 * and maps its density over x and t (the state itself is left as it was).
 * The x axis is the lab's: a wave in a moving frame (or one flown under
 * 'acceleration', the pf.setup default included) is drawn on one lab window
 * that holds every time's co-moving grid, each profile placed at its lab
 * offset (pf_wave_lab_density_window; zero where that time's grid does not
 * reach), so a falling cloud draws its parabola.  per_frame divides each
 * time's profile by its own maximum, so a spreading cloud stays visible;
 * x_range crops the picture to lo..hi (m, lab); value_max caps the colour
 * scale (what lies above is clipped, and the colour bar says so); marks draw
 * labelled lines at times after the start (s). */
static int l_picture_carpet(lua_State *L)
{
    const char *path = pfl_output_resolve(L, luaL_checkstring(L, 1), "picture_carpet");
    int pathidx = lua_gettop(L);
    pf_wave *w = pfl_check_wave(L, 2);
    pfl_options_check(L, 3, &CARPET_OPTIONS);
    pf_grid *g = pf_wave_grid(w);
    if (pf_grid_dim(g) != 1) return luaL_error(L, "picture_carpet: needs a 1D wave function, got %dD", pf_grid_dim(g));
    double duration = pfl_field_number(L, 3, "duration", 0, 1);
    if (!(duration > 0)) return luaL_error(L, "picture_carpet: field 'duration' must be positive (s), got %f", duration);
    int frames = opt_int(L, 3, "frames", 200);
    if (frames < 2 || frames > 20000) return luaL_error(L, "picture_carpet: field 'frames' must be 2..20000, got %d", frames);
    int per_frame = pfl_field_boolean(L, 3, "per_frame", 0);
    double vmax_opt = value_max_option(L, 3, "picture_carpet");
    size_t nmarks;
    const pf_mark *marks = marks_option(L, 3, &nmarks);
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 3, 1, acc, "pf.picture_carpet");
    double dt = duration / (frames - 1);
    double range[2];
    int has_range = pfl_field_vector(L, 3, "x_range", 2, range, 0);
    if (has_range && !(range[1] > range[0])) return luaL_error(L, "picture_carpet: x_range must be {lo, hi} with lo < hi");
    carpet_columns cc;
    choose_carpet_columns(L, w, frames, dt, accelerated ? acc : NULL, has_range ? range : NULL, &cc);
    int travels = cc.travels;
    const double *xs = cc.xs;
    size_t nx = pf_grid_points(g, 0), i0 = cc.i0, i1 = cc.i1;
    if (i1 < i0 + 2) return luaL_error(L, "picture_carpet: x_range holds fewer than 2 grid points");
    size_t nshow = i1 - i0;
    if ((double)nshow * frames > 1e8)
        return luaL_error(L, "picture_carpet: %d columns x %d frames is too many; give x_range or fewer frames", (int)nshow, frames);
    double *rho = pfl_scratch_doubles(L, nshow * (size_t)frames);
    double *t = pfl_scratch_doubles(L, (size_t)frames);
    double *col = pfl_scratch_doubles(L, travels ? nshow : nx);
    pf_wave **slot = pfl_push_wave_slot(L); /* owned by Lua: freed even if a step below raises */
    pfl_check(L, pf_wave_copy(w, slot), "picture_carpet");
    pf_wave *c = *slot;
    pf_progress bar;
    pf_progress_begin(&bar, stderr, pfl_progress_wanted(L), frames, "carpet");
    for (int j = 0; j < frames; j++) {
        t[j] = dt * j;
        pf_status st = j ? pf_wave_fly_in_frame(c, dt, accelerated ? acc : NULL) : PF_OK;
        if (!st) st = travels ? pf_wave_lab_density_window(c, xs[i0], nshow, col) : pf_wave_density(c, PF_POSITION, col);
        if (st) pf_progress_end(&bar);
        pfl_check(L, st, "picture_carpet");
        const double *shown = travels ? col : col + i0;
        double peak = 0;
        for (size_t i = 0; i < nshow; i++) peak = shown[i] > peak ? shown[i] : peak;
        double f = per_frame && peak > 0 ? 1 / peak : 1;
        for (size_t i = 0; i < nshow; i++) rho[i * (size_t)frames + (size_t)j] = shown[i] * f;
        pf_progress_advance(&bar, 1);
    }
    pf_progress_end(&bar);
    pfl_note_guards(L, c);
    pf_map m = {
        .title = opt_str(L, 3, "title", "density during flight"),
        .xa = {"x", PF_Q_LENGTH},
        .ya = {"t", PF_Q_TIME},
        .nx = nshow, .ny = (size_t)frames,
        .x = xs + i0, .y = t,
        .values = rho,
        .value_name = per_frame ? "|#gq|#u2#d / peak at t" : "|#gq|#u2#d",
        .per_x = !per_frame,
        .width = opt_int(L, 3, "width", 0), .height = opt_int(L, 3, "height", 0),
        .smooth = 1, .y_at_samples = 1, /* the carpet runs from the start to start + duration */
        .value_max = vmax_opt,
        .nmarks = nmarks, .marks = marks,
    };
    commit_picture(L, pf_picture_map(pfl_ctx(L), path, pfl_overwrite_option(L, 3), &m), path, "picture_carpet");
    lua_pushvalue(L, pathidx);
    return 1;
}

void pfl_open_pictures(lua_State *L, int mod)
{
    static const luaL_Reg funcs[] = {
        {"picture_map", l_picture_map}, {"picture_lines", l_picture_lines}, {"picture_carpet", l_picture_carpet},
        {NULL, NULL},
    };
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&MAP_OPTIONS,    &LINES_OPTIONS, &SERIES_OPTIONS, &RESIDUAL_OPTIONS,
                                                      &CARPET_OPTIONS, &MARK_OPTIONS,  NULL};
    pfl_options_declare(L, options);
}
