/* pf_h5.c - writing and reading psiflight's HDF5 layout (docs/file-layout.md)
 * with the HDF5 C library, deterministically. */
#include <complex.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <hdf5.h>
#include <hdf5_hl.h>
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_frame.h"
#include "pf_species.h"
#include "pf_version.h"
#include "pf_h5.h"
#include "pf_readcap.h"
#include "pf_safefile.h"

#define LAYOUT_NAME "psiflight-h5"
#define LAYOUT_VERSION 1

struct pf_h5 {
    pf_context *ctx;
    hid_t file;
    hid_t ocpl_group, ocpl_data, lcpl;
    pf_safefile sf;
    /* Provenance gathered while items are written, stored at commit:
     * each wave item's species line and step log (NULL: none yet). */
    int provenance;        /* pf_h5_set_provenance made the group */
    char *species, *steps; /* newline-joined text */
};

/* Datasets with at least this many elements are stored in chunks with the
 * shuffle and deflate filters; smaller ones (axes of short grids, table
 * columns, scalars) stay contiguous, where compression would cost more
 * header than it saves.  Deflate is a deterministic function of its input,
 * so reruns still write identical bytes. */
#define COMPRESS_MIN_ELEMENTS 4096
#define CHUNK_TARGET_BYTES (1u << 20)
#define DEFLATE_LEVEL 4

static const char *const POS_AXES[PF_MAX_DIM] = {"x", "y", "z"};
static const char *const MOM_AXES[PF_MAX_DIM] = {"kx", "ky", "kz"};

/* HDF5 prints its own error stack by default; psiflight words its errors.
 * HDF5 1.10 also closes files left open from an exit handler, and crashes
 * there on a file whose close already failed (a full disk); files are
 * always closed (or given up) explicitly here, so that handler is turned
 * off.  H5dont_atexit only works before the library starts, hence first. */
static void quiet_hdf5(void)
{
    static int done;
    if (!done) {
        H5dont_atexit();
        done = 1;
    }
    H5Eset_auto2(H5E_DEFAULT, NULL, NULL);
}

void pf_h5_version(char *buf, size_t size)
{
    unsigned maj, min, rel;
    H5get_libversion(&maj, &min, &rel);
    snprintf(buf, size, "%u.%u.%u", maj, min, rel);
}

/* Complex numbers as the compound {r, i} of two doubles, the names h5py and
 * other readers map to complex. */
static hid_t complex_type(void)
{
    hid_t t = H5Tcreate(H5T_COMPOUND, 2 * sizeof(double));
    H5Tinsert(t, "r", 0, H5T_NATIVE_DOUBLE);
    H5Tinsert(t, "i", sizeof(double), H5T_NATIVE_DOUBLE);
    return t;
}

/* ---- attributes ---- */

static int attr_string(hid_t obj, const char *name, const char *value)
{
    hid_t t = H5Tcopy(H5T_C_S1);
    H5Tset_size(t, H5T_VARIABLE);
    H5Tset_cset(t, H5T_CSET_UTF8);
    hid_t sp = H5Screate(H5S_SCALAR);
    hid_t a = H5Acreate2(obj, name, t, sp, H5P_DEFAULT, H5P_DEFAULT);
    int bad = a < 0 || H5Awrite(a, t, &value) < 0;
    if (a >= 0) H5Aclose(a);
    H5Sclose(sp);
    H5Tclose(t);
    return bad ? -1 : 0;
}

/* One attribute of n values (a scalar when scalar) written in the file's
 * little-endian type from the native one. */
static int attr_write(hid_t obj, const char *name, hid_t file_type, hid_t mem_type, const void *v, size_t n,
                      int scalar)
{
    hsize_t dims[1] = {n};
    hid_t sp = scalar ? H5Screate(H5S_SCALAR) : H5Screate_simple(1, dims, NULL);
    hid_t a = H5Acreate2(obj, name, file_type, sp, H5P_DEFAULT, H5P_DEFAULT);
    int bad = a < 0 || H5Awrite(a, mem_type, v) < 0;
    if (a >= 0) H5Aclose(a);
    H5Sclose(sp);
    return bad ? -1 : 0;
}

static int attr_doubles(hid_t obj, const char *name, const double *v, size_t n, int scalar)
{
    return attr_write(obj, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, v, n, scalar);
}

static int attr_double(hid_t obj, const char *name, double v) { return attr_doubles(obj, name, &v, 1, 1); }

static int attr_longs(hid_t obj, const char *name, const long long *v, size_t n, int scalar)
{
    return attr_write(obj, name, H5T_STD_I64LE, H5T_NATIVE_LLONG, v, n, scalar);
}

/* ---- file ---- */

/* Object creation lists with timestamps off and creation order tracked, the
 * two things that would otherwise differ between identical runs or make
 * readers list items alphabetically. */
static hid_t ocpl(hid_t cls, int group)
{
    hid_t p = H5Pcreate(cls);
    H5Pset_obj_track_times(p, 0);
    H5Pset_attr_creation_order(p, H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED);
    if (group) H5Pset_link_creation_order(p, H5P_CRT_ORDER_TRACKED | H5P_CRT_ORDER_INDEXED);
    return p;
}

pf_status pf_h5_create(pf_context *ctx, const char *path, int overwrite, pf_h5 **out)
{
    quiet_hdf5();
    *out = NULL;
    pf_h5 *f = calloc(1, sizeof *f);
    if (!f) return pf_fail(ctx, PF_ENOMEM, "out of memory");
    f->ctx = ctx;
    pf_status s = pf_safe_begin(ctx, path, overwrite, &f->sf);
    if (s) {
        free(f);
        return s;
    }
    hid_t fcpl = ocpl(H5P_FILE_CREATE, 1);
    f->file = H5Fcreate(f->sf.temp_path, H5F_ACC_TRUNC, fcpl, H5P_DEFAULT);
    H5Pclose(fcpl);
    f->ocpl_group = ocpl(H5P_GROUP_CREATE, 1);
    f->ocpl_data = ocpl(H5P_DATASET_CREATE, 0);
    f->lcpl = H5Pcreate(H5P_LINK_CREATE);
    H5Pset_create_intermediate_group(f->lcpl, 1);
    H5Pset_char_encoding(f->lcpl, H5T_CSET_UTF8);
    if (f->file < 0 || attr_string(f->file, "layout", LAYOUT_NAME) ||
        attr_longs(f->file, "layout_version", (long long[]){LAYOUT_VERSION}, 1, 1) ||
        attr_string(f->file, "engine", "psiflight " PF_VERSION)) {
        s = pf_fail(ctx, PF_EIO, "cannot create HDF5 file '%s'", path);
        pf_h5_abandon(f);
        return s;
    }
    *out = f;
    return PF_OK;
}

const char *pf_h5_path(const pf_h5 *f) { return f->sf.final_path; }


static void close_handles(pf_h5 *f)
{
    if (f->file > 0) H5Fclose(f->file);
    if (f->ocpl_group > 0) H5Pclose(f->ocpl_group);
    if (f->ocpl_data > 0) H5Pclose(f->ocpl_data);
    if (f->lcpl > 0) H5Pclose(f->lcpl);
    f->file = f->ocpl_group = f->ocpl_data = f->lcpl = 0;
}

/* Completes the provenance group with what the items brought. */
static int finish_provenance(pf_h5 *f)
{
    if (!f->provenance) return 0;
    hid_t g = H5Gopen2(f->file, "provenance", H5P_DEFAULT);
    int bad = g < 0 || attr_string(g, "species", f->species ? f->species : "") ||
              attr_string(g, "step_logs", f->steps ? f->steps : "");
    if (g >= 0) H5Gclose(g);
    return bad ? -1 : 0;
}

static void free_provenance(pf_h5 *f)
{
    free(f->species);
    free(f->steps);
    f->species = f->steps = NULL;
}

pf_status pf_h5_commit(pf_h5 *f)
{
    pf_context *ctx = f->ctx;
    pf_status s = PF_OK;
    if (finish_provenance(f)) s = pf_fail(ctx, PF_EIO, "cannot write the provenance of '%s'", f->sf.final_path);
    free_provenance(f);
    if (!s && H5Fflush(f->file, H5F_SCOPE_GLOBAL) < 0) s = pf_fail(ctx, PF_EIO, "cannot flush '%s' (disk full?)", f->sf.final_path);
    hid_t file = f->file;
    f->file = 0;
    if (H5Fclose(file) < 0 && !s) s = pf_fail(ctx, PF_EIO, "cannot close '%s' (disk full?)", f->sf.final_path);
    close_handles(f);
    if (s) pf_safe_abandon(&f->sf);
    else s = pf_safe_commit(ctx, &f->sf);
    free(f);
    return s;
}

void pf_h5_abandon(pf_h5 *f)
{
    if (!f) return;
    free_provenance(f);
    close_handles(f);
    pf_safe_abandon(&f->sf);
    free(f);
}

/* ---- items ---- */

static pf_status check_name(pf_h5 *f, const char *name)
{
    size_t n = name ? strlen(name) : 0;
    int ok = n >= 1 && n <= 200 && name[0] != '/' && name[n - 1] != '/' && !strstr(name, "//");
    for (size_t i = 0; ok && i < n; i++) {
        char c = name[i];
        ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '_' || c == '-' ||
             c == '.' || c == '/';
    }
    /* "." and ".." are HDF5 path words, not names. */
    for (const char *p = name; ok && p && *p;) {
        size_t len = strcspn(p, "/");
        ok = !(len == 1 && p[0] == '.') && !(len == 2 && p[0] == '.' && p[1] == '.');
        p += len;
        if (*p == '/') p++;
    }
    if (!ok)
        return pf_fail(f->ctx, PF_EINVAL,
                       "item name '%s' must be 1..200 letters, digits, '_', '-', '.' with '/' between parts",
                       name ? name : "");
    if (H5Lexists(f->file, name, H5P_DEFAULT) > 0)
        return pf_fail(f->ctx, PF_EINVAL, "item '%s' is already in '%s'", name, f->sf.final_path);
    /* H5Lexists fails (negative) when a parent is missing: that is fine. */
    return PF_OK;
}

