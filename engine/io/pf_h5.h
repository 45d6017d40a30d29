/* pf_h5.h - psiflight's HDF5 container: writing wave functions, densities,
 * tables and scalars as named items, and reading complex amplitudes back
 * (from psiflight files or from plain datasets made by other programs).
 *
 * The layout is documented in docs/file-layout.md.  Files are deterministic:
 * no object timestamps, attributes and links in creation order, so the same
 * run writes byte-identical files. */
#ifndef PF_H5_H
#define PF_H5_H

#include "pf_wave.h"
#include "pf_samples.h"
#include "pf_table.h"

typedef struct pf_h5 pf_h5;

/* Which amplitudes pf_h5_put_wave stores. */
enum { PF_H5_PSI = 1, PF_H5_PHI = 2 };

/* Starts a new file at path through the safe writer (an existing file is
 * kept unless overwrite; nothing appears under path before pf_h5_commit). */
pf_status pf_h5_create(pf_context *ctx, const char *path, int overwrite, pf_h5 **out);
/* One declared script parameter for the provenance group: a number in SI
 * (value with unit, "1" or NULL for plain numbers) or a text value
 * (text_value non-NULL: strings, booleans), and the text it came from. */
typedef struct pf_h5_parameter {
    const char *name;
    double value;
    const char *unit;
    const char *text_value;
    const char *as_given;
} pf_h5_parameter;

/* How the file was made: stored as the group "provenance" (docs/file-layout.md). */
typedef struct pf_h5_provenance {
    const char *script;        /* path as given to the runner, or "" */
    const char *script_sha256; /* its digest, or "" when unknown */
    unsigned long long seed;
    size_t nparams;
    const pf_h5_parameter *params;
} pf_h5_provenance;

/* Writes the group "provenance" (script, digest, seed, engine and
 * HDF5 versions, declared parameters; not the thread count, so that files
 * stay byte-identical between thread counts where the numbers are); the species and step logs of the wave
 * and density items written afterwards are added to it at commit.  Call
 * right after pf_h5_create, so it is the file's first item. */
pf_status pf_h5_set_provenance(pf_h5 *f, const pf_h5_provenance *p);
/* Final path of the file being written. */
const char *pf_h5_path(const pf_h5 *f);
/* Stores w as group `name` with its amplitudes (parts: PF_H5_PSI and/or
 * PF_H5_PHI), axes and attributes.  May change w's representation (a
 * transform), never its state.  Names are 1..200 characters of letters,
 * digits, '_', '-', '.', with '/' between non-empty parts; an item name may
 * be used once per file. */
pf_status pf_h5_put_wave(pf_h5 *f, const char *name, pf_wave *w, int parts);
/* Stores the density |psi|^2 (or |phi|^2, ascending k) as group `name`. */
pf_status pf_h5_put_density(pf_h5 *f, const char *name, pf_wave *w, pf_rep rep);
/* Stores a 2D array (a camera or optical-depth image, any map of numbers)
 * as group `name`: dataset `image` of nx x ny values (values[ix * ny + iy])
 * on the dimension scales `x` and `y` (axis_unit, e.g. "m", or "1" for
 * pixel numbers), with value_unit and long_name (may be NULL). */
pf_status pf_h5_put_image(pf_h5 *f, const char *name, size_t nx, size_t ny, const double *values, const double *x,
                          const double *y, const char *axis_unit, const char *value_unit, const char *long_name);
/* Stores columns as group `name`, one dataset per column with its unit. */
pf_status pf_h5_put_table(pf_h5 *f, const char *name, size_t ncols, const pf_column *cols);
/* Stores one number as scalar dataset `name` with a unit attribute. */
pf_status pf_h5_put_scalar(pf_h5 *f, const char *name, double value, const char *unit);
/* Closes the file and moves it to its final name; frees f in every case. */
pf_status pf_h5_commit(pf_h5 *f);
/* Closes and deletes the unfinished file; frees f (NULL is harmless). */
void pf_h5_abandon(pf_h5 *f);

/* Where to find an amplitude in a file. */
typedef struct pf_h5_source {
    const char *item;              /* psiflight item group (reads psi or phi and axes), or NULL */
    const char *dataset;           /* a complex compound dataset, or real with last dimension 2 */
    const char *real, *imag;       /* or two real datasets of the same shape */
    const char *axes[PF_MAX_DIM];  /* coordinate datasets for plain data (may be NULL) */
    int rep;                       /* PF_POSITION / PF_MOMENTUM, or -1: psi if present, else phi */
    /* Read only entries [slab_first, slab_first + slab_count) of axis
     * slab_axis of the values (a rank's share of a distributed grid,
     * pf_samples_slab_for); slab_count 0 reads all.  Axes are read whole. */
    int slab_axis;
    size_t slab_first, slab_count;
} pf_h5_source;

/* Reads the amplitude described by src from the HDF5 file at path into out
 * (caller frees with pf_samples_free).  Errors name the file and dataset.
 * libhdf5 runs in a forked child process (pf_h5_isolate.c), so a file that
 * crashes the library fails this call with PF_EIO instead of ending the
 * process; PSIFLIGHT_H5_INPROCESS=1 in the environment reads in-process. */
pf_status pf_h5_read(pf_context *ctx, const char *path, const pf_h5_source *src, pf_samples *out);
/* The same read in this process (what the child runs; the fuzz harness's
 * path): a file that crashes libhdf5 crashes the caller. */
pf_status pf_h5_read_inprocess(pf_context *ctx, const char *path, const pf_h5_source *src, pf_samples *out);

/* "major.minor.release" of the HDF5 library in use, into buf. */
void pf_h5_version(char *buf, size_t size);

#endif
