/* test_vector_paths.c - the engine's own pointwise kernels give the same bits
 * on every vector path (pf_vecpath.h): plain C, AVX2 and AVX-512, whichever
 * this processor runs.
 *
 * Implementation checks (no physics claim: the paths are one computation):
 *  - each kernel called on each path directly (pf_cis_minus_on,
 *    pf_cis_multiply_on, pf_phase_kernel_on, pf_phase_segment_on) against
 *    the plain path, bit for bit, over awkward inputs and lengths that leave
 *    vector tails, and returning with the vector registers' upper halves
 *    clean;
 *  - whole computations through the process-wide choice: this program runs
 *    itself once per path with PSIFLIGHT_PHASE_KERNEL set (a 1D flight on
 *    segment tables, a 1D scaled flight with its evaluated chirps, a 2D
 *    fused flight, 2D fused split steps with mean field, a modulated and a
 *    static potential, and 1D split steps in a static potential) and the
 *    children's output bytes must be equal.
 * A path this processor cannot run is reported and skipped. */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include "pft.h"
#include "pf_cis.h"
#include "pf_flight.h"
#include "pf_internal.h"
#include "pf_longflight.h"
#include "pf_splitstep.h"
#include "pf_vecpath.h"

/* A reproducible sequence in [0, 1) (64-bit LCG, top 53 bits). */
static double next_unit(uint64_t *state)
{
    *state = *state * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(*state >> 11) * 0x1.0p-53;
}

#define PHASES 3001 /* odd, not a multiple of any vector width or block */

/* Phases of every size the engine meets (a potential sub-step, long-flight
 * chirps up to the fast limit, libm's range beyond it), multiples of pi/4
 * where the quadrant changes and their neighbours, negative zero. */
static void fill_phases(double *p)
{
    uint64_t st = 7;
    for (size_t i = 0; i < PHASES; i++) {
        double scale = (i % 3 == 0) ? 20.0 : (i % 3 == 1) ? 0.999 * PF_CIS_FAST_LIMIT : 3e9;
        p[i] = scale * (2 * next_unit(&st) - 1);
    }
    for (int k = -60; k <= 60; k++) {
        size_t i = (size_t)(3 * (k + 60) + 1);
        double x = k * (PF_PI / 4);
        p[i] = x;
        p[i + 1] = nextafter(x, INFINITY);
        p[i + 2] = nextafter(x, -INFINITY);
    }
    p[PHASES - 1] = -0.0;
}

static void cis_paths_agree(void **state)
{
    (void)state;
    double *p = malloc(PHASES * sizeof *p);
    double complex *ref = malloc(PHASES * sizeof *ref), *got = malloc(PHASES * sizeof *got);
    double complex *mref = malloc(PHASES * sizeof *mref), *mgot = malloc(PHASES * sizeof *mgot);
    assert_true(p && ref && got && mref && mgot);
    fill_phases(p);
    uint64_t st = 11;
    for (size_t i = 0; i < PHASES; i++) mref[i] = (next_unit(&st) - 0.5) + I * (next_unit(&st) - 0.5);
    double complex *start = malloc(PHASES * sizeof *start);
    assert_non_null(start);
    memcpy(start, mref, PHASES * sizeof *start);
    assert_true(pf_cis_minus_on(PF_PATH_PLAIN, p, ref, PHASES));
    assert_true(pf_cis_multiply_on(PF_PATH_PLAIN, mref, p, PHASES));
    for (int path = PF_PATH_AVX2; path < PF_PATH_COUNT; path++) {
        const char *name = pf_vector_path_name((pf_vector_path)path);
        /* every length up to 40 (the tails) and the whole set */
        for (size_t len = 1; len <= PHASES; len = len == PHASES ? PHASES + 1 : len < 40 ? len + 1 : PHASES) {
            memset(got, 0, PHASES * sizeof *got);
            if (!pf_cis_minus_on((pf_vector_path)path, p, got, len)) break;
            assert_memory_equal(got, ref, len * sizeof *got);
            memcpy(mgot, start, PHASES * sizeof *mgot);
            assert_true(pf_cis_multiply_on((pf_vector_path)path, mgot, p, len));
            assert_memory_equal(mgot, mref, len * sizeof *mgot);
            if (len == PHASES) printf("ok exp(-i phi) on the %s path: same bits as plain\n", name);
        }
        if (!pf_vector_path_runs((pf_vector_path)path)) printf("skip %s: this processor cannot run it\n", name);
    }
    free(p);
    free(ref);
    free(got);
    free(mref);
    free(mgot);
    free(start);
}

