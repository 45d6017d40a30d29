/* pfl_farfield.c - w:far_field, the time-of-flight image from the momentum
 * distribution (pf_farfield.h), as a Lua table with its image grid. */
#include "pf_farfield.h"
#include "pf_frame.h"
#include "pfl_options.h"

static const pfl_options_decl FAR_FIELD_OPTIONS = {"wave:far_field", (const char *const[]){"acceleration", NULL}};

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
    pfl_set_vector(L, "spacing", info.spacing, d);
    pfl_set_vector(L, "fraunhofer", info.fraunhofer, d);
    pfl_set_vector(L, "source_width", info.width, d);
    pfl_set_vector(L, "source_centre", info.centre, d);
    lua_pushnumber(L, t);
    lua_setfield(L, -2, "time");
    return 2;
}

void pfl_open_farfield(lua_State *L, int mod)
{
    (void)mod;
    static const luaL_Reg methods[] = {
        {"far_field", l_far_field},
        {NULL, NULL},
    };
    static const pfl_options_decl *const options[] = {&FAR_FIELD_OPTIONS, NULL};
    pfl_options_declare(L, options);
    pfl_add_wave_methods(L, methods);
}
