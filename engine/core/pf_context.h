/* pf_context.h - per-session engine settings shared by grids and wave functions.
 *
 * A context carries what would otherwise be global: the thread count, the FFTW
 * planning mode and wisdom file, the memory cap, the handler that receives
 * warnings, and the text of the last error.  Grids retain their context, so a
 * context lives until the last grid made from it is released. */
#ifndef PF_CONTEXT_H
#define PF_CONTEXT_H

#include <stddef.h>
#include <stdint.h>
#include "pf_status.h"

typedef struct pf_context pf_context;

typedef enum pf_planning {
    PF_PLAN_MEASURE = 0,  /* FFTW_MEASURE, wisdom loaded from and saved to a file */
    PF_PLAN_ESTIMATE = 1  /* FFTW_ESTIMATE, no wisdom: same plan on every machine */
} pf_planning;

/* Receives each warning the engine emits (grid guards, resolution checks).
 * The text is complete and ends without a newline. */
typedef void (*pf_warn_fn)(void *user, const char *text);

/* Creates a context with one thread, measured planning, no wisdom file and a
 * memory cap of 16 GiB.  Returns NULL only when out of memory. */
pf_context *pf_context_new(void);
/* Adds a reference; pf_context_release drops one and frees at zero.
 * Releasing NULL is harmless. */
void pf_context_retain(pf_context *ctx);
void pf_context_release(pf_context *ctx);

/* Thread count for FFTW plans and engine loops (1..1024).  Plans made before a
 * change are remade lazily at the new count. */
pf_status pf_context_set_threads(pf_context *ctx, int threads);
int pf_context_threads(const pf_context *ctx);

pf_status pf_context_set_planning(pf_context *ctx, pf_planning mode);
pf_planning pf_context_planning(const pf_context *ctx);
const char *pf_context_planning_name(const pf_context *ctx);

/* Wisdom file for measured planning; NULL or "" disables it.  The file is read
 * before the first plan and rewritten atomically whenever a new plan was made. */
pf_status pf_context_set_wisdom_path(pf_context *ctx, const char *path);
const char *pf_context_wisdom_path(const pf_context *ctx);
/* 16 hex digits of a FNV-1a 64 hash of the wisdom FFTW holds now, for run
 * reports.  out must hold 17 bytes. */
void pf_context_wisdom_digest(const pf_context *ctx, char out[17]);

/* Cap on the bytes of wave-function storage the engine may hold at once. */
pf_status pf_context_set_memory_cap(pf_context *ctx, size_t bytes);
size_t pf_context_memory_cap(const pf_context *ctx);
size_t pf_context_memory_used(const pf_context *ctx);

void pf_context_set_warn_handler(pf_context *ctx, pf_warn_fn fn, void *user);
/* Sends a formatted warning to the handler (or stderr when none is set). */
void pf_context_warn(pf_context *ctx, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Records an error message and returns the status, so core code can write
 * `return pf_fail(ctx, PF_EINVAL, "span must be positive, got %g", s);`. */
pf_status pf_fail(pf_context *ctx, pf_status s, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
/* Text of the last failure recorded in this context. */
const char *pf_context_message(const pf_context *ctx);

/* Stopping long computations.  A caller that must be able to end a run at any
 * time (the runner, on SIGTERM or at its time limit) installs a stop check;
 * long loops (evolve, relax, ensemble builds) call pf_context_poll_stop once
 * per step or per member, which is far more often than every 100 ms.  The
 * check runs on the calling thread, outside parallel regions, so it may read
 * whatever the caller likes; it must be cheap (it is called per step).
 * Returns nonzero when the computation should stop. */
typedef int (*pf_stop_fn)(void *user);
/* Installs fn (NULL: never stop). */
void pf_context_set_stop_check(pf_context *ctx, pf_stop_fn fn, void *user);
/* PF_OK, or PF_ESTOP with the message "stopped on request" when the stop
 * check says so.  The loop then releases what it holds and returns the
 * status; objects are left valid (a wave may hold a part-way state). */
pf_status pf_context_poll_stop(pf_context *ctx);

#endif
