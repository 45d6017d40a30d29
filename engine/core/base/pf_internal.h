/* pf_internal.h - structure layouts and helpers shared by the core's own files.
 *
 * Nothing outside engine/core includes this header: the binding and the runner
 * see opaque handles only.  <complex.h> comes before <fftw3.h> so that
 * fftw_complex is the native double complex type. */
#ifndef PF_INTERNAL_H
#define PF_INTERNAL_H

#include <complex.h>
#include <fftw3.h>
#include <stddef.h>
#include "pf_context.h"
#include "pf_frame.h"
#include "pf_grid.h"
#include "pf_steplog.h"
#include "pf_vecpath.h"
#include "pf_wave.h"

struct pf_context {
    int refs;
    int threads;
    pf_planning planning;
    char *wisdom_path;
    char *wisdom_path_mpi; /* wisdom_path + "-mpi": the file of distributed runs */
    int wisdom_loaded;     /* bit 0: wisdom_path read, bit 1: wisdom_path_mpi read */
    size_t memory_cap, memory_used;
    unsigned long allocations;  /* pf_context_alloc calls so far */
    unsigned long fail_at;      /* fault injection: fail allocation number fail_at (0: off) */
    pf_warn_fn warn;
    void *warn_user;
    char message[1024];
    pf_status status;           /* status of the last pf_fail, beside message */
    double guard_threshold;   /* grid guards (pf_guard.c); <= 0 means the default */
    struct pf_plan_note *plan_notes; /* plans made, for provenance (pf_plans.c) */
    size_t nplan_notes, plan_notes_cap;
    pf_stop_fn stop_check;    /* asked by long loops whether to stop (pf_context_poll_stop) */
    void *stop_user;
    pf_progress_fn progress;  /* told how long loops advance (pf_context_progress) */
    void *progress_user;
    int distribute;           /* split 2D/3D grids over MPI ranks (pf_dist.h) */
    /* FFTW-MPI plans made on this context, one pair per point counts,
     * layout, planner flags and threads, shared by every grid that needs
     * them (pf_dist_long.c); NULL before the first. */
    struct pf_dist_plan_cache *dist_plans;
};

/* 1D phase segments (pf_flight.c): the phase of point s of a segment that
 * starts at integer wave number m0 is start * chirp[s] * ratio^s, with
 * start = exp(-i c m0^2), ratio = exp(-2 i c m0), chirp[s] = exp(-i c s^2). */
#define PF_PHASE_SEG 32
/* Segments are used from this many points on: below it the full table stays
 * in cache and costs no memory traffic, and its values are exact to 1 ulp
 * (segments: within about 10 ulp, from the products forming the powers). */
#define PF_PHASE_SEG_MIN ((size_t)1 << 16)

/* Per-axis flight phase tables for one value of tau = hbar t / m. */
typedef struct pf_flight_tables {
    double tau;
    int valid;
    double complex *phase[PF_MAX_DIM];
    /* 1D only: per-segment start values and ratios (NULL: use phase[0]). */
    double complex *seg_start, *seg_ratio;
    double complex chirp[PF_PHASE_SEG];
} pf_flight_tables;

/* Plans and buffers of the fused flight and split steps (pf_fused.c) on a
 * 2D or 3D grid: axis-0 transforms of a block of columns gathered into a
 * per-thread buffer, and transforms over the trailing axes of a chunk of
 * axis-0 slices (one thread each; blocks and chunks are shared out among
 * threads).  Made at the first fused step. */
