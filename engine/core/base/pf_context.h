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

/* Cap on the bytes the engine may hold at once: wave-function storage,
 * scratch and work arrays, per-axis tables, ensemble buffers, and whatever
 * a layer outside the core charges through the calls below. */
pf_status pf_context_set_memory_cap(pf_context *ctx, size_t bytes);
size_t pf_context_memory_cap(const pf_context *ctx);
/* Bytes charged now: every live pf_context_alloc block plus every
 * pf_context_charge not yet discharged. */
size_t pf_context_memory_used(const pf_context *ctx);
/* Bytes that may still be charged before the cap is reached. */
size_t pf_context_memory_room(const pf_context *ctx);

/* Accounted allocation, public so that layers outside the core (file readers,
 * the binding) count against the same cap.  Returns memory aligned to 64
 * bytes (SIMD, FFTW), or NULL with the reason recorded: pf_context_status is
 * then PF_ELIMIT (the cap would be exceeded, or bytes is 0: a size computation
 * overflowed) or PF_ENOMEM (the system refused, or an injected failure).
 * Blocks of PF_CONTEXT_MAP_MIN bytes or more are mapped from the system and
 * returned to it by pf_context_free, so closing large objects lowers the
 * process's resident memory instead of leaving it with the C allocator
 * (under AddressSanitizer they stay with its allocator, which checks them). */
void *pf_context_alloc(pf_context *ctx, size_t bytes);
/* Releases a pf_context_alloc block (NULL is harmless) and discharges it. */
void pf_context_free(pf_context *ctx, void *p);
#define PF_CONTEXT_MAP_MIN ((size_t)256 << 10)

/* Charges bytes held elsewhere (e.g. a reader's own buffers) to the cap:
 * PF_OK, or PF_ELIMIT with a message when they do not fit (nothing charged).
 * Every successful charge is discharged with the same count when released. */
pf_status pf_context_charge(pf_context *ctx, size_t bytes);
void pf_context_discharge(pf_context *ctx, size_t bytes);

/* Fault injection for tests: the count-th engine allocation from now
 * (pf_context_alloc, 1-based) fails as if the system were out of memory;
 * 0 turns it off.  The runner sets it from PSIFLIGHT_FAIL_ALLOC. */
void pf_context_fail_allocation(pf_context *ctx, unsigned long count);
/* Engine allocations made so far (to size a fault-injection walk). */
unsigned long pf_context_allocations(const pf_context *ctx);

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
/* Status of the last failure recorded in this context (PF_OK when none), so
 * that a caller learns why an allocation failed from a code, never from the
 * message text. */
pf_status pf_context_status(const pf_context *ctx);

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

/* Progress of long engine calls (evolve, relax, fly_long, thermal ensembles,
 * sampling).  A caller that shows progress (the Lua binding, on a terminal)
 * installs a hook; the core reports each task as it goes: done = 0 at the
 * start, done in (0, total) per step, and done >= total, or done < 0 for an
 * early end (an error or a stop), exactly once at the end.  The hook runs on
 * the calling thread outside parallel regions, must be cheap, and must not
 * touch anything the computation reads: progress never changes a result. */
typedef void (*pf_progress_fn)(void *user, const char *task, double done, double total);
/* Installs fn (NULL: no reports). */
void pf_context_set_progress(pf_context *ctx, pf_progress_fn fn, void *user);
/* Reports progress of task (a short static name such as "evolve"). */
void pf_context_progress(pf_context *ctx, const char *task, double done, double total);

#endif
