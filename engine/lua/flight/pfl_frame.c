/* pfl_frame.c - the moving frame in the Lua binding: the refusal of a
 * moved frame by every function not flagged FRAME in pfl_aware.c, the
 * acceleration option and its per-script default, and the frame's own
 * methods (w:frame, w:x_axis, w:k_axis).
 *
 * A wave whose frame is moved (pf_frame.h) stores its cloud on a co-moving
 * grid; a method written for grid states would silently report grid
 * coordinates or grid momenta as if they were the lab's.  So pfl_check_wave
 * asks pfl_frame_guard, which refuses a moved wave unless the Lua function
 * running is flagged FRAME in pfl_aware.c.  A method that converts to the
 * lab (through the core's pf_wave_lab_* functions or by hand) gets the flag
 * there; nothing else needs to change. */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_frame.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

/* Registry slots (addresses of these statics). */
static const char NAMES_SLOT = 'N';   /* C function -> script name */
static const char DEFAULT_SLOT = 'A'; /* pf.setup acceleration default: array of numbers, or absent */

static void push_names(lua_State *L)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &NAMES_SLOT) == LUA_TTABLE) return;
    lua_pop(L, 1);
    lua_newtable(L);
    lua_pushvalue(L, -1);
    lua_rawsetp(L, LUA_REGISTRYINDEX, &NAMES_SLOT);
}

void pfl_frame_name_functions(lua_State *L, const char *prefix, const luaL_Reg *funcs)
{
    push_names(L);
    for (; funcs->name; funcs++) {
        lua_pushcfunction(L, funcs->func);
        lua_pushfstring(L, "%s%s", prefix, funcs->name);
        lua_rawset(L, -3);
    }
    lua_pop(L, 1);
}

/* Pushes the script name of the running C function, or nil when unknown
 * (also for the distributed-grid guard, pfl_dist.c). */
void pfl_push_running_name(lua_State *L)
{
    lua_Debug ar;
    if (!lua_getstack(L, 0, &ar) || !lua_getinfo(L, "f", &ar)) {
        lua_pushnil(L);
        return;
    }
    push_names(L);
    lua_insert(L, -2);
    lua_rawget(L, -2);
    lua_remove(L, -2);
}

void pfl_frame_guard(lua_State *L, int arg, const pf_wave *w)
{
    if (!pf_wave_frame_moved(w)) return;
    pfl_push_running_name(L);
    const char *name = lua_tostring(L, -1);
    if (name && pfl_aware(name, PFL_AWARE_FRAME)) {
        lua_pop(L, 1);
        return;
    }
    pf_frame f;
    pf_wave_frame(w, &f);
    int d = pf_grid_dim(pf_wave_grid(w));
    char where[200];
    if (d == 1) snprintf(where, sizeof where, "offset %g m, %g rad/m", f.position[0], f.wavenumber[0]);
    else if (d == 2)
        snprintf(where, sizeof where, "offset (%g, %g) m, (%g, %g) rad/m", f.position[0], f.position[1],
                 f.wavenumber[0], f.wavenumber[1]);
    else
        snprintf(where, sizeof where, "offset (%g, %g, %g) m, (%g, %g, %g) rad/m", f.position[0], f.position[1],
                 f.position[2], f.wavenumber[0], f.wavenumber[1], f.wavenumber[2]);
    const char *shown = name ? name : pfl_caller_name(L);
    char what[40] = "";
    if (arg > 1) snprintf(what, sizeof what, " (argument %d)", arg);
    luaL_error(L,
               "%s does not support a wave in a moving frame%s (%s; from a flight with acceleration or a kick "
               "into the frame); it would report grid values as lab ones (docs/frames.md lists what does)",
               shown, what, where);
}

/* ---- acceleration: option and per-script default ---- */

static int finite_entry(lua_State *L, int type, double *out)
{
    *out = lua_tonumber(L, -1);
    return type == LUA_TNUMBER && isfinite(*out);
}

int pfl_frame_setup_read(lua_State *L, int t, double *values, int *count)
{
    int type = pfl_option_get(L, t, "acceleration");
    *count = 0;
    if (type == LUA_TNIL) {
        lua_pop(L, 1);
        return 0;
    }
    if (type == LUA_TBOOLEAN && !lua_toboolean(L, -1)) {
        lua_pop(L, 1);
        return 1; /* false: no default any more */
    }
    char buf[80];
    if (type == LUA_TNUMBER) {
        values[0] = lua_tonumber(L, -1);
        *count = 1;
    } else if (type == LUA_TTABLE) {
        /* the grid is not known yet: 1 to 3 axes */
        static const pfl_axis_list list = {"pf.setup", "acceleration", 1, PF_MAX_DIM, "a finite number (m/s^2)",
                                           finite_entry};
        *count = pfl_read_axis_list(L, &list, values);
    } else {
        luaL_error(L, "pf.setup: field 'acceleration' must be one value per axis (m/s^2) or false, got %s",
                   pfl_describe(L, -1, buf, sizeof buf));
    }
    for (int a = 0; a < *count; a++)
        if (!isfinite(values[a]))
            luaL_error(L, "pf.setup: field 'acceleration' must be finite (m/s^2), got %g", values[a]);
    lua_pop(L, 1);
    return 1;
}

void pfl_frame_setup_apply(lua_State *L, const double *values, int count)
{
    if (count == 0) {
        lua_pushnil(L);
    } else {
        lua_createtable(L, count, 0);
        for (int a = 0; a < count; a++) {
            lua_pushnumber(L, values[a]);
            lua_rawseti(L, -2, a + 1);
        }
    }
    lua_rawsetp(L, LUA_REGISTRYINDEX, &DEFAULT_SLOT);
}

