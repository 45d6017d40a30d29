/* pfl_params.c - pf.parameters: a script declares its parameters (default,
 * unit, one-line help) and receives their values, defaults overridden by the
 * runner's --set NAME=VALUE, converted to SI.
 *
 * One rule for units, documented in docs/runner.md: everything a person types
 * (the default in the declaration, a --set value, a sweep range) is a number
 * in the declared unit, or a number with a unit suffix of the same quantity;
 * the script always receives SI.  So `tof = {default = 18, unit = "ms"}` and
 * `--set tof=18` and `--set tof=18ms` and `--set tof=0.018s` all give 0.018. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pfl_options.h"
#include "pfl.h"
#include "pfl_params.h"
#include "pfl_suffix.h"

static const char STATE_KEY = 'P';
static const char HELP_STOP = 'H';

typedef enum ptype { P_NUMBER, P_INTEGER, P_STRING, P_BOOLEAN } ptype;
static const char *const type_names[] = {"number", "integer", "string", "boolean", NULL};

/* The state table in the registry: overrides = {name = text}, order = {names},
 * help = bool, label = string, texts = {name = text}, declared = "file:line",
 * reads = {name = true} (names read through pf.params), stopped = bool (the
 * help stop was raised). */
static int push_state(lua_State *L)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &STATE_KEY) == LUA_TTABLE) return lua_gettop(L);
    lua_pop(L, 1);
    lua_createtable(L, 0, 6);
    lua_newtable(L);
    lua_setfield(L, -2, "overrides");
    lua_newtable(L);
    lua_setfield(L, -2, "order");
    lua_newtable(L);
    lua_setfield(L, -2, "texts");
    lua_newtable(L);
    lua_setfield(L, -2, "reads");
    lua_pushvalue(L, -1);
    lua_rawsetp(L, LUA_REGISTRYINDEX, &STATE_KEY);
    return lua_gettop(L);
}

void pfl_params_configure(lua_State *L, int nsets, char *const *sets, int help, const char *label)
{
    int st = push_state(L);
    lua_getfield(L, st, "overrides");
    lua_getfield(L, st, "order");
    for (int i = 0; i < nsets; i++) {
        const char *eq = strchr(sets[i], '=');
        if (!eq) continue;
        lua_pushlstring(L, sets[i], (size_t)(eq - sets[i]));
        lua_pushvalue(L, -1);
        lua_rawseti(L, -3, (lua_Integer)lua_rawlen(L, -3) + 1);
        lua_pushstring(L, eq + 1);
        lua_settable(L, -4); /* a later --set of the same name wins */
    }
    lua_pop(L, 2);
    lua_pushboolean(L, help);
    lua_setfield(L, st, "help");
    lua_pushstring(L, label ? label : "script");
    lua_setfield(L, st, "label");
    lua_settop(L, st - 1);
}

/* __index of pf.params (upvalue 1: the raw --set values): notes the read,
 * so a --set that nothing reads is reported at the end of the run. */
static int params_index(lua_State *L)
{
    if (lua_type(L, 2) == LUA_TSTRING) {
        int st = push_state(L);
        lua_getfield(L, st, "reads");
        lua_pushvalue(L, 2);
        lua_pushboolean(L, 1);
        lua_rawset(L, -3);
        lua_settop(L, 2);
    }
    lua_gettable(L, lua_upvalueindex(1));
    return 1;
}

/* __pairs of pf.params: a script that walks the table reads every value. */
static int params_pairs(lua_State *L)
{
    int st = push_state(L);
    lua_getfield(L, st, "reads");
    lua_pushnil(L);
    while (lua_next(L, lua_upvalueindex(1))) {
        lua_pop(L, 1);
        lua_pushvalue(L, -1);
        lua_pushboolean(L, 1);
        lua_rawset(L, -4);
    }
    lua_getglobal(L, "next");
    if (!lua_isfunction(L, -1)) return luaL_error(L, "pairs(pf.params): the global 'next' was replaced");
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_pushnil(L);
    return 3;
}

