/* pfl.h - shared declarations of the Lua binding layer.
 *
 * The binding turns core objects into Lua userdata and core status codes into
 * Lua errors.  It is the only part of the engine that includes Lua headers.
 * Each pfl_*.c file registers one group of functions or methods; the list of
 * openers is in pfl_module.c. */
#ifndef PFL_H
#define PFL_H

#include <complex.h>
#include <lauxlib.h>
#include <lua.h>
#include "pf_context.h"
#include "pf_grid.h"
#include "pf_wave.h"

#define PFL_GRID_TYPE "psiflight.grid"
#define PFL_WAVE_TYPE "psiflight.wave"
#define PFL_COMPLEX_TYPE "psiflight.complex"

/* What kind of failure the last raised error was; the runner maps these onto
 * exit codes (docs/runner.md). */
typedef enum pfl_error_kind {
    PFL_ERROR_SCRIPT = 0, /* ordinary script or argument error */
    PFL_ERROR_GUARD,      /* a numerical guard tripped in strict mode */
    PFL_ERROR_LIMIT,      /* a resource cap (memory, time) was reached */
    PFL_ERROR_SANDBOX,    /* the sandbox refused an operation */
    PFL_ERROR_USAGE       /* a bad command-line value (--set NAME=VALUE) */
} pfl_error_kind;

/* Opens the module and leaves its table on the stack (Lua C module entry). */
int luaopen_psiflight(lua_State *L);

/* ---- context (pfl_context.c) ---- */
/* The engine context belonging to this Lua state (created on first use). */
pf_context *pfl_ctx(lua_State *L);
/* n doubles from the engine's allocator (charged to its memory cap), owned
 * by a userdata pushed on the stack.  The userdata is made first, so no Lua
 * error, a memory error included, can leak the block; it is freed when the
 * userdata is collected, or at once by pfl_engine_doubles_free(L, idx).
 * Raises (naming name) when the engine refuses the block. */
double *pfl_push_engine_doubles(lua_State *L, size_t n, const char *name);
void pfl_engine_doubles_free(lua_State *L, int idx);
/* Raises a Lua error for a failed core call: "name: message".  Returns only
 * when s is PF_OK and no strict-mode warning is pending. */
void pfl_check(lua_State *L, pf_status s, const char *name);
/* The end of a method that changed its object (argument 1) in place:
 * pfl_check(L, s, name), then that object as the one result, so calls
 * chain (w:kick(k):shift(d)).  Use as `return pfl_return_self(L, s, name);`. */
int pfl_return_self(lua_State *L, pf_status s, const char *name);
/* Raises a Lua error of the given kind with a formatted message, prefixed by
 * the calling script position like luaL_error. */
int pfl_error(lua_State *L, pfl_error_kind kind, const char *fmt, ...);
/* Kind of the error value at idx: the kind it was raised with when it is the
 * last error raised through pfl_check/pfl_error, else PFL_ERROR_SCRIPT. */
/* Re-raises the error value on top of the stack, which a nested call of
 * another binding function raised (its location is then the calling C
 * function's, empty), at the script line of the running function's caller,
 * keeping its kind (exit status).  An error already located there is
 * re-raised as it is. */
int pfl_rethrow_here(lua_State *L);
pfl_error_kind pfl_error_kind_of(lua_State *L, int idx);
/* Strict mode turns warnings into errors of kind PFL_ERROR_GUARD. */
void pfl_set_strict(lua_State *L, int strict);
int pfl_strict(lua_State *L);
/* Base seed of the run (pf.setup{seed=}, runner --seed; default 1).  Random
 * generators derive their streams from it. */
unsigned long long pfl_seed(lua_State *L);
/* Checks a pf.setup table at idx with the one options checker (declared
 * keys, a plain table), so a wrapper of pf.setup (the runner's sandbox
 * guard) may then read its fields raw with pfl_option_get: no metamethod can
 * answer the wrapper and pf.setup differently. */
void pfl_setup_check(lua_State *L, int idx);
/* Output folder of the run (pf.setup{output_dir=}, runner --out), or NULL. */
const char *pfl_output_dir(lua_State *L);

/* Number of warnings the engine emitted in this state so far (for the
 * run manifest's guard figures). */
unsigned long pfl_warning_count(lua_State *L);

