/* pf_h5_isolate.c - pf_h5_read: the HDF5 library reads a data file in a
 * forked child process, so that a file which crashes libhdf5 itself (see
 * tests/fuzz/known-crashes/README.md) costs one failed load_wave with a
 * clear message instead of the whole run and its manifest.
 *
 * Why each piece exists:
 * - fork without exec: the child inherits the parsed script's context (memory
 *   cap, room) and calls the unchanged reader, pf_h5_read_inprocess; between
 *   fork and _exit it uses only HDF5, malloc (fork-safe in glibc) and write,
 *   never FFTW or OpenMP, whose threads do not exist in the child;
 * - an address-space limit in the child (its current size plus the engine's
 *   memory room plus a margin for the library), so a corrupt size field
 *   that makes libhdf5 ask for gigabytes fails there instead of swapping
 *   the machine; the limit is relative to the current size because the
 *   parent's libraries, thread stacks (and a sanitizer's shadow memory)
 *   already take address space;
 * - the result crosses a pipe as codes and sizes, which the parent checks
 *   against the memory cap before allocating anything, like any other file
 *   content: a child that went wrong cannot make the parent allocate;
 * - the runner's signal handlers and timers (engine/runner/pfr_stop.c) would
 *   remove the parent's partial files if they ran in the child, so the child
 *   resets them; a stop request reaching the parent kills the child.
 *
 * PSIFLIGHT_H5_INPROCESS=1 keeps the read in the process (DEVELOPERS.md):
 * the fuzz harness needs it to see libhdf5's parsing as coverage. */
#define _GNU_SOURCE
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/prctl.h>
#include <sys/resource.h>
#include <sys/time.h>
#include <sys/wait.h>
#include <unistd.h>
#include "pf_fault.h"
#include "pf_h5.h"
#include "pf_readcap.h"

/* Address space libhdf5 may use beyond the engine's memory room: its
 * metadata cache, chunk cache and the conversion buffers of one read. */
#define LIBRARY_MARGIN ((size_t)256 << 20)
/* Longest error message the child may send (pf_context keeps less). */
#define MAX_MESSAGE 4096
#define WIRE_MAGIC 0x70663568u /* "pf5h" */
#define WIRE_END 0x656e6421u   /* "end!" */
/* The child's exit status when the parent stopped reading (a broken pipe). */
#define CHILD_WRITE_FAILED 3

/* What the child sends first.  Both ends are the same binary, so native
 * layout and byte order are the same; the parent still checks every field. */
typedef struct wire_head {
    uint32_t magic;
    int32_t status;       /* a pf_status code */
    uint32_t message_len; /* bytes of the error message that follow */
    int32_t dim;
    uint64_t n[PF_MAX_DIM];
    uint32_t axis_mask;   /* bit a: coordinates of axis a follow */
    int32_t rep;
    int32_t has_grid;
    double mass, clock;
    double span[PF_MAX_DIM], grid_origin[PF_MAX_DIM];
    int32_t slab_axis;    /* the values hold only these entries of that axis */
    uint64_t slab_first, slab_count; /* (slab_count 0: all) */
} wire_head;

static int inprocess_requested(void)
{
    const char *e = getenv("PSIFLIGHT_H5_INPROCESS");
    return e && strcmp(e, "1") == 0;
}

/* ---- child ---- */

/* Writes all n bytes; -1 when the parent is gone (EPIPE: SIGPIPE is ignored
 * in the child) or the pipe fails otherwise. */
static int write_all(int fd, const void *buf, size_t n)
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

/* The child's environment: nothing of the parent's signal handling, no
 * timer, no output on the run's stdout or stderr, bounded address space. */
