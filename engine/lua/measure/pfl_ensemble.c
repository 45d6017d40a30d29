/* pfl_ensemble.c - ensembles (incoherent mixtures) as Lua userdata:
 * pf.mixture, pf.thermal, member access, mixture observables, and the
 * forwarding that lets any wave-function step act on every member.
 *
 * The userdata keeps its members (wave userdata) and weights in two Lua
 * tables held as user values, so Lua's collector owns the members and an
 * error in the middle of a call never leaks them. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_build.h"
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_dist_measure.h"
#include "pf_frame.h"
#include "pf_observe.h"
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl THERMAL_OPTIONS = {
    "pf.thermal", (const char *const[]){"grid", "mass", "omega", "frequency", "temperature", "center", "drift", "method", "nodes",
                                        "samples", "seed", "generator", "tolerance", NULL}};

typedef struct { int open; } pfl_ensemble_box;

static pfl_ensemble_box *check_ens(lua_State *L, int arg)
{
    pfl_ensemble_box *b = luaL_checkudata(L, arg, PFL_ENSEMBLE_TYPE);
    if (!b->open) luaL_argerror(L, arg, "ensemble is closed");
    return b;
}

static lua_Integer ens_count(lua_State *L, int arg)
{
    lua_getiuservalue(L, arg, 1);
    lua_Integer n = luaL_len(L, -1);
    lua_pop(L, 1);
    return n;
}

/* Pushes a new ensemble from the members table (index mt) and weights table
 * (index wt); weights are normalised to sum 1. */
static void push_ensemble(lua_State *L, int mt, int wt)
{
    mt = lua_absindex(L, mt);
    wt = lua_absindex(L, wt);
    lua_Integer n = luaL_len(L, wt);
    double sum = 0;
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, wt, i);
        sum += lua_tonumber(L, -1);
        lua_pop(L, 1);
    }
    if (!(sum > 0)) luaL_error(L, "ensemble weights must have a positive sum");
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, wt, i);
        double v = lua_tonumber(L, -1) / sum;
        lua_pop(L, 1);
        lua_pushnumber(L, v);
        lua_seti(L, wt, i);
    }
    pfl_ensemble_box *b = lua_newuserdatauv(L, sizeof *b, 2);
    b->open = 1;
    luaL_setmetatable(L, PFL_ENSEMBLE_TYPE);
    lua_pushvalue(L, mt);
    lua_setiuservalue(L, -2, 1);
    lua_pushvalue(L, wt);
    lua_setiuservalue(L, -2, 2);
}

void pfl_check_source(lua_State *L, int arg, pfl_source *src)
{
    arg = lua_absindex(L, arg);
    memset(src, 0, sizeof *src);
    src->unit_weight = 1.0;
    if (luaL_testudata(L, arg, PFL_WAVE_TYPE)) {
        src->single = pfl_check_wave(L, arg);
        src->mix.count = 1;
        src->mix.members = &src->single;
        src->mix.weights = &src->unit_weight;
        lua_pushnil(L);
        return;
    }
    if (!luaL_testudata(L, arg, PFL_ENSEMBLE_TYPE))
        luaL_typeerror(L, arg, "wave function or ensemble");
    check_ens(L, arg);
    lua_Integer n = ens_count(L, arg);
    if (n < 1) luaL_argerror(L, arg, "ensemble has no members");
    size_t bytes = (size_t)n * (sizeof(pf_wave *) + sizeof(double));
    char *buf = lua_newuserdatauv(L, bytes, 0);
    pf_wave **m = (pf_wave **)(void *)buf;
    double *w = (double *)(void *)(buf + (size_t)n * sizeof(pf_wave *));
    lua_getiuservalue(L, arg, 1);
    lua_getiuservalue(L, arg, 2);
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, -2, i);
        m[i - 1] = pfl_check_wave(L, -1);
        lua_pop(L, 1);
        lua_geti(L, -1, i);
        w[i - 1] = lua_tonumber(L, -1);
        lua_pop(L, 1);
    }
    lua_pop(L, 2);
    src->is_ensemble = 1;
    src->mix.count = (size_t)n;
    src->mix.members = m;
    src->mix.weights = w;
}

