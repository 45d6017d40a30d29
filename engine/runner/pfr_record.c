/* pfr_record.c - runner hooks for outputs: configuring the record and
 * writing the manifest at the end, also for a run that was stopped early
 * (pfr_stop.c decides when; the manifest then says why). */
#include <stdio.h>
#include <string.h>
#include "pfl.h"
#include "pfr_exit.h"
#include "pfr_record.h"
#include "pfr_stop.h"

void pfr_record_begin(lua_State *L, const char *script, const char *sha256, int quiet, int overwrite)
{
    pfl_record_configure(L, script, sha256, quiet, overwrite);
}

int pfr_record_end(lua_State *L, int status, const char *error, int nsets, char **sets)
{
    if (pfr_stop_pending()) {
        /* The script may have caught the error, or an engine call reported
         * it as its own failure; the run was stopped all the same, and the
         * manifest says why. */
        error = pfr_stop_reason();
        status = PFR_EXIT_SCRIPT;
    }
    int rc = pfl_record_finish(L, status == PFR_EXIT_OK, error, nsets, sets);
    if (pfr_stop_pending()) return pfr_stop_exit_status(status);
    return rc != 0 && status == PFR_EXIT_OK ? PFR_EXIT_SCRIPT : status;
}
