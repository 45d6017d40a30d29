/* pfl_build.c - the state builders (pf_build.h) as Lua functions: pf.gaussian,
 * pf.momentum_orders, pf.ground_state, pf.oscillator, pf.flat_top,
 * pf.thomas_fermi and pf.sampled.  Each reads a table of named fields in SI
 * units (or a species label for the mass), checks every field, and calls the
 * core builder, which evaluates the state in C.
 *
 * Unknown field names are errors with close matches (pfl_options.h): a
 * misspelt 'widht' would otherwise silently fall back to a default. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_build.h"
#include "pf_constants.h"
#include "pf_units.h"
#include "pfl_options.h"

#define MAX_FIELDS 24

/* Optional field with one number per axis (or one number for all axes);
 * positive: 1 requires > 0.  Returns 0 when absent.  (The shared reader in
 * pfl_args.c; fname is kept for the callers' symmetry with read_matrix.) */
static int read_vector(lua_State *L, int t, const char *fname, const char *field, int d, double *out, int positive)
{
    (void)fname;
    return pfl_field_vector_of(L, t, field, d, out, 0, positive);
}

/* Optional d x d matrix field: a number (times the identity), a vector (the
 * diagonal) or a table of d rows of d numbers. */
static int read_matrix(lua_State *L, int t, const char *fname, const char *field, int d,
                       double m[PF_MAX_DIM][PF_MAX_DIM])
{
    char buf[80];
    int type = pfl_option_get(L, t, field);
    if (type == LUA_TNIL) {
        lua_pop(L, 1);
        return 0;
    }
    memset(m, 0, sizeof(double) * PF_MAX_DIM * PF_MAX_DIM);
    int rows = type == LUA_TTABLE && lua_geti(L, -1, 1) == LUA_TTABLE;
    if (type == LUA_TTABLE) lua_pop(L, 1);
    if (!rows) {
        lua_pop(L, 1);
        double diag[PF_MAX_DIM];
        read_vector(L, t, fname, field, d, diag, 0);
        for (int a = 0; a < d; a++) m[a][a] = diag[a];
        return 1;
    }
    if (luaL_len(L, -1) != d) luaL_error(L, "%s: field '%s' must have %d rows, got %d", fname, field, d, (int)luaL_len(L, -1));
    for (int a = 0; a < d; a++) {
        if (lua_geti(L, -1, a + 1) != LUA_TTABLE || luaL_len(L, -1) != d)
            luaL_error(L, "%s: field '%s' row %d must be a table of %d numbers", fname, field, a + 1, d);
        for (int b = 0; b < d; b++) {
            int et = lua_geti(L, -1, b + 1);
            double v = lua_tonumber(L, -1);
            if (et != LUA_TNUMBER || !isfinite(v))
                luaL_error(L, "%s: field '%s' entry [%d][%d] must be a finite number, got %s", fname, field, a + 1,
                           b + 1, pfl_describe(L, -1, buf, sizeof buf));
            m[a][b] = v;
            lua_pop(L, 1);
        }
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    return 1;
}

/* At most one of the named alternatives may be present; returns its index
 * (0-based) or -1 when none is, and raises when two are. */
static int choose(lua_State *L, int t, const char *fname, const char *const *names, int required)
{
    int found = -1;
    for (int i = 0; names[i]; i++) {
        int type = pfl_option_get(L, t, names[i]);
        lua_pop(L, 1);
        if (type == LUA_TNIL) continue;
        if (found >= 0) luaL_error(L, "%s: give only one of '%s' and '%s'", fname, names[found], names[i]);
        found = i;
    }
    if (found < 0 && required) {
        luaL_Buffer b;
        luaL_buffinit(L, &b);
        for (int i = 0; names[i]; i++) {
            if (i) luaL_addstring(&b, names[i + 1] ? ", " : " or ");
            lua_pushfstring(L, "'%s'", names[i]);
            luaL_addvalue(&b);
        }
        luaL_pushresult(&b);
        luaL_error(L, "%s: give one of %s", fname, lua_tostring(L, -1));
    }
    return found;
}

/* Mean motion: velocity (m/s), momentum (kg m/s) or wavenumber (1/m), all
 * turned into the mean wave number k0 = m v / hbar = p / hbar. */
static void read_motion(lua_State *L, int t, const char *fname, int d, double mass, double *k0)
{
    static const char *const names[] = {"velocity", "momentum", "wavenumber", NULL};
    for (int a = 0; a < d; a++) k0[a] = 0;
    int which = choose(L, t, fname, names, 0);
    if (which < 0) return;
    read_vector(L, t, fname, names[which], d, k0, 0);
    double f = which == 0 ? mass / PF_HBAR : which == 1 ? 1.0 / PF_HBAR : 1.0;
    for (int a = 0; a < d; a++) k0[a] *= f;
}

static int read_normalize(lua_State *L, int t, const char *fname)
{
    int type = pfl_option_get(L, t, "normalize");
    int v = type == LUA_TNIL ? 1 : lua_toboolean(L, -1);
    if (type != LUA_TNIL && type != LUA_TBOOLEAN) luaL_error(L, "%s: field 'normalize' must be true or false", fname);
    lua_pop(L, 1);
    return v;
}

/* What every builder reads first and uses to the end: the grid (argument
 * 1), its dimension, and from the options table (argument 2, checked
 * against the builder's declared fields before anything is read) the mass;
 * name is the builder's name in messages. */
typedef struct builder {
    const char *name;
    pf_grid *grid;
    int dim;
    double mass;
} builder;

static builder begin_build(lua_State *L, const pfl_options_decl *options, const char *name)
{
    builder b = {name, pfl_check_grid(L, 1), 0, 0};
    pfl_options_check(L, 2, options);
    b.dim = pf_grid_dim(b.grid);
    b.mass = pfl_field_mass(L, 2, name);
    return b;
}

/* The last step before the core builder fills the state: reads field
 * 'normalize' into *normalize, then creates the wave, pushes it (Lua owns
 * it from here on, as the builder's one result) and returns it. */
static pf_wave *new_state(lua_State *L, const builder *b, int *normalize)
{
    *normalize = read_normalize(L, 2, b->name);
    pf_wave **slot = pfl_push_wave_slot(L);
    pfl_check(L, pf_wave_new(b->grid, b->mass, slot), b->name);
    return *slot;
}

/* Where a state sits and how it moves: field 'center' (m) and one of the
 * mean-motion fields (read_motion). */
static void read_placement(lua_State *L, const builder *b, double *center, double *k0)
{
    read_vector(L, 2, b->name, "center", b->dim, center, 0);
    read_motion(L, 2, b->name, b->dim, b->mass, k0);
}

#define ENVELOPE_FIELDS                                                                                          \
    "mass", "width", "momentum_width", "velocity_width", "covariance", "center", "velocity", "momentum",         \
        "wavenumber", "chirp", "expansion_rate", "normalize"

static const pfl_options_decl GAUSSIAN_OPTIONS = {"pf.gaussian", (const char *const[]){ENVELOPE_FIELDS, NULL}};
static const pfl_options_decl ORDERS_OPTIONS = {
    "pf.momentum_orders",
    (const char *const[]){ENVELOPE_FIELDS, "step_momentum", "step_wavenumber", "step_velocity", "orders", NULL}};
static const pfl_options_decl ORDER_OPTIONS = {"pf.momentum_orders orders[i]", (const char *const[]){"n", "amplitude", "phase", NULL}};
static const pfl_options_decl GROUND_STATE_OPTIONS = {
    "pf.ground_state", (const char *const[]){"mass", "omega", "frequency", "center", "velocity", "momentum", "wavenumber", "normalize", NULL}};
static const pfl_options_decl OSCILLATOR_OPTIONS = {
    "pf.oscillator", (const char *const[]){"mass", "omega", "frequency", "n", "center", "velocity", "momentum", "wavenumber", "normalize", NULL}};
static const pfl_options_decl FLAT_TOP_OPTIONS = {
    "pf.flat_top", (const char *const[]){"mass", "half_width", "velocity_half_width", "wavenumber_half_width", "order", "shape", "center", "velocity", "momentum", "wavenumber", "normalize", NULL}};
static const pfl_options_decl THOMAS_FERMI_OPTIONS = {
    "pf.thomas_fermi", (const char *const[]){"mass", "radius", "center", "velocity", "momentum", "wavenumber", "normalize", NULL}};
static const pfl_options_decl SAMPLED_OPTIONS = {
    "pf.sampled", (const char *const[]){"mass", "space", "x", "k", "axes", "values", "interpolation", "normalize", NULL}};

/* Gaussian envelope: size (one of width, momentum_width, velocity_width,
 * covariance), centre, mean motion and chirp (chirp or expansion_rate). */
static void read_envelope(lua_State *L, const builder *state, pf_gaussian_spec *spec)
{
    const int t = 2, d = state->dim;
    const char *fname = state->name;
    const double mass = state->mass;
    static const char *const sizes[] = {"width", "momentum_width", "velocity_width", "covariance", NULL};
    static const char *const chirps[] = {"chirp", "expansion_rate", NULL};
    pf_gaussian_spec_init(spec, 1.0);
    int which = choose(L, t, fname, sizes, 1);
    if (which == 3) {
        read_matrix(L, t, fname, "covariance", d, spec->covariance);
        for (int a = 0; a < d; a++)
            if (!(spec->covariance[a][a] > 0))
                luaL_error(L, "%s: field 'covariance' diagonal entry %d must be positive (m^2), got %f", fname, a + 1,
                           spec->covariance[a][a]);
    } else {
        double v[PF_MAX_DIM];
        read_vector(L, t, fname, sizes[which], d, v, 1);
        for (int a = 0; a < d; a++) {
            /* Minimum-uncertainty packet: sigma_x = hbar / (2 sigma_p). */
            double sx = which == 0 ? v[a] : which == 1 ? PF_HBAR / (2.0 * v[a]) : PF_HBAR / (2.0 * mass * v[a]);
            spec->covariance[a][a] = sx * sx;
        }
    }
    read_placement(L, state, spec->center, spec->wavenumber);
    int c = choose(L, t, fname, chirps, 0);
    if (c >= 0) {
        read_matrix(L, t, fname, chirps[c], d, spec->chirp);
        /* expansion_rate r: velocity field v = r d, local k = m r d / hbar. */
        if (c == 1)
            for (int a = 0; a < d; a++)
                for (int b = 0; b < d; b++) spec->chirp[a][b] *= mass / PF_HBAR;
    }
}

/* pf.gaussian(grid, {mass=, width=|momentum_width=|velocity_width=|covariance=,
 *                    center=, velocity=|momentum=|wavenumber=,
 *                    chirp=|expansion_rate=, normalize=true}) */
static int l_gaussian(lua_State *L)
{
    builder b = begin_build(L, &GAUSSIAN_OPTIONS, "gaussian");
    pf_gaussian_spec spec;
    read_envelope(L, &b, &spec);
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_gaussian(w, &spec, normalize), b.name);
    return 1;
}

