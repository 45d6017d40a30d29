/* pfl_ops.c - Lua methods for instantaneous operations on a wave function:
 * phase pulses (kick, imprint, grating, lens), amplitude masks (slit, slits,
 * mask_grating, aperture, mask), displacement (shift) and momentum masks
 * (select_velocity, momentum_mask).  Masks return the wave and the
 * probability they removed.  Units are SI throughout (m, s, rad, rad/m). */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_frame.h"
#include "pf_ops.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

static const pfl_options_decl KICK_OPTIONS = {"wave:kick", (const char *const[]){"frame", NULL}};
static const pfl_options_decl GRATING_OPTIONS = {"wave:grating", (const char *const[]){"depth", "period", "axis", "phase", NULL}};
static const pfl_options_decl LENS_OPTIONS = {"wave:lens", (const char *const[]){"axis", "center", NULL}};
static const pfl_options_decl SLITS_OPTIONS = {
    "wave:slits", (const char *const[]){"count", "width", "pitch", "center", "axis", "edges", "edge_width", NULL}};
static const pfl_options_decl SLIT_OPTIONS = {
    "wave:slit", (const char *const[]){"width", "center", "axis", "edges", "edge_width", NULL}};
static const pfl_options_decl MASK_GRATING_OPTIONS = {
    "wave:mask_grating",
    (const char *const[]){"period", "open_fraction", "offset", "axis", "edges", "edge_width", NULL}};
static const pfl_options_decl APERTURE_OPTIONS = {
    "wave:aperture",
    (const char *const[]){"shape", "radius", "size", "center", "axes", "edges", "edge_width", NULL}};
static const pfl_options_decl SELECT_VELOCITY_OPTIONS = {
    "wave:select_velocity", (const char *const[]){"width", "center", "axis", "shape", NULL}};

static int dim_of(pf_wave *w) { return pf_grid_dim(pf_wave_grid(w)); }

static int push_masked(lua_State *L, double removed)
{
    lua_settop(L, 1);
    lua_pushnumber(L, removed);
    return 2;
}

/* Optional table argument at arg: an empty table stands in when absent. */
static void opt_table(lua_State *L, int arg)
{
    if (lua_isnoneornil(L, arg)) {
        lua_settop(L, arg - 1);
        lua_newtable(L);
    }
    luaL_checktype(L, arg, LUA_TTABLE);
}

/* Positions and velocities given to the masks and pulses below are lab
 * ones; for a wave in a moving frame (pf_frame.h) they are converted to the
 * co-moving grid here: x_grid = x_lab - X, v_grid = v_lab - hbar K / m.
 * Both are all zero for a wave that never moved. */
static void frame_offsets(const pf_wave *w, double *X, double *V)
{
    pf_frame f;
    pf_wave_frame(w, &f);
    for (int a = 0; a < PF_MAX_DIM; a++) {
        X[a] = f.position[a];
        V[a] = PF_HBAR * f.wavenumber[a] / pf_wave_mass(w);
    }
}

/* An operation along one axis: the wave at argument 1, its options table at
 * argument 2 checked against decl, and the table's field 'axis' (default 1;
 * returned 0-based in *axis). */
static pf_wave *check_axis_op(lua_State *L, const pfl_options_decl *decl, const char *name, int *axis)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pfl_options_check(L, 2, decl);
    *axis = pfl_field_axis(L, 2, "axis", pf_wave_grid(w), 1, name);
    return w;
}

/* A pattern that repeats with a period along one axis (wave:grating,
 * wave:mask_grating): the fields both read, and where the lab pattern sits on
 * the co-moving grid. */
typedef struct periodic_pattern {
    pf_wave *w;
    int axis;        /* 0-based */
    double period;   /* m, field 'period' (required) */
    double frame_fraction; /* periods the pattern is shifted by on the co-moving grid */
} periodic_pattern;

