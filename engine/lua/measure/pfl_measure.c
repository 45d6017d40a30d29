/* pfl_measure.c - regions (pf.box, pf.half_space, pf.ball, pf.mask), region
 * probabilities, covariance matrices, fidelity, and the
 * measurements that collapse the state; plus the small table helpers the
 * other measurement bindings share. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_collapse.h"
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_dist_measure.h"
#include "pf_frame.h"
#include "pf_observe.h"
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl BOX_OPTIONS = {"pf.box", (const char *const[]){"min", "max", NULL}};
static const pfl_options_decl HALF_SPACE_OPTIONS = {"pf.half_space", (const char *const[]){"point", "normal", NULL}};
static const pfl_options_decl BALL_OPTIONS = {"pf.ball", (const char *const[]){"center", "radius", NULL}};
static const pfl_options_decl MEASURE_REGION_OPTIONS = {
    "state:measure_region", (const char *const[]){"outcome", "seed", "generator", NULL}};
static const pfl_options_decl MEASURE_POSITION_OPTIONS = {
    "state:measure_position", (const char *const[]){"resolution", "outcome", "seed", "generator", NULL}};

/* ---- shared helpers ---- */

void pfl_push_doubles(lua_State *L, const double *v, size_t n)
{
    lua_createtable(L, (int)n, 0);
    for (size_t i = 0; i < n; i++) {
        lua_pushnumber(L, v[i]);
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
}

double *pfl_check_doubles(lua_State *L, int idx, size_t *n, const char *what)
{
    idx = lua_absindex(L, idx);
    if (lua_type(L, idx) != LUA_TTABLE) luaL_error(L, "%s: %s must be a table of numbers", pfl_caller_name(L), what);
    lua_Integer len = luaL_len(L, idx);
    double *v = lua_newuserdatauv(L, (size_t)(len > 0 ? len : 1) * sizeof(double), 0);
    for (lua_Integer i = 1; i <= len; i++) {
        int t = lua_geti(L, idx, i);
        v[i - 1] = lua_tonumber(L, -1);
        if (t != LUA_TNUMBER || !isfinite(v[i - 1])) {
            char buf[64];
            luaL_error(L, "%s: %s entry %d must be a finite number, got %s", pfl_caller_name(L), what, (int)i,
                       pfl_describe(L, -1, buf, sizeof buf));
        }
        lua_pop(L, 1);
    }
    *n = (size_t)len;
    return v;
}



void pfl_push_field(lua_State *L, const pf_field *f, pf_rep rep, double mass, const char *unit, double lab_scale,
                    const char *lab_unit)
{
    lua_createtable(L, 0, 9);
    pfl_push_doubles(L, f->values, f->total);
    lua_setfield(L, -2, "values");
    lua_createtable(L, f->dim, 0);
    for (int a = 0; a < f->dim; a++) {
        lua_pushinteger(L, (lua_Integer)f->n[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, "shape");
    lua_pushstring(L, rep == PF_POSITION ? "position" : "momentum");
    lua_setfield(L, -2, "space");
    lua_pushstring(L, rep == PF_POSITION ? "m" : "1/m");
    lua_setfield(L, -2, "axis_unit");
    lua_pushstring(L, unit);
    lua_setfield(L, -2, "unit");
    /* Axes in SI and in lab units: um for positions, mm/s for velocities. */
    double lab_axis = rep == PF_POSITION ? 1e6 : PF_HBAR / mass * 1e3;
    for (int pass = 0; pass < 2; pass++) {
        lua_createtable(L, f->dim, 0);
        for (int a = 0; a < f->dim; a++) {
            lua_createtable(L, (int)f->n[a], 0);
            for (size_t j = 0; j < f->n[a]; j++) {
                lua_pushnumber(L, pf_field_coord(f, a, j) * (pass ? lab_axis : 1.0));
                lua_rawseti(L, -2, (lua_Integer)j + 1);
            }
            lua_rawseti(L, -2, a + 1);
        }
        if (!pass) {
            lua_setfield(L, -2, "axes");
        } else {
            lua_createtable(L, 0, 4);
            lua_insert(L, -2);
            lua_setfield(L, -2, "axes");
            lua_pushstring(L, rep == PF_POSITION ? "um" : "mm/s");
            lua_setfield(L, -2, "axis_unit");
            lua_pushnumber(L, lab_scale);
            lua_setfield(L, -2, "scale");
            lua_pushstring(L, lab_unit);
            lua_setfield(L, -2, "unit");
            lua_setfield(L, -2, "lab");
        }
    }
    if (rep == PF_MOMENTUM) {
        lua_createtable(L, f->dim, 0);
        for (int a = 0; a < f->dim; a++) {
            lua_createtable(L, (int)f->n[a], 0);
            for (size_t j = 0; j < f->n[a]; j++) {
                lua_pushnumber(L, pf_field_coord(f, a, j) * PF_HBAR);
                lua_rawseti(L, -2, (lua_Integer)j + 1);
            }
            lua_rawseti(L, -2, a + 1);
        }
        lua_setfield(L, -2, "momentum_axes");
    }
}

/* ---- regions ---- */

typedef struct pfl_region_box {
    pf_region r;
    int has_fn;           /* mask from a function of the coordinates */
    pf_grid *cache_grid;  /* grid the cached mask was evaluated on (retained) */
    double cache_offset[PF_MAX_DIM]; /* lab offset of that grid's points (frame position X) */
    size_t mask_n;        /* entries of a mask given as a table */
    int cache_local;      /* the cached mask holds only this MPI rank's points */
} pfl_region_box;

static pfl_region_box *new_region(lua_State *L, pf_region_kind kind)
{
    pfl_region_box *b = lua_newuserdatauv(L, sizeof *b, 2);
    memset(b, 0, sizeof *b);
    b->r.kind = kind;
    luaL_setmetatable(L, PFL_REGION_TYPE);
    return b;
}

/* Reads a vector field of up to 3 numbers; returns its length. */
static int region_vector(lua_State *L, int t, const char *field, double *out, const char *fname)
{
    int type = pfl_option_get(L, t, field);
    int n = 0;
    if (type == LUA_TNUMBER) {
        out[0] = lua_tonumber(L, -1);
        n = 1;
    } else if (type == LUA_TTABLE) {
        n = (int)luaL_len(L, -1);
        if (n < 1 || n > PF_MAX_DIM) luaL_error(L, "%s: field '%s' must list 1 to 3 numbers", fname, field);
        for (int a = 0; a < n; a++) {
            lua_geti(L, -1, a + 1);
            out[a] = lua_tonumber(L, -1);
            if (!lua_isnumber(L, -1) || !isfinite(out[a]))
                luaL_error(L, "%s: field '%s' entry %d must be a finite number", fname, field, a + 1);
            lua_pop(L, 1);
        }
    } else {
        luaL_error(L, "%s: missing field '%s' (a number or a table of numbers, m)", fname, field);
    }
    lua_pop(L, 1);
    return n;
}

/* Two vector fields that must have the same length (a box's corners, a
 * half-space's point and normal); returns that length. */
static int region_vector_pair(lua_State *L, const char *first, double *out1, const char *second, double *out2,
                              const char *fname)
{
    int n1 = region_vector(L, 1, first, out1, fname), n2 = region_vector(L, 1, second, out2, fname);
    if (n1 != n2) luaL_error(L, "%s: '%s' and '%s' must have the same number of entries", fname, first, second);
    return n1;
}

/* The new region on top of the stack keeps the number of axes its vectors
 * gave (user value 1); returns 1, the region. */
static int region_done(lua_State *L, int axes)
{
    lua_pushinteger(L, axes);
    lua_setiuservalue(L, -2, 1);
    return 1;
}

/* pf.box{min = {..}, max = {..}} (m) */
static int l_box(lua_State *L)
{
    pfl_options_check(L, 1, &BOX_OPTIONS);
    pfl_region_box *b = new_region(L, PF_REGION_BOX);
    int n1 = region_vector_pair(L, "min", b->r.lo, "max", b->r.hi, "box");
    for (int a = 0; a < n1; a++)
        if (b->r.lo[a] > b->r.hi[a]) return luaL_error(L, "box: min > max on axis %d (%f > %f)", a + 1, b->r.lo[a], b->r.hi[a]);
    /* Axes not given are unbounded. */
    for (int a = n1; a < PF_MAX_DIM; a++) {
        b->r.lo[a] = -INFINITY;
        b->r.hi[a] = INFINITY;
    }
    return region_done(L, n1);
}

/* pf.half_space{point = {..}, normal = {..}} - the side the normal points to. */
static int l_half_space(lua_State *L)
{
    pfl_options_check(L, 1, &HALF_SPACE_OPTIONS);
    pfl_region_box *b = new_region(L, PF_REGION_HALF_SPACE);
    int n1 = region_vector_pair(L, "point", b->r.point, "normal", b->r.normal, "half_space");
    double nn = 0;
    for (int a = 0; a < n1; a++) nn += b->r.normal[a] * b->r.normal[a];
    if (!(nn > 0)) return luaL_error(L, "half_space: 'normal' must not be zero");
    return region_done(L, n1);
}

/* pf.ball{center = {..}, radius = r} (m) */
static int l_ball(lua_State *L)
{
    pfl_options_check(L, 1, &BALL_OPTIONS);
    pfl_region_box *b = new_region(L, PF_REGION_BALL);
    int n = region_vector(L, 1, "center", b->r.point, "ball");
    b->r.radius = pfl_field_number(L, 1, "radius", 0, 1);
    if (!(b->r.radius > 0)) return luaL_error(L, "ball: field 'radius' must be positive (m), got %f", b->r.radius);
    return region_done(L, n);
}

/* pf.mask(f) with f(x[, y, z]) -> weight in [0, 1], or pf.mask{w1, w2, ...}
 * with one weight per grid point (row-major). */
static int l_mask(lua_State *L)
{
    int t = lua_type(L, 1);
    if (t != LUA_TFUNCTION && t != LUA_TTABLE)
        return luaL_argerror(L, 1, "mask needs a function of the coordinates or a table of weights");
    pfl_region_box *b = new_region(L, PF_REGION_MASK);
    if (t == LUA_TFUNCTION) {
        b->has_fn = 1;
        lua_pushvalue(L, 1);
        lua_setiuservalue(L, -2, 1);
    } else {
        size_t n;
        double *v = pfl_check_doubles(L, 1, &n, "mask");
        for (size_t i = 0; i < n; i++)
            if (!(v[i] >= 0 && v[i] <= 1)) return luaL_error(L, "mask: weight %d must lie in [0, 1], got %f", (int)i + 1, v[i]);
        b->mask_n = n;
        b->r.mask = v;
        lua_setiuservalue(L, -2, 2);
    }
    return 1;
}

/* A mask function's weights at this rank's points of a split grid
 * (global offsets [begin, end)) into v; the function runs protected, so a
 * failure on one rank fails every rank instead of leaving the others
 * waiting in the next collective call. */
static void sample_local_mask(lua_State *L, int fn, pf_grid *g, const double *offset, size_t begin, size_t end, double *v)
{
    int d = pf_grid_dim(g);
    size_t idx[PF_MAX_DIM] = {0, 0, 0}, rest = begin;
    for (int a = d - 1; a >= 0; a--) {
        idx[a] = rest % pf_grid_points(g, a);
        rest /= pf_grid_points(g, a);
    }
    char msg[256] = "";
    for (size_t off = begin; off < end && !msg[0]; off++) {
        lua_pushvalue(L, fn);
        for (int a = 0; a < d; a++) lua_pushnumber(L, pf_grid_x(g, a, idx[a]) + offset[a]);
        if (lua_pcall(L, d, 1, 0) != LUA_OK) {
            snprintf(msg, sizeof msg, "mask: the function failed at point %d: %s", (int)off + 1,
                     lua_type(L, -1) == LUA_TSTRING ? lua_tostring(L, -1) : "(no message)");
        } else {
            int ok = lua_type(L, -1) == LUA_TNUMBER;
            v[off - begin] = lua_tonumber(L, -1);
            if (!ok || !(v[off - begin] >= 0 && v[off - begin] <= 1))
                snprintf(msg, sizeof msg, "mask: the function must return a weight in [0, 1], got %s at point %d",
                         ok ? lua_tostring(L, -1) : luaL_typename(L, -1), (int)off + 1);
        }
        lua_pop(L, 1);
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < pf_grid_points(g, a)) break;
            idx[a] = 0;
        }
    }
    if (pf_dist_flag_any(g, msg[0] != 0))
        luaL_error(L, "%s", msg[0] ? msg : "mask: the function failed at a point of another MPI rank (its message says why)");
}

static void check_region(lua_State *L, int arg, pf_grid *g, const double *offset, int local, pf_region *out);

void pfl_check_region(lua_State *L, int arg, pf_grid *g, const double *offset, pf_region *out)
{
    check_region(L, arg, g, offset, 0, out);
}

/* local: a mask function is sampled at this MPI rank's points of a split
 * grid only (pf_region's mask_first, mask_count), for measurements that
 * run on each rank's planes. */
static void check_region(lua_State *L, int arg, pf_grid *g, const double *offset, int local, pf_region *out)
{
    static const double none[PF_MAX_DIM] = {0, 0, 0};
    if (!offset) offset = none;
    arg = lua_absindex(L, arg);
    pfl_region_box *b = luaL_checkudata(L, arg, PFL_REGION_TYPE);
    int d = pf_grid_dim(g);
    if (b->r.kind != PF_REGION_MASK) {
        lua_getiuservalue(L, arg, 1);
        int n = (int)lua_tointeger(L, -1);
        lua_pop(L, 1);
        if (n != d && !(b->r.kind == PF_REGION_BOX && n < d))
            luaL_error(L, "region has %d coordinates but the grid is %dD", n, d);
        *out = b->r;
        return;
    }
    if (!b->has_fn) {
        if (b->mask_n != pf_grid_total(g))
            luaL_error(L, "mask has %d weights but the grid has %d points", (int)b->mask_n, (int)pf_grid_total(g));
        *out = b->r;
        return;
    }
    /* The weights are sampled once per grid and lab offset: a function is
     * called at the lab positions x = xi + X of the grid points, and the
     * table is reused while the wave stays in that frame position. */
    local = local && pf_grid_distributed(g);
    int same = b->cache_grid == g && b->cache_local == local;
    for (int a = 0; a < d; a++) same = same && b->cache_offset[a] == offset[a];
    if (!same && local) {
        size_t begin, end;
        pf_grid_local_range(g, &begin, &end);
        double *v = lua_newuserdatauv(L, (end > begin ? end - begin : 1) * sizeof(double), 0);
        v[0] = 0; /* a rank without planes keeps one harmless weight */
        lua_getiuservalue(L, arg, 1);
        sample_local_mask(L, lua_gettop(L), g, offset, begin, end, v);
        lua_pop(L, 1);
        lua_setiuservalue(L, arg, 2);
        if (b->cache_grid) pf_grid_release(b->cache_grid);
        pf_grid_retain(g);
        b->cache_grid = g;
        b->cache_local = 1;
        for (int a = 0; a < PF_MAX_DIM; a++) b->cache_offset[a] = a < d ? offset[a] : 0.0;
        b->r.mask = v;
        b->r.mask_first = begin;
        b->r.mask_count = end > begin ? end - begin : 1;
    } else if (!same) {
        size_t n = pf_grid_total(g);
        double *v = lua_newuserdatauv(L, n * sizeof(double), 0);
        lua_getiuservalue(L, arg, 1);
        int fn = lua_gettop(L);
        size_t idx[PF_MAX_DIM] = {0, 0, 0};
        for (size_t off = 0; off < n; off++) {
            lua_pushvalue(L, fn);
            for (int a = 0; a < d; a++) lua_pushnumber(L, pf_grid_x(g, a, idx[a]) + offset[a]);
            lua_call(L, d, 1);
            int ok = lua_type(L, -1) == LUA_TNUMBER;
            v[off] = lua_tonumber(L, -1);
            if (!ok || !(v[off] >= 0 && v[off] <= 1))
                luaL_error(L, "mask: the function must return a weight in [0, 1], got %s at point %d",
                           ok ? lua_tostring(L, -1) : luaL_typename(L, -1), (int)off + 1);
            lua_pop(L, 1);
            for (int a = d - 1; a >= 0; a--) {
                if (++idx[a] < pf_grid_points(g, a)) break;
                idx[a] = 0;
            }
        }
        lua_pop(L, 1);
        lua_setiuservalue(L, arg, 2);
        if (b->cache_grid) pf_grid_release(b->cache_grid);
        pf_grid_retain(g);
        b->cache_grid = g;
        for (int a = 0; a < PF_MAX_DIM; a++) b->cache_offset[a] = a < d ? offset[a] : 0.0;
        b->cache_local = 0;
        b->r.mask = v;
        b->r.mask_first = b->r.mask_count = 0;
    }
    *out = b->r;
}

static int region_gc(lua_State *L)
{
    pfl_region_box *b = luaL_checkudata(L, 1, PFL_REGION_TYPE);
    if (b->cache_grid) pf_grid_release(b->cache_grid);
    b->cache_grid = NULL;
    return 0;
}

static int region_tostring(lua_State *L)
{
    pfl_region_box *b = luaL_checkudata(L, 1, PFL_REGION_TYPE);
    static const char *names[] = {"box", "half-space", "ball", "mask"};
    lua_pushfstring(L, "region (%s)", names[b->r.kind]);
    return 1;
}

/* ---- observables ---- */

/* The region at arg in the co-moving grid's coordinates of the source's
 * shared frame (pf_frame.h): lab corners, points and centres move by -X; a
 * mask given as a function of the coordinates is sampled at the lab
 * positions of the grid points (xi + X); a table of weights holds one
 * weight per grid point wherever the grid sits. */
static void source_region(lua_State *L, int arg, const pfl_source *src, pf_region *r, const char *name, int local)
{
    pf_frame fr;
    pfl_source_frame(L, src, &fr, name);
    check_region(L, arg, pfl_source_grid(src), fr.position, local, r);
    int d = pf_grid_dim(pfl_source_grid(src)), moved = 0;
    for (int a = 0; a < d; a++) moved = moved || fr.position[a] != 0.0;
    if (!moved) return;
    for (int a = 0; a < d; a++) {
        r->lo[a] -= fr.position[a]; /* an open side (+-inf) stays open */
        r->hi[a] -= fr.position[a];
        r->point[a] -= fr.position[a];
    }
}

/* s:probability_in(region) -> probability (normalised by the norm). */
static int l_probability_in(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_region r;
    source_region(L, 2, &src, &r, "probability_in", pfl_source_split(&src)); /* split: this rank's points */
    double num = 0, den = 0;
    for (size_t i = 0; i < src.mix.count; i++) {
        double p;
        pfl_check(L, pf_wave_region_probability(src.mix.members[i], &r, &p), "probability_in");
        double n = pf_wave_norm(src.mix.members[i]);
        num += src.mix.weights[i] * n * p;
        den += src.mix.weights[i] * n;
    }
    lua_pushnumber(L, num / den);
    return 1;
}

static void push_matrix(lua_State *L, const double *m, int d, double unit2)
{
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_createtable(L, d, 0);
        for (int b = 0; b < d; b++) {
            lua_pushnumber(L, m[a * d + b] * unit2);
            lua_rawseti(L, -2, b + 1);
        }
        lua_rawseti(L, -2, a + 1);
    }
}

