/* pfl_longflight.c - Lua methods for long flights: w:fly_long (chooses the
 * same-grid or the scaled method), w:far_field (time-of-flight image from the
 * momentum distribution) and the grid advisor (w:grid_advice, pf.grid_advice). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_advise.h"
#include "pf_constants.h"
#include "pf_farfield.h"
#include "pf_frame.h"
#include "pf_guard.h"
#include "pf_longflight.h"
#include "pfl_options.h"

static const pfl_options_decl FLY_LONG_OPTIONS = {
    "wave:fly_long", (const char *const[]){"method", "grid", "points", "spacing", "origin", "acceleration", NULL}};
static const pfl_options_decl FLY_SCALED_OPTIONS = {"wave:fly_scaled", (const char *const[]){"points", "origin", "acceleration", NULL}};
static const pfl_options_decl FAR_FIELD_OPTIONS = {"wave:far_field", (const char *const[]){"acceleration", NULL}};
#define ADVICE_COMMON_KEYS "time", "kicks", "margin", "image_points", "acceleration"
static const pfl_options_decl WAVE_ADVICE_OPTIONS = {"wave:grid_advice", (const char *const[]){ADVICE_COMMON_KEYS, NULL}};
static const pfl_options_decl ADVICE_OPTIONS = {
    "pf.grid_advice",
    (const char *const[]){"mass", "width", "wavenumber_width", "center", "wavenumber", ADVICE_COMMON_KEYS, NULL}};
static const pfl_options_decl KICK_OPTIONS = {"grid_advice kicks[i]", (const char *const[]){"time", "wavenumber", NULL}};

static void set_vector(lua_State *L, const char *name, const double *v, int d)
{
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_pushnumber(L, v[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, name);
}

static void set_counts(lua_State *L, const char *name, const size_t *v, int d)
{
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_pushinteger(L, (lua_Integer)v[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, name);
}

/* Field holding point counts: one integer >= 2 for all axes or one per axis. */
static int field_counts(lua_State *L, int t, const char *field, int dim, size_t *out, const char *fname)
{
    double v[PF_MAX_DIM];
    if (!pfl_field_vector(L, t, field, dim, v, 0)) return 0;
    for (int a = 0; a < dim; a++) {
        if (v[a] != floor(v[a]) || v[a] < 2 || v[a] > 1e9)
            luaL_error(L, "%s: field '%s' must hold integers of at least 2, got %f on axis %d", fname, field, v[a], a + 1);
        out[a] = (size_t)v[a];
    }
    return 1;
}

static pf_flight_method check_method(lua_State *L, int t, const char *fname)
{
    static const char *const names[] = {"auto", "same-grid", "scaled", NULL};
    static const pf_flight_method values[] = {PF_FLIGHT_AUTO, PF_FLIGHT_SAME_GRID, PF_FLIGHT_SCALED};
    if (pfl_option_get(L, t, "method") == LUA_TNIL) {
        lua_pop(L, 1);
        return PF_FLIGHT_AUTO;
    }
    const char *m = lua_tostring(L, -1);
    for (int i = 0; names[i]; i++)
        if (lua_type(L, -1) == LUA_TSTRING && strcmp(m, names[i]) == 0) {
            lua_pop(L, 1);
            return values[i];
        }
    char buf[80];
    luaL_error(L, "%s: field 'method' must be \"auto\", \"same-grid\" or \"scaled\", got %s", fname,
               pfl_describe(L, -1, buf, sizeof buf));
    return PF_FLIGHT_AUTO;
}