typedef struct pf_fused_plans {
    int threads;                  /* thread count made with; 0 = not made */
    size_t block, tail;           /* columns per block; columns in a last, partial block (0: none) */
    size_t blocks;                /* number of blocks, the partial one included */
    size_t ld;                    /* buffer stride between gathered columns */
    fftw_plan col_fwd, col_bwd, tail_fwd, tail_bwd;
    double complex *buf;          /* threads x block x ld values */
    size_t buf_bytes;
    double *part;                 /* blocks x PF_MAX_DIM partial guard-band sums */
    /* Chunk sweeps (pf_fused_chunks): one-thread plans of the trailing
     * axes for a chunk of `rows` consecutive axis-0 indices (and for the
     * last, shorter chunk).  Chunks are shared out among threads, each
     * running the same plan, so the bits do not depend on the thread
     * count. */
    size_t rows, rows_tail, chunks;
    fftw_plan chunk_fwd, chunk_bwd, chunk_tail_fwd, chunk_tail_bwd;
} pf_fused_plans;

struct pf_grid {
    int refs;
    pf_context *ctx;
    int dim;
    size_t n[PF_MAX_DIM];
    double span[PF_MAX_DIM], dx[PF_MAX_DIM], origin[PF_MAX_DIM];
    size_t total;
    double *x[PF_MAX_DIM];            /* coordinates, natural order */
    double *k[PF_MAX_DIM];            /* wave numbers, FFT order */
    double complex *kfactor[PF_MAX_DIM]; /* phi/S factor per axis, see pf_wave.h */
    fftw_plan forward, backward;
    int plan_threads;                 /* thread count the plans were made with, 0 = none */
    pf_flight_tables flight;
    pf_fused_plans fused;
    /* Kinetic tables of the split step (pf_splitstep.c) for the last two
     * values of tau = hbar c h / m, so that evolve calls with the same step
     * and mass make none; freed with the grid. */
    struct {
        int valid;
        double tau;
        double complex *table[PF_MAX_DIM];
    } evolve_kin[2];
    /* Records of what an evolve call measures on the way (pf_splitstep.c,
     * seg_probe), kept with the grid so that a repeat call allocates
     * nothing; sized for the segments of its last call. */
    void *evolve_probe;
    size_t evolve_probe_bytes;
    double *reduce_part;              /* partial sums of pf_reduce_axis_moments, reserved with the grid */
    /* Zero-padded 1D plans of pf_wave_beyond per axis (len = 2 (n + 1) or
     * 2 n points), made at its first use on that axis (pf_flux.c). */
    struct {
        size_t len;
        fftw_plan bwd, fwd;
    } beyond[PF_MAX_DIM];
    /* Slab layout and FFTW-MPI plans when the samples are split over MPI
     * ranks (pf_dist.c); NULL for a grid held whole. */
    struct pf_dist_grid *dist;
};

/* Grid-guard bookkeeping of one wave function (pf_guard.c).  Index r is the
 * representation (PF_POSITION, PF_MOMENTUM); all-zero is the valid initial
 * state ("nothing measured, nothing warned"). */
typedef struct pf_guard_state {
    double band[2][PF_MAX_DIM]; /* outer-band probability per axis, valid where known */
    unsigned known;             /* bit r: band[r] describes the current state */
    unsigned pending;           /* bit r: measure band[r] at the next change to r */
    unsigned warned;            /* bit r * PF_MAX_DIM + axis: warning already given */
} pf_guard_state;

