/* pf_readcap.h - sizes read from outside files, checked before anything is
 * allocated: per-axis limits, overflow-free products, and the engine's
 * memory cap.
 *
 * A data file is written by someone else's instrument or script; its shape
 * and row counts are claims, not facts.  Every reader in engine/io turns
 * those claims into a byte count here first, so a 1 kB file cannot make the
 * engine allocate (or wrap to) an absurd size. */
#ifndef PF_READCAP_H
#define PF_READCAP_H

#include <stddef.h>
#include <stdint.h>
#include "pf_context.h"

/* The most samples one axis of a file may hold: the same bound a grid axis
 * accepts (PF_MAX_AXIS_POINTS in engine/core/base/pf_grid.c), since samples end
 * up on a grid. */
#define PF_READ_MAX_AXIS ((uint64_t)1 << 30)

/* Bytes needed for rank axes of dims[] samples of elem bytes each.  Refuses
 * (PF_ELIMIT, message naming path and what) an axis longer than
 * PF_READ_MAX_AXIS and any product that overflows size_t.  rank may be 0
 * (one element). */
pf_status pf_read_shape_bytes(pf_context *ctx, const char *path, const char *what, int rank, const uint64_t *dims,
                              size_t elem, size_t *bytes);

/* Refuses (PF_ELIMIT: "file 'path' needs N bytes, over the memory cap ...")
 * a read that needs more bytes than the engine's memory cap leaves free
 * (cap - used).  The one place file readers consult the cap. */
pf_status pf_read_budget(pf_context *ctx, const char *path, size_t bytes);
/* Charges the bytes a finished read keeps (its result's buffers) to the
 * context's memory cap for as long as the result lives: the result records
 * *charged_ctx (retained) and *charged, and its free function discharges
 * them.  Fails with the cap's status when they do not fit. */
pf_status pf_read_hold(pf_context *ctx, const char *path, size_t bytes, pf_context **charged_ctx, size_t *charged);

/* a + b, or SIZE_MAX when the sum overflows (which the budget refuses). */
size_t pf_read_add(size_t a, size_t b);

#endif
