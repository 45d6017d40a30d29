/* pfl_expand.c - Lua method w:expand: mean-field expansion of a released
 * cloud on a grid that grows with it (Castin-Dum scaled frame, core in
 * engine/core/flight/pf_expand.c).  Times in s, g in J m^d, frequencies in rad/s
 * (omega) or Hz (frequency). */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_expand.h"
#include "pfl.h"
#include "pfl_options.h"
#include "pfl_protocol.h"

static const pfl_options_decl EXPAND_OPTIONS = {
    "wave:expand",
    (const char *const[]){"g", "omega", "frequency", "scaling", "steps", "order", "handover", "acceleration", NULL}};

/* The interaction-energy fraction below which the free step takes over by
 * default: the asymptotic expansion speed then misses at most about 0.05 %. */
#define DEFAULT_HANDOVER 1e-3

static pf_expand_scaling check_scaling(lua_State *L, int t)
{
    static const char *const names[] = {"castin-dum", "ballistic", "fixed", NULL};
    static const pf_expand_scaling values[] = {PF_SCALING_CASTIN_DUM, PF_SCALING_BALLISTIC, PF_SCALING_FIXED};
    if (pfl_option_get(L, t, "scaling") == LUA_TNIL) {
        lua_pop(L, 1);
        return PF_SCALING_CASTIN_DUM;
    }
    if (lua_type(L, -1) == LUA_TSTRING)
        for (int i = 0; names[i]; i++)
            if (strcmp(lua_tostring(L, -1), names[i]) == 0) {
                lua_pop(L, 1);
                return values[i];
            }
    char buf[80];
    luaL_error(L, "expand: field 'scaling' must be \"castin-dum\", \"ballistic\" or \"fixed\", got %s",
               pfl_describe(L, -1, buf, sizeof buf));
    return PF_SCALING_CASTIN_DUM;
}

/* w:expand(t, {g = J m^d, omega = rad/s | frequency = Hz (one per axis or one
 *              for all; absent: from the state), scaling = "castin-dum" |
 *              "ballistic" | "fixed", steps = n, order = 2 | 4,
 *              handover = 1e-3, acceleration = {ax, ...} (m/s^2; default: pf.setup's)})
 *   -> w, {steps, handed_over, handover_time, interaction_fraction, energy,
 *          omega, lambda, rate, continued, scaling} */
static int l_expand(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double t = pfl_check_finite(L, 2, "expand time (s)");
    if (t < 0) return luaL_argerror(L, 2, "expand time must not be negative (s)");
    if (lua_isnoneornil(L, 3)) {
        lua_settop(L, 2);
        lua_newtable(L);
    }
    pfl_options_check(L, 3, &EXPAND_OPTIONS);
    int d = pf_grid_dim(pf_wave_grid(w));
    pf_expand_spec sp;
    memset(&sp, 0, sizeof sp);
    sp.g = pfl_field_number(L, 3, "g", 0, 0);
    int has_omega = pfl_field_vector_of(L, 3, "omega", d, sp.omega, 0, 1);
    double f[PF_MAX_DIM];
    int has_frequency = pfl_field_vector_of(L, 3, "frequency", d, f, 0, 1);
    if (has_omega && has_frequency)
        return luaL_error(L, "expand: give one of 'omega' (rad/s) or 'frequency' (Hz) for the release trap, not both");
    if (has_frequency)
        for (int a = 0; a < d; a++) sp.omega[a] = 2 * PF_PI * f[a];
    sp.scaling = check_scaling(L, 3);
    sp.order = (int)pfl_field_integer(L, 3, "order", 2, 0, "expand");
    if (sp.order != 2 && sp.order != 4)
        return luaL_error(L, "expand: field 'order' must be 2 (Strang) or 4 (Yoshida), got %d", sp.order);
    lua_Integer steps = pfl_field_integer(L, 3, "steps", 0, 0, "expand");
    if (pfl_option_get(L, 3, "steps") != LUA_TNIL && steps < 1)
        return luaL_error(L, "expand: field 'steps' must be a positive integer, got %d", (int)steps);
    lua_pop(L, 1);
    sp.steps = (size_t)steps;
    sp.handover = pfl_field_number(L, 3, "handover", DEFAULT_HANDOVER, 0);
    if (!(sp.handover >= 0 && sp.handover < 1))
        return luaL_error(L, "expand: field 'handover' must be a fraction in [0, 1) of the cloud's energy (0: never), "
                             "got %f", sp.handover);
    /* Gravity and other uniform forces through the wave's moving frame (the
     * option, else the pf.setup default). */
    pfl_frame_acceleration(L, 3, d, sp.acceleration, "wave:expand");
    pf_expand_info info;
    pfl_check(L, pf_wave_expand(w, t, &sp, &info), "expand");
    lua_settop(L, 1);
    lua_createtable(L, 0, 10);
    pfl_set_number(L, "steps", (double)info.steps);
    lua_pushboolean(L, info.handed_over);
    lua_setfield(L, -2, "handed_over");
    if (info.handed_over) pfl_set_number(L, "handover_time", info.handover_time);
    pfl_set_number(L, "interaction_fraction", info.interaction_fraction);
    pfl_set_number(L, "energy", info.energy);
    pfl_set_vector(L, "omega", info.omega, d);
    pfl_set_vector(L, "lambda", info.lambda, d);
    pfl_set_vector(L, "rate", info.rate, d);
    lua_pushboolean(L, info.continued);
    lua_setfield(L, -2, "continued");
    lua_pushstring(L, pf_expand_scaling_name(sp.scaling));
    lua_setfield(L, -2, "scaling");
    return 2;
}

void pfl_open_expand(lua_State *L, int mod)
{
    (void)mod;
    static const pfl_options_decl *const options[] = {&EXPAND_OPTIONS, NULL};
    pfl_options_declare(L, options);
    static const luaL_Reg methods[] = {
        {"expand", l_expand},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
