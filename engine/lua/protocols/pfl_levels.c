/* pfl_levels.c - multi-level wave functions as Lua objects: pf.levels{...}
 * wraps the core levels view (pf_levels.h) and reads the options of its
 * methods; the physics (pulses, flights, populations, Born events, the
 * shared moving frame) is the core's.
 *
 * The level waves are ordinary wave userdata kept in the object's user
 * value (the core object borrows them), so lv:level(label) hands out the
 * wave itself and every wave method (masks, potentials, evolve, outputs,
 * cameras) works on one level in place.  Every method first checks that no
 * level wave was closed behind the object's back. */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_frame.h"
#include "pf_levels.h"
#include "pf_pulse.h"
#include "pf_two_photon.h"
#include "pfl.h"
#include "pfl_measure.h"
#include "pfl_options.h"

#define PFL_LEVELS_TYPE "psiflight.levels"
#define LEVELS_MAX PF_LEVELS_MAX
#define LABEL_MAX PF_LEVELS_LABEL_MAX

static const pfl_options_decl LEVELS_OPTIONS = {
    "pf.levels", (const char *const[]){"labels", "energies", "waves", "grid", "mass", "frame", NULL}};
static const pfl_options_decl PULSE_OPTIONS = {
    "levels:pulse",
    (const char *const[]){"from", "to", "rabi", "area", "duration", "envelope", "width", "detuning", "omega", "phase",
                          "wavenumber", "light_shift", "one_photon_detuning", "beam_rabi", "substeps",
                          "acceleration", "chirp", "slices", NULL}};
static const pfl_options_decl BRAGG_OPTIONS = {
    "levels:bragg", (const char *const[]){"level", "rabi", "area", "duration", "envelope", "width", "detuning", "phase",
                                          "wavenumber", "substeps", NULL}};
static const pfl_options_decl FLY_OPTIONS = {"levels:fly", (const char *const[]){"acceleration", NULL}};
static const pfl_options_decl SAMPLE_OPTIONS = {
    "levels:sample", (const char *const[]){"space", "jitter", "seed", "generator", NULL}};
static const pfl_options_decl EVOLVE_OPTIONS = {
    "levels:evolve",
    (const char *const[]){"potential", "acceleration", "dt", "order", "time_dependent", "envelope", NULL}};
static const pfl_options_decl ORDERS_OPTIONS = {
    "levels:order_populations", (const char *const[]){"wavenumber", "orders", "center", NULL}};

/* The userdata: the core view, NULL once closed; the level waves are in
 * user value 1 (a sequence of wave userdata), which keeps them alive. */
typedef struct pfl_levels_box {
    pf_levels *lv;
} pfl_levels_box;

/* The core object of the levels at arg; raises when it is closed or when a
 * level wave was closed on its own. */