static hid_t new_group(pf_h5 *f, const char *name)
{
    return H5Gcreate2(f->file, name, f->lcpl, f->ocpl_group, H5P_DEFAULT);
}

/* Dataset creation list for a dataset of this shape: chunked along the
 * first axis (whole rows, at most about 1 MiB per chunk, so a reader never
 * holds much more than one row block) with shuffle + deflate when it is
 * large, the shared contiguous list otherwise.  Caller closes a list it got
 * back that is not f->ocpl_data. */
/* Rows of axis 0 in one chunk of a large dataset of elements of elem bytes
 * (data_create_list); also the rows a distributed wave is written by. */
static hsize_t chunk_rows(size_t elem, int rank, const hsize_t *dims)
{
    hsize_t row = elem;
    for (int a = 1; a < rank; a++) row *= dims[a];
    hsize_t rows = row ? CHUNK_TARGET_BYTES / row : 1;
    return rows < 1 ? 1 : rows > dims[0] ? dims[0] : rows;
}

static hid_t data_create_list(pf_h5 *f, hid_t ftype, int rank, const hsize_t *dims)
{
    hsize_t total = 1;
    for (int a = 0; a < rank; a++) total *= dims[a];
    if (rank < 1 || total < COMPRESS_MIN_ELEMENTS || H5Tis_variable_str(ftype) > 0) return f->ocpl_data;
    hid_t p = H5Pcopy(f->ocpl_data);
    if (p < 0) return -1;
    hsize_t chunk[PF_MAX_DIM];
    for (int a = 1; a < rank; a++) chunk[a] = dims[a];
    chunk[0] = chunk_rows(H5Tget_size(ftype), rank, dims);
    if (H5Pset_chunk(p, rank, chunk) < 0 || H5Pset_shuffle(p) < 0 || H5Pset_deflate(p, DEFLATE_LEVEL) < 0) {
        H5Pclose(p);
        return -1;
    }
    return p;
}

static int write_dataset(pf_h5 *f, hid_t loc, const char *name, hid_t ftype, hid_t mtype, int rank,
                         const hsize_t *dims, const void *data, const char *unit)
{
    hid_t sp = rank ? H5Screate_simple(rank, dims, NULL) : H5Screate(H5S_SCALAR);
    hid_t dcpl = data_create_list(f, ftype, rank, dims);
    hid_t d = dcpl < 0 ? -1 : H5Dcreate2(loc, name, ftype, sp, f->lcpl, dcpl, H5P_DEFAULT);
    int bad = d < 0 || H5Dwrite(d, mtype, H5S_ALL, H5S_ALL, H5P_DEFAULT, data) < 0;
    if (!bad && unit) bad = attr_string(d, "units", unit);
    if (d >= 0) H5Dclose(d);
    if (dcpl >= 0 && dcpl != f->ocpl_data) H5Pclose(dcpl);
    H5Sclose(sp);
    return bad ? -1 : 0;
}

/* Adds string attributes (name, value pairs, NULL-terminated) to dataset
 * `name` of loc: the descriptions generic readers show (long_name). */
static int describe(hid_t loc, const char *name, const char *const *pairs)
{
    hid_t d = H5Dopen2(loc, name, H5P_DEFAULT);
    int bad = d < 0;
    for (size_t i = 0; !bad && pairs[i]; i += 2) bad = attr_string(d, pairs[i], pairs[i + 1]);
    if (d >= 0) H5Dclose(d);
    return bad ? -1 : 0;
}

static int write_axis(pf_h5 *f, hid_t g, const char *name, const double *v, size_t n, const char *unit)
{
    hsize_t dims[1] = {n};
    return write_dataset(f, g, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 1, dims, v, unit);
}

/* Axis tables of the grid: positions as stored, wave numbers ascending. */
/* Axes in lab coordinates: the grid's plus the offsets of w's moving frame
 * (pf_frame.h; zero for a wave that never moved), so a density written from
 * a co-moving grid lands where it is in the lab. */
static int write_axes(pf_h5 *f, hid_t g, const pf_grid *grid, pf_rep rep, const pf_wave *w)
{
    int d = pf_grid_dim(grid);
    pf_frame fr;
    pf_wave_frame(w, &fr);
    for (int a = 0; a < d; a++) {
        size_t n = pf_grid_points(grid, a);
        double *v = malloc(n * sizeof *v);
        if (!v) return -1;
        for (size_t j = 0; j < n; j++)
            v[j] = rep == PF_POSITION ? pf_grid_x(grid, a, j) + fr.position[a]
                                      : pf_grid_k(grid, a, pf_grid_fft_index(grid, a, j)) + fr.wavenumber[a];
        int bad = write_axis(f, g, rep == PF_POSITION ? POS_AXES[a] : MOM_AXES[a], v, n, rep == PF_POSITION ? "m" : "m^-1");
        if (!bad) {
            static const char *const pos_names[] = {"position x", "position y", "position z"};
            static const char *const mom_names[] = {"wave number k_x", "wave number k_y", "wave number k_z"};
            const char *pairs[] = {"long_name", rep == PF_POSITION ? pos_names[a] : mom_names[a], NULL};
            bad = describe(g, rep == PF_POSITION ? POS_AXES[a] : MOM_AXES[a], pairs);
        }
        free(v);
        if (bad) return -1;
    }
    return 0;
}

/* Marks the axis datasets of rep as HDF5 dimension scales of `data` (the
 * open standard that tells generic readers - HDFView, netCDF-4 and xarray
 * front ends - which coordinate belongs to which dimension). */
static int attach_axes(hid_t g, const char *data, int d, pf_rep rep)
{
    hid_t ds = H5Dopen2(g, data, H5P_DEFAULT);
    if (ds < 0) return -1;
    int bad = 0;
    for (int a = 0; a < d && !bad; a++) {
        const char *name = rep == PF_POSITION ? POS_AXES[a] : MOM_AXES[a];
        hid_t ax = H5Dopen2(g, name, H5P_DEFAULT);
        bad = ax < 0 || (H5DSis_scale(ax) <= 0 && H5DSset_scale(ax, name) < 0) ||
              H5DSattach_scale(ds, ax, (unsigned)a) < 0;
        if (ax >= 0) H5Dclose(ax);
    }
    H5Dclose(ds);
    return bad ? -1 : 0;
}

/* Appends the concatenation of parts (NULL-terminated) to *acc. */
static int append_text(char **acc, const char *const *parts)
{
    size_t old = *acc ? strlen(*acc) : 0, add = 1;
    for (size_t i = 0; parts[i]; i++) add += strlen(parts[i]);
    char *p = realloc(*acc, old + add);
    if (!p) return -1;
    p[old] = '\0';
    for (size_t i = 0; parts[i]; i++) strcat(p + old, parts[i]);
    *acc = p;
    return 0;
}

/* The species whose tabulated mass equals the state's mass exactly (the
 * value pf.mass returns), or NULL for a mass given as a plain number. */
static const pf_species *species_of(double mass)
{
    size_t n;
    const pf_species *t = pf_species_table(&n);
    for (size_t i = 0; i < n; i++)
        if (t[i].mass_kg == mass) return &t[i];
    return NULL;
}

/* Grid, mass (with its species and source when the mass is a tabulated
 * one), clock and step log as attributes of an item group; the species and
 * the step log also go to the file's provenance. */
static int write_wave_attrs(pf_h5 *f, hid_t g, const char *item, const pf_wave *w, const char *content)
{
    const pf_grid *grid = pf_wave_grid(w);
    int d = pf_grid_dim(grid);
    long long pts[PF_MAX_DIM];
    double span[PF_MAX_DIM], origin[PF_MAX_DIM], dx[PF_MAX_DIM];
    for (int a = 0; a < d; a++) {
        pts[a] = (long long)pf_grid_points(grid, a);
        span[a] = pf_grid_span(grid, a);
        origin[a] = pf_grid_origin(grid, a);
        dx[a] = pf_grid_spacing(grid, a);
    }
    /* The axes are lab axes (write_axes), so the grid's origin is given in
     * the lab too: a reader that rebuilds the grid puts it where the cloud is. */
    pf_frame fr;
    pf_wave_frame(w, &fr);
    for (int a = 0; a < d; a++) origin[a] += fr.position[a];
    const pf_steplog *log = pf_wave_steplog(w);
    size_t cap = 128 + 256 * (log->count + 1);
    char *text = malloc(cap);
    if (!text) return -1;
    size_t len = (size_t)snprintf(text, cap, "%s\n", pf_steplog_header());
    for (size_t i = 0; i < log->count && len < cap; i++) {
        len += (size_t)pf_steplog_format_entry(&log->steps[i], i, text + len, cap - len);
        if (len + 1 < cap) text[len++] = '\n', text[len] = '\0';
    }
    int bad = attr_string(g, "content", content) || attr_longs(g, "dimensions", (long long[]){d}, 1, 1) ||
              attr_longs(g, "grid_points", pts, (size_t)d, 0) || attr_doubles(g, "grid_span_m", span, (size_t)d, 0) ||
              attr_doubles(g, "grid_origin_m", origin, (size_t)d, 0) ||
              attr_doubles(g, "grid_spacing_m", dx, (size_t)d, 0) || attr_double(g, "mass_kg", pf_wave_mass(w)) ||
              attr_double(g, "clock_s", pf_wave_clock(w)) || attr_string(g, "step_log", text);
    const pf_species *sp = species_of(pf_wave_mass(w));
    char line[512];
    if (sp)
        snprintf(line, sizeof line, "%s, mass %.17g kg (%s micro-u, %s: %s)", sp->label, sp->mass_kg, sp->mass_micro_u,
                 sp->source, sp->reference);
    else
        snprintf(line, sizeof line, "mass %.17g kg given as a number (not a tabulated species)", pf_wave_mass(w));
    if (!bad) bad = attr_string(g, "species", sp ? sp->label : "unnamed") || attr_string(g, "mass_source", line);
    if (!bad && f->provenance)
        bad = append_text(&f->species, (const char *const[]){item, ": ", line, "\n", NULL}) ||
              append_text(&f->steps, (const char *const[]){"item ", item, ":\n", text, NULL});
    free(text);
    return bad ? -1 : 0;
}

