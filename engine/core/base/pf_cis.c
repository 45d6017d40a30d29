/* pf_cis.c - vectorised exp(-i phi) for blocks of phases (see pf_cis.h). */
#include <math.h>
#include "pf_cis.h"
#include "pf_vecpath.h"

/* pi/2 in three parts of at most 26, 26 and 53 bits (digits of pi split
 * exactly): for |n| < 2^27, n * PIO2_1 and n * PIO2_2 are exact, so the
 * reduced argument carries no cancellation error beyond the third part's
 * rounding. */
#define PIO2_1 0x1.921fb58000000p+0
#define PIO2_2 (-0x1.dde9740000000p-27)
#define PIO2_3 0x1.1a62633145c07p-54
#define TWO_OVER_PI 0x1.45f306dc9c883p-1
/* Adding and subtracting 1.5 * 2^52 rounds a double below 2^51 in
 * magnitude to the nearest integer, in plain arithmetic that vectorises. */
#define ROUNDER 0x1.8p52

/* Taylor coefficients (-1)^k / (2k+1)! and (-1)^k / (2k)!: on |r| <= pi/4
 * the first omitted terms are below 5e-17 of the result. */
#define S3 (-1.0 / 6.0)
#define S5 (1.0 / 120.0)
#define S7 (-1.0 / 5040.0)
#define S9 (1.0 / 362880.0)
#define S11 (-1.0 / 39916800.0)
#define S13 (1.0 / 6227020800.0)
#define S15 (-1.0 / 1307674368000.0)
#define C2 (-0.5)
#define C4 (1.0 / 24.0)
#define C6 (-1.0 / 720.0)
#define C8 (1.0 / 40320.0)
#define C10 (-1.0 / 3628800.0)
#define C12 (1.0 / 479001600.0)
#define C14 (-1.0 / 87178291200.0)
#define C16 (1.0 / 20922789888000.0)

#define BLOCK 256

/* c[i] = cos phase[i], s[i] = sin phase[i] for i < n <= BLOCK. */
/* Compiled once per vector path (pf_vecpath.h) from the same source: the
 * same operations in the same order on each (no fused multiply-add:
 * contraction is off), so every path gives the same bits
 * (tests/unit/base/test_vector_paths.c). */
#if defined(__clang__)
#pragma STDC FP_CONTRACT OFF
#define NO_CONTRACT
#define SIMD_MAX
#else
#define NO_CONTRACT __attribute__((optimize("fp-contract=off")))
#define SIMD_MAX _Pragma("omp simd reduction(max : largest)")
#endif
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#define HAVE_X86_PATHS 1
#endif

static inline __attribute__((always_inline)) void cos_sin(const double *restrict phase, double *restrict c,
                                                         double *restrict s, size_t n)
{
    double largest = 0;
    SIMD_MAX
    for (size_t i = 0; i < n; i++) {
        double x = phase[i];
        double q = (x * TWO_OVER_PI + ROUNDER) - ROUNDER; /* nearest multiple of pi/2 */
        double r = ((x - q * PIO2_1) - q * PIO2_2) - q * PIO2_3;
        double r2 = r * r;
        double sr = r + r * r2 * (S3 + r2 * (S5 + r2 * (S7 + r2 * (S9 + r2 * (S11 + r2 * (S13 + r2 * S15))))));
        double cr = 1.0 + r2 * (C2 + r2 * (C4 + r2 * (C6 + r2 * (C8 + r2 * (C10 + r2 * (C12 + r2 * (C14 + r2 * C16)))))));
        /* Quadrant q mod 4 as m = q - 4 round(q / 4), in {-2, ..., 2}:
         * quadrants 1 and 3 (m = +-1) swap cos and sin, 1 and 2 negate the
         * cosine, 2 and 3 the sine. */
        double m = q - 4.0 * ((q * 0.25 + ROUNDER) - ROUNDER);
        double am = fabs(m);
        double a = am == 1.0 ? sr : cr, b = am == 1.0 ? cr : sr;
        c[i] = (m == 1.0 || am == 2.0) ? -a : a;
        s[i] = (am == 2.0 || m == -1.0) ? -b : b;
        double ax = fabs(x);
        largest = ax > largest ? ax : largest;
    }
    int slow = !(largest <= PF_CIS_FAST_LIMIT);
    if (slow)
        for (size_t i = 0; i < n; i++)
            if (!(fabs(phase[i]) <= PF_CIS_FAST_LIMIT)) {
                c[i] = cos(phase[i]);
                s[i] = sin(phase[i]);
            }
}