static int covariance(lua_State *L, pf_rep rep, double unit, const char *name)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_field f;
    double mean[PF_MAX_DIM], cov[PF_MAX_DIM * PF_MAX_DIM];
    pf_status s;
    int d;
    if (pfl_source_split(&src)) { /* one wave over MPI ranks: from each rank's planes */
        pfl_source_geometry(L, &src, rep, &f, name);
        d = f.dim;
        s = pf_dist_moments(src.single, rep, &f, mean, cov);
    } else {
        pfl_source_field(L, &src, rep, &f, name);
        s = pf_field_moments(&f, mean, cov);
        d = f.dim;
        pf_field_free(&f);
    }
    pfl_check(L, s, name);
    push_matrix(L, cov, d, unit * unit);
    return 1;
}

static int l_position_covariance(lua_State *L) { return covariance(L, PF_POSITION, 1.0, "position_covariance"); }
static int l_momentum_covariance(lua_State *L) { return covariance(L, PF_MOMENTUM, PF_HBAR, "momentum_covariance"); }

static int l_fidelity(lua_State *L)
{
    pf_wave *a = pfl_check_wave(L, 1), *b = pfl_check_wave(L, 2);
    double f;
    pfl_check(L, pf_wave_lab_fidelity(a, b, &f), "fidelity");
    lua_pushnumber(L, f);
    return 1;
}

