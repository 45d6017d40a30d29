/* pf_plguard.h - runs PLplot drawing so that PLplot's fatal errors come
 * back as a status instead of ending the process.
 *
 * PLplot handles a fatal error by calling exit() (plexit); a library inside
 * a Lua run must not do that: the run's manifest would never be written and
 * a half-made file would stay behind.  PLplot lets a program install an exit
 * handler (plsexit) but exits when the handler returns, so the handler here
 * jumps back to the guard instead.  Non-fatal errors (plabort) are recorded
 * and also reported as a failure, since their picture is incomplete. */
#ifndef PF_PLGUARD_H
#define PF_PLGUARD_H

#include "pf_context.h"

/* Runs draw(user), which makes one PLplot stream and ends it with plend1.
 * Returns PF_OK, or PF_EIO with "PLplot failed: <PLplot's message>" after
 * PLplot's exit or abort handler ran; after an exit the stream is ended
 * here.  draw must not own resources that a jump out of it would leak
 * (allocate before, free after the call).  Not reentrant: one picture at a
 * time per process, as PLplot's handlers are process-wide. */
pf_status pf_plguard_run(pf_context *ctx, void (*draw)(void *user), void *user);

#endif
