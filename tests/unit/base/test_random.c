/* test_random.c - the PCG64 generator against numpy's reference
 * implementation, seeding reproducibility, and the normal and Poisson
 * deviates against GSL's distribution functions (chi-square at 5%). */
#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_sf_gamma.h>
#include <stdlib.h>
#include "pft.h"
#include "pf_random.h"

/* Reference: numpy 1.24.2 (Debian python3-numpy), generated with
 *   bg = numpy.random.PCG64(); bg.state = {'bit_generator': 'PCG64',
 *     'state': {'state': 0x0123456789abcdeffedcba9876543210,
 *               'inc': 0x5851f42d4c957f2d14057b7ef767814f}, 'has_uint32': 0, 'uinteger': 0}
 *   bg.random_raw(5) */
static void pcg64_matches_numpy(void **state)
{
    (void)state;
    pf_rng r;
    unsigned __int128 st = ((unsigned __int128)0x0123456789abcdefull << 64) | 0xfedcba9876543210ull;
    unsigned __int128 inc = ((unsigned __int128)0x5851f42d4c957f2dull << 64) | 0x14057b7ef767814full;
    pf_rng_set_raw(&r, st, inc);
    const uint64_t want[5] = {0x13c49fecdee35f71ull, 0x4ee9574cc31f57d2ull, 0x718b9867b2c7ef05ull,
                              0xa9b3898995846d5cull, 0x48d690c435a20381ull};
    for (int i = 0; i < 5; i++) assert_true(pf_rng_next(&r) == want[i]);
    printf("ok PCG64 raw outputs equal numpy's PCG64  [numpy 1.24 PCG64.random_raw]\n");
}

static void seeding_is_reproducible(void **state)
{
    (void)state;
    pf_rng a, b, c;
    pf_rng_seed(&a, 42, 0);
    pf_rng_seed(&b, 42, 0);
    pf_rng_seed(&c, 42, 1);
    int same = 1, differ = 0;
    for (int i = 0; i < 1000; i++) {
        uint64_t x = pf_rng_next(&a), y = pf_rng_next(&b), z = pf_rng_next(&c);
        same &= x == y;
        differ += x != z;
    }
    assert_true(same);
    assert_true(differ > 990);
    printf("ok same seed same sequence, other stream differs  [determinism requirement]\n");
}

/* Chi-square of observed counts against expected ones; returns the p-value
 * from GSL's chi-square distribution (gsl_cdf_chisq_Q). */
static double chi2_p(const double *obs, const double *exp_, int bins, int constraints)
{
    double chi2 = 0;
    for (int i = 0; i < bins; i++) chi2 += (obs[i] - exp_[i]) * (obs[i] - exp_[i]) / exp_[i];
    return gsl_cdf_chisq_Q(chi2, bins - constraints);
}

static void normal_passes_chi_square(void **state)
{
    (void)state;
    pf_rng r;
    pf_rng_seed(&r, 7, 3);
    enum { N = 200000, B = 40 };
    double obs[B] = {0}, ex[B];
    double lo = -4, w = 8.0 / B;
    for (int i = 0; i < N; i++) {
        double z = pf_rng_normal(&r);
        int b = (int)floor((z - lo) / w);
        if (b < 0) b = 0;
        if (b >= B) b = B - 1;
        obs[b]++;
    }
    for (int b = 0; b < B; b++) {
        double a = b == 0 ? -INFINITY : lo + b * w, c = b == B - 1 ? INFINITY : lo + (b + 1) * w;
        ex[b] = N * (gsl_cdf_ugaussian_P(c) - gsl_cdf_ugaussian_P(a));
    }
    double p = chi2_p(obs, ex, B, 1);
    printf("ok normal deviates chi-square p = %.3f  [GSL gsl_cdf_ugaussian_P, gsl_cdf_chisq_Q]\n", p);
    assert_true(p > 0.05);
}

static void poisson_check(double mean, int bins_lo, int bins_hi)
{
    pf_rng r;
    pf_rng_seed(&r, 11, (uint64_t)mean);
    enum { N = 100000 };
    int B = bins_hi - bins_lo + 1;
    double *obs = calloc((size_t)B, sizeof *obs), *ex = calloc((size_t)B, sizeof *ex);
    for (int i = 0; i < N; i++) {
        double k = pf_rng_poisson(&r, mean);
        int b = (int)k - bins_lo;
        if (b < 0) b = 0;
        if (b >= B) b = B - 1;
        obs[b]++;
    }
    for (int b = 0; b < B; b++) {
        int k = bins_lo + b;
        if (b == 0) ex[b] = N * gsl_cdf_poisson_P((unsigned)k, mean);
        else if (b == B - 1) ex[b] = N * gsl_cdf_poisson_Q((unsigned)(k - 1), mean);
        else ex[b] = N * gsl_ran_poisson_pdf((unsigned)k, mean);
    }
    double p = chi2_p(obs, ex, B, 1);
    printf("ok Poisson mean %g chi-square p = %.3f  [GSL gsl_ran_poisson_pdf, gsl_cdf_chisq_Q]\n", mean, p);
    assert_true(p > 0.05);
    free(obs);
    free(ex);
}

static void poisson_passes_chi_square(void **state)
{
    (void)state;
    poisson_check(3.5, 0, 12);     /* Knuth branch */
    poisson_check(250.0, 200, 300); /* PTRS branch */
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(pcg64_matches_numpy),
        cmocka_unit_test(seeding_is_reproducible),
        cmocka_unit_test(normal_passes_chi_square),
        cmocka_unit_test(poisson_passes_chi_square),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
