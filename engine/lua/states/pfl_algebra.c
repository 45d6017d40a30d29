/* pfl_algebra.c - arithmetic on wave functions in Lua: a * psi1 + b * psi2
 * through the operators + - * / and unary minus (each makes a new wave),
 * the in-place w:add(other [, factor]) and the inner product w:inner(other)
 * (the one spelling of <w|v>: w:overlap is refused with a pointer here).
 *
 * Operator results are not normalised: a * psi1 + b * psi2 is exactly that
 * sum; call :normalize() when a state is wanted. */
#include "pf_algebra.h"
#include "pf_frame.h"
#include "pfl.h"

/* New wave = copy of w scaled by a. */
static pf_wave *scaled_copy(lua_State *L, pf_wave *w, double complex a, const char *name)
{
    pf_wave **slot = pfl_push_wave_slot(L);
    pfl_check(L, pf_wave_copy(w, slot), name);
    pf_wave *c = *slot;
    pfl_check(L, pf_wave_scale(c, a), name);
    return c;
}

static int l_add_op(lua_State *L)
{
    pf_wave *a = pfl_check_wave(L, 1), *b = pfl_check_wave(L, 2);
    pf_wave *c = scaled_copy(L, a, 1.0, "+");
    pfl_check(L, pf_wave_lab_axpy(c, 1.0, b), "+");
    return 1;
}

static int l_sub_op(lua_State *L)
{
    pf_wave *a = pfl_check_wave(L, 1), *b = pfl_check_wave(L, 2);
    pf_wave *c = scaled_copy(L, a, 1.0, "-");
    pfl_check(L, pf_wave_lab_axpy(c, -1.0, b), "-");
    return 1;
}

/* number * wave or wave * number (number may be complex). */
static int l_mul_op(lua_State *L)
{
    int wi = luaL_testudata(L, 1, PFL_WAVE_TYPE) ? 1 : 2;
    pf_wave *w = pfl_check_wave(L, wi);
    if (luaL_testudata(L, 3 - wi, PFL_WAVE_TYPE))
        return luaL_error(L, "*: a wave function can be multiplied by a number, not by another wave function");
    double complex a = pfl_check_complex(L, 3 - wi);
    scaled_copy(L, w, a, "*");
    return 1;
}

/* The complex type's own __mul runs first in `z * wave`; this wrapper (set
 * on the complex metatable) hands such products to l_mul_op and everything
 * else to the original metamethod (upvalue 1). */
static int l_complex_mul(lua_State *L)
{
    if (luaL_testudata(L, 1, PFL_WAVE_TYPE) || luaL_testudata(L, 2, PFL_WAVE_TYPE)) {
        /* Called through Lua, not in C, so l_mul_op is the running function
         * the frame guard finds by name ("wave:__mul"). */
        lua_pushcfunction(L, l_mul_op);
        lua_insert(L, 1);
        lua_call(L, lua_gettop(L) - 1, 1);
        return 1;
    }
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_insert(L, 1);
    lua_call(L, lua_gettop(L) - 1, 1);
    return 1;
}

static int l_div_op(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double complex a = pfl_check_complex(L, 2);
    if (a == 0) return luaL_error(L, "/: division of a wave function by zero");
    scaled_copy(L, w, 1.0 / a, "/");
    return 1;
}

static int l_unm_op(lua_State *L)
{
    scaled_copy(L, pfl_check_wave(L, 1), -1.0, "unary -");
    return 1;
}

/* w:add(other [, factor = 1]) -> w, with w <- w + factor * other. */
static int l_add(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1), *o = pfl_check_wave(L, 2);
    double complex a = lua_isnoneornil(L, 3) ? 1.0 : pfl_check_complex(L, 3);
    return pfl_return_self(L, pf_wave_lab_axpy(w, a, o), "add");
}

/* w:inner(other) -> <w|other> as a complex number. */
static int l_inner(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1), *o = pfl_check_wave(L, 2);
    double complex z;
    pfl_check(L, pf_wave_lab_inner(w, o, &z), "inner");
    pfl_push_complex(L, z);
    return 1;
}

void pfl_open_algebra(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {{"add", l_add}, {"inner", l_inner}, {NULL, NULL}};
    static const luaL_Reg meta[] = {
        {"__add", l_add_op}, {"__sub", l_sub_op}, {"__mul", l_mul_op},
        {"__div", l_div_op}, {"__unm", l_unm_op}, {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
    static const pfl_renamed renamed[] = {{"overlap", "inner"}, {NULL, NULL}};
    pfl_refuse_methods(L, PFL_WAVE_TYPE, "wave:", renamed);
    luaL_getmetatable(L, PFL_WAVE_TYPE);
    luaL_setfuncs(L, meta, 0);
    lua_pop(L, 1);
    /* The operators combine lab wave functions (pf_wave_lab_axpy; scaling
     * commutes with the frame), so they are named for the frame guard (pfl_aware.c). */
    pfl_frame_name_functions(L, "wave:", meta);
    if (luaL_getmetatable(L, PFL_COMPLEX_TYPE) == LUA_TTABLE) {
        lua_getfield(L, -1, "__mul");
        lua_pushcclosure(L, l_complex_mul, 1);
        lua_setfield(L, -2, "__mul");
    }
    lua_pop(L, 1);
}