/* pf.momentum_orders(grid, {envelope fields as pf.gaussian,
 *     step_momentum=|step_wavenumber=|step_velocity=,
 *     orders = {{n=, amplitude=1, phase=0}, ...}}) */
static int l_momentum_orders(lua_State *L)
{
    static const char *const steps[] = {"step_momentum", "step_wavenumber", "step_velocity", NULL};
    builder b = begin_build(L, &ORDERS_OPTIONS, "momentum_orders");
    pf_gaussian_spec spec;
    read_envelope(L, &b, &spec);
    int which = choose(L, 2, b.name, steps, 1);
    double step[PF_MAX_DIM];
    if (b.dim > 1 && pfl_option_get(L, 2, steps[which]) == LUA_TNUMBER)
        return luaL_error(L, "%s: on a %dD grid field '%s' must be a vector of %d numbers (the kick direction)",
                          b.name, b.dim, steps[which], b.dim);
    if (b.dim > 1) lua_pop(L, 1);
    read_vector(L, 2, b.name, steps[which], b.dim, step, 0);
    double f = which == 0 ? 1.0 / PF_HBAR : which == 1 ? 1.0 : b.mass / PF_HBAR;
    for (int a = 0; a < b.dim; a++) step[a] *= f;
    if (pfl_option_get(L, 2, "orders") != LUA_TTABLE) return luaL_error(L, "%s: field 'orders' must be a table of orders", b.name);
    lua_Integer count = luaL_len(L, -1);
    if (count < 1 || count > 100000) return luaL_error(L, "%s: field 'orders' must list 1..100000 orders, got %d", b.name, (int)count);
    pf_order *orders = lua_newuserdatauv(L, (size_t)count * sizeof *orders, 0); /* freed by Lua on error */
    int list = lua_absindex(L, -2);
    for (lua_Integer i = 1; i <= count; i++) {
        char buf[80];
        if (lua_geti(L, list, i) != LUA_TTABLE)
            return luaL_error(L, "%s: orders entry %d must be a table {n=, amplitude=, phase=}", b.name, (int)i);
        int e = lua_gettop(L);
        pfl_options_check(L, e, &ORDER_OPTIONS);
        int ok;
        pfl_option_get(L, e, "n");
        lua_Integer n = pfl_tointegerx(L, -1, &ok);
        if (!ok) return luaL_error(L, "%s: orders entry %d needs an integer 'n', got %s", b.name, (int)i, pfl_describe(L, -1, buf, sizeof buf));
        lua_pop(L, 1);
        double complex amp = 1.0;
        if (pfl_option_get(L, e, "amplitude") != LUA_TNIL && (!pfl_to_complex(L, -1, &amp) || !isfinite(creal(amp)) || !isfinite(cimag(amp))))
            return luaL_error(L, "%s: orders entry %d: 'amplitude' must be a finite number or complex, got %s", b.name,
                              (int)i, pfl_describe(L, -1, buf, sizeof buf));
        lua_pop(L, 1);
        double phase = 0;
        if (pfl_option_get(L, e, "phase") != LUA_TNIL) {
            phase = lua_tonumber(L, -1);
            if (lua_type(L, -1) != LUA_TNUMBER || !isfinite(phase))
                return luaL_error(L, "%s: orders entry %d: 'phase' must be a finite number (rad), got %s", b.name,
                                  (int)i, pfl_describe(L, -1, buf, sizeof buf));
        }
        lua_pop(L, 2);
        if (n < -100000 || n > 100000) return luaL_error(L, "%s: orders entry %d: 'n' must be within +-100000, got %d", b.name, (int)i, (int)n);
        orders[i - 1].n = (int)n;
        orders[i - 1].amplitude = amp * cexp(I * phase);
    }
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_orders(w, &spec, step, orders, (size_t)count, normalize), b.name);
    return 1;
}