struct pf_wave {
    pf_grid *grid;
    double mass;
    pf_rep rep;
    double clock;
    /* The samples.  Read them through pf_wave_settle (or pf_wave_to), never
     * directly while a flight is deferred: see `deferred` below. */
    double complex *store;
    /* A free flight asked for in position representation on a 2D/3D grid is
     * deferred: it is logged at once but carried out when a result needs the
     * data, as one fused sweep (pf_fused.c) if position is wanted, which
     * costs less than separate transforms and phase pass.  Consecutive
     * flights add up.  tau = hbar t / m of the whole deferred flight. */
    struct {
        int active;
        double tau;
    } deferred;
    pf_steplog log;
    /* Norm of the data as it is now, or < 0 when unknown.  Unitary steps
     * (flights, phases) carry it instead of summing over the grid again;
     * every change of the data that is not logged must update or clear it. */
    double norm_now;
    pf_guard_state guard;
    /* Periodic by design (a grating, a Talbot carpet, a commensurate comb):
     * the grid's period is the state's, so probability at the cell edge is
     * no wrap-around and the position guards stay silent (pf_guard.c). */
    int periodic;
    /* Where the last scaled flight started (pf_longflight.c), so that a further
     * long flight can return there exactly instead of flying a chirp the new
     * grid undersamples.  Valid while log.count == scaled_from.log_count. */
    struct {
        size_t log_count;
        double duration;
        double origin[PF_MAX_DIM];
    } scaled_from;
    /* The Castin-Dum frame the last expand ended in (pf_expand.c), so a
     * further expand can map back to the slowly varying chi exactly instead
     * of transforming a chirp the lab grid undersamples.  Valid while
     * log.count == expanded.log_count (0: none). */
    struct {
        size_t log_count;
        double lam[PF_MAX_DIM], rate[PF_MAX_DIM], omega2[PF_MAX_DIM];
        double energy;
    } expanded;
    /* The co-moving frame relating the stored state to the lab (pf_frame.h);
     * all zero: the grid state is the lab state. */
    pf_frame frame;
    /* The peak density |psi|^2 of the stored samples as the last evolve call
     * left them, measured in that call's last pass while the data were in
     * cache (pf_splitstep.c), so that the next call need not read the whole
     * state again for it.  Trusted only while nothing has touched the data
     * since (pf_splitstep.c, kept_peak): the same step-log length, carried
     * norm, representation and storage, no deferred flight, and the same
     * stored value at the peak's point; pf_wave_data and pf_guard_forget
     * (every unlogged change) drop it outright. */
    struct {
        int valid;
        double value;
        size_t at;              /* offset of the (first) point holding the peak */
        double complex z;       /* the stored value there */
        size_t log_count;
        double norm;
        pf_rep rep;
        const double complex *store;
    } peak_kept;
};

/* Engine allocation accounted against the context's memory cap, aligned for
 * FFTW (see pf_context_alloc).  Returns NULL on failure, with the reason in
 * pf_context_status (PF_ELIMIT or PF_ENOMEM) and the message; callers return
 * that status, never guess it from the text. */
void *pf_alloc(pf_context *ctx, size_t bytes);
/* bytes is what was asked for; the block's own header is what is discharged. */
void pf_free(pf_context *ctx, void *p, size_t bytes);
/* n elements of size each (overflow-checked: a product that overflows asks
 * for 0 bytes, which fails as PF_ELIMIT). */
#define PF_ALLOC_N(ctx, n, size) pf_alloc((ctx), pf_bytes((n), (size)))
/* pf_alloc of n zeroed elements (for what calloc did before accounting). */
void *pf_calloc(pf_context *ctx, size_t n, size_t size);
/* bytes = count * size with an overflow check; 0 on overflow. */
size_t pf_bytes(size_t count, size_t size);

/* Makes (or remakes at a new thread count) the grid's forward and backward
 * plans.  Planning uses a scratch array, never wave data. */
pf_status pf_grid_plan(pf_grid *g);
/* Evaluates fn at every point of the grid's position (natural order) or
 * momentum (FFT storage order) coordinates into out (pf_grid_total values),
 * dividing each value by prod_a divide[a][index_a] when divide is not NULL.
 * Returns PF_ECALLBACK as soon as fn reports failure. */
pf_status pf_grid_sample(const pf_grid *g, pf_rep rep, pf_sample_fn fn, void *user, const double complex *const *divide,
                         double complex *out);
/* Executes the in-place forward or backward plan on data (new-array execute). */
pf_status pf_grid_fft(pf_grid *g, double complex *data, int sign);

/* Carries out a deferred flight (see struct pf_wave), leaving the state in
 * position representation; does nothing when none is pending.  Every core
 * function that reads or writes w->store calls this (or pf_wave_to) first. */