/* ---- measurements with collapse ---- */

/* s:measure_region(region [, {outcome = true|false, seed=, generator=}])
 * -> outcome (boolean), its probability */
static int l_measure_region(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_region r;
    source_region(L, 2, &src, &r, "measure_region", 0);
    int opts = pfl_options_opt(L, 3, &MEASURE_REGION_OPTIONS);
    int forced = -1;
    if (opts) {
        int t = pfl_option_get(L, opts, "outcome");
        if (t == LUA_TBOOLEAN) forced = lua_toboolean(L, -1);
        else if (t != LUA_TNIL) return luaL_error(L, "measure_region: field 'outcome' must be true or false");
        lua_pop(L, 1);
    }
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, opts, &local);
    int out;
    double p;
    if (!src.is_ensemble) {
        pfl_check(L, pf_wave_measure_region(src.single, &r, rng, forced, &out, &p), "measure_region");
    } else {
        double *nw = lua_newuserdatauv(L, src.mix.count * sizeof(double), 0);
        pfl_check(L, pf_mixture_measure_region(&src.mix, &r, rng, forced, &out, &p, nw), "measure_region");
        lua_getiuservalue(L, 1, 2);
        for (size_t i = 0; i < src.mix.count; i++) {
            lua_pushnumber(L, nw[i]);
            lua_rawseti(L, -2, (lua_Integer)i + 1);
        }
    }
    lua_pushboolean(L, out);
    lua_pushnumber(L, p);
    return 2;
}

