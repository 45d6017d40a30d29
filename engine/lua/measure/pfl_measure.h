/* pfl_measure.h - helpers shared by the measurement bindings:
 * states that are either a wave function or an ensemble, the per-state
 * random generator, regions, and distribution tables. */
#ifndef PFL_MEASURE_H
#define PFL_MEASURE_H

#include "pf_field.h"
#include "pf_ensemble.h"
#include "pf_measure.h"
#include "pf_random.h"
#include "pf_frame.h"
#include "pfl.h"

#define PFL_ENSEMBLE_TYPE "psiflight.ensemble"
#define PFL_REGION_TYPE "psiflight.region"
#define PFL_RANDOM_TYPE "psiflight.random"
#define PFL_CAMERA_TYPE "psiflight.camera"

/* A measured state: one wave function (weight 1) or an ensemble's members
 * and weights.  For an ensemble, pfl_check_source pushes one value (the
 * buffer holding the arrays) that must stay on the stack while src is used;
 * for a wave it pushes nil, so the stack grows by one either way. */
typedef struct pfl_source {
    pf_mixture mix;
    int is_ensemble;
    pf_wave *single;
    double unit_weight;
} pfl_source;
void pfl_check_source(lua_State *L, int arg, pfl_source *src);
/* What a measurement method s:name(...) reads first: its options table at
 * opts_arg, checked against decl before anything else (optional unless
 * PFL_OPTIONS_REQUIRED: opts is then 0 when it is absent), then the
 * measured state at argument 1 (pfl_check_source, so one value is pushed),
 * its grid and the grid's dimension, and with PFL_ALONG_AXIS the 0-based
 * axis of option 'axis' (default the first; else axis is -1).  Filled in
 * place: a wave's src points into itself, so the struct is not copied. */
struct pfl_options_decl;
enum { PFL_OPTIONS_REQUIRED = 1, PFL_ALONG_AXIS = 2 };
typedef struct pfl_measurement {
    int opts;
    pfl_source src;
    pf_grid *grid;
    int dim, axis;
} pfl_measurement;
void pfl_measurement_begin(lua_State *L, int opts_arg, const struct pfl_options_decl *decl, unsigned flags,
                           pfl_measurement *m);
/* Grid and mass of the source (first member). */
pf_grid *pfl_source_grid(const pfl_source *src);
double pfl_source_mass(const pfl_source *src);

/* The Lua state's generator: PCG64 stream 0 of the run seed pfl_seed(L),
 * reseeded whenever that seed changes (pf.setup{seed=}). */
pf_rng *pfl_rng(lua_State *L);
/* Generator for a call with options table at opts (0: none): the field
 * 'generator' (a pf.random object), else 'seed' (a fresh stream 0 of that
 * seed, written into *local), else the state's generator. */
pf_rng *pfl_opt_rng(lua_State *L, int opts, pf_rng *local);

/* A region userdata at arg, resolved for grid g whose points sit at lab
 * positions xi + offset (offset NULL: the grid's own coordinates).  Mask
 * functions are evaluated at those lab positions once per grid and offset
 * and cached. */
void pfl_check_region(lua_State *L, int arg, pf_grid *g, const double *offset, pf_region *out);

/* Pushes a distribution table for field f (see docs/measurements.md):
 * values, shape, axes, axis_unit, unit, space, momentum_axes (momentum
 * only) and a 'lab' sub-table.  mass converts wave numbers to velocities for
 * the lab axes; unit names the value unit, lab_scale and lab_unit the factor
 * to and the name of the lab unit. */
void pfl_push_field(lua_State *L, const pf_field *f, pf_rep rep, double mass, const char *unit, double lab_scale,
                    const char *lab_unit);
/* Pushes an array of n doubles as a Lua sequence. */
void pfl_push_doubles(lua_State *L, const double *v, size_t n);
/* Reads a sequence of numbers at idx into a new userdata buffer (pushed);
 * returns the pointer and the count. */
double *pfl_check_doubles(lua_State *L, int idx, size_t *n, const char *what);
/* 1-based axis field of an options table, default def (1-based); one
 * implementation with pfl_field_axis, in pfl_args.c. */
int pfl_opt_axis(lua_State *L, int opts, const char *field, int dim, int def);
/* The frame the source's members share (position, wave number; the phase of
 * member 1), with a Lua error naming the first member in another frame. */
void pfl_source_frame(lua_State *L, const pfl_source *src, pf_frame *out, const char *name);
/* Mixture field of a source, with a Lua error on failure (pf_field must be
 * released with pf_field_free; on error nothing is leaked). */
void pfl_source_field(lua_State *L, const pfl_source *src, pf_rep rep, pf_field *f, const char *name);
/* 1 when the source is one wave split over MPI ranks: its small
 * measurements then run on each rank's planes (pf_dist_measure.h) instead
 * of on the whole field. */
int pfl_source_split(const pfl_source *src);
/* The geometry of the source's field (pfl_source_field's axes, lab-shifted),
 * with no values. */
void pfl_source_geometry(lua_State *L, const pfl_source *src, pf_rep rep, pf_field *geom, const char *name);
/* pf_field_marginal of the source's field (per slab for a split wave), with
 * a Lua error on failure; release out with pf_field_free. */
void pfl_source_marginal(lua_State *L, const pfl_source *src, pf_rep rep, const int *keep, pf_field *out,
                         const char *name);

/* The sampled-events table of s:sample and lv:sample (pfl_sample.c):
 * pfl_push_event_columns pushes a table holding one sequence of n
 * coordinates per axis (ev[a] for axis a, from the events at ev, stride
 * doubles apart, coordinates first), with room for `fields` named fields;
 * pfl_set_event_fields then sets its count, space and unit. */
void pfl_push_event_columns(lua_State *L, const double *ev, lua_Integer n, int d, int stride, int fields);
void pfl_set_event_fields(lua_State *L, lua_Integer n, pf_rep rep);

/* The openers (pfl_open_random .. pfl_open_detector) are declared in pfl.h.
 * Adds methods to both the wave and the ensemble metatables (measurement
 * methods work on either).  The ensemble opener must run first. */
void pfl_add_state_methods(lua_State *L, const luaL_Reg *methods);

#endif