/* Trap angular frequencies: omega (rad/s) or frequency (Hz, times 2 pi). */
static void read_trap(lua_State *L, int t, const char *fname, int d, double *omega)
{
    static const char *const names[] = {"omega", "frequency", NULL};
    int which = choose(L, t, fname, names, 1);
    read_vector(L, t, fname, names[which], d, omega, 1);
    if (which == 1)
        for (int a = 0; a < d; a++) omega[a] *= PF_TWO_PI;
}

/* pf.ground_state(grid, {mass=, omega=|frequency=, center=, velocity=|..., normalize=}) */
static int l_ground_state(lua_State *L)
{
    builder b = begin_build(L, &GROUND_STATE_OPTIONS, "ground_state");
    double omega[PF_MAX_DIM], center[PF_MAX_DIM] = {0, 0, 0}, k0[PF_MAX_DIM];
    read_trap(L, 2, b.name, b.dim, omega);
    read_placement(L, &b, center, k0);
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_ground_state(w, omega, center, k0, normalize), b.name);
    return 1;
}

/* pf.oscillator(grid, {mass=, omega=|frequency=, n=, center=, velocity=|..., normalize=}) */
static int l_oscillator(lua_State *L)
{
    builder b = begin_build(L, &OSCILLATOR_OPTIONS, "oscillator");
    double omega[PF_MAX_DIM], center[PF_MAX_DIM] = {0, 0, 0}, k0[PF_MAX_DIM];
    read_trap(L, 2, b.name, b.dim, omega);
    double nv[PF_MAX_DIM];
    if (!read_vector(L, 2, b.name, "n", b.dim, nv, 0)) return luaL_error(L, "%s: missing field 'n' (quantum number per axis)", b.name);
    int n[PF_MAX_DIM];
    for (int a = 0; a < b.dim; a++) {
        if (nv[a] != floor(nv[a]) || nv[a] < 0 || nv[a] > 5000)
            return luaL_error(L, "%s: field 'n' entry %d must be an integer 0..5000, got %f", b.name, a + 1, nv[a]);
        n[a] = (int)nv[a];
    }
    read_placement(L, &b, center, k0);
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_oscillator(w, omega, n, center, k0, normalize), b.name);
    return 1;
}

