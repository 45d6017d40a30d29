/* pfl_flux.c - probability current, plane flux, arrival-time distributions
 * and Wigner functions, for wave functions and ensembles (weighted sums). */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_constants.h"
#include "pf_flux.h"
#include "pf_frame.h"
#include "pf_wigner.h"
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl FLUX_OPTIONS = {"state:flux", (const char *const[]){"axis", "at", NULL}};
static const pfl_options_decl BEYOND_OPTIONS = {"state:beyond", (const char *const[]){"axis", "at", NULL}};
static const pfl_options_decl ARRIVAL_OPTIONS = {
    "state:arrival_times", (const char *const[]){"axis", "at", "from", "to", "steps", "acceleration", NULL}};
static const pfl_options_decl WIGNER_OPTIONS = {"state:wigner", (const char *const[]){"axis", "through", "reduced", NULL}};

/* Reads {axis = a, at = x} into a 0-based axis and a plane position. */
static void plane_opts(lua_State *L, int opts, int dim, int *axis, double *at, const pfl_options_decl *decl)
{
    pfl_options_check(L, opts, decl);
    *axis = pfl_opt_axis(L, opts, "axis", dim, 1) - 1;
    *at = pfl_field_number(L, opts, "at", 0, 1);
}

/* s:current(axis) -> distribution table of j_axis (1/(s m^(d-1))). */
static int l_current(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    pf_grid *g = pfl_source_grid(&src);
    int d = pf_grid_dim(g);
    lua_Integer a = luaL_optinteger(L, 2, 1);
    if (a < 1 || a > d) return luaL_argerror(L, 2, lua_pushfstring(L, "axis must be 1..%d", d));
    pf_frame fr; /* read before anything is allocated: it may raise */
    pfl_source_frame(L, &src, &fr, "current");
    pf_field f;
    pfl_check(L, pf_field_for_grid(g, PF_POSITION, &f), "current");
    double *j = pf_context_alloc(pfl_ctx(L), f.total * sizeof *j);
    pf_status s = j ? PF_OK : pf_context_status(pfl_ctx(L));
    for (size_t i = 0; i < src.mix.count && !s; i++) {
        s = pf_wave_current(src.mix.members[i], (int)a - 1, j);
        for (size_t k = 0; !s && k < f.total; k++) f.values[k] += src.mix.weights[i] * j[k];
    }
    pf_context_free(pfl_ctx(L), j);
    /* A moved frame (shared by an ensemble's members): j_lab(x) = j_grid(x - X)
     * + (hbar K / m) rho(x - X), on lab positions. */
    double V = s ? 0.0 : PF_HBAR * fr.wavenumber[a - 1] / pfl_source_mass(&src);
    if (!s && V != 0.0) {
        pf_field rho;
        s = pf_mixture_field(&src.mix, PF_POSITION, &rho);
        for (size_t k = 0; !s && k < f.total; k++) f.values[k] += V * rho.values[k];
        if (!s) pf_field_free(&rho);
    }
    if (s) {
        pf_field_free(&f);
        pfl_check(L, s, "current");
    }
    for (int b = 0; b < d; b++) f.first[b] += fr.position[b];
    char unit[32], lab[32];
    snprintf(unit, sizeof unit, d == 1 ? "1/s" : "1/(s m^%d)", d - 1);
    snprintf(lab, sizeof lab, d == 1 ? "1/ms" : "1/(ms um^%d)", d - 1);
    pfl_push_field(L, &f, PF_POSITION, pfl_source_mass(&src), unit, 1e-3 * pow(1e-6, d - 1), lab);
    pf_field_free(&f);
    return 1;
}

typedef pf_status (*plane_fn)(pf_wave *w, int axis, double at, double *out);

/* Weighted sum over the members of a state or mixture of a per-plane figure:
 * both figures are linear in the density matrix. */
static int plane_figure(lua_State *L, plane_fn fn, const char *name, const pfl_options_decl *decl)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int axis;
    double at, total = 0;
    plane_opts(L, 2, pf_grid_dim(pfl_source_grid(&src)), &axis, &at, decl);
    for (size_t i = 0; i < src.mix.count; i++) {
        double v;
        pfl_check(L, fn(src.mix.members[i], axis, at, &v), name);
        total += src.mix.weights[i] * v;
    }
    lua_pushnumber(L, total);
    return 1;
}

/* s:flux{axis=, at=} -> probability per second crossing the plane (+axis). */
static int l_flux(lua_State *L) { return plane_figure(L, pf_wave_lab_flux, "flux", &FLUX_OPTIONS); }