/* ---- run record: output folder, outputs, results, manifest (pfl_record.c) ---- */
/* Resolves the path an output writer was given and pushes it: absolute
 * paths stay as they are; relative ones (no ".." parts) go into the run's
 * output folder (runner --out, pf.setup{output_dir=}, else out/<script
 * stem>), which is fixed at the first write.  Raises on a bad path. */
const char *pfl_output_resolve(lua_State *L, const char *path, const char *fname);
/* Records a committed output file (its final path) for the manifest. */
void pfl_output_register(lua_State *L, const char *final_path);
/* Whether writers may replace existing files by default (runner --overwrite). */
int pfl_overwrite_default(lua_State *L);
/* The overwrite choice for a writer: field 'overwrite' of the options table
 * at opts (0 or none: the run's default). */
int pfl_overwrite_option(lua_State *L, int opts);
/* Quiet mode (runner --quiet): no progress bars. */
int pfl_quiet(lua_State *L);
/* True when a progress bar should be drawn: not quiet and stderr a terminal. */
int pfl_progress_wanted(lua_State *L);
/* Remembers the largest guard figures in w's step log for the manifest. */
void pfl_note_guards(lua_State *L, const pf_wave *w);
/* Keeps the userdata at idx as an open output whose metatable has a
 * __finish(self, ok) method; the end of the run calls it for every output
 * still open.  pfl_untrack_output forgets it (after close). */
void pfl_track_output(lua_State *L, int idx);
void pfl_untrack_output(lua_State *L, int idx);
/* Runner hooks: the script path and flags before the run, and at its end
 * finishing open outputs and writing the manifest (when the run has an
 * output folder).  Parameters are "NAME=VALUE" strings; the last value of a
 * name wins.  pfl_record_finish returns 0, or -1 after printing why the
 * manifest could not be written. */
void pfl_record_configure(lua_State *L, const char *script, const char *sha256, int quiet, int overwrite);
int pfl_record_finish(lua_State *L, int ok, const char *error, int nsets, char *const *sets);
/* The script path and its SHA-256 as the runner gave them ("" when unknown,
 * e.g. under plain lua5.4); valid until the next pfl_record_configure. */
void pfl_record_script(lua_State *L, const char **path, const char **sha256);
/* Records a Lua module the script loaded for the manifest: its require name,
 * where it came from (file path or "bundled:recipes/NAME.lua") and the
 * SHA-256 of its source.  Returns -1 when out of memory. */
int pfl_record_module(lua_State *L, const char *name, const char *source, const char *sha256);
/* A scratch array of n doubles owned by a userdata pushed on the stack (so
 * an error raised later frees it). */
double *pfl_scratch_doubles(lua_State *L, size_t n);

/* Reads the 2D array rows[r][c] at stack index data (r along y, c along x:
 * camera and optical-depth images, plain arrays) with the coordinate
 * options at opts (pixel=, or x= and y=; value_name=, value_unit=) into m:
 * values, axes and labels, in scratch memory on the stack (pfl_pictures.c). */
struct pf_map;
void pfl_array_map(lua_State *L, int data, int opts, struct pf_map *m);

/* ---- argument helpers (pfl_args.c) ---- */
/* Like lua_tointegerx, but only for a number value (a numeric string such
 * as "3" is not an integer option): *ok (may be NULL) says whether the value
 * is an integer; returns 0 when it is not. */
lua_Integer pfl_tointegerx(lua_State *L, int idx, int *ok);
/* A finite number at arg, else an argument error naming what it is. */
double pfl_check_finite(lua_State *L, int arg, const char *what);
/* A finite number > 0 at arg. */
double pfl_check_positive(lua_State *L, int arg, const char *what);
/* The field readers below read an options table raw, after the function
 * checked it with pfl_options_check (pfl_options.h). */
/* Field of the table at t: a finite number, or def when absent (nil).  The
 * error names the field: "field 'mass' must be a finite number, got 'abc'". */
double pfl_field_number(lua_State *L, int t, const char *field, double def, int required);
/* Optional positive number field (0 when absent); a value that is not a
 * positive finite number is an error "fname: field 'field' must be positive
 * (unit), got ...". */
double pfl_field_positive_opt(lua_State *L, int t, const char *field, const char *unit, const char *fname);
/* Set field `name` of the table on top of the stack to a number, to a list
 * of the d numbers v, or to a list of the d counts v. */