/* Reads the wave, options, axis and period.  A pattern given in the lab sits
 * on the co-moving grid shifted by the frame offset X; only X's fraction of
 * a period matters, and it is taken exactly (fmod) before the caller forms a
 * phase or an offset from it.  The fraction is 0 when there is no shift to
 * apply: the wave never moved, or the period is not positive (the core then
 * reports the bad period); adding a zero shift leaves the phase or offset
 * as it was. */
static periodic_pattern check_periodic(lua_State *L, const pfl_options_decl *decl, const char *name)
{
    periodic_pattern p = {0};
    p.w = check_axis_op(L, decl, name, &p.axis);
    p.period = pfl_field_number(L, 2, "period", 0, 1);
    double X[PF_MAX_DIM], V[PF_MAX_DIM];
    frame_offsets(p.w, X, V);
    if (X[p.axis] != 0 && p.period > 0) p.frame_fraction = fmod(X[p.axis] / p.period, 1.0);
    return p;
}

/* w:kick(kx [, ky, kz] [, {frame = true}]) - momentum kick hbar k (k in
 * rad/m, per axis) in the lab.  frame = true puts it into the wave's frame
 * (pf_frame.h) instead of on the grid, so a fast cloud needs no momentum
 * on the grid; otherwise a moved frame takes the kick's phase q.X. */
static int l_kick(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double k[PF_MAX_DIM];
    int d = dim_of(w);
    pfl_check_axis_values(L, 2, d, k, "kick wave number (rad/m)");
    int opts = pfl_options_opt(L, lua_type(L, 2) == LUA_TTABLE ? 3 : 2 + d, &KICK_OPTIONS);
    int in_frame = opts ? pfl_field_boolean(L, opts, "frame", 0) : 0;
    return pfl_return_self(L, in_frame ? pf_wave_frame_kick(w, k) : pf_wave_lab_kick(w, k), "kick");
}

/* w:imprint(f) - psi *= exp(i f(x[, y, z])), f in rad. */
static int l_imprint(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    luaL_checktype(L, 2, LUA_TFUNCTION);
    pfl_sampler s = {L, 2, dim_of(w), PF_POSITION, "imprint", "phase", 0, 0, pf_wave_grid(w), {0, 0, 0}};
    pfl_sampler_frame_offset(w, PF_POSITION, s.offset); /* f sees lab positions */
    pf_status st = pf_wave_imprint(w, pfl_sample_cb, &s);
    if (st == PF_ECALLBACK) return pfl_raise_callback(L, "imprint");
    return pfl_return_self(L, st, "imprint");
}

/* w:grating{depth = rad, period = m, axis = 1, phase = 0} - thin standing-wave
 * phase grating exp(i depth cos(2 pi x / period + phase)). */
static int l_grating(lua_State *L)
{
    periodic_pattern p = check_periodic(L, &GRATING_OPTIONS, "grating");
    double depth = pfl_field_number(L, 2, "depth", 0, 1);
    double phase = pfl_field_number(L, 2, "phase", 0, 0);
    /* cos(2 pi (xi + X) / period + phase) on the co-moving grid. */
    phase += PF_TWO_PI * p.frame_fraction;
    return pfl_return_self(L, pf_wave_grating(p.w, p.axis, depth, p.period, phase), "grating");
}

/* w:lens(f [, {axis = a, center = c}]) - thin quadratic-phase lens of focal
 * time f seconds (negative: diverging) on every axis or on one. */
