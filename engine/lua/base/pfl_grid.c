/* pfl_grid.c - grids as Lua userdata: pf.grid{...} and the grid methods.
 *
 * The userdata holds one reference to the core grid; wave functions hold their
 * own, so closing or collecting the Lua grid never invalidates a wave. */
#include <math.h>
#include <stdio.h>
#include "pf_constants.h"
#include "pfl_options.h"

static const pfl_options_decl GRID_OPTIONS = {"pf.grid", (const char *const[]){"points", "span", "spacing", "origin", NULL}};
#include "pfl.h"
#include "pfl_params.h"

typedef struct { pf_grid *g; } pfl_grid_box;

static pfl_grid_box *check_box(lua_State *L, int arg)
{
    return luaL_checkudata(L, arg, PFL_GRID_TYPE);
}

pf_grid *pfl_check_grid(lua_State *L, int arg)
{
    pfl_grid_box *b = check_box(L, arg);
    if (!b->g) luaL_argerror(L, arg, "grid is closed");
    pfl_dist_grid_guard(L, arg, b->g); /* builders on a distributed grid only if DIST (pfl_aware.c) */
    return b->g;
}

pf_grid **pfl_push_grid_slot(lua_State *L)
{
    pfl_grid_box *b = lua_newuserdatauv(L, sizeof *b, 0);
    b->g = NULL;
    luaL_setmetatable(L, PFL_GRID_TYPE);
    return &b->g;
}

/* Axis argument: 1-based, defaults to 1. */
static int check_axis(lua_State *L, int arg, const pf_grid *g)
{
    lua_Integer a = luaL_optinteger(L, arg, 1);
    if (a < 1 || a > pf_grid_dim(g))
        luaL_argerror(L, arg, lua_pushfstring(L, "axis must be 1..%d, got %d", pf_grid_dim(g), (int)a));
    return (int)a - 1;
}

void pfl_check_indices(lua_State *L, int arg, const pf_grid *g, size_t *idx, int ascending_k)
{
    int d = pf_grid_dim(g);
    for (int a = 0; a < d; a++) {
        lua_Integer i = luaL_checkinteger(L, arg + a);
        lua_Integer n = (lua_Integer)pf_grid_points(g, a);
        if (i < 1 || i > n)
            luaL_argerror(L, arg + a, lua_pushfstring(L, "index on axis %d must be 1..%d, got %d", a + 1, (int)n, (int)i));
        idx[a] = ascending_k ? pf_grid_fft_index(g, a, (size_t)(i - 1)) : (size_t)(i - 1);
    }
}

/* pf.grid{points = n | {n1,n2[,n3]}, span = L | {..} | spacing = dx | {..},
 *         origin = c | {..}} */
