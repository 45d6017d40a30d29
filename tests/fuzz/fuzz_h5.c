/* fuzz_h5.c - libFuzzer harness for HDF5 input: pf.load_wave on an .h5 file
 * in every mode the loader has (a psiflight item, psi or phi; one complex or
 * [..., 2] dataset; a real and an imaginary dataset; coordinate axes named;
 * the grid taken from the file, given, or interpolated onto), which covers
 * pf_h5_read and the transfer in pf_samples.c.
 *
 * The slab reads pf.load_wave makes on a grid split over MPI ranks
 * (pfl_files.c: a first read of one entry of axis 0 for the shape, then
 * each rank's share of the split axis) are driven here directly through
 * pf_h5_read, for every source above (slab_reads): each rank's share of 2
 * and 3 ranks with the interpolation margin must give exactly the values a
 * whole read gives there, every result's bytes must be charged to the
 * memory cap and given back when freed, and slabs outside the dataset
 * (past its end, overflowing size_t, on an axis it lacks) must be refused.
 *
 * The input is the file's content.  Seeds (corpus/h5) hold psiflight items
 * written by the engine and plain datasets written by h5py, with the names
 * used below.
 *
 * libhdf5 1.10 itself crashes on some corrupt files (known-crashes/); users
 * are protected by the forked reader of pf_h5_isolate.c, but libFuzzer's
 * coverage and the sanitizers only see this process, so the harness parses
 * in-process (PSIFLIGHT_H5_INPROCESS=1) and screens each input first:
 *
 * - default: an oracle process (forked from the harness, fed through a
 *   pipe, forked again after it crashed and every ORACLE_INPUTS inputs)
 *   parses the input with the same calls.  Its crash classifier
 *   (engine/io/pf_fault.c, plus a sanitizer death callback here) says where
 *   a crash struck.  Inside libhdf5: the input is skipped here and counted
 *   (libFuzzer keeps it out of the corpus).  In psiflight's code: a bug -
 *   the harness says so and parses in-process to get the sanitizer's full
 *   report (aborting if that does not crash).  No crash: the input is
 *   parsed in-process too, for coverage and the sanitizers.  An oracle
 *   still busy after ORACLE_SECONDS (FUZZ_H5_ORACLE_SECONDS overrides it)
 *   is interrupted with SIGABRT, and its
 *   classifier says whether it hung inside libhdf5 (skipped) or in ours
 *   (a bug);
 * - FUZZ_H5_INPROCESS_ONLY=1: no oracle; a file that crashes libhdf5
 *   crashes the harness (the stack then has no psiflight frame above the
 *   HDF5 ones);
 * - FUZZ_H5_ISOLATED=1: neither; every load goes through pf_h5_read's own
 *   child, as users run it.  tests/ref/test_fuzz_smoke.sh replays
 *   tests/fuzz/known-crashes that way, where each must end in a load_wave
 *   error instead of a crash of the harness.
 *
 * At exit the harness prints how many inputs libhdf5 crashed on.
 *
 * FUZZ_H5_ORACLE_FAULT=library or =own makes the oracle crash on purpose
 * after each parse (inside libhdf5's type conversion, or by a write through
 * address 64 in this file), so tests/ref/test_fuzz_smoke.sh can check that the
 * first is skipped and the second aborts the harness. */
#include "fuzz_util.h"
#include <errno.h>
#include <execinfo.h>
#include <hdf5.h>
#include <limits.h>
#include <poll.h>
#include <signal.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include "pf_fault.h"
#include "pf_h5.h"
#include "pf_samples.h"

int LLVMFuzzerInitialize(int *argc, char ***argv);
const char *__asan_default_options(void);
/* The sanitizer runtime's (clang): weak, so a build without it still links. */
void __sanitizer_set_death_callback(void (*callback)(void)) __attribute__((weak));
void *__asan_get_report_pc(void) __attribute__((weak));