/* pf.flat_top(grid, {mass=, half_width=|velocity_half_width=|wavenumber_half_width=,
 *                    order=4, shape="box"|"round", center=, velocity=|..., normalize=}) */
static int l_flat_top(lua_State *L)
{
    static const char *const widths[] = {"half_width", "velocity_half_width", "wavenumber_half_width", NULL};
    builder b = begin_build(L, &FLAT_TOP_OPTIONS, "flat_top");
    double kappa[PF_MAX_DIM], center[PF_MAX_DIM] = {0, 0, 0}, k0[PF_MAX_DIM];
    int which = choose(L, 2, b.name, widths, 1);
    read_vector(L, 2, b.name, widths[which], b.dim, kappa, 1);
    double f = which == 0 ? 1.0 / PF_HBAR : which == 1 ? b.mass / PF_HBAR : 1.0;
    for (int a = 0; a < b.dim; a++) kappa[a] *= f;
    double order = 4.0;
    if (pfl_option_get(L, 2, "order") != LUA_TNIL) {
        order = lua_tonumber(L, -1);
        if (lua_type(L, -1) != LUA_TNUMBER || !(order >= 1 && order <= 50))
            return luaL_error(L, "%s: field 'order' must be a number from 1 (Gaussian) to 50, got %s", b.name,
                              pfl_describe(L, -1, (char[80]){0}, 80));
    }
    lua_pop(L, 1);
    pf_flat_shape shape = PF_FLAT_BOX;
    if (pfl_option_get(L, 2, "shape") != LUA_TNIL) {
        const char *s = lua_tostring(L, -1);
        if (lua_type(L, -1) == LUA_TSTRING && strcmp(s, "box") == 0) shape = PF_FLAT_BOX;
        else if (lua_type(L, -1) == LUA_TSTRING && strcmp(s, "round") == 0) shape = PF_FLAT_ROUND;
        else return luaL_error(L, "%s: field 'shape' must be \"box\" or \"round\", got %s", b.name, pfl_describe(L, -1, (char[80]){0}, 80));
    }
    lua_pop(L, 1);
    read_placement(L, &b, center, k0);
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_flat_top(w, center, k0, kappa, order, shape, normalize), b.name);
    return 1;
}