static int frame_default_acceleration(lua_State *L, double *out)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &DEFAULT_SLOT) != LUA_TTABLE) {
        lua_pop(L, 1);
        return 0;
    }
    int n = (int)lua_rawlen(L, -1);
    for (int a = 0; a < n; a++) {
        lua_rawgeti(L, -1, a + 1);
        out[a] = lua_tonumber(L, -1);
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    return n;
}

int pfl_frame_acceleration(lua_State *L, int opts, int dim, double *out, const char *fname)
{
    for (int a = 0; a < PF_MAX_DIM; a++) out[a] = 0.0;
    if (opts && pfl_option_get(L, opts, "acceleration") != LUA_TNIL) {
        int idx = lua_gettop(L);
        if (lua_type(L, idx) == LUA_TBOOLEAN && !lua_toboolean(L, idx)) {
            lua_pop(L, 1);
            return 0; /* acceleration = false: none, whatever the default */
        }
        char what[80];
        snprintf(what, sizeof what, "%s: acceleration (m/s^2)", fname);
        pfl_check_axis_values(L, idx, dim, out, what);
        lua_pop(L, 1);
        return 1;
    }
    if (opts) lua_pop(L, 1);
    double def[PF_MAX_DIM];
    int n = frame_default_acceleration(L, def);
    if (n == 0) return 0;
    if (n != dim)
        return luaL_error(L, "%s: the acceleration set with pf.setup has %d value%s but the wave is %dD; give "
                             "'acceleration' for this call", fname, n, n == 1 ? "" : "s", dim);
    for (int a = 0; a < dim; a++) out[a] = def[a];
    return 1;
}

/* ---- methods ---- */

static void push_vector(lua_State *L, const double *v, int d, double factor)
{
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_pushnumber(L, v[a] * factor);
        lua_rawseti(L, -2, a + 1);
    }
}

/* w:frame() -> {position = {m}, wavenumber = {rad/m}, momentum = {kg m/s},
 *               velocity = {m/s}, phase = rad, moved = bool} */
static int l_frame(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    int d = pf_grid_dim(pf_wave_grid(w));
    pf_frame f;
    pf_wave_frame(w, &f);
    lua_createtable(L, 0, 6);
    push_vector(L, f.position, d, 1.0);
    lua_setfield(L, -2, "position");
    push_vector(L, f.wavenumber, d, 1.0);
    lua_setfield(L, -2, "wavenumber");
    push_vector(L, f.wavenumber, d, PF_HBAR);
    lua_setfield(L, -2, "momentum");
    push_vector(L, f.wavenumber, d, PF_HBAR / pf_wave_mass(w));
    lua_setfield(L, -2, "velocity");
    lua_pushnumber(L, f.phase);
    lua_setfield(L, -2, "phase");
    lua_pushboolean(L, pf_wave_frame_moved(w));
    lua_setfield(L, -2, "moved");
    return 1;
}

static int axis_arg(lua_State *L, int arg, const pf_grid *g)
{
    lua_Integer a = luaL_optinteger(L, arg, 1);
    if (a < 1 || a > pf_grid_dim(g))
        luaL_argerror(L, arg, lua_pushfstring(L, "axis must be 1..%d, got %d", pf_grid_dim(g), (int)a));
    return (int)a - 1;
}

/* w:x_axis([axis]) -> lab positions of the grid points along the axis (m);
 * w:k_axis([axis]) -> lab wave numbers in ascending order (rad/m).  Both are
 * the grid's own axis shifted by the frame's offset on that axis. */
static int push_lab_axis(lua_State *L, int wavenumbers)
{
    pf_wave *w = pfl_check_wave(L, 1);
    const pf_grid *g = pf_wave_grid(w);
    int a = axis_arg(L, 2, g);
    pf_frame f;
    pf_wave_frame(w, &f);
    size_t n = pf_grid_points(g, a);
    lua_createtable(L, (int)n, 0);
    for (size_t j = 0; j < n; j++) {
        double v = wavenumbers ? pf_grid_k(g, a, pf_grid_fft_index(g, a, j)) + f.wavenumber[a]
                               : pf_grid_x(g, a, j) + f.position[a];
        lua_pushnumber(L, v);
        lua_rawseti(L, -2, (lua_Integer)j + 1);
    }
    return 1;
}

static int l_x_axis(lua_State *L) { return push_lab_axis(L, 0); }
static int l_k_axis(lua_State *L) { return push_lab_axis(L, 1); }

/* pf._frame_aware() -> the names of the functions that handle a moved
 * frame (pfl_aware.c), sorted (for the tests). */
static int l_frame_aware(lua_State *L)
{
    pfl_push_aware_list(L, PFL_AWARE_FRAME);
    return 1;
}

/* pf._frame_guard_probe(w) -> true: reads w as every binding function does
 * (pfl_check_wave) without the FRAME flag (pfl_aware.c), so the tests see the
 * refusal a new, unlisted function would give a moved wave, now that every
 * wave-reading function is listed. */
static int l_frame_guard_probe(lua_State *L)
{
    pfl_check_wave(L, 1);
    lua_pushboolean(L, 1);
    return 1;
}

void pfl_open_frame(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"frame", l_frame}, {"x_axis", l_x_axis}, {"k_axis", l_k_axis}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"_frame_aware", l_frame_aware}, {"_frame_guard_probe", l_frame_guard_probe}, {NULL, NULL}};
    pfl_add_wave_methods(L, methods);
    pfl_add_functions(L, mod, funcs);
}