static void child_setup(size_t as_limit)
{
    /* A child left running after the parent died (killed by the batch
     * system) would go on parsing for nobody. */
    prctl(PR_SET_PDEATHSIG, SIGKILL);
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = SIG_DFL;
    sigemptyset(&sa.sa_mask);
    /* The runner's stop handlers go, and so do the crash handlers of the
     * embedding program (a test framework's, a sanitizer's): the
     * classifier installed below replaces them, and where it cannot, the
     * default action reports the signal to the parent. */
    const int reset[] = {SIGINT, SIGTERM, SIGHUP, SIGALRM, SIGSEGV, SIGBUS, SIGFPE, SIGILL, SIGABRT, SIGSYS};
    for (size_t i = 0; i < sizeof reset / sizeof reset[0]; i++) sigaction(reset[i], &sa, NULL);
    sa.sa_handler = SIG_IGN;
    sigaction(SIGPIPE, &sa, NULL);
    struct itimerval off;
    memset(&off, 0, sizeof off);
    setitimer(ITIMER_REAL, &off, NULL);
    int null = open("/dev/null", O_WRONLY);
    if (null >= 0) {
        dup2(null, STDOUT_FILENO);
        dup2(null, STDERR_FILENO);
        if (null > STDERR_FILENO) close(null);
    } else {
        close(STDOUT_FILENO);
        close(STDERR_FILENO);
    }
    struct rlimit rl;
    if (as_limit && getrlimit(RLIMIT_AS, &rl) == 0 && (rl.rlim_cur == RLIM_INFINITY || rl.rlim_cur > as_limit)) {
        rl.rlim_cur = as_limit;
        setrlimit(RLIMIT_AS, &rl);
    }
    /* A fatal signal ends the child with an exit status saying whether it
     * struck inside libhdf5 (the file is refused) or in psiflight's code (a
     * bug, reported as one).  Failing to install it leaves the default
     * action: the parent then reports an unclassified signal. */
    (void)pf_fault_guard("libhdf5", (const void *)pf_h5_read_inprocess);
}

static void child_main(pf_context *ctx, const char *path, const pf_h5_source *src, int fd, size_t as_limit)
{
    child_setup(as_limit);
    pf_samples s;
    pf_status st = pf_h5_read_inprocess(ctx, path, src, &s);
    wire_head h;
    memset(&h, 0, sizeof h);
    h.magic = WIRE_MAGIC;
    h.status = (int32_t)st;
    const char *msg = st ? pf_context_message(ctx) : "";
    size_t len = strlen(msg);
    h.message_len = (uint32_t)(len < MAX_MESSAGE ? len : MAX_MESSAGE);
    if (!st) {
        h.dim = s.dim;
        for (int a = 0; a < s.dim; a++) {
            h.n[a] = s.n[a];
            if (s.axis[a]) h.axis_mask |= 1u << a;
            h.span[a] = s.span[a];
            h.grid_origin[a] = s.grid_origin[a];
        }
        h.rep = (int32_t)s.rep;
        h.has_grid = s.has_grid;
        h.mass = s.mass;
        h.clock = s.clock;
        h.slab_axis = s.slab_axis;
        h.slab_first = s.slab_first;
        h.slab_count = s.slab_count;
    }
    int bad = write_all(fd, &h, sizeof h) || write_all(fd, msg, h.message_len);
    if (!st) {
        size_t total = pf_samples_count(&s); /* booked by the reader, so it cannot overflow */
        for (int a = 0; a < s.dim; a++)
            if (!bad && s.axis[a]) bad = write_all(fd, s.axis[a], s.n[a] * sizeof(double));
        if (!bad) bad = write_all(fd, s.values, total * sizeof *s.values);
    }
    uint32_t end = WIRE_END;
    if (!bad) bad = write_all(fd, &end, sizeof end);
    /* _exit: no atexit handlers (HDF5's, the safe writer's), no stdio
     * flush of buffers copied from the parent. */
    _exit(bad ? CHILD_WRITE_FAILED : 0);
}

/* ---- parent ---- */

/* The process's current address-space size, from /proc/self/statm (pages);
 * 0 when unknown (the child then runs without a limit: the process
 * boundary still contains a crash). */
static size_t address_space_now(void)
{
    int fd = open("/proc/self/statm", O_RDONLY | O_CLOEXEC);
    if (fd < 0) return 0;
    char buf[128];
    ssize_t r = read(fd, buf, sizeof buf - 1);
    close(fd);
    if (r <= 0) return 0;
    buf[r] = 0;
    unsigned long long pages = strtoull(buf, NULL, 10);
    long page = sysconf(_SC_PAGESIZE);
    size_t bytes;
    if (page <= 0 || __builtin_mul_overflow((size_t)pages, (size_t)page, &bytes)) return 0;
    return bytes;
}

enum recv_result { RECV_DONE, RECV_SHORT, RECV_BAD, RECV_STOP };

/* Reads exactly n bytes.  RECV_SHORT at end of file (the child died),
 * RECV_STOP when a signal interrupted the read and the run must stop. */
static enum recv_result read_all(pf_context *ctx, int fd, void *buf, size_t n)
{
    char *p = buf;
    while (n > 0) {
        ssize_t r = read(fd, p, n);
        if (r < 0 && errno == EINTR) {
            if (pf_context_poll_stop(ctx) == PF_ESTOP) return RECV_STOP;
            continue;
        }
        if (r <= 0) return RECV_SHORT;
        p += r;
        n -= (size_t)r;
    }
    return RECV_DONE;
}

