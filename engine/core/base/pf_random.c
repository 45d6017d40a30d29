/* pf_random.c - PCG64 with splitmix64 seeding, and the uniform, normal and
 * Poisson deviates the detector models and samplers draw from. */
#include <math.h>
#include "pf_constants.h"
#include "pf_random.h"

/* The 128-bit LCG multiplier of PCG64 (pcg_random.hpp, PCG_128BIT_CONSTANT
 * 2549297995355413924, 4865540595714422341). */
#define PCG_MULT (((unsigned __int128)0x2360ED051FC65DA4ull << 64) | 0x4385DF649FCCF645ull)

uint64_t pf_rng_mix64(uint64_t z)
{
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
    return z ^ (z >> 31);
}

static uint64_t splitmix64_next(uint64_t *x)
{
    *x += 0x9E3779B97F4A7C15ull;
    return pf_rng_mix64(*x);
}

static void step(pf_rng *r) { r->state = r->state * PCG_MULT + r->inc; }

void pf_rng_seed(pf_rng *r, uint64_t seed, uint64_t stream)
{
    uint64_t x = seed ^ pf_rng_mix64(stream + 1);
    uint64_t w[4];
    for (int i = 0; i < 4; i++) w[i] = splitmix64_next(&x);
    unsigned __int128 init = ((unsigned __int128)w[0] << 64) | w[1];
    unsigned __int128 seq = ((unsigned __int128)w[2] << 64) | w[3];
    r->state = 0;
    r->inc = (seq << 1) | 1u;
    step(r);
    r->state += init;
    step(r);
    r->has_spare = 0;
    r->spare = 0;
}

void pf_rng_set_raw(pf_rng *r, unsigned __int128 state, unsigned __int128 inc)
{
    r->state = state;
    r->inc = inc | 1u;
    r->has_spare = 0;
    r->spare = 0;
}

uint64_t pf_rng_next(pf_rng *r)
{
    step(r);
    uint64_t hi = (uint64_t)(r->state >> 64), lo = (uint64_t)r->state;
    uint64_t x = hi ^ lo;
    unsigned rot = (unsigned)(r->state >> 122);
    return (x >> rot) | (x << ((64u - rot) & 63u));
}

double pf_rng_uniform(pf_rng *r) { return (double)(pf_rng_next(r) >> 11) * 0x1.0p-53; }

double pf_rng_uniform_open(pf_rng *r) { return ((double)(pf_rng_next(r) >> 11) + 0.5) * 0x1.0p-53; }

double pf_rng_normal(pf_rng *r)
{
    if (r->has_spare) {
        r->has_spare = 0;
        return r->spare;
    }
    double u = pf_rng_uniform_open(r), v = pf_rng_uniform(r);
    double rad = sqrt(-2.0 * log(u));
    r->spare = rad * sin(PF_TWO_PI * v);
    r->has_spare = 1;
    return rad * cos(PF_TWO_PI * v);
}

/* Knuth, TAOCP vol. 2, 3.4.1: count uniforms until their product drops
 * below exp(-mean).  Cost grows with the mean, so only for small means. */
static double poisson_small(pf_rng *r, double mean)
{
    double limit = exp(-mean), prod = pf_rng_uniform(r);
    double k = 0;
    while (prod > limit) {
        k += 1;
        prod *= pf_rng_uniform(r);
    }
    return k;
}

/* W. Hormann, "The transformed rejection method for generating Poisson random
 * variables", Insurance: Mathematics and Economics 12 (1993) 39-45, algorithm
 * PTRS, with the constants of that paper. */
static double poisson_ptrs(pf_rng *r, double mean)
{
    double slam = sqrt(mean), loglam = log(mean);
    double b = 0.931 + 2.53 * slam;
    double a = -0.059 + 0.02483 * b;
    double invalpha = 1.1239 + 1.1328 / (b - 3.4);
    double vr = 0.9277 - 3.6224 / (b - 2);
    for (;;) {
        double u = pf_rng_uniform(r) - 0.5;
        double v = pf_rng_uniform(r);
        double us = 0.5 - fabs(u);
        double k = floor((2 * a / us + b) * u + mean + 0.43);
        if (us >= 0.07 && v <= vr) return k;
        if (k < 0 || (us < 0.013 && v > us)) continue;
        if (log(v) + log(invalpha) - log(a / (us * us) + b) <= -mean + k * loglam - lgamma(k + 1)) return k;
    }
}

double pf_rng_poisson(pf_rng *r, double mean)
{
    if (!(mean > 0)) return 0;
    return mean < 10 ? poisson_small(r, mean) : poisson_ptrs(r, mean);
}
