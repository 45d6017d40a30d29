/* pfr_record.h - the runner's side of a run's record: flags for outputs,
 * the manifest at the end of the run, and cleanup of unfinished files when
 * the run is interrupted. */
#ifndef PFR_RECORD_H
#define PFR_RECORD_H

#include <lua.h>

/* Tells the engine the script path and the --quiet / --overwrite flags. */
void pfr_record_begin(lua_State *L, const char *script, int quiet, int overwrite);
/* Finishes open outputs and writes the manifest; returns the exit status to
 * use (status, or PFR_EXIT_SCRIPT when an ok run could not write it). */
int pfr_record_end(lua_State *L, int status, const char *error, int nsets, char **sets);
/* SIGINT, SIGTERM and SIGHUP remove files still being written, then end the
 * process as the signal would have. */
void pfr_install_interrupt_cleanup(void);

#endif