/* Receives the child's result into out (or its error into ctx, *child_status
 * set; *held: the bytes out's buffers take).  RECV_BAD: the result broke the protocol or the memory cap; the
 * message is in ctx. */
static enum recv_result receive(pf_context *ctx, const char *path, int fd, pf_samples *out, pf_status *child_status,
                                size_t *held)
{
    wire_head h;
    enum recv_result rr = read_all(ctx, fd, &h, sizeof h);
    if (rr != RECV_DONE) return rr;
    if (h.magic != WIRE_MAGIC || h.status < PF_OK || h.status > PF_EBUG || h.message_len > MAX_MESSAGE) {
        pf_fail(ctx, PF_EIO, "'%s': the process reading this file sent a malformed result", path);
        return RECV_BAD;
    }
    char msg[MAX_MESSAGE + 1];
    rr = read_all(ctx, fd, msg, h.message_len);
    if (rr != RECV_DONE) return rr;
    msg[h.message_len] = 0;
    uint32_t end;
    if (h.status != PF_OK) {
        rr = read_all(ctx, fd, &end, sizeof end);
        if (rr != RECV_DONE) return rr;
        if (end != WIRE_END) {
            pf_fail(ctx, PF_EIO, "'%s': the process reading this file sent a malformed result", path);
            return RECV_BAD;
        }
        *child_status = (pf_status)h.status;
        pf_fail(ctx, *child_status, "%s", msg);
        return RECV_DONE;
    }
    /* The sizes are claims like a file's: checked, capped, then allocated. */
    int well_formed = h.dim >= 1 && h.dim <= PF_MAX_DIM && (h.rep == PF_POSITION || h.rep == PF_MOMENTUM) &&
                      (h.has_grid == 0 || h.has_grid == 1) && (h.axis_mask >> h.dim) == 0;
    for (int a = 0; well_formed && a < h.dim; a++) well_formed = h.n[a] >= 1;
    uint64_t kept[PF_MAX_DIM] = {h.n[0], h.n[1], h.n[2]};
    if (well_formed && h.slab_count) {
        well_formed = h.slab_axis >= 0 && h.slab_axis < h.dim && h.slab_first < h.n[h.slab_axis] &&
                      h.slab_count <= h.n[h.slab_axis] - h.slab_first;
        if (well_formed) kept[h.slab_axis] = h.slab_count;
    }
    if (!well_formed) {
        pf_fail(ctx, PF_EIO, "'%s': the process reading this file sent a malformed result", path);
        return RECV_BAD;
    }
    size_t value_bytes, total_bytes;
    pf_status s = pf_read_shape_bytes(ctx, path, "the values read", h.dim, kept, sizeof(double complex), &value_bytes);
    total_bytes = value_bytes;
    for (int a = 0; !s && a < h.dim; a++)
        if (h.axis_mask & (1u << a)) total_bytes = pf_read_add(total_bytes, (size_t)h.n[a] * sizeof(double));
    if (!s) s = pf_read_budget(ctx, path, total_bytes);
    if (s) return RECV_BAD;
    out->dim = h.dim;
    for (int a = 0; a < h.dim; a++) {
        out->n[a] = (size_t)h.n[a];
        out->span[a] = h.span[a];
        out->grid_origin[a] = h.grid_origin[a];
    }
    out->rep = (pf_rep)h.rep;
    out->has_grid = h.has_grid;
    out->mass = h.mass;
    out->clock = h.clock;
    out->slab_axis = h.slab_count ? h.slab_axis : 0;
    out->slab_first = h.slab_count ? (size_t)h.slab_first : 0;
    out->slab_count = (size_t)h.slab_count;
    for (int a = 0; a < h.dim; a++) {
        if (!(h.axis_mask & (1u << a))) continue;
        out->axis[a] = malloc(out->n[a] * sizeof(double));
        if (!out->axis[a]) {
            pf_fail(ctx, PF_ENOMEM, "out of memory");
            return RECV_BAD;
        }
        rr = read_all(ctx, fd, out->axis[a], out->n[a] * sizeof(double));
        if (rr != RECV_DONE) return rr;
    }
    out->values = malloc(value_bytes);
    if (!out->values) {
        pf_fail(ctx, PF_ENOMEM, "out of memory");
        return RECV_BAD;
    }
    rr = read_all(ctx, fd, out->values, value_bytes);
    if (rr != RECV_DONE) return rr;
    rr = read_all(ctx, fd, &end, sizeof end);
    if (rr != RECV_DONE) return rr;
    if (end != WIRE_END) {
        pf_fail(ctx, PF_EIO, "'%s': the process reading this file sent a malformed result", path);
        return RECV_BAD;
    }
    *child_status = PF_OK;
    *held = total_bytes;
    return RECV_DONE;
}