static int l_lens(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double f = pfl_check_finite(L, 2, "focal time (s)");
    if (f == 0) return luaL_argerror(L, 2, "focal time (s) must be non-zero (negative for a diverging lens), got 0");
    opt_table(L, 3);
    pfl_options_check(L, 3, &LENS_OPTIONS);
    int d = dim_of(w);
    int axis = pfl_option_get(L, 3, "axis") == LUA_TNIL ? -1 : 0;
    lua_pop(L, 1);
    if (axis == 0) axis = pfl_field_axis(L, 3, "axis", pf_wave_grid(w), 1, "lens");
    double center[PF_MAX_DIM] = {0, 0, 0};
    pfl_field_vector(L, 3, "center", d, center, 0);
    if (!pf_wave_frame_moved(w)) {
        return pfl_return_self(L, pf_wave_lens(w, axis, f, center), "lens");
    }
    /* Moving frame: -m (xi - c')^2 / 2 hbar f with c' = c - X splits into a
     * lens about the grid's 0, a kick q = m c' / (hbar f) that goes into the
     * frame (so a lens far from the cloud needs no momentum on the grid) and
     * a constant phase -m c'^2 / (2 hbar f). */
    pf_frame fr;
    pf_wave_frame(w, &fr);
    double q[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < d; a++) {
        if (axis >= 0 && a != axis) continue;
        double c = center[a] - fr.position[a];
        q[a] = pf_wave_mass(w) * c / (PF_HBAR * f);
        fr.phase -= pf_wave_mass(w) * c * c / (2 * PF_HBAR * f);
    }
    pfl_check(L, pf_wave_lens(w, axis, f, NULL), "lens");
    for (int a = 0; a < d; a++) fr.wavenumber[a] += q[a]; /* exp(i q xi): K += q, no phase q.X */
    return pfl_return_self(L, pf_wave_set_frame(w, &fr), "lens");
}

/* Fields edges = "exact" (default: edges where they are, band-limited) or
 * "cells" (each grid point open or shut), and edge_width = m (Gaussian rms
 * of a soft edge, exact edges only) of every amplitude mask. */
static pf_edges field_edges(lua_State *L, int t, const char *name)
{
    pf_edges e = {PF_EDGES_EXACT, 0.0};
    int type = pfl_option_get(L, t, "edges");
    if (type != LUA_TNIL) {
        const char *v = lua_tostring(L, -1);
        if (type == LUA_TSTRING && strcmp(v, "cells") == 0) e.mode = PF_EDGES_CELLS;
        else if (!(type == LUA_TSTRING && strcmp(v, "exact") == 0)) {
            char buf[80];
            luaL_error(L, "%s: field 'edges' must be \"exact\" or \"cells\", got %s", name,
                       pfl_describe(L, -1, buf, sizeof buf));
        }
    }
    lua_pop(L, 1);
    e.width = pfl_field_number(L, t, "edge_width", 0, 0);
    if (e.width != 0 && e.mode == PF_EDGES_CELLS) {
        char v[32];
        snprintf(v, sizeof v, "%g", e.width);
        luaL_error(L, "%s: field 'edge_width' (%s m) needs edges = \"exact\"; cell-switched edges are always hard",
                   name, v);
    }
    return e;
}

/* w:slits{count = 1, width = m, pitch = m, center = 0, axis = 1, edges, edge_width} -> w, removed */
static int slits(lua_State *L, const char *name, int single)
{
    int axis;
    pf_wave *w = check_axis_op(L, single ? &SLIT_OPTIONS : &SLITS_OPTIONS, name, &axis);
    lua_Integer count = single ? 1 : pfl_field_integer(L, 2, "count", 1, 1, name);
    if (count > 1000000) return luaL_error(L, "%s: field 'count' must be at most 1000000, got %d", name, (int)count);
    double width = pfl_field_number(L, 2, "width", 0, 1);
    double pitch = single ? 0 : pfl_field_number(L, 2, "pitch", 0, count > 1);
    double center = pfl_field_number(L, 2, "center", 0, 0);
    double X[PF_MAX_DIM], V[PF_MAX_DIM];
    frame_offsets(w, X, V);
    center -= X[axis];
    pf_edges e = field_edges(L, 2, name);
    double removed = 0;
    pf_slits_spec spec = {.axis = axis, .count = (int)count, .width = width, .pitch = pitch, .center = center};
    pfl_check(L, pf_wave_slits(w, &spec, &e, &removed), name);
    return push_masked(L, removed);
}

static int l_slit(lua_State *L) { return slits(L, "slit", 1); }
static int l_slits(lua_State *L) { return slits(L, "slits", 0); }

