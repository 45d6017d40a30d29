/* pf_context.c - engine settings, error text and status, warnings, accounted
 * allocation (cap, release to the system, fault injection) and the FFTW
 * planner state (threads, wisdom). */
#define _DEFAULT_SOURCE /* MAP_ANONYMOUS */
#include <errno.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>
#include "pf_dist.h"
#include "pf_internal.h"

/* FFTW's planner and its thread layer are process-global.  We initialise the
 * thread layer once, count live contexts, and run FFTW's cleanup only when the
 * last context (hence every grid and plan) is gone, as FFTW requires. */
static int fftw_threads_ready;
static int live_contexts;

static void fftw_threads_once(void)
{
    if (!fftw_threads_ready) {
        fftw_init_threads();
        fftw_threads_ready = 1;
    }
}

pf_context *pf_context_new(void)
{
    pf_context *ctx = calloc(1, sizeof *ctx);
    if (!ctx) return NULL;
    ctx->refs = 1;
    ctx->threads = 1;
    ctx->planning = PF_PLAN_MEASURE;
    ctx->memory_cap = (size_t)16 << 30;
    fftw_threads_once();
    live_contexts++;
    return ctx;
}

void pf_context_retain(pf_context *ctx)
{
    if (ctx) ctx->refs++;
}

void pf_context_release(pf_context *ctx)
{
    if (!ctx || --ctx->refs > 0) return;
    free(ctx->wisdom_path);
    free(ctx->wisdom_path_mpi);
    pf_dist_plans_free(ctx); /* before FFTW's threads layer is cleaned up below */
    pf_context_free_plan_notes(ctx);
    free(ctx);
    if (--live_contexts == 0 && fftw_threads_ready) {
        fftw_cleanup_threads();
        fftw_threads_ready = 0;
    }
}

pf_status pf_context_set_threads(pf_context *ctx, int threads)
{
    if (threads < 1 || threads > 1024)
        return pf_fail(ctx, PF_EINVAL, "thread count must be 1..1024, got %d", threads);
    ctx->threads = threads;
    return PF_OK;
}

int pf_context_threads(const pf_context *ctx) { return ctx->threads; }

pf_status pf_context_set_planning(pf_context *ctx, pf_planning mode)
{
    if (mode != PF_PLAN_MEASURE && mode != PF_PLAN_ESTIMATE)
        return pf_fail(ctx, PF_EINVAL, "unknown planning mode %d", (int)mode);
    ctx->planning = mode;
    return PF_OK;
}

pf_planning pf_context_planning(const pf_context *ctx) { return ctx->planning; }

const char *pf_context_planning_name(const pf_context *ctx)
{
    return ctx->planning == PF_PLAN_ESTIMATE ? "estimate" : "measure";
}

pf_status pf_context_set_wisdom_path(pf_context *ctx, const char *path)
{
    char *copy = NULL;
    if (path && *path) {
        copy = strdup(path);
        if (!copy) return pf_fail(ctx, PF_ENOMEM, "out of memory copying the wisdom path");
    }
    char *copy_mpi = NULL;
    if (copy) {
        size_t len = strlen(copy);
        copy_mpi = malloc(len + 5);
        if (!copy_mpi) {
            free(copy);
            return pf_fail(ctx, PF_ENOMEM, "out of memory copying the wisdom path");
        }
        memcpy(copy_mpi, copy, len);
        memcpy(copy_mpi + len, "-mpi", 5);
    }
    free(ctx->wisdom_path);
    free(ctx->wisdom_path_mpi);
    ctx->wisdom_path = copy;
    ctx->wisdom_path_mpi = copy_mpi;
    ctx->wisdom_loaded = 0;
    return PF_OK;
}

/* The file this process reads and writes: FFTW stamps wisdom with a
 * signature of the registered planners and refuses a file with another, so
 * once FFTW-MPI's planners are registered (a distributed run) the wisdom
 * lives in its own file, PATH-mpi, and one-process runs keep PATH. */
static const char *wisdom_file(const pf_context *ctx)
{
    return pf_dist_planners_registered() ? ctx->wisdom_path_mpi : ctx->wisdom_path;
}

const char *pf_context_wisdom_path(const pf_context *ctx) { return wisdom_file(ctx); }