pf_status pf_wave_settle(pf_wave *w);
/* The same, ending in representation rep (momentum: no fused sweep, just
 * the forward transform and the phase). */
pf_status pf_wave_settle_to(pf_wave *w, pf_rep rep);
/* The wave's samples, after settling any deferred flight (NULL on failure,
 * with the reason in the context). */
double complex *pf_wave_settled(pf_wave *w);
/* The wave's samples for a kernel that replaces all of them (builders): a
 * deferred flight of the old state is dropped, not carried out. */
double complex *pf_wave_overwrite(pf_wave *w);
/* The same for a builder that knows slabs: the samples of axis-0 planes
 * [*first, *first + *count), the whole axis unless the grid is split over
 * MPI ranks (pf_dist.h); data[0] is plane *first's first sample. */
double complex *pf_wave_overwrite_planes(pf_wave *w, size_t *first, size_t *count);

/* Fused flight step on a 2D/3D grid (pf_fused.c): data (position
 * representation) -> forward transform -> times scale * the flight phase of
 * g->flight (already filled) -> backward transform, in three sweeps over
 * memory instead of five.  Result equals the separate steps up to rounding.
 * band_sums (NULL: not wanted) receives, per axis, the sum of |S|^2 over the
 * momentum guard band of the state before the phase (S = DFT / N). */
pf_status pf_fused_flight(pf_grid *g, double complex *data, double scale, double *band_sums);
/* Releases the fused plans and buffers (grid teardown, thread change). */
void pf_fused_release(pf_grid *g);
/* Frees the split step's kinetic tables kept on the grid (grid teardown). */
void pf_evolve_tables_release(pf_grid *g);

/* The split step's sweeps on a 2D/3D grid (pf_fused.c, used by
 * pf_splitstep.c).  The data are cut into chunks of whole axis-0 slices
 * (about 256 kB each); a chunk is transformed over its trailing axes while it
 * sits in cache, so pointwise work placed between the backward and the next
 * forward transform costs no pass over memory of its own.
 * pf_fused_prepare_chunks makes the plans (PF_ELIMIT / PF_ENOMEM / PF_EFFT).
 * pf_fused_chunks: for every chunk, in parallel: backward trailing-axes
 * transform if `backward`, then fn(user, chunk, begin, count) on its
 * storage offsets [begin, begin + count) if fn, then forward transform if
 * `forward`.  fn runs inside the parallel region and must not start its own.
 * pf_fused_columns: the axis-0 forward transform, the factor
 * scale * T0[i] T1[j] T2[k] (tables in FFT storage order) and the axis-0
 * backward transform, block by block (as in pf_fused_flight). */
typedef void (*pf_chunk_fn)(void *user, double complex *chunk, size_t begin, size_t count);
pf_status pf_fused_prepare_chunks(pf_grid *g);
void pf_fused_chunks(pf_grid *g, double complex *data, int backward, pf_chunk_fn fn, void *user, int forward);
void pf_fused_columns(pf_grid *g, double complex *data, double scale, double complex *const *tables);
/* One unnormalised transform of sign -1 (forward) or +1 over a 2D/3D grid
 * in the two sweeps of pf_fused.c, with pointwise work fused into each:
 * before (may be NULL) runs on every chunk of whole planes just before its
 * trailing-axes transform; after (per-axis tables, may be NULL) multiplies
 * each point by after[0][i0] after[1][i1] (after[2][i2]) right after the
 * axis-0 transform of its column block.  The layout of chunks and blocks
 * does not depend on the thread count, so neither do the bits.
 * PF_ELIMIT / PF_ENOMEM / PF_EFFT from the plans. */
pf_status pf_fused_transform(pf_grid *g, double complex *data, int sign, pf_chunk_fn before, void *user,
                             double complex *const *after);

