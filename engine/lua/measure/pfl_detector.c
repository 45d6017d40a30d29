/* pfl_detector.c - cameras: pf.camera{...} objects whose expose (counting
 * detection: fluorescence or an ion/MCP detector) and absorb (absorption
 * imaging) methods turn a state into pixel images; and
 * pf.resonant_cross_section. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_detector.h"
#include "pfl_measure.h"
#include "pfl_options.h"

static const pfl_options_decl CAMERA_OPTIONS = {
    "pf.camera", (const char *const[]){"pixels", "pitch", "corner", "psf", "efficiency", "imaging_axis", NULL}};
static const pfl_options_decl EXPOSE_OPTIONS = {"camera:expose", (const char *const[]){"atoms", "noise", "seed", "generator", NULL}};
static const pfl_options_decl ABSORB_OPTIONS = {
    "camera:absorb", (const char *const[]){"atoms", "cross_section", "noise", "seed", "generator", NULL}};

typedef struct pfl_camera_box {
    pf_camera cam;
    double psf[2];
    double efficiency;
    int imaging_axis; /* 0-based grid axis integrated over, -1 none */
} pfl_camera_box;

/* pf.camera{pixels = {nx, ny} | n, pitch = p | {px, py} (m), corner = {..} (m),
 *           psf = sigma | {..} (m), efficiency = 0..1, imaging_axis = a} */
static int l_camera(lua_State *L)
{
    pfl_options_check(L, 1, &CAMERA_OPTIONS);
    pfl_camera_box *b = lua_newuserdatauv(L, sizeof *b, 0);
    memset(b, 0, sizeof *b);
    luaL_setmetatable(L, PFL_CAMERA_TYPE);
    int t = pfl_option_get(L, 1, "pixels");
    if (t == LUA_TNUMBER) {
        b->cam.dim = 1;
        b->cam.pixels[0] = (size_t)pfl_tointegerx(L, -1, NULL);
    } else if (t == LUA_TTABLE) {
        int n = (int)luaL_len(L, -1);
        if (n < 1 || n > 2) return luaL_error(L, "camera: field 'pixels' must list 1 or 2 counts");
        b->cam.dim = n;
        for (int a = 0; a < n; a++) {
            lua_geti(L, -1, a + 1);
            b->cam.pixels[a] = (size_t)pfl_tointegerx(L, -1, NULL);
            lua_pop(L, 1);
        }
    } else {
        return luaL_error(L, "camera: missing field 'pixels' (count per axis)");
    }
    lua_pop(L, 1);
    for (int a = 0; a < b->cam.dim; a++)
        if (b->cam.pixels[a] < 1 || b->cam.pixels[a] > 65536)
            return luaL_error(L, "camera: pixel count on axis %d must be 1..65536", a + 1);
    pfl_field_vector(L, 1, "pitch", b->cam.dim, b->cam.pitch, 1);
    for (int a = 0; a < b->cam.dim; a++)
        if (!(b->cam.pitch[a] > 0)) return luaL_error(L, "camera: field 'pitch' must be positive (m), got %f", b->cam.pitch[a]);
    double corner[2];
    if (pfl_field_vector(L, 1, "corner", b->cam.dim, corner, 0)) {
        for (int a = 0; a < b->cam.dim; a++) b->cam.corner[a] = corner[a];
    } else {
        /* Centred on the origin by default. */
        for (int a = 0; a < b->cam.dim; a++) b->cam.corner[a] = -0.5 * b->cam.pitch[a] * (double)b->cam.pixels[a];
    }
    pfl_field_vector(L, 1, "psf", b->cam.dim, b->psf, 0);
    for (int a = 0; a < b->cam.dim; a++)
        if (!(b->psf[a] >= 0)) return luaL_error(L, "camera: field 'psf' must be >= 0 (m), got %f", b->psf[a]);
    b->efficiency = pfl_field_number(L, 1, "efficiency", 1.0, 0);
    if (!(b->efficiency > 0 && b->efficiency <= 1))
        return luaL_error(L, "camera: field 'efficiency' must be in (0, 1], got %f", b->efficiency);
    lua_Integer ia = 0;
    if (pfl_option_get(L, 1, "imaging_axis") != LUA_TNIL) {
        ia = pfl_tointegerx(L, -1, NULL);
        if (ia < 1 || ia > 3) return luaL_error(L, "camera: field 'imaging_axis' must be 1..3");
    }
    lua_pop(L, 1);
    b->imaging_axis = (int)ia - 1;
    return 1;
}