/* The flight phase row kernel, row *= q p, and the 1D segment kernel,
 * d *= a chirp b^s, on unit-modulus factors as the engine feeds them. */
static void phase_paths_agree(void **state)
{
    (void)state;
    enum { ROW = 1029 };
    double complex p[ROW], row0[ROW], ref[ROW], got[ROW];
    uint64_t st = 3;
    for (size_t j = 0; j < ROW; j++) {
        p[j] = cexp(I * 1e3 * next_unit(&st));
        row0[j] = (next_unit(&st) - 0.5) + I * (next_unit(&st) - 0.5);
    }
    const double complex q = 0.7 * cexp(I * 2.1);
    pf_phase_row_fn plain = pf_phase_kernel_on(PF_PATH_PLAIN);
    pf_phase_segment_fn plain_seg = pf_phase_segment_on(PF_PATH_PLAIN);
    assert_non_null(plain);
    assert_non_null(plain_seg);
    const double complex a = cexp(I * 0.37) / 4096.0, b = cexp(-I * 1.234567);
    double complex seg_ref[PF_PHASE_SEG], seg_got[PF_PHASE_SEG];
    memcpy(seg_ref, row0, sizeof seg_ref);
    plain_seg(seg_ref, p, a, b);
    for (int path = PF_PATH_AVX2; path < PF_PATH_COUNT; path++) {
        const char *name = pf_vector_path_name((pf_vector_path)path);
        pf_phase_row_fn k = pf_phase_kernel_on((pf_vector_path)path);
        pf_phase_segment_fn seg = pf_phase_segment_on((pf_vector_path)path);
        if (!k || !seg) {
            printf("skip %s: this processor cannot run it\n", name);
            continue;
        }
        for (size_t len = 1; len <= ROW; len = len == ROW ? ROW + 1 : len < 20 ? len + 1 : ROW) {
            memcpy(ref, row0, sizeof ref);
            memcpy(got, row0, sizeof got);
            plain((double *)ref, (const double *)p, creal(q), cimag(q), len);
            k((double *)got, (const double *)p, creal(q), cimag(q), len);
            assert_memory_equal(got, ref, sizeof got);
        }
        memcpy(seg_got, row0, sizeof seg_got);
        seg(seg_got, p, a, b);
        assert_memory_equal(seg_got, seg_ref, sizeof seg_got);
        printf("ok flight phase rows and segments on the %s path: same bits as plain\n", name);
    }
}

/* The vector kernels return with the upper halves of the vector registers
 * clean (vzeroupper).  Left dirty, every SSE-encoded instruction after
 * them - libm, FFTW's plain parts, the engine's own baseline loops - runs
 * slower: the phase row kernel once tail-called its plain tail without it,
 * and a 1D kinetic table of libm exponentials after it took 260 ms instead
 * of 10 (docs/performance.md).  Read from the processor's XINUSE bitmap
 * (XGETBV with ECX = 1, where CPUID leaf 0xD reports it): bit 2 is the
 * upper halves of ymm0-15, bit 6 those of zmm0-15. */
#if defined(__x86_64__) && defined(__GNUC__)
#include <cpuid.h>
static int upper_state_readable(void)
{
    unsigned a, b, c, d;
    return __get_cpuid_count(0xD, 1, &a, &b, &c, &d) && (a & 4u);
}

static unsigned long long upper_state(void)
{
    unsigned lo, hi;
    __asm__ volatile("xgetbv" : "=a"(lo), "=d"(hi) : "c"(1));
    return ((unsigned long long)hi << 32 | lo) & ((1ull << 2) | (1ull << 6));
}
#else
static int upper_state_readable(void) { return 0; }
static unsigned long long upper_state(void) { return 0; }
#endif