void pf_context_wisdom_digest(const pf_context *ctx, char out[17])
{
    (void)ctx;
    uint64_t h = 14695981039346656037ull; /* FNV-1a 64 offset basis */
    char *text = fftw_export_wisdom_to_string();
    if (text) {
        for (const unsigned char *p = (const unsigned char *)text; *p; p++) {
            h ^= *p;
            h *= 1099511628211ull; /* FNV-1a 64 prime */
        }
        free(text);
    }
    snprintf(out, 17, "%016llx", (unsigned long long)h);
}

pf_status pf_context_set_memory_cap(pf_context *ctx, size_t bytes)
{
    if (bytes == 0) return pf_fail(ctx, PF_EINVAL, "memory cap must be positive");
    ctx->memory_cap = bytes;
    return PF_OK;
}

size_t pf_context_memory_cap(const pf_context *ctx) { return ctx->memory_cap; }
size_t pf_context_memory_used(const pf_context *ctx) { return ctx->memory_used; }

void pf_context_set_warn_handler(pf_context *ctx, pf_warn_fn fn, void *user)
{
    ctx->warn = fn;
    ctx->warn_user = user;
}

void pf_context_warn(pf_context *ctx, const char *fmt, ...)
{
    char text[1024];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(text, sizeof text, fmt, ap);
    va_end(ap);
    if (ctx && ctx->warn)
        ctx->warn(ctx->warn_user, text);
    else
        fprintf(stderr, "psiflight: warning: %s\n", text);
}

pf_status pf_fail(pf_context *ctx, pf_status s, const char *fmt, ...)
{
    if (ctx) {
        va_list ap;
        va_start(ap, fmt);
        vsnprintf(ctx->message, sizeof ctx->message, fmt, ap);
        va_end(ap);
        ctx->status = s;
    }
    return s;
}

const char *pf_context_message(const pf_context *ctx)
{
    return ctx->message[0] ? ctx->message : "no error recorded";
}

pf_status pf_context_status(const pf_context *ctx) { return ctx->status; }

size_t pf_bytes(size_t count, size_t size)
{
    if (size && count > SIZE_MAX / size) return 0;
    return count * size;
}

/* --- Accounted allocation ------------------------------------------------
 * Every block starts with a header one alignment unit long that records its
 * size and how it was obtained, so pf_context_free discharges exactly what
 * was charged.  Large blocks are mapped with mmap and unmapped on free: glibc
 * keeps freed heap blocks of a few MiB for reuse (its mmap threshold rises
 * after the first large free), so a script that builds and closes waves in a
 * loop would otherwise grow its resident memory without bound, unseen by the
 * cap.  Small blocks stay on the heap, where reuse is cheap. */
/* "12.0 MiB" or "512 bytes": small blocks would all print as 0.0 MiB. */
static const char *size_text(size_t bytes, char buf[32])
{
    if (bytes < ((size_t)1 << 20))
        snprintf(buf, 32, "%zu bytes", bytes);
    else
        snprintf(buf, 32, "%.1f MiB", bytes / 1048576.0);
    return buf;
}

/* Under AddressSanitizer every block stays with its allocator, which
 * checks overruns (it cannot see into our mappings) and returns large freed
 * blocks to the system itself after its quarantine. */
#if defined(__has_feature)
#if __has_feature(address_sanitizer) /* clang's spelling of the same test */
#define PF_UNDER_ASAN 1
#endif
#endif
#if defined(__SANITIZE_ADDRESS__) || defined(PF_UNDER_ASAN)
#define MAP_LARGE_BLOCKS 0
#else
#define MAP_LARGE_BLOCKS 1
#endif

/* User address space of x86-64 and AArch64 with 4-level page tables. */
#define ADDRESS_SPACE_MAX ((size_t)1 << 47)

#define BLOCK_ALIGN 64
#define BLOCK_MAGIC 0x70736966u /* "psif": catches a free of a foreign pointer */

typedef struct block_header {
    size_t bytes;      /* bytes asked for (charged to the cap) */
    size_t mapped;     /* length of the mapping, 0 for a heap block */
    unsigned magic;
} block_header;
_Static_assert(sizeof(block_header) <= BLOCK_ALIGN, "header fits its alignment unit");

