/* pfr_record.h - the runner's side of a run's record: flags for outputs,
 * the manifest at the end of the run. */
#ifndef PFR_RECORD_H
#define PFR_RECORD_H

#include <lua.h>

/* Tells the engine the script (a path, or a label for a bundled recipe), its
 * SHA-256 in hex (NULL or "": hash the file at script), and the --quiet /
 * --overwrite flags. */
void pfr_record_begin(lua_State *L, const char *script, const char *sha256, int quiet, int overwrite);
/* Finishes open outputs and writes the manifest; returns the exit status to
 * use: status, PFR_EXIT_SCRIPT when an ok run could not write the manifest,
 * or, for a run stopped early, 128 + signal number or 5 (time limit). */
int pfr_record_end(lua_State *L, int status, const char *error, int nsets, char **sets);

#endif
