/* fuzz_h5.c - libFuzzer harness for HDF5 input: pf.load_wave on an .h5 file
 * in every mode the loader has (a psiflight item, psi or phi; one complex or
 * [..., 2] dataset; a real and an imaginary dataset; coordinate axes named;
 * the grid taken from the file, given, or interpolated onto), which covers
 * pf_h5_read and the transfer in pf_samples.c.
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
#include <poll.h>
#include <signal.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include "../../engine/io/pf_fault.h"

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
    fuzz_probe_in(L, fuzz_write_file("input.h5", data, size));
    if (own_crash) {
        fprintf(say, "fuzz_h5: the in-process parse did not crash; the oracle's failure stands\n");
        abort();
    }
    return 0;
}
