/* pfl_field.c - distributions with axes (fields, pf_field.h: full densities,
 * marginals, column densities, slices, radial profiles), Born-rule sampling of events,
 * histograms and fringe analysis, for wave functions and ensembles. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_dist_measure.h"
#include "pf_frame.h"
#include "pf_fringe.h"
#include "pf_sample.h"
#include "pfl_measure.h"
#include "pfl_options.h"

#define RNG_KEYS "seed", "generator" /* read by pfl_opt_rng */
static const pfl_options_decl DISTRIBUTION_OPTIONS = {"state:distribution", (const char *const[]){"space", NULL}};
static const pfl_options_decl PROFILE_OPTIONS = {"state:profile", (const char *const[]){"space", NULL}};
static const pfl_options_decl MARGINAL_OPTIONS = {"state:marginal", (const char *const[]){"axes", "space", NULL}};
static const pfl_options_decl SLICE_OPTIONS = {"state:slice", (const char *const[]){"axes", "through", "space", NULL}};
static const pfl_options_decl RADIAL_OPTIONS = {
    "state:radial_profile", (const char *const[]){"center", "bin", "bins", "space", NULL}};
static const pfl_options_decl SAMPLE_OPTIONS = {"state:sample", (const char *const[]){"space", "jitter", RNG_KEYS, NULL}};
static const pfl_options_decl HISTOGRAM_OPTIONS = {"pf.histogram", (const char *const[]){"from", "to", "bins", NULL}};
static const pfl_options_decl FRINGES_FN_OPTIONS = {
    "pf.fringes", (const char *const[]){"from", "to", "period", "envelope", NULL}};