/* w:fly_long(t [, {method=, grid=, points=, spacing=, origin=}]) -> w, report */
static int l_fly_long(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    int d = pf_grid_dim(pf_wave_grid(w));
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    if (!lua_isnoneornil(L, 3)) {
        pfl_options_check(L, 3, &FLY_LONG_OPTIONS);
        o.method = check_method(L, 3, "fly_long");
        if (pfl_option_get(L, 3, "grid") != LUA_TNIL) o.grid = pfl_check_grid(L, lua_gettop(L));
        lua_pop(L, 1); /* the table still holds the grid, so it stays alive */
        field_counts(L, 3, "points", d, o.points, "fly_long");
        if (pfl_field_vector(L, 3, "spacing", d, o.spacing, 0))
            for (int a = 0; a < d; a++)
                if (!(o.spacing[a] > 0)) return luaL_error(L, "fly_long: field 'spacing' must be positive, got %f", o.spacing[a]);
        o.has_centre = pfl_field_vector(L, 3, "origin", d, o.centre, 0);
        if (o.grid && (o.has_centre || o.points[0] || o.spacing[0]))
            return luaL_error(L, "fly_long: give either 'grid' or 'points'/'spacing'/'origin', not both");
    }
    /* Acceleration (option or pf.setup default): the frame falls, the grid
     * (possibly a scaled one) holds the cloud (pf_frame.h). */
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, lua_isnoneornil(L, 3) ? 0 : 3, d, acc, "wave:fly_long");
    pf_long_flight_report r;
    pfl_check(L, pf_wave_fly_long_in_frame(w, t, &o, &r, accelerated ? acc : NULL), "fly_long");
    lua_settop(L, 1);
    lua_createtable(L, 0, 16);
    lua_pushstring(L, pf_flight_method_name(r.method));
    lua_setfield(L, -2, "method");
    lua_pushinteger(L, r.stages);
    lua_setfield(L, -2, "stages");
    lua_pushstring(L, r.reason);
    lua_setfield(L, -2, "reason");
    lua_pushboolean(L, r.same_grid_ok);
    lua_setfield(L, -2, "same_grid_ok");
    lua_pushboolean(L, r.scaled_ok);
    lua_setfield(L, -2, "scaled_ok");
    set_vector(L, "extent_lo", r.x_lo, d);
    set_vector(L, "extent_hi", r.x_hi, d);
    set_vector(L, "wavenumber_lo", r.k_lo, d);
    set_vector(L, "wavenumber_hi", r.k_hi, d);
    set_vector(L, "image_lo", r.image_lo, d);
    set_vector(L, "image_hi", r.image_hi, d);
    set_vector(L, "box", r.box, d);
    set_vector(L, "window", r.window, d);
    set_vector(L, "scaled_spacing", r.out_spacing, d);
    set_vector(L, "scaled_origin", r.out_centre, d);
    set_counts(L, "scaled_points", r.out_points, d);
    set_vector(L, "scaled_time", r.scaled_time, d);
    set_vector(L, "chirp_time", r.chirp_time, d);
    return 2;
}

/* w:fly_scaled(t [, {points=, origin=}]) - the single-FFT form, forced. */
static int l_fly_scaled(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    if (t == 0) return luaL_argerror(L, 2, "flight time must be non-zero for a scaled flight");
    int d = pf_grid_dim(pf_wave_grid(w));
    size_t points[PF_MAX_DIM] = {0, 0, 0};
    double origin[PF_MAX_DIM];
    int has_points = 0, has_origin = 0;
    if (!lua_isnoneornil(L, 3)) {
        pfl_options_check(L, 3, &FLY_SCALED_OPTIONS);
        has_points = field_counts(L, 3, "points", d, points, "fly_scaled");
        has_origin = pfl_field_vector(L, 3, "origin", d, origin, 0);
    }
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, lua_isnoneornil(L, 3) ? 0 : 3, d, acc, "wave:fly_scaled");
    pfl_check(L, pf_wave_fly_scaled_in_frame(w, t, has_points ? points : NULL, has_origin ? origin : NULL,
                                             accelerated ? acc : NULL), "fly_scaled");
    lua_settop(L, 1);
    return 1;
}

/* w:far_field(t [, {acceleration =}]) -> density table (row-major,
 * ascending x), info.  Under an acceleration (or for a wave in a moving
 * frame) the image grid sits at the lab position of the falling frame. */