static int l_grid(lua_State *L)
{
    pfl_params_before_work(L); /* --help never computes */
    luaL_checktype(L, 1, LUA_TTABLE);
    pfl_options_check(L, 1, &GRID_OPTIONS);
    size_t points[PF_MAX_DIM];
    double span[PF_MAX_DIM], origin[PF_MAX_DIM] = {0, 0, 0}, spacing[PF_MAX_DIM];
    char buf[80];
    int dim;
    int t = pfl_option_get(L, 1, "points");
    if (t == LUA_TNUMBER) {
        dim = 1;
        lua_newtable(L);
        lua_pushvalue(L, -2);
        lua_rawseti(L, -2, 1);
        lua_remove(L, -2);
    } else if (t == LUA_TTABLE) {
        dim = (int)luaL_len(L, -1);
        if (dim < 1 || dim > PF_MAX_DIM)
            return luaL_error(L, "grid: field 'points' must list 1, 2 or 3 axes, got %d", dim);
    } else {
        return luaL_error(L, "grid: field 'points' must be a number or a table of numbers, got %s",
                          pfl_describe(L, -1, buf, sizeof buf));
    }
    for (int a = 0; a < dim; a++) {
        lua_geti(L, -1, a + 1);
        int ok;
        lua_Integer n = pfl_tointegerx(L, -1, &ok);
        if (!ok || n < PF_GRID_MIN_POINTS)
            return luaL_error(L, "grid: points on axis %d must be an integer of at least %d, got %s", a + 1,
                              PF_GRID_MIN_POINTS, pfl_describe(L, -1, buf, sizeof buf));
        points[a] = (size_t)n;
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    int has_span = pfl_field_vector(L, 1, "span", dim, span, 0);
    int has_spacing = pfl_field_vector(L, 1, "spacing", dim, spacing, 0);
    if (has_span == has_spacing)
        return luaL_error(L, "grid: give exactly one of 'span' (period per axis, m) or 'spacing' (m)");
    if (has_spacing)
        for (int a = 0; a < dim; a++) span[a] = spacing[a] * (double)points[a];
    pfl_field_vector(L, 1, "origin", dim, origin, 0);
    pfl_check(L, pf_grid_new(pfl_ctx(L), dim, points, span, origin, pfl_push_grid_slot(L)), "grid");
    return 1;
}

static int l_dim(lua_State *L) { lua_pushinteger(L, pf_grid_dim(pfl_check_grid(L, 1))); return 1; }

static int l_points(lua_State *L)
{
    pf_grid *g = pfl_check_grid(L, 1);
    lua_pushinteger(L, (lua_Integer)pf_grid_points(g, check_axis(L, 2, g)));
    return 1;
}

static int l_total(lua_State *L) { lua_pushinteger(L, (lua_Integer)pf_grid_total(pfl_check_grid(L, 1))); return 1; }

#define AXIS_GETTER(fname, corefn)                          \
    static int fname(lua_State *L)                          \
    {                                                       \
        pf_grid *g = pfl_check_grid(L, 1);                  \
        lua_pushnumber(L, corefn(g, check_axis(L, 2, g)));  \
        return 1;                                           \
    }
AXIS_GETTER(l_span, pf_grid_span)
AXIS_GETTER(l_spacing, pf_grid_spacing)
AXIS_GETTER(l_origin, pf_grid_origin)
AXIS_GETTER(l_kspacing, pf_grid_kspacing)
AXIS_GETTER(l_knyquist, pf_grid_knyquist)

/* The coordinate of point j (0-based) along axis a: the position, or the
 * wave number in ascending order (the grid stores k in FFT order). */
static double axis_value(const pf_grid *g, int a, size_t j, pf_rep rep)
{
    return rep == PF_POSITION ? pf_grid_x(g, a, j) : pf_grid_k(g, a, pf_grid_fft_index(g, a, j));
}

/* g:x(axis, i) / g:k(axis, i): one 1-based point. */
static int push_point(lua_State *L, pf_rep rep)
{
    pf_grid *g = pfl_check_grid(L, 1);
    int a = check_axis(L, 2, g);
    lua_Integer i = luaL_checkinteger(L, 3);
    if (i < 1 || i > (lua_Integer)pf_grid_points(g, a)) return luaL_argerror(L, 3, "index out of range");
    lua_pushnumber(L, axis_value(g, a, (size_t)(i - 1), rep));
    return 1;
}

/* g:x_axis(axis) / g:k_axis(axis): the whole axis as a table. */
static int push_axis(lua_State *L, pf_rep rep)
{
    pf_grid *g = pfl_check_grid(L, 1);
    int a = check_axis(L, 2, g);
    size_t n = pf_grid_points(g, a);
    lua_createtable(L, (int)n, 0);
    for (size_t j = 0; j < n; j++) {
        lua_pushnumber(L, axis_value(g, a, j, rep));
        lua_rawseti(L, -2, (lua_Integer)j + 1);
    }
    return 1;
}

/* g:x(axis, i) -> coordinate of 1-based point i. */
static int l_x(lua_State *L) { return push_point(L, PF_POSITION); }
/* g:k(axis, i) -> wave number of 1-based point i in ascending order. */
static int l_k(lua_State *L) { return push_point(L, PF_MOMENTUM); }
static int l_x_axis(lua_State *L) { return push_axis(L, PF_POSITION); }
static int l_k_axis(lua_State *L) { return push_axis(L, PF_MOMENTUM); }

/* Releases the core reference; harmless the second time (shared by __gc,
 * __close and close). */
static int l_close(lua_State *L)
{
    pfl_grid_box *b = check_box(L, 1);
    if (b->g) {
        pf_grid_release(b->g);
        b->g = NULL;
    }
    return 0;
}

static int l_tostring(lua_State *L)
{
    pfl_grid_box *b = check_box(L, 1);
    if (!b->g) {
        lua_pushliteral(L, "grid (closed)");
        return 1;
    }
    pf_grid *g = b->g;
    luaL_Buffer sb;
    luaL_buffinit(L, &sb);
    char part[128];
    snprintf(part, sizeof part, "grid %dD", pf_grid_dim(g));
    luaL_addstring(&sb, part);
    for (int a = 0; a < pf_grid_dim(g); a++) {
        snprintf(part, sizeof part, "%s %zu pts x %.6g m", a ? "," : "", pf_grid_points(g, a), pf_grid_span(g, a));
        luaL_addstring(&sb, part);
    }
    luaL_pushresult(&sb);
    return 1;
}

void pfl_open_grid(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"dim", l_dim}, {"points", l_points}, {"total", l_total}, {"span", l_span},
        {"spacing", l_spacing}, {"origin", l_origin}, {"kspacing", l_kspacing},
        {"knyquist", l_knyquist}, {"x", l_x}, {"k", l_k}, {"x_axis", l_x_axis},
        {"k_axis", l_k_axis}, {"close", l_close}, {NULL, NULL},
    };
    static const luaL_Reg meta[] = {
        {"__gc", l_close}, {"__close", l_close}, {"__tostring", l_tostring}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"grid", l_grid}, {NULL, NULL}};
    static const pfl_options_decl *const options[] = {&GRID_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_GRID_TYPE, .meta = meta, .methods = methods, .funcs = funcs});
}