static size_t page_size(void)
{
    static size_t page;
    if (!page) {
        long p = sysconf(_SC_PAGESIZE);
        page = p > 0 ? (size_t)p : 4096;
    }
    return page;
}

pf_status pf_context_charge(pf_context *ctx, size_t bytes)
{
    char b[32];
    if (bytes > ctx->memory_cap || ctx->memory_used > ctx->memory_cap - bytes)
        return pf_fail(ctx, PF_ELIMIT,
                       "allocating %s would exceed the memory cap of %.1f MiB (%.1f MiB in use); "
                       "use fewer grid points or raise the cap",
                       size_text(bytes, b), ctx->memory_cap / 1048576.0, ctx->memory_used / 1048576.0);
    ctx->memory_used += bytes;
    return PF_OK;
}

void pf_context_discharge(pf_context *ctx, size_t bytes)
{
    /* Never wraps: a discharge larger than the charge is a caller bug, and a
     * huge memory_used would then refuse every later allocation. */
    ctx->memory_used = bytes <= ctx->memory_used ? ctx->memory_used - bytes : 0;
}

size_t pf_context_memory_room(const pf_context *ctx)
{
    return ctx->memory_used < ctx->memory_cap ? ctx->memory_cap - ctx->memory_used : 0;
}

void pf_context_fail_allocation(pf_context *ctx, unsigned long count)
{
    ctx->fail_at = count ? ctx->allocations + count : 0;
}

unsigned long pf_context_allocations(const pf_context *ctx) { return ctx->allocations; }

void *pf_context_alloc(pf_context *ctx, size_t bytes)
{
    if (bytes == 0) {
        pf_fail(ctx, PF_ELIMIT, "allocation size overflows");
        return NULL;
    }
    ctx->allocations++;
    if (ctx->fail_at && ctx->allocations == ctx->fail_at) {
        char b[32];
        pf_fail(ctx, PF_ENOMEM, "out of memory allocating %s (injected failure of engine allocation %lu)",
                size_text(bytes, b), ctx->allocations);
        return NULL;
    }
    if (bytes > SIZE_MAX - 2 * page_size() || pf_context_charge(ctx, bytes) != PF_OK) {
        if (bytes > SIZE_MAX - 2 * page_size()) pf_fail(ctx, PF_ELIMIT, "allocation size overflows");
        return NULL;
    }
    size_t whole = bytes + BLOCK_ALIGN;
    unsigned char *base = NULL;
    size_t mapped = 0;
    if (bytes > ADDRESS_SPACE_MAX) {
        /* No system gives this much; asking could only fail (or, under a
         * sanitizer, abort the process). */
    } else if (MAP_LARGE_BLOCKS && bytes >= PF_CONTEXT_MAP_MIN) {
        mapped = (whole + page_size() - 1) / page_size() * page_size();
        void *m = mmap(NULL, mapped, PROT_READ | PROT_WRITE, MAP_PRIVATE | MAP_ANONYMOUS, -1, 0);
        base = m == MAP_FAILED ? NULL : m;
    } else {
        void *m = NULL;
        base = posix_memalign(&m, BLOCK_ALIGN, whole) == 0 ? m : NULL;
    }
    if (!base) {
        pf_context_discharge(ctx, bytes);
        char b[32];
        pf_fail(ctx, PF_ENOMEM, "out of memory allocating %s (the system refused; the cap was not reached)",
                size_text(bytes, b));
        return NULL;
    }
    block_header *h = (block_header *)base;
    h->bytes = bytes;
    h->mapped = mapped;
    h->magic = BLOCK_MAGIC;
    return base + BLOCK_ALIGN;
}

void pf_context_free(pf_context *ctx, void *p)
{
    if (!p) return;
    unsigned char *base = (unsigned char *)p - BLOCK_ALIGN;
    block_header *h = (block_header *)base;
    /* Not ours, or freed twice: a bug, but the core never exits, so leave the
     * block alone rather than corrupt the heap (AddressSanitizer reports
     * the read of a freed header in the sanitizer build). */
    if (h->magic != BLOCK_MAGIC) return;
    h->magic = 0;
    pf_context_discharge(ctx, h->bytes);
    if (h->mapped)
        munmap(base, h->mapped);
    else
        free(base);
}

