/* pfr_stop.h - how a run stops early: on SIGINT/SIGTERM/SIGHUP and at the
 * --time-limit, the same way in both cases.
 *
 * The first signal (or the deadline) makes a stop pending.  From then on:
 * a hook on the Lua thread that runs (the main one or a coroutine) raises
 * the stop error at its next instruction, and on every thread that runs
 * later; pcall, xpcall, coroutine.resume/wrap and coroutine.close pass the
 * stop on instead of returning it, so a script cannot swallow it; long
 * engine loops see it through the context's stop check (PF_ESTOP).  The run
 * then unwinds normally: open outputs are discarded, the manifest says why,
 * and the exit status is 128 + signal (interrupt) or 5 (time limit).  Code
 * that cannot be interrupted is ended by an alarm 3 s after a signal (or a
 * grace period after the time limit), without a manifest.  A second signal
 * ends the process at once, removing files still being written.
 *
 * Signal handlers take no arguments, so the stop state is process-wide; the
 * runner runs one script per process. */
#ifndef PFR_STOP_H
#define PFR_STOP_H

#include <lua.h>

/* Chunk name of the catcher wrappers; tracebacks leave their frames out. */
#define PFR_STOP_CHUNK "(psiflight stop guard)"

/* Installs the SIGINT, SIGTERM and SIGHUP handlers. */
void pfr_stop_install_signals(void);
/* Starts watching L (the main thread, before the script runs): the engine's
 * stop check, the wrappers of pcall/xpcall/coroutine.resume/coroutine.wrap/
 * coroutine.close, and the time limit (seconds > 0; 0: none). */
void pfr_stop_begin(lua_State *L, double seconds);
/* Stops watching (the script has returned); later signals end the process. */
void pfr_stop_end(lua_State *L);
/* Nonzero when a stop is pending (a signal arrived or the deadline passed). */
int pfr_stop_pending(void);
/* One line saying why the run stopped ("interrupted by signal 15 (SIGTERM)",
 * "time limit of 2 s reached"); "" when no stop is pending. */
const char *pfr_stop_reason(void);
/* The exit status of a stopped run: 128 + signal number, or 5 for the time
 * limit; status unchanged when no stop is pending. */
int pfr_stop_exit_status(int status);

#endif
