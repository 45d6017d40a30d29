/* pfl_sample.c - Born-rule sampling of detection events (pf_sample.h) as
 * s:sample for wave functions and ensembles, and pf.histogram to bin them. */
#include <math.h>
#include "pf_constants.h"
#include "pf_dist_measure.h"
#include "pf_frame.h"
#include "pf_histogram.h"
#include "pf_sample.h"
#include "pfl_measure.h"
#include "pfl_options.h"

#define RNG_KEYS "seed", "generator" /* read by pfl_opt_rng */
static const pfl_options_decl SAMPLE_OPTIONS = {"state:sample", (const char *const[]){"space", "jitter", RNG_KEYS, NULL}};
static const pfl_options_decl HISTOGRAM_OPTIONS = {"pf.histogram", (const char *const[]){"from", "to", "bins", NULL}};

void pfl_push_event_columns(lua_State *L, const double *ev, lua_Integer n, int d, int stride, int fields)
{
    lua_createtable(L, d, fields);
    for (int a = 0; a < d; a++) {
        lua_createtable(L, (int)n, 0);
        for (lua_Integer e = 0; e < n; e++) {
            lua_pushnumber(L, ev[(size_t)e * (size_t)stride + (size_t)a]);
            lua_rawseti(L, -2, e + 1);
        }
        lua_rawseti(L, -2, a + 1);
    }
}

void pfl_set_event_fields(lua_State *L, lua_Integer n, pf_rep rep)
{
    lua_pushinteger(L, n);
    lua_setfield(L, -2, "count");
    lua_pushstring(L, rep == PF_POSITION ? "position" : "momentum");
    lua_setfield(L, -2, "space");
    lua_pushstring(L, rep == PF_POSITION ? "m" : "1/m");
    lua_setfield(L, -2, "unit");
}

/* s:sample(n [, {space=, jitter=true, seed=, generator=}])
 * -> {count = n, space, unit, [1] = coordinates on axis 1, [2] = ...} */
static int l_sample(lua_State *L)
{
    int opts = pfl_options_opt(L, 3, &SAMPLE_OPTIONS);
    pfl_source src;
    pfl_check_source(L, 1, &src);
    lua_Integer n = luaL_checkinteger(L, 2);
    if (n < 0 || n > 100000000) return luaL_argerror(L, 2, "event count must be 0..1e8");
    pf_rep rep = pfl_opt_space(L, opts);
    int jitter = opts ? pfl_field_boolean(L, opts, "jitter", 1) : 1;
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, opts, &local);
    pf_field f;
    const int split = pfl_source_split(&src); /* one wave over MPI ranks: from each rank's planes */
    if (split) pfl_source_geometry(L, &src, rep, &f, "sample");
    else pfl_source_field(L, &src, rep, &f, "sample");
    int d = f.dim;
    /* Events go into a Lua-owned buffer, so nothing leaks if a table
     * allocation below raises. */
    double *ev = lua_newuserdatauv(L, (size_t)(n ? n : 1) * (size_t)d * sizeof(double), 0);
    pf_sampler sm;
    pf_status s = split ? pf_dist_draw_events(src.single, rep, &f, rng, (size_t)n, jitter, ev) : pf_sampler_init(&sm, &f);
    if (s == PF_OK && !split) {
        /* In blocks of 2^16 events (drawn in the same order, so the same
         * events), reporting progress between them. */
        const size_t block = 65536;
        pf_context_progress(pfl_ctx(L), "sample", 0, (double)n);
        for (size_t e = 0; e < (size_t)n; e += block) {
            size_t m = (size_t)n - e < block ? (size_t)n - e : block;
            pf_sampler_draw(&sm, rng, m, jitter, ev + e * (size_t)d);
            pf_context_progress(pfl_ctx(L), "sample", (double)(e + m), (double)n);
        }
        pf_sampler_free(&sm);
    }
    if (!split) pf_field_free(&f);
    pfl_check(L, s, "sample");
    pfl_push_event_columns(L, ev, n, d, d, 4);
    pfl_set_event_fields(L, n, rep);
    if (rep == PF_MOMENTUM) {
        /* Wave numbers times these give momenta (kg m/s) and velocities (m/s). */
        lua_pushnumber(L, PF_HBAR);
        lua_setfield(L, -2, "to_momentum");
        lua_pushnumber(L, PF_HBAR / pfl_source_mass(&src));
        lua_setfield(L, -2, "to_velocity");
    }
    return 1;
}

/* pf.histogram(values, {from=, to=, bins=}) -> {counts, edges, centers, outside};
 * the binning is pf_histogram.h's. */
static int l_histogram(lua_State *L)
{
    size_t n;
    double *v = pfl_check_doubles(L, 1, &n, "histogram values");
    pfl_options_check(L, 2, &HISTOGRAM_OPTIONS);
    double lo = pfl_field_number(L, 2, "from", 0, 1), hi = pfl_field_number(L, 2, "to", 0, 1);
    double bins = pfl_field_number(L, 2, "bins", 0, 1);
    if (!(hi > lo)) return luaL_error(L, "histogram: needs from < to, got %f and %f", lo, hi);
    if (bins < 1 || bins > 1e7 || bins != floor(bins)) return luaL_error(L, "histogram: field 'bins' must be a count");
    const pf_histogram_spec spec = {.from = lo, .to = hi, .bins = (size_t)bins};
    const size_t nb = spec.bins;
    /* counts, then edges (reused for the centres): Lua-owned, so a table
     * allocation that raises leaks nothing. */
    double *c = lua_newuserdatauv(L, (2 * nb + 1) * sizeof(double), 0), outside;
    pfl_check(L, pf_histogram_count(pfl_ctx(L), &spec, v, n, c, &outside), "histogram");
    lua_createtable(L, 0, 4);
    pfl_push_doubles(L, c, nb);
    lua_setfield(L, -2, "counts");
    double *e = c + nb;
    pf_histogram_edges(&spec, e);
    pfl_push_doubles(L, e, nb + 1);
    lua_setfield(L, -2, "edges");
    pf_histogram_centers(&spec, e);
    pfl_push_doubles(L, e, nb);
    lua_setfield(L, -2, "centers");
    lua_pushnumber(L, outside);
    lua_setfield(L, -2, "outside");
    return 1;
}

void pfl_open_sample(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {{"sample", l_sample}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {{"histogram", l_histogram}, {NULL, NULL}};
    pfl_add_state_methods(L, methods);
    pfl_add_functions(L, mod, funcs);
    static const pfl_options_decl *const options[] = {&SAMPLE_OPTIONS, &HISTOGRAM_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