/* s:beyond{axis=, at=} -> probability between the plane and the far edge. */
static int l_beyond(lua_State *L) { return plane_figure(L, pf_wave_lab_beyond, "beyond", &BEYOND_OPTIONS); }

/* integral of f(t) t^power over the window t = t0 + k dt: Simpson's rule
 * for an even number of intervals (error ~ dt^4), else the trapezoid rule
 * (error ~ dt^2). */
static double window_integral(const double *f, size_t n, double dt, double t0, int power)
{
    double sum = 0;
#define TERM(k) (f[k] * (power == 0 ? 1.0 : power == 1 ? t0 + (double)(k) * dt : (t0 + (double)(k) * dt) * (t0 + (double)(k) * dt)))
    if ((n - 1) % 2 == 0) {
        sum = TERM(0) + TERM(n - 1);
        for (size_t k = 1; k + 1 < n; k++) sum += (k % 2 ? 4.0 : 2.0) * TERM(k);
        return sum * dt / 3.0;
    }
    for (size_t k = 0; k + 1 < n; k++) sum += 0.5 * (TERM(k) + TERM(k + 1)) * dt;
#undef TERM
    return sum;
}

/* s:arrival_times{axis=, at=, from = t0, to = t1, steps = n}
 * -> {time = {..} (s, after the state's clock), time_ms, flux = {..} (1/s),
 *     arrived = integral of the flux over the window (Simpson for an odd
 *     number of times, else trapezoid), mean and spread of the arrival time
 *     (s, the flux as its density; absent when nothing arrived), unit}.
 * acceleration = {..} (or the pf.setup default): the plane is a lab plane
 * and the state falls in its frame meanwhile (pf_frame.h); so also for a
 * wave already in a moving frame. */
static int l_arrival_times(lua_State *L)
{
    pfl_source src;
    pfl_check_source(L, 1, &src);
    int axis;
    double at;
    plane_opts(L, 2, pf_grid_dim(pfl_source_grid(&src)), &axis, &at, &ARRIVAL_OPTIONS);
    double t0 = pfl_field_number(L, 2, "from", 0, 0), t1 = pfl_field_number(L, 2, "to", 0, 1);
    double steps = pfl_field_number(L, 2, "steps", 201, 0);
    if (!(t1 > t0)) return luaL_error(L, "arrival_times: needs from < to, got %f and %f s", t0, t1);
    if (steps < 2 || steps > 1e7 || steps != floor(steps)) return luaL_error(L, "arrival_times: 'steps' must be a count >= 2");
    size_t n = (size_t)steps;
    double dt = (t1 - t0) / (double)(n - 1);
    /* Under an acceleration (the option or the pf.setup default), or for a
     * wave already in a moving frame, the plane is a lab plane and the
     * cloud falls in its frame (pf_frame.h). */
    double accel[PF_MAX_DIM];
    int accelerated = pfl_frame_acceleration(L, 2, pf_grid_dim(pfl_source_grid(&src)), accel, "arrival_times");
    const pf_arrival_window window = {axis, at, t0, dt, n};
    double *acc = lua_newuserdatauv(L, 2 * n * sizeof(double), 0), *one = acc + n;
    memset(acc, 0, n * sizeof(double));
    for (size_t i = 0; i < src.mix.count; i++) {
        pf_wave *m = src.mix.members[i];
        if (accelerated || pf_wave_frame_moved(m))
            pfl_check(L, pf_wave_lab_arrival(m, accelerated ? accel : NULL, &window, one), "arrival_times");
        else
            pfl_check(L, pf_wave_arrival(m, &window, one), "arrival_times");
        for (size_t k = 0; k < n; k++) acc[k] += src.mix.weights[i] * one[k];
    }
    lua_createtable(L, 0, 6);
    for (size_t k = 0; k < n; k++) one[k] = t0 + (double)k * dt;
    pfl_push_doubles(L, one, n);
    lua_setfield(L, -2, "time");
    for (size_t k = 0; k < n; k++) one[k] *= 1e3;
    pfl_push_doubles(L, one, n);
    lua_setfield(L, -2, "time_ms");
    pfl_push_doubles(L, acc, n);
    lua_setfield(L, -2, "flux");
    /* Simpson's rule for an even number of intervals (error ~ dt^4), else
     * the trapezoid rule (error ~ dt^2). */
    double arrived = window_integral(acc, n, dt, t0, 0);
    lua_pushnumber(L, arrived);
    lua_setfield(L, -2, "arrived");
    /* Mean and spread of the arrival time over the window, the flux taken as
     * the arrival-time density (the same rule as 'arrived'). */
    if (arrived != 0) {
        double mean = window_integral(acc, n, dt, t0, 1) / arrived;
        double second = window_integral(acc, n, dt, t0, 2) / arrived;
        lua_pushnumber(L, mean);
        lua_setfield(L, -2, "mean");
        lua_pushnumber(L, sqrt(fmax(second - mean * mean, 0.0)));
        lua_setfield(L, -2, "spread");
    }
    lua_pushliteral(L, "1/s");
    lua_setfield(L, -2, "unit");
    return 1;
}