void pfl_measurement_begin(lua_State *L, int opts_arg, const pfl_options_decl *decl, unsigned flags,
                           pfl_measurement *m)
{
    if (flags & PFL_OPTIONS_REQUIRED) {
        pfl_options_check(L, opts_arg, decl);
        m->opts = lua_absindex(L, opts_arg);
    } else {
        m->opts = pfl_options_opt(L, opts_arg, decl);
    }
    pfl_check_source(L, 1, &m->src);
    m->grid = pfl_source_grid(&m->src);
    m->dim = pf_grid_dim(m->grid);
    m->axis = flags & PFL_ALONG_AXIS ? pfl_opt_axis(L, m->opts, "axis", m->dim, 1) - 1 : -1;
}

pf_grid *pfl_source_grid(const pfl_source *src) { return pf_wave_grid(src->mix.members[0]); }
double pfl_source_mass(const pfl_source *src) { return pf_wave_mass(src->mix.members[0]); }

void pfl_source_frame(lua_State *L, const pfl_source *src, pf_frame *out, const char *name)
{
    pf_wave_frame(src->mix.members[0], out);
    int d = pf_grid_dim(pfl_source_grid(src));
    for (size_t i = 1; i < src->mix.count; i++) {
        pf_frame f;
        pf_wave_frame(src->mix.members[i], &f);
        for (int a = 0; a < d; a++) {
            if (f.position[a] == out->position[a] && f.wavenumber[a] == out->wavenumber[a]) continue;
            char msg[400];
            snprintf(msg, sizeof msg,
                     "%s: member %d of the ensemble sits in another frame than member 1 (axis %d: offset %g m, %g "
                     "rad/m against %g m, %g rad/m); the members of an ensemble must share one frame (fly them "
                     "together, docs/frames.md)",
                     name, (int)i + 1, a + 1, f.position[a], f.wavenumber[a], out->position[a], out->wavenumber[a]);
            luaL_error(L, "%s", msg);
        }
    }
}

/* The field's axes are lab axes: the members share one frame
 * (pfl_source_frame; the phases theta may differ, an incoherent sum does not
 * see them), so the grid's positions are shifted by the frame's offset X and
 * its wave numbers by K, since |psi_lab(x)|^2 = |chi(x - X)|^2 and
 * |phi_lab(k)|^2 = |chi~(k - K)|^2. */
void pfl_source_field(lua_State *L, const pfl_source *src, pf_rep rep, pf_field *f, const char *name)
{
    pf_frame fr;
    pfl_source_frame(L, src, &fr, name);
    pfl_check(L, pf_mixture_field(&src->mix, rep, f), name);
    for (int a = 0; a < f->dim; a++) f->first[a] += rep == PF_POSITION ? fr.position[a] : fr.wavenumber[a];
}

int pfl_source_split(const pfl_source *src) { return !src->is_ensemble && pf_wave_distributed(src->single); }

void pfl_source_geometry(lua_State *L, const pfl_source *src, pf_rep rep, pf_field *geom, const char *name)
{
    pf_frame fr;
    pfl_source_frame(L, src, &fr, name);
    pf_field_geometry(pfl_source_grid(src), rep, geom);
    for (int a = 0; a < geom->dim; a++) geom->first[a] += rep == PF_POSITION ? fr.position[a] : fr.wavenumber[a];
}

void pfl_source_marginal(lua_State *L, const pfl_source *src, pf_rep rep, const int *keep, pf_field *out,
                         const char *name)
{
    if (pfl_source_split(src)) {
        pf_field geom;
        pfl_source_geometry(L, src, rep, &geom, name);
        pfl_check(L, pf_dist_marginal(src->single, rep, &geom, keep, out), name);
        return;
    }
    pf_field f;
    pfl_source_field(L, src, rep, &f, name);
    pf_status s = pf_field_marginal(&f, keep, out);
    pf_field_free(&f);
    pfl_check(L, s, name);
}