/* Expected probability per pixel of the state (column density if the
 * camera has one axis fewer than the state), blurred and binned. */
static void probability_image(lua_State *L, pfl_camera_box *b, int arg, pf_field *pix, const char *name)
{
    pfl_source src;
    pfl_check_source(L, arg, &src);
    int d = pf_grid_dim(pfl_source_grid(&src));
    int drop = -1;
    if (d == b->cam.dim + 1) drop = b->imaging_axis >= 0 ? b->imaging_axis : d - 1;
    else if (d != b->cam.dim)
        luaL_error(L, "%s: a %dD camera cannot image a %dD state", name, b->cam.dim, d);
    if (drop >= d) luaL_error(L, "%s: imaging axis %d is not an axis of the %dD state", name, drop + 1, d);
    pf_field col;
    pf_status s = PF_OK;
    if (drop >= 0) { /* the column density: per slab for a wave over MPI ranks */
        int keep[PF_MAX_DIM] = {1, 1, 1};
        keep[drop] = 0;
        pfl_source_marginal(L, &src, PF_POSITION, keep, &col, name);
    } else {
        pfl_source_field(L, &src, PF_POSITION, &col, name);
    }
    if (s == PF_OK) s = pf_field_blur(&col, b->psf);
    if (s == PF_OK) s = pf_field_bin(&col, &b->cam, pix);
    pf_field_free(&col);
    pfl_check(L, s, name);
    lua_pop(L, 1); /* the source buffer */
}

static void push_pixels(lua_State *L, const pf_field *pix, const char *field)
{
    pfl_push_doubles(L, pix->values, pix->total);
    lua_setfield(L, -2, field);
}

static void push_geometry(lua_State *L, const pf_field *pix)
{
    lua_createtable(L, pix->dim, 0);
    for (int a = 0; a < pix->dim; a++) {
        lua_pushinteger(L, (lua_Integer)pix->n[a]);
        lua_rawseti(L, -2, a + 1);
    }
    lua_setfield(L, -2, "shape");
    for (int pass = 0; pass < 2; pass++) {
        lua_createtable(L, pix->dim, 0);
        for (int a = 0; a < pix->dim; a++) {
            lua_createtable(L, (int)pix->n[a], 0);
            for (size_t j = 0; j < pix->n[a]; j++) {
                lua_pushnumber(L, pf_field_coord(pix, a, j) * (pass ? 1e6 : 1));
                lua_rawseti(L, -2, (lua_Integer)j + 1);
            }
            lua_rawseti(L, -2, a + 1);
        }
        lua_setfield(L, -2, pass ? "axes_um" : "axes");
    }
}

static double sum_of(const pf_field *f)
{
    double s = 0;
    for (size_t i = 0; i < f->total; i++) s += f->values[i];
    return s;
}

/* cam:expose(state, {atoms = N, noise = true, seed=, generator=})
 * -> {counts, expected, shape, axes, axes_um, total, unit} */
static int l_expose(lua_State *L)
{
    pfl_camera_box *b = luaL_checkudata(L, 1, PFL_CAMERA_TYPE);
    int opts = pfl_options_opt(L, 3, &EXPOSE_OPTIONS);
    double atoms = opts ? pfl_field_number(L, opts, "atoms", 1.0, 0) : 1.0;
    if (!(atoms > 0)) return luaL_error(L, "expose: field 'atoms' must be positive, got %f", atoms);
    int noise = opts ? pfl_field_boolean(L, opts, "noise", 1) : 1;
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, opts, &local);
    pf_field pix;
    probability_image(L, b, 2, &pix, "expose");
    pf_field_scale(&pix, atoms * b->efficiency);
    lua_createtable(L, 0, 8);
    push_pixels(L, &pix, "expected");
    if (noise) {
        pf_status s = pf_field_poisson(&pix, rng);
        if (s) {
            pf_field_free(&pix);
            pfl_check(L, s, "expose");
        }
    }
    push_pixels(L, &pix, "counts");
    push_geometry(L, &pix);
    lua_pushnumber(L, sum_of(&pix));
    lua_setfield(L, -2, "total");
    lua_pushliteral(L, "atoms per pixel");
    lua_setfield(L, -2, "unit");
    pf_field_free(&pix);
    return 1;
}