/* s:wigner{axis=, through = {point (m)}, reduced = false}
 * -> {values (W(x, p), row-major x then p), shape, x, p, k, unit} */
static int l_wigner(lua_State *L)
{
    pfl_measurement me;
    pfl_measurement_begin(L, 2, &WIGNER_OPTIONS, PFL_ALONG_AXIS, &me);
    pf_grid *g = me.grid;
    int reduced = me.opts ? pfl_field_boolean(L, me.opts, "reduced", 0) : 0;
    /* A moved frame shifts the Wigner function: W_lab(x, k) = W_chi(x - X,
     * k - K) (the phase theta drops out of psi psi*), so 'through' is read
     * in lab positions and the axes are returned in lab values. */
    pf_frame fr;
    pfl_source_frame(L, &me.src, &fr, "wigner");
    double through[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < me.dim; a++) through[a] = fr.position[a];
    if (me.opts) pfl_field_vector(L, me.opts, "through", me.dim, through, 0);
    size_t idx[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < me.dim; a++) {
        double j = nearbyint((through[a] - fr.position[a] - pf_grid_x(g, a, 0)) / pf_grid_spacing(g, a));
        if (j < 0) j = 0;
        if (j > (double)pf_grid_points(g, a) - 1) j = (double)pf_grid_points(g, a) - 1;
        idx[a] = (size_t)j;
    }
    size_t n = pf_grid_points(g, me.axis);
    if (n > 8192) return luaL_error(L, "wigner: %d points on the axis make a table too large", (int)n);
    double *W = lua_newuserdatauv(L, n * n * sizeof(double), 0);
    const pf_wigner_mode mode = reduced ? PF_WIGNER_REDUCED : PF_WIGNER_CUT;
    for (size_t i = 0; i < me.src.mix.count; i++)
        pfl_check(L, pf_wave_wigner(me.src.mix.members[i], me.axis, mode, idx, me.src.mix.weights[i], i > 0, W), "wigner");
    for (size_t i = 0; i < n * n; i++) W[i] /= PF_HBAR; /* W(x, p) = W(x, k) / hbar */
    lua_createtable(L, 0, 7);
    pfl_push_doubles(L, W, n * n);
    lua_setfield(L, -2, "values");
    lua_createtable(L, 2, 0);
    lua_pushinteger(L, (lua_Integer)n);
    lua_rawseti(L, -2, 1);
    lua_pushinteger(L, (lua_Integer)n);
    lua_rawseti(L, -2, 2);
    lua_setfield(L, -2, "shape");
    double *ax = W; /* reuse the buffer for the axes */
    for (size_t j = 0; j < n; j++) ax[j] = pf_grid_x(g, me.axis, j) + fr.position[me.axis];
    pfl_push_doubles(L, ax, n);
    lua_setfield(L, -2, "x");
    for (size_t j = 0; j < n; j++) ax[j] = pf_grid_k(g, me.axis, pf_grid_fft_index(g, me.axis, j)) + fr.wavenumber[me.axis];
    pfl_push_doubles(L, ax, n);
    lua_setfield(L, -2, "k");
    for (size_t j = 0; j < n; j++) ax[j] *= PF_HBAR;
    pfl_push_doubles(L, ax, n);
    lua_setfield(L, -2, "p");
    lua_pushliteral(L, "1/(J s)");
    lua_setfield(L, -2, "unit");
    return 1;
}

void pfl_open_flux(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {
        {"current", l_current}, {"flux", l_flux}, {"beyond", l_beyond},
        {"arrival_times", l_arrival_times}, {"wigner", l_wigner}, {NULL, NULL},
    };
    pfl_add_state_methods(L, methods);
    static const pfl_options_decl *const options[] = {&FLUX_OPTIONS, &BEYOND_OPTIONS, &ARRIVAL_OPTIONS, &WIGNER_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