void pfl_set_number(lua_State *L, const char *name, double v);
void pfl_set_vector(lua_State *L, const char *name, const double *v, int d);
void pfl_set_counts(lua_State *L, const char *name, const size_t *v, int d);
/* Field holding one number per axis, or a single number used for all axes. */
int pfl_field_vector(lua_State *L, int t, const char *field, int dim, double *out, int required);
/* The same with positive = 1 requiring every value > 0 (widths, radii). */
int pfl_field_vector_of(lua_State *L, int t, const char *field, int dim, double *out, int required, int positive);
/* A per-axis list whose entries follow a rule of their own (pf.setup's
 * 'acceleration', the aperture's 'size'): lo..hi entries, each read by
 * entry(L, type, &out[a]) from the stack top, which returns 0 to refuse it. */
typedef struct pfl_axis_list {
    const char *fname, *field; /* for messages: "fname: field 'field' ..." */
    int lo, hi;                /* allowed entry counts */
    const char *rule;          /* what an entry must be, e.g. "a finite number (m/s^2)" */
    int (*entry)(lua_State *L, int type, double *out);
} pfl_axis_list;
/* Reads the table at the stack top (left there) into out; returns the
 * count.  Errors: "fname: field 'field' must have N entries (one per axis),
 * got n" and "fname: field 'field' entry a must be RULE, got VALUE". */
int pfl_read_axis_list(lua_State *L, const pfl_axis_list *spec, double *out);
/* Field 'space' ("position" or "momentum"): sets *rep and returns 1 when
 * given, returns 0 when absent; any other value is an error. */
int pfl_field_space(lua_State *L, int t, pf_rep *rep);
/* The 'space' option of an optional options table (0: none): position by
 * default. */
pf_rep pfl_opt_space(lua_State *L, int opts);
/* Optional boolean field. */
int pfl_field_boolean(lua_State *L, int t, const char *field, int def);
/* Name of the Lua function being called (for error messages), as
 * luaL_argerror finds it ("grid" for pf.grid{...}); "psiflight" when unknown. */
const char *pfl_caller_name(lua_State *L);
/* Formats the Lua value at idx for an error message (numbers, short strings,
 * type names), into buf. */
const char *pfl_describe(lua_State *L, int idx, char *buf, size_t size);

/* Field 'mass' of the table at t: a positive mass in kg or a species label
 * such as "87Rb" (pfl_units.c).  Raises an error naming fname otherwise,
 * listing close species labels for an unknown one. */
double pfl_field_mass(lua_State *L, int t, const char *fname);

/* ---- complex numbers (pfl_complex.c) ---- */
/* Pushes a NULL-terminated list of names as a Lua sequence. */
void pfl_push_string_list(lua_State *L, const char *const *list);
void pfl_push_complex(lua_State *L, double complex z);
/* A number or complex userdata at idx; returns 0 when it is neither. */
int pfl_to_complex(lua_State *L, int idx, double complex *z);
double complex pfl_check_complex(lua_State *L, int arg);
/* Reads what a user callback returned: nret values starting at idx
 * (a number, two numbers re, im, or a complex). Returns 0 when malformed. */
int pfl_result_complex(lua_State *L, int idx, int nret, double complex *z);

/* ---- grids (pfl_grid.c) ---- */
pf_grid *pfl_check_grid(lua_State *L, int arg);
/* Pushes a closed (empty) grid userdata and returns its slot, for the core
 * call that makes or retains the grid right after (see pfl_push_wave_slot). */
pf_grid **pfl_push_grid_slot(lua_State *L);
/* Reads 1-based indices at arg.. (one per axis) into 0-based idx. */
void pfl_check_indices(lua_State *L, int arg, const pf_grid *g, size_t *idx, int ascending_k);

/* ---- wave functions (pfl_wave.c) ---- */
pf_wave *pfl_check_wave(lua_State *L, int arg);
/* Userdata lifecycle, as Lua's io library makes a closed file handle before
 * it opens the file: push the closed (empty) wave userdata first, then let
 * the core write the new wave into its slot,
 *     pfl_check(L, pf_wave_new(g, mass, pfl_push_wave_slot(L)), name);
 * so a Lua memory error raised while the userdata is made leaves no core
 * wave behind, and any error after that frees the wave with the userdata.
 * Nothing that can raise may run between making a core object and storing
 * it in its slot. */
pf_wave **pfl_push_wave_slot(lua_State *L);
/* The wave of the wave userdata at arg, or NULL when it is closed, without
 * the frame guard: for objects that keep waves and check frames themselves
 * (pfl_levels.c). */
