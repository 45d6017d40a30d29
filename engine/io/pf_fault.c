/* pf_fault.c - the crash classifier of pf_fault.h.
 *
 * Why it is built this way:
 * - the address ranges are collected before the library runs
 *   (dl_iterate_phdr), so the handler only compares numbers for them;
 * - the handler runs on an alternate stack: a stack overflow inside the
 *   library must still be classified;
 * - backtrace(3) loads libgcc's unwinder on its first call, which is not
 *   safe in a signal handler, so pf_fault_guard calls it once beforehand;
 * - the handler's own frames (and the signal trampoline) sit above the
 *   faulting one in the trace: the walk starts at the faulting instruction,
 *   taken from the signal context;
 * - in a sanitizer build linked statically (clang), the sanitizer's
 *   interceptors of libc functions (memcpy ...) live in psiflight's own
 *   object: a frame of psiflight's object whose function name libc also
 *   defines is such an interceptor and is passed over like libc itself;
 * - SA_RESETHAND and an alarm: a fault inside the handler, or a handler
 *   stuck on a lock the crash left held, ends the process with the signal
 *   itself, which the parent reports as unclassified (PF_FAULT_KILLED);
 * - the handler never returns: _exit, no atexit handlers, no stdio. */
#define _GNU_SOURCE
#include "pf_fault.h"
#include <dlfcn.h>
#include <execinfo.h>
#include <link.h>
#include <signal.h>
#include <stdint.h>
#include <string.h>
#include <sys/wait.h>
#include <ucontext.h>
#include <unistd.h>

#define MAX_RANGES 16
#define MAX_FRAMES 128
#define ALT_STACK_BYTES (256 * 1024)
/* Seconds the handler may take before SIGALRM ends the process. */
#define HANDLER_SECONDS 20

typedef struct code_range {
    uintptr_t lo, hi;
} code_range;

static code_range library_ranges[MAX_RANGES], own_ranges[MAX_RANGES];
static int n_library, n_own;
static void *libc_handle;

typedef struct scan {
    const char *prefix;
    uintptr_t own_addr;
} scan;

static void add_range(code_range *r, int *n, uintptr_t lo, uintptr_t hi)
{
    if (*n < MAX_RANGES) r[(*n)++] = (code_range){lo, hi};
}

/* The file name part of a loaded object's path. */
static const char *base_name(const char *path)
{
    const char *slash = strrchr(path, '/');
    return slash ? slash + 1 : path;
}

static int collect(struct dl_phdr_info *info, size_t size, void *data)
{
    (void)size;
    const scan *sc = data;
    int is_library = info->dlpi_name && strncmp(base_name(info->dlpi_name), sc->prefix, strlen(sc->prefix)) == 0;
    int is_own = 0;
    for (int i = 0; i < info->dlpi_phnum; i++) {
        const ElfW(Phdr) *ph = &info->dlpi_phdr[i];
        if (ph->p_type != PT_LOAD) continue;
        uintptr_t lo = info->dlpi_addr + ph->p_vaddr, hi = lo + ph->p_memsz;
        if (sc->own_addr >= lo && sc->own_addr < hi) is_own = 1;
    }
    if (!is_library && !is_own) return 0;
    for (int i = 0; i < info->dlpi_phnum; i++) {
        const ElfW(Phdr) *ph = &info->dlpi_phdr[i];
        if (ph->p_type != PT_LOAD || !(ph->p_flags & PF_X)) continue;
        uintptr_t lo = info->dlpi_addr + ph->p_vaddr, hi = lo + ph->p_memsz;
        if (is_library) add_range(library_ranges, &n_library, lo, hi);
        if (is_own) add_range(own_ranges, &n_own, lo, hi);
    }
    return 0;
}

static int in_ranges(const code_range *r, int n, uintptr_t a)
{
    for (int i = 0; i < n; i++)
        if (a >= r[i].lo && a < r[i].hi) return 1;
    return 0;
}

/* A frame of psiflight's object that is really a sanitizer's stand-in for a
 * libc function (clang links its runtime into the program). */
static int is_libc_interceptor(uintptr_t a)
{
    Dl_info di;
    if (!libc_handle || !dladdr((void *)a, &di) || !di.dli_sname) return 0;
    const char *name = di.dli_sname;
    static const char *const prefixes[] = {"__interceptor_", "___interceptor_", "__asan_", "__sanitizer_"};
    for (size_t i = 0; i < sizeof prefixes / sizeof prefixes[0]; i++)
        if (strncmp(name, prefixes[i], strlen(prefixes[i])) == 0) return 1;
    return dlsym(libc_handle, name) != NULL;
}

