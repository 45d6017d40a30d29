/* pf_splitstep.h - flight in an external potential V(x) or V(x, t), with an
 * optional mean-field term g |psi|^2, by the split-step Fourier method.
 *
 * One step of size h is the symmetric (Strang) splitting
 *   exp(-i V h / 2 hbar) exp(-i T h / hbar) exp(-i V h / 2 hbar),
 * with the kinetic factor applied exactly in momentum space.  Its local
 * error is O(h^3), so the error after a fixed time falls as h^2.  The
 * fourth-order option composes three Strang steps of sizes w1 h, w0 h, w1 h
 * with w1 = 1 / (2 - 2^(1/3)), w0 = -2^(1/3) / (2 - 2^(1/3)) (Yoshida 1990;
 * the same scheme as Forest and Ruth 1990): error O(h^4) at fixed time, for
 * three times the transforms per step.  Adjacent potential half-steps are
 * merged, so a Strang step costs one forward and one backward FFT, one
 * kinetic pass and one potential pass.
 *
 * The mean-field sub-step exp(-i (V + g |psi|^2) h / hbar) is exact because a
 * phase factor leaves |psi| unchanged, so both orders carry over to the
 * Gross-Pitaevskii form.  g is in J m^d for psi normalised to 1 (for N atoms
 * with the one-atom coupling g1, pass g = N g1).
 *
 * Cost notes: a static potential without mean field is exponentiated once per
 * call (one or two full-grid complex arrays, formed by the first pass that
 * uses each), or once for many calls with a pf_evolve_cache; with g, or with V(x, t), the exponential is evaluated per
 * point at each potential sub-step (vectorised, pf_cis.h), and V(x, t) is
 * refilled by its callback once per distinct sample time (one per Strang
 * step, three per fourth-order step).  Kinetic tables are kept on the grid
 * for the last two step sizes.  On 2D/3D grids a kinetic sub-step and the
 * potential sub-step after it cost two sweeps over memory (chunks between
 * trailing-axes transforms, column blocks between axis-0 transforms; see
 * pf_fused_chunks), less than FFTW's own forward and backward pair. */
#ifndef PF_SPLITSTEP_H
#define PF_SPLITSTEP_H

#include <stddef.h>
#include "pf_constants.h"
#include "pf_wave.h"

/* Fills V (J) at time t (the wave's clock, s) for every grid point in
 * natural row-major order (pf_grid_total values).  Returns 0, or non-zero to
 * abort the evolution with PF_ECALLBACK. */
typedef int (*pf_potential_fn)(void *user, double t, double *V);

/* Exponentials of a static potential kept between evolve calls, so a
 * protocol that evolves in many short calls (to sample observables on the
 * way) pays the per-point exponential once.  Valid for the same potential
 * array (pointer), step and order; the owner must clear it if it changes the
 * array's values, and must keep the context alive while it holds arrays. */
typedef struct pf_evolve_cache {
    pf_context *ctx;           /* context the arrays are accounted to */
    const double *potential;   /* the V they were made from */
    double h;                  /* step they were made for */
    int order;
    /* The potential factors by kind of sub-step: [0] the end half step
     * e1 = exp(-i V h c1/2 / hbar), [1] the merged boundary of two steps
     * e1 e1, [2] (fourth order) the inner boundary e1 e2, e2 = exp(-i V h
     * c0/2 / hbar); products kept so each pass reads one table. */
    double complex *e[3];
    /* Bit k: e[k] holds its factor.  Each is formed by the first pass of
     * an evolve call that uses it, so a call of one step leaves e[1]
     * unformed until a longer call needs it. */
    unsigned formed;
    size_t bytes;
    /* The potential whose values were checked finite (also with a mean
     * field, where e1, e2 are not used): later calls skip the check. */
    const double *checked;
} pf_evolve_cache;

void pf_evolve_cache_init(pf_evolve_cache *c);
/* Frees the arrays (harmless when empty or cleared twice). */
void pf_evolve_cache_clear(pf_evolve_cache *c);

typedef struct pf_evolve_spec {
    const double *potential;   /* static V(x) in J, natural order; NULL: none */
    pf_potential_fn varying;   /* V(x, t), used instead of potential when set */
    void *user;                /* passed to varying */
    double dt;                 /* step (s); <= 0 picks the default (below) */
    int order;                 /* 2 (Strang) or 4 (Yoshida composition) */
    double g;                  /* mean-field coefficient (J m^d); 0: linear */
    pf_evolve_cache *cache;    /* optional, for a static potential (its exponentials without g) */
} pf_evolve_spec;

typedef struct pf_evolve_info {
    size_t steps;              /* number of steps taken */
    double dt;                 /* step actually used (t / steps) */
    double phase_per_step;     /* (max V_eff - min V_eff) |dt| / hbar at the start, over
                                  the occupied region (rad) */
} pf_evolve_info;

/* Largest potential phase per step (rad) before a warning is emitted, and the
 * phase the default step aims at. */
#define PF_EVOLVE_PHASE_WARN PF_PI
#define PF_EVOLVE_PHASE_DEFAULT 0.5

/* Evolves for t seconds (finite).  Steps: n = ceil(|t| / dt), h = t / n.  The
 * default dt makes the potential phase per step (max V_eff - min V_eff) h /
 * hbar equal to PF_EVOLVE_PHASE_DEFAULT, with V_eff = V + g max|psi|^2 at the
 * start and the range taken over the points the state occupies (density at
 * least 1e-12 of its peak), so a trap's values at empty grid edges do not
 * shrink the step (one step for a potential flat there).  Warns when that phase exceeds
 * PF_EVOLVE_PHASE_WARN.  Leaves the wave in position representation, advances
 * the clock and records one "evolve" step.  Fails (state unchanged) on a bad
 * order, a non-finite or oversized step count or a non-finite static
 * potential; a failing V(x, t) callback stops the evolution part-way
 * (PF_ECALLBACK, the clock is not advanced).  info may be NULL. */
pf_status pf_wave_evolve(pf_wave *w, double t, const pf_evolve_spec *spec, pf_evolve_info *info);

/* The same evolution done as separate steps (a full forward and backward
 * transform per kinetic sub-step, a pass per potential sub-step), which
 * pf_wave_evolve fuses into fewer sweeps over memory on 2D/3D grids: the
 * reference the fused step is tested and benchmarked against.  Results agree
 * to rounding. */
pf_status pf_wave_evolve_separate(pf_wave *w, double t, const pf_evolve_spec *spec, pf_evolve_info *info);

#endif
