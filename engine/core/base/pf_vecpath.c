/* pf_vecpath.c - which vector path the pointwise kernels take (pf_vecpath.h). */
#include <stdlib.h>
#include <string.h>
#include "pf_vecpath.h"

/* The vector paths are built by GCC on x86-64 only: clang builds (the
 * sanitizer and fuzzing builds) and other processors take the plain path. */
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#define HAVE_X86_PATHS 1
#endif

const char *pf_vector_path_name(pf_vector_path p)
{
    switch (p) {
    case PF_PATH_AVX2: return "avx2";
    case PF_PATH_AVX512: return "avx512";
    default: return "plain";
    }
}

int pf_vector_path_runs(pf_vector_path p)
{
    if (p == PF_PATH_PLAIN) return 1;
#ifdef HAVE_X86_PATHS
    __builtin_cpu_init();
    if (p == PF_PATH_AVX2) return __builtin_cpu_supports("avx2");
    if (p == PF_PATH_AVX512) return __builtin_cpu_supports("avx512f");
#endif
    return 0;
}

static pf_vector_path choose(void)
{
    pf_vector_path widest = PF_PATH_PLAIN;
    for (int p = PF_PATH_COUNT - 1; p > PF_PATH_PLAIN; p--)
        if (pf_vector_path_runs((pf_vector_path)p)) {
            widest = (pf_vector_path)p;
            break;
        }
    const char *want = getenv("PSIFLIGHT_PHASE_KERNEL");
    if (!want) return widest;
    for (int p = PF_PATH_PLAIN; p < (int)widest; p++)
        if (strcmp(want, pf_vector_path_name((pf_vector_path)p)) == 0) return (pf_vector_path)p;
    return widest; /* the widest named, or a path this processor lacks */
}

/* Chosen before main (a load-time constructor, as the loader resolves
 * target clones), so threads never race on the first choice. */
static pf_vector_path chosen = PF_PATH_PLAIN;

__attribute__((constructor)) static void choose_at_load(void) { chosen = choose(); }

pf_vector_path pf_vector_path_chosen(void) { return chosen; }
