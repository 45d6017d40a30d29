/* pfl_protocol.h - helpers shared by the protocol-step bindings (pfl_ops.c,
 * pfl_splitstep.c, pfl_relax.c, pfl_force.c, pfl_callbacks.c, pfl_potential.c): sampling Lua functions over a grid, reading
 * potentials.  (Option tables are checked by pfl_options.h; the axis and
 * integer field readers below live in pfl_args.c with the other readers.) */
#ifndef PFL_PROTOCOL_H
#define PFL_PROTOCOL_H

#include "pfl.h"

/* State of one Lua function sampled over a grid.  After a core call returns
 * PF_ECALLBACK, the error message is on top of the Lua stack; pass it to
 * pfl_raise_callback.  with_time appends the time t as the last argument. */
typedef struct pfl_sampler {
    lua_State *L;
    int fn;              /* absolute stack index of the function */
    int dim;
    pf_rep rep;          /* coordinates are x (position) or k (momentum) */
    const char *name;    /* method name for messages */
    const char *what;    /* what the function gives: "phase", "transmission", "potential" */
    int with_time;
    double t;
    pf_grid *grid;       /* grid of the potential samples (pfl_potential_cb) */
    /* Added to every grid coordinate before the call, so the function sees
     * lab coordinates for a wave in a moved frame (x_lab = xi + X, k_lab =
     * k_grid + K; docs/frames.md); zero for a plain grid. */
    double offset[PF_MAX_DIM];
} pfl_sampler;

/* pf_sample_fn over a pfl_sampler: calls fn(coord..., [t]) under pcall and
 * reads a number, (re, im) or a complex; a non-finite result is an error that
 * names the method, the argument and the coordinate. */
int pfl_sample_cb(void *user, const double *coord, double complex *value);

/* Raises the callback error on top of the stack, prefixed by the script
 * position when it is one of ours (the user's own errors carry theirs). */
int pfl_raise_callback(lua_State *L, const char *name);

/* Reads the potential given at stack index idx - a function of the
 * coordinates (and of t, last, when with_time) or a flat table of
 * pf_grid_total numbers in row-major order - into a new full-grid array
 * owned by a userdata pushed on the stack (so errors never leak it).
 * Functions are sampled at time t, at the grid coordinates plus offset
 * (NULL: none; a wave's frame position gives lab coordinates).  Returns the
 * array. */
double *pfl_read_potential(lua_State *L, int idx, pf_grid *g, const char *name, int with_time, double t,
                           const double *offset);

/* The lab offset of a wave's grid for a sampler: the frame position (rep
 * position) or wave number (rep momentum) per axis into out. */
void pfl_sampler_frame_offset(const pf_wave *w, pf_rep rep, double *out);

/* Fills V from the sampler at time t (core pf_potential_fn). */
int pfl_potential_cb(void *user, double t, double *V);

/* Optional 1-based axis field (default def, 1-based) -> 0-based axis. */
int pfl_field_axis(lua_State *L, int t, const char *field, const pf_grid *g, int def, const char *name);

/* Optional integer field >= min. */
lua_Integer pfl_field_integer(lua_State *L, int t, const char *field, lua_Integer def, lua_Integer min,
                              const char *name);

/* Per-axis values from the arguments arg.. (one number per axis, or one table
 * of them at arg); what names them in errors. */
void pfl_check_axis_values(lua_State *L, int arg, int dim, double *out, const char *what);

/* ---- sampled potentials (pfl_potential.c) ---- */
#include "pf_splitstep.h"
#define PFL_POTENTIAL_TYPE "psiflight.potential"

/* pf.potential(grid, f | table): V sampled once on a grid, reusable by
 * evolve/relax/energy, with the split-step exponentials cached inside. */
typedef struct pfl_potential_box {
    pf_grid *grid;          /* retained; NULL once closed */
    const double *values;   /* pf_grid_total values (J), owned by the user value */
    pf_evolve_cache cache;
    /* Lab position of the grid's coordinate 0 the values were sampled for:
     * zero when made from a grid, the frame position when made from a wave
     * (pf.potential(w, f)); evolve and relax require it to match the wave's. */
    double offset[PF_MAX_DIM];
    /* V - m a.xi for the acceleration and mass evolve or relax last used with
     * this object (pfl_potential_tilted), owned by user value 2, with its own
     * split-step exponentials: a protocol repeating evolve under gravity
     * builds the tilted table and its exponentials once.  The grid and the
     * lab offset are the object's own (evolve checks them against the wave),
     * so acceleration and mass complete the key. */
    const double *tilted;   /* NULL: none yet */
    double tilt_acc[PF_MAX_DIM], tilt_mass;
    pf_evolve_cache tilt_cache;
    size_t tilt_builds, tilt_reuses; /* p:cache_status() */
} pfl_potential_box;

/* The open potential object at idx, or NULL when idx holds something else. */
pfl_potential_box *pfl_test_potential(lua_State *L, int idx);
/* The object's V - m a.xi for mass and acc (m/s^2 per axis of its grid), and
 * in *cache the exponentials kept for it: built on first use and whenever
 * acc or mass differ from the last call, else reused.  idx: the object's
 * stack index. */
const double *pfl_potential_tilted(lua_State *L, int idx, pfl_potential_box *b, double mass, const double *acc,
                                   pf_evolve_cache **cache);
/* Registers pf.potential and the potential metatable (called by pfl_open_splitstep). */
void pfl_register_potential(lua_State *L, int mod);

/* Reads the optional 'potential' field of the options table at t: a
 * pf.potential object (its values and, when cache is not NULL, its cache in
 * *cache), a function or a table (sampled now, at the grid coordinates plus
 * offset, into a userdata left on the stack), or, when time_dependent, a
 * function left on the stack for a sampler (*V stays NULL).  Returns the
 * stack index of the field's value, 0 when there is none. */
int pfl_potential_option(lua_State *L, int t, pf_grid *g, const char *name, int time_dependent, const double **V,
                         pf_evolve_cache **cache, const double *offset);

/* Points of the grid this process holds: all, or its rank's slab
 * (pf_dist.h), whose potentials are sampled at its own points only; the
 * first one in *first. */
size_t pfl_held_points(const pf_grid *g, size_t *first);

/* Whether an 'acceleration' adds a uniform force (accelerated and a non-zero
 * value on some axis). */
int pfl_tilt_wanted(const pf_wave *w, const double *acc, int accelerated);

/* The uniform force of an 'acceleration' as a potential on the held points
 * (-m a.xi, pf_frame_tilt_add) in a userdata left on the stack; NULL when
 * there is no acceleration or it is zero. */
double *pfl_tilt_values(lua_State *L, pf_wave *w, const double *acc, int accelerated);

/* V + T for a static V of n held points (V NULL: T alone), in a userdata
 * left on the stack. */
const double *pfl_tilted_static(lua_State *L, const double *V, const double *T, size_t n);

#endif
