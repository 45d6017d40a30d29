/* pf_vecpath.h - the vector instruction path of the engine's own pointwise
 * kernels (the flight phase rows and segments in pf_flight.c, the
 * exponentials of pf_cis.c).
 *
 * Every path performs the same floating-point operations in the same order
 * and none fuses a multiply with an add, so all paths give the same bits:
 * results do not depend on the processor's vector width
 * (tests/unit/base/test_vector_paths.c).  The path is chosen once per process:
 * the widest the processor runs, or a lesser one named by the environment
 * variable PSIFLIGHT_PHASE_KERNEL (plain, avx2, avx512), so that every path
 * can be exercised on one machine. */
#ifndef PF_VECPATH_H
#define PF_VECPATH_H

typedef enum pf_vector_path {
    PF_PATH_PLAIN = 0, /* baseline x86-64 (SSE2) or any other processor */
    PF_PATH_AVX2 = 1,
    PF_PATH_AVX512 = 2,
    PF_PATH_COUNT = 3
} pf_vector_path;

/* The path the kernels take in this process (fixed at its first call). */
pf_vector_path pf_vector_path_chosen(void);

/* 1 when this build has the path and this processor can run it. */
int pf_vector_path_runs(pf_vector_path p);

/* "plain", "avx2", "avx512". */
const char *pf_vector_path_name(pf_vector_path p);

#endif