static void shape_of(const pf_grid *grid, hsize_t *dims)
{
    for (int a = 0; a < pf_grid_dim(grid); a++) dims[a] = pf_grid_points(grid, a);
}

/* Units of psi (m^-d/2) and phi (m^d/2).  UDUNITS-2 strings where UDUNITS
 * can say it (integer powers); half-integer powers are written m^(-1/2),
 * which UDUNITS-2 refuses rather than misreads ("m^-1/2" would parse as
 * half of 1/m).  docs/file-layout.md, Units. */
static const char *amp_unit(int d, pf_rep rep)
{
    static const char *const pos[] = {"m^(-1/2)", "m^-1", "m^(-3/2)"};
    static const char *const mom[] = {"m^(1/2)", "m", "m^(3/2)"};
    return rep == PF_POSITION ? pos[d - 1] : mom[d - 1];
}

/* Writes amplitude `name` (psi or phi) as the complex compound and, for
 * netCDF-4 readers, which skip compound types, as the parallel real
 * datasets name_re and name_im; all three on the axes of rep. */
static int write_amplitude(pf_h5 *f, hid_t g, const char *name, const double complex *v, int d, const hsize_t *dims,
                           size_t total, pf_rep rep)
{
    hid_t ct = complex_type();
    const char *unit = amp_unit(d, rep);
    const char *what = rep == PF_POSITION ? "wave function psi(x), position representation"
                                          : "momentum amplitude phi(k), momentum representation, ascending k";
    const char *repname = rep == PF_POSITION ? "position" : "momentum";
    int bad = write_dataset(f, g, name, ct, ct, d, dims, v, unit);
    H5Tclose(ct);
    const char *pairs[] = {"long_name", what, "representation", repname, NULL};
    if (!bad) bad = describe(g, name, pairs);
    double *part = bad ? NULL : malloc(total * sizeof *part);
    if (!bad && !part) bad = 1;
    for (int k = 0; k < 2 && !bad; k++) {
        for (size_t j = 0; j < total; j++) part[j] = k ? cimag(v[j]) : creal(v[j]);
        char pname[16], long_name[160];
        snprintf(pname, sizeof pname, "%s_%s", name, k ? "im" : "re");
        snprintf(long_name, sizeof long_name, "%s part of %s (same numbers as the compound dataset '%s')",
                 k ? "imaginary" : "real", what, name);
        const char *ppairs[] = {"long_name", long_name, "representation", repname, NULL};
        bad = write_dataset(f, g, pname, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, d, dims, part, unit) ||
              describe(g, pname, ppairs);
    }
    free(part);
    return bad ? -1 : 0;
}

/* Attaches the axes of rep to name, name_re and name_im. */
static int attach_amplitude(hid_t g, const char *name, int d, pf_rep rep)
{
    char re[16], im[16];
    snprintf(re, sizeof re, "%s_re", name);
    snprintf(im, sizeof im, "%s_im", name);
    return attach_axes(g, name, d, rep) || attach_axes(g, re, d, rep) || attach_axes(g, im, d, rep);
}

/* phi(k) in physical units, ascending k on every axis. */
static double complex *phi_ascending(pf_wave *w)
{
    pf_grid *g = pf_wave_grid(w);
    if (pf_wave_to(w, PF_MOMENTUM)) return NULL;
    size_t total = pf_grid_total(g);
    double complex *out = malloc(total * sizeof *out);
    if (!out) return NULL;
    const double complex *S = pf_wave_data_const(w);
    int d = pf_grid_dim(g);
    size_t n[3] = {1, 1, 1};
    for (int a = 0; a < d; a++) n[a] = pf_grid_points(g, a);
    size_t idx[3];
    for (idx[0] = 0; idx[0] < n[0]; idx[0]++)
        for (idx[1] = 0; idx[1] < n[1]; idx[1]++)
            for (idx[2] = 0; idx[2] < n[2]; idx[2]++) {
                size_t src = (idx[0] * n[1] + idx[1]) * n[2] + idx[2];
                size_t asc[3] = {0, 0, 0};
                for (int a = 0; a < d; a++) asc[a] = pf_grid_ascending_index(g, a, idx[a]);
                out[(asc[0] * n[1] + asc[1]) * n[2] + asc[2]] = S[src] * pf_wave_momentum_factor(w, idx);
            }
    return out;
}

pf_status pf_h5_set_provenance(pf_h5 *f, const pf_h5_provenance *p)
{
    if (f->provenance) return pf_fail(f->ctx, PF_EINVAL, "'%s' already has its provenance", f->sf.final_path);
    if (H5Lexists(f->file, "provenance", H5P_DEFAULT) > 0)
        return pf_fail(f->ctx, PF_EINVAL, "item 'provenance' is already in '%s'", f->sf.final_path);
    char hdf5[32];
    pf_h5_version(hdf5, sizeof hdf5);
    hid_t g = new_group(f, "provenance");
    int bad = g < 0 || attr_string(g, "content", "provenance") ||
              attr_string(g, "engine", "psiflight " PF_VERSION) || attr_string(g, "hdf5", hdf5) ||
              attr_string(g, "script", p->script ? p->script : "") ||
              attr_string(g, "script_sha256", p->script_sha256 ? p->script_sha256 : "") ||
              attr_longs(g, "seed", (long long[]){(long long)p->seed}, 1, 1);
    /* Declared parameters: one scalar dataset each, the value in SI with
     * its unit, and the text as given (--set or default) beside it. */
    hid_t pg = bad ? -1 : H5Gcreate2(g, "parameters", f->lcpl, f->ocpl_group, H5P_DEFAULT);
    bad = bad || pg < 0 || attr_string(pg, "content", "declared parameters, values in SI");
    for (size_t i = 0; i < p->nparams && !bad; i++) {
        const pf_h5_parameter *q = &p->params[i];
        if (q->text_value) {
            hid_t st = H5Tcopy(H5T_C_S1);
            H5Tset_size(st, H5T_VARIABLE);
            H5Tset_cset(st, H5T_CSET_UTF8);
            bad = write_dataset(f, pg, q->name, st, st, 0, NULL, &q->text_value, NULL);
            H5Tclose(st);
        } else {
            bad = write_dataset(f, pg, q->name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 0, NULL, &q->value,
                                q->unit ? q->unit : "1");
        }
        const char *pairs[] = {"as_given", q->as_given ? q->as_given : "", NULL};
        if (!bad) bad = describe(pg, q->name, pairs);
    }
    if (pg >= 0) H5Gclose(pg);
    if (g >= 0) H5Gclose(g);
    if (bad) return pf_fail(f->ctx, PF_EIO, "cannot write the provenance of '%s'", f->sf.final_path);
    f->provenance = 1;
    return PF_OK;
}

static pf_status put_wave_values(pf_h5 *f, const char *name, pf_wave *w, int parts);

/* A wave in a moved frame is written as the lab wave function: a copy with
 * the frame's momentum folded onto the grid (refused, with the fold's
 * message, when it does not fit: the lab values would alias on the grid)
 * and the phase theta multiplied in, so psi on the lab axes is psi_lab.  Its
 * spectrum is then phi_lab(k) exp(i k.X) (phi_lab_factors undoes that). */
static pf_status lab_copy(pf_wave *w, pf_wave **out)
{
    pf_frame fr;
    pf_wave_frame(w, &fr);
    pf_wave *c;
    pf_status s = pf_wave_copy(w, &c);
    if (!s) s = pf_wave_frame_fold(c, "writing the lab wave function");
    if (!s) s = pf_wave_scale(c, cexp(I * fr.phase));
    if (s) {
        pf_wave_free(c);
        return s;
    }
    fr.phase = 0.0;
    for (int a = 0; a < PF_MAX_DIM; a++) fr.wavenumber[a] = 0.0;
    pf_wave_set_frame(c, &fr);
    *out = c;
    return PF_OK;
}

/* phi (ascending k) of a lab copy times exp(-i k.X): the lab spectrum. */
static int phi_lab_factors(const pf_wave *w, double complex *phi)
{
    pf_frame fr;
    pf_wave_frame(w, &fr);
    const pf_grid *g = pf_wave_grid(w);
    int d = pf_grid_dim(g);
    size_t n[3] = {1, 1, 1};
    double complex *t[3] = {NULL, NULL, NULL};
    int bad = 0;
    for (int a = 0; a < d; a++) {
        n[a] = pf_grid_points(g, a);
        t[a] = malloc(n[a] * sizeof *t[a]);
        if (!t[a]) {
            bad = 1;
            break;
        }
        for (size_t j = 0; j < n[a]; j++)
            t[a][j] = cexp(-I * pf_grid_k(g, a, pf_grid_fft_index(g, a, j)) * fr.position[a]);
    }
    for (size_t i0 = 0; !bad && i0 < n[0]; i0++)
        for (size_t i1 = 0; i1 < n[1]; i1++)
            for (size_t i2 = 0; i2 < n[2]; i2++) {
                double complex z = t[0][i0];
                if (d > 1) z *= t[1][i1];
                if (d > 2) z *= t[2][i2];
                phi[(i0 * n[1] + i1) * n[2] + i2] *= z;
            }
    for (int a = 0; a < 3; a++) free(t[a]);
    return bad ? -1 : 0;
}