void *pf_alloc(pf_context *ctx, size_t bytes) { return pf_context_alloc(ctx, bytes); }

void *pf_calloc(pf_context *ctx, size_t n, size_t size)
{
    size_t bytes = pf_bytes(n, size);
    void *p = pf_context_alloc(ctx, bytes);
    if (p) memset(p, 0, bytes);
    return p;
}

void pf_free(pf_context *ctx, void *p, size_t bytes)
{
    (void)bytes;
    pf_context_free(ctx, p);
}

unsigned pf_context_prepare_planner(pf_context *ctx)
{
    fftw_threads_once();
    fftw_plan_with_nthreads(ctx->threads);
    /* Before the wisdom is read: a file saved by a distributed run names
     * FFTW-MPI's plans, which FFTW only reads once they are registered
     * (without this the whole file was refused and every rerun planned
     * afresh).  Their registration also selects the distributed file. */
    pf_dist_planner_ready(ctx->distribute);
    /* Estimate mode ignores wisdom on purpose: measured wisdom would make the
     * plan, and so the last bits of results, depend on this machine.  Each
     * file is read once, before its first plan (a script that turns
     * distribution on after planning reads the distributed file then). */
    const int bit = pf_dist_planners_registered() ? 2 : 1;
    const char *file = wisdom_file(ctx);
    if (ctx->planning == PF_PLAN_MEASURE && file && !(ctx->wisdom_loaded & bit)) {
        ctx->wisdom_loaded |= bit;
        if (access(file, R_OK) == 0 && !fftw_import_wisdom_from_filename(file))
            pf_context_warn(ctx, "FFTW wisdom file %s could not be read; planning afresh", file);
    }
    return ctx->planning == PF_PLAN_ESTIMATE ? FFTW_ESTIMATE : FFTW_MEASURE;
}

/* Creates the parent folders of path (like mkdir -p on its dirname). */
static void make_parent_dirs(const char *path)
{
    char buf[4096];
    size_t len = strlen(path);
    if (len >= sizeof buf) return;
    memcpy(buf, path, len + 1);
    for (char *p = buf + 1; *p; p++) {
        if (*p != '/') continue;
        *p = '\0';
        if (mkdir(buf, 0777) != 0 && errno != EEXIST) return;
        *p = '/';
    }
}

void pf_context_store_wisdom(pf_context *ctx)
{
    const char *file = wisdom_file(ctx);
    if (ctx->planning != PF_PLAN_MEASURE || !file) return;
    /* On a distributed run rank 0 keeps the wisdom of all ranks
     * (fftw_mpi_gather_wisdom); another rank's file would lack theirs and
     * could replace it, since every rank sees the same path. */
    if (ctx->distribute && pf_dist_rank() != 0) return;
    char tmp[4200];
    if (snprintf(tmp, sizeof tmp, "%s.tmp.%ld", file, (long)getpid()) >= (int)sizeof tmp) return;
    make_parent_dirs(file);
    /* Write to a temporary name and rename, so a concurrent run never reads a
     * half-written wisdom file. */
    if (!fftw_export_wisdom_to_filename(tmp)) {
        unlink(tmp);
        pf_context_warn(ctx, "could not save FFTW wisdom to %s", file);
        return;
    }
    if (rename(tmp, file) != 0) {
        unlink(tmp);
        pf_context_warn(ctx, "could not save FFTW wisdom to %s", file);
    }
}

/* Stop checks: grouped here, apart from the settings and the allocator. */
void pf_context_set_stop_check(pf_context *ctx, pf_stop_fn fn, void *user)
{
    ctx->stop_check = fn;
    ctx->stop_user = user;
}

void pf_context_set_progress(pf_context *ctx, pf_progress_fn fn, void *user)
{
    ctx->progress = fn;
    ctx->progress_user = user;
}

void pf_context_progress(pf_context *ctx, const char *task, double done, double total)
{
    if (ctx && ctx->progress) ctx->progress(ctx->progress_user, task, done, total);
}

pf_status pf_context_poll_stop(pf_context *ctx)
{
    if (!ctx || !ctx->stop_check || !ctx->stop_check(ctx->stop_user)) return PF_OK;
    return pf_fail(ctx, PF_ESTOP, "stopped on request (interrupt or time limit)");
}