static void kernels_leave_upper_halves_clean(void **state)
{
    (void)state;
    if (!upper_state_readable()) {
        printf("skip: this processor does not report which register state is in use\n");
        return;
    }
    enum { N = 1029 };
    static double phase[N];
    static double complex p[N], row[N], out[N];
    for (size_t j = 0; j < N; j++) {
        phase[j] = 0.001 * (double)j;
        p[j] = cexp(-I * phase[j]);
        row[j] = 1.0;
    }
    for (int path = PF_PATH_AVX2; path < PF_PATH_COUNT; path++) {
        const char *name = pf_vector_path_name((pf_vector_path)path);
        pf_phase_row_fn k = pf_phase_kernel_on((pf_vector_path)path);
        pf_phase_segment_fn seg = pf_phase_segment_on((pf_vector_path)path);
        if (!k || !seg) {
            printf("skip %s: this processor cannot run it\n", name);
            continue;
        }
        /* lengths with and without a plain tail */
        for (size_t len = N - 3; len <= N; len++) {
            k((double *)row, (const double *)p, 1.0, 0.0, len);
            assert_int_equal(upper_state(), 0);
        }
        seg(row, p, p[1], p[2]);
        assert_int_equal(upper_state(), 0);
        assert_true(pf_cis_minus_on((pf_vector_path)path, phase, out, N));
        assert_int_equal(upper_state(), 0);
        assert_true(pf_cis_multiply_on((pf_vector_path)path, row, phase, N));
        assert_int_equal(upper_state(), 0);
        printf("ok the %s kernels return with clean upper register halves\n", name);
    }
}

/* ---- whole computations through the process-wide choice ---- */

static void emit(const pf_wave *w, FILE *out)
{
    size_t n = pf_grid_total(pf_wave_grid(w));
    assert_int_equal(fwrite(pf_wave_data_const(w), sizeof(double complex), n, out), n);
}

static int modulated(void *user, double t, double *out)
{
    const double *V = user;
    for (size_t i = 0; i < 64 * 48; i++) out[i] = (1.0 + 0.3 * sin(300.0 * t)) * V[i];
    return 0;
}

/* The child's work: every kernel reached through its real caller. */
static void compute_all(FILE *out)
{
    pf_context *ctx = pft_context();
    pf_context_set_warn_handler(ctx, pft_count_warning, NULL);
    /* 1D, 2^16 points: the flight phase on segment tables. */
    size_t n1 = (size_t)1 << 16;
    double span1 = 200e-6;
    pf_grid *g1 = pft_grid(ctx, 1, &n1, &span1, NULL);
    pft_gauss p1 = {.x0 = {5e-6}, .sigma = {4e-6}, .k0 = {3e6}};
    pf_wave *w1 = pft_gauss_wave(g1, pft_mass("87Rb"), &p1);
    pft_ok(pf_wave_fly(w1, 2e-3));
    pft_ok(pf_wave_to(w1, PF_POSITION));
    emit(w1, out);
    /* ... and a scaled flight of it (chirps from pf_cis). */
    pft_ok(pf_wave_fly_scaled(w1, 40e-3, NULL, NULL));
    emit(w1, out);
    /* 2D 64 x 48: the fused flight (phase rows in the column blocks) and
     * Strang steps with mean field and a modulated potential (pf_cis). */
    size_t n2[2] = {64, 48};
    double span2[2] = {40e-6, 30e-6};
    pf_grid *g2 = pft_grid(ctx, 2, n2, span2, NULL);
    pft_gauss p2 = {.x0 = {2e-6, -1e-6}, .sigma = {3e-6, 2e-6}, .k0 = {1e6, -2e6}};
    pf_wave *w2 = pft_gauss_wave(g2, pft_mass("87Rb"), &p2);
    pft_ok(pf_wave_fly(w2, 1e-3));
    pft_ok(pf_wave_to(w2, PF_POSITION));
    emit(w2, out);
    double *V = malloc(64 * 48 * sizeof *V);
    assert_non_null(V);
    for (size_t i = 0; i < 64; i++)
        for (size_t j = 0; j < 48; j++) {
            double x = pf_grid_x(g2, 0, i), y = pf_grid_x(g2, 1, j);
            V[i * 48 + j] = 0.5 * pft_mass("87Rb") * 4e4 * (x * x + 2 * y * y);
        }
    pf_evolve_spec spec = {.potential = V, .dt = 2e-5, .order = 2, .g = 1e-40};
    pft_ok(pf_wave_evolve(w2, 5 * spec.dt, &spec, NULL));
    pft_ok(pf_wave_to(w2, PF_POSITION));
    emit(w2, out);
    pf_evolve_spec varying = {.varying = modulated, .user = V, .dt = 2e-5, .order = 4};
    pft_ok(pf_wave_evolve(w2, 3 * varying.dt, &varying, NULL));
    pft_ok(pf_wave_to(w2, PF_POSITION));
    emit(w2, out);
    /* Fourth-order steps in a static potential: the stored exponentials
     * (e1, e1 e1, e1 e2 products) and, on a 1D grid, the kinetic pass. */
    pf_evolve_spec fixed = {.potential = V, .dt = 2e-5, .order = 4};
    pft_ok(pf_wave_evolve(w2, 3 * fixed.dt, &fixed, NULL));
    pft_ok(pf_wave_to(w2, PF_POSITION));
    emit(w2, out);
    size_t n3 = 4096;
    double span3 = 100e-6;
    pf_grid *g3 = pft_grid(ctx, 1, &n3, &span3, NULL);
    pft_gauss p3 = {.x0 = {-4e-6}, .sigma = {3e-6}, .k0 = {2e6}};
    pf_wave *w3 = pft_gauss_wave(g3, pft_mass("87Rb"), &p3);
    double *V3 = malloc(n3 * sizeof *V3);
    assert_non_null(V3);
    for (size_t i = 0; i < n3; i++) {
        double x = pf_grid_x(g3, 0, i);
        V3[i] = 0.5 * pft_mass("87Rb") * 4e4 * x * x;
    }
    pf_evolve_spec line = {.potential = V3, .dt = 2e-5, .order = 4};
    pft_ok(pf_wave_evolve(w3, 4 * line.dt, &line, NULL));
    emit(w3, out);
    free(V3);
    pf_wave_free(w3);
    pf_grid_release(g3);
    free(V);
    pf_wave_free(w1);
    pf_wave_free(w2);
    pf_grid_release(g1);
    pf_grid_release(g2);
    pf_context_release(ctx);
}