void pfl_add_state_methods(lua_State *L, const luaL_Reg *methods)
{
    pfl_add_wave_methods(L, methods);
    luaL_getmetatable(L, PFL_ENSEMBLE_TYPE);
    lua_getfield(L, -1, "methods");
    luaL_setfuncs(L, methods, 0);
    lua_pop(L, 2);
}

/* Per member of a thermal build: the stop check, and the progress of the
 * build (reported ended before a stop raises, so no bar is left open). */
static void member_progress(lua_State *L, size_t i, size_t count)
{
    pf_status s = pf_context_poll_stop(pfl_ctx(L));
    pf_context_progress(pfl_ctx(L), "thermal", s ? -1.0 : (double)i, (double)count);
    pfl_check(L, s, "thermal");
}

/* The member and weight lists of a thermal build of count members, pushed
 * on the stack; their stack indices in *mt and *wt. */
static void push_member_lists(lua_State *L, size_t count, int *mt, int *wt)
{
    lua_createtable(L, (int)count, 0);
    *mt = lua_gettop(L);
    lua_createtable(L, (int)count, 0);
    *wt = lua_gettop(L);
}

/* Member i of a thermal build: a new (empty) wave on g, pushed.  Members
 * are built one wave at a time: a stop request is honoured between them
 * (everything built so far is on the Lua stack). */
static pf_wave *push_member(lua_State *L, pf_grid *g, double mass, size_t i, size_t count)
{
    member_progress(L, i, count);
    pf_wave **slot = pfl_push_wave_slot(L);
    pfl_check(L, pf_wave_new(g, mass, slot), "thermal");
    return *slot;
}

/* Moves the filled member on top of the stack into the lists as entry i,
 * with its weight. */
static void store_member(lua_State *L, int mt, int wt, size_t i, double weight)
{
    lua_seti(L, mt, (lua_Integer)i + 1);
    lua_pushnumber(L, weight);
    lua_seti(L, wt, (lua_Integer)i + 1);
}

/* pf.mixture({w1, w2, ...} [, {p1, p2, ...}]) - members are copied. */
static int l_mixture(lua_State *L)
{
    luaL_checktype(L, 1, LUA_TTABLE);
    lua_Integer n = luaL_len(L, 1);
    if (n < 1) return luaL_argerror(L, 1, "a mixture needs at least one wave function");
    int has_w = !lua_isnoneornil(L, 2);
    if (has_w) {
        luaL_checktype(L, 2, LUA_TTABLE);
        if (luaL_len(L, 2) != n)
            return luaL_error(L, "mixture: %d states but %d weights", (int)n, (int)luaL_len(L, 2));
    }
    lua_createtable(L, (int)n, 0);
    int mt = lua_gettop(L);
    lua_createtable(L, (int)n, 0);
    int wt = lua_gettop(L);
    pf_grid *g0 = NULL;
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, 1, i);
        if (!luaL_testudata(L, -1, PFL_WAVE_TYPE))
            return luaL_error(L, "mixture: entry %d must be a wave function", (int)i);
        pf_wave *w = pfl_check_wave(L, -1);
        if (!g0) g0 = pf_wave_grid(w);
        else if (!pf_grid_same(g0, pf_wave_grid(w)))
            return luaL_error(L, "mixture: entry %d lives on a grid of another geometry", (int)i);
        pfl_check(L, pf_wave_copy(w, pfl_push_wave_slot(L)), "mixture");
        lua_remove(L, -2); /* the given wave */
        lua_seti(L, mt, i);
        double p = 1;
        if (has_w) {
            lua_geti(L, 2, i);
            p = lua_tonumber(L, -1);
            if (lua_type(L, -1) != LUA_TNUMBER || !(p >= 0) || !isfinite(p))
                return luaL_error(L, "mixture: weight %d must be a finite number >= 0", (int)i);
            lua_pop(L, 1);
        }
        lua_pushnumber(L, p);
        lua_seti(L, wt, i);
    }
    push_ensemble(L, mt, wt);
    return 1;
}