/* Waits for the child; a stop request while waiting kills it (once). */
static int wait_child(pf_context *ctx, pid_t pid, int *stopped)
{
    int status = 0;
    while (waitpid(pid, &status, 0) < 0) {
        if (errno != EINTR) return -1;
        if (!*stopped && pf_context_poll_stop(ctx) == PF_ESTOP) {
            *stopped = 1;
            kill(pid, SIGKILL);
        }
    }
    return status;
}

/* The verdict on a child that ended without a result, from its exit status
 * (pf_fault.h): a crash inside libhdf5 refuses the file, a crash in
 * psiflight's code is a bug and says so. */
static pf_status child_failure(pf_context *ctx, const char *path, int status)
{
    int sig = 0;
    pf_fault_class c = status >= 0 ? pf_fault_from_status(status, &sig) : PF_FAULT_NONE;
    switch (c) {
    case PF_FAULT_LIBRARY:
        return pf_fail(ctx, PF_EIO,
                       "'%s': file refused: the HDF5 library crashed on it (signal %d inside libhdf5); the file is "
                       "probably corrupt",
                       path, sig);
    case PF_FAULT_OWN:
        return pf_fail(ctx, PF_EBUG,
                       "'%s': internal error: psiflight's own code crashed (signal %d) in the process reading this "
                       "file; this is a bug in psiflight, please report it with the file",
                       path, sig);
    case PF_FAULT_KILLED:
        return pf_fail(ctx, PF_EIO, "'%s': the process reading this file was killed by signal %d; the file is refused",
                       path, sig);
    case PF_FAULT_NONE:
    default:
        return pf_fail(ctx, PF_EIO,
                       "'%s': the HDF5 library failed while reading this file (the reading process ended with status "
                       "%d before sending its result); the file is probably corrupt",
                       path, status >= 0 && WIFEXITED(status) ? WEXITSTATUS(status) : -1);
    }
}

pf_status pf_h5_read(pf_context *ctx, const char *path, const pf_h5_source *src, pf_samples *out)
{
    if (inprocess_requested()) return pf_h5_read_inprocess(ctx, path, src, out);
    memset(out, 0, sizeof *out);
    snprintf(out->origin, sizeof out->origin, "hdf5");
    size_t now = address_space_now();
    size_t as_limit = now ? pf_read_add(pf_read_add(now, pf_context_memory_room(ctx)), LIBRARY_MARGIN) : 0;
    if (as_limit == SIZE_MAX) as_limit = 0; /* a room that large limits nothing */
    int fds[2];
    if (pipe(fds) != 0) return pf_fail(ctx, PF_EIO, "'%s': cannot make a pipe to read the file (%s)", path, strerror(errno));
    pid_t pid = fork();
    if (pid < 0) {
        int e = errno;
        close(fds[0]);
        close(fds[1]);
        return pf_fail(ctx, PF_EIO, "'%s': cannot start the process that reads the file (%s)", path, strerror(e));
    }
    if (pid == 0) {
        close(fds[0]);
        child_main(ctx, path, src, fds[1], as_limit); /* does not return */
    }
    close(fds[1]);
    pf_status child_status = PF_EIO;
    size_t held = 0;
    enum recv_result rr = receive(ctx, path, fds[0], out, &child_status, &held);
    int stopped = rr == RECV_STOP;
    /* A child that broke the protocol may still be writing: it is not
     * waited for politely. */
    if (rr == RECV_STOP || rr == RECV_BAD) kill(pid, SIGKILL);
    close(fds[0]);
    int status = wait_child(ctx, pid, &stopped);
    pf_status s;
    if (stopped) {
        s = pf_fail(ctx, PF_ESTOP, "stopped on request (interrupt or time limit) while reading '%s'", path);
    } else if (rr == RECV_BAD) {
        s = pf_context_status(ctx);
        if (s == PF_OK) s = PF_EIO;
    } else if (rr == RECV_DONE && status >= 0 && WIFEXITED(status) && WEXITSTATUS(status) == 0) {
        s = child_status; /* the reader's own verdict, message already in ctx */
    } else {
        s = child_failure(ctx, path, status);
    }
    if (!s) s = pf_read_hold(ctx, path, held, &out->charged_ctx, &out->charged);
    if (s) pf_samples_free(out);
    return s;
}
