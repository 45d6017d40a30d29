/* pfl_args.c - argument checking shared by the binding's functions.
 *
 * Every message names the argument or table field and shows the bad value, so
 * a user can find it in the script line the error points to. */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pfl_options.h"
#include "pfl_measure.h"
#include "pfl_protocol.h"

const char *pfl_describe(lua_State *L, int idx, char *buf, size_t size)
{
    switch (lua_type(L, idx)) {
    case LUA_TNUMBER:
        if (isnan(lua_tonumber(L, idx)))
            snprintf(buf, size, "nan"); /* printf may say -nan; the sign of a NaN means nothing */
        else if (lua_isinteger(L, idx))
            snprintf(buf, size, "%lld", (long long)lua_tointeger(L, idx));
        else
            snprintf(buf, size, "%.17g", lua_tonumber(L, idx));
        break;
    case LUA_TSTRING: {
        const char *s = lua_tostring(L, idx);
        snprintf(buf, size, "'%.40s%s'", s, strlen(s) > 40 ? "..." : "");
        break;
    }
    default:
        snprintf(buf, size, "a %s", luaL_typename(L, idx));
    }
    return buf;
}

const char *pfl_caller_name(lua_State *L)
{
    lua_Debug ar;
    if (lua_getstack(L, 0, &ar) && lua_getinfo(L, "n", &ar) && ar.name) return ar.name;
    return "psiflight";
}

/* Raises "NAME: field ..." so table-field errors name the function too. */
static int field_error(lua_State *L, const char *fmt, const char *field, const char *extra)
{
    char msg[300];
    snprintf(msg, sizeof msg, fmt, field, extra);
    return luaL_error(L, "%s: %s", pfl_caller_name(L), msg);
}

lua_Integer pfl_tointegerx(lua_State *L, int idx, int *ok)
{
    int isint = 0;
    lua_Integer v = lua_type(L, idx) == LUA_TNUMBER ? lua_tointegerx(L, idx, &isint) : 0;
    if (ok) *ok = isint;
    return isint ? v : 0;
}

double pfl_check_finite(lua_State *L, int arg, const char *what)
{
    char buf[80], msg[200];
    if (lua_type(L, arg) == LUA_TNUMBER) {
        double v = lua_tonumber(L, arg);
        if (isfinite(v)) return v;
    }
    snprintf(msg, sizeof msg, "%s must be a finite number, got %s", what, pfl_describe(L, arg, buf, sizeof buf));
    luaL_argerror(L, arg, msg);
    return 0;
}

double pfl_check_positive(lua_State *L, int arg, const char *what)
{
    char buf[80], msg[200];
    double v = pfl_check_finite(L, arg, what);
    if (v > 0) return v;
    snprintf(msg, sizeof msg, "%s must be positive, got %s", what, pfl_describe(L, arg, buf, sizeof buf));
    luaL_argerror(L, arg, msg);
    return 0;
}

double pfl_field_number(lua_State *L, int t, const char *field, double def, int required)
{
    char buf[80];
    int type = pfl_option_get(L, t, field);
    if (type == LUA_TNIL) {
        lua_pop(L, 1);
        if (required) field_error(L, "missing field '%s'%s", field, "");
        return def;
    }
    double v = lua_tonumber(L, -1);
    if (type != LUA_TNUMBER || !isfinite(v))
        field_error(L, "field '%s' must be a finite number, got %s", field, pfl_describe(L, -1, buf, sizeof buf));
    lua_pop(L, 1);
    return v;
}