/* Warns when the thermal members reach the grid's momentum limit or edges. */
static void thermal_guard(pf_grid *g, const pf_thermal_member *list, size_t count, const double *s0, const double *c)
{
    for (int a = 0; a < pf_grid_dim(g); a++) {
        double kmax = 0, xmax = 0;
        for (size_t i = 0; i < count; i++) {
            kmax = fmax(kmax, fabs(list[i].kmean[a]));
            xmax = fmax(xmax, fabs(list[i].shift[a]));
        }
        /* A coherent state's wave-number spread is 1/(2 sigma0); 6 of them
         * cover its amplitude to 1e-8. */
        double need_k = kmax + 6.0 / (2.0 * s0[a]);
        if (need_k > pf_grid_knyquist(g, a))
            pf_context_warn(pf_grid_context(g),
                            "thermal ensemble: members reach wave number %.3g 1/m on axis %d, beyond the grid's "
                            "limit %.3g 1/m; use a spacing below %.3g m",
                            need_k, a + 1, pf_grid_knyquist(g, a), PF_PI / need_k);
        double lo = pf_grid_x(g, a, 0), hi = pf_grid_x(g, a, pf_grid_points(g, a) - 1);
        if (c[a] - xmax - 6 * s0[a] < lo || c[a] + xmax + 6 * s0[a] > hi)
            pf_context_warn(pf_grid_context(g), "thermal ensemble: members extend beyond the grid on axis %d", a + 1);
    }
}

/* The eigenstate scheme of pf.thermal: Boltzmann-weighted trap eigenstates
 * (field 'tolerance', default 1e-6: levels with relative weight below it are
 * dropped and the rest renormalised). */
static int thermal_eigenstates(lua_State *L, pf_grid *g, const pf_thermal_spec *sp, const double *center,
                               const double *drift)
{
    pfl_option_get(L, 1, "nodes");
    pfl_option_get(L, 1, "samples");
    if (!lua_isnil(L, -1) || !lua_isnil(L, -2))
        return luaL_error(L, "thermal: 'nodes' and 'samples' belong to the coherent-state method");
    lua_pop(L, 2);
    double tol = pfl_field_number(L, 1, "tolerance", 1e-6, 0);
    if (!(tol > 0 && tol < 1)) return luaL_error(L, "thermal: field 'tolerance' must be in (0, 1), got %f", tol);
    pf_thermal_level *list;
    size_t count;
    double kept;
    pfl_check(L, pf_thermal_levels(pfl_ctx(L), sp, tol, 20000, &list, &count, &kept), "thermal");
    pf_thermal_level *held = lua_newuserdatauv(L, count * sizeof *held, 0);
    memcpy(held, list, count * sizeof *held);
    free(list);
    int d = sp->dim;
    double k0[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < d; a++) k0[a] = sp->mass * drift[a] / PF_HBAR;
    int mt, wt;
    push_member_lists(L, count, &mt, &wt);
    for (size_t i = 0; i < count; i++) {
        pf_wave *w = push_member(L, g, sp->mass, i, count);
        pfl_check(L, pf_build_oscillator(w, sp->omega, held[i].n, center, k0, 1), "thermal");
        store_member(L, mt, wt, i, held[i].weight);
    }
    push_ensemble(L, mt, wt);
    pfl_check(L, PF_OK, "thermal");
    return 1;
}

/* pf.thermal{grid=, mass=, omega = w | {wx, wy, wz} (rad/s) | frequency = Hz, temperature = K,
 *            center = {..} (m), drift = {..} (m/s), nodes = M (default 3) |
 *            samples = K, seed=, generator=  |  method = "eigenstates",
 *            tolerance = 1e-6} */