/* out[i] = exp(-i phase[i]) (multiply 0) or out[i] *= exp(-i phase[i])
 * (multiply 1), a block of phases at a time; inlined with a constant
 * multiply, so each entry point keeps only its own loop. */
static inline __attribute__((always_inline)) void cis_apply(const double *phase, double complex *out, size_t n,
                                                           int multiply)
{
    double c[BLOCK], s[BLOCK];
    for (size_t b = 0; b < n; b += BLOCK) {
        size_t m = n - b < BLOCK ? n - b : BLOCK;
        cos_sin(phase + b, c, s, m);
        double *z = (double *)(out + b);
        if (!multiply) {
            for (size_t i = 0; i < m; i++) {
                z[2 * i] = c[i];
                z[2 * i + 1] = -s[i];
            }
            continue;
        }
        /* (x + i y)(c - i s) = (x c + y s) + i (y c - x s) */
        for (size_t i = 0; i < m; i++) {
            double x = z[2 * i], y = z[2 * i + 1];
            z[2 * i] = x * c[i] + y * s[i];
            z[2 * i + 1] = y * c[i] - x * s[i];
        }
    }
}

/* One copy of each entry point per path; the inline bodies above are
 * compiled anew inside each, for its instruction set. */
#define PATH_COPIES(SUFFIX, TARGET)                                                                               \
    TARGET NO_CONTRACT static void cis_minus_##SUFFIX(const double *phase, double complex *out, size_t n)          \
    {                                                                                                             \
        cis_apply(phase, out, n, 0);                                                                              \
    }                                                                                                             \
    TARGET NO_CONTRACT static void cis_multiply_##SUFFIX(double complex *d, const double *phase, size_t n)        \
    {                                                                                                             \
        cis_apply(phase, d, n, 1);                                                                                \
    }

PATH_COPIES(plain, )
#ifdef HAVE_X86_PATHS
PATH_COPIES(avx2, __attribute__((target("avx2"))))
PATH_COPIES(avx512, __attribute__((target("avx512f"))))
#endif

typedef void (*minus_fn)(const double *, double complex *, size_t);
typedef void (*multiply_fn)(double complex *, const double *, size_t);

static minus_fn minus_on(pf_vector_path p)
{
#ifdef HAVE_X86_PATHS
    if (p == PF_PATH_AVX512) return cis_minus_avx512;
    if (p == PF_PATH_AVX2) return cis_minus_avx2;
#endif
    (void)p;
    return cis_minus_plain;
}

static multiply_fn multiply_on(pf_vector_path p)
{
#ifdef HAVE_X86_PATHS
    if (p == PF_PATH_AVX512) return cis_multiply_avx512;
    if (p == PF_PATH_AVX2) return cis_multiply_avx2;
#endif
    (void)p;
    return cis_multiply_plain;
}

void pf_cis_minus(const double *phase, double complex *out, size_t n) { minus_on(pf_vector_path_chosen())(phase, out, n); }

void pf_cis_multiply(double complex *d, const double *phase, size_t n)
{
    multiply_on(pf_vector_path_chosen())(d, phase, n);
}

int pf_cis_minus_on(pf_vector_path p, const double *phase, double complex *out, size_t n)
{
    if (!pf_vector_path_runs(p)) return 0;
    minus_on(p)(phase, out, n);
    return 1;
}

int pf_cis_multiply_on(pf_vector_path p, double complex *d, const double *phase, size_t n)
{
    if (!pf_vector_path_runs(p)) return 0;
    multiply_on(p)(d, phase, n);
    return 1;
}