pf_status pf_h5_put_wave(pf_h5 *f, const char *name, pf_wave *w, int parts)
{
    pf_status s = check_name(f, name);
    if (s) return s;
    if (!(parts & (PF_H5_PSI | PF_H5_PHI))) return pf_fail(f->ctx, PF_EINVAL, "nothing to store: choose psi and/or phi");
    if (pf_wave_frame_moved(w) && pf_wave_distributed(w))
        return pf_dist_refuse(f->ctx, "writing the lab wave function of a moved frame");
    if (pf_wave_frame_moved(w)) {
        pf_wave *lab;
        if ((s = lab_copy(w, &lab))) return s;
        s = put_wave_values(f, name, lab, parts);
        pf_wave_free(lab);
        return s;
    }
    return put_wave_values(f, name, w, parts);
}

/* Units and descriptions of a density dataset. */
static const char *density_unit(int d, pf_rep rep)
{
    static const char *const pos[] = {"m^-1", "m^-2", "m^-3"};
    static const char *const mom[] = {"m", "m^2", "m^3"};
    return rep == PF_POSITION ? pos[d - 1] : mom[d - 1];
}

static const char *const *density_pairs(pf_rep rep)
{
    static const char *const pos[] = {
        "long_name", "probability density |psi(x)|^2", "normalization",
        "integrates to the state's norm (1 for a normalised state): sum of density times the cell volume "
        "(product of grid_spacing_m)",
        "representation", "position", NULL};
    static const char *const mom[] = {
        "long_name", "probability density |phi(k)|^2 over wave number", "normalization",
        "integrates to the state's norm (1 for a normalised state): sum of density times the "
        "wave-number cell (product of 2 pi / grid_span_m)",
        "representation", "momentum", NULL};
    return rep == PF_POSITION ? pos : mom;
}

/* ---- a wave split over MPI ranks (pf_dist.h), written piece by piece ----
 *
 * Rank 0 writes; the field is never gathered whole anywhere.  Each dataset
 * is written in pieces of rows of axis 0, one HDF5 chunk each (all rows of a
 * small contiguous dataset), in order: every rank sends its part of the
 * piece's rows (pf_wave_gather_rows) and rank 0 writes that hyperslab.  So
 * rank 0 holds its slab plus about two chunks (1 MiB each), and the items,
 * attributes and write order are the single process's: the file holds the
 * same data, byte for byte when no transform separates the two runs.  The
 * other ranks run the same gathering calls without touching their (private)
 * file.  Parallel HDF5 is not used: Debian's libhdf5-openmpi-dev is another
 * build of the library, and one runner linked with both cannot exist. */

typedef enum { ROWS_COMPLEX, ROWS_RE, ROWS_IM, ROWS_DENSITY } rows_part;

typedef struct rows_src {
    pf_wave *w;
    pf_rep rep;
    rows_part part;
} rows_src;

/* Values of output rows [a0, a0 + c) (psi in natural order; phi, |phi|^2
 * in ascending k with the momentum factors) from gathered storage rows z,
 * with the same arithmetic as phi_ascending and pf_grid_density_of. */
static void rows_values(const rows_src *src, size_t a0, size_t c, const double complex *z, void *out)
{
    const pf_grid *g = pf_wave_grid(src->w);
    const int d = pf_grid_dim(g), mom = src->rep == PF_MOMENTUM;
    size_t n[3] = {1, 1, 1};
    for (int a = 0; a < d; a++) n[a] = pf_grid_points(g, a);
    double scale = 1.0; /* |phi|^2 / |S|^2 = prod span^2 / 2 pi */
    for (int a = 0; mom && a < d; a++) scale *= pf_grid_span(g, a) * pf_grid_span(g, a) / PF_TWO_PI;
    double complex *zc = out;
    double *zr = out;
    size_t idx[3];
    for (size_t i = 0; i < c; i++) {
        idx[0] = mom ? pf_grid_fft_index(g, 0, a0 + i) : a0 + i;
        for (idx[1] = 0; idx[1] < n[1]; idx[1]++)
            for (idx[2] = 0; idx[2] < n[2]; idx[2]++) {
                size_t src_at = (i * n[1] + idx[1]) * n[2] + idx[2], at = src_at;
                double complex v = z[src_at];
                if (mom) {
                    size_t asc1 = d > 1 ? pf_grid_ascending_index(g, 1, idx[1]) : 0;
                    size_t asc2 = d > 2 ? pf_grid_ascending_index(g, 2, idx[2]) : 0;
                    at = (i * n[1] + asc1) * n[2] + asc2;
                    if (src->part != ROWS_DENSITY) v *= pf_wave_momentum_factor(src->w, idx);
                }
                switch (src->part) {
                case ROWS_COMPLEX: zc[at] = v; break;
                case ROWS_RE: zr[at] = creal(v); break;
                case ROWS_IM: zr[at] = cimag(v); break;
                case ROWS_DENSITY: zr[at] = (mom ? scale : 1.0) * (creal(v) * creal(v) + cimag(v) * cimag(v)); break;
                }
            }
    }
}

/* write_dataset for a distributed wave: called on every rank (the
 * gathering is collective); HDF5 is touched on rank 0 only, and only while
 * *bad is 0 there.  A failed gathering is the same on every rank (*st). */
static void write_rows_dataset(pf_h5 *f, hid_t loc, const char *name, hid_t ftype, hid_t mtype, int d,
                               const hsize_t *dims, const rows_src *src, const char *unit, int *bad, pf_status *st)
{
    if (*st) return;
    const int root = pf_dist_rank() == 0;
    const size_t elem = src->part == ROWS_COMPLEX ? sizeof(double complex) : sizeof(double);
    hsize_t total = 1;
    for (int a = 0; a < d; a++) total *= dims[a];
    const size_t plane = (size_t)(total / dims[0]);
    const size_t per = total < COMPRESS_MIN_ELEMENTS ? (size_t)dims[0] : (size_t)chunk_rows(elem, d, dims);
    hid_t sp = -1, dcpl = -1, ds = -1;
    if (root && !*bad) {
        sp = H5Screate_simple(d, dims, NULL);
        dcpl = data_create_list(f, ftype, d, dims);
        ds = dcpl < 0 ? -1 : H5Dcreate2(loc, name, ftype, sp, f->lcpl, dcpl, H5P_DEFAULT);
        *bad = ds < 0;
    }
    /* Gathered in sub-pieces of at most one complex chunk (a density's
     * chunk has twice the rows). */
    const size_t sub = per < (size_t)chunk_rows(sizeof(double complex), d, dims) ? per
                                                                                : (size_t)chunk_rows(sizeof(double complex), d, dims);
    double complex *rows = NULL;
    void *vals = NULL;
    if (root) {
        rows = pf_context_alloc(f->ctx, sub * plane * sizeof *rows); /* at most the grid's own size */
        vals = rows ? pf_context_alloc(f->ctx, per * plane * elem) : NULL;
        if (!vals) {
            pf_context_free(f->ctx, rows);
            rows = NULL; /* pf_wave_gather_rows then fails on every rank */
        }
    }
    for (size_t a0 = 0; a0 < dims[0] && !*st; a0 += per) {
        size_t c = per < dims[0] - a0 ? per : (size_t)dims[0] - a0;
        for (size_t b0 = a0; b0 < a0 + c && !*st; b0 += sub) {
            size_t cb = sub < a0 + c - b0 ? sub : a0 + c - b0;
            size_t first = src->rep == PF_MOMENTUM ? pf_grid_fft_index(pf_wave_grid(src->w), 0, b0) : b0;
            *st = pf_wave_gather_rows(src->w, src->rep, first, cb, rows);
            if (!*st && root && !*bad) rows_values(src, b0, cb, rows, (char *)vals + (b0 - a0) * plane * elem);
        }
        if (*st || !root || *bad) continue;
        hsize_t start[PF_MAX_DIM] = {a0, 0, 0}, count[PF_MAX_DIM];
        for (int a = 0; a < d; a++) count[a] = a ? dims[a] : c;
        hid_t ms = H5Screate_simple(d, count, NULL);
        *bad = ms < 0 || H5Sselect_hyperslab(sp, H5S_SELECT_SET, start, NULL, count, NULL) < 0 ||
               H5Dwrite(ds, mtype, ms, sp, H5P_DEFAULT, vals) < 0;
        if (ms >= 0) H5Sclose(ms);
    }
    if (root) {
        pf_context_free(f->ctx, rows);
        pf_context_free(f->ctx, vals);
        if (!*bad && !*st && unit) *bad = attr_string(ds, "units", unit);
        if (ds >= 0) H5Dclose(ds);
        if (dcpl >= 0 && dcpl != f->ocpl_data) H5Pclose(dcpl);
        if (sp >= 0) H5Sclose(sp);
    }
}

/* write_amplitude for a distributed wave (same items, order and words). */
static void write_amplitude_rows(pf_h5 *f, hid_t g, const char *name, pf_wave *w, int d, const hsize_t *dims, pf_rep rep,
                                 int *bad, pf_status *st)
{
    const int root = pf_dist_rank() == 0;
    hid_t ct = complex_type();
    const char *unit = amp_unit(d, rep);
    const char *what = rep == PF_POSITION ? "wave function psi(x), position representation"
                                          : "momentum amplitude phi(k), momentum representation, ascending k";
    const char *repname = rep == PF_POSITION ? "position" : "momentum";
    rows_src src = {w, rep, ROWS_COMPLEX};
    write_rows_dataset(f, g, name, ct, ct, d, dims, &src, unit, bad, st);
    H5Tclose(ct);
    const char *pairs[] = {"long_name", what, "representation", repname, NULL};
    if (root && !*bad && !*st) *bad = describe(g, name, pairs);
    for (int k = 0; k < 2; k++) {
        char pname[16], long_name[160];
        snprintf(pname, sizeof pname, "%s_%s", name, k ? "im" : "re");
        snprintf(long_name, sizeof long_name, "%s part of %s (same numbers as the compound dataset '%s')",
                 k ? "imaginary" : "real", what, name);
        const char *ppairs[] = {"long_name", long_name, "representation", repname, NULL};
        src.part = k ? ROWS_IM : ROWS_RE;
        write_rows_dataset(f, g, pname, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, d, dims, &src, unit, bad, st);
        if (root && !*bad && !*st) *bad = describe(g, pname, ppairs);
    }
}