static int l_thermal(lua_State *L)
{
    pfl_options_check(L, 1, &THERMAL_OPTIONS);
    pfl_option_get(L, 1, "grid");
    pf_grid *g = pfl_check_grid(L, -1);
    lua_pop(L, 1);
    int d = pf_grid_dim(g);
    pf_thermal_spec sp;
    memset(&sp, 0, sizeof sp);
    sp.dim = d;
    sp.mass = pfl_field_mass(L, 1, "thermal");
    /* Trap angular frequencies as the state builders spell them: omega
     * (rad/s) or frequency (Hz). */
    int has_omega = pfl_field_vector_of(L, 1, "omega", d, sp.omega, 0, 1);
    double f[PF_MAX_DIM];
    int has_frequency = pfl_field_vector_of(L, 1, "frequency", d, f, 0, 1);
    if (has_omega == has_frequency)
        return luaL_error(L, "thermal: give exactly one of 'omega' (rad/s) or 'frequency' (Hz), per axis");
    if (has_frequency)
        for (int a = 0; a < d; a++) sp.omega[a] = 2 * PF_PI * f[a];
    sp.temperature = pfl_field_number(L, 1, "temperature", 0, 1);
    double center[PF_MAX_DIM] = {0, 0, 0}, drift[PF_MAX_DIM] = {0, 0, 0};
    pfl_field_vector(L, 1, "center", d, center, 0);
    pfl_field_vector(L, 1, "drift", d, drift, 0);
    const char *method = "coherent";
    if (pfl_option_get(L, 1, "method") != LUA_TNIL) method = lua_tostring(L, -1);
    lua_pop(L, 1);
    if (!method || (strcmp(method, "coherent") && strcmp(method, "eigenstates")))
        return luaL_error(L, "thermal: field 'method' must be \"coherent\" or \"eigenstates\"");
    if (strcmp(method, "eigenstates") == 0) return thermal_eigenstates(L, g, &sp, center, drift);
    double samples = pfl_field_number(L, 1, "samples", 0, 0);
    double nodes = pfl_field_number(L, 1, "nodes", samples > 0 ? 0 : 3, 0);
    if (samples > 0 && nodes > 0) return luaL_error(L, "thermal: give either 'nodes' or 'samples', not both");
    if (nodes != floor(nodes) || nodes < 0 || nodes > 64) return luaL_error(L, "thermal: field 'nodes' must be an integer 1..64");
    if (samples != floor(samples) || samples < 0 || samples > 1e6)
        return luaL_error(L, "thermal: field 'samples' must be an integer 1..1e6");
    sp.nodes = (int)nodes;
    sp.samples = (size_t)samples;
    pf_rng local;
    pf_rng *r = pfl_opt_rng(L, 1, &local);
    pf_thermal_member *list;
    size_t count;
    pfl_check(L, pf_thermal_members(pfl_ctx(L), &sp, r, &list, &count), "thermal");
    /* Hand the list to Lua at once, so an error below does not leak it. */
    pf_thermal_member *held = lua_newuserdatauv(L, count * sizeof *held, 0);
    memcpy(held, list, count * sizeof *held);
    free(list);
    /* A common drift (a launched or moving cloud) shifts every member's
     * mean wave number by m v / hbar. */
    for (size_t i = 0; i < count; i++)
        for (int a = 0; a < d; a++) held[i].kmean[a] += sp.mass * drift[a] / PF_HBAR;
    double s0[PF_MAX_DIM];
    for (int a = 0; a < d; a++) s0[a] = pf_thermal_sigma0(sp.mass, sp.omega[a]);
    thermal_guard(g, held, count, s0, center);
    int mt, wt;
    push_member_lists(L, count, &mt, &wt);
    for (size_t i = 0; i < count; i++) {
        pf_wave *w = push_member(L, g, sp.mass, i, count);
        pfl_check(L, pf_wave_fill_coherent(w, center, s0, held[i].shift, held[i].kmean), "thermal");
        store_member(L, mt, wt, i, held[i].weight);
    }
    push_ensemble(L, mt, wt);
    pfl_check(L, PF_OK, "thermal");
    return 1;
}

static int l_count(lua_State *L)
{
    check_ens(L, 1);
    lua_pushinteger(L, ens_count(L, 1));
    return 1;
}