/* Inputs one oracle process parses before it is replaced: libhdf5 1.10
 * leaks on corrupt files, and a fresh process keeps the oracle's state
 * close to the harness's. */
#define ORACLE_INPUTS 1000
/* A parse of a 20 kB file takes milliseconds; this long is a hang.  A
 * deliberate crash on a heavily loaded machine (the classifier walking the
 * stack in a fresh sanitizer process) has taken longer, so the smoke test
 * sets FUZZ_H5_ORACLE_SECONDS higher and a hang is not mistaken for it. */
#define ORACLE_SECONDS 10

static int oracle_seconds(void)
{
    const char *e = getenv("FUZZ_H5_ORACLE_SECONDS");
    char *end;
    long v = e ? strtol(e, &end, 10) : -1;
    return e && *e && !*end && v >= 0 && v <= 3600 ? (int)v : ORACLE_SECONDS;
}

/* The allocator refuses single requests over 512 MiB (NULL, which the
 * reader must handle) instead of letting a corrupt size field map
 * gigabytes; run-fuzz.sh's ASAN_OPTIONS add to these. */
const char *__asan_default_options(void) { return "max_allocation_size_mb=512:allocator_may_return_null=1"; }

enum mode { MODE_ORACLE, MODE_INPROCESS_ONLY, MODE_ISOLATED };
static enum mode mode;
/* The harness's own messages: a copy of stderr taken before libFuzzer's
 * -close_fd_mask=2 points fd 2 at /dev/null (run-fuzz.sh passes it). */
static FILE *say;

static int env_is(const char *name)
{
    const char *v = getenv(name);
    return v && strcmp(v, "1") == 0;
}

static const char load_calls[] =
    "local m = 1.4e-25\n"
    "local g = pf.grid{points = 8, span = 10e-6}\n"
    "local g2 = pf.grid{points = {4, 4}, span = {10e-6, 10e-6}}\n"
    "return function(path)\n"
    "for _, o in ipairs{\n"
    "  {}, {item = 'wave', representation = 'momentum'}, {item = 'rho'},\n"
    "  {dataset = 'psi', mass = m}, {dataset = 'psi', axes = {'x'}, mass = m},\n"
    "  {dataset = 'psi2', axes = {'x'}, mass = m},\n"
    "  {real = 're', imag = 'im', axes = {'x'}, mass = m},\n"
    "  {dataset = 'psi2d', axes = {'x', 'y'}, mass = m},\n"
    "} do\n"
    "  pcall(pf.load_wave, path, o)\n"
    "  o.grid = #(o.axes or {}) == 2 and g2 or g\n"
    "  pcall(pf.load_wave, path, o)\n"
    "  o.interpolate = true\n"
    "  pcall(pf.load_wave, path, o)\n"
    "end\n"
    "end\n";

/* ---- the slab reads of a distributed pf.load_wave ---- */

/* The sources load_calls names, as pf_h5_source (plain datasets: rep -1 is
 * position), plus 3D plain datasets. */
static const pf_h5_source SLAB_SOURCES[] = {
    {.item = "wave", .rep = -1},
    {.item = "wave", .rep = PF_MOMENTUM},
    {.item = "rho", .rep = -1},
    {.dataset = "psi", .rep = -1},
    {.dataset = "psi", .axes = {"x"}, .rep = -1},
    {.dataset = "psi2", .axes = {"x"}, .rep = -1},
    {.real = "re", .imag = "im", .axes = {"x"}, .rep = -1},
    {.dataset = "psi2d", .axes = {"x", "y"}, .rep = -1},
    {.dataset = "psi2d", .rep = PF_MOMENTUM},
    {.dataset = "psi3d", .axes = {"x", "y", "z"}, .rep = -1},
    {.real = "re3", .imag = "im3", .rep = PF_MOMENTUM},
};

/* The cap fuzz_lua gives the engine. */
#define SLAB_CAP ((size_t)256 << 20)