/* row[j] *= (qr + i qi) * p[j] for j < n, on interleaved (re, im) doubles:
 * the flight phase pass, vectorised for this processor (pf_flight.c). */
typedef void (*pf_phase_row_fn)(double *restrict row, const double *restrict p, double qr, double qi, size_t n);
pf_phase_row_fn pf_phase_kernel(void);
/* The kernels of a named vector path (pf_vecpath.h; for tests), NULL when
 * this build or processor cannot run it.  A segment kernel multiplies
 * d[s] by a chirp[s] b^s for s < PF_PHASE_SEG. */
pf_phase_row_fn pf_phase_kernel_on(pf_vector_path path);
typedef void (*pf_phase_segment_fn)(double complex *restrict d, const double complex *restrict chirp, double complex a,
                                    double complex b);
pf_phase_segment_fn pf_phase_segment_on(pf_vector_path path);
/* The segment kernel of this process's vector path (pf_flight.c; also the
 * evaluated chirps of the 1D scaled flight, pf_longflight.c). */
pf_phase_segment_fn pf_phase_segment_kernel(void);

/* The chirps of one axis of a scaled-flight stage of duration ta
 * (pf_longflight.c, derivation in docs/long-flights.md): the input chirp pre and
 * the output chirp with the amplitude post as tables of n points, and the
 * same factors applied in place to 1D data (post = 0: input, 1: output),
 * evaluated by segments (n below 2^32).  Exposed for tests. */
void pf_scaled_chirp_tables(double mass, double ta, size_t n, double dx, double D, double delta, double complex *pre,
                            double complex *post);
void pf_scaled_chirp_1d(double complex *data, size_t n, double mass, double ta, double dx, double D, double delta,
                        int post, int threads);

/* Applies the configured thread count to the FFTW planner (called before
 * every plan creation), loads wisdom lazily, and returns the planner flags
 * of the configured planning mode. */
unsigned pf_context_prepare_planner(pf_context *ctx);
/* Saves wisdom after new plans were made (atomic rename). */
void pf_context_store_wisdom(pf_context *ctx);
/* Records the plans just made for grid g (pf_plans.c): kind ("grid",
 * "fused"), shape and thread count as the label, a digest of FFTW's
 * descriptions of plans[0..nplans) (NULL entries skipped).  PF_ENOMEM only. */
pf_status pf_context_note_plans(pf_context *ctx, const char *kind, const pf_grid *g, const fftw_plan *plans,
                                int nplans);
/* Frees the plan notes (context teardown). */
void pf_context_free_plan_notes(pf_context *ctx);

/* Appends a step to the wave's log with the current clock.  norm < 0 means
 * "measure it now"; unitary steps pass the carried norm instead, so the log
 * costs no extra pass over memory on the flight path.  Best effort: a log that
 * cannot grow drops the entry rather than failing the step. */
void pf_wave_log_step(pf_wave *w, const char *kind, const char *method,
                      double duration, double removed, double norm);
/* The current norm: carried from the last logged step or scaling, or
 * measured when unknown (then remembered). */
double pf_wave_last_logged_norm(pf_wave *w);

/* Deterministic reductions (pf_reduce.c).  The data are split into blocks of a
 * fixed size that does not depend on the thread count; each block's partial
 * sums are computed in parallel and the partials are added in block order.
 * weights[a] (per-axis tables, may be NULL for weight 1) multiply |z|^2:
 * sums[0] = sum |z|^2, sums[1+a] = sum w_a |z|^2, sums[1+d+a] = sum w_a^2 |z|^2. */