/* The start of the function holding a, or a itself when unknown. */
static uintptr_t function_of(uintptr_t a)
{
    Dl_info di;
    if (dladdr((void *)a, &di) && di.dli_saddr) return (uintptr_t)di.dli_saddr;
    return a;
}

pf_fault_class pf_fault_classify_stack(void *const *frames, int n, const void *fault_pc)
{
    int start = 0;
    if (fault_pc) {
        uintptr_t pc = (uintptr_t)fault_pc, fn = function_of(pc);
        start = -1;
        for (int i = 0; i < n && start < 0; i++)
            if ((uintptr_t)frames[i] == pc) start = i;
        for (int i = 0; i < n && start < 0; i++)
            if (function_of((uintptr_t)frames[i]) == fn) start = i;
        if (start < 0) {
            /* The trace missed the faulting function: judge by it alone,
             * then by the whole trace. */
            if (in_ranges(library_ranges, n_library, pc)) return PF_FAULT_LIBRARY;
            if (in_ranges(own_ranges, n_own, pc) && !is_libc_interceptor(pc)) return PF_FAULT_OWN;
            start = 0;
        }
    }
    for (int i = start; i < n; i++) {
        uintptr_t a = (uintptr_t)frames[i];
        /* Return addresses point after the call; one byte back stays in
         * the calling function even when the call ends it.  The faulting
         * frame itself is an exact address. */
        if (i > start && a > 0) a -= 1;
        if (in_ranges(library_ranges, n_library, a)) return PF_FAULT_LIBRARY;
        if (in_ranges(own_ranges, n_own, a) && !is_libc_interceptor(a)) return PF_FAULT_OWN;
    }
    return PF_FAULT_OWN;
}

/* The faulting instruction from the signal context, or NULL where this
 * build does not know the register layout. */
static const void *context_pc(const void *uctx)
{
    const ucontext_t *uc = uctx;
    if (!uc) return NULL;
#if defined(__x86_64__)
    return (const void *)uc->uc_mcontext.gregs[REG_RIP];
#elif defined(__aarch64__)
    return (const void *)uc->uc_mcontext.pc;
#else
    return NULL;
#endif
}

static void on_fault(int sig, siginfo_t *info, void *uctx)
{
    (void)info;
    alarm(HANDLER_SECONDS);
    void *frames[MAX_FRAMES];
    int n = backtrace(frames, MAX_FRAMES);
    pf_fault_class c = pf_fault_classify_stack(frames, n, context_pc(uctx));
    _exit((c == PF_FAULT_LIBRARY ? PF_FAULT_LIBRARY_EXIT : PF_FAULT_OWN_EXIT) + sig);
}

int pf_fault_guard(const char *library_prefix, const void *own_code)
{
    n_library = n_own = 0;
    scan sc = {library_prefix, (uintptr_t)own_code};
    dl_iterate_phdr(collect, &sc);
    libc_handle = dlopen("libc.so.6", RTLD_LAZY | RTLD_NOLOAD);
    void *warm[4];
    (void)backtrace(warm, 4); /* loads the unwinder now, outside any handler */

    static char alt_stack[ALT_STACK_BYTES];
    stack_t ss;
    memset(&ss, 0, sizeof ss);
    ss.ss_sp = alt_stack;
    ss.ss_size = sizeof alt_stack;
    if (sigaltstack(&ss, NULL) != 0) return -1;
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_sigaction = on_fault;
    sa.sa_flags = SA_SIGINFO | SA_ONSTACK | SA_RESETHAND | SA_NODEFER;
    sigemptyset(&sa.sa_mask);
    const int fatal[] = {SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT, SIGSYS};
    for (size_t i = 0; i < sizeof fatal / sizeof fatal[0]; i++)
        if (sigaction(fatal[i], &sa, NULL) != 0) return -1;
    /* The alarm's default action ends a stuck handler. */
    signal(SIGALRM, SIG_DFL);
    return n_library;
}

pf_fault_class pf_fault_from_status(int wait_status, int *sig)
{
    *sig = 0;
    if (WIFSIGNALED(wait_status)) {
        *sig = WTERMSIG(wait_status);
        return PF_FAULT_KILLED;
    }
    if (!WIFEXITED(wait_status)) return PF_FAULT_NONE;
    int code = WEXITSTATUS(wait_status);
    if (code >= PF_FAULT_LIBRARY_EXIT && code < PF_FAULT_OWN_EXIT) {
        *sig = code - PF_FAULT_LIBRARY_EXIT;
        return PF_FAULT_LIBRARY;
    }
    if (code >= PF_FAULT_OWN_EXIT && code < PF_FAULT_OWN_EXIT + 32) {
        *sig = code - PF_FAULT_OWN_EXIT;
        return PF_FAULT_OWN;
    }
    return PF_FAULT_NONE;
}
