/* pfr_record.h - the runner's side of a run's record: flags for outputs,
 * the manifest at the end of the run, and cleanup of unfinished files when
 * the run is interrupted. */
#ifndef PFR_RECORD_H
#define PFR_RECORD_H

#include <lua.h>

/* Tells the engine the script (a path, or a label for a bundled recipe), its
 * SHA-256 in hex (NULL or "": hash the file at script), and the --quiet /
 * --overwrite flags. */
void pfr_record_begin(lua_State *L, const char *script, const char *sha256, int quiet, int overwrite);
/* Finishes open outputs and writes the manifest; returns the exit status to
 * use: status, PFR_EXIT_SCRIPT when an ok run could not write the manifest,
 * or 128 + signal number when a signal interrupted the run. */
int pfr_record_end(lua_State *L, int status, const char *error, int nsets, char **sets);
/* SIGINT, SIGTERM and SIGHUP: the first stops the script with an error (its
 * outputs are discarded, the manifest says "failed"); a second, or one
 * outside a script, removes files still being written and ends the process
 * as the signal would have. */
void pfr_install_interrupt_cleanup(void);

#endif
