/* pfl_fringe.c - fringe analysis (pf_fringe.h): pf.fringes on given
 * coordinates and values, s:fringes on the profile of a wave function or an
 * ensemble along one axis. */
#include <math.h>
#include <string.h>
#include "pf_frame.h"
#include "pf_fringe.h"
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl FRINGES_FN_OPTIONS = {
    "pf.fringes", (const char *const[]){"from", "to", "period", "envelope", NULL}};
static const pfl_options_decl FRINGES_OPTIONS = {
    "state:fringes", (const char *const[]){"axis", "from", "to", "period", "envelope", NULL}};

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
    pfl_measurement me;
    pfl_measurement_begin(L, 2, &FRINGES_OPTIONS, PFL_ALONG_AXIS, &me);
    pf_grid *g = me.grid;
    double lo = pf_grid_x(g, me.axis, 0), hi = pf_grid_x(g, me.axis, pf_grid_points(g, me.axis) - 1), guess = 0;
    { /* the default range is the grid's, in lab positions (the members' shared frame, pf_frame.h) */
        pf_frame fr;
        pfl_source_frame(L, &me.src, &fr, "fringes");
        lo += fr.position[me.axis];
        hi += fr.position[me.axis];
    }
    if (me.opts) {
        lo = pfl_field_number(L, me.opts, "from", lo, 0);
        hi = pfl_field_number(L, me.opts, "to", hi, 0);
        guess = pfl_field_number(L, me.opts, "period", 0, 0);
    }
    pf_fringe_envelope env = field_envelope(L, me.opts, "fringes");
    int keep[PF_MAX_DIM] = {0, 0, 0};
    keep[me.axis] = 1;
    pf_field m;
    pfl_source_marginal(L, &me.src, PF_POSITION, keep, &m, "fringes");
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

void pfl_open_fringe(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {{"fringes", l_fringes}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {{"fringes", l_fringes_fn}, {NULL, NULL}};
    pfl_add_state_methods(L, methods);
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&FRINGES_FN_OPTIONS, &FRINGES_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
