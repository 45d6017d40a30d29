/* pfl_wave.c - wave functions as Lua userdata: pf.wave{...}, element access,
 * density tables, copies, the step log, and the object's lifetime.
 *
 * Modelled on Lua's file handles: the userdata owns the core wave, close()
 * frees it at once (big arrays are invisible to Lua's collector, so scripts
 * should close big states early), and methods on a closed wave fail clearly. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <stddef.h>
#include <string.h>
#include "pf_frame.h"
#include "pf_guard.h"
#include "pf_observe.h"
#include "pfl_options.h"

static const pfl_options_decl WAVE_OPTIONS = {
    "pf.wave", (const char *const[]){"mass", "position", "momentum", "normalize", "periodic", NULL}};

typedef struct { pf_wave *w; } pfl_wave_box;

static pfl_wave_box *check_box(lua_State *L, int arg)
{
    return luaL_checkudata(L, arg, PFL_WAVE_TYPE);
}

pf_wave *pfl_check_wave(lua_State *L, int arg)
{
    pfl_wave_box *b = check_box(L, arg);
    if (!b->w) luaL_argerror(L, arg, "wave function is closed");
    pfl_ctx(L); /* binds this thread to the context for warnings */
    pfl_frame_guard(L, arg, b->w); /* a moved frame only for FRAME functions (pfl_aware.c) */
    pfl_dist_guard(L, arg, b->w);  /* a distributed grid only for DIST functions (pfl_aware.c) */
    return b->w;
}

pf_wave **pfl_push_wave_slot(lua_State *L)
{
    pfl_wave_box *b = lua_newuserdatauv(L, sizeof *b, 0);
    b->w = NULL;
    luaL_setmetatable(L, PFL_WAVE_TYPE);
    return &b->w;
}

pf_wave *pfl_wave_peek(lua_State *L, int arg)
{
    return check_box(L, arg)->w;
}

void pfl_add_wave_methods(lua_State *L, const luaL_Reg *methods)
{
    luaL_getmetatable(L, PFL_WAVE_TYPE);
    lua_getfield(L, -1, "__index");
    luaL_setfuncs(L, methods, 0);
    lua_pop(L, 2);
    pfl_frame_name_functions(L, "wave:", methods);
}

typedef struct fill_call {
    lua_State *L;
    int fn;
    int dim;
    pf_rep rep;
    const char *name;
} fill_call;

static int fill_sample(void *user, const double *coord, double complex *value)
{
    fill_call *c = user;
    lua_State *L = c->L;
    int base = lua_gettop(L);
    lua_pushvalue(L, c->fn);
    for (int a = 0; a < c->dim; a++) lua_pushnumber(L, coord[a]);
    if (lua_pcall(L, c->dim, LUA_MULTRET, 0) != LUA_OK) return 1; /* error value stays on top */
    int nret = lua_gettop(L) - base;
    double complex z;
    const char *var = c->rep == PF_POSITION ? "x" : "k";
    if (!pfl_result_complex(L, base + 1, nret, &z)) {
        char buf[80];
        lua_pushfstring(L, "%s: the %s function must return a number, two numbers (re, im) or a complex; at %s = %f it returned %s",
                        c->name, c->rep == PF_POSITION ? "position" : "momentum", var, coord[0],
                        nret ? pfl_describe(L, base + 1, buf, sizeof buf) : "nothing");
        return 1;
    }
    if (!isfinite(creal(z)) || !isfinite(cimag(z))) {
        char where[160];
        if (c->dim == 1) snprintf(where, sizeof where, "%s = %g", var, coord[0]);
        else if (c->dim == 2) snprintf(where, sizeof where, "%s = (%g, %g)", var, coord[0], coord[1]);
        else snprintf(where, sizeof where, "%s = (%g, %g, %g)", var, coord[0], coord[1], coord[2]);
        lua_pushfstring(L, "%s: the %s function returned a non-finite value at %s", c->name,
                        c->rep == PF_POSITION ? "position" : "momentum", where);
        return 1;
    }
    lua_settop(L, base);
    *value = z;
    return 0;
}

void pfl_fill_from_function(lua_State *L, pf_wave *w, pf_rep rep, int arg, const char *name)
{
    luaL_checktype(L, arg, LUA_TFUNCTION);
    fill_call c = {L, lua_absindex(L, arg), pf_grid_dim(pf_wave_grid(w)), rep, name};
    pf_status s = pf_wave_fill(w, rep, fill_sample, &c);
    if (s == PF_ECALLBACK) {
        /* The message (from the user's function, with its own file:line, or
         * ours) is on top of the stack; prefix our position if it has none. */
        if (lua_type(L, -1) == LUA_TSTRING && strncmp(lua_tostring(L, -1), name, strlen(name)) == 0) {
            luaL_where(L, 1);
            lua_insert(L, -2);
            lua_concat(L, 2);
        }
        lua_error(L);
    }
    pfl_check(L, s, name);
}

