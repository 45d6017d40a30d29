/* pfl_callbacks.c - user Lua functions called over a grid for the protocol
 * steps (phases, transmissions, potentials): the core's callbacks
 * (pf_sample_fn, pf_potential_fn) that call them, and their errors.
 *
 * Functions are called once per grid point under lua_pcall, so an error in a
 * user function unwinds no C frame that holds engine memory; the core call
 * returns PF_ECALLBACK and the binding re-raises the message afterwards. */
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_dist.h"
#include "pf_frame.h"
#include "pfl_protocol.h"

static void where_text(const pfl_sampler *s, const double *coord, char *buf, size_t size)
{
    const char *v = s->rep == PF_POSITION ? "x" : "k";
    int n = 0;
    if (s->dim == 1) n = snprintf(buf, size, "%s = %g", v, coord[0]);
    else if (s->dim == 2) n = snprintf(buf, size, "%s = (%g, %g)", v, coord[0], coord[1]);
    else n = snprintf(buf, size, "%s = (%g, %g, %g)", v, coord[0], coord[1], coord[2]);
    if (s->with_time && n > 0 && (size_t)n < size) snprintf(buf + n, size - (size_t)n, ", t = %g", s->t);
}

int pfl_sample_cb(void *user, const double *coord, double complex *value)
{
    pfl_sampler *s = user;
    lua_State *L = s->L;
    int base = lua_gettop(L);
    double lab[PF_MAX_DIM];
    for (int a = 0; a < s->dim; a++) lab[a] = coord[a] + s->offset[a];
    coord = lab; /* the function and every message see lab coordinates */
    lua_pushvalue(L, s->fn);
    for (int a = 0; a < s->dim; a++) lua_pushnumber(L, coord[a]);
    if (s->with_time) lua_pushnumber(L, s->t);
    if (lua_pcall(L, s->dim + (s->with_time ? 1 : 0), LUA_MULTRET, 0) != LUA_OK) return 1;
    int nret = lua_gettop(L) - base;
    double complex z;
    char where[160];
    if (!pfl_result_complex(L, base + 1, nret, &z)) {
        char buf[80];
        where_text(s, coord, where, sizeof where);
        const char *got = nret ? pfl_describe(L, base + 1, buf, sizeof buf) : "nothing";
        lua_settop(L, base);
        lua_pushfstring(L, "%s: the %s function must return a number, two numbers (re, im) or a complex; at %s it returned %s",
                        s->name, s->what, where, got);
        return 1;
    }
    lua_settop(L, base);
    if (!isfinite(creal(z)) || !isfinite(cimag(z))) {
        where_text(s, coord, where, sizeof where);
        lua_pushfstring(L, "%s: the %s function returned a non-finite value (%s) at %s", s->name, s->what,
                        isnan(creal(z)) || isnan(cimag(z)) ? "NaN" : "inf", where);
        return 1;
    }
    *value = z;
    return 0;
}

int pfl_raise_callback(lua_State *L, const char *name)
{
    if (lua_type(L, -1) == LUA_TSTRING && strncmp(lua_tostring(L, -1), name, strlen(name)) == 0) {
        luaL_where(L, 1);
        lua_insert(L, -2);
        lua_concat(L, 2);
    }
    return lua_error(L);
}

/* Samples a real function over the position grid into V: over this rank's
 * points only when the grid is split over MPI ranks (pf_dist.h), so each
 * rank calls the function for its own points. */
static int sample_real(pfl_sampler *s, pf_grid *g, double *V)
{
    size_t first, n, idx[PF_MAX_DIM] = {0, 0, 0};
    pf_grid_local_range(g, &first, &n);
    int d = pf_grid_dim(g);
    double coord[PF_MAX_DIM] = {0, 0, 0};
    for (size_t off = first; off < n; off++) {
        size_t rest = off;
        for (int a = d - 1; a >= 0; a--) {
            idx[a] = rest % pf_grid_points(g, a);
            rest /= pf_grid_points(g, a);
            coord[a] = pf_grid_x(g, a, idx[a]);
        }
        double complex z;
        if (pfl_sample_cb(s, coord, &z)) return 1;
        if (cimag(z) != 0) {
            char where[160];
            where_text(s, coord, where, sizeof where);
            lua_pushfstring(s->L, "%s: the %s function must return a real number; at %s it returned an imaginary part %f",
                            s->name, s->what, where, cimag(z));
            return 1;
        }
        V[off - first] = creal(z);
    }
    return 0;
}

