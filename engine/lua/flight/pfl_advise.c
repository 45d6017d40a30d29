/* pfl_advise.c - the grid advisor (pf_advise.h) as w:grid_advice (extents
 * measured on the wave) and pf.grid_advice (a Gaussian-like state given by
 * its rms widths), with the frame a falling or moved wave carries. */
#include <math.h>
#include <string.h>
#include "pf_advise.h"
#include "pf_constants.h"
#include "pf_frame.h"
#include "pf_guard.h"
#include "pfl_options.h"

#define ADVICE_COMMON_KEYS "time", "kicks", "margin", "image_points", "acceleration"
static const pfl_options_decl WAVE_ADVICE_OPTIONS = {"wave:grid_advice", (const char *const[]){ADVICE_COMMON_KEYS, NULL}};
static const pfl_options_decl ADVICE_OPTIONS = {
    "pf.grid_advice",
    (const char *const[]){"mass", "width", "wavenumber_width", "center", "wavenumber", ADVICE_COMMON_KEYS, NULL}};
static const pfl_options_decl KICK_OPTIONS = {"grid_advice kicks[i]", (const char *const[]){"time", "wavenumber", NULL}};

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
    pfl_set_counts(L, "points", p->points, d);
    pfl_set_vector(L, "span", p->span, d);
    pfl_set_vector(L, "spacing", p->spacing, d);
    pfl_set_vector(L, "origin", p->origin, d);
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
    pfl_set_vector(L, "drop", drop, d);
    pfl_set_vector(L, "velocity", vel, d);
    pfl_set_vector(L, "position", pos, d);
    pfl_set_vector(L, "final_position", pos_end, d);
    pfl_set_vector(L, "final_wavenumber", k_end, d);
    pfl_set_vector(L, "lab_grid_span", span, d);
    pfl_set_vector(L, "lab_grid_points", points, d);
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
    pfl_set_vector(L, "extent_lo", q->x_lo, d);
    pfl_set_vector(L, "extent_hi", q->x_hi, d);
    pfl_set_vector(L, "wavenumber_lo", q->k_lo, d);
    pfl_set_vector(L, "wavenumber_hi", q->k_hi, d);
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

void pfl_open_advise(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"grid_advice", l_wave_grid_advice},
        {NULL, NULL},
    };
    static const luaL_Reg funcs[] = {{"grid_advice", l_grid_advice}, {NULL, NULL}};
    static const pfl_options_decl *const options[] = {&WAVE_ADVICE_OPTIONS, &ADVICE_OPTIONS, &KICK_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_add_wave_methods(L, methods);
    pfl_add_functions(L, mod, funcs);
}
