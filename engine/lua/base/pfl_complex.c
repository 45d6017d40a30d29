/* pfl_complex.c - complex numbers for Lua: a small immutable userdata with
 * arithmetic metamethods, so user callbacks can return psi or phi values.
 *
 * Representation (docs/lua-api.md): pf.complex(re, im) or pf.polar(r, theta);
 * z.re, z.im, z:abs(), z:arg(), z:conj(), pf.cexp(z); arithmetic mixes freely
 * with Lua numbers.  Callbacks may also return a number, or two numbers. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pfl.h"

typedef struct { double re, im; } pfl_complex;

void pfl_push_complex(lua_State *L, double complex z)
{
    pfl_complex *c = lua_newuserdatauv(L, sizeof *c, 0);
    c->re = creal(z);
    c->im = cimag(z);
    luaL_setmetatable(L, PFL_COMPLEX_TYPE);
}

int pfl_to_complex(lua_State *L, int idx, double complex *z)
{
    if (lua_type(L, idx) == LUA_TNUMBER) {
        *z = lua_tonumber(L, idx);
        return 1;
    }
    pfl_complex *c = luaL_testudata(L, idx, PFL_COMPLEX_TYPE);
    if (!c) return 0;
    *z = c->re + I * c->im;
    return 1;
}

double complex pfl_check_complex(lua_State *L, int arg)
{
    double complex z;
    if (!pfl_to_complex(L, arg, &z)) {
        char buf[80], msg[160];
        snprintf(msg, sizeof msg, "number or complex expected, got %s", pfl_describe(L, arg, buf, sizeof buf));
        luaL_argerror(L, arg, msg);
    }
    return z;
}

int pfl_result_complex(lua_State *L, int idx, int nret, double complex *z)
{
    if (nret >= 2 && lua_type(L, idx) == LUA_TNUMBER && lua_type(L, idx + 1) == LUA_TNUMBER) {
        *z = lua_tonumber(L, idx) + I * lua_tonumber(L, idx + 1);
        return 1;
    }
    if (nret >= 1 && pfl_to_complex(L, idx, z)) return 1;
    return 0;
}

static int l_new(lua_State *L)
{
    double re = pfl_check_finite(L, 1, "real part");
    double im = lua_isnoneornil(L, 2) ? 0.0 : pfl_check_finite(L, 2, "imaginary part");
    pfl_push_complex(L, re + I * im);
    return 1;
}

static int l_polar(lua_State *L)
{
    double r = pfl_check_finite(L, 1, "modulus");
    double th = pfl_check_finite(L, 2, "phase");
    pfl_push_complex(L, r * cexp(I * th));
    return 1;
}

static int l_cexp(lua_State *L)
{
    pfl_push_complex(L, cexp(pfl_check_complex(L, 1)));
    return 1;
}

static int l_add(lua_State *L) { pfl_push_complex(L, pfl_check_complex(L, 1) + pfl_check_complex(L, 2)); return 1; }
static int l_sub(lua_State *L) { pfl_push_complex(L, pfl_check_complex(L, 1) - pfl_check_complex(L, 2)); return 1; }
static int l_mul(lua_State *L) { pfl_push_complex(L, pfl_check_complex(L, 1) * pfl_check_complex(L, 2)); return 1; }
static int l_div(lua_State *L) { pfl_push_complex(L, pfl_check_complex(L, 1) / pfl_check_complex(L, 2)); return 1; }
static int l_unm(lua_State *L) { pfl_push_complex(L, -pfl_check_complex(L, 1)); return 1; }

static int l_pow(lua_State *L)
{
    double complex a = pfl_check_complex(L, 1), b = pfl_check_complex(L, 2);
    /* Integer powers by repeated multiplication keep small powers exact. */
    if (cimag(b) == 0 && creal(b) == floor(creal(b)) && fabs(creal(b)) <= 64) {
        long n = (long)creal(b);
        double complex r = 1, base = n < 0 ? 1.0 / a : a;
        for (long k = labs(n); k > 0; k >>= 1, base *= base)
            if (k & 1) r *= base;
        pfl_push_complex(L, r);
    } else {
        pfl_push_complex(L, cpow(a, b));
    }
    return 1;
}

static int l_eq(lua_State *L)
{
    double complex a, b;
    lua_pushboolean(L, pfl_to_complex(L, 1, &a) && pfl_to_complex(L, 2, &b) && a == b);
    return 1;
}

static int l_tostring(lua_State *L)
{
    double complex z = pfl_check_complex(L, 1);
    char buf[96];
    snprintf(buf, sizeof buf, "%.14g%+.14gi", creal(z), cimag(z));
    lua_pushstring(L, buf);
    return 1;
}

static int l_abs(lua_State *L) { lua_pushnumber(L, cabs(pfl_check_complex(L, 1))); return 1; }
static int l_arg(lua_State *L) { lua_pushnumber(L, carg(pfl_check_complex(L, 1))); return 1; }
static int l_conj(lua_State *L) { pfl_push_complex(L, conj(pfl_check_complex(L, 1))); return 1; }
static int l_abs2(lua_State *L)
{
    double complex z = pfl_check_complex(L, 1);
    lua_pushnumber(L, creal(z) * creal(z) + cimag(z) * cimag(z));
    return 1;
}

static int l_index(lua_State *L)
{
    pfl_complex *c = luaL_checkudata(L, 1, PFL_COMPLEX_TYPE);
    const char *key = lua_tostring(L, 2);
    if (key && strcmp(key, "re") == 0) { lua_pushnumber(L, c->re); return 1; }
    if (key && strcmp(key, "im") == 0) { lua_pushnumber(L, c->im); return 1; }
    /* Methods live in the metatable's "methods" table. */
    luaL_getmetatable(L, PFL_COMPLEX_TYPE);
    lua_getfield(L, -1, "methods");
    lua_pushvalue(L, 2);
    lua_rawget(L, -2);
    return 1;
}

void pfl_open_complex(lua_State *L, int mod)
{
    static const luaL_Reg meta[] = {
        {"__add", l_add}, {"__sub", l_sub}, {"__mul", l_mul}, {"__div", l_div},
        {"__unm", l_unm}, {"__pow", l_pow}, {"__eq", l_eq}, {"__tostring", l_tostring},
        {"__index", l_index}, {NULL, NULL},
    };
    static const luaL_Reg methods[] = {
        {"abs", l_abs}, {"arg", l_arg}, {"conj", l_conj}, {"abs2", l_abs2}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {
        {"complex", l_new}, {"polar", l_polar}, {"cexp", l_cexp}, {NULL, NULL},
    };
    mod = lua_absindex(L, mod);
    /* methods live under "methods": __index is l_index, which also answers .re and .im */
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_COMPLEX_TYPE, .meta = meta, .methods = methods,
                                               .methods_field = "methods", .funcs = funcs});
    pfl_push_complex(L, I);
    lua_setfield(L, mod, "i");
}