static void slab_broken(const char *what, const pf_h5_source *src, int axis, size_t first, size_t count)
{
    fprintf(say, "fuzz_h5: slab read (source %s, axis %d, entries from %zu, %zu of them): %s\n",
            src->item ? src->item : src->dataset ? src->dataset : src->real, axis, first, count, what);
    abort();
}

static void quiet_warning(void *user, const char *text) { (void)user, (void)text; }

/* One read of [first, first + count) of axis (count 0: all), with the
 * promises every read keeps: a success holds exactly that slab, its bytes
 * charged to the cap; a failure says why; nothing stays charged after
 * pf_samples_free.  Returns the status, out kept for the caller on success
 * (the caller frees it). */
static pf_status slab_read(pf_context *ctx, const char *path, const pf_h5_source *base, int axis, size_t first,
                           size_t count, pf_samples *out)
{
    pf_h5_source src = *base;
    src.slab_axis = axis;
    src.slab_first = first;
    src.slab_count = count;
    const size_t before = pf_context_memory_used(ctx);
    pf_status st = pf_h5_read(ctx, path, &src, out);
    if (st) {
        const char *m = pf_context_message(ctx);
        if (!m || !*m) slab_broken("failed without a message", base, axis, first, count);
        if (pf_context_memory_used(ctx) != before) slab_broken("a failed read left bytes charged", base, axis, first, count);
        return st;
    }
    if (!out->values || out->dim < 1 || out->dim > PF_MAX_DIM) slab_broken("no values or a bad rank", base, axis, first, count);
    if (count) {
        if (out->slab_axis != axis || out->slab_first != first || out->slab_count != count)
            slab_broken("the result does not say it holds the slab asked for", base, axis, first, count);
        if (axis < 0 || axis >= out->dim || first > out->n[axis] || count > out->n[axis] - first)
            slab_broken("a slab outside the dataset was read", base, axis, first, count);
    } else if (out->slab_count) {
        slab_broken("a whole read holds a slab", base, axis, first, count);
    }
    size_t values = pf_samples_count(out);
    if (out->charged_ctx != ctx || out->charged < values * sizeof(double complex) ||
        pf_context_memory_used(ctx) < before + out->charged || pf_context_memory_used(ctx) > SLAB_CAP)
        slab_broken("the result's bytes are not charged to the memory cap", base, axis, first, count);
    return st;
}

static void slab_free(pf_context *ctx, pf_samples *s, size_t before, const pf_h5_source *src)
{
    pf_samples_free(s);
    if (pf_context_memory_used(ctx) != before) slab_broken("freeing the samples did not give their bytes back", src, -1, 0, 0);
}

/* A slab's values against the whole read's at the same entries, bit for
 * bit, and the (whole) coordinate axes alike. */
static void slab_compare(const pf_samples *whole, const pf_samples *part, const pf_h5_source *src)
{
    if (part->dim != whole->dim) slab_broken("slab and whole reads differ in rank", src, part->slab_axis, part->slab_first, part->slab_count);
    for (int b = 0; b < whole->dim; b++) {
        if (part->n[b] != whole->n[b]) slab_broken("slab and whole reads differ in shape", src, part->slab_axis, part->slab_first, part->slab_count);
        if ((part->axis[b] == NULL) != (whole->axis[b] == NULL) ||
            (part->axis[b] && memcmp(part->axis[b], whole->axis[b], whole->n[b] * sizeof(double)) != 0))
            slab_broken("slab and whole reads differ in a coordinate axis", src, part->slab_axis, part->slab_first, part->slab_count);
    }
    size_t held[PF_MAX_DIM], total = pf_samples_count(part);
    for (int b = 0; b < part->dim; b++) held[b] = pf_samples_held(part, b);
    for (size_t i = 0; i < total; i++) {
        size_t rest = i, at = 0, stride = 1;
        for (int b = part->dim - 1; b >= 0; b--) {
            size_t j = rest % held[b];
            rest /= held[b];
            if (b == part->slab_axis) j += part->slab_first;
            at += j * stride;
            stride *= whole->n[b];
        }
        if (memcmp(&part->values[i], &whole->values[at], sizeof(double complex)) != 0)
            slab_broken("a slab's value differs from the whole read's", src, part->slab_axis, part->slab_first, part->slab_count);
    }
}