/* Entry i (argument 2, 1-based) of the ensemble's list in user value
 * 'list': 1 the members, 2 the weights. */
static int push_entry(lua_State *L, int list)
{
    check_ens(L, 1);
    lua_Integer i = luaL_checkinteger(L, 2), n = ens_count(L, 1);
    if (i < 1 || i > n) return luaL_argerror(L, 2, lua_pushfstring(L, "member index must be 1..%d", (int)n));
    lua_getiuservalue(L, 1, list);
    lua_geti(L, -1, i);
    return 1;
}

static int l_member(lua_State *L) { return push_entry(L, 1); }
static int l_weight(lua_State *L) { return push_entry(L, 2); }

static int l_weights(lua_State *L)
{
    check_ens(L, 1);
    lua_Integer n = ens_count(L, 1);
    lua_getiuservalue(L, 1, 2);
    lua_createtable(L, (int)n, 0);
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, -2, i);
        lua_seti(L, -2, i);
    }
    return 1;
}

/* e:each(fn) calls fn(member, weight, index) for every member; returns e. */
static int l_each(lua_State *L)
{
    check_ens(L, 1);
    luaL_checktype(L, 2, LUA_TFUNCTION);
    lua_Integer n = ens_count(L, 1);
    lua_getiuservalue(L, 1, 1);
    lua_getiuservalue(L, 1, 2);
    /* Progress per member (a bar on a terminal for long loops, pf_progress.h);
     * an error in fn ends the report before it propagates. */
    pf_context *ctx = pfl_ctx(L);
    for (lua_Integer i = 1; i <= n; i++) {
        pf_context_progress(ctx, "ensemble", (double)(i - 1), (double)n);
        lua_pushvalue(L, 2);
        lua_geti(L, 3, i);
        lua_geti(L, 4, i);
        lua_pushinteger(L, i);
        if (lua_pcall(L, 3, 0, 0) != LUA_OK) {
            pf_context_progress(ctx, "ensemble", -1.0, (double)n);
            return lua_error(L);
        }
    }
    pf_context_progress(ctx, "ensemble", (double)n, (double)n);
    lua_settop(L, 1);
    return 1;
}

static int l_copy(lua_State *L)
{
    check_ens(L, 1);
    lua_Integer n = ens_count(L, 1);
    lua_getiuservalue(L, 1, 1);
    int src = lua_gettop(L);
    lua_createtable(L, (int)n, 0);
    int mt = lua_gettop(L);
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, src, i);
        pf_wave *w = pfl_check_wave(L, -1);
        pfl_check(L, pf_wave_copy(w, pfl_push_wave_slot(L)), "copy");
        lua_remove(L, -2); /* the member copied */
        lua_seti(L, mt, i);
    }
    lua_getiuservalue(L, 1, 2);
    int wsrc = lua_gettop(L);
    lua_createtable(L, (int)n, 0);
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, wsrc, i);
        lua_seti(L, -2, i);
    }
    push_ensemble(L, mt, lua_gettop(L));
    return 1;
}

/* Closes the members now (big arrays are invisible to the collector). */
static int l_close(lua_State *L)
{
    pfl_ensemble_box *b = luaL_checkudata(L, 1, PFL_ENSEMBLE_TYPE);
    if (!b->open) return 0;
    b->open = 0;
    if (lua_getiuservalue(L, 1, 1) == LUA_TTABLE) {
        lua_Integer n = luaL_len(L, -1);
        for (lua_Integer i = 1; i <= n; i++) {
            lua_geti(L, -1, i);
            if (luaL_callmeta(L, -1, "__close")) lua_pop(L, 1);
            lua_pop(L, 1);
        }
    }
    lua_pop(L, 1);
    return 0;
}

static int l_gc(lua_State *L)
{
    /* The members are collected on their own; nothing is held in C. */
    (void)L;
    return 0;
}

