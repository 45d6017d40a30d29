/* pfl_field.c - distributions with axes (fields, pf_field.h): full
 * densities, marginals, column densities, slices and radial profiles, for
 * wave functions and ensembles. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist_measure.h"
#include "pf_frame.h"
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl DISTRIBUTION_OPTIONS = {"state:distribution", (const char *const[]){"space", NULL}};
static const pfl_options_decl PROFILE_OPTIONS = {"state:profile", (const char *const[]){"space", NULL}};
static const pfl_options_decl MARGINAL_OPTIONS = {"state:marginal", (const char *const[]){"axes", "space", NULL}};
static const pfl_options_decl SLICE_OPTIONS = {"state:slice", (const char *const[]){"axes", "through", "space", NULL}};
static const pfl_options_decl RADIAL_OPTIONS = {
    "state:radial_profile", (const char *const[]){"center", "bin", "bins", "space", NULL}};

/* Unit strings and lab scale of a density field of dim axes. */
static void density_units(pf_rep rep, int dim, double mass, char *unit, char *lab_unit, double *scale)
{
    if (rep == PF_POSITION) {
        snprintf(unit, 32, dim == 1 ? "1/m" : "1/m^%d", dim);
        snprintf(lab_unit, 32, dim == 1 ? "1/um" : "1/um^%d", dim);
        *scale = pow(1e-6, dim);
    } else {
        snprintf(unit, 32, dim == 1 ? "m" : "m^%d", dim);
        snprintf(lab_unit, 32, dim == 1 ? "1/(mm/s)" : "1/(mm/s)^%d", dim);
        *scale = pow(mass / PF_HBAR * 1e-3, dim);
    }
}

static void push_density_field(lua_State *L, const pf_field *f, pf_rep rep, double mass)
{
    char unit[32], lab[32];
    double scale;
    density_units(rep, f->dim, mass, unit, lab, &scale);
    pfl_push_field(L, f, rep, mass, unit, scale, lab);
}

/* s:distribution([{space=}]) -> the full density with axes. */
static int l_distribution(lua_State *L)
{
    pfl_measurement me;
    pfl_measurement_begin(L, 2, &DISTRIBUTION_OPTIONS, 0, &me);
    pf_rep rep = pfl_opt_space(L, me.opts);
    pf_field f;
    pfl_source_field(L, &me.src, rep, &f, "distribution");
    push_density_field(L, &f, rep, pfl_source_mass(&me.src));
    pf_field_free(&f);
    return 1;
}

/* Marginal keeping the axes flagged in keep; pushes the table. */
static int push_marginal(lua_State *L, const pfl_source *src, pf_rep rep, const int *keep, const char *name)
{
    pf_field m;
    pfl_source_marginal(L, src, rep, keep, &m, name);
    push_density_field(L, &m, rep, pfl_source_mass(src));
    pf_field_free(&m);
    return 1;
}

/* s:profile(axis [, {space=}]) -> 1D marginal along one axis. */
static int l_profile(lua_State *L)
{
    pfl_measurement me;
    pfl_measurement_begin(L, 3, &PROFILE_OPTIONS, 0, &me);
    lua_Integer a = luaL_checkinteger(L, 2);
    if (a < 1 || a > me.dim) return luaL_argerror(L, 2, lua_pushfstring(L, "axis must be 1..%d", me.dim));
    int keep[PF_MAX_DIM] = {0, 0, 0};
    keep[a - 1] = 1;
    return push_marginal(L, &me.src, pfl_opt_space(L, me.opts), keep, "profile");
}

/* The option 'axes' of the table at opts (a list of 1-based axes of a
 * d-dimensional state) as flags: flags[a] = 1 for each listed axis.  The
 * errors name the function and what the list means. */
static void read_axes_flags(lua_State *L, int opts, int d, int *flags, const char *fname, const char *meaning)
{
    if (pfl_option_get(L, opts, "axes") != LUA_TTABLE) luaL_error(L, "%s: field 'axes' must list %s", fname, meaning);
    lua_Integer n = luaL_len(L, -1);
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, -1, i);
        lua_Integer a = pfl_tointegerx(L, -1, NULL);
        if (a < 1 || a > d) {
            char buf[64];
            luaL_error(L, "%s: entry %d of 'axes' must be an axis 1..%d, got %s", fname, (int)i, d,
                       pfl_describe(L, -1, buf, sizeof buf));
        }
        flags[a - 1] = 1;
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
}

/* s:marginal{axes = {..}, space=} -> density integrated over the other axes. */
static int l_marginal(lua_State *L)
{
    pfl_measurement me;
    pfl_measurement_begin(L, 2, &MARGINAL_OPTIONS, PFL_OPTIONS_REQUIRED, &me);
    int keep[PF_MAX_DIM] = {0, 0, 0};
    read_axes_flags(L, 2, me.dim, keep, "marginal", "the axes to keep");
    return push_marginal(L, &me.src, pfl_opt_space(L, 2), keep, "marginal");
}

/* s:column_density([axis]) -> density integrated along the imaging axis
 * (default: the last axis), per m^(d-1), as absorption imaging sees it. */
static int l_column_density(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    if (d < 2) return luaL_error(L, "column_density: needs a 2D or 3D state");
    lua_Integer a = luaL_optinteger(L, 2, d);
    if (a < 1 || a > d) return luaL_argerror(L, 2, lua_pushfstring(L, "imaging axis must be 1..%d", d));
    int keep[PF_MAX_DIM] = {1, 1, 1};
    keep[a - 1] = 0;
    return push_marginal(L, &src, PF_POSITION, keep, "column_density");
}