/* Runs this program as a child on the named path; returns its output. */
static unsigned char *child_output(const char *path, size_t *len)
{
    char cmd[4200];
    char self[4096];
    ssize_t k = readlink("/proc/self/exe", self, sizeof self - 1);
    assert_true(k > 0);
    self[k] = 0;
    snprintf(cmd, sizeof cmd, "PSIFLIGHT_PHASE_KERNEL=%s '%s' --emit", path, self);
    FILE *f = popen(cmd, "r");
    assert_non_null(f);
    size_t cap = (size_t)4 << 20, used = 0;
    unsigned char *buf = malloc(cap);
    assert_non_null(buf);
    size_t got;
    while ((got = fread(buf + used, 1, cap - used, f)) > 0) {
        used += got;
        if (used == cap) {
            cap *= 2;
            buf = realloc(buf, cap);
            assert_non_null(buf);
        }
    }
    assert_int_equal(pclose(f), 0);
    *len = used;
    return buf;
}

static void whole_runs_agree(void **state)
{
    (void)state;
    size_t ref_len, len;
    unsigned char *ref = child_output("plain", &ref_len);
    /* two 1D states of 2^16 points, four 2D states, one 1D state of 4096 */
    assert_int_equal(ref_len, (2 * ((size_t)1 << 16) + 4 * 64 * 48 + 4096) * sizeof(double complex));
    for (int path = PF_PATH_AVX2; path < PF_PATH_COUNT; path++) {
        const char *name = pf_vector_path_name((pf_vector_path)path);
        if (!pf_vector_path_runs((pf_vector_path)path)) {
            printf("skip %s: this processor cannot run it\n", name);
            continue;
        }
        unsigned char *got = child_output(name, &len);
        assert_int_equal(len, ref_len);
        assert_memory_equal(got, ref, len);
        printf("ok flights and split steps with PSIFLIGHT_PHASE_KERNEL=%s: same bytes as plain\n", name);
        free(got);
    }
    free(ref);
}

int main(int argc, char **argv)
{
    if (argc > 1 && strcmp(argv[1], "--emit") == 0) {
        compute_all(stdout);
        return fflush(stdout) != 0;
    }
    printf("vector path chosen here: %s\n", pf_vector_path_name(pf_vector_path_chosen()));
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(cis_paths_agree),
        cmocka_unit_test(phase_paths_agree),
        cmocka_unit_test(kernels_leave_upper_halves_clean),
        cmocka_unit_test(whole_runs_agree),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