static int l_tostring(lua_State *L)
{
    pfl_ensemble_box *b = luaL_checkudata(L, 1, PFL_ENSEMBLE_TYPE);
    if (!b->open) {
        lua_pushliteral(L, "ensemble (closed)");
        return 1;
    }
    lua_pushfstring(L, "ensemble of %d wave functions", (int)ens_count(L, 1));
    return 1;
}

/* ---- mixture observables ---- */

static int mixture_moments(lua_State *L, pf_rep rep, int which, double unit, const char *name)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_field f;
    pfl_source_field(L, &src, rep, &f, name);
    double mean[PF_MAX_DIM], cov[PF_MAX_DIM * PF_MAX_DIM];
    pf_status s = pf_field_moments(&f, mean, cov);
    int d = f.dim;
    pf_field_free(&f);
    pfl_check(L, s, name);
    for (int a = 0; a < d; a++) {
        double v = which == 0 ? mean[a] * unit : which == 1 ? cov[a * d + a] * unit * unit : sqrt(cov[a * d + a]) * unit;
        lua_pushnumber(L, v);
    }
    return d;
}

static int l_position_mean(lua_State *L) { return mixture_moments(L, PF_POSITION, 0, 1, "position_mean"); }
static int l_position_variance(lua_State *L) { return mixture_moments(L, PF_POSITION, 1, 1, "position_variance"); }
static int l_position_width(lua_State *L) { return mixture_moments(L, PF_POSITION, 2, 1, "position_width"); }
static int l_momentum_mean(lua_State *L) { return mixture_moments(L, PF_MOMENTUM, 0, PF_HBAR, "momentum_mean"); }
static int l_momentum_variance(lua_State *L) { return mixture_moments(L, PF_MOMENTUM, 1, PF_HBAR, "momentum_variance"); }
static int l_momentum_width(lua_State *L) { return mixture_moments(L, PF_MOMENTUM, 2, PF_HBAR, "momentum_width"); }
static int l_wavenumber_mean(lua_State *L) { return mixture_moments(L, PF_MOMENTUM, 0, 1, "wavenumber_mean"); }
static int l_wavenumber_width(lua_State *L) { return mixture_moments(L, PF_MOMENTUM, 2, 1, "wavenumber_width"); }

static int l_velocity_mean(lua_State *L)
{
    check_ens(L, 1);
    lua_getiuservalue(L, 1, 1);
    lua_geti(L, -1, 1);
    double m = pf_wave_mass(pfl_check_wave(L, -1));
    lua_pop(L, 2);
    return mixture_moments(L, PF_MOMENTUM, 0, PF_HBAR / m, "velocity_mean");
}

static int l_norm(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    double s = 0;
    for (size_t i = 0; i < src.mix.count; i++) s += src.mix.weights[i] * pf_wave_norm(src.mix.members[i]);
    lua_pushnumber(L, s);
    return 1;
}

/* Energy is linear in the density matrix: the weighted mean of the members'. */
static int l_kinetic_energy(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    double e = 0, wsum = 0;
    for (size_t i = 0; i < src.mix.count; i++) {
        double ei;
        pfl_check(L, pf_wave_lab_kinetic_energy(src.mix.members[i], &ei), "kinetic_energy");
        e += src.mix.weights[i] * ei;
        wsum += src.mix.weights[i];
    }
    lua_pushnumber(L, e / wsum);
    return 1;
}

/* ---- forwarding of wave-function steps ---- */

/* Upvalue 1: method name.  Calls the wave method on every member with the
 * same arguments.  A method that returns the member itself (an in-place
 * step) makes the call return the ensemble, followed by the weighted means
 * of any further numeric results (a mask's `w, removed` gives `e, removed`);
 * other methods return the weighted means of their numeric results.  Means
 * are right for quantities linear in the density matrix, such as the
 * probability a mask removes. */