/* pf.thomas_fermi(grid, {mass=, radius=, center=, velocity=|..., normalize=}) */
static int l_thomas_fermi(lua_State *L)
{
    builder b = begin_build(L, &THOMAS_FERMI_OPTIONS, "thomas_fermi");
    double radius[PF_MAX_DIM], center[PF_MAX_DIM] = {0, 0, 0}, k0[PF_MAX_DIM];
    if (!read_vector(L, 2, b.name, "radius", b.dim, radius, 1))
        return luaL_error(L, "%s: missing field 'radius' (Thomas-Fermi radius per axis, m)", b.name);
    read_placement(L, &b, center, k0);
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_thomas_fermi(w, center, radius, k0, normalize), b.name);
    return 1;
}

/* Reads an array of numbers (the table at idx) into a new userdata buffer
 * left on the stack. */
static double *read_numbers(lua_State *L, int idx, const char *fname, const char *what, size_t *count)
{
    idx = lua_absindex(L, idx);
    lua_Integer n = luaL_len(L, idx);
    if (n < 2 || n > (1 << 24)) luaL_error(L, "%s: %s must list 2..16777216 numbers, got %d", fname, what, (int)n);
    double *v = lua_newuserdatauv(L, (size_t)n * sizeof *v, 0);
    for (lua_Integer i = 1; i <= n; i++) {
        char buf[80];
        int type = lua_geti(L, idx, i);
        v[i - 1] = lua_tonumber(L, -1);
        if (type != LUA_TNUMBER || !isfinite(v[i - 1]))
            luaL_error(L, "%s: %s entry %d must be a finite number, got %s", fname, what, (int)i, pfl_describe(L, -1, buf, sizeof buf));
        lua_pop(L, 1);
    }
    *count = (size_t)n;
    return v;
}

/* pf.sampled(grid, {mass=, space="position"|"momentum", x={...} | axes={{...},...},
 *                   values={...}, interpolation="linear"|"cubic", normalize=}) */
