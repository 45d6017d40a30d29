/* pf_levels.h - a wave function with internal levels: N labelled components
 * on one grid (one mass, one clock), each with its energy offset, and the
 * steps that act on all of them together: flights with common or per-level
 * uniform forces, two-level and Bragg pulses (pf_pulse.h), populations per
 * level and per momentum order, and Born events carrying their level.
 *
 * The levels object is a view: it borrows the component waves (the caller
 * owns them and keeps them alive while the object lives), as pf_mixture does,
 * so a binding can hand each component out as an ordinary wave.
 *
 * Two ways of carrying a uniform acceleration:
 *  - on the grid (the default): each level flies under its own acceleration
 *    with the exact uniform-force propagator (pf_wave_fall), so the grid must
 *    hold the momentum the force gives;
 *  - in the shared moving frame (pf_levels_new with moving = 1; pf_frame.h):
 *    every level keeps one frame position X and wave number K (its phase
 *    theta is the level's own).  The frame takes the common acceleration a_c,
 *    the mean of the levels' accelerations; each level's difference
 *    d_i = a_i - a_c acts on the grid.  In the frame the level's Hamiltonian
 *    is p^2/2m - m d_i.xi - m d_i.X(t): the grid part is pf_wave_fall's, the
 *    last term a number that adds (m/hbar) d_i.integral X dt to theta_i
 *    (exact).  A pulse couples the grid amplitudes with the laser phase
 *    phi + k_eff.X(t) - (theta_b - theta_a), so the Doppler shift of the
 *    frame velocity k_eff.V enters as a detuning and the frame's acceleration
 *    as a chirp -k_eff.a_c (derivation in docs/internal-states.md).
 *
 * Levels whose accelerations are not given fly freely (acceleration 0). */
#ifndef PF_LEVELS_H
#define PF_LEVELS_H

#include "pf_pulse.h"
#include "pf_random.h"
#include "pf_wave.h"

#define PF_LEVELS_MAX 8
#define PF_LEVELS_LABEL_MAX 32 /* bytes, with the terminating zero */

typedef struct pf_levels pf_levels;

/* Accelerations per level (m/s^2 per axis); has[i] = 0: none for level i. */
typedef struct pf_levels_forces {
    int has[PF_LEVELS_MAX];
    double accel[PF_LEVELS_MAX][PF_MAX_DIM];
} pf_levels_forces;

/* Makes a levels object over count (2 .. PF_LEVELS_MAX) borrowed waves with
 * distinct labels (1 .. PF_LEVELS_LABEL_MAX - 1 bytes) and energies (J,
 * finite; NULL: all 0).  The waves must be distinct and share one grid,
 * mass and clock.  moving = 0: forces on the grid, every wave's frame
 * unmoved; moving = 1: the shared moving frame, every wave with one frame
 * position and wave number.  Fails with PF_EINVAL naming the offending level. */
pf_status pf_levels_new(pf_context *ctx, int count, const char *const *labels, const double *energies,
                        pf_wave *const *waves, int moving, pf_levels **out);
/* Releases the object (not the waves).  NULL is harmless. */
void pf_levels_free(pf_levels *lv);

int pf_levels_count(const pf_levels *lv);
int pf_levels_moving(const pf_levels *lv);
const char *pf_levels_label(const pf_levels *lv, int i);
/* Index of a label, or -1. */
int pf_levels_find(const pf_levels *lv, const char *label);
double pf_levels_energy(const pf_levels *lv, int i);
pf_wave *pf_levels_wave(const pf_levels *lv, int i);
/* Labels joined by ", " into buf (for messages). */
void pf_levels_label_list(const pf_levels *lv, char *buf, size_t size);

/* Detuning (rad/s) of a field of angular frequency omega on the transition
 * from -> to: omega - (E_to - E_from) / hbar. */
double pf_levels_detuning(const pf_levels *lv, int from, int to, double omega);

/* Flies every level t seconds (finite) with its acceleration (forces NULL:
 * none), exactly.  Fails (PF_EINVAL) when the levels are no longer at one
 * time or (moving frame) no longer share one frame. */
pf_status pf_levels_fly(pf_levels *lv, double t, const pf_levels_forces *forces);

/* Two-level pulse between levels from and to (pf_pulse_two_level_moving:
 * chirp, forces during it, Strang slices; slices = 1 without forces and
 * chirp is the plain pulse); the other levels fly along for its duration
 * with their accelerations, so all clocks stay together. */
pf_status pf_levels_pulse(pf_levels *lv, int from, int to, const pf_pulse_shape *shape, const pf_pulse_light *light,
                          double chirp, const pf_levels_forces *forces, int slices);

/* Bragg pulse on level only (or every level: only = -1); the others fly
 * freely along.  Not in the moving frame with a moved frame (PF_EINVAL). */
pf_status pf_levels_bragg(pf_levels *lv, int only, const pf_pulse_shape *shape, const pf_pulse_light *light);

/* Probability in each level into out[count]; *total (may be NULL) their sum. */
pf_status pf_levels_populations(pf_levels *lv, double *out, double *total);

/* pf_wave_order_populations of every level: out[i * (2 nmax + 1) + n + nmax].
 * In the moving frame the orders are of the lab wave number (center is
 * referred to the lab, the frame's K taken into account along the kick). */
pf_status pf_levels_order_populations(pf_levels *lv, const double *kick, double center, int nmax, double *out);

/* n Born events over levels and positions (rep = PF_POSITION) or wave
 * numbers: each event picks a level with its population (one uniform draw
 * against the cumulative populations), then a point from that level's
 * density (pf_sampler_draw, jitter as there).  events receives n * (dim + 1)
 * numbers, event-major: dim lab coordinates, then the level index.  Serial,
 * so a seed gives the same events for any thread count.  Everything it
 * allocates is released before it returns, also on failure.  PF_EINVAL when
 * the levels hold no probability. */
pf_status pf_levels_sample(pf_levels *lv, pf_rep rep, size_t n, int jitter, pf_rng *rng, double *events);

#endif