static int forward_call(lua_State *L)
{
    const char *name = lua_tostring(L, lua_upvalueindex(1));
    check_ens(L, 1);
    int nargs = lua_gettop(L) - 1;
    lua_Integer n = ens_count(L, 1);
    lua_getiuservalue(L, 1, 1);
    int mt = lua_gettop(L);
    lua_getiuservalue(L, 1, 2);
    int wt = lua_gettop(L);
    int inplace = -1, nres = -1;
    double acc[8] = {0};
    for (lua_Integer i = 1; i <= n; i++) {
        lua_geti(L, mt, i);
        int member = lua_gettop(L);
        lua_getfield(L, member, name);
        lua_pushvalue(L, member);
        for (int a = 0; a < nargs; a++) lua_pushvalue(L, 2 + a);
        int base = lua_gettop(L) - nargs - 2;
        lua_call(L, nargs + 1, LUA_MULTRET);
        int got = lua_gettop(L) - base;
        int self = got >= 1 && lua_rawequal(L, base + 1, member);
        if (inplace < 0) inplace = self;
        if (self != inplace)
            return luaL_error(L, "ensemble: method '%s' returned the member for some members and not others", name);
        int first = base + 1 + self, count = got - self;
        if (nres < 0) nres = count > 8 ? 8 : count;
        lua_geti(L, wt, i);
        double w = lua_tonumber(L, -1);
        lua_pop(L, 1);
        for (int r = 0; r < nres; r++) {
            if (lua_type(L, first + r) != LUA_TNUMBER)
                return luaL_error(L, "ensemble: method '%s' returns a %s, which cannot be averaged over members; "
                                  "use e:distribution() for densities, or e:each(function(w, weight) ... end)",
                                  name, luaL_typename(L, first + r));
            acc[r] += w * lua_tonumber(L, first + r);
        }
        lua_settop(L, wt);
    }
    if (nres < 0) nres = 0;
    if (inplace == 1) lua_pushvalue(L, 1);
    for (int r = 0; r < nres; r++) lua_pushnumber(L, acc[r]);
    return (inplace == 1) + nres;
}

/* __index: own methods first, else a forwarder for a wave method. */
static int ens_index(lua_State *L)
{
    lua_getmetatable(L, 1);
    lua_getfield(L, -1, "methods");
    lua_pushvalue(L, 2);
    if (lua_rawget(L, -2) != LUA_TNIL) return 1;
    lua_pop(L, 3);
    luaL_getmetatable(L, PFL_WAVE_TYPE);
    lua_getfield(L, -1, "__index");
    lua_pushvalue(L, 2);
    /* not raw: a refused spelling (pfl_refuse_methods) names the kept one */
    if (lua_type(L, 2) != LUA_TSTRING || lua_gettable(L, -2) != LUA_TFUNCTION) return 0;
    lua_pushvalue(L, 2);
    lua_pushcclosure(L, forward_call, 1);
    return 1;
}

void pfl_open_ensemble(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"count", l_count}, {"member", l_member}, {"weight", l_weight}, {"weights", l_weights},
        {"each", l_each}, {"copy", l_copy}, {"close", l_close}, {"norm", l_norm},
        {"position_mean", l_position_mean}, {"position_variance", l_position_variance},
        {"position_width", l_position_width}, {"momentum_mean", l_momentum_mean},
        {"momentum_variance", l_momentum_variance}, {"momentum_width", l_momentum_width},
        {"wavenumber_mean", l_wavenumber_mean}, {"wavenumber_width", l_wavenumber_width},
        {"velocity_mean", l_velocity_mean}, {"kinetic_energy", l_kinetic_energy}, {NULL, NULL},
    };
    static const luaL_Reg meta[] = {
        {"__gc", l_gc}, {"__close", l_close}, {"__tostring", l_tostring}, {"__index", ens_index}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"mixture", l_mixture}, {"thermal", l_thermal}, {NULL, NULL}};
    /* methods live under "methods": __index is ens_index, which forwards wave methods too */
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_ENSEMBLE_TYPE, .meta = meta, .methods = methods,
                                               .methods_field = "methods", .guard_prefix = "ensemble:",
                                               .funcs = funcs}); /* names: pfl_aware.c */
    static const pfl_options_decl *const options[] = {&THERMAL_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
