/* pfl_longflight.c - Lua methods for long flights (pf_longflight.h):
 * w:fly_long (chooses the same-grid or the scaled method) and w:fly_scaled
 * (the single-FFT form, forced). */
#include <math.h>
#include <string.h>
#include "pf_frame.h"
#include "pf_longflight.h"
#include "pfl_options.h"

static const pfl_options_decl FLY_LONG_OPTIONS = {
    "wave:fly_long", (const char *const[]){"method", "grid", "points", "spacing", "origin", "acceleration", NULL}};
static const pfl_options_decl FLY_SCALED_OPTIONS = {"wave:fly_scaled", (const char *const[]){"points", "origin", "acceleration", NULL}};

/* Field holding point counts: one integer >= 2 for all axes or one per axis. */
static int field_counts(lua_State *L, int t, const char *field, int dim, size_t *out, const char *fname)
{
    double v[PF_MAX_DIM];
    if (!pfl_field_vector(L, t, field, dim, v, 0)) return 0;
    for (int a = 0; a < dim; a++) {
        if (v[a] != floor(v[a]) || v[a] < 2 || v[a] > 1e9)
            luaL_error(L, "%s: field '%s' must hold integers of at least 2, got %f on axis %d", fname, field, v[a], a + 1);
        out[a] = (size_t)v[a];
    }
    return 1;
}

static pf_flight_method check_method(lua_State *L, int t, const char *fname)
{
    static const char *const names[] = {"auto", "same-grid", "scaled", NULL};
    static const pf_flight_method values[] = {PF_FLIGHT_AUTO, PF_FLIGHT_SAME_GRID, PF_FLIGHT_SCALED};
    if (pfl_option_get(L, t, "method") == LUA_TNIL) {
        lua_pop(L, 1);
        return PF_FLIGHT_AUTO;
    }
    const char *m = lua_tostring(L, -1);
    for (int i = 0; names[i]; i++)
        if (lua_type(L, -1) == LUA_TSTRING && strcmp(m, names[i]) == 0) {
            lua_pop(L, 1);
            return values[i];
        }
    char buf[80];
    luaL_error(L, "%s: field 'method' must be \"auto\", \"same-grid\" or \"scaled\", got %s", fname,
               pfl_describe(L, -1, buf, sizeof buf));
    return PF_FLIGHT_AUTO;
}

/* w:fly_long(t [, {method=, grid=, points=, spacing=, origin=}]) -> w, report */
static int l_fly_long(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    int d = pf_grid_dim(pf_wave_grid(w));
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    if (!lua_isnoneornil(L, 3)) {
        pfl_options_check(L, 3, &FLY_LONG_OPTIONS);
        o.method = check_method(L, 3, "fly_long");
        if (pfl_option_get(L, 3, "grid") != LUA_TNIL) o.grid = pfl_check_grid(L, lua_gettop(L));
        lua_pop(L, 1); /* the table still holds the grid, so it stays alive */
        field_counts(L, 3, "points", d, o.points, "fly_long");
        if (pfl_field_vector(L, 3, "spacing", d, o.spacing, 0))
            for (int a = 0; a < d; a++)
                if (!(o.spacing[a] > 0)) return luaL_error(L, "fly_long: field 'spacing' must be positive, got %f", o.spacing[a]);
        o.has_centre = pfl_field_vector(L, 3, "origin", d, o.centre, 0);
        if (o.grid && (o.has_centre || o.points[0] || o.spacing[0]))
            return luaL_error(L, "fly_long: give either 'grid' or 'points'/'spacing'/'origin', not both");
    }
    /* Acceleration (option or pf.setup default): the frame falls, the grid
     * (possibly a scaled one) holds the cloud (pf_frame.h). */
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, lua_isnoneornil(L, 3) ? 0 : 3, d, acc, "wave:fly_long");
    pf_long_flight_report r;
    pfl_check(L, pf_wave_fly_long_in_frame(w, t, &o, &r, accelerated ? acc : NULL), "fly_long");
    lua_settop(L, 1);
    lua_createtable(L, 0, 16);
    lua_pushstring(L, pf_flight_method_name(r.method));
    lua_setfield(L, -2, "method");
    lua_pushinteger(L, r.stages);
    lua_setfield(L, -2, "stages");
    lua_pushstring(L, r.reason);
    lua_setfield(L, -2, "reason");
    lua_pushboolean(L, r.same_grid_ok);
    lua_setfield(L, -2, "same_grid_ok");
    lua_pushboolean(L, r.scaled_ok);
    lua_setfield(L, -2, "scaled_ok");
    pfl_set_vector(L, "extent_lo", r.x_lo, d);
    pfl_set_vector(L, "extent_hi", r.x_hi, d);
    pfl_set_vector(L, "wavenumber_lo", r.k_lo, d);
    pfl_set_vector(L, "wavenumber_hi", r.k_hi, d);
    pfl_set_vector(L, "image_lo", r.image_lo, d);
    pfl_set_vector(L, "image_hi", r.image_hi, d);
    pfl_set_vector(L, "box", r.box, d);
    pfl_set_vector(L, "window", r.window, d);
    pfl_set_vector(L, "scaled_spacing", r.out_spacing, d);
    pfl_set_vector(L, "scaled_origin", r.out_centre, d);
    pfl_set_counts(L, "scaled_points", r.out_points, d);
    pfl_set_vector(L, "scaled_time", r.scaled_time, d);
    pfl_set_vector(L, "chirp_time", r.chirp_time, d);
    return 2;
}

/* w:fly_scaled(t [, {points=, origin=}]) - the single-FFT form, forced. */
static int l_fly_scaled(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    if (t == 0) return luaL_argerror(L, 2, "flight time must be non-zero for a scaled flight");
    int d = pf_grid_dim(pf_wave_grid(w));
    size_t points[PF_MAX_DIM] = {0, 0, 0};
    double origin[PF_MAX_DIM];
    int has_points = 0, has_origin = 0;
    if (!lua_isnoneornil(L, 3)) {
        pfl_options_check(L, 3, &FLY_SCALED_OPTIONS);
        has_points = field_counts(L, 3, "points", d, points, "fly_scaled");
        has_origin = pfl_field_vector(L, 3, "origin", d, origin, 0);
    }
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, lua_isnoneornil(L, 3) ? 0 : 3, d, acc, "wave:fly_scaled");
    pf_status s = pf_wave_fly_scaled_in_frame(w, t, has_points ? points : NULL, has_origin ? origin : NULL,
                                              accelerated ? acc : NULL);
    return pfl_return_self(L, s, "fly_scaled");
}

void pfl_open_longflight(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {
        {"fly_long", l_fly_long},
        {"fly_scaled", l_fly_scaled},
        {NULL, NULL},
    };
    static const pfl_options_decl *const options[] = {&FLY_LONG_OPTIONS, &FLY_SCALED_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_add_wave_methods(L, methods);
}