/* The reads of pf.load_wave on a distributed grid, for each source: the
 * first read of one entry of axis 0, then the split axis's shares (axis 0
 * in position, 1 in momentum: pf_samples_slab_for) for 2 and 3 ranks with
 * one entry of margin each side, then hostile slabs. */
static void slab_reads(const char *path)
{
    static pf_context *ctx;
    if (!ctx) {
        ctx = pf_context_new();
        if (!ctx || pf_context_set_memory_cap(ctx, SLAB_CAP) != PF_OK) abort();
        pf_context_set_warn_handler(ctx, quiet_warning, NULL);
    }
    const size_t base = pf_context_memory_used(ctx);
    for (size_t k = 0; k < sizeof SLAB_SOURCES / sizeof SLAB_SOURCES[0]; k++) {
        const pf_h5_source *src = &SLAB_SOURCES[k];
        pf_samples meta, whole, part;
        memset(&whole, 0, sizeof whole);
        if (slab_read(ctx, path, src, 0, 0, 1, &meta) != PF_OK) continue;
        const int dim = meta.dim, a = meta.rep == PF_MOMENTUM && dim > 1 ? 1 : 0;
        const size_t n = meta.n[a];
        slab_free(ctx, &meta, base, src);
        int have_whole = slab_read(ctx, path, src, 0, 0, 0, &whole) == PF_OK;
        const size_t with_whole = pf_context_memory_used(ctx);
        for (size_t ranks = 2; ranks <= 3; ranks++)
            for (size_t r = 0; r < ranks; r++) {
                size_t f = r * (n / ranks), e = r + 1 == ranks ? n : (r + 1) * (n / ranks);
                f = f ? f - 1 : 0;
                e = e < n ? e + 1 : n;
                if (e <= f) continue;
                if (slab_read(ctx, path, src, a, f, e - f, &part) != PF_OK) continue;
                if (have_whole) slab_compare(&whole, &part, src);
                slab_free(ctx, &part, with_whole, src);
            }
        const struct { int axis; size_t first, count; } hostile[] = {
            {a, n, 1}, {a, n - 1, 2}, {a, 0, n + 1}, {a, SIZE_MAX, 1}, {a, 1, SIZE_MAX}, {a, SIZE_MAX, SIZE_MAX},
            {a, n / 2, SIZE_MAX - n / 2 + 1}, {dim, 0, 1}, {-1, 0, 1}, {PF_MAX_DIM, 0, 1}, {INT_MAX, 0, 1},
        };
        for (size_t h = 0; h < sizeof hostile / sizeof hostile[0]; h++) {
            if (hostile[h].count == 0) continue; /* n + 1 wrapped: 0 asks for everything */
            if (slab_read(ctx, path, src, hostile[h].axis, hostile[h].first, hostile[h].count, &part) == PF_OK)
                slab_broken("a slab outside the dataset was accepted", src, hostile[h].axis, hostile[h].first,
                            hostile[h].count);
        }
        if (have_whole) slab_free(ctx, &whole, base, src);
    }
}

/* ---- the oracle process ---- */

static pid_t oracle_pid = -1;
static int to_oracle = -1, from_oracle = -1;
static unsigned oracle_inputs;
static unsigned long library_crashes, library_hangs;

/* A sanitizer report in the oracle (heap overflow, use after free, an
 * undefined-behaviour check): classify it like a signal, from the report's
 * instruction outwards.  Exit status PF_FAULT_*_EXIT + 0: no signal. */
static void oracle_death(void)
{
    void *frames[128];
    int n = backtrace(frames, 128);
    const void *pc = __asan_get_report_pc ? __asan_get_report_pc() : NULL;
    pf_fault_class c = pf_fault_classify_stack(frames, n, pc);
    _exit(c == PF_FAULT_LIBRARY ? PF_FAULT_LIBRARY_EXIT : PF_FAULT_OWN_EXIT);
}