/* s:slice{axes = {free axes}, through = {point}, space=} -> density along the
 * free axes, the others held at the grid points nearest to 'through'. */
static int l_slice(lua_State *L)
{
    pfl_measurement me;
    pfl_measurement_begin(L, 2, &SLICE_OPTIONS, PFL_OPTIONS_REQUIRED, &me);
    pf_rep rep = pfl_opt_space(L, 2);
    int freeax[PF_MAX_DIM] = {0, 0, 0};
    read_axes_flags(L, 2, me.dim, freeax, "slice", "the free axes");
    double through[PF_MAX_DIM] = {0, 0, 0};
    pfl_field_vector(L, 2, "through", me.dim, through, 0);
    pf_field f, sl;
    size_t fixed[PF_MAX_DIM];
    pf_status s;
    if (pfl_source_split(&me.src)) { /* one wave over MPI ranks: from each rank's planes */
        pfl_source_geometry(L, &me.src, rep, &f, "slice");
        for (int a = 0; a < me.dim; a++) fixed[a] = freeax[a] ? PF_FREE_AXIS : pf_field_nearest(&f, a, through[a]);
        s = pf_dist_slice(me.src.single, rep, &f, fixed, &sl);
    } else {
        pfl_source_field(L, &me.src, rep, &f, "slice");
        for (int a = 0; a < me.dim; a++) fixed[a] = freeax[a] ? PF_FREE_AXIS : pf_field_nearest(&f, a, through[a]);
        s = pf_field_slice(&f, fixed, &sl);
        pf_field_free(&f);
    }
    pfl_check(L, s, "slice");
    /* A slice keeps the full density's unit (per m^d of the whole grid). */
    char unit[32], lab[32];
    double scale;
    density_units(rep, me.dim, pfl_source_mass(&me.src), unit, lab, &scale);
    pfl_push_field(L, &sl, rep, pfl_source_mass(&me.src), unit, scale, lab);
    pf_field_free(&sl);
    return 1;
}

/* s:radial_profile{center = {..}, bin = dr, bins = n, space=}
 * -> {radius = {..}, values = {..}, count = {..}, unit, axis_unit} */
static int l_radial_profile(lua_State *L)
{
    pfl_measurement me;
    pfl_measurement_begin(L, 2, &RADIAL_OPTIONS, PFL_OPTIONS_REQUIRED, &me);
    pf_rep rep = pfl_opt_space(L, 2);
    double center[PF_MAX_DIM] = {0, 0, 0};
    pfl_field_vector(L, 2, "center", me.dim, center, 0);
    double bin = pfl_field_number(L, 2, "bin", 0, 1);
    double bins = pfl_field_number(L, 2, "bins", 0, 1);
    if (!(bin > 0)) return luaL_error(L, "radial_profile: field 'bin' must be positive, got %f", bin);
    if (bins < 1 || bins > 1e7 || bins != floor(bins)) return luaL_error(L, "radial_profile: field 'bins' must be a count");
    size_t nb = (size_t)bins;
    double *prof = lua_newuserdatauv(L, 2 * nb * sizeof(double), 0), *cnt = prof + nb;
    pf_field f;
    pf_status s;
    if (pfl_source_split(&me.src)) { /* one wave over MPI ranks: from each rank's planes */
        pfl_source_geometry(L, &me.src, rep, &f, "radial_profile");
        s = pf_dist_radial(me.src.single, rep, &f, center, bin, nb, prof, cnt);
    } else {
        pfl_source_field(L, &me.src, rep, &f, "radial_profile");
        s = pf_field_radial(&f, center, bin, nb, prof, cnt);
        pf_field_free(&f);
    }
    pfl_check(L, s, "radial_profile");
    lua_createtable(L, 0, 5);
    double *r = lua_newuserdatauv(L, nb * sizeof(double), 0);
    for (size_t b = 0; b < nb; b++) r[b] = (b + 0.5) * bin;
    pfl_push_doubles(L, r, nb);
    lua_setfield(L, -3, "radius");
    lua_pop(L, 1);
    pfl_push_doubles(L, prof, nb);
    lua_setfield(L, -2, "values");
    pfl_push_doubles(L, cnt, nb);
    lua_setfield(L, -2, "count");
    char unit[32], lab[32];
    double scale;
    density_units(rep, me.dim, pfl_source_mass(&me.src), unit, lab, &scale);
    lua_pushstring(L, unit);
    lua_setfield(L, -2, "unit");
    lua_pushstring(L, rep == PF_POSITION ? "m" : "1/m");
    lua_setfield(L, -2, "axis_unit");
    return 1;
}

void pfl_open_field(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {
        {"distribution", l_distribution}, {"profile", l_profile}, {"marginal", l_marginal},
        {"column_density", l_column_density}, {"slice", l_slice}, {"radial_profile", l_radial_profile},
        {NULL, NULL},
    };
    pfl_add_state_methods(L, methods);
    static const pfl_options_decl *const options[] = {&DISTRIBUTION_OPTIONS, &PROFILE_OPTIONS, &MARGINAL_OPTIONS,
                                                      &SLICE_OPTIONS, &RADIAL_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