/* cam:absorb(state, {atoms = N, cross_section = sigma (m^2), noise = false, seed=})
 * -> {od, transmission, atoms_per_pixel, atoms_recovered, shape, axes, axes_um} */
static int l_absorb(lua_State *L)
{
    pfl_camera_box *b = luaL_checkudata(L, 1, PFL_CAMERA_TYPE);
    pfl_options_check(L, 3, &ABSORB_OPTIONS);
    if (b->cam.dim != 2) return luaL_error(L, "absorb: absorption imaging needs a 2D camera");
    double atoms = pfl_field_number(L, 3, "atoms", 0, 1);
    double sigma = pfl_field_number(L, 3, "cross_section", 0, 1);
    if (!(atoms > 0)) return luaL_error(L, "absorb: field 'atoms' must be positive, got %f", atoms);
    if (!(sigma > 0)) return luaL_error(L, "absorb: field 'cross_section' must be positive (m^2), got %f", sigma);
    int noise = pfl_field_boolean(L, 3, "noise", 0);
    pf_rng local;
    pf_rng *rng = pfl_opt_rng(L, 3, &local);
    pf_field pix, od;
    probability_image(L, b, 2, &pix, "absorb");
    pf_field_scale(&pix, atoms);
    pf_status s = noise ? pf_field_poisson(&pix, rng) : PF_OK;
    if (s == PF_OK) s = pf_field_optical_depth(&pix, sigma, &od);
    if (s) {
        pf_field_free(&pix);
        pfl_check(L, s, "absorb");
    }
    lua_createtable(L, 0, 8);
    push_pixels(L, &pix, "atoms_per_pixel");
    push_pixels(L, &od, "od");
    lua_pushnumber(L, pf_field_atoms_from_optical_depth(&od, sigma));
    lua_setfield(L, -2, "atoms_recovered");
    pf_field_transmission(&od);
    push_pixels(L, &od, "transmission");
    push_geometry(L, &od);
    pf_field_free(&pix);
    pf_field_free(&od);
    return 1;
}

static int l_resonant_cross_section(lua_State *L)
{
    lua_pushnumber(L, pf_resonant_cross_section(pfl_check_positive(L, 1, "wavelength (m)")));
    return 1;
}

static int l_tostring(lua_State *L)
{
    pfl_camera_box *b = luaL_checkudata(L, 1, PFL_CAMERA_TYPE);
    char buf[160];
    if (b->cam.dim == 2)
        snprintf(buf, sizeof buf, "camera %zu x %zu pixels of %.4g x %.4g um", b->cam.pixels[0], b->cam.pixels[1],
                 b->cam.pitch[0] * 1e6, b->cam.pitch[1] * 1e6);
    else
        snprintf(buf, sizeof buf, "line camera %zu pixels of %.4g um", b->cam.pixels[0], b->cam.pitch[0] * 1e6);
    lua_pushstring(L, buf);
    return 1;
}

void pfl_open_detector(lua_State *L, int mod)
{
    static const luaL_Reg methods[] = {{"expose", l_expose}, {"absorb", l_absorb}, {NULL, NULL}};
    static const luaL_Reg funcs[] = {
        {"camera", l_camera}, {"resonant_cross_section", l_resonant_cross_section}, {NULL, NULL},
    };
    static const luaL_Reg meta[] = {{"__tostring", l_tostring}, {NULL, NULL}};
    pfl_register_type(L, mod, &(pfl_type_spec){.type = PFL_CAMERA_TYPE, .meta = meta, .methods = methods,
                                               .guard_prefix = "camera:", .funcs = funcs}); /* names: pfl_aware.c */
    static const pfl_options_decl *const options[] = {&CAMERA_OPTIONS, &EXPOSE_OPTIONS, &ABSORB_OPTIONS, NULL};
    pfl_options_declare(L, options);
}