static pf_levels *check_levels(lua_State *L, int arg)
{
    pfl_levels_box *b = luaL_checkudata(L, arg, PFL_LEVELS_TYPE);
    if (!b->lv) luaL_argerror(L, arg, "levels object is closed");
    lua_getiuservalue(L, arg, 1);
    for (int i = 0; i < pf_levels_count(b->lv); i++) {
        lua_rawgeti(L, -1, i + 1);
        if (pfl_wave_peek(L, -1) != pf_levels_wave(b->lv, i))
            luaL_error(L, "levels: the wave of level '%s' was closed", pf_levels_label(b->lv, i));
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    pfl_ctx(L); /* binds this thread to the context for warnings */
    return b->lv;
}

/* Records the grid guards of every level (the run record's edge figures). */
static void note_levels(lua_State *L, const pf_levels *lv)
{
    for (int i = 0; i < pf_levels_count(lv); i++) pfl_note_guards(L, pf_levels_wave(lv, i));
}

/* Level index of the label at stack index idx; the error lists the labels. */
static int check_label_at(lua_State *L, const pf_levels *b, int idx, const char *fname, const char *field)
{
    if (lua_type(L, idx) != LUA_TSTRING) {
        char buf[64];
        return luaL_error(L, "%s: field '%s' must be a level label, got %s", fname, field, pfl_describe(L, idx, buf, sizeof buf));
    }
    const char *s = lua_tostring(L, idx);
    int i = pf_levels_find(b, s);
    if (i < 0) {
        char list[LEVELS_MAX * (LABEL_MAX + 2)];
        pf_levels_label_list(b, list, sizeof list);
        return luaL_error(L, "%s: field '%s': no level '%s' (levels: %s)", fname, field, s, list);
    }
    return i;
}

/* A number (for axis 1, the others 0) or a per-axis table at idx into out. */
static void vector_at(lua_State *L, int idx, int dim, double *out, const char *fname, const char *what)
{
    idx = lua_absindex(L, idx);
    for (int a = 0; a < dim; a++) out[a] = 0;
    if (lua_type(L, idx) == LUA_TNUMBER) {
        out[0] = lua_tonumber(L, idx);
        if (dim > 1) luaL_error(L, "%s: %s on a %dD grid needs one value per axis", fname, what, dim);
    } else if (lua_type(L, idx) == LUA_TTABLE && luaL_len(L, idx) == dim) {
        for (int a = 0; a < dim; a++) {
            if (lua_rawgeti(L, idx, a + 1) != LUA_TNUMBER) luaL_error(L, "%s: %s must hold numbers", fname, what);
            out[a] = lua_tonumber(L, -1);
            lua_pop(L, 1);
        }
    } else {
        char buf[64];
        luaL_error(L, "%s: %s must be a number or %d numbers (one per axis), got %s", fname, what, dim,
                   pfl_describe(L, idx, buf, sizeof buf));
    }
    for (int a = 0; a < dim; a++)
        if (!isfinite(out[a])) luaL_error(L, "%s: %s must be finite, got %g", fname, what, out[a]);
}

/* labels = {"F1", "F2", ...}: 2 to LEVELS_MAX distinct names; returns their
 * count. */
static int read_labels(lua_State *L, char label[LEVELS_MAX][LABEL_MAX])
{
    if (pfl_option_get(L, 1, "labels") != LUA_TTABLE) return luaL_error(L, "levels: field 'labels' (a list of 2 to %d names) is required", LEVELS_MAX);
    int n = (int)luaL_len(L, -1);
    if (n < 2 || n > LEVELS_MAX) return luaL_error(L, "levels: field 'labels' must list 2 to %d levels, got %d", LEVELS_MAX, n);
    for (int i = 0; i < n; i++) {
        lua_rawgeti(L, -1, i + 1);
        size_t len = 0;
        const char *s = lua_type(L, -1) == LUA_TSTRING ? lua_tolstring(L, -1, &len) : NULL;
        if (!s || len == 0 || len >= LABEL_MAX)
            return luaL_error(L, "levels: label %d must be a string of 1 to %d characters", i + 1, LABEL_MAX - 1);
        memcpy(label[i], s, len + 1);
        for (int j = 0; j < i; j++)
            if (strcmp(label[j], s) == 0) return luaL_error(L, "levels: label '%s' appears twice", s);
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    return n;
}

/* energies = {E1, ...} (J), one per label; all 0 when absent. */
static void read_energies(lua_State *L, int n, double *energy)
{
    for (int i = 0; i < n; i++) energy[i] = 0;
    if (pfl_option_get(L, 1, "energies") != LUA_TNIL) {
        if (!lua_istable(L, -1) || luaL_len(L, -1) != n)
            luaL_error(L, "levels: field 'energies' must list %d energies (J), one per label", n);
        for (int i = 0; i < n; i++) {
            lua_rawgeti(L, -1, i + 1);
            int ok = lua_type(L, -1) == LUA_TNUMBER;
            energy[i] = lua_tonumber(L, -1);
            if (!ok || !isfinite(energy[i])) luaL_error(L, "levels: energy %d must be a finite number (J)", i + 1);
            lua_pop(L, 1);
        }
    }
    lua_pop(L, 1);
}

/* waves = {label = psi, ...}: given[i] is the wave for level i, or NULL.
 * The table stays on the stack (it anchors the waves). */
static void read_given_waves(lua_State *L, int n, char label[LEVELS_MAX][LABEL_MAX], pf_wave **given)
{
    for (int i = 0; i < n; i++) given[i] = NULL;
    if (pfl_option_get(L, 1, "waves") == LUA_TNIL) return;
    if (!lua_istable(L, -1)) luaL_error(L, "levels: field 'waves' must map labels to wave functions");
    int waves_t = lua_gettop(L);
    lua_pushnil(L);
    while (lua_next(L, waves_t)) {
        if (lua_type(L, -2) != LUA_TSTRING) luaL_error(L, "levels: field 'waves' must be keyed by level labels");
        const char *key = lua_tostring(L, -2);
        int i = -1;
        for (int j = 0; j < n; j++)
            if (strcmp(label[j], key) == 0) i = j;
        if (i < 0) luaL_error(L, "levels: field 'waves' names '%s', which is not among the labels", key);
        given[i] = pfl_wave_peek(L, -1);
        if (!given[i]) luaL_error(L, "levels: the wave given for '%s' is closed", key);
        lua_pop(L, 1);
    }
}

/* The grid, mass and clock every level shares: those of the given waves
 * (which must agree), or grid = and mass = (clock 0).  Returns the first
 * given wave, or NULL. */
static pf_wave *shared_geometry(lua_State *L, int n, char label[LEVELS_MAX][LABEL_MAX], pf_wave *const *given,
                                pf_grid **g, double *mass, double *clock)
{
    pf_wave *first = NULL;
    for (int i = 0; i < n && !first; i++) first = given[i];
    *clock = 0;
    if (!first) {
        if (pfl_option_get(L, 1, "grid") == LUA_TNIL) luaL_error(L, "levels: give 'waves' or 'grid' and 'mass'");
        *g = pfl_check_grid(L, -1);
        lua_pop(L, 1);
        *mass = pfl_field_mass(L, 1, "levels");
        return NULL;
    }
    *g = pf_wave_grid(first);
    *mass = pf_wave_mass(first);
    *clock = pf_wave_clock(first);
    for (int i = 0; i < n; i++) {
        if (!given[i]) continue;
        if (!pf_grid_same(pf_wave_grid(given[i]), *g) || pf_wave_mass(given[i]) != *mass ||
            pf_wave_clock(given[i]) != *clock)
            luaL_error(L, "levels: the waves must share one grid, mass and clock (level '%s' differs)", label[i]);
    }
    int t = pfl_option_get(L, 1, "grid");
    lua_pop(L, 1);
    if (t != LUA_TNIL || pfl_option_get(L, 1, "mass") != LUA_TNIL)
        luaL_error(L, "levels: give either 'waves' or 'grid' and 'mass', not both");
    lua_pop(L, 1);
    return first;
}

/* pf.levels{labels = {"F1", "F2", ...}, energies = {E1, E2, ...} (J),
 *           waves = {F1 = psi, ...} | grid = g, mass = m, frame = false | true}
 * The given waves are copied into their levels; the other levels start
 * empty on the same grid, mass, clock (and frame).  frame = true: the
 * levels share a moving frame that takes their common acceleration. */
static int l_levels(lua_State *L)
{
    pfl_options_check(L, 1, &LEVELS_OPTIONS);
    pfl_levels_box *b = lua_newuserdatauv(L, sizeof *b, 1);
    memset(b, 0, sizeof *b);
    luaL_setmetatable(L, PFL_LEVELS_TYPE);
    int box = lua_gettop(L);
    const int moving = pfl_field_boolean(L, 1, "frame", 0);
    char label[LEVELS_MAX][LABEL_MAX];
    const int n = read_labels(L, label);
    double energy[LEVELS_MAX] = {0};
    read_energies(L, n, energy);
    /* The level waves: copies of the given ones, the rest empty. */
    pf_wave *given[LEVELS_MAX] = {0};
    read_given_waves(L, n, label, given);
    pf_grid *g = NULL;
    double mass = 0, clock = 0;
    pf_wave *first = shared_geometry(L, n, label, given, &g, &mass, &clock);
    /* Each wave goes into a userdata as soon as it exists (an error below
     * then leaves nothing to leak); the table keeps them with the object. */
    lua_createtable(L, n, 0);
    pf_wave *waves[LEVELS_MAX];
    pf_frame frame0;
    if (first) pf_wave_frame(first, &frame0);
    for (int i = 0; i < n; i++) {
        pf_wave **slot = pfl_push_wave_slot(L);
        pf_status s = given[i] ? pf_wave_copy(given[i], slot) : pf_wave_new(g, mass, slot);
        pfl_check(L, s, "levels");
        pf_wave *w = *slot;
        if (!given[i]) pf_wave_set_clock(w, clock);
        if (!given[i] && first) pfl_check(L, pf_wave_set_frame(w, &frame0), "levels");
        waves[i] = w;
        lua_rawseti(L, -2, i + 1);
    }
    lua_setiuservalue(L, box, 1);
    const char *labels[LEVELS_MAX];
    for (int i = 0; i < n; i++) labels[i] = label[i];
    pfl_check(L, pf_levels_new(pfl_ctx(L), n, labels, energy, waves, moving, &b->lv), "levels");
    lua_pushvalue(L, box);
    return 1;
}

/* The envelope fields shared by pulse and bragg: rabi / area, duration,
 * envelope, width, substeps. */
static void read_shape(lua_State *L, int t, pf_pulse_shape *sh, const char *fname)
{
    memset(sh, 0, sizeof *sh);
    sh->envelope = PF_ENVELOPE_SQUARE;
    if (pfl_option_get(L, t, "envelope") != LUA_TNIL) {
        const char *e = lua_tostring(L, -1);
        if (lua_type(L, -1) != LUA_TSTRING || (strcmp(e, "square") && strcmp(e, "gaussian")))
            luaL_error(L, "%s: field 'envelope' must be \"square\" or \"gaussian\"", fname);
        if (strcmp(e, "gaussian") == 0) sh->envelope = PF_ENVELOPE_GAUSSIAN;
    }
    lua_pop(L, 1);
    int has_rabi = pfl_option_get(L, t, "rabi") != LUA_TNIL;
    lua_pop(L, 1);
    int has_area = pfl_option_get(L, t, "area") != LUA_TNIL;
    lua_pop(L, 1);
    int has_dur = pfl_option_get(L, t, "duration") != LUA_TNIL;
    lua_pop(L, 1);
    if (sh->envelope == PF_ENVELOPE_GAUSSIAN) {
        sh->width = pfl_field_number(L, t, "width", 0, 1);
        if (!(sh->width > 0)) luaL_error(L, "%s: field 'width' must be > 0 (s), got %g", fname, sh->width);
        sh->duration = pfl_field_number(L, t, "duration", 6.0 * sh->width, 0);
        if (has_rabi == has_area) luaL_error(L, "%s: give exactly one of 'rabi' (rad/s) and 'area' (rad)", fname);
    } else {
        int pieces = has_rabi + has_area + has_dur;
        if (pieces != 2) luaL_error(L, "%s: a square pulse needs two of 'rabi' (rad/s), 'area' (rad), 'duration' (s)", fname);
        double rabi = pfl_field_number(L, t, "rabi", 0, 0), area = pfl_field_number(L, t, "area", 0, 0);
        double dur = pfl_field_number(L, t, "duration", 0, 0);
        if (!has_dur) dur = (rabi > 0) ? area / rabi : -1;
        if (!has_rabi) rabi = (dur > 0) ? area / dur : -1;
        sh->duration = dur;
        sh->rabi = rabi;
        if (!(dur > 0)) luaL_error(L, "%s: the pulse duration must be > 0 (s), got %g", fname, dur);
        if (!(rabi >= 0)) luaL_error(L, "%s: field 'rabi' must be >= 0 (rad/s), got %g", fname, rabi);
    }
    if (!(sh->duration > 0)) luaL_error(L, "%s: field 'duration' must be > 0 (s), got %g", fname, sh->duration);
    if (sh->envelope == PF_ENVELOPE_GAUSSIAN) {
        /* integral of exp(-(t - L/2)^2 / 2 s^2) over [0, L] */
        double unit = sh->width * sqrt(2.0 * PF_PI) * erf(sh->duration / (2.0 * sqrt(2.0) * sh->width));
        sh->rabi = has_rabi ? pfl_field_number(L, t, "rabi", 0, 1) : pfl_field_number(L, t, "area", 0, 1) / unit;
        if (!(sh->rabi >= 0)) luaL_error(L, "%s: the peak Rabi frequency must be >= 0 (rad/s), got %g", fname, sh->rabi);
    }
    int sub = 0;
    if (pfl_option_get(L, t, "substeps") != LUA_TNIL) {
        int ok = 0;
        lua_Integer v = pfl_tointegerx(L, -1, &ok);
        if (!ok || v < 1 || v > 10000000) luaL_error(L, "%s: field 'substeps' must be an integer 1 .. 10000000", fname);
        sub = (int)v;
    }
    lua_pop(L, 1);
    sh->substeps = sub;
}

static void read_wavenumber(lua_State *L, int t, int dim, double *k, const char *fname)
{
    for (int a = 0; a < PF_MAX_DIM; a++) k[a] = 0;
    if (pfl_option_get(L, t, "wavenumber") != LUA_TNIL) vector_at(L, -1, dim, k, fname, "field 'wavenumber' (rad/m)");
    lua_pop(L, 1);
}

/* Field 'acceleration' of the checked options table at opts (0: none):
 * a number / per-axis table for every level, or {label = a, ...} per level;
 * absent: the pf.setup default (if any) for every level; false: none.
 * Fills the forces (levels not named: has 0). */
static void read_accelerations(lua_State *L, const pf_levels *b, int opts, int dim, pf_levels_forces *forces,
                               const char *fname)
{
    memset(forces, 0, sizeof *forces);
    double (*acc)[PF_MAX_DIM] = forces->accel;
    int *has = forces->has;
    const int count = pf_levels_count(b);
    for (int i = 0; i < count; i++) {
        has[i] = 0;
        for (int d = 0; d < PF_MAX_DIM; d++) acc[i][d] = 0;
    }
    if (!opts || pfl_option_get(L, opts, "acceleration") == LUA_TNIL) {
        if (opts) lua_pop(L, 1);
        /* No acceleration given: the script's default from pf.setup holds
         * for every level, as it does for w:fly. */
        if (pfl_frame_acceleration(L, 0, dim, acc[0], fname))
            for (int i = 0; i < count; i++) {
                memcpy(acc[i], acc[0], sizeof acc[0]);
                has[i] = 1;
            }
        return;
    }
    int at = lua_gettop(L);
    if (lua_type(L, at) == LUA_TBOOLEAN && !lua_toboolean(L, at)) {
        lua_pop(L, 1); /* acceleration = false: none, whatever the default */
        return;
    }
    int per_level = 0;
    if (lua_istable(L, at)) {
        lua_pushnil(L);
        if (lua_next(L, at)) {
            per_level = lua_type(L, -2) == LUA_TSTRING;
            lua_pop(L, 2);
        }
    }
    if (per_level) {
        lua_pushnil(L);
        while (lua_next(L, at)) {
            int i = check_label_at(L, b, -2, fname, "acceleration");
            vector_at(L, -1, dim, acc[i], fname, "acceleration (m/s^2)");
            has[i] = 1;
            lua_pop(L, 1);
        }
    } else {
        vector_at(L, at, dim, acc[0], fname, "acceleration (m/s^2)");
        for (int i = 0; i < count; i++) {
            memcpy(acc[i], acc[0], sizeof acc[0]);
            has[i] = 1;
        }
    }
    lua_pop(L, 1);
}

/* lv:fly(t [, {acceleration = a | {label = a, ...}}]) -> lv
 * a: m/s^2, a number (1D) or one value per axis; per level, levels not
 * named fly freely.  Exact (free flight, or the uniform-force propagator;
 * in a shared frame the common part moves the frame). */
static int l_fly(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    double t = pfl_check_finite(L, 2, "flight time (s)");
    int opts = pfl_options_opt(L, 3, &FLY_OPTIONS);
    int dim = pf_grid_dim(pf_wave_grid(pf_levels_wave(b, 0)));
    pf_levels_forces forces;
    read_accelerations(L, b, opts, dim, &forces, "fly");
    pfl_check(L, pf_levels_fly(b, t, &forces), "fly");
    note_levels(L, b);
    lua_settop(L, 1);
    return 1;
}

/* True when the value at idx is a table keyed by level labels (its first
 * key a string), as opposed to one value for every level. */
static int keyed_by_labels(lua_State *L, int idx)
{
    int keyed = 0;
    idx = lua_absindex(L, idx);
    if (lua_type(L, idx) != LUA_TTABLE) return 0;
    lua_pushnil(L);
    if (lua_next(L, idx)) {
        keyed = lua_type(L, -2) == LUA_TSTRING;
        lua_pop(L, 2);
    }
    return keyed;
}

/* lv:evolve(t, {potential = V | {label = V, ...}, acceleration = a | {label = a, ...} | false,
 *              dt =, order =, time_dependent =, envelope =}) -> lv, {label = info, ...}
 * Each level with a potential goes through w:evolve with its own potential
 * (lab coordinates, as there) and acceleration; a level without one flies
 * exactly (with its acceleration: the uniform-force propagator), so the
 * clocks, and in a shared frame the frame, stay together.  The levels do not
 * interact with each other (no mean field; docs/internal-states.md).  info
 * is w:evolve's second result, for the levels that evolved. */
static int l_evolve(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    double t = pfl_check_finite(L, 2, "evolve time (s)");
    pfl_options_check(L, 3, &EVOLVE_OPTIONS);
    const char *fname = "evolve";
    const int count = pf_levels_count(b);
    const int dim = pf_grid_dim(pf_wave_grid(pf_levels_wave(b, 0)));
    pf_levels_forces forces;
    read_accelerations(L, b, 3, dim, &forces, fname);
    pfl_option_get(L, 3, "potential");
    const int pot = lua_gettop(L);
    const int per_level = keyed_by_labels(L, pot);
    if (per_level) {
        lua_pushnil(L);
        while (lua_next(L, pot)) {
            check_label_at(L, b, -2, fname, "potential");
            lua_pop(L, 1);
        }
    }
    lua_getiuservalue(L, 1, 1);
    const int waves = lua_gettop(L);
    lua_createtable(L, 0, count);
    const int infos = lua_gettop(L);
    for (int i = 0; i < count; i++) {
        pf_wave *w = pf_levels_wave(b, i);
        if (per_level) lua_getfield(L, pot, pf_levels_label(b, i));
        else lua_pushvalue(L, pot);
        if (lua_isnil(L, -1)) {
            lua_pop(L, 1);
            pf_status s = forces.has[i] ? pf_wave_lab_fall(w, t, forces.accel[i])
                                        : pf_wave_frame_fold(w, "evolve without a potential");
            if (!s && !forces.has[i]) s = pf_wave_fly_in_frame(w, t, NULL);
            pfl_check(L, s, fname);
            continue;
        }
        const int value = lua_gettop(L);
        lua_rawgeti(L, waves, i + 1);
        const int wave = lua_gettop(L);
        lua_getfield(L, wave, "evolve");
        lua_pushvalue(L, wave);
        lua_pushnumber(L, t);
        lua_createtable(L, 0, 6);
        lua_pushvalue(L, value);
        lua_setfield(L, -2, "potential");
        static const char *const passed[] = {"dt", "order", "time_dependent", "envelope", NULL};
        for (const char *const *k = passed; *k; k++) {
            pfl_option_get(L, 3, *k);
            lua_setfield(L, -2, *k);
        }
        if (forces.has[i]) {
            lua_createtable(L, dim, 0);
            for (int a = 0; a < dim; a++) {
                lua_pushnumber(L, forces.accel[i][a]);
                lua_rawseti(L, -2, a + 1);
            }
        } else {
            lua_pushboolean(L, 0);
        }
        lua_setfield(L, -2, "acceleration");
        if (lua_pcall(L, 3, 2, 0) != LUA_OK) return pfl_rethrow_here(L); /* at the script line of lv:evolve */
        lua_setfield(L, infos, pf_levels_label(b, i));
        lua_settop(L, infos);
    }
    note_levels(L, b);
    lua_pushvalue(L, 1);
    lua_pushvalue(L, infos);
    return 2;
}

/* beam_rabi = {O1, O2} with one_photon_detuning = Delta: a square pulse
 * whose Rabi frequency and light shifts follow from the beams by adiabatic
 * elimination (pf_two_photon.h, docs/internal-states.md).  Returns the
 * phase the sign of Delta adds. */
static double read_two_photon(lua_State *L, pf_pulse_shape *sh, pf_pulse_light *li)
{
    int has_rabi = pfl_option_get(L, 2, "rabi") != LUA_TNIL;
    lua_pop(L, 1);
    int has_area = pfl_option_get(L, 2, "area") != LUA_TNIL;
    lua_pop(L, 1);
    if (has_rabi || has_area) luaL_error(L, "pulse: with 'beam_rabi' the Rabi frequency follows from the beams; drop 'rabi' and 'area'");
    pf_two_photon_spec tp;
    pfl_option_get(L, 2, "beam_rabi");
    if (!lua_istable(L, -1) || luaL_len(L, -1) != 2) luaL_error(L, "pulse: field 'beam_rabi' must hold two Rabi frequencies (rad/s)");
    for (int i = 0; i < 2; i++) {
        lua_rawgeti(L, -1, i + 1);
        tp.beam_rabi[i] = lua_tonumber(L, -1);
        if (lua_type(L, -1) != LUA_TNUMBER || !isfinite(tp.beam_rabi[i]) || tp.beam_rabi[i] < 0)
            luaL_error(L, "pulse: field 'beam_rabi' must hold two finite numbers >= 0 (rad/s)");
        lua_pop(L, 1);
    }
    lua_pop(L, 1);
    tp.one_photon_detuning = pfl_field_number(L, 2, "one_photon_detuning", 0, 1);
    if (tp.one_photon_detuning == 0) luaL_error(L, "pulse: field 'one_photon_detuning' must be non-zero (rad/s)");
    if (pfl_option_get(L, 2, "light_shift") != LUA_TNIL)
        luaL_error(L, "pulse: with 'beam_rabi' the light shifts follow from the beams; drop 'light_shift'");
    lua_pop(L, 1);
    memset(sh, 0, sizeof *sh);
    sh->envelope = PF_ENVELOPE_SQUARE;
    if (pfl_option_get(L, 2, "envelope") != LUA_TNIL) {
        const char *e = lua_tostring(L, -1);
        if (!e || strcmp(e, "square")) luaL_error(L, "pulse: 'beam_rabi' takes square pulses only");
    }
    lua_pop(L, 1);
    sh->duration = pfl_field_number(L, 2, "duration", 0, 1);
    if (pfl_option_get(L, 2, "substeps") != LUA_TNIL) luaL_error(L, "pulse: square pulses take no 'substeps'");
    lua_pop(L, 1);
    pf_two_photon_pulse eff;
    pfl_check(L, pf_two_photon_pulse_from(pfl_ctx(L), &tp, &eff), "pulse");
    sh->rabi = eff.rabi;
    li->shift_a = eff.shift_a;
    li->shift_b = eff.shift_b;
    return eff.phase;
}

/* light_shift = {label = rad/s}: shifts of the two coupled levels ia, ib. */
static void read_light_shifts(lua_State *L, pf_levels *b, int ia, int ib, pf_pulse_light *li)
{
    if (pfl_option_get(L, 2, "light_shift") != LUA_TNIL) {
        if (!lua_istable(L, -1)) luaL_error(L, "pulse: field 'light_shift' must map level labels to shifts (rad/s)");
        int lt = lua_gettop(L);
        lua_pushnil(L);
        while (lua_next(L, lt)) {
            int i = check_label_at(L, b, -2, "pulse", "light_shift");
            double v = lua_tonumber(L, -1);
            if (lua_type(L, -1) != LUA_TNUMBER || !isfinite(v))
                luaL_error(L, "pulse: light shift of '%s' must be a finite number (rad/s)", pf_levels_label(b, i));
            if (i == ia) li->shift_a = v;
            else if (i == ib) li->shift_b = v;
            else luaL_error(L, "pulse: field 'light_shift' names '%s', which the pulse does not couple", pf_levels_label(b, i));
            lua_pop(L, 1);
        }
    }
    lua_pop(L, 1);
}

/* slices = 1 .. 1000000: pieces the pulse is cut into; by default 16 under a
 * force or a chirp (moving) and 1 otherwise (docs/internal-states.md). */
static int read_slices(lua_State *L, int moving)
{
    int slices = moving ? 16 : 1;
    if (pfl_option_get(L, 2, "slices") != LUA_TNIL) {
        int ok = 0;
        lua_Integer v = pfl_tointegerx(L, -1, &ok);
        if (!ok || v < 1 || v > 1000000) luaL_error(L, "pulse: field 'slices' must be an integer 1 .. 1000000");
        slices = (int)v;
    }
    lua_pop(L, 1);
    return slices;
}

/* lv:pulse{from =, to =, rabi | area, duration, envelope, width, detuning | omega,
 *          phase, wavenumber, light_shift = {label = rad/s}, one_photon_detuning,
 *          beam_rabi = {O1, O2}, substeps} -> lv */
static int l_pulse(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    pfl_options_check(L, 2, &PULSE_OPTIONS);
    const char *fname = "pulse";
    pfl_option_get(L, 2, "from");
    int ia = check_label_at(L, b, -1, fname, "from");
    pfl_option_get(L, 2, "to");
    int ib = check_label_at(L, b, -1, fname, "to");
    lua_pop(L, 2);
    if (ia == ib) return luaL_error(L, "pulse: 'from' and 'to' name the same level '%s'", pf_levels_label(b, ia));
    int dim = pf_grid_dim(pf_wave_grid(pf_levels_wave(b, ia)));

    pf_pulse_light li;
    memset(&li, 0, sizeof li);
    /* beam_rabi with one_photon_detuning: a two-photon pulse (read_two_photon). */
    int has_beams = pfl_option_get(L, 2, "beam_rabi") != LUA_TNIL;
    lua_pop(L, 1);
    int has_1ph = pfl_option_get(L, 2, "one_photon_detuning") != LUA_TNIL;
    lua_pop(L, 1);
    if (has_beams != has_1ph) return luaL_error(L, "pulse: 'beam_rabi' and 'one_photon_detuning' go together");
    pf_pulse_shape sh;
    double beam_sign = 0.0;
    if (has_beams) {
        beam_sign = read_two_photon(L, &sh, &li);
    } else {
        read_shape(L, 2, &sh, fname);
        read_light_shifts(L, b, ia, ib, &li);
    }
    int has_det = pfl_option_get(L, 2, "detuning") != LUA_TNIL;
    lua_pop(L, 1);
    int has_omega = pfl_option_get(L, 2, "omega") != LUA_TNIL;
    lua_pop(L, 1);
    if (has_det && has_omega) return luaL_error(L, "pulse: give 'detuning' or 'omega', not both");
    if (has_omega) /* delta = omega_L - (E_b - E_a) / hbar */
        li.detuning = pf_levels_detuning(b, ia, ib, pfl_field_number(L, 2, "omega", 0, 1));
    else
        li.detuning = pfl_field_number(L, 2, "detuning", 0, 0);
    li.phase = pfl_field_number(L, 2, "phase", 0, 0) + beam_sign;
    read_wavenumber(L, 2, dim, li.kick, fname);
    pf_levels_forces forces;
    read_accelerations(L, b, 2, dim, &forces, fname);
    double chirp = pfl_field_number(L, 2, "chirp", 0, 0);
    int slices = read_slices(L, forces.has[ia] || forces.has[ib] || chirp != 0);
    pfl_check(L, pf_levels_pulse(b, ia, ib, &sh, &li, chirp, &forces, slices), fname);
    note_levels(L, b);
    lua_settop(L, 1);
    return 1;
}

/* lv:bragg{level = label (default: every level), rabi | area, duration, envelope,
 *          width, detuning, phase, wavenumber, substeps} -> lv */
static int l_bragg(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    pfl_options_check(L, 2, &BRAGG_OPTIONS);
    const char *fname = "bragg";
    int only = -1;
    if (pfl_option_get(L, 2, "level") != LUA_TNIL) only = check_label_at(L, b, -1, fname, "level");
    lua_pop(L, 1);
    pf_pulse_shape sh;
    read_shape(L, 2, &sh, fname);
    pf_pulse_light li;
    memset(&li, 0, sizeof li);
    li.detuning = pfl_field_number(L, 2, "detuning", 0, 0);
    li.phase = pfl_field_number(L, 2, "phase", 0, 0);
    read_wavenumber(L, 2, pf_grid_dim(pf_wave_grid(pf_levels_wave(b, 0))), li.kick, fname);
    pfl_check(L, pf_levels_bragg(b, only, &sh, &li), fname);
    note_levels(L, b);
    lua_settop(L, 1);
    return 1;
}

/* lv:populations() -> {label = probability, ...} */
static int l_populations(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    double pop[LEVELS_MAX];
    pfl_check(L, pf_levels_populations(b, pop, NULL), "populations");
    lua_createtable(L, 0, pf_levels_count(b));
    for (int i = 0; i < pf_levels_count(b); i++) {
        lua_pushnumber(L, pop[i]);
        lua_setfield(L, -2, pf_levels_label(b, i));
    }
    return 1;
}

/* lv:order_populations{wavenumber = K, orders = N (default 2), center = k0 (rad/m)}
 * -> {label = {[-N] = p, ..., [N] = p}, ...} */
static int l_order_populations(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    pfl_options_check(L, 2, &ORDERS_OPTIONS);
    double k[PF_MAX_DIM];
    if (pfl_option_get(L, 2, "wavenumber") == LUA_TNIL) return luaL_error(L, "order_populations: field 'wavenumber' (rad/m) is required");
    lua_pop(L, 1);
    read_wavenumber(L, 2, pf_grid_dim(pf_wave_grid(pf_levels_wave(b, 0))), k, "order_populations");
    int nmax = 2;
    if (pfl_option_get(L, 2, "orders") != LUA_TNIL) {
        int ok = 0;
        lua_Integer v = pfl_tointegerx(L, -1, &ok);
        if (!ok || v < 0 || v > 1000) return luaL_error(L, "order_populations: field 'orders' must be an integer 0 .. 1000");
        nmax = (int)v;
    }
    lua_pop(L, 1);
    double center = pfl_field_number(L, 2, "center", 0, 0);
    const int per = 2 * nmax + 1;
    double *out = pfl_scratch_doubles(L, (size_t)(per * pf_levels_count(b)));
    pfl_check(L, pf_levels_order_populations(b, k, center, nmax, out), "order_populations");
    lua_createtable(L, 0, pf_levels_count(b));
    for (int i = 0; i < pf_levels_count(b); i++) {
        lua_createtable(L, per, 0);
        for (int n = -nmax; n <= nmax; n++) {
            lua_pushnumber(L, out[i * per + n + nmax]);
            lua_rawseti(L, -2, n);
        }
        lua_setfield(L, -2, pf_levels_label(b, i));
    }
    return 1;
}

/* lv:sample(n [, {space =, jitter =, seed =, generator =}]) -> events with
 * their level: ev[a] coordinates per axis (lab), ev.level labels per event,
 * count, space, unit.  Born rule over levels and positions (or momenta)
 * (pf_levels_sample).  The event buffer is a userdata made before the core
 * call, and the core releases what it allocates itself, so an allocation
 * failure anywhere leaks nothing. */
static int l_sample(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    lua_Integer n = luaL_checkinteger(L, 2);
    if (n < 0 || n > 100000000) return luaL_argerror(L, 2, "event count must be 0..1e8");
    int opts = pfl_options_opt(L, 3, &SAMPLE_OPTIONS);
    pf_rep rep = pfl_opt_space(L, opts);
    int jitter = opts ? pfl_field_boolean(L, opts, "jitter", 1) : 1;
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, opts, &local);
    const int d = pf_grid_dim(pf_wave_grid(pf_levels_wave(b, 0)));
    double *ev = lua_newuserdatauv(L, (size_t)(n ? n : 1) * (size_t)(d + 1) * sizeof(double), 0);
    pfl_check(L, pf_levels_sample(b, rep, (size_t)n, jitter, rng, ev), "sample");
    pfl_push_event_columns(L, ev, n, d, d + 1, 5); /* each event: d coordinates, then its level */
    lua_createtable(L, (int)n, 0);
    for (lua_Integer e = 0; e < n; e++) {
        lua_pushstring(L, pf_levels_label(b, (int)ev[(size_t)e * (size_t)(d + 1) + (size_t)d]));
        lua_rawseti(L, -2, e + 1);
    }
    lua_setfield(L, -2, "level");
    pfl_set_event_fields(L, n, rep);
    return 1;
}

/* lv:level(label) -> the wave of that level (shared, not a copy) */
static int l_level(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    int i = check_label_at(L, b, 2, "level", "label");
    lua_getiuservalue(L, 1, 1);
    lua_rawgeti(L, -1, i + 1);
    return 1;
}

/* lv:labels() -> {"F1", "F2", ...} */
static int l_labels(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    lua_createtable(L, pf_levels_count(b), 0);
    for (int i = 0; i < pf_levels_count(b); i++) {
        lua_pushstring(L, pf_levels_label(b, i));
        lua_rawseti(L, -2, i + 1);
    }
    return 1;
}

/* lv:energy(label) -> J */
static int l_energy(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    lua_pushnumber(L, pf_levels_energy(b, check_label_at(L, b, 2, "energy", "label")));
    return 1;
}

/* lv:clock() -> s (every level's clock; they move together) */
static int l_clock(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    lua_pushnumber(L, pf_wave_clock(pf_levels_wave(b, 0)));
    return 1;
}

/* lv:norm() -> total probability over the levels */
static int l_norm(lua_State *L)
{
    pf_levels *b = check_levels(L, 1);
    double pop[LEVELS_MAX], total = 0;
    pfl_check(L, pf_levels_populations(b, pop, &total), "norm");
    lua_pushnumber(L, total);
    return 1;
}

/* close, __close and __gc: releases the core view and lets go of the waves;
 * harmless the second time. */
static int l_close(lua_State *L)
{
    pfl_levels_box *b = luaL_checkudata(L, 1, PFL_LEVELS_TYPE);
    pf_levels_free(b->lv);
    b->lv = NULL;
    lua_pushnil(L);
    lua_setiuservalue(L, 1, 1);
    return 0;
}

static int l_tostring(lua_State *L)
{
    pfl_levels_box *b = luaL_checkudata(L, 1, PFL_LEVELS_TYPE);
    if (!b->lv) {
        lua_pushstring(L, "levels (closed)");
        return 1;
    }
    char list[LEVELS_MAX * (LABEL_MAX + 2)];
    pf_levels_label_list(b->lv, list, sizeof list);
    lua_pushfstring(L, "levels {%s}", list);
    return 1;
}

void pfl_open_levels(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {
        {"pulse", l_pulse},   {"bragg", l_bragg},   {"fly", l_fly},       {"populations", l_populations},
        {"order_populations", l_order_populations}, {"level", l_level},   {"labels", l_labels},
        {"sample", l_sample}, {"evolve", l_evolve},
        {"energy", l_energy}, {"clock", l_clock},   {"norm", l_norm},     {"close", l_close},
        {NULL, NULL},
    };
    static const luaL_Reg meta[] = {{"__tostring", l_tostring}, {"__close", l_close}, {"__gc", l_close}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {{"levels", l_levels}, {NULL, NULL}};
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_LEVELS_TYPE, .meta = meta, .methods = methods, .funcs = funcs});
    static const pfl_options_decl *const options[] = {&LEVELS_OPTIONS, &PULSE_OPTIONS, &BRAGG_OPTIONS, &FLY_OPTIONS,
                                                      &ORDERS_OPTIONS, &SAMPLE_OPTIONS, &EVOLVE_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