static int read_full(int fd, void *buf, size_t n)
{
    char *p = buf;
    while (n > 0) {
        ssize_t r = read(fd, p, n);
        if (r < 0 && errno == EINTR) continue;
        if (r <= 0) return -1;
        p += r;
        n -= (size_t)r;
    }
    return 0;
}

static int write_full(int fd, const void *buf, size_t n)
{
    const char *p = buf;
    while (n > 0) {
        ssize_t w = write(fd, p, n);
        if (w < 0 && errno == EINTR) continue;
        if (w <= 0) return -1;
        p += w;
        n -= (size_t)w;
    }
    return 0;
}

/* FUZZ_H5_ORACLE_FAULT (see the top of the file). */
static void deliberate_fault(void)
{
    const char *f = getenv("FUZZ_H5_ORACLE_FAULT");
    if (!f) return;
    if (strcmp(f, "library") == 0) {
        /* 1000 ints converted at address 64, never mapped. */
        H5Tconvert(H5T_NATIVE_INT, H5T_NATIVE_DOUBLE, 1000, (void *)64, NULL, H5P_DEFAULT);
    } else if (strcmp(f, "own") == 0) {
        /* Address 64 is never mapped; not NULL, which UBSan would catch
         * before the fault. */
        volatile int *volatile p = (volatile int *)(uintptr_t)64;
        *p = 1;
    }
}

/* The oracle's loop: one input in (size, bytes), one byte out when its
 * parse is done.  A crash ends it with the classifier's status. */
static void oracle_main(int in, int out)
{
    prctl(PR_SET_PDEATHSIG, SIGKILL);
    /* libFuzzer's own crash, interrupt and death handlers would dump the
     * harness's current input from here: the classifier replaces them. */
    signal(SIGINT, SIG_DFL);
    signal(SIGTERM, SIG_DFL);
    signal(SIGPIPE, SIG_IGN);
    if (pf_fault_guard("libhdf5", (const void *)LLVMFuzzerTestOneInput) < 1) {
        fprintf(say, "fuzz_h5: libhdf5 is not loaded; cannot classify crashes\n");
        _exit(2);
    }
    if (__sanitizer_set_death_callback) __sanitizer_set_death_callback(oracle_death);
    lua_State *L = NULL;
    uint8_t *buf = NULL;
    for (;;) {
        uint64_t size;
        if (read_full(in, &size, sizeof size) != 0) _exit(0); /* the harness closed the pipe */
        uint8_t *nb = realloc(buf, size ? size : 1);
        if (!nb || read_full(in, nb, size) != 0) _exit(1);
        buf = nb;
        const char *path = fuzz_write_file("oracle.h5", buf, size);
        if (!L) L = fuzz_probe_state(load_calls);
        fuzz_probe_in(L, path);
        slab_reads(path);
        deliberate_fault();
        if (write_full(out, "k", 1) != 0) _exit(0);
    }
}

static void oracle_stop(void)
{
    if (oracle_pid < 0) return;
    close(to_oracle);
    close(from_oracle);
    int status;
    while (waitpid(oracle_pid, &status, 0) < 0 && errno == EINTR) {
    }
    oracle_pid = -1;
}

static void oracle_start(void)
{
    int req[2], rep[2];
    if (pipe(req) != 0 || pipe(rep) != 0) {
        perror("fuzz_h5: pipe");
        abort();
    }
    fflush(NULL);
    pid_t pid = fork();
    if (pid < 0) {
        perror("fuzz_h5: fork");
        abort();
    }
    if (pid == 0) {
        close(req[1]);
        close(rep[0]);
        oracle_main(req[0], rep[1]); /* does not return */
    }
    close(req[0]);
    close(rep[1]);
    oracle_pid = pid;
    to_oracle = req[1];
    from_oracle = rep[0];
    oracle_inputs = 0;
}