int pfl_potential_cb(void *user, double t, double *V)
{
    pfl_sampler *s = user;
    s->t = t;
    return sample_real(s, s->grid, V);
}

void pfl_sampler_frame_offset(const pf_wave *w, pf_rep rep, double *out)
{
    pf_frame f;
    pf_wave_frame(w, &f);
    for (int a = 0; a < PF_MAX_DIM; a++) out[a] = rep == PF_POSITION ? f.position[a] : f.wavenumber[a];
}

double *pfl_read_potential(lua_State *L, int idx, pf_grid *g, const char *name, int with_time, double t,
                           const double *offset)
{
    idx = lua_absindex(L, idx);
    size_t n = pf_grid_total(g), first, end;
    pf_grid_local_range(g, &first, &end); /* this rank's points of a distributed grid */
    double *V = lua_newuserdatauv(L, (end - first ? end - first : 1) * sizeof(double), 0);
    if (lua_type(L, idx) == LUA_TFUNCTION) {
        pfl_sampler s = {L, idx, pf_grid_dim(g), PF_POSITION, name, "potential", with_time, t, g, {0, 0, 0}};
        if (offset)
            for (int a = 0; a < pf_grid_dim(g); a++) s.offset[a] = offset[a];
        if (sample_real(&s, g, V)) pfl_raise_callback(L, name);
        return V;
    }
    if (lua_type(L, idx) != LUA_TTABLE) {
        char buf[80];
        luaL_error(L, "%s: field 'potential' must be a function of the coordinates or a table of %d numbers (J), got %s",
                   name, (int)n, pfl_describe(L, idx, buf, sizeof buf));
    }
    if (with_time) luaL_error(L, "%s: a time-dependent potential must be a function of the coordinates and t", name);
    lua_Integer len = luaL_len(L, idx);
    if ((size_t)len != n)
        luaL_error(L, "%s: the potential table must hold one value per grid point (%d), got %d", name, (int)n, (int)len);
    for (size_t i = first; i < end; i++) {
        int type = lua_geti(L, idx, (lua_Integer)i + 1);
        double v = lua_tonumber(L, -1);
        if (type != LUA_TNUMBER || !isfinite(v)) {
            char buf[80];
            luaL_error(L, "%s: potential entry %d must be a finite number (J), got %s", name, (int)i + 1,
                       pfl_describe(L, -1, buf, sizeof buf));
        }
        V[i - first] = v;
        lua_pop(L, 1);
    }
    return V;
}

void pfl_check_axis_values(lua_State *L, int arg, int dim, double *out, const char *what)
{
    if (lua_type(L, arg) == LUA_TTABLE) {
        lua_Integer len = luaL_len(L, arg);
        if (len != dim)
            luaL_argerror(L, arg, lua_pushfstring(L, "%s: need %d values (one per axis), got %d", what, dim, (int)len));
        for (int a = 0; a < dim; a++) {
            lua_geti(L, arg, a + 1);
            double v = lua_tonumber(L, -1);
            if (lua_type(L, -1) != LUA_TNUMBER || !isfinite(v)) {
                char buf[80];
                luaL_argerror(L, arg, lua_pushfstring(L, "%s: entry %d must be a finite number, got %s", what, a + 1,
                                                      pfl_describe(L, -1, buf, sizeof buf)));
            }
            out[a] = v;
            lua_pop(L, 1);
        }
        return;
    }
    for (int a = 0; a < dim; a++) {
        if (a > 0 && lua_isnoneornil(L, arg + a)) {
            luaL_argerror(L, arg + a, lua_pushfstring(L, "%s: need %d values (one per axis)", what, dim));
        }
        out[a] = pfl_check_finite(L, arg + a, what);
    }
}