void pfl_params_publish(lua_State *L, int mod)
{
    mod = lua_absindex(L, mod);
    int st = push_state(L);
    lua_newtable(L); /* raw values: numbers when they look like numbers */
    int raw = lua_gettop(L);
    lua_getfield(L, st, "overrides");
    lua_pushnil(L);
    while (lua_next(L, -2)) {
        const char *text = lua_tostring(L, -1);
        lua_pushvalue(L, -2);
        if (lua_stringtonumber(L, text) == 0) lua_pushvalue(L, -2);
        lua_rawset(L, raw);
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    lua_newtable(L); /* pf.params itself stays empty: every read goes through __index */
    static const luaL_Reg params_meta[] = {{"__index", params_index}, {"__pairs", params_pairs}, {NULL, NULL}};
    lua_createtable(L, 0, 2);
    lua_pushvalue(L, raw); /* both metamethods' upvalue */
    luaL_setfuncs(L, params_meta, 1);
    lua_setmetatable(L, -2);
    lua_setfield(L, mod, "params");
    lua_settop(L, st - 1);
}

const char *pfl_params_unused(lua_State *L)
{
    int st = push_state(L);
    const char *unused = NULL;
    if (lua_getfield(L, st, "declared") == LUA_TNIL) {
        lua_getfield(L, st, "reads");
        lua_getfield(L, st, "order");
        for (lua_Integer k = 1; !unused && k <= (lua_Integer)lua_rawlen(L, -1); k++) {
            lua_rawgeti(L, -1, k);
            if (lua_rawget(L, -3) == LUA_TNIL) {
                lua_rawgeti(L, -2, k);
                unused = lua_tostring(L, -1); /* stays alive in the state's order list */
                lua_pop(L, 1);
            }
            lua_pop(L, 1);
        }
    }
    lua_settop(L, st - 1);
    return unused;
}

void pfl_params_before_work(lua_State *L)
{
    int st = push_state(L);
    lua_getfield(L, st, "help");
    int help = lua_toboolean(L, -1);
    lua_settop(L, st - 1);
    if (!help) return;
    /* --help lists parameters and never computes: a script that gets here
     * has not declared any (pf.parameters stops the script first). */
    lua_pushlightuserdata(L, (void *)&HELP_STOP);
    lua_error(L);
}

int pfl_params_is_help_stop(lua_State *L, int idx)
{
    return lua_type(L, idx) == LUA_TLIGHTUSERDATA && lua_touserdata(L, idx) == (void *)&HELP_STOP;
}

int pfl_params_declared(lua_State *L)
{
    int st = push_state(L);
    int t = lua_getfield(L, st, "declared");
    lua_settop(L, st - 1);
    return t != LUA_TNIL;
}

void pfl_params_push_text(lua_State *L)
{
    int st = push_state(L);
    lua_getfield(L, st, "texts");
    lua_remove(L, st);
}

/* One declared parameter, read from its spec table. */
typedef struct pspec {
    const char *name;
    ptype type;
    const pfl_unit *unit; /* NULL: plain number or not a number */
    int has_min, has_max;
    double min, max;      /* in the declared unit */
    int spec;             /* stack index of the spec table */
} pspec;

static int compare_cstrings(const void *a, const void *b)
{
    return strcmp(*(const char *const *)a, *(const char *const *)b);
}

/* Comma-separated sorted string keys of the table at t, pushed as a string.
 * Done in C: the script may have replaced the global `table`. */
static const char *push_names(lua_State *L, int t)
{
    t = lua_absindex(L, t);
    size_t n = 0;
    lua_pushnil(L);
    while (lua_next(L, t)) {
        lua_pop(L, 1);
        n += lua_type(L, -1) == LUA_TSTRING;
    }
    const char **names = lua_newuserdatauv(L, (n ? n : 1) * sizeof *names, 0); /* the keys stay alive in t */
    size_t k = 0;
    lua_pushnil(L);
    while (lua_next(L, t)) {
        lua_pop(L, 1);
        if (lua_type(L, -1) == LUA_TSTRING) names[k++] = lua_tostring(L, -1);
    }
    qsort(names, n, sizeof *names, compare_cstrings);
    luaL_Buffer b;
    luaL_buffinit(L, &b);
    for (k = 0; k < n; k++) {
        if (k) luaL_addstring(&b, ", ");
        luaL_addstring(&b, names[k]);
    }
    luaL_pushresult(&b);
    lua_remove(L, -2);
    return lua_tostring(L, -1);
}

/* The strings of the list at t joined by ", ", pushed. */
static const char *push_joined(lua_State *L, int t)
{
    t = lua_absindex(L, t);
    luaL_Buffer b;
    luaL_buffinit(L, &b);
    for (lua_Integer i = 1; i <= (lua_Integer)lua_rawlen(L, t); i++) {
        if (i > 1) luaL_addstring(&b, ", ");
        lua_rawgeti(L, t, i);
        luaL_addvalue(&b);
    }
    luaL_pushresult(&b);
    return lua_tostring(L, -1);
}

static int is_identifier(const char *s)
{
    if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || *s == '_')) return 0;
    for (s++; *s; s++)
        if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') || *s == '_')) return 0;
    return 1;
}