/* Weighted moments (weights given) are summed with Neumaier's compensated
 * addition (pf_sum_add): each accumulator c has its running compensation in
 * acc[W + c], W = 1 + 2 dim, carried through the blocks like the sums and
 * added at the end.  Without it, a mean summed in storage order and one
 * summed in the transposed order of a distributed momentum slab differed by
 * 2.4e-14 of the mean (naive block sums round at about sqrt(N) eps); with it
 * both are within about 1e-16 of the exact sum (docs/distributed.md).  The
 * norm (no weights) keeps the plain sum: it runs every step.
 * Reserves g->reduce_part at grid creation: 2 (1 + 2 dim) doubles per block of
 * PF_REDUCE_BLOCK points, so reductions (norms, moments) and the mask
 * kernels' removed-probability sums allocate nothing and cannot fail for
 * memory later.  One user at a time: no caller holds it across calls. */
#define PF_REDUCE_BLOCK ((size_t)16384)
#define PF_REDUCE_MAX_WIDTH (2 * (1 + 2 * PF_MAX_DIM))
/* Neumaier's compensated addition of x to the sum *s with compensation *c
 * (the sum is *s + *c). */
static inline void pf_sum_add(double *s, double *c, double x)
{
    double t = *s + x;
    if ((*s >= 0 ? *s : -*s) >= (x >= 0 ? x : -x)) *c += (*s - t) + x;
    else *c += (x - t) + *s;
    *s = t;
}
pf_status pf_reduce_reserve(pf_grid *g);
pf_status pf_reduce_axis_moments(pf_grid *g, const double complex *z,
                                 const double *const *weights, double *sums);
/* The fixed-block split itself, for reductions of other integrands: calls
 * block(user, begin, end, idx, acc) once per block of PF_REDUCE_BLOCK storage
 * offsets [begin, end), idx the multi-index of begin, to fill acc[0..width-1]
 * (width <= 2 (1 + 2 dim), the reserved buffer's stride); then adds the block
 * partials in block order into sums[0..width-1]. */
typedef void (*pf_reduce_block_fn)(void *user, size_t begin, size_t end, const size_t *idx, double *acc);
void pf_reduce_blocks(pf_grid *g, int width, pf_reduce_block_fn block, void *user, double *sums);
void pf_reduce_sum_parts(const double *part, size_t nblocks, int width, double *sums);
/* |psi|^2 of a whole field in pf_wave_density's layout (pf_wave.c). */
void pf_grid_density_of(const pf_grid *g, pf_rep rep, const double complex *field, double *out);
/* Advances a row-major multi-index by one (last axis fastest), with carry. */
static inline void pf_index_next(const pf_grid *g, size_t *idx)
{
    for (int a = g->dim - 1; a >= 0; a--) {
        if (++idx[a] < g->n[a]) return;
        idx[a] = 0;
    }
}

/* Distributed grids (pf_dist.c, pf_dist.h): the hooks the shared core
 * functions call when g->dist is set.  attach makes the slab layout and the
 * FFTW-MPI plans (collective) when the context asks for it and MPI runs;
 * local_values is the sample count one rank stores; wave_to transforms
 * between the slab and the transposed slab (S = DFT / N as on one process);
 * fly is the exact flight with the phase pass on the transposed layout;
 * fill samples a function at this rank's points; reduce is
 * pf_reduce_blocks over the global array in global block order (begin/end
 * are local offsets, idx the global multi-index of begin in the layout of
 * rep: (i0, i1, i2) in position, (i1, i0, i2) in momentum); axis_moments is
 * pf_reduce_axis_moments of the wave in its representation; band_sum and
 * marginals serve the grid guards (pf_guard.c). */
pf_status pf_dist_grid_attach(pf_grid *g);
/* Registers FFTW-MPI's planners (fftw_mpi_init) once MPI runs and the
 * context distributes: FFTW cannot import wisdom that names MPI plans before
 * they are registered, so pf_context_prepare_planner calls this before it
 * reads the wisdom file.  Registering them changes FFTW's planner signature,
 * which FFTW checks on import, so from then on the process reads and writes
 * the distributed wisdom file (pf_dist_planners_registered). */