pf_wave *pfl_wave_peek(lua_State *L, int arg);
/* Adds methods to the wave-function metatable (used by the method groups). */
void pfl_add_wave_methods(lua_State *L, const luaL_Reg *methods);
/* Adds functions to the module table, which is at stack index mod. */
void pfl_add_functions(lua_State *L, int mod, const luaL_Reg *funcs);

/* ---- userdata types (pfl_userdata.c) ---- */
/* What a userdata type puts in its metatable and in the module. */
typedef struct pfl_type_spec {
    const char *type;           /* registry name of the metatable, e.g. PFL_GRID_TYPE */
    const luaL_Reg *meta;       /* metamethods set in the metatable, or NULL */
    const luaL_Reg *methods;    /* a new table of methods, or NULL for none */
    const char *methods_field;  /* where that table goes; NULL means "__index" */
    const char *guard_prefix;   /* "camera:" names the methods for the frame guard; NULL: not named */
    const luaL_Reg *funcs;      /* functions added to the module (pfl_add_functions), or NULL */
} pfl_type_spec;
/* Creates (or reuses) the metatable spec->type, fills it, and adds the
 * module functions to the table at stack index mod; the stack is unchanged. */
void pfl_register_type(lua_State *L, int mod, const pfl_type_spec *spec);
/* A method spelling the API no longer uses, and the one it uses instead. */
typedef struct pfl_renamed {
    const char *refused, *kept;
} pfl_renamed;
/* Makes the refused names (list ended by {NULL, NULL}) of type's methods
 * table (its __index) errors that name the kept spelling, at the script
 * line: "wave:overlap is now wave:inner".  One spelling per concept, as the
 * options checker's refused keys; other missing names stay nil. */
void pfl_refuse_methods(lua_State *L, const char *type, const char *prefix, const pfl_renamed *renamed);
/* Pushes a zeroed userdata of size bytes whose own metatable holds only
 * __gc = gc, and returns it: a core object is made after its box exists and
 * stored in it, so no Lua error (out of memory included) can leak it. */
void *pfl_new_gc_box(lua_State *L, size_t size, lua_CFunction gc);
/* Fills w from the Lua function at arg over the given representation
 * (pcall per point; a failing callback re-raises its error). */
void pfl_fill_from_function(lua_State *L, pf_wave *w, pf_rep rep, int arg, const char *name);

/* ---- moving frames (pfl_frame.c) ---- */
/* Records the script names (prefix + name) of C functions, so the frame
 * guard can name the running function; pfl_add_wave_methods ("wave:") and
 * pfl_add_functions ("pf.") call it for every function they register. */
void pfl_frame_name_functions(lua_State *L, const char *prefix, const luaL_Reg *funcs);
/* Whether the function of this script name handles a wave in a moved frame
 * (PFL_AWARE_FRAME) or a distributed wave or grid (PFL_AWARE_DIST): the one
 * table in pfl_aware.c.  pfl_push_aware_list pushes the names with the flag,
 * sorted. */
#define PFL_AWARE_FRAME 1u
#define PFL_AWARE_DIST 2u
int pfl_aware(const char *name, unsigned kind);
void pfl_push_aware_list(lua_State *L, unsigned kind);
/* Raises an argument error at arg when w's frame is moved and the running
 * function is not flagged FRAME (pfl_check_wave calls it). */
void pfl_frame_guard(lua_State *L, int arg, const pf_wave *w);
/* The acceleration of a flight: field 'acceleration' of the checked options
 * table opts (0: none; false: no acceleration), else the pf.setup default.
 * Fills out[0..dim) and returns 1 when one applies, else 0 (out all zero). */
int pfl_frame_acceleration(lua_State *L, int opts, int dim, double *out, const char *fname);
/* The pf.setup default: reads field 'acceleration' of the checked table t
 * into values/count (returns 1 when the field is present; count 0 for
 * false), and stores what was read (after every field was checked). */
int pfl_frame_setup_read(lua_State *L, int t, double *values, int *count);
void pfl_frame_setup_apply(lua_State *L, const double *values, int count);

/* ---- file access policy (pfl_file_policy.c) ----
 * Every binding function that opens a file for a script checks the path here
 * first, so the sandbox covers engine outputs as well as io.open. */
typedef enum pfl_access { PFL_ACCESS_READ = 0, PFL_ACCESS_WRITE = 1 } pfl_access;
/* Lets scripts of this state read (or read and write) below path, a folder
 * or a single file.  Once one root is added the policy is enforced; with none
 * every path is allowed (the module loaded outside the runner, --trusted).
 * Returns 0, or -1 when path cannot be resolved (errno set). */