static int l_far_field(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_positive(L, 2, "flight time (s)");
    pf_grid *g = pf_wave_grid(w);
    int d = pf_grid_dim(g);
    int opts = pfl_options_opt(L, 3, &FAR_FIELD_OPTIONS);
    double acc[PF_MAX_DIM], lab_origin[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, opts, d, acc, "wave:far_field");
    size_t n = pf_grid_total(g);
    if (n > (size_t)1 << 26) return luaL_error(L, "far_field: %zu points is too many for a Lua table", n);
    /* The image and its grid are owned by userdata from the start, so the
     * table building below may raise without leaking either. */
    double *buf = pfl_push_engine_doubles(L, n, "far_field");
    int held = lua_gettop(L);
    pf_far_field_info info;
    pfl_check(L, pf_wave_far_field_in_frame(w, t, accelerated ? acc : NULL, buf, &info, lab_origin), "far_field");
    size_t pts[PF_MAX_DIM];
    double span[PF_MAX_DIM];
    for (int a = 0; a < d; a++) {
        pts[a] = pf_grid_points(g, a);
        span[a] = info.spacing[a] * (double)pts[a];
    }
    pfl_check(L, pf_grid_new(pfl_ctx(L), d, pts, span, lab_origin, pfl_push_grid_slot(L)), "far_field");
    if (!lua_checkstack(L, 4)) return luaL_error(L, "far_field: stack overflow");
    lua_createtable(L, (int)n, 0);
    for (size_t i = 0; i < n; i++) {
        lua_pushnumber(L, buf[i]);
        lua_rawseti(L, -2, (lua_Integer)i + 1);
    }
    pfl_engine_doubles_free(L, held); /* now, not at its collection: the bytes leave the cap */
    lua_createtable(L, 0, 6);
    lua_pushvalue(L, -3);
    lua_setfield(L, -2, "grid");
    set_vector(L, "spacing", info.spacing, d);
    set_vector(L, "fraunhofer", info.fraunhofer, d);
    set_vector(L, "source_width", info.width, d);
    set_vector(L, "source_centre", info.centre, d);
    lua_pushnumber(L, t);
    lua_setfield(L, -2, "time");
    return 2;
}

/* Reads kicks = {{time = s, wavenumber = k | {..}}, ...} into arrays that
 * live in a userdata on the stack (freed by Lua, even on errors). */
static size_t read_kicks(lua_State *L, int t, int d, double **times, double **ks, const char *fname)
{
    *times = *ks = NULL;
    if (pfl_option_get(L, t, "kicks") == LUA_TNIL) {
        lua_pop(L, 1);
        return 0;
    }
    if (!lua_istable(L, -1)) return (size_t)luaL_error(L, "%s: field 'kicks' must be a table of {time=, wavenumber=}", fname);
    int kt = lua_gettop(L);
    size_t n = (size_t)luaL_len(L, kt);
    double *buf = lua_newuserdatauv(L, (n ? n : 1) * (size_t)(1 + d) * sizeof(double), 0);
    lua_insert(L, kt); /* keep the buffer below the kicks table */
    kt++;
    for (size_t i = 0; i < n; i++) {
        if (lua_geti(L, kt, (lua_Integer)i + 1) != LUA_TTABLE)
            luaL_error(L, "%s: kick %d must be a table {time=, wavenumber=}", fname, (int)i + 1);
        int e = lua_gettop(L);
        pfl_options_check(L, e, &KICK_OPTIONS);
        buf[i] = pfl_field_number(L, e, "time", 0, 1);
        double k[PF_MAX_DIM];
        pfl_field_vector(L, e, "wavenumber", d, k, 1);
        for (int a = 0; a < d; a++) buf[n + i * (size_t)d + (size_t)a] = k[a];
        lua_pop(L, 1);
    }
    lua_pop(L, 1); /* kicks table; the buffer stays on the stack */
    *times = buf;
    *ks = buf + n;
    return n;
}

static void push_proposal(lua_State *L, const pf_grid_proposal *p, int d)
{
    lua_createtable(L, 0, 4);
    set_counts(L, "points", p->points, d);
    set_vector(L, "span", p->span, d);
    set_vector(L, "spacing", p->spacing, d);
    set_vector(L, "origin", p->origin, d);
}

/* Under an acceleration, or for a wave whose frame is moved, the proposals
 * are co-moving grids (the frame carries the drop, docs/frames.md): their
 * origins are grid coordinates, the grid's lab centre is origin + the frame
 * offset.  The 'frame' table says what the frame takes over: the drop
 * a t^2/2 and velocity a t per axis, the frame offset now ('position', X)
 * and after the flight ('final_position', X + V t + a t^2/2) and the final
 * wave-number offset ('final_wavenumber', K + m a t / hbar), and the single
 * fixed lab grid w:fall would need to hold both the cloud and its lab
 * travel at the same-grid proposal's spacing (span + |X(t) - X|).  On that
 * grid the lab wave number wraps around wherever it passes the Nyquist
 * limit (positions stay exact; the momentum guard fires), which
 * 'lab_grid_wraps' says per axis.  fr is the wave's frame (NULL: unmoved). */