static const pfl_options_decl PARAMETER_SPEC_OPTIONS = {
    "pf.parameters spec", (const char *const[]){"default", "unit", "help", "type", "min", "max", "choices", NULL}};

/* Reads and checks the spec of one parameter (table at spec).  Declaration
 * mistakes are script errors. */
static void read_spec(lua_State *L, const char *name, int spec, pspec *p)
{
    char buf[80];
    memset(p, 0, sizeof *p);
    p->name = name;
    p->spec = spec;
    if (!is_identifier(name))
        luaL_error(L, "parameters: name '%s' must be a Lua identifier (letters, digits, _)", name);
    pfl_options_check(L, spec, &PARAMETER_SPEC_OPTIONS);
    if (lua_getfield(L, spec, "help") != LUA_TSTRING || !*lua_tostring(L, -1))
        luaL_error(L, "parameters: '%s' needs a one-line help = \"...\" (shared recipes explain every parameter)", name);
    lua_pop(L, 1);
    if (lua_getfield(L, spec, "unit") != LUA_TNIL) {
        const char *u = lua_tostring(L, -1);
        p->unit = lua_type(L, -1) == LUA_TSTRING ? pfl_unit_find(u) : NULL;
        if (!p->unit)
            luaL_error(L, "parameters: '%s': unit %s is not in the suffix table (docs/runner.md)", name,
                       pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    int td = lua_getfield(L, spec, "default");
    if (td == LUA_TNIL) luaL_error(L, "parameters: '%s' needs a default", name);
    if (lua_getfield(L, spec, "type") != LUA_TNIL) {
        const char *t = lua_tostring(L, -1);
        int i = 0;
        while (type_names[i] && (!t || strcmp(type_names[i], t) != 0)) i++;
        if (!type_names[i])
            luaL_error(L, "parameters: '%s': type must be number, integer, string or boolean, got %s", name,
                       pfl_describe(L, -1, buf, sizeof buf));
        p->type = (ptype)i;
    } else if (p->unit) {
        p->type = P_NUMBER;
    } else if (td == LUA_TNUMBER) {
        p->type = lua_isinteger(L, -2) ? P_INTEGER : P_NUMBER;
    } else if (td == LUA_TBOOLEAN) {
        p->type = P_BOOLEAN;
    } else if (td == LUA_TSTRING) {
        p->type = P_STRING;
    } else {
        luaL_error(L, "parameters: '%s': default must be a number, string or boolean, got %s", name,
                   pfl_describe(L, -2, buf, sizeof buf));
    }
    lua_pop(L, 2);
    if (p->unit && p->type != P_NUMBER) luaL_error(L, "parameters: '%s': only numbers take a unit", name);
    if (lua_getfield(L, spec, "min") != LUA_TNIL) {
        if (lua_type(L, -1) != LUA_TNUMBER) luaL_error(L, "parameters: '%s': min must be a number", name);
        p->has_min = 1;
        p->min = lua_tonumber(L, -1);
    }
    if (lua_getfield(L, spec, "max") != LUA_TNIL) {
        if (lua_type(L, -1) != LUA_TNUMBER) luaL_error(L, "parameters: '%s': max must be a number", name);
        p->has_max = 1;
        p->max = lua_tonumber(L, -1);
    }
    lua_pop(L, 2);
    if (lua_getfield(L, spec, "choices") != LUA_TNIL && (p->type != P_STRING || lua_type(L, -1) != LUA_TTABLE))
        luaL_error(L, "parameters: '%s': choices must be a list of strings for a string parameter", name);
    /* Every entry a string, checked here: --help and the "must be one of"
     * message print them, and a table or boolean would print as "(null)". */
    if (lua_type(L, -1) == LUA_TTABLE) {
        lua_Integer n = (lua_Integer)lua_rawlen(L, -1);
        if (n == 0) luaL_error(L, "parameters: '%s': choices is an empty list", name);
        for (lua_Integer i = 1; i <= n; i++) {
            int t = lua_rawgeti(L, -1, i);
            if (t != LUA_TSTRING)
                luaL_error(L, "parameters: '%s': choices[%d] must be a string, got %s", name, (int)i, lua_typename(L, t));
            lua_pop(L, 1);
        }
    }
    lua_pop(L, 1);
}

/* Converts text (typed by a person) for parameter p and pushes the SI value.
 * On failure pushes nothing and writes the reason into err. */
static int push_from_text(lua_State *L, const pspec *p, const char *text, char *err, size_t errsize)
{
    double num;
    const pfl_unit *u;
    switch (p->type) {
    case P_NUMBER:
        if (pfl_value_parse(text, &num, &u, err, errsize) != 0) return -1;
        if (p->unit) {
            if (u && strcmp(u->quantity, p->unit->quantity) != 0) {
                snprintf(err, errsize, "'%s' is a %s, but '%s' is a %s (declared in %s)", text, u->quantity,
                         p->name, p->unit->quantity, p->unit->name);
                return -1;
            }
            double typed = num;
            num *= u ? u->si : p->unit->si;
            /* The number was finite as typed; the unit can still carry it
             * out of range (1e308 km -> inf, 1e-320 nm -> 0), so check again
             * in SI. */
            if (!isfinite(num) || (typed != 0 && !isnormal(num))) {
                snprintf(err, errsize, "'%s' is %g in SI units (%s), out of the range of a double", text, num,
                         p->unit->quantity);
                return -1;
            }
        } else if (u) {
            snprintf(err, errsize, "'%s' takes a plain number without a unit, got '%s'", p->name, text);
            return -1;
        }
        if ((p->has_min && num < p->min * (p->unit ? p->unit->si : 1)) ||
            (p->has_max && num > p->max * (p->unit ? p->unit->si : 1))) {
            snprintf(err, errsize, "'%s' is outside the allowed range %.10g..%.10g%s%s", text,
                     p->has_min ? p->min : -HUGE_VAL, p->has_max ? p->max : HUGE_VAL, p->unit ? " " : "",
                     p->unit ? p->unit->name : "");
            return -1;
        }
        lua_pushnumber(L, num);
        return 0;
    case P_INTEGER: {
        /* The same decimal rule as numbers (no hex), and a whole value. */
        if (pfl_value_parse(text, &num, &u, err, errsize) != 0 || u || num != floor(num) || fabs(num) > 9007199254740992.0) {
            snprintf(err, errsize, "'%s' takes an integer, got '%s'", p->name, text);
            return -1;
        }
        if ((p->has_min && num < p->min) || (p->has_max && num > p->max)) {
            snprintf(err, errsize, "'%s' is outside the allowed range %.10g..%.10g", text,
                     p->has_min ? p->min : -HUGE_VAL, p->has_max ? p->max : HUGE_VAL);
            return -1;
        }
        lua_pushinteger(L, (lua_Integer)num);
        return 0;
    }
    case P_BOOLEAN: {
        static const char *const yes[] = {"true", "yes", "on", "1", NULL}, *const no[] = {"false", "no", "off", "0", NULL};
        for (int i = 0; yes[i]; i++)
            if (strcmp(text, yes[i]) == 0) return lua_pushboolean(L, 1), 0;
        for (int i = 0; no[i]; i++)
            if (strcmp(text, no[i]) == 0) return lua_pushboolean(L, 0), 0;
        snprintf(err, errsize, "'%s' takes true or false (yes/no, on/off, 1/0), got '%s'", p->name, text);
        return -1;
    }
    case P_STRING:
        if (lua_getfield(L, p->spec, "choices") == LUA_TTABLE) {
            lua_Integer n = (lua_Integer)lua_rawlen(L, -1);
            int found = 0;
            for (lua_Integer i = 1; i <= n && !found; i++) {
                lua_rawgeti(L, -1, i);
                const char *c = lua_tostring(L, -1);
                found = c && strcmp(c, text) == 0;
                lua_pop(L, 1);
            }
            if (!found) {
                snprintf(err, errsize, "'%s' must be one of %s, got '%s'", p->name, push_joined(L, -1), text);
                lua_pop(L, 2);
                return -1;
            }
        }
        lua_pop(L, 1);
        lua_pushstring(L, text);
        return 0;
    }
    return -1;
}

/* Text of the default as a person would type it ("18ms", "256", "true"). */
static const char *push_default_text(lua_State *L, const pspec *p)
{
    lua_getfield(L, p->spec, "default");
    if (lua_type(L, -1) == LUA_TNUMBER) {
        char buf[64];
        if (lua_isinteger(L, -1)) snprintf(buf, sizeof buf, "%lld", (long long)lua_tointeger(L, -1));
        else {
            /* The shortest text that reads back to the same double, so a
             * default typed as 1.4 is shown as 1.4, not 1.3999999999999999. */
            double v = lua_tonumber(L, -1);
            for (int prec = 15; prec <= 17; prec++) {
                snprintf(buf, sizeof buf, "%.*g", prec, v);
                if (strtod(buf, NULL) == v) break;
            }
        }
        lua_pop(L, 1);
        lua_pushfstring(L, "%s%s", buf, p->unit ? p->unit->name : "");
    } else if (lua_type(L, -1) == LUA_TBOOLEAN) {
        int b = lua_toboolean(L, -1);
        lua_pop(L, 1);
        lua_pushstring(L, b ? "true" : "false");
    } else {
        lua_tostring(L, -1);
    }
    return lua_tostring(L, -1);
}

/* Prints the --help listing: one line per parameter, sorted by name, with its
 * default as typed, help text, quantity and unit (or type), range, choices. */
static void print_listing(lua_State *L, const char *label, pspec *ps, int n)
{
    size_t wname = 4, wdef = 7;
    for (int i = 0; i < n; i++) {
        if (strlen(ps[i].name) > wname) wname = strlen(ps[i].name);
        size_t d = strlen(push_default_text(L, &ps[i]));
        lua_pop(L, 1);
        if (d > wdef) wdef = d;
    }
    printf("Parameters of %s (override with --set NAME=VALUE; a bare number is read in the unit shown):\n", label);
    printf("  %-*s  %-*s  %s\n", (int)wname, "NAME", (int)wdef, "DEFAULT", "HELP");
    for (int i = 0; i < n; i++) {
        const char *d = push_default_text(L, &ps[i]);
        lua_getfield(L, ps[i].spec, "help");
        printf("  %-*s  %-*s  %s", (int)wname, ps[i].name, (int)wdef, d, lua_tostring(L, -1));
        lua_pop(L, 2);
        if (ps[i].unit) printf(" [%s, %s]", ps[i].unit->quantity, ps[i].unit->name);
        else printf(" [%s]", type_names[ps[i].type]);
        if (ps[i].has_min || ps[i].has_max) {
            printf(" (");
            if (ps[i].has_min) printf("min %.10g", ps[i].min);
            if (ps[i].has_min && ps[i].has_max) printf(", ");
            if (ps[i].has_max) printf("max %.10g", ps[i].max);
            printf(")");
        }
        if (lua_getfield(L, ps[i].spec, "choices") == LUA_TTABLE) {
            printf(" (one of:");
            for (lua_Integer k = 1; k <= (lua_Integer)lua_rawlen(L, -1); k++) {
                lua_rawgeti(L, -1, k);
                printf(" %s", lua_tostring(L, -1));
                lua_pop(L, 1);
            }
            printf(")");
        }
        lua_pop(L, 1);
        printf("\n");
    }
    fflush(stdout);
}

static int compare_names(const void *a, const void *b)
{
    return strcmp(((const pspec *)a)->name, ((const pspec *)b)->name);
}

/* Pushes the default of parameter p as text (as --help shows it) and then
 * as its value (numbers in SI); a default of the wrong type is an error. */
static void push_default(lua_State *L, const pspec *p)
{
    char err[512];
    const char *dtext = push_default_text(L, p);
    lua_getfield(L, p->spec, "default");
    if (lua_type(L, -1) == LUA_TNUMBER && p->type == P_NUMBER) {
        double v = lua_tonumber(L, -1) * (p->unit ? p->unit->si : 1.0);
        lua_pop(L, 1);
        lua_pushnumber(L, v);
    } else if (lua_type(L, -1) == LUA_TSTRING && p->type != P_STRING) {
        lua_pop(L, 1);
        if (push_from_text(L, p, dtext, err, sizeof err) != 0)
            luaL_error(L, "parameters: default of '%s': %s", p->name, err);
    } else if ((p->type == P_INTEGER && !lua_isinteger(L, -1)) || (p->type == P_BOOLEAN && !lua_isboolean(L, -1)) ||
               (p->type == P_STRING && lua_type(L, -1) != LUA_TSTRING) ||
               (p->type == P_NUMBER && lua_type(L, -1) != LUA_TNUMBER)) {
        luaL_error(L, "parameters: default of '%s' is not a %s", p->name, type_names[p->type]);
    }
}

/* Every --set override (the state's "order", texts in table `over`) must
 * name one of the n parameters declared in the table at index 1. */
static void check_overrides_declared(lua_State *L, int st, int over, int n)
{
    lua_getfield(L, st, "order");
    for (lua_Integer k = 1; k <= (lua_Integer)lua_rawlen(L, -1); k++) {
        lua_rawgeti(L, -1, k);
        const char *name = lua_tostring(L, -1);
        lua_getfield(L, 1, name);
        if (lua_isnil(L, -1)) {
            lua_getfield(L, over, name);
            const char *text = lua_tostring(L, -1);
            push_names(L, 1);
            pfl_error(L, PFL_ERROR_USAGE, "parameters: --set %s=%s: unknown parameter '%s' (parameters: %s)", name, text,
                      name, n ? lua_tostring(L, -1) : "none declared");
        }
        lua_pop(L, 2);
    }
    lua_pop(L, 1);
}

/* pf.parameters{name = {default = v, unit = "ms", help = "...", type =,
 *               min =, max =, choices = {...}}, ...} -> {name = SI value} */
static int l_parameters(lua_State *L)
{
    luaL_checktype(L, 1, LUA_TTABLE);
    lua_settop(L, 1);
    int st = push_state(L);
    if (lua_getfield(L, st, "declared") != LUA_TNIL)
        return luaL_error(L, "parameters: already declared at %s; declare all parameters in one call "
                             "(merge a recipe's table into yours)", lua_tostring(L, -1));
    lua_pop(L, 1);
    int n = 0;
    lua_pushnil(L);
    while (lua_next(L, 1)) {
        if (lua_type(L, -2) != LUA_TSTRING || lua_type(L, -1) != LUA_TTABLE) {
            char buf[64];
            return luaL_error(L, "parameters: each entry must be name = {default = ..., help = \"...\"}, got key %s",
                              pfl_describe(L, -2, buf, sizeof buf));
        }
        lua_pop(L, 1);
        n++;
    }
    if (n > 1000) return luaL_error(L, "parameters: %d parameters is too many", n);
    /* Each parameter keeps its name and spec on the stack while we work. */
    luaL_checkstack(L, 2 * n + 32, "parameters: too many parameters");
    pspec *ps = lua_newuserdatauv(L, sizeof *ps * (size_t)(n ? n : 1), 0); /* freed by Lua */
    int specs = lua_gettop(L) + 1;
    lua_createtable(L, n, 0); /* keeps spec tables and names alive at fixed indices */
    int i = 0;
    lua_pushnil(L);
    while (lua_next(L, 1)) {
        lua_pushvalue(L, -2);
        lua_rawseti(L, specs, 2 * i + 1);
        lua_rawseti(L, specs, 2 * i + 2);
        i++;
    }
    for (i = 0; i < n; i++) {
        lua_rawgeti(L, specs, 2 * i + 1);
        const char *name = lua_tostring(L, -1);
        lua_rawgeti(L, specs, 2 * i + 2);
        read_spec(L, name, lua_gettop(L), &ps[i]);
    }
    qsort(ps, (size_t)n, sizeof *ps, compare_names);
    lua_getfield(L, st, "label");
    const char *label = lua_tostring(L, -1);
    lua_getfield(L, st, "help");
    int help = lua_toboolean(L, -1);
    lua_pop(L, 1);
    if (help) {
        luaL_where(L, 1);
        lua_setfield(L, st, "declared"); /* the runner tells a listing from "declares nothing" */
        print_listing(L, label, ps, n);
        lua_pushlightuserdata(L, (void *)&HELP_STOP);
        return lua_error(L);
    }
    lua_getfield(L, st, "overrides");
    int over = lua_gettop(L);
    lua_getfield(L, st, "texts");
    int texts = lua_gettop(L);
    lua_createtable(L, 0, n);
    int result = lua_gettop(L);
    char err[512];
    for (i = 0; i < n; i++) {
        const pspec *p = &ps[i];
        if (lua_getfield(L, over, p->name) == LUA_TSTRING) {
            const char *text = lua_tostring(L, -1);
            if (push_from_text(L, p, text, err, sizeof err) != 0) {
                push_names(L, 1);
                return pfl_error(L, PFL_ERROR_USAGE, "parameters: --set %s=%s: %s (parameters: %s; see --help)",
                                 p->name, text, err, lua_tostring(L, -1));
            }
            lua_setfield(L, result, p->name);
            lua_setfield(L, texts, p->name);
            continue;
        }
        lua_pop(L, 1);
        push_default(L, p);
        lua_setfield(L, result, p->name);
        lua_setfield(L, texts, p->name);
    }
    check_overrides_declared(L, st, over, n);
    luaL_where(L, 1);
    lua_pushliteral(L, "pf.parameters");
    lua_concat(L, 2);
    lua_setfield(L, st, "declared");
    lua_settop(L, result);
    return 1;
}

void pfl_open_params(lua_State *L, int mod)
{
    static const luaL_Reg funcs[] = {{"parameters", l_parameters}, {NULL, NULL}};
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&PARAMETER_SPEC_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