static pf_status put_wave_rows(pf_h5 *f, const char *name, pf_wave *w, int parts)
{
    pf_grid *grid = pf_wave_grid(w);
    const int d = pf_grid_dim(grid), root = pf_dist_rank() == 0;
    hsize_t dims[PF_MAX_DIM];
    shape_of(grid, dims);
    const char *held = (parts & PF_H5_PSI) && (parts & PF_H5_PHI) ? "position and momentum"
                       : (parts & PF_H5_PSI)                       ? "position"
                                                                   : "momentum";
    hid_t g = root ? new_group(f, name) : -1;
    int bad = root && (g < 0 || write_wave_attrs(f, g, name, w, "wave function") || attr_string(g, "representation", held));
    pf_status st = PF_OK;
    static const pf_rep reps[2] = {PF_POSITION, PF_MOMENTUM};
    static const int wanted[2] = {PF_H5_PSI, PF_H5_PHI};
    for (int r = 0; r < 2; r++) {
        if (!(parts & wanted[r])) continue;
        const char *item = r ? "phi" : "psi";
        write_amplitude_rows(f, g, item, w, d, dims, reps[r], &bad, &st);
        if (root && !bad && !st)
            bad = write_axes(f, g, grid, reps[r], w) || attach_amplitude(g, item, d, reps[r]);
    }
    if (g >= 0) H5Gclose(g);
    if (st) return st;
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write wave function '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

static pf_status put_density_rows(pf_h5 *f, const char *name, pf_wave *w, pf_rep rep)
{
    pf_grid *grid = pf_wave_grid(w);
    const int d = pf_grid_dim(grid), root = pf_dist_rank() == 0;
    hsize_t dims[PF_MAX_DIM];
    shape_of(grid, dims);
    hid_t g = root ? new_group(f, name) : -1;
    int bad = root && (g < 0 || write_wave_attrs(f, g, name, w, "density") ||
                       attr_string(g, "representation", rep == PF_POSITION ? "position" : "momentum"));
    pf_status st = PF_OK;
    rows_src src = {w, rep, ROWS_DENSITY};
    write_rows_dataset(f, g, "density", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, d, dims, &src, density_unit(d, rep), &bad, &st);
    if (root && !bad && !st)
        bad = describe(g, "density", density_pairs(rep)) || write_axes(f, g, grid, rep, w) ||
              attach_axes(g, "density", d, rep);
    if (g >= 0) H5Gclose(g);
    if (st) return st;
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write density '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

static pf_status put_wave_values(pf_h5 *f, const char *name, pf_wave *w, int parts)
{
    pf_grid *grid = pf_wave_grid(w);
    int d = pf_grid_dim(grid);
    size_t total = pf_grid_total(grid);
    if (pf_wave_distributed(w)) return put_wave_rows(f, name, w, parts);
    hsize_t dims[PF_MAX_DIM];
    shape_of(grid, dims);
    hid_t g = new_group(f, name);
    /* The tag names what the item holds, not where the state happened to be. */
    const char *held = (parts & PF_H5_PSI) && (parts & PF_H5_PHI) ? "position and momentum"
                       : (parts & PF_H5_PSI)                       ? "position"
                                                                   : "momentum";
    int bad = g < 0 || write_wave_attrs(f, g, name, w, "wave function");
    if (!bad) bad = attr_string(g, "representation", held);
    if (!bad && (parts & PF_H5_PSI)) {
        bad = pf_wave_to(w, PF_POSITION) != PF_OK ||
              write_amplitude(f, g, "psi", pf_wave_data_const(w), d, dims, total, PF_POSITION) ||
              write_axes(f, g, grid, PF_POSITION, w) || attach_amplitude(g, "psi", d, PF_POSITION);
    }
    if (!bad && (parts & PF_H5_PHI)) {
        double complex *phi = phi_ascending(w);
        if (phi && pf_wave_frame_moved(w) && phi_lab_factors(w, phi)) {
            free(phi);
            phi = NULL;
        }
        bad = !phi || write_amplitude(f, g, "phi", phi, d, dims, total, PF_MOMENTUM) ||
              write_axes(f, g, grid, PF_MOMENTUM, w) || attach_amplitude(g, "phi", d, PF_MOMENTUM);
        free(phi);
    }
    if (g >= 0) H5Gclose(g);
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write wave function '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

static pf_status put_density_values(pf_h5 *f, const char *name, pf_wave *w, pf_rep rep, double *rho);

pf_status pf_h5_put_density(pf_h5 *f, const char *name, pf_wave *w, pf_rep rep)
{
    pf_status s = check_name(f, name);
    if (s) return s;
    pf_grid *grid = pf_wave_grid(w);
    if (pf_wave_distributed(w)) return put_density_rows(f, name, w, rep); /* piece by piece, see above */
    double *rho = malloc(pf_grid_total(grid) * sizeof *rho);
    if (!rho) return pf_fail(f->ctx, PF_ENOMEM, "out of memory");
    s = pf_wave_density(w, rep, rho);
    if (s) {
        free(rho);
        return s;
    }
    return put_density_values(f, name, w, rep, rho);
}

/* Writes the density item from rho (freed here). */
static pf_status put_density_values(pf_h5 *f, const char *name, pf_wave *w, pf_rep rep, double *rho)
{
    pf_grid *grid = pf_wave_grid(w);
    int d = pf_grid_dim(grid);
    hsize_t dims[PF_MAX_DIM];
    shape_of(grid, dims);
    hid_t g = new_group(f, name);
    int bad = g < 0 || write_wave_attrs(f, g, name, w, "density") ||
              attr_string(g, "representation", rep == PF_POSITION ? "position" : "momentum") ||
              write_dataset(f, g, "density", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, d, dims, rho, density_unit(d, rep)) ||
              describe(g, "density", density_pairs(rep)) || write_axes(f, g, grid, rep, w) || attach_axes(g, "density", d, rep);
    free(rho);
    if (g >= 0) H5Gclose(g);
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write density '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

pf_status pf_h5_put_image(pf_h5 *f, const char *name, size_t nx, size_t ny, const double *values, const double *x,
                          const double *y, const char *axis_unit, const char *value_unit, const char *long_name)
{
    pf_status s = check_name(f, name);
    if (s) return s;
    if (nx < 1 || ny < 1) return pf_fail(f->ctx, PF_EINVAL, "image '%s' is empty", name);
    hsize_t dims[2] = {nx, ny};
    const char *pairs[] = {"long_name", long_name ? long_name : "image", NULL};
    hid_t g = new_group(f, name);
    int bad = g < 0 || attr_string(g, "content", "image") ||
              write_dataset(f, g, "image", H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 2, dims, values, value_unit ? value_unit : "") ||
              describe(g, "image", pairs) || write_axis(f, g, "x", x, nx, axis_unit) ||
              write_axis(f, g, "y", y, ny, axis_unit) || attach_axes(g, "image", 2, PF_POSITION);
    if (g >= 0) H5Gclose(g);
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write image '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

pf_status pf_h5_put_table(pf_h5 *f, const char *name, size_t ncols, const pf_column *cols)
{
    pf_status s = check_name(f, name);
    if (s) return s;
    if (ncols < 1) return pf_fail(f->ctx, PF_EINVAL, "table '%s' needs at least one column", name);
    for (size_t c = 0; c < ncols; c++) {
        if (!cols[c].name || !*cols[c].name || strchr(cols[c].name, '/') || strcmp(cols[c].name, ".") == 0)
            return pf_fail(f->ctx, PF_EINVAL, "table '%s': column %zu needs a name without '/'", name, c + 1);
        if (cols[c].count != cols[0].count)
            return pf_fail(f->ctx, PF_EINVAL, "table '%s': column '%s' has %zu entries but '%s' has %zu", name,
                           cols[c].name, cols[c].count, cols[0].name, cols[0].count);
        for (size_t k = 0; k < c; k++)
            if (strcmp(cols[k].name, cols[c].name) == 0)
                return pf_fail(f->ctx, PF_EINVAL, "table '%s': column name '%s' appears twice", name, cols[c].name);
    }
    hid_t g = new_group(f, name);
    int bad = g < 0 || attr_string(g, "content", "table");
    for (size_t c = 0; c < ncols && !bad; c++) {
        hsize_t dims[1] = {cols[c].count};
        if (cols[c].text) {
            /* Text columns (step kinds, labels) as variable-length UTF-8. */
            hid_t st = H5Tcopy(H5T_C_S1);
            H5Tset_size(st, H5T_VARIABLE);
            H5Tset_cset(st, H5T_CSET_UTF8);
            bad = write_dataset(f, g, cols[c].name, st, st, 1, dims, cols[c].text, cols[c].unit ? cols[c].unit : "");
            H5Tclose(st);
        } else {
            bad = write_dataset(f, g, cols[c].name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 1, dims, cols[c].values,
                                cols[c].unit ? cols[c].unit : "");
        }
    }
    /* The first column is the table's axis (a time, a step number): a
     * dimension scale every other column is attached to, so netCDF readers
     * show one named dimension instead of an anonymous one per column.  A
     * table that starts with a text column gets a row number as its axis. */
    const char *axis = cols[0].name;
    if (!bad && cols[0].text) {
        axis = "row";
        for (size_t c = 0; c < ncols; c++)
            if (strcmp(cols[c].name, "row") == 0) axis = "row_index";
        hsize_t dims[1] = {cols[0].count};
        double *rows = malloc((cols[0].count ? cols[0].count : 1) * sizeof *rows);
        bad = !rows;
        for (size_t r = 0; !bad && r < cols[0].count; r++) rows[r] = (double)(r + 1);
        if (!bad) bad = write_dataset(f, g, axis, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 1, dims, rows, "1");
        free(rows);
    }
    hid_t ax = bad ? -1 : H5Dopen2(g, axis, H5P_DEFAULT);
    bad = bad || ax < 0 || H5DSset_scale(ax, axis) < 0;
    for (size_t c = 0; c < ncols && !bad; c++) {
        if (strcmp(cols[c].name, axis) == 0) continue;
        hid_t ds = H5Dopen2(g, cols[c].name, H5P_DEFAULT);
        bad = ds < 0 || H5DSattach_scale(ds, ax, 0) < 0;
        if (ds >= 0) H5Dclose(ds);
    }
    if (ax >= 0) H5Dclose(ax);
    if (g >= 0) H5Gclose(g);
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write table '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

pf_status pf_h5_put_scalar(pf_h5 *f, const char *name, double value, const char *unit)
{
    pf_status s = check_name(f, name);
    if (s) return s;
    int bad = write_dataset(f, f->file, name, H5T_IEEE_F64LE, H5T_NATIVE_DOUBLE, 0, NULL, &value, unit ? unit : "");
    return bad ? pf_fail(f->ctx, PF_EIO, "cannot write value '%s' to '%s'", name, f->sf.final_path) : PF_OK;
}

/* ---- reading ---- */

/* Reading treats the file as hostile: it comes from someone else's
 * instrument or script.  Three rules hold whatever the mode (sandboxed or
 * trusted), because a load that quietly pulls in other files is never what
 * the caller asked for:
 *   - links are followed only inside the file (external and user-defined
 *     links are refused, and the link-access lists given to HDF5 refuse
 *     external links themselves, so even a soft link leading to one stops);
 *   - datasets whose values live elsewhere (external raw storage, virtual
 *     datasets) are refused before a single value is read, and the dataset
 *     access list points HDF5's own prefixes for them at a folder that does
 *     not exist;
 *   - every shape is checked for overflow and against the memory cap
 *     (pf_readcap.h) before a buffer is allocated. */

/* Where HDF5 would look for external raw files and virtual-dataset sources
 * of relative names: a folder that cannot exist (a NUL-free name under a
 * file, never a folder).  Defence in depth only: such datasets are refused
 * before they are read. */
#define NOWHERE_PREFIX "/dev/null/psiflight-does-not-follow-files"

/* File element sizes accepted: numbers take at most 16 bytes (long double),
 * a complex compound at most 64 with padding.  Larger elements would make
 * HDF5's conversion buffers grow with them. */
#define MAX_NUMBER_BYTES 16
#define MAX_COMPLEX_BYTES 64

typedef struct reader {
    pf_context *ctx;
    const char *path;      /* as the script wrote it: every message uses this */
    hid_t file;
    hid_t lapl, gapl, dapl; /* link, group and dataset access: no external links */
    int elink_refused;     /* the callback below was asked to follow one */
    size_t reserved;       /* bytes of buffers this read holds or will hold */
    const pf_h5_source *src; /* its slab_* say which part of the values to read */
} reader;

/* HDF5 asks this before it opens the target file of an external link;
 * refusing makes the traversal fail. */
static herr_t refuse_external_link(const char *parent_file, const char *parent_group, const char *child_file,
                                   const char *child_object, unsigned *acc_flags, hid_t fapl, void *op_data)
{
    (void)parent_file, (void)parent_group, (void)child_file, (void)child_object, (void)acc_flags, (void)fapl;
    ((reader *)op_data)->elink_refused = 1;
    return -1;
}

static void close_access_lists(reader *r)
{
    if (r->lapl > 0) H5Pclose(r->lapl);
    if (r->gapl > 0) H5Pclose(r->gapl);
    if (r->dapl > 0) H5Pclose(r->dapl);
    r->lapl = r->gapl = r->dapl = 0;
}

/* Link access lists for every open and existence check of this read. */
static int make_access_lists(reader *r)
{
    r->lapl = H5Pcreate(H5P_LINK_ACCESS);
    r->gapl = H5Pcreate(H5P_GROUP_ACCESS);
    r->dapl = H5Pcreate(H5P_DATASET_ACCESS);
    hid_t all[3] = {r->lapl, r->gapl, r->dapl};
    for (int i = 0; i < 3; i++) {
        /* Group and dataset access lists are link access lists as well. */
        if (all[i] < 0 || H5Pset_elink_cb(all[i], refuse_external_link, r) < 0 ||
            H5Pset_elink_prefix(all[i], NOWHERE_PREFIX) < 0 || H5Pset_nlinks(all[i], 16) < 0)
            return -1;
    }
    if (H5Pset_efile_prefix(r->dapl, NOWHERE_PREFIX) < 0 || H5Pset_virtual_prefix(r->dapl, NOWHERE_PREFIX) < 0 ||
        H5Pset_virtual_view(r->dapl, H5D_VDS_FIRST_MISSING) < 0)
        return -1;
    return 0;
}

static pf_status refused_link(reader *r, const char *name)
{
    return pf_fail(r->ctx, PF_EIO,
                   "'%s': '%s' leads through a link to another file; psiflight reads only what is stored in the "
                   "file it was given",
                   r->path, name);
}

/* Walks name one link at a time (HDF5 paths: parts between '/'): each link
 * must exist and be a hard or soft link.  kind ("dataset", "item") words the
 * message for a missing name. */
static pf_status check_links(reader *r, hid_t loc, const char *name, const char *kind)
{
    size_t n = strlen(name);
    if (n < 1 || n > 1024)
        return pf_fail(r->ctx, PF_EINVAL, "'%s': %s name must be 1..1024 characters, got %zu", r->path, kind, n);
    char part[1025];
    for (size_t i = 1; i <= n; i++) {
        if (i < n && name[i] != '/') continue;
        if (name[i - 1] == '/') continue; /* leading or doubled '/' */
        memcpy(part, name, i);
        part[i] = '\0';
        htri_t e = H5Lexists(loc, part, r->lapl);
        if (e <= 0) {
            if (r->elink_refused) return refused_link(r, name);
            return pf_fail(r->ctx, PF_EINVAL, "'%s' has no %s '%s'", r->path, kind, name);
        }
        H5L_info_t info;
        if (H5Lget_info(loc, part, &info, r->lapl) < 0)
            return pf_fail(r->ctx, PF_EIO, "'%s': cannot read the link '%s'", r->path, part);
        if (info.type == H5L_TYPE_EXTERNAL) return refused_link(r, name);
        if (info.type != H5L_TYPE_HARD && info.type != H5L_TYPE_SOFT)
            return pf_fail(r->ctx, PF_EIO, "'%s': '%s' is a user-defined link, which psiflight does not follow",
                           r->path, part);
    }
    return PF_OK;
}

/* Books bytes for this read against the memory cap, counting what the read
 * already holds. */
static pf_status reserve(reader *r, size_t bytes)
{
    size_t need = pf_read_add(r->reserved, bytes);
    pf_status s = pf_read_budget(r->ctx, r->path, need);
    if (!s) r->reserved = need;
    return s;
}

/* An open dataset with its shape, checked to store its values in the file. */
typedef struct dataset {
    hid_t id;
    int rank;
    hsize_t dims[PF_MAX_DIM + 1];
    size_t elem;          /* bytes of one element in the file */
    size_t chunk_bytes;   /* bytes of one chunk (HDF5 holds one to read it), 0 if not chunked */
} dataset;

/* Refuses a dataset whose values live outside the file, and sizes its chunks. */
static pf_status check_storage(reader *r, dataset *ds, const char *name)
{
    hid_t dcpl = H5Dget_create_plist(ds->id);
    if (dcpl < 0) return pf_fail(r->ctx, PF_EIO, "'%s': cannot read how dataset '%s' is stored", r->path, name);
    H5D_layout_t layout = H5Pget_layout(dcpl);
    int external = H5Pget_external_count(dcpl);
    hsize_t chunk[H5S_MAX_RANK];
    int crank = layout == H5D_CHUNKED ? H5Pget_chunk(dcpl, H5S_MAX_RANK, chunk) : 0;
    H5Pclose(dcpl);
    if (layout == H5D_VIRTUAL)
        return pf_fail(r->ctx, PF_EIO,
                       "'%s': dataset '%s' is a virtual dataset (its values live in other files); psiflight reads "
                       "only values stored in the file it was given",
                       r->path, name);
    if (external != 0)
        return pf_fail(r->ctx, PF_EIO,
                       "'%s': dataset '%s' keeps its values in external files; psiflight reads only values stored "
                       "in the file it was given",
                       r->path, name);
    if (layout < 0 || crank < 0 || crank > H5S_MAX_RANK)
        return pf_fail(r->ctx, PF_EIO, "'%s': cannot read how dataset '%s' is stored", r->path, name);
    ds->chunk_bytes = 0;
    if (crank > 0) {
        uint64_t cd[H5S_MAX_RANK];
        for (int a = 0; a < crank; a++) cd[a] = chunk[a];
        pf_status s = pf_read_shape_bytes(r->ctx, r->path, "a chunk of the dataset", crank, cd, ds->elem, &ds->chunk_bytes);
        if (s) return s;
    }
    return PF_OK;
}

static void close_dataset(dataset *ds)
{
    if (ds->id > 0) H5Dclose(ds->id);
    ds->id = 0;
}

/* Opens a dataset through checked links and reports its rank, shape,
 * element size and chunk size. */
static pf_status open_dataset(reader *r, hid_t loc, const char *name, dataset *ds)
{
    memset(ds, 0, sizeof *ds);
    pf_status s = check_links(r, loc, name, "dataset");
    if (s) return s;
    ds->id = H5Dopen2(loc, name, r->dapl);
    if (ds->id < 0) {
        ds->id = 0;
        if (r->elink_refused) return refused_link(r, name);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': '%s' is not a dataset", r->path, name);
    }
    hid_t ft = H5Dget_type(ds->id);
    ds->elem = ft < 0 ? 0 : H5Tget_size(ft);
    if (ft >= 0) H5Tclose(ft);
    s = check_storage(r, ds, name);
    if (s) {
        close_dataset(ds);
        return s;
    }
    hid_t sp = H5Dget_space(ds->id);
    ds->rank = sp < 0 ? -1 : H5Sget_simple_extent_ndims(sp);
    if (ds->rank > PF_MAX_DIM + 1 || ds->rank < 0) {
        if (sp >= 0) H5Sclose(sp);
        close_dataset(ds);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' has %d dimensions (at most %d allowed)", r->path, name,
                       ds->rank, PF_MAX_DIM);
    }
    H5Sget_simple_extent_dims(sp, ds->dims, NULL);
    H5Sclose(sp);
    return PF_OK;
}

/* Checks rank axes of ds (1..3, none empty) and books count elements of
 * elem bytes in memory plus one chunk; returns the element count. */
static pf_status book_values(reader *r, const dataset *ds, const char *name, int rank, size_t elem, size_t *count)
{
    if (rank < 1 || rank > PF_MAX_DIM)
        return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' must have 1 to 3 axes, has %d", r->path, name, rank);
    uint64_t d[PF_MAX_DIM];
    for (int a = 0; a < rank; a++) {
        d[a] = ds->dims[a];
        if (d[a] == 0) return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' is empty (axis %d has no entries)", r->path, name, a + 1);
    }
    char what[300];
    snprintf(what, sizeof what, "dataset '%.200s'", name);
    size_t bytes;
    pf_status s = pf_read_shape_bytes(r->ctx, r->path, what, rank, d, elem, &bytes);
    if (!s) s = reserve(r, pf_read_add(bytes, ds->chunk_bytes));
    if (!s) r->reserved -= ds->chunk_bytes; /* the chunk buffer is HDF5's, gone after the read */
    if (!s) *count = bytes / elem;
    return s;
}

/* The part of ds's values this read takes: all of it (H5S_ALL), or, for
 * the values of a slab read (slab: 1), entries [first, first + count) of the
 * slab axis, checked against the dataset's extent.  held: the extents read;
 * the spaces made here are closed with close_spaces. */
static pf_status select_slab(reader *r, const dataset *ds, const char *name, int rank, int slab, dataset *held,
                             hid_t *fspace, hid_t *mspace)
{
    *held = *ds;
    *fspace = *mspace = H5S_ALL;
    const pf_h5_source *src = r->src;
    if (!slab || !src || src->slab_count == 0) return PF_OK;
    /* The slab comes from the caller, not the file, but is checked all the
     * same, and the messages do no arithmetic that could overflow (found
     * by tests/fuzz/fuzz_h5.c: axis INT_MAX + 1 was signed overflow). */
    int a = src->slab_axis;
    const size_t first = src->slab_first, count = src->slab_count;
    if (a < 0 || a >= rank)
        return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' has %d axes; this rank's share was asked for on axis %lld",
                       r->path, name, rank, (long long)a + 1);
    if (first > ds->dims[a] || count > ds->dims[a] - first) {
        if (count <= SIZE_MAX - first)
            return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' has %llu entries on axis %d; this rank's share needs entries %zu to %zu",
                           r->path, name, (unsigned long long)ds->dims[a], a + 1, first + 1, first + count);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' has %llu entries on axis %d; this rank's share needs %zu entries after its first %zu",
                       r->path, name, (unsigned long long)ds->dims[a], a + 1, count, first);
    }
    held->dims[a] = src->slab_count;
    hsize_t start[PF_MAX_DIM + 1] = {0};
    start[a] = src->slab_first;
    *fspace = H5Dget_space(ds->id);
    *mspace = H5Screate_simple(ds->rank, held->dims, NULL);
    if (*fspace < 0 || *mspace < 0 || H5Sselect_hyperslab(*fspace, H5S_SELECT_SET, start, NULL, held->dims, NULL) < 0)
        return pf_fail(r->ctx, PF_EIO, "'%s': cannot select this rank's share of dataset '%s'", r->path, name);
    return PF_OK;
}

static void close_spaces(hid_t fspace, hid_t mspace)
{
    if (fspace != H5S_ALL && fspace >= 0) H5Sclose(fspace);
    if (mspace != H5S_ALL && mspace >= 0) H5Sclose(mspace);
}

/* A number type whose bit fields lie inside its own size.  A corrupt file
 * can describe a float with its exponent past the element's last bit (or
 * an integer whose precision does): libhdf5 1.10 does not check, and its
 * conversion then reads the neighbouring element's bits - so a rank's slab
 * and a whole read disagreed on the same file, and the last element read
 * past its buffer (found by tests/fuzz/fuzz_h5.c's slab reads).  Such a
 * type is refused as not a number. */
static int fields_inside(hid_t t)
{
    size_t size = H5Tget_size(t), off, prec;
    if (size == 0 || size > MAX_NUMBER_BYTES) return 0;
    size_t bits = 8 * size;
    int o = H5Tget_offset(t);
    prec = H5Tget_precision(t);
    if (o < 0 || prec == 0) return 0;
    off = (size_t)o;
    if (off > bits || prec > bits - off) return 0;
    if (H5Tget_class(t) != H5T_FLOAT) return 1;
    size_t spos, epos, esize, mpos, msize;
    if (H5Tget_fields(t, &spos, &epos, &esize, &mpos, &msize) < 0) return 0;
    return spos < bits && esize > 0 && epos <= bits && esize <= bits - epos && msize > 0 && mpos <= bits &&
           msize <= bits - mpos;
}

static int is_float(hid_t t)
{
    H5T_class_t c = H5Tget_class(t);
    return (c == H5T_FLOAT || c == H5T_INTEGER) && fields_inside(t);
}

/* Reads a complex dataset: compound of two numbers (any member names, e.g.
 * {r, i} or {real, imag}) or real numbers with a last dimension of 2. */
static pf_status read_complex(reader *r, hid_t loc, const char *name, pf_samples *out)
{
    dataset ds;
    pf_status s = open_dataset(r, loc, name, &ds);
    if (s) return s;
    int rank = ds.rank;
    if (ds.elem > MAX_COMPLEX_BYTES) {
        close_dataset(&ds);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' has elements of %zu bytes (complex numbers take at most %d)",
                       r->path, name, ds.elem, MAX_COMPLEX_BYTES);
    }
    hid_t ft = H5Dget_type(ds.id);
    hid_t mt = -1;
    if (H5Tget_class(ft) == H5T_COMPOUND && H5Tget_nmembers(ft) == 2) {
        hid_t m0 = H5Tget_member_type(ft, 0), m1 = H5Tget_member_type(ft, 1);
        /* A corrupt file can give member offsets beyond the compound's own
         * size; libhdf5 1.10 does not check them and its conversion then
         * reads freed memory (found by tests/fuzz/fuzz_h5.c).  Such a type
         * is refused as not complex. */
        size_t fsize = H5Tget_size(ft);
        int inside = H5Tget_member_offset(ft, 0) <= fsize && H5Tget_size(m0) <= fsize - H5Tget_member_offset(ft, 0) &&
                     H5Tget_member_offset(ft, 1) <= fsize && H5Tget_size(m1) <= fsize - H5Tget_member_offset(ft, 1);
        if (inside && is_float(m0) && is_float(m1)) {
            char *n0 = H5Tget_member_name(ft, 0), *n1 = H5Tget_member_name(ft, 1);
            mt = H5Tcreate(H5T_COMPOUND, 2 * sizeof(double));
            H5Tinsert(mt, n0, 0, H5T_NATIVE_DOUBLE);
            H5Tinsert(mt, n1, sizeof(double), H5T_NATIVE_DOUBLE);
            H5free_memory(n0);
            H5free_memory(n1);
        }
        H5Tclose(m0);
        H5Tclose(m1);
    } else if (is_float(ft) && ds.elem <= MAX_NUMBER_BYTES && rank >= 2 && ds.dims[rank - 1] == 2) {
        mt = H5Tcopy(H5T_NATIVE_DOUBLE);
        rank--;
    }
    H5Tclose(ft);
    if (mt < 0) {
        close_dataset(&ds);
        return pf_fail(r->ctx, PF_EINVAL,
                       "'%s': dataset '%s' does not hold complex numbers (expected a compound of two numbers, "
                       "or real numbers with a last dimension of 2)",
                       r->path, name);
    }
    size_t total = 0;
    dataset held;
    hid_t fs, ms;
    s = select_slab(r, &ds, name, rank, 1, &held, &fs, &ms);
    if (!s) s = book_values(r, &held, name, rank, sizeof *out->values, &total);
    if (!s) {
        out->dim = rank;
        for (int a = 0; a < rank; a++) out->n[a] = (size_t)ds.dims[a];
        if (ms != H5S_ALL) {
            out->slab_axis = r->src->slab_axis;
            out->slab_first = r->src->slab_first;
            out->slab_count = r->src->slab_count;
        }
        out->values = malloc(total * sizeof *out->values);
        if (!out->values || H5Dread(ds.id, mt, ms, fs, H5P_DEFAULT, out->values) < 0)
            s = pf_fail(r->ctx, PF_EIO, "'%s': cannot read dataset '%s'", r->path, name);
    }
    close_spaces(fs, ms);
    H5Tclose(mt);
    close_dataset(&ds);
    return s;
}

/* Reads a real dataset of exactly the shape want[0..want_rank) into v
 * (allocated). */
static pf_status read_real(reader *r, hid_t loc, const char *name, int want_rank, const size_t *want, int slab, double **v)
{
    dataset ds;
    pf_status s = open_dataset(r, loc, name, &ds);
    if (s) return s;
    hid_t ft = H5Dget_type(ds.id);
    int numeric = is_float(ft) && ds.elem <= MAX_NUMBER_BYTES;
    H5Tclose(ft);
    int same = ds.rank == want_rank;
    for (int a = 0; same && a < ds.rank; a++) same = ds.dims[a] == want[a];
    if (!numeric || !same) {
        close_dataset(&ds);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': dataset '%s' must hold real numbers of shape %zu%s%s", r->path, name,
                       want[0], want_rank > 1 ? " x ..." : "", numeric ? " (the shape differs)" : "");
    }
    size_t total = 0;
    dataset held;
    hid_t fs, ms;
    s = select_slab(r, &ds, name, ds.rank, slab, &held, &fs, &ms);
    if (!s) s = book_values(r, &held, name, ds.rank, sizeof **v, &total);
    if (!s) {
        *v = malloc(total * sizeof **v);
        if (!*v || H5Dread(ds.id, H5T_NATIVE_DOUBLE, ms, fs, H5P_DEFAULT, *v) < 0)
            s = pf_fail(r->ctx, PF_EIO, "'%s': cannot read dataset '%s'", r->path, name);
    }
    close_spaces(fs, ms);
    close_dataset(&ds);
    return s;
}

