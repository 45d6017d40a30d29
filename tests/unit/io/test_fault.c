/* test_fault.c - the crash classifier (engine/io/pf_fault.c) that lets
 * pf_h5_read tell a crash inside libhdf5 (the file is refused) from a crash
 * in psiflight's own code (a bug, PF_EBUG).
 *
 * Each class is provoked on purpose in a forked child with the guard
 * installed, and the child's exit status is read back the way
 * pf_h5_isolate.c reads it: a segmentation fault inside libhdf5's type
 * conversion, one in this program's code, one in libc's memcpy called from
 * this program, and an abort() from this program.  The walking rule is
 * checked on hand-made stacks; end to end through pf_h5_read, a file that
 * crashes libhdf5 1.10 (tests/fuzz/known-crashes) is refused and a crash
 * of the reader's own code is reported as psiflight's bug.
 *
 * Signal numbers and wait-status macros are POSIX (signal.h, sys/wait.h);
 * the rest is the classifier's own contract (pf_fault.h). */
#define _GNU_SOURCE
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <dlfcn.h>
#include <hdf5.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>
#include "pft.h"
#include "pf_fault.h"
#include "pf_h5.h"

typedef void (*fault_fn)(void);

/* Runs fn in a child with the guard installed ("psiflight's code" is this
 * test program); returns the child's wait status. */
static int run_guarded(fault_fn fn)
{
    fflush(NULL);
    pid_t pid = fork();
    assert_true(pid >= 0);
    if (pid == 0) {
        /* A sanitizer's report would go to stderr; the verdict is the exit status. */
        if (pf_fault_guard("libhdf5", (const void *)run_guarded) < 1) _exit(2);
        fn();
        _exit(0);
    }
    int status;
    assert_int_equal(waitpid(pid, &status, 0), pid);
    return status;
}

static void assert_class(int status, pf_fault_class want, int want_sig)
{
    int sig = -1;
    pf_fault_class got = pf_fault_from_status(status, &sig);
    if (got != want || sig != want_sig)
        fail_msg("wait status 0x%x: class %d signal %d, want class %d signal %d", status, got, sig, want, want_sig);
}

/* libhdf5 converts 1000 ints at address 64 (never mapped): the fault
 * strikes inside the library's conversion loop. */
static void fault_in_libhdf5(void)
{
    if (H5open() < 0) _exit(3);
    H5Tconvert(H5T_NATIVE_INT, H5T_NATIVE_DOUBLE, 1000, (void *)64, NULL, H5P_DEFAULT);
}

static void fault_in_own_code(void)
{
    /* Address 64 is never mapped; not NULL, which UBSan would catch before
     * the fault in a sanitizer build. */
    volatile int *volatile p = (volatile int *)(uintptr_t)64;
    *p = 1;
}

static void fault_in_libc_called_by_own_code(void)
{
    volatile size_t n = 4096;
    static char buf[4096];
    memcpy((void *)(uintptr_t)64, buf, n);
}

static void abort_in_own_code(void) { abort(); }

static void test_library_fault(void **state)
{
    (void)state;
    assert_class(run_guarded(fault_in_libhdf5), PF_FAULT_LIBRARY, SIGSEGV);
    assert_int_equal(PF_FAULT_LIBRARY_EXIT + SIGSEGV, 75);
}

static void test_own_faults(void **state)
{
    (void)state;
    assert_class(run_guarded(fault_in_own_code), PF_FAULT_OWN, SIGSEGV);
    assert_class(run_guarded(fault_in_libc_called_by_own_code), PF_FAULT_OWN, SIGSEGV);
    assert_class(run_guarded(abort_in_own_code), PF_FAULT_OWN, SIGABRT);
    assert_int_equal(PF_FAULT_OWN_EXIT + SIGSEGV, 107);
}

/* Statuses the guard did not produce. */
static void test_other_statuses(void **state)
{
    (void)state;
    int sig;
    assert_int_equal(pf_fault_from_status(0, &sig), PF_FAULT_NONE);
    assert_int_equal(sig, 0);
    assert_int_equal(pf_fault_from_status(3 << 8, &sig), PF_FAULT_NONE); /* exit(3) */
    assert_int_equal(pf_fault_from_status(SIGKILL, &sig), PF_FAULT_KILLED); /* killed by SIGKILL */
    assert_int_equal(sig, SIGKILL);
}

/* The walk on hand-made stacks (innermost first): the first frame in
 * libhdf5 or in this program decides; libc's frames are passed over; a
 * stack with neither stays psiflight's. */
