/* pfl_interp.c - Lua methods for values of a wave function between grid
 * points: w:psi_at(x [, y, z]) and w:density_at(x [, y, z]), each coordinate
 * a number (one point) or a table of numbers (many points, one call into
 * the core).  Coordinates are lab coordinates in m. */
#include <string.h>
#include "pf_interp.h"
#include "pfl.h"

/* Reads the d coordinate arguments at 2..d+1 into a fresh array (count x d,
 * row-major); *many tells whether tables were given.  The array is a Lua
 * userdata left on the stack, so an error cannot leak it. */
static double *read_points(lua_State *L, int d, const char *name, size_t *count, int *many)
{
    *many = lua_type(L, 2) == LUA_TTABLE;
    size_t n = 1;
    if (*many) n = (size_t)luaL_len(L, 2);
    for (int a = 0; a < d; a++) {
        int arg = 2 + a;
        if (*many) {
            if (lua_type(L, arg) != LUA_TTABLE)
                luaL_error(L, "%s: coordinate %d must be a table like coordinate 1 (a list of m), got %s", name, a + 1,
                           luaL_typename(L, arg));
            if ((size_t)luaL_len(L, arg) != n)
                luaL_error(L, "%s: coordinate tables must have equal lengths: %d has %d entries, 1 has %d", name,
                           a + 1, (int)luaL_len(L, arg), (int)n);
        } else if (lua_type(L, arg) != LUA_TNUMBER) {
            luaL_error(L, "%s: coordinate %d must be a number (m) or a table of numbers, got %s (the grid has %d "
                          "axes)", name, a + 1, luaL_typename(L, arg), d);
        }
    }
    if (n > ((size_t)1 << 28)) luaL_error(L, "%s: at most 268435456 points per call, got %d", name, (int)n);
    double *pts = lua_newuserdatauv(L, (n ? n : 1) * (size_t)d * sizeof(double), 0);
    for (size_t i = 0; i < n; i++) {
        for (int a = 0; a < d; a++) {
            int arg = 2 + a;
            double v;
            if (*many) {
                if (lua_geti(L, arg, (lua_Integer)i + 1) != LUA_TNUMBER)
                    luaL_error(L, "%s: coordinate %d, entry %d must be a number (m), got %s", name, a + 1, (int)i + 1,
                               luaL_typename(L, -1));
                v = lua_tonumber(L, -1);
                lua_pop(L, 1);
            } else {
                v = lua_tonumber(L, arg);
            }
            pts[i * (size_t)d + a] = v;
        }
    }
    *count = n;
    return pts;
}

static int values_at(lua_State *L, int density, const char *name)
{
    pf_wave *w = pfl_check_wave(L, 1);
    int d = pf_grid_dim(pf_wave_grid(w));
    size_t count;
    int many;
    double *pts = read_points(L, d, name, &count, &many);
    double complex *out = lua_newuserdatauv(L, (count ? count : 1) * sizeof(double complex), 0);
    if (count) pfl_check(L, pf_wave_values_at(w, count, pts, out), name);
    if (!many) {
        if (density) lua_pushnumber(L, creal(out[0]) * creal(out[0]) + cimag(out[0]) * cimag(out[0]));
        else pfl_push_complex(L, out[0]);
        return 1;
    }
    lua_createtable(L, (int)count, 0);
    for (size_t i = 0; i < count; i++) {
        if (density) lua_pushnumber(L, creal(out[i]) * creal(out[i]) + cimag(out[i]) * cimag(out[i]));
        else pfl_push_complex(L, out[i]);
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
    return 1;
}

/* w:psi_at(x [, y, z]) -> complex, or a table of complex for tables */
static int l_psi_at(lua_State *L) { return values_at(L, 0, "psi_at"); }
/* w:density_at(x [, y, z]) -> |psi|^2 (m^-d), or a table */
static int l_density_at(lua_State *L) { return values_at(L, 1, "density_at"); }

void pfl_open_interp(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {{"psi_at", l_psi_at}, {"density_at", l_density_at}, {NULL, NULL}};
    pfl_add_wave_methods(L, methods);
}