static double read_attr_double(hid_t obj, const char *name, double def)
{
    if (H5Aexists(obj, name) <= 0) return def;
    hid_t a = H5Aopen(obj, name, H5P_DEFAULT);
    double v = def;
    hid_t sp = H5Aget_space(a), t = H5Aget_type(a);
    if (t >= 0 && is_float(t) && H5Sget_simple_extent_npoints(sp) == 1 && H5Aread(a, H5T_NATIVE_DOUBLE, &v) < 0) v = def;
    if (t >= 0) H5Tclose(t);
    H5Sclose(sp);
    H5Aclose(a);
    return v;
}

/* Reads a float64 attribute array of exactly n entries; 0 on success. */
static int read_attr_array(hid_t obj, const char *name, double *v, size_t n)
{
    if (H5Aexists(obj, name) <= 0) return -1;
    hid_t a = H5Aopen(obj, name, H5P_DEFAULT);
    hid_t sp = H5Aget_space(a), t = H5Aget_type(a);
    int bad = t < 0 || !is_float(t) || H5Sget_simple_extent_npoints(sp) != (hssize_t)n || H5Aread(a, H5T_NATIVE_DOUBLE, v) < 0;
    if (t >= 0) H5Tclose(t);
    H5Sclose(sp);
    H5Aclose(a);
    return bad ? -1 : 0;
}