static void test_walk_rule(void **state)
{
    (void)state;
    assert_true(H5open() >= 0);
    /* The guard replaces the crash handlers (cmocka's): put them back after. */
    const int fatal[] = {SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT, SIGSYS};
    struct sigaction saved[6];
    for (int i = 0; i < 6; i++) sigaction(fatal[i], NULL, &saved[i]);
    pf_fault_guard("libhdf5", (const void *)run_guarded);
    void *libc = dlopen("libc.so.6", RTLD_LAZY | RTLD_NOLOAD);
    assert_non_null(libc);
    char *in_libc = (char *)dlsym(libc, "qsort") + 8;
    char *in_hdf5 = (char *)(uintptr_t)H5Tconvert + 8;
    char *in_own = (char *)(uintptr_t)run_guarded + 8;
    void *libc_then_hdf5[] = {in_libc, in_libc, in_hdf5, in_own};
    void *libc_then_own[] = {in_libc, in_own, in_hdf5};
    void *own_callback_in_hdf5[] = {in_own, in_hdf5, in_own};
    void *libc_only[] = {in_libc, in_libc};
    assert_int_equal(pf_fault_classify_stack(libc_then_hdf5, 4, in_libc), PF_FAULT_LIBRARY);
    assert_int_equal(pf_fault_classify_stack(libc_then_own, 3, in_libc), PF_FAULT_OWN);
    assert_int_equal(pf_fault_classify_stack(own_callback_in_hdf5, 3, in_own), PF_FAULT_OWN);
    assert_int_equal(pf_fault_classify_stack(libc_only, 2, NULL), PF_FAULT_OWN);
    /* The walk starts at the faulting frame: frames above it (a handler's)
     * do not count. */
    void *handler_above[] = {in_own, in_own, in_hdf5, in_own};
    assert_int_equal(pf_fault_classify_stack(handler_above, 4, in_hdf5), PF_FAULT_LIBRARY);
    dlclose(libc);
    for (int i = 0; i < 6; i++) sigaction(fatal[i], &saved[i], NULL);
}

/* A file whose corrupt local heap makes libhdf5 1.10.8 copy from NULL
 * (tests/fuzz/known-crashes/README.md): pf_h5_read refuses it as the
 * library's crash, PF_EIO, not as psiflight's bug. */
static void test_known_crash_file_refused(void **state)
{
    pf_context *ctx = *state;
    const char *root = getenv("PSIFLIGHT_ROOT");
    char path[4096];
    snprintf(path, sizeof path, "%s/tests/fuzz/known-crashes/h5-libhdf5-local-heap", root ? root : ".");
    pf_h5_source src = {"wave", NULL, NULL, NULL, {NULL, NULL, NULL}, -1, 0, 0, 0};
    pf_samples s;
    assert_int_equal(pf_h5_read(ctx, path, &src, &s), PF_EIO);
    const char *msg = pf_context_message(ctx);
    if (!strstr(msg, "file refused: the HDF5 library crashed on it (signal 11 inside libhdf5)"))
        fail_msg("unexpected message: %s", msg);
    assert_null(s.values);
}

/* A crash in psiflight's own code in the reading process: a caller's item
 * name at address 8 makes the reader's strlen (libc, called from pf_h5.c)
 * fault in the child.  The parent reports psiflight's bug, PF_EBUG, and
 * never blames the file. */
static void test_own_crash_in_reader_is_a_bug(void **state)
{
    pf_context *ctx = *state;
    const char *root = getenv("PSIFLIGHT_ROOT");
    char path[4096];
    snprintf(path, sizeof path, "%s/tests/fuzz/known-crashes/h5-libhdf5-local-heap", root ? root : ".");
    pf_h5_source src = {(const char *)8, NULL, NULL, NULL, {NULL, NULL, NULL}, -1, 0, 0, 0};
    pf_samples s;
    assert_int_equal(pf_h5_read(ctx, path, &src, &s), PF_EBUG);
    const char *msg = pf_context_message(ctx);
    if (!strstr(msg, "internal error: psiflight's own code crashed (signal 11)") || strstr(msg, "file refused"))
        fail_msg("unexpected message: %s", msg);
    assert_null(s.values);
}

int main(void)
{
    unsetenv("PSIFLIGHT_H5_INPROCESS");
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_library_fault),
        cmocka_unit_test(test_own_faults),
        cmocka_unit_test(test_other_statuses),
        cmocka_unit_test(test_walk_rule),
        cmocka_unit_test_setup_teardown(test_known_crash_file_refused, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(test_own_crash_in_reader_is_a_bug, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