enum verdict { PARSED, LIBRARY_CRASH, OWN_CRASH };

/* The oracle's verdict on one input: it parsed it, or crashed (or hung)
 * inside libhdf5, or inside psiflight's code (*sig: the signal, 0 for a
 * sanitizer report). */
static enum verdict oracle_check(const uint8_t *data, size_t size, int *sig, int *hung)
{
    *sig = 0;
    *hung = 0;
    if (oracle_pid < 0 || oracle_inputs >= ORACLE_INPUTS) {
        oracle_stop();
        oracle_start();
    }
    oracle_inputs++;
    uint64_t n = size;
    char done = 0;
    int sent = write_full(to_oracle, &n, sizeof n) == 0 && write_full(to_oracle, data, size) == 0;
    if (sent) {
        struct pollfd p = {from_oracle, POLLIN, 0};
        int r;
        while ((r = poll(&p, 1, oracle_seconds() * 1000)) < 0 && errno == EINTR) {
        }
        if (r == 0) {
            /* Still parsing: the classifier, run where it hangs, says whose
             * loop it is. */
            *hung = 1;
            kill(oracle_pid, SIGABRT);
        }
        if (read_full(from_oracle, &done, 1) == 0 && done == 'k') return PARSED;
    }
    int status = 0;
    close(to_oracle);
    close(from_oracle);
    while (waitpid(oracle_pid, &status, 0) < 0 && errno == EINTR) {
    }
    oracle_pid = -1;
    pf_fault_class c = pf_fault_from_status(status, sig);
    if (c == PF_FAULT_LIBRARY) return LIBRARY_CRASH;
    fprintf(say, "fuzz_h5: the oracle process %s (wait status 0x%x, class %d, signal %d)\n",
            c == PF_FAULT_OWN ? "crashed in psiflight's own code" : "ended without a classified crash", status,
            (int)c, *sig);
    return OWN_CRASH;
}

static void print_summary(void)
{
    if (mode == MODE_ORACLE)
        fprintf(say, "fuzz_h5: inputs libhdf5 crashed on (skipped): %lu, hung in (skipped): %lu\n",
                library_crashes, library_hangs);
}

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
    (void)argc;
    (void)argv;
    mode = env_is("FUZZ_H5_ISOLATED") ? MODE_ISOLATED : env_is("FUZZ_H5_INPROCESS_ONLY") ? MODE_INPROCESS_ONLY : MODE_ORACLE;
    if (mode != MODE_ISOLATED) setenv("PSIFLIGHT_H5_INPROCESS", "1", 1);
    /* An oracle that died between inputs must not take the harness with
     * it through SIGPIPE: the write fails instead and the verdict follows. */
    signal(SIGPIPE, SIG_IGN);
    int fd = dup(STDERR_FILENO);
    say = fd >= 0 ? fdopen(fd, "w") : NULL;
    if (!say) say = stderr;
    setvbuf(say, NULL, _IOLBF, 0);
    atexit(print_summary);
    return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    int own_crash = 0;
    if (mode == MODE_ORACLE) {
        int sig, hung;
        enum verdict v = oracle_check(data, size, &sig, &hung);
        if (v == LIBRARY_CRASH) {
            if (hung)
                library_hangs++;
            else
                library_crashes++;
            return -1; /* not added to the corpus */
        }
        if (v == OWN_CRASH) {
            own_crash = 1;
            fprintf(say, "fuzz_h5: psiflight's code failed on this input in the oracle; parsing it here for the "
                            "full report\n");
        }
    }
    static lua_State *L;
    if (!L) L = fuzz_probe_state(load_calls);
    const char *path = fuzz_write_file("input.h5", data, size);
    fuzz_probe_in(L, path);
    slab_reads(path);
    if (own_crash) {
        fprintf(say, "fuzz_h5: the in-process parse did not crash; the oracle's failure stands\n");
        abort();
    }
    return 0;
}