void pf_dist_planner_ready(int distribute);
int pf_dist_planners_registered(void);
/* One sample of a wave's storage in representation rep (pf_dist_ops.c):
 * idx is the global multi-index in storage order (momentum: FFT order).
 * On a distributed grid reading is collective (the rank holding the sample
 * broadcasts it: every rank gets the same bits) and writing touches only
 * the holder's slab; on a whole grid both index the array. */
double complex pf_dist_stored_value(const pf_grid *g, pf_rep rep, const double complex *store, const size_t *idx);
void pf_dist_store_value(const pf_grid *g, pf_rep rep, double complex *store, const size_t *idx, double complex v);
/* The momentum-space half of pf_wave_fall on a distributed wave
 * (pf_dist_ops.c): to momentum (the forward transform's 1/N joined to the
 * pass), times the per-axis tables on the transposed slab, and back to
 * position.  Collective. */
pf_status pf_dist_momentum_pass(pf_wave *w, const double complex *const *tables);
/* Samples one rank will hold of a grid about to be made (total when it
 * will not be distributed), for the memory cap check before making it. */
size_t pf_dist_planned_values(const pf_context *ctx, int dim, const size_t *points, size_t total);
void pf_dist_grid_release(pf_grid *g);
size_t pf_dist_local_values(const pf_grid *g);
pf_status pf_dist_wave_to(pf_wave *w, pf_rep rep);
pf_status pf_dist_fly(pf_wave *w, double t, double tau);
pf_status pf_dist_fill(pf_wave *w, pf_rep rep, pf_sample_fn fn, void *user);
void pf_dist_reduce(pf_grid *g, pf_rep layout, int width, pf_reduce_block_fn block, void *user, double *sums);
pf_status pf_dist_axis_moments(pf_wave *w, const double *const *weights, double *sums);
double pf_dist_band_sum(const pf_wave *w, int a);
pf_status pf_dist_marginals(const pf_wave *w, double **marg);
/* Long flights on a split grid (pf_dist_long.c): the unnormalised FFT of
 * position slab data in place with the slab layout on both sides (sign -1
 * forward, +1 backward; FFTW-MPI plans without transposed output, made on
 * first use; collective), and the marginals' per-rank partial sums
 * combined in rank order into the same bits on every rank (collective). */
pf_status pf_dist_fft_natural(pf_grid *g, double complex *data, int sign);
pf_status pf_dist_combine_marginals(const pf_grid *g, double **marg);
/* The forward and backward FFTW-MPI plans of g's point counts (transposed:
 * TRANSPOSED_OUT forward and TRANSPOSED_IN backward; else the slab layout
 * on both sides), from ctx's cache or planned now (collective; every rank
 * makes the same calls, so every rank's cache holds the same keys).  The
 * plans belong to the cache, which pf_dist_plans_free destroys with the
 * context: a plan depends on the counts, never on a grid's spacing, so the
 * grids a scaled flight or an expansion makes at each stage plan once. */
pf_status pf_dist_plans(pf_grid *g, int transposed, void *fwd, void *bwd);
/* PF_ESTATE unless the grids a flight makes now from g (and target, when
 * given) are split over the ranks exactly when g is: pf.setup{distribute}
 * may change between a wave's making and its scaled flight or expansion,
 * and a slab cannot move onto a whole grid (or back) in place. */
pf_status pf_dist_check_regrid(const pf_grid *g, const pf_grid *target, const char *what);
void pf_dist_plans_free(pf_context *ctx);
/* For the split step (pf_splitstep.c): samples this rank holds in position
 * (g->total when whole); min / max of *lo, *hi and max of flag over all
 * ranks (no-ops when whole; min and max are exact, so the step chosen
 * from them is the single process's); the kinetic sub-step on the
 * transposed slab: forward transform, times scale T0[i] T1[j] T2[k],
 * backward transform. */
size_t pf_dist_position_values(const pf_grid *g);
/* pf_reduce_axis_moments of local data z stored in the layout of rep, and
 * the unscaled forward transform of local position data (for relax's
 * energy; the result is in the transposed momentum layout). */