static pf_status read_item(reader *r, const pf_h5_source *src, pf_samples *out)
{
    pf_status s = check_links(r, r->file, src->item, "item");
    if (s) return s;
    hid_t g = H5Gopen2(r->file, src->item, r->gapl);
    if (g < 0) {
        if (r->elink_refused) return refused_link(r, src->item);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': item '%s' is not a group", r->path, src->item);
    }
    int has_psi = H5Lexists(g, "psi", r->lapl) > 0, has_phi = H5Lexists(g, "phi", r->lapl) > 0;
    pf_rep rep;
    if (src->rep == PF_POSITION || (src->rep < 0 && has_psi)) rep = PF_POSITION;
    else rep = PF_MOMENTUM;
    if ((rep == PF_POSITION && !has_psi) || (rep == PF_MOMENTUM && !has_phi)) {
        H5Gclose(g);
        return pf_fail(r->ctx, PF_EINVAL, "'%s': item '%s' holds no %s amplitude ('%s')", r->path, src->item,
                       rep == PF_POSITION ? "position" : "momentum", rep == PF_POSITION ? "psi" : "phi");
    }
    s = read_complex(r, g, rep == PF_POSITION ? "psi" : "phi", out);
    for (int a = 0; !s && a < out->dim; a++) {
        const char *ax = rep == PF_POSITION ? POS_AXES[a] : MOM_AXES[a];
        if (H5Lexists(g, ax, r->lapl) > 0) s = read_real(r, g, ax, 1, &out->n[a], 0, &out->axis[a]);
    }
    out->rep = rep;
    if (!s) out->has_grid = read_attr_array(g, "grid_span_m", out->span, (size_t)out->dim) == 0 &&
                            read_attr_array(g, "grid_origin_m", out->grid_origin, (size_t)out->dim) == 0;
    out->mass = read_attr_double(g, "mass_kg", 0);
    out->clock = read_attr_double(g, "clock_s", 0);
    H5Gclose(g);
    return s;
}

