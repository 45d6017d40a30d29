/* pf_random.h - the engine's random generator: PCG64 (O'Neill 2014, the
 * "XSL RR 128/64" output function on a 128-bit linear congruential state, the
 * same variant numpy calls PCG64), seeded through splitmix64 (Steele, Lea and
 * Flood 2014).
 *
 * A generator is a small value owned by its caller (the binding keeps one per
 * Lua state), never a global.  Seeding rule: a splitmix64 sequence started
 * at seed ^ mix64(stream + 1) gives four 64-bit words; the first two form the
 * 128-bit initial state, the last two the sequence selector, and the PCG
 * reference seeding (state = 0, inc = 2 seq + 1, step, state += init, step)
 * is applied.  Different streams of one seed give independent sequences. */
#ifndef PF_RANDOM_H
#define PF_RANDOM_H

#include <stdint.h>

typedef struct pf_rng {
    unsigned __int128 state, inc;
    int has_spare;      /* Box-Muller makes normals in pairs */
    double spare;
} pf_rng;

/* Seeds r from a base seed and a stream number (any values). */
void pf_rng_seed(pf_rng *r, uint64_t seed, uint64_t stream);
/* Sets the raw PCG state and increment (inc is forced odd), as numpy's
 * PCG64.state does; for tests against the reference implementation. */
void pf_rng_set_raw(pf_rng *r, unsigned __int128 state, unsigned __int128 inc);
/* Next 64 random bits: advance the LCG, then output XSL RR of the new state. */
uint64_t pf_rng_next(pf_rng *r);
/* Uniform double in [0, 1) with 53 random bits. */
double pf_rng_uniform(pf_rng *r);
/* Uniform double in (0, 1), for logarithms. */
double pf_rng_uniform_open(pf_rng *r);
/* Standard normal deviate (Box-Muller transform, both values used). */
double pf_rng_normal(pf_rng *r);
/* Poisson deviate of the given mean (0 <= mean <= 1e15): Knuth's product of
 * uniforms below mean 10, Hormann's transformed rejection PTRS (1993) above. */
double pf_rng_poisson(pf_rng *r, double mean);
/* splitmix64 finaliser (mixes one word; exposed for deriving sub-seeds). */
uint64_t pf_rng_mix64(uint64_t x);

#endif