/* s:measure_position{resolution = s | {..} (m, 0 = axis not measured),
 *                    outcome = {..} (forced), seed=, generator=}
 * -> outcome table (m; NaN for unmeasured axes), outcome density.
 * On an ensemble: p(y) = sum w_i p_i(y); a drawn outcome picks a member by
 * weight and measures it; every member is then updated with that outcome
 * and the weights by Bayes' rule, w_i p_i(y) / p(y). */
static int l_measure_position(lua_State *L)
{
    pfl_options_check(L, 2, &MEASURE_POSITION_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    double sigma[PF_MAX_DIM] = {0, 0, 0}, forced[PF_MAX_DIM] = {0, 0, 0}, out[PF_MAX_DIM];
    pfl_field_vector(L, 2, "resolution", d, sigma, 1);
    int has_forced = pfl_field_vector(L, 2, "outcome", d, forced, 0);
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, 2, &local);
    /* Outcomes are lab positions: on the co-moving grid of the members'
     * shared frame they sit at x - X (pf_frame.h). */
    pf_frame fr;
    pfl_source_frame(L, &src, &fr, "measure_position");
    if (has_forced)
        for (int a = 0; a < d; a++) forced[a] -= fr.position[a];
    double density;
    if (!src.is_ensemble) {
        pfl_check(L, pf_wave_measure_position(src.single, sigma, rng, has_forced ? forced : NULL, out, &density),
                  "measure_position");
    } else {
        size_t n = src.mix.count, pick = 0;
        double *dens = lua_newuserdatauv(L, n * sizeof(double), 0);
        if (!has_forced) {
            double wsum = 0, u;
            for (size_t i = 0; i < n; i++) wsum += src.mix.weights[i];
            u = pf_rng_uniform(rng) * wsum;
            for (pick = 0; pick + 1 < n && u >= src.mix.weights[pick]; pick++) u -= src.mix.weights[pick];
            pfl_check(L, pf_wave_measure_position(src.mix.members[pick], sigma, rng, NULL, out, &dens[pick]),
                      "measure_position");
            for (int a = 0; a < d; a++) forced[a] = sigma[a] > 0 ? out[a] : 0;
        }
        density = 0;
        for (size_t i = 0; i < n; i++) {
            if (!has_forced && i == pick) {
                density += src.mix.weights[i] * dens[i];
                continue;
            }
            pf_status s = pf_wave_measure_position(src.mix.members[i], sigma, NULL, forced, out, &dens[i]);
            if (s != PF_OK) dens[i] = 0; /* this member cannot give the outcome: weight 0 below */
            density += src.mix.weights[i] * dens[i];
        }
        if (!(density > 0)) return luaL_error(L, "measure_position: the outcome has zero probability density");
        lua_getiuservalue(L, 1, 2);
        for (size_t i = 0; i < n; i++) {
            lua_pushnumber(L, src.mix.weights[i] * dens[i] / density);
            lua_rawseti(L, -2, (lua_Integer)i + 1);
        }
        for (int a = 0; a < d; a++) out[a] = sigma[a] > 0 ? forced[a] : NAN;
    }
    for (int a = 0; a < d; a++) out[a] += fr.position[a]; /* NAN (unmeasured axis) stays NAN */
    pfl_push_doubles(L, out, (size_t)d);
    lua_pushnumber(L, density);
    return 2;
}

void pfl_open_measure(lua_State *L, int mod)
{
    static const luaL_Reg state_methods[] = {
        {"probability_in", l_probability_in}, {"position_covariance", l_position_covariance},
        {"momentum_covariance", l_momentum_covariance}, {"measure_region", l_measure_region},
        {"measure_position", l_measure_position}, {NULL, NULL},
    };
    static const luaL_Reg wave_methods[] = {
        {"fidelity", l_fidelity}, {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {
        {"box", l_box}, {"half_space", l_half_space}, {"ball", l_ball}, {"mask", l_mask}, {NULL, NULL},
    };
    static const luaL_Reg region_meta[] = {{"__gc", region_gc}, {"__tostring", region_tostring}, {NULL, NULL}};
    /* a region has no methods; its module functions come after the method groups below */
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_REGION_TYPE, .meta = region_meta});
    pfl_add_state_methods(L, state_methods);
    pfl_add_wave_methods(L, wave_methods);
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&BOX_OPTIONS, &HALF_SPACE_OPTIONS, &BALL_OPTIONS,
                                                      &MEASURE_REGION_OPTIONS, &MEASURE_POSITION_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