static pf_status read_plain(reader *r, const pf_h5_source *src, pf_samples *out)
{
    pf_status s;
    if (src->dataset) {
        s = read_complex(r, r->file, src->dataset, out);
    } else {
        dataset ds;
        s = open_dataset(r, r->file, src->real, &ds);
        if (s) return s;
        size_t total = 0;
        /* Real and imaginary parts (8 + 8 bytes) are held while the complex
         * values (16) are made: 32 bytes per sample at the peak. */
        dataset held;
        hid_t fs, ms;
        s = select_slab(r, &ds, src->real, ds.rank, 1, &held, &fs, &ms);
        close_spaces(fs, ms);
        if (!s) s = book_values(r, &held, src->real, ds.rank, 4 * sizeof(double), &total);
        int rank = ds.rank;
        for (int a = 0; !s && a < rank; a++) out->n[a] = (size_t)ds.dims[a];
        if (!s && src->slab_count) {
            out->slab_axis = src->slab_axis;
            out->slab_first = src->slab_first;
            out->slab_count = src->slab_count;
        }
        close_dataset(&ds);
        if (s) return s;
        /* That booking refuses an oversized file before anything is read;
         * the reads below book the same bytes again piece by piece. */
        r->reserved -= total * 4 * sizeof(double);
        out->dim = rank;
        double *re = NULL, *im = NULL;
        s = read_real(r, r->file, src->real, rank, out->n, 1, &re);
        if (!s) s = read_real(r, r->file, src->imag, rank, out->n, 1, &im);
        if (!s) s = reserve(r, total * sizeof *out->values);
        if (!s) {
            out->values = malloc(total * sizeof *out->values);
            if (!out->values) s = pf_fail(r->ctx, PF_ENOMEM, "out of memory");
            for (size_t i = 0; !s && i < total; i++) out->values[i] = re[i] + I * im[i];
        }
        free(re);
        free(im);
    }
    for (int a = 0; !s && a < out->dim; a++)
        if (src->axes[a]) s = read_real(r, r->file, src->axes[a], 1, &out->n[a], 0, &out->axis[a]);
    out->rep = src->rep == PF_MOMENTUM ? PF_MOMENTUM : PF_POSITION;
    return s;
}

/* Bytes the samples' buffers hold (values and coordinate axes); the sizes
 * were booked during the read, so the sums cannot overflow. */
static size_t samples_bytes(const pf_samples *s)
{
    size_t bytes = 0;
    for (int a = 0; a < s->dim; a++)
        if (s->axis[a]) bytes += s->n[a] * sizeof(double);
    return bytes + pf_samples_count(s) * sizeof(double complex);
}

pf_status pf_h5_read_inprocess(pf_context *ctx, const char *path, const pf_h5_source *src, pf_samples *out)
{
    quiet_hdf5();
    memset(out, 0, sizeof *out);
    snprintf(out->origin, sizeof out->origin, "hdf5");
    int given = (src->item != NULL) + (src->dataset != NULL) + (src->real != NULL || src->imag != NULL);
    if (given != 1 || (src->real != NULL) != (src->imag != NULL))
        return pf_fail(ctx, PF_EINVAL, "name exactly one source: an item, a complex dataset, or a real and an imag dataset");
    if (H5Fis_hdf5(path) <= 0)
        return pf_fail(ctx, PF_EIO, "'%s' does not exist or is not an HDF5 file", path);
    reader r = {ctx, path, 0, 0, 0, 0, 0, 0, src};
    if (make_access_lists(&r)) {
        close_access_lists(&r);
        return pf_fail(ctx, PF_EIO, "cannot set up HDF5 access lists to read '%s'", path);
    }
    r.file = H5Fopen(path, H5F_ACC_RDONLY, H5P_DEFAULT);
    if (r.file < 0) {
        close_access_lists(&r);
        return pf_fail(ctx, PF_EIO, "cannot open HDF5 file '%s'", path);
    }
    pf_status s = src->item ? read_item(&r, src, out) : read_plain(&r, src, out);
    H5Fclose(r.file);
    close_access_lists(&r);
    for (int a = 0; !s && a < out->dim; a++)
        for (size_t j = 0; out->axis[a] && j < out->n[a]; j++)
            if (!isfinite(out->axis[a][j])) s = pf_fail(ctx, PF_EINVAL, "'%s': axis %d has a non-finite coordinate", path, a + 1);
    size_t total = s ? 0 : pf_samples_count(out); /* booked, so it cannot overflow */
    for (size_t i = 0; !s && i < total; i++)
        if (!isfinite(creal(out->values[i])) || !isfinite(cimag(out->values[i])))
            s = pf_fail(ctx, PF_EINVAL, "'%s': sample %zu is not finite", path, i + 1);
    if (!s) s = pf_read_hold(ctx, path, samples_bytes(out), &out->charged_ctx, &out->charged);
    if (s) pf_samples_free(out);
    return s;
}