static void push_frame_advice(lua_State *L, const pf_advice_request *q, const pf_advice *adv, const double *acc,
                              const pf_frame *fr)
{
    int d = q->dim;
    double drop[PF_MAX_DIM], vel[PF_MAX_DIM], span[PF_MAX_DIM], points[PF_MAX_DIM];
    double pos[PF_MAX_DIM], pos_end[PF_MAX_DIM], k_end[PF_MAX_DIM];
    double total = 1, t = q->time;
    lua_createtable(L, 0, 10);
    lua_createtable(L, d, 0); /* lab_grid_wraps */
    for (int a = 0; a < d; a++) {
        double X = fr ? fr->position[a] : 0.0, K = fr ? fr->wavenumber[a] : 0.0;
        drop[a] = 0.5 * acc[a] * t * t;
        vel[a] = acc[a] * t;
        pos[a] = X;
        pos_end[a] = X + PF_HBAR * K / q->mass * t + drop[a];
        k_end[a] = K + q->mass * vel[a] / PF_HBAR;
        double dx = adv->same.spacing[a];
        span[a] = adv->same.span[a] + fabs(pos_end[a] - X);
        points[a] = ceil(span[a] / dx);
        total *= points[a];
        /* the lab wave numbers run from K + k_lo..k_hi to K + m a t / hbar + k_lo..k_hi */
        double kmax = fmax(fabs(K), fabs(k_end[a])) + fmax(fabs(q->k_lo[a]), fabs(q->k_hi[a]));
        lua_pushboolean(L, kmax > PF_PI / dx);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, "lab_grid_wraps");
    set_vector(L, "drop", drop, d);
    set_vector(L, "velocity", vel, d);
    set_vector(L, "position", pos, d);
    set_vector(L, "final_position", pos_end, d);
    set_vector(L, "final_wavenumber", k_end, d);
    set_vector(L, "lab_grid_span", span, d);
    set_vector(L, "lab_grid_points", points, d);
    lua_pushnumber(L, total * 16.0); /* one complex double per point */
    lua_setfield(L, -2, "lab_grid_memory");
    lua_setfield(L, -2, "frame");
}

static int push_advice(lua_State *L, const pf_advice_request *q, const pf_advice *adv, const double *acc,
                       const pf_frame *fr)
{
    int d = q->dim;
    lua_createtable(L, 0, 4);
    push_proposal(L, &adv->same, d);
    lua_pushnumber(L, adv->same_bytes);
    lua_setfield(L, -2, "memory");
    lua_setfield(L, -2, "same_grid");
    lua_createtable(L, 0, 6);
    push_proposal(L, &adv->scaled_in, d);
    lua_setfield(L, -2, "input");
    push_proposal(L, &adv->scaled_out, d);
    lua_setfield(L, -2, "output");
    lua_pushnumber(L, adv->scaled_start);
    lua_setfield(L, -2, "start");
    lua_pushnumber(L, adv->scaled_time);
    lua_setfield(L, -2, "time");
    lua_pushnumber(L, adv->chirp_time);
    lua_setfield(L, -2, "chirp_time");
    lua_pushnumber(L, adv->scaled_bytes);
    lua_setfield(L, -2, "memory");
    lua_setfield(L, -2, "scaled");
    set_vector(L, "extent_lo", q->x_lo, d);
    set_vector(L, "extent_hi", q->x_hi, d);
    set_vector(L, "wavenumber_lo", q->k_lo, d);
    set_vector(L, "wavenumber_hi", q->k_hi, d);
    if (acc || fr) {
        static const double none[PF_MAX_DIM] = {0, 0, 0};
        push_frame_advice(L, q, adv, acc ? acc : none, fr);
    }
    return 1;
}

static void read_common(lua_State *L, int t, pf_advice_request *q, const char *fname)
{
    q->time = pfl_field_number(L, t, "time", 0, 1);
    if (!(q->time > 0)) luaL_error(L, "%s: field 'time' must be a positive flight time (s), got %f", fname, q->time);
    q->margin = pfl_field_number(L, t, "margin", 0, 0);
    double ip = pfl_field_number(L, t, "image_points", 0, 0);
    if (ip != 0 && (ip < 2 || ip != floor(ip) || ip > 1e9))
        luaL_error(L, "%s: field 'image_points' must be an integer of at least 2, got %f", fname, ip);
    q->image_points = (size_t)ip;
    double *times, *ks;
    q->nkicks = read_kicks(L, t, q->dim, &times, &ks, fname);
    q->kick_time = times;
    q->kick_k = ks;
}