/* w:mask_grating{period = m, open_fraction = 0.5, offset = 0, axis = 1} -> w, removed */
static int l_mask_grating(lua_State *L)
{
    periodic_pattern p = check_periodic(L, &MASK_GRATING_OPTIONS, "mask_grating");
    double open = pfl_field_number(L, 2, "open_fraction", 0.5, 0);
    double offset = pfl_field_number(L, 2, "offset", 0, 0);
    offset -= p.period * p.frame_fraction;
    pf_edges e = field_edges(L, 2, "mask_grating");
    double removed = 0;
    pfl_check(L, pf_wave_mask_grating(p.w, p.axis, p.period, open, offset, &e, &removed), "mask_grating");
    return push_masked(L, removed);
}

/* A rectangle's size along one axis: a number, or false for unbounded. */
static int size_entry(lua_State *L, int type, double *out)
{
    if (type == LUA_TBOOLEAN && !lua_toboolean(L, -1)) *out = INFINITY;
    else if (type == LUA_TNUMBER) *out = lua_tonumber(L, -1);
    else return 0;
    return 1;
}

/* Rectangle sizes: a number for every axis, or a table whose entries are
 * numbers or false (false or math.huge: unbounded along that axis). */
static void read_sizes(lua_State *L, int t, int d, double *size)
{
    char buf[80];
    int type = pfl_option_get(L, t, "size");
    if (type == LUA_TNUMBER) {
        for (int a = 0; a < d; a++) size[a] = lua_tonumber(L, -1);
    } else if (type == LUA_TTABLE) {
        pfl_read_axis_list(L, &(pfl_axis_list){"aperture", "size", d, d, "a number (m) or false", size_entry}, size);
    } else {
        luaL_error(L, "aperture: a rectangle needs field 'size' (full widths, m; a number or one per axis), got %s",
                   pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
}

/* w:aperture{shape = "circle", radius = m, center = {c1, c2}, axes = {1, 2}}
 * w:aperture{shape = "rectangle", size = {..}, center = {..}} -> w, removed */
static int l_aperture(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pfl_options_check(L, 2, &APERTURE_OPTIONS);
    int d = dim_of(w);
    pf_edges e = field_edges(L, 2, "aperture");
    double X[PF_MAX_DIM], V[PF_MAX_DIM];
    frame_offsets(w, X, V);
    pfl_option_get(L, 2, "shape");
    const char *shape = lua_tostring(L, -1);
    double removed = 0;
    if (lua_type(L, -1) == LUA_TSTRING && strcmp(shape, "circle") == 0) {
        int axes[2] = {0, 1};
        if (pfl_option_get(L, 2, "axes") != LUA_TNIL) {
            if (lua_type(L, -1) != LUA_TTABLE || luaL_len(L, -1) != 2)
                return luaL_error(L, "aperture: field 'axes' must be a table of two axis numbers");
            for (int i = 0; i < 2; i++) {
                lua_geti(L, -1, i + 1);
                int ok;
                lua_Integer a = pfl_tointegerx(L, -1, &ok);
                if (!ok || a < 1 || a > d)
                    return luaL_error(L, "aperture: field 'axes' entry %d must be an axis 1..%d", i + 1, d);
                axes[i] = (int)a - 1;
                lua_pop(L, 1);
            }
        }
        lua_pop(L, 1);
        double radius = pfl_field_number(L, 2, "radius", 0, 1);
        double center[2] = {0, 0};
        pfl_field_vector(L, 2, "center", 2, center, 0);
        for (int i = 0; i < 2; i++) center[i] -= X[axes[i]];
        pfl_check(L, pf_wave_aperture_circle(w, axes[0], axes[1], center, radius, &e, &removed), "aperture");
    } else if (lua_type(L, -1) == LUA_TSTRING && strcmp(shape, "rectangle") == 0) {
        double size[PF_MAX_DIM], center[PF_MAX_DIM] = {0, 0, 0};
        read_sizes(L, 2, d, size);
        pfl_field_vector(L, 2, "center", d, center, 0);
        for (int a = 0; a < d; a++) center[a] -= X[a];
        pfl_check(L, pf_wave_aperture_rect(w, center, size, &e, &removed), "aperture");
    } else {
        char buf[80];
        return luaL_error(L, "aperture: field 'shape' must be \"circle\" or \"rectangle\", got %s",
                          pfl_describe(L, -1, buf, sizeof buf));
    }
    return push_masked(L, removed);
}

static int user_mask(lua_State *L, pf_rep rep, const char *name)
{
    pf_wave *w = pfl_check_wave(L, 1);
    luaL_checktype(L, 2, LUA_TFUNCTION);
    pfl_sampler s = {L, 2, dim_of(w), rep, name, "transmission", 0, 0, pf_wave_grid(w), {0, 0, 0}};
    pfl_sampler_frame_offset(w, rep, s.offset); /* f sees lab positions or lab wave numbers */
    double removed = 0;
    pf_status st = pf_wave_mask(w, rep, pfl_sample_cb, &s, &removed);
    if (st == PF_ECALLBACK) return pfl_raise_callback(L, name);
    pfl_check(L, st, name);
    return push_masked(L, removed);
}

/* w:mask(t) - transmission amplitude t(x[, y, z]) (|t| <= 1) -> w, removed */
static int l_mask(lua_State *L) { return user_mask(L, PF_POSITION, "mask"); }
/* w:momentum_mask(t) - transmission t(kx[, ky, kz]), k in rad/m -> w, removed */
static int l_momentum_mask(lua_State *L) { return user_mask(L, PF_MOMENTUM, "momentum_mask"); }

/* w:shift(dx [, dy, dz]) - exact displacement (m). */
static int l_shift(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double d[PF_MAX_DIM];
    pfl_check_axis_values(L, 2, dim_of(w), d, "shift distance (m)");
    return pfl_return_self(L, pf_wave_lab_shift(w, d), "shift");
}

/* w:select_velocity{width = m/s, center = 0, axis = 1, shape = "box"|"gaussian"} -> w, removed */
static int l_select_velocity(lua_State *L)
{
    int axis;
    pf_wave *w = check_axis_op(L, &SELECT_VELOCITY_OPTIONS, "select_velocity", &axis);
    double width = pfl_field_number(L, 2, "width", 0, 1);
    double center = pfl_field_number(L, 2, "center", 0, 0);
    int gaussian = 0;
    if (pfl_option_get(L, 2, "shape") != LUA_TNIL) {
        const char *sh = lua_tostring(L, -1);
        if (lua_type(L, -1) == LUA_TSTRING && strcmp(sh, "gaussian") == 0) gaussian = 1;
        else if (!(lua_type(L, -1) == LUA_TSTRING && strcmp(sh, "box") == 0)) {
            char buf[80];
            return luaL_error(L, "select_velocity: field 'shape' must be \"box\" or \"gaussian\", got %s",
                              pfl_describe(L, -1, buf, sizeof buf));
        }
    }
    lua_pop(L, 1);
    double X[PF_MAX_DIM], V[PF_MAX_DIM];
    frame_offsets(w, X, V);
    double removed = 0;
    pfl_check(L, pf_wave_select_velocity(w, axis, center - V[axis], width, gaussian, &removed), "select_velocity");
    return push_masked(L, removed);
}

void pfl_open_ops(lua_State *L, int mod)
{
    (void)mod;
    static const pfl_options_decl *const options[] = {&KICK_OPTIONS, &GRATING_OPTIONS, &LENS_OPTIONS, &SLITS_OPTIONS, &SLIT_OPTIONS,
                                                      &MASK_GRATING_OPTIONS, &APERTURE_OPTIONS,
                                                      &SELECT_VELOCITY_OPTIONS, NULL};
    pfl_options_declare(L, options);
    static const luaL_Reg methods[] = {
        {"kick", l_kick},
        {"imprint", l_imprint},
        {"grating", l_grating},
        {"lens", l_lens},
        {"slit", l_slit},
        {"slits", l_slits},
        {"mask_grating", l_mask_grating},
        {"aperture", l_aperture},
        {"mask", l_mask},
        {"momentum_mask", l_momentum_mask},
        {"shift", l_shift},
        {"select_velocity", l_select_velocity},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
