/* pfl_observe.c - Lua methods for expectation values.  Per-axis results are
 * returned as multiple values (x, y, z), in SI units. */
#include <math.h>
#include "pf_constants.h"
#include "pf_covariance.h"
#include "pf_frame.h"
#include "pf_observe.h"
#include "pfl.h"

static int push_axes(lua_State *L, const double *v, int d, double factor, int take_sqrt)
{
    for (int a = 0; a < d; a++) lua_pushnumber(L, take_sqrt ? sqrt(v[a]) * factor : v[a] * factor);
    return d;
}

static int l_norm(lua_State *L)
{
    lua_pushnumber(L, pf_wave_norm(pfl_check_wave(L, 1)));
    return 1;
}

typedef pf_status (*moments_fn)(pf_wave *, double *, double *);

/* which: 0 mean, 1 variance, 2 width (standard deviation); lab values for a
 * wave in a moving frame (pf_frame.h). */
static int moments(lua_State *L, moments_fn fn, int which, double unit, const char *name)
{
    pf_wave *w = pfl_check_wave(L, 1);
    double mean[PF_MAX_DIM], var[PF_MAX_DIM];
    pfl_check(L, fn(w, mean, which ? var : NULL), name);
    int d = pf_grid_dim(pf_wave_grid(w));
    if (which == 0) return push_axes(L, mean, d, unit, 0);
    if (which == 1) return push_axes(L, var, d, unit * unit, 0);
    return push_axes(L, var, d, unit, 1);
}

static int l_position_mean(lua_State *L) { return moments(L, pf_wave_lab_position_moments, 0, 1.0, "position_mean"); }
static int l_position_variance(lua_State *L) { return moments(L, pf_wave_lab_position_moments, 1, 1.0, "position_variance"); }
static int l_position_width(lua_State *L) { return moments(L, pf_wave_lab_position_moments, 2, 1.0, "position_width"); }
static int l_momentum_mean(lua_State *L) { return moments(L, pf_wave_lab_wavenumber_moments, 0, PF_HBAR, "momentum_mean"); }
static int l_momentum_variance(lua_State *L) { return moments(L, pf_wave_lab_wavenumber_moments, 1, PF_HBAR, "momentum_variance"); }
static int l_momentum_width(lua_State *L) { return moments(L, pf_wave_lab_wavenumber_moments, 2, PF_HBAR, "momentum_width"); }
static int l_wavenumber_mean(lua_State *L) { return moments(L, pf_wave_lab_wavenumber_moments, 0, 1.0, "wavenumber_mean"); }
static int l_wavenumber_width(lua_State *L) { return moments(L, pf_wave_lab_wavenumber_moments, 2, 1.0, "wavenumber_width"); }

static int l_velocity_mean(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    return moments(L, pf_wave_lab_wavenumber_moments, 0, PF_HBAR / pf_wave_mass(w), "velocity_mean");
}

static int l_kinetic_energy(lua_State *L)
{
    double e;
    pfl_check(L, pf_wave_lab_kinetic_energy(pfl_check_wave(L, 1), &e), "kinetic_energy");
    lua_pushnumber(L, e);
    return 1;
}

/* w:position_momentum_covariance() -> {{C11, C12, ..}, {C21, ..}, ..}:
 * row a = position axis, column b = momentum axis, m kg m/s. */
static int l_position_momentum_covariance(lua_State *L)
{
    pf_wave *w = pfl_check_wave(L, 1);
    int d = pf_grid_dim(pf_wave_grid(w));
    double cov[PF_MAX_DIM * PF_MAX_DIM];
    pfl_check(L, pf_wave_position_momentum_covariance(w, cov), "position_momentum_covariance");
    lua_createtable(L, d, 0);
    for (int a = 0; a < d; a++) {
        lua_createtable(L, d, 0);
        for (int b = 0; b < d; b++) {
            lua_pushnumber(L, cov[a * d + b]);
            lua_rawseti(L, -2, b + 1);
        }
        lua_rawseti(L, -2, a + 1);
    }
    return 1;
}

void pfl_open_observe(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {
        {"norm", l_norm},
        {"position_mean", l_position_mean},
        {"position_variance", l_position_variance},
        {"position_width", l_position_width},
        {"momentum_mean", l_momentum_mean},
        {"momentum_variance", l_momentum_variance},
        {"momentum_width", l_momentum_width},
        {"wavenumber_mean", l_wavenumber_mean},
        {"wavenumber_width", l_wavenumber_width},
        {"velocity_mean", l_velocity_mean},
        {"kinetic_energy", l_kinetic_energy},
        {"position_momentum_covariance", l_position_momentum_covariance},
        {NULL, NULL},
    };
    pfl_add_wave_methods(L, methods);
}