static const pfl_options_decl FRINGES_OPTIONS = {
    "state:fringes", (const char *const[]){"axis", "from", "to", "period", "envelope", NULL}};

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
    int opts = pfl_options_opt(L, 2, &DISTRIBUTION_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_rep rep = pfl_opt_space(L, opts);
    pf_field f;
    pfl_source_field(L, &src, rep, &f, "distribution");
    push_density_field(L, &f, rep, pfl_source_mass(&src));
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
    int opts = pfl_options_opt(L, 3, &PROFILE_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    lua_Integer a = luaL_checkinteger(L, 2);
    if (a < 1 || a > d) return luaL_argerror(L, 2, lua_pushfstring(L, "axis must be 1..%d", d));
    int keep[PF_MAX_DIM] = {0, 0, 0};
    keep[a - 1] = 1;
    return push_marginal(L, &src, pfl_opt_space(L, opts), keep, "profile");
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
    pfl_options_check(L, 2, &MARGINAL_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    int keep[PF_MAX_DIM] = {0, 0, 0};
    read_axes_flags(L, 2, d, keep, "marginal", "the axes to keep");
    return push_marginal(L, &src, pfl_opt_space(L, 2), keep, "marginal");
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
    pfl_options_check(L, 2, &SLICE_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    pf_rep rep = pfl_opt_space(L, 2);
    int freeax[PF_MAX_DIM] = {0, 0, 0};
    read_axes_flags(L, 2, d, freeax, "slice", "the free axes");
    double through[PF_MAX_DIM] = {0, 0, 0};
    pfl_field_vector(L, 2, "through", d, through, 0);
    pf_field f, sl;
    size_t fixed[PF_MAX_DIM];
    pf_status s;
    if (pfl_source_split(&src)) { /* one wave over MPI ranks: from each rank's planes */
        pfl_source_geometry(L, &src, rep, &f, "slice");
        for (int a = 0; a < d; a++) fixed[a] = freeax[a] ? PF_FREE_AXIS : pf_field_nearest(&f, a, through[a]);
        s = pf_dist_slice(src.single, rep, &f, fixed, &sl);
    } else {
        pfl_source_field(L, &src, rep, &f, "slice");
        for (int a = 0; a < d; a++) fixed[a] = freeax[a] ? PF_FREE_AXIS : pf_field_nearest(&f, a, through[a]);
        s = pf_field_slice(&f, fixed, &sl);
        pf_field_free(&f);
    }
    pfl_check(L, s, "slice");
    /* A slice keeps the full density's unit (per m^d of the whole grid). */
    char unit[32], lab[32];
    double scale;
    density_units(rep, d, pfl_source_mass(&src), unit, lab, &scale);
    pfl_push_field(L, &sl, rep, pfl_source_mass(&src), unit, scale, lab);
    pf_field_free(&sl);
    return 1;
}

/* s:radial_profile{center = {..}, bin = dr, bins = n, space=}
 * -> {radius = {..}, values = {..}, count = {..}, unit, axis_unit} */
static int l_radial_profile(lua_State *L)
{
    pfl_options_check(L, 2, &RADIAL_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    pf_rep rep = pfl_opt_space(L, 2);
    double center[PF_MAX_DIM] = {0, 0, 0};
    pfl_field_vector(L, 2, "center", d, center, 0);
    double bin = pfl_field_number(L, 2, "bin", 0, 1);
    double bins = pfl_field_number(L, 2, "bins", 0, 1);
    if (!(bin > 0)) return luaL_error(L, "radial_profile: field 'bin' must be positive, got %f", bin);
    if (bins < 1 || bins > 1e7 || bins != floor(bins)) return luaL_error(L, "radial_profile: field 'bins' must be a count");
    size_t nb = (size_t)bins;
    double *prof = lua_newuserdatauv(L, 2 * nb * sizeof(double), 0), *cnt = prof + nb;
    pf_field f;
    pf_status s;
    if (pfl_source_split(&src)) { /* one wave over MPI ranks: from each rank's planes */
        pfl_source_geometry(L, &src, rep, &f, "radial_profile");
        s = pf_dist_radial(src.single, rep, &f, center, bin, nb, prof, cnt);
    } else {
        pfl_source_field(L, &src, rep, &f, "radial_profile");
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
    density_units(rep, d, pfl_source_mass(&src), unit, lab, &scale);
    lua_pushstring(L, unit);
    lua_setfield(L, -2, "unit");
    lua_pushstring(L, rep == PF_POSITION ? "m" : "1/m");
    lua_setfield(L, -2, "axis_unit");
    return 1;
}

/* s:sample(n [, {space=, jitter=true, seed=, generator=}])
 * -> {count = n, space, unit, [1] = coordinates on axis 1, [2] = ...} */
static int l_sample(lua_State *L)
{
    int opts = pfl_options_opt(L, 3, &SAMPLE_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    lua_Integer n = luaL_checkinteger(L, 2);
    if (n < 0 || n > 100000000) return luaL_argerror(L, 2, "event count must be 0..1e8");
    pf_rep rep = pfl_opt_space(L, opts);
    int jitter = opts ? pfl_field_boolean(L, opts, "jitter", 1) : 1;
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, opts, &local);
    pf_field f;
    const int split = pfl_source_split(&src); /* one wave over MPI ranks: from each rank's planes */
    if (split) pfl_source_geometry(L, &src, rep, &f, "sample");
    else pfl_source_field(L, &src, rep, &f, "sample");
    int d = f.dim;
    /* Events go into a Lua-owned buffer, so nothing leaks if a table
     * allocation below raises. */
    double *ev = lua_newuserdatauv(L, (size_t)(n ? n : 1) * (size_t)d * sizeof(double), 0);
    pf_sampler sm;
    pf_status s = split ? pf_dist_draw_events(src.single, rep, &f, rng, (size_t)n, jitter, ev) : pf_sampler_init(&sm, &f);
    if (s == PF_OK && !split) {
        /* In blocks of 2^16 events (drawn in the same order, so the same
         * events), reporting progress between them. */
        const size_t block = 65536;
        pf_context_progress(pfl_ctx(L), "sample", 0, (double)n);
        for (size_t e = 0; e < (size_t)n; e += block) {
            size_t m = (size_t)n - e < block ? (size_t)n - e : block;
            pf_sampler_draw(&sm, rng, m, jitter, ev + e * (size_t)d);
            pf_context_progress(pfl_ctx(L), "sample", (double)(e + m), (double)n);
        }
        pf_sampler_free(&sm);
    }
    if (!split) pf_field_free(&f);
    pfl_check(L, s, "sample");
    lua_createtable(L, d, 4);
    for (int a = 0; a < d; a++) {
        lua_createtable(L, (int)n, 0);
        for (lua_Integer e = 0; e < n; e++) {
            lua_pushnumber(L, ev[(size_t)e * (size_t)d + (size_t)a]);
            lua_rawseti(L, -2, e + 1);
        }
        lua_rawseti(L, -2, a + 1);
    }
    lua_pushinteger(L, n);
    lua_setfield(L, -2, "count");
    lua_pushstring(L, rep == PF_POSITION ? "position" : "momentum");
    lua_setfield(L, -2, "space");
    lua_pushstring(L, rep == PF_POSITION ? "m" : "1/m");
    lua_setfield(L, -2, "unit");
    if (rep == PF_MOMENTUM) {
        /* Wave numbers times these give momenta (kg m/s) and velocities (m/s). */
        lua_pushnumber(L, PF_HBAR);
        lua_setfield(L, -2, "to_momentum");
        lua_pushnumber(L, PF_HBAR / pfl_source_mass(&src));
        lua_setfield(L, -2, "to_velocity");
    }
    return 1;
}

/* pf.histogram(values, {from=, to=, bins=}) -> {counts, edges, centers, outside} */
static int l_histogram(lua_State *L)
{
    size_t n;
    double *v = pfl_check_doubles(L, 1, &n, "histogram values");
    pfl_options_check(L, 2, &HISTOGRAM_OPTIONS);
    double lo = pfl_field_number(L, 2, "from", 0, 1), hi = pfl_field_number(L, 2, "to", 0, 1);
    double bins = pfl_field_number(L, 2, "bins", 0, 1);
    if (!(hi > lo)) return luaL_error(L, "histogram: needs from < to, got %f and %f", lo, hi);
    if (bins < 1 || bins > 1e7 || bins != floor(bins)) return luaL_error(L, "histogram: field 'bins' must be a count");
    size_t nb = (size_t)bins;
    double *c = lua_newuserdatauv(L, (2 * nb + 1) * sizeof(double), 0);
    memset(c, 0, (2 * nb + 1) * sizeof(double));
    double outside = 0, w = (hi - lo) / (double)nb;
    for (size_t i = 0; i < n; i++) {
        double b = floor((v[i] - lo) / w);
        if (b < 0 || b >= (double)nb) outside++;
        else c[(size_t)b]++;
    }
    lua_createtable(L, 0, 4);
    pfl_push_doubles(L, c, nb);
    lua_setfield(L, -2, "counts");
    double *e = c + nb;
    for (size_t b = 0; b <= nb; b++) e[b] = lo + (double)b * w;
    pfl_push_doubles(L, e, nb + 1);
    lua_setfield(L, -2, "edges");
    for (size_t b = 0; b < nb; b++) e[b] = lo + ((double)b + 0.5) * w;
    pfl_push_doubles(L, e, nb);
    lua_setfield(L, -2, "centers");
    lua_pushnumber(L, outside);
    lua_setfield(L, -2, "outside");
    return 1;
}

/* Field envelope = "none" (default) | "sinc2" | "gaussian" of the fringe fits. */
static pf_fringe_envelope field_envelope(lua_State *L, int opts, const char *name)
{
    if (!opts || pfl_option_get(L, opts, "envelope") == LUA_TNIL) {
        if (opts) lua_pop(L, 1);
        return PF_ENVELOPE_NONE;
    }
    const char *v = lua_type(L, -1) == LUA_TSTRING ? lua_tostring(L, -1) : "";
    pf_fringe_envelope e = PF_ENVELOPE_NONE;
    if (strcmp(v, "sinc2") == 0) e = PF_ENVELOPE_SINC2;
    else if (strcmp(v, "gaussian") == 0) e = PF_ENVELOPE_GAUSSIAN;
    else if (strcmp(v, "none") != 0) {
        char buf[80];
        luaL_error(L, "%s: field 'envelope' must be \"none\", \"sinc2\" or \"gaussian\", got %s", name,
                   pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    return e;
}

static void push_fit(lua_State *L, const pf_fringe_fit *fit)
{
    lua_createtable(L, 0, 9);
    if (!isnan(fit->envelope_width)) {
        lua_pushnumber(L, fit->envelope_center);
        lua_setfield(L, -2, "envelope_center");
        lua_pushnumber(L, fit->envelope_width);
        lua_setfield(L, -2, "envelope_width");
    }
    lua_pushnumber(L, fit->period);
    lua_setfield(L, -2, "period");
    lua_pushnumber(L, fit->wavenumber);
    lua_setfield(L, -2, "wavenumber");
    lua_pushnumber(L, fit->visibility);
    lua_setfield(L, -2, "visibility");
    lua_pushnumber(L, fit->phase);
    lua_setfield(L, -2, "phase");
    lua_pushnumber(L, fit->offset);
    lua_setfield(L, -2, "offset");
    lua_pushnumber(L, fit->amplitude);
    lua_setfield(L, -2, "amplitude");
    lua_pushinteger(L, (lua_Integer)fit->points);
    lua_setfield(L, -2, "points");
}

/* pf.fringes(coords, values [, {from=, to=, period=}]) -> fit table */
static int l_fringes_fn(lua_State *L)
{
    size_t nx, ny;
    double *x = pfl_check_doubles(L, 1, &nx, "fringes coordinates");
    double *y = pfl_check_doubles(L, 2, &ny, "fringes values");
    if (nx != ny) return luaL_error(L, "fringes: %d coordinates but %d values", (int)nx, (int)ny);
    int opts = pfl_options_opt(L, 3, &FRINGES_FN_OPTIONS);
    double lo = -INFINITY, hi = INFINITY, guess = 0;
    if (opts) {
        lo = pfl_field_number(L, opts, "from", -INFINITY, 0);
        hi = pfl_field_number(L, opts, "to", INFINITY, 0);
        guess = pfl_field_number(L, opts, "period", 0, 0);
    }
    pf_fringe_envelope env = field_envelope(L, opts, "fringes");
    if (!isfinite(lo) || !isfinite(hi)) {
        double mn = INFINITY, mx = -INFINITY;
        for (size_t i = 0; i < nx; i++) {
            mn = fmin(mn, x[i]);
            mx = fmax(mx, x[i]);
        }
        if (!isfinite(lo)) lo = mn;
        if (!isfinite(hi)) hi = mx;
    }
    pf_fringe_fit fit;
    pfl_check(L, pf_fringe_analyse_envelope(pfl_ctx(L), x, y, nx, lo, hi, guess, env, &fit), "fringes");
    push_fit(L, &fit);
    return 1;
}

/* s:fringes{axis=, from=, to=, period=} -> fit of the profile along axis. */
static int l_fringes(lua_State *L)
{
    int opts = pfl_options_opt(L, 2, &FRINGES_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_grid *g = pfl_source_grid(&src);
    int d = pf_grid_dim(g);
    int axis = pfl_opt_axis(L, opts, "axis", d, 1) - 1;
    double lo = pf_grid_x(g, axis, 0), hi = pf_grid_x(g, axis, pf_grid_points(g, axis) - 1), guess = 0;
    { /* the default range is the grid's, in lab positions (the members' shared frame, pf_frame.h) */
        pf_frame fr;
        pfl_source_frame(L, &src, &fr, "fringes");
        lo += fr.position[axis];
        hi += fr.position[axis];
    }
    if (opts) {
        lo = pfl_field_number(L, opts, "from", lo, 0);
        hi = pfl_field_number(L, opts, "to", hi, 0);
        guess = pfl_field_number(L, opts, "period", 0, 0);
    }
    pf_fringe_envelope env = field_envelope(L, opts, "fringes");
    int keep[PF_MAX_DIM] = {0, 0, 0};
    keep[axis] = 1;
    pf_field m;
    pfl_source_marginal(L, &src, PF_POSITION, keep, &m, "fringes");
    pf_status s;
    size_t n = m.n[0];
    double *x = pf_context_alloc(pfl_ctx(L), n * sizeof *x);
    if (!x) {
        pf_field_free(&m);
        pfl_check(L, pf_context_status(pfl_ctx(L)), "fringes");
    }
    for (size_t j = 0; j < n; j++) x[j] = pf_field_coord(&m, 0, j);
    pf_fringe_fit fit;
    s = pf_fringe_analyse_envelope(pfl_ctx(L), x, m.values, n, lo, hi, guess, env, &fit);
    pf_context_free(pfl_ctx(L), x);
    pf_field_free(&m);
    pfl_check(L, s, "fringes");
    push_fit(L, &fit);
    return 1;
}

void pfl_open_field(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"distribution", l_distribution}, {"profile", l_profile}, {"marginal", l_marginal},
        {"column_density", l_column_density}, {"slice", l_slice}, {"radial_profile", l_radial_profile},
        {"sample", l_sample}, {"fringes", l_fringes}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"histogram", l_histogram}, {"fringes", l_fringes_fn}, {NULL, NULL}};
    pfl_add_state_methods(L, methods);
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&DISTRIBUTION_OPTIONS, &PROFILE_OPTIONS, &MARGINAL_OPTIONS,
                                                      &SLICE_OPTIONS, &RADIAL_OPTIONS, &SAMPLE_OPTIONS,
                                                      &HISTOGRAM_OPTIONS, &FRINGES_FN_OPTIONS, &FRINGES_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