pf_status pf_dist_sums(pf_grid *g, const double complex *z, pf_rep rep, const double *const *weights, double *sums);
void pf_dist_forward(pf_grid *g, double complex *data);
/* Masks and imprints (pf_ops.c): samples this rank stores in rep (g->total
 * when whole); fn sampled at this rank's points of rep (position slab or
 * transposed momentum slab) into out; data *= field pointwise, returning the
 * removed sum of |data|^2 (1 - |field|^2) in the global block order of rep
 * when want_removed (pf_kernel_field_mask's bits in position). */
size_t pf_dist_rep_values(const pf_grid *g, pf_rep rep);
pf_status pf_dist_sample(pf_grid *g, pf_rep rep, pf_sample_fn fn, void *user, double complex *out);
double pf_dist_field_mask(pf_grid *g, pf_rep rep, double complex *data, const double complex *field, int want_removed);
void pf_dist_minmax(const pf_grid *g, double *lo, double *hi);
int pf_dist_any(const pf_grid *g, int flag);
void pf_dist_kinetic(pf_grid *g, double complex *data, double complex *const *tables, double scale);
/* Measurements and momentum operations on a split grid: the backward
 * (TRANSPOSED_IN) transform of a transposed momentum slab, in place; a wave
 * brought to the transposed momentum slab with the forward transform's 1/N
 * still owed (*scale = 1/N; 1 when it was in momentum already), as
 * to_momentum_unscaled does on one process; data *= scale T0[i] T1[j] T2[k]
 * on the transposed slab (a NULL table counts as 1); and the density of the
 * whole wave (pf_wave_density's bits) on every rank: gathered in global
 * order onto rank 0 and broadcast. */
void pf_dist_backward(pf_grid *g, double complex *data);
pf_status pf_dist_momentum_unscaled(pf_wave *w, double *scale);
void pf_dist_momentum_multiply(pf_grid *g, double complex *data, const double complex *const *tables, double scale);
pf_status pf_dist_shared_density(pf_wave *w, pf_rep rep, double *out);
/* data *= T0[i] T1[j] T2[k] (NULL tables count as 1; the single process's
 * product per point) on the transposed momentum slab, returning the removed
 * sum of |data|^2 (1 - |T|^2) in the global block order of that layout. */
double pf_dist_momentum_axis_mask(pf_grid *g, double complex *data, const double complex *const *tables);
/* Figures the single process computes from the whole momentum (or
 * position) array, for a split wave: gathers the wave in representation rep
 * onto rank 0 (pf_wave_gather: the single process's storage order), runs
 * fn there on a view of the whole wave (the grid held whole while fn runs),
 * and broadcasts its status and the n doubles of out to every rank.  A wave
 * held whole goes straight to fn.  Collective. */
typedef pf_status (*pf_dist_whole_fn)(pf_wave *w, void *user, double *out);
pf_status pf_dist_on_whole(pf_wave *w, pf_rep rep, pf_dist_whole_fn fn, void *user, double *out, size_t n);
/* The same for measurements that change the state (pf_collapse.c): fn
 * runs on rank 0 on the whole position-representation wave and may change
 * its samples; the result is scattered back to the ranks' slabs, the
 * status, out and the state bytes of the random generator fn drew from
 * (state, state_bytes; NULL when none) are broadcast, so every rank's
 * generator stays in step.  fn must not log a step: every rank logs it
 * afterwards, so the step logs and the guards stay alike on all ranks. */
pf_status pf_dist_on_whole_update(pf_wave *w, pf_dist_whole_fn fn, void *user, double *out, size_t n, void *state,
                                  size_t state_bytes);
/* The flight phase tables of g for tau (pf_flight.c). */
void pf_flight_fill_tables(pf_grid *g, double tau);

#define PF_OMP_THREADS(ctx) ((ctx)->threads)

#endif