/* pf.wave(grid, {mass = kg or species label, position = f(x[,y,z]) | momentum = f(kx[,ky,kz]),
 *                normalize = true}) */
static int l_wave(lua_State *L)
{
    pf_grid *g = pfl_check_grid(L, 1);
    pfl_options_check(L, 2, &WAVE_OPTIONS);
    double mass = pfl_field_mass(L, 2, "wave");
    int tp = pfl_option_get(L, 2, "position");
    int tm = pfl_option_get(L, 2, "momentum");
    if ((tp == LUA_TNIL) == (tm == LUA_TNIL))
        return luaL_error(L, "wave: give exactly one of 'position' (function of x) or 'momentum' (function of k)");
    int normalize = pfl_field_boolean(L, 2, "normalize", 1);
    int periodic = pfl_field_boolean(L, 2, "periodic", 0);
    pf_wave **slot = pfl_push_wave_slot(L); /* owned by Lua from here on, so errors below do not leak */
    pfl_check(L, pf_wave_new(g, mass, slot), "wave");
    pf_wave *w = *slot;
    pf_wave_set_periodic(w, periodic); /* before the build step, whose guard would warn */
    int fn = tp != LUA_TNIL ? -3 : -2;
    pfl_fill_from_function(L, w, tp != LUA_TNIL ? PF_POSITION : PF_MOMENTUM, fn, "wave");
    if (normalize) pfl_check(L, pf_wave_normalize(w), "wave");
    pf_wave_record(w, "build", "function", 0.0, 0.0);
    pfl_check(L, PF_OK, "wave");
    return 1;
}

/* w:psi(i [, j, k]) / w:phi(i [, j, k]): the lab value at one 1-based point
 * (phi's indices count wave numbers in ascending order). */
static int push_value(lua_State *L, pf_rep rep, const char *name)
{
    pf_wave *w = pfl_check_wave(L, 1);
    size_t idx[PF_MAX_DIM];
    pfl_check_indices(L, 2, pf_wave_grid(w), idx, rep == PF_MOMENTUM);
    double complex z;
    pfl_check(L, pf_wave_lab_value(w, rep, idx, &z), name);
    pfl_push_complex(L, z);
    return 1;
}

static int l_psi(lua_State *L) { return push_value(L, PF_POSITION, "psi"); }
static int l_phi(lua_State *L) { return push_value(L, PF_MOMENTUM, "phi"); }

static int set_value(lua_State *L, pf_rep rep, const char *name)
{
    pf_wave *w = pfl_check_wave(L, 1);
    int d = pf_grid_dim(pf_wave_grid(w));
    size_t idx[PF_MAX_DIM];
    pfl_check_indices(L, 2, pf_wave_grid(w), idx, rep == PF_MOMENTUM);
    double complex z = pfl_check_complex(L, 2 + d);
    return pfl_return_self(L, pf_wave_lab_set_value(w, rep, idx, z), name);
}

static int l_set_psi(lua_State *L) { return set_value(L, PF_POSITION, "set_psi"); }
static int l_set_phi(lua_State *L) { return set_value(L, PF_MOMENTUM, "set_phi"); }