double pfl_field_positive_opt(lua_State *L, int t, const char *field, const char *unit, const char *fname)
{
    double v = pfl_field_number(L, t, field, 0, 0);
    if (pfl_option_get(L, t, field) != LUA_TNIL && !(v > 0)) {
        char buf[80];
        luaL_error(L, "%s: field '%s' must be positive (%s), got %s", fname, field, unit,
                   pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    return v;
}

void pfl_set_number(lua_State *L, const char *name, double v)
{
    lua_pushnumber(L, v);
    lua_setfield(L, -2, name);
}

void pfl_set_vector(lua_State *L, const char *name, const double *v, int d)
{
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_pushnumber(L, v[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, name);
}

void pfl_set_counts(lua_State *L, const char *name, const size_t *v, int d)
{
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_pushinteger(L, (lua_Integer)v[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, name);
}

int pfl_field_vector_of(lua_State *L, int t, const char *field, int dim, double *out, int required, int positive)
{
    char buf[80];
    const char *kind = positive ? "a positive" : "a finite";
    int type = pfl_option_get(L, t, field);
    if (type == LUA_TNIL) {
        lua_pop(L, 1);
        if (required) field_error(L, "missing field '%s'%s", field, "");
        return 0;
    }
    if (type == LUA_TNUMBER) {
        double v = lua_tonumber(L, -1);
        if (!isfinite(v) || (positive && !(v > 0))) {
            char what[120];
            snprintf(what, sizeof what, "%s number, got %s", kind, pfl_describe(L, -1, buf, sizeof buf));
            field_error(L, "field '%s' must be %s", field, what);
        }
        for (int a = 0; a < dim; a++) out[a] = v;
        lua_pop(L, 1);
        return 1;
    }
    if (type != LUA_TTABLE) {
        char what[120];
        snprintf(what, sizeof what, "%d numbers, got %s", dim, pfl_describe(L, -1, buf, sizeof buf));
        field_error(L, "field '%s' must be a number or a table of %s", field, what);
    }
    lua_Integer len = luaL_len(L, -1);
    if (len != dim) {
        char what[80];
        snprintf(what, sizeof what, "%d entries (one per axis), got %d", dim, (int)len);
        field_error(L, "field '%s' must have %s", field, what);
    }
    for (int a = 0; a < dim; a++) {
        int et = lua_geti(L, -1, a + 1);
        double v = lua_tonumber(L, -1);
        if (et != LUA_TNUMBER || !isfinite(v) || (positive && !(v > 0))) {
            char what[120];
            snprintf(what, sizeof what, "%d must be %s number, got %s", a + 1, kind, pfl_describe(L, -1, buf, sizeof buf));
            field_error(L, "field '%s' entry %s", field, what);
        }
        out[a] = v;
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    return 1;
}

int pfl_read_axis_list(lua_State *L, const pfl_axis_list *spec, double *out)
{
    lua_Integer n = luaL_len(L, -1);
    if (n < spec->lo || n > spec->hi) {
        char count[40];
        if (spec->lo == spec->hi) snprintf(count, sizeof count, "%d", spec->lo);
        else snprintf(count, sizeof count, "%d to %d", spec->lo, spec->hi);
        luaL_error(L, "%s: field '%s' must have %s entries (one per axis), got %d", spec->fname, spec->field, count,
                   (int)n);
    }
    for (int a = 0; a < (int)n; a++) {
        int type = lua_geti(L, -1, a + 1);
        if (!spec->entry(L, type, &out[a])) {
            char buf[80];
            luaL_error(L, "%s: field '%s' entry %d must be %s, got %s", spec->fname, spec->field, a + 1, spec->rule,
                       pfl_describe(L, -1, buf, sizeof buf));
        }
        lua_pop(L, 1);
    }
    return (int)n;
}

int pfl_field_vector(lua_State *L, int t, const char *field, int dim, double *out, int required)
{
    return pfl_field_vector_of(L, t, field, dim, out, required, 0);
}

int pfl_opt_axis(lua_State *L, int opts, const char *field, int dim, int def)
{
    if (!opts) return def;
    int a = def;
    if (pfl_option_get(L, opts, field) != LUA_TNIL) {
        int ok;
        lua_Integer v = pfl_tointegerx(L, -1, &ok);
        if (!ok || v < 1 || v > dim) {
            char buf[64];
            luaL_error(L, "%s: field '%s' must be an axis 1..%d, got %s", pfl_caller_name(L), field, dim,
                       pfl_describe(L, -1, buf, sizeof buf));
        }
        a = (int)v;
    }
    lua_pop(L, 1);
    return a;
}

int pfl_field_axis(lua_State *L, int t, const char *field, const pf_grid *g, int def, const char *name)
{
    (void)name; /* the message names the calling function (pfl_caller_name) */
    return pfl_opt_axis(L, t, field, pf_grid_dim(g), def) - 1;
}

lua_Integer pfl_field_integer(lua_State *L, int t, const char *field, lua_Integer def, lua_Integer min,
                              const char *name)
{
    int type = pfl_option_get(L, t, field);
    if (type == LUA_TNIL) {
        lua_pop(L, 1);
        return def;
    }
    int ok;
    lua_Integer v = pfl_tointegerx(L, -1, &ok);
    if (!ok || v < min) {
        char buf[80];
        luaL_error(L, "%s: field '%s' must be an integer of at least %d, got %s", name, field, (int)min,
                   pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    return v;
}

int pfl_field_space(lua_State *L, int t, pf_rep *rep)
{
    int type = pfl_option_get(L, t, "space");
    const char *s = type == LUA_TSTRING ? lua_tostring(L, -1) : "";
    if (type != LUA_TNIL) {
        if (strcmp(s, "position") == 0) *rep = PF_POSITION;
        else if (strcmp(s, "momentum") == 0) *rep = PF_MOMENTUM;
        else {
            char buf[80];
            field_error(L, "field '%s' must be \"position\" or \"momentum\", got %s", "space",
                        pfl_describe(L, -1, buf, sizeof buf));
        }
    }
    lua_pop(L, 1);
    return type != LUA_TNIL;
}

pf_rep pfl_opt_space(lua_State *L, int opts)
{
    pf_rep rep = PF_POSITION;
    if (opts) pfl_field_space(L, opts, &rep);
    return rep;
}

int pfl_field_boolean(lua_State *L, int t, const char *field, int def)
{
    int type = pfl_option_get(L, t, field);
    int v = type == LUA_TNIL ? def : lua_toboolean(L, -1);
    if (type != LUA_TNIL && type != LUA_TBOOLEAN) {
        char buf[80];
        field_error(L, "field '%s' must be true or false, got %s", field, pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    return v;
}

void pfl_add_functions(lua_State *L, int mod, const luaL_Reg *funcs)
{
    mod = lua_absindex(L, mod);
    pfl_frame_name_functions(L, "pf.", funcs);
    for (; funcs->name; funcs++) {
        lua_pushcfunction(L, funcs->func);
        lua_setfield(L, mod, funcs->name);
    }
}

void pfl_push_string_list(lua_State *L, const char *const *list)
{
    lua_newtable(L);
    for (int i = 0; list[i]; i++) {
        lua_pushstring(L, list[i]);
        lua_rawseti(L, -2, i + 1);
    }
}