int pfl_files_allow(lua_State *L, const char *path, pfl_access access);
/* True when a policy is in force (the runner's sandbox), false otherwise. */
int pfl_files_enforced(lua_State *L);
/* Raises a sandbox error naming op and path unless the policy allows the
 * access: no ".." component, and the resolved path (every symbolic link
 * followed, whether its target exists or not) inside an allowed root. */
void pfl_files_check(lua_State *L, const char *path, pfl_access access, const char *op);
/* The same check; also pushes the resolved path (absolute, free of links;
 * path itself when no policy is in force) and returns it, so a caller can
 * open exactly what was checked, with O_NOFOLLOW. */
const char *pfl_files_resolve(lua_State *L, const char *path, pfl_access access, const char *op);

/* ---- openers: each registers its group into the module table at mod ---- */
void pfl_open_options(lua_State *L, int mod);  /* pf.check_options; first, before any group declares options */
void pfl_open_context(lua_State *L, int mod);
void pfl_open_complex(lua_State *L, int mod);
void pfl_open_grid(lua_State *L, int mod);
void pfl_open_wave(lua_State *L, int mod);
void pfl_open_flight(lua_State *L, int mod);
void pfl_open_observe(lua_State *L, int mod);
void pfl_open_units(lua_State *L, int mod);
void pfl_open_build(lua_State *L, int mod);
void pfl_open_algebra(lua_State *L, int mod);
void pfl_open_guard(lua_State *L, int mod);      /* after pfl_open_context: wraps pf.setup */
void pfl_open_longflight(lua_State *L, int mod); /* w:fly_long, w:fly_scaled */
void pfl_open_farfield(lua_State *L, int mod);   /* w:far_field */
void pfl_open_advise(lua_State *L, int mod);     /* w:grid_advice, pf.grid_advice */
void pfl_open_params(lua_State *L, int mod);
void pfl_open_record(lua_State *L, int mod);
void pfl_open_files(lua_State *L, int mod);
void pfl_open_pictures(lua_State *L, int mod);
void pfl_open_progress(lua_State *L, int mod);
/* Measurements, detectors, ensembles (helpers in pfl_measure.h). */
void pfl_open_random(lua_State *L, int mod);
void pfl_open_ensemble(lua_State *L, int mod);
void pfl_open_measure(lua_State *L, int mod);
void pfl_open_field(lua_State *L, int mod);
void pfl_open_sample(lua_State *L, int mod);  /* s:sample, pf.histogram */
void pfl_open_fringe(lua_State *L, int mod);  /* s:fringes, pf.fringes */
void pfl_open_flux(lua_State *L, int mod);
void pfl_open_detector(lua_State *L, int mod);
void pfl_open_ops(lua_State *L, int mod);     /* protocol steps: pulses, masks, shifts */
void pfl_open_force(lua_State *L, int mod);     /* w:fall: flight under a uniform force */
void pfl_open_splitstep(lua_State *L, int mod); /* w:evolve (registers pf.potential first) */
void pfl_open_relax(lua_State *L, int mod);     /* w:relax, w:energy */
void pfl_open_coupling(lua_State *L, int mod);  /* pf.coupling: mean-field coupling constant */
void pfl_open_beam(lua_State *L, int mod);      /* pf.beam: particle beams */
void pfl_open_expand(lua_State *L, int mod);  /* w:expand: mean-field expansion on a growing grid */
void pfl_open_levels(lua_State *L, int mod);  /* pf.levels: internal states and pulses */
void pfl_open_frame(lua_State *L, int mod);   /* flight: moving frames */
void pfl_open_dist(lua_State *L, int mod);    /* distributed grids over MPI ranks */
/* Pushes the script name of the running C function ("wave:fly"), or nil. */
void pfl_push_running_name(lua_State *L);
/* Raises an argument error at arg when w (or g) is distributed over MPI
 * ranks and the running function is not flagged DIST (pfl_aware.c);
 * pfl_check_wave and pfl_check_grid call them. */
void pfl_dist_guard(lua_State *L, int arg, const pf_wave *w);
void pfl_dist_grid_guard(lua_State *L, int arg, const pf_grid *g);
void pfl_open_interp(lua_State *L, int mod);  /* w:psi_at, w:density_at: values between grid points */

#endif