static int push_density(lua_State *L, pf_rep rep, const char *name)
{
    pf_wave *w = pfl_check_wave(L, 1);
    size_t n = pf_grid_total(pf_wave_grid(w));
    if (n > (size_t)1 << 26) return luaL_error(L, "%s: %zu points is too many for a Lua table", name, n);
    /* Charged to the engine's cap like any other array of grid size, and
     * owned by a userdata, so the table building below may raise. */
    double *buf = pfl_push_engine_doubles(L, n, name);
    int held = lua_gettop(L);
    pfl_check(L, pf_wave_density(w, rep, buf), name);
    if (!lua_checkstack(L, 2)) return luaL_error(L, "%s: stack overflow", name);
    lua_createtable(L, (int)n, 0);
    for (size_t i = 0; i < n; i++) {
        lua_pushnumber(L, buf[i]);
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
    pfl_engine_doubles_free(L, held); /* now, not at its collection: the bytes leave the cap */
    return 1;
}

static int l_density(lua_State *L) { return push_density(L, PF_POSITION, "density"); }
static int l_momentum_density(lua_State *L) { return push_density(L, PF_MOMENTUM, "momentum_density"); }

static int l_copy(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pfl_check(L, pf_wave_copy(w, pfl_push_wave_slot(L)), "copy");
    return 1;
}

static int l_normalize(lua_State *L)
{
    return pfl_return_self(L, pf_wave_normalize(pfl_check_wave(L, 1)), "normalize");
}

static int l_scale(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    return pfl_return_self(L, pf_wave_scale(w, pfl_check_complex(L, 2)), "scale");
}

static int l_mass(lua_State *L) { lua_pushnumber(L, pf_wave_mass(pfl_check_wave(L, 1))); return 1; }
static int l_clock(lua_State *L) { lua_pushnumber(L, pf_wave_clock(pfl_check_wave(L, 1))); return 1; }

static int l_representation(lua_State *L)
{
    lua_pushstring(L, pf_wave_rep(pfl_check_wave(L, 1)) == PF_POSITION ? "position" : "momentum");
    return 1;
}

static int l_grid_of(lua_State *L)
{
    pf_grid *g = pf_wave_grid(pfl_check_wave(L, 1));
    pf_grid **slot = pfl_push_grid_slot(L); /* before the reference it will hold */
    pf_grid_retain(g);
    *slot = g;
    return 1;
}

/* The numeric fields of a step record (pf_step), in the order they are
 * set; the guard figures are left out of a record when they were not
 * measured (negative). */
static const struct {
    const char *name;
    size_t offset;
    int when_measured;
} STEP_NUMBERS[] = {
    {"duration", offsetof(pf_step, duration), 0}, {"clock", offsetof(pf_step, clock), 0},
    {"norm", offsetof(pf_step, norm), 0},         {"removed", offsetof(pf_step, removed), 0},
    {"edge_x", offsetof(pf_step, edge_x), 1},     {"edge_k", offsetof(pf_step, edge_k), 1},
};

/* w:log() -> array of step records (tables with the documented fields). */
static int l_log(lua_State *L)
{
    const pf_steplog *log = pf_wave_steplog(pfl_check_wave(L, 1));
    lua_createtable(L, (int)log->count, 0);
    for (size_t i = 0; i < log->count; i++) {
        const pf_step *s = &log->steps[i];
        lua_createtable(L, 0, 8);
        lua_pushstring(L, s->kind);
        lua_setfield(L, -2, "kind");
        lua_pushstring(L, s->method);
        lua_setfield(L, -2, "method");
        for (size_t f = 0; f < sizeof STEP_NUMBERS / sizeof STEP_NUMBERS[0]; f++) {
            double v;
            memcpy(&v, (const char *)s + STEP_NUMBERS[f].offset, sizeof v);
            if (STEP_NUMBERS[f].when_measured && !(v >= 0)) continue;
            lua_pushnumber(L, v);
            lua_setfield(L, -2, STEP_NUMBERS[f].name);
        }
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
    return 1;
}

/* w:log_text() -> the log in its stable text form, header first. */
static int l_log_text(lua_State *L)
{
    const pf_steplog *log = pf_wave_steplog(pfl_check_wave(L, 1));
    luaL_Buffer b;
    luaL_buffinit(L, &b);
    luaL_addstring(&b, pf_steplog_header());
    luaL_addchar(&b, '\n');
    char line[512];
    for (size_t i = 0; i < log->count; i++) {
        pf_steplog_format_entry(&log->steps[i], i, line, sizeof line);
        luaL_addstring(&b, line);
        luaL_addchar(&b, '\n');
    }
    luaL_pushresult(&b);
    return 1;
}

static int l_close(lua_State *L)
{
    pfl_wave_box *b = check_box(L, 1);
    if (b->w) {
        pf_wave_free(b->w);
        b->w = NULL;
    }
    return 0;
}

static int l_tostring(lua_State *L)
{
    pfl_wave_box *b = check_box(L, 1);
    if (!b->w) {
        lua_pushliteral(L, "wave function (closed)");
        return 1;
    }
    pf_wave *w = b->w;
    pf_grid *g = pf_wave_grid(w);
    char buf[200];
    snprintf(buf, sizeof buf, "wave function %dD, %zu points, mass %.6g kg, %s representation, clock %.6g s",
             pf_grid_dim(g), pf_grid_total(g), pf_wave_mass(w),
             pf_wave_rep(w) == PF_POSITION ? "position" : "momentum", pf_wave_clock(w));
    lua_pushstring(L, buf);
    return 1;
}

void pfl_open_wave(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"psi", l_psi}, {"phi", l_phi}, {"set_psi", l_set_psi}, {"set_phi", l_set_phi},
        {"density", l_density}, {"momentum_density", l_momentum_density}, {"copy", l_copy},
        {"normalize", l_normalize}, {"scale", l_scale}, {"mass", l_mass}, {"clock", l_clock},
        {"representation", l_representation}, {"grid", l_grid_of}, {"log", l_log},
        {"log_text", l_log_text}, {"close", l_close}, {NULL, NULL},
    };
    static const luaL_Reg meta[] = {
        {"__gc", l_close}, {"__close", l_close}, {"__tostring", l_tostring}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"wave", l_wave}, {NULL, NULL}};
    static const pfl_options_decl *const options[] = {&WAVE_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_WAVE_TYPE, .meta = meta, .methods = methods,
                                               .guard_prefix = "wave:", .funcs = funcs});
}