static int l_sampled(lua_State *L)
{
    char buf[80];
    builder b = begin_build(L, &SAMPLED_OPTIONS, "sampled");
    pf_rep rep = PF_POSITION;
    pfl_field_space(L, 2, &rep);
    pf_interp method = PF_INTERP_LINEAR;
    if (pfl_option_get(L, 2, "interpolation") != LUA_TNIL) {
        const char *s = lua_tostring(L, -1);
        if (lua_type(L, -1) == LUA_TSTRING && strcmp(s, "linear") == 0) method = PF_INTERP_LINEAR;
        else if (lua_type(L, -1) == LUA_TSTRING && strcmp(s, "cubic") == 0) method = PF_INTERP_CUBIC;
        else return luaL_error(L, "%s: field 'interpolation' must be \"linear\" or \"cubic\", got %s", b.name, pfl_describe(L, -1, buf, sizeof buf));
    }
    lua_pop(L, 1);
    static const char *const coords[] = {"x", "k", "axes", NULL};
    int which = choose(L, 2, b.name, coords, 1);
    if (which < 2 && b.dim != 1) return luaL_error(L, "%s: on a %dD grid give 'axes' (one coordinate list per axis)", b.name, b.dim);
    if (which == 0 && rep == PF_MOMENTUM) return luaL_error(L, "%s: momentum samples take their coordinates in 'k' (1/m)", b.name);
    if (which == 1 && rep == PF_POSITION) return luaL_error(L, "%s: 'k' coordinates need space = \"momentum\"", b.name);
    size_t counts[PF_MAX_DIM];
    const double *axes[PF_MAX_DIM];
    pfl_option_get(L, 2, coords[which]);
    if (!lua_istable(L, -1)) return luaL_error(L, "%s: field '%s' must be a table", b.name, coords[which]);
    if (which < 2) {
        axes[0] = read_numbers(L, -1, b.name, coords[which], &counts[0]);
    } else {
        if (luaL_len(L, -1) != b.dim) return luaL_error(L, "%s: field 'axes' must hold %d coordinate lists, got %d", b.name, b.dim, (int)luaL_len(L, -1));
        int list = lua_gettop(L);
        for (int a = 0; a < b.dim; a++) {
            if (lua_geti(L, list, a + 1) != LUA_TTABLE) return luaL_error(L, "%s: axes entry %d must be a table of numbers", b.name, a + 1);
            char what[32];
            snprintf(what, sizeof what, "axes[%d]", a + 1);
            axes[a] = read_numbers(L, -1, b.name, what, &counts[a]);
            lua_remove(L, -2); /* keep the buffer, drop the Lua list */
        }
    }
    size_t total = 1;
    for (int a = 0; a < b.dim; a++) total *= counts[a];
    if (pfl_option_get(L, 2, "values") != LUA_TTABLE) return luaL_error(L, "%s: field 'values' must be a table of numbers or complex values", b.name);
    if ((size_t)luaL_len(L, -1) != total)
        return luaL_error(L, "%s: field 'values' must hold %d values (row-major, last axis fastest), got %d", b.name, (int)total, (int)luaL_len(L, -1));
    int vals = lua_gettop(L);
    double complex *values = lua_newuserdatauv(L, total * sizeof *values, 0);
    for (size_t i = 0; i < total; i++) {
        lua_geti(L, vals, (lua_Integer)i + 1);
        if (!pfl_to_complex(L, -1, &values[i]))
            return luaL_error(L, "%s: values entry %d must be a number or complex, got %s", b.name, (int)i + 1, pfl_describe(L, -1, buf, sizeof buf));
        lua_pop(L, 1);
    }
    int normalize;
    pf_wave *w = new_state(L, &b, &normalize);
    pfl_check(L, pf_build_sampled(w, rep, counts, axes, values, method, normalize), b.name);
    return 1;
}

void pfl_open_build(lua_State *L, int mod)
{
    static const luaL_Reg funcs[] = {
        {"gaussian", l_gaussian}, {"momentum_orders", l_momentum_orders}, {"ground_state", l_ground_state},
        {"oscillator", l_oscillator}, {"flat_top", l_flat_top}, {"thomas_fermi", l_thomas_fermi},
        {"sampled", l_sampled}, {NULL, NULL},
    };
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&GAUSSIAN_OPTIONS, &ORDERS_OPTIONS, &ORDER_OPTIONS,
                                                      &GROUND_STATE_OPTIONS, &OSCILLATOR_OPTIONS, &FLAT_TOP_OPTIONS,
                                                      &THOMAS_FERMI_OPTIONS, &SAMPLED_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