/* w:grid_advice{time = s, kicks = {...}, margin = 1.2, image_points = 64}
 * The extents are those of the grid state (pf_wave_extent works on the
 * grid): for a wave in a moving frame they are the co-moving function chi's,
 * so the proposals are co-moving grids whose lab centre is origin + X. */
static int l_wave_grid_advice(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    pfl_options_check(L, 2, &WAVE_ADVICE_OPTIONS);
    pf_advice_request q;
    memset(&q, 0, sizeof q);
    q.dim = pf_grid_dim(pf_wave_grid(w));
    q.mass = pf_wave_mass(w);
    read_common(L, 2, &q, "grid_advice");
    pfl_check(L, pf_wave_flight_extents(w, q.x_lo, q.x_hi, q.k_lo, q.k_hi), "grid_advice");
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 2, q.dim, acc, "wave:grid_advice");
    pf_frame fr;
    pf_wave_frame(w, &fr);
    pf_advice adv;
    pfl_check(L, pf_grid_advise(pfl_ctx(L), &q, &adv), "grid_advice");
    return push_advice(L, &q, &adv, accelerated ? acc : NULL, pf_wave_frame_moved(w) ? &fr : NULL);
}

/* pf.grid_advice{mass = kg, time = s, width = sigma_x, wavenumber_width = sigma_k,
 *                center = x0, wavenumber = k0, kicks=, margin=, image_points=}
 * for a Gaussian-like state described by its rms widths. */
static int l_grid_advice(lua_State *L)
{
    pfl_options_check(L, 1, &ADVICE_OPTIONS);
    pf_advice_request q;
    memset(&q, 0, sizeof q);
    double w[PF_MAX_DIM], sk[PF_MAX_DIM], c[PF_MAX_DIM] = {0, 0, 0}, k0[PF_MAX_DIM] = {0, 0, 0};
    int ty = pfl_option_get(L, 1, "width");
    if (ty == LUA_TTABLE) q.dim = (int)luaL_len(L, -1);
    else if (ty == LUA_TNUMBER) q.dim = 1;
    else return luaL_error(L, "grid_advice: field 'width' (rms width per axis, m) is required");
    lua_pop(L, 1);
    if (q.dim < 1 || q.dim > PF_MAX_DIM) return luaL_error(L, "grid_advice: 'width' must list 1 to 3 axes");
    q.mass = pfl_field_number(L, 1, "mass", 0, 1);
    pfl_field_vector(L, 1, "width", q.dim, w, 1);
    for (int a = 0; a < q.dim; a++)
        if (!(w[a] > 0)) return luaL_error(L, "grid_advice: field 'width' must be positive, got %f", w[a]);
    int has_sk = pfl_field_vector(L, 1, "wavenumber_width", q.dim, sk, 0); /* default: minimum uncertainty */
    for (int a = 0; a < q.dim && has_sk; a++)
        if (!(sk[a] > 0)) return luaL_error(L, "grid_advice: field 'wavenumber_width' must be positive, got %f", sk[a]);
    pfl_field_vector(L, 1, "center", q.dim, c, 0);
    pfl_field_vector(L, 1, "wavenumber", q.dim, k0, 0);
    read_common(L, 1, &q, "grid_advice");
    pfl_check(L, pf_advice_gaussian(pfl_ctx(L), &q, w, has_sk ? sk : NULL, c, k0), "grid_advice");
    double acc[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 1, q.dim, acc, "pf.grid_advice");
    pf_advice adv;
    pfl_check(L, pf_grid_advise(pfl_ctx(L), &q, &adv), "grid_advice");
    return push_advice(L, &q, &adv, accelerated ? acc : NULL, NULL);
}

void pfl_open_longflight(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"fly_long", l_fly_long},
        {"fly_scaled", l_fly_scaled},
        {"far_field", l_far_field},
        {"grid_advice", l_wave_grid_advice},
        {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"grid_advice", l_grid_advice}, {NULL, NULL}};
    static const pfl_options_decl *const options[] = {
        &FLY_LONG_OPTIONS, &FLY_SCALED_OPTIONS, &FAR_FIELD_OPTIONS, &WAVE_ADVICE_OPTIONS, &ADVICE_OPTIONS, &KICK_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_add_wave_methods(L, methods);
    pfl_add_functions(L, mod, funcs);
}
