/* pfr_record.c - runner hooks for outputs: configuring the record, writing
 * the manifest at the end, removing unfinished files on interrupts. */
#include <signal.h>
#include <string.h>
#include "../io/pf_safefile.h"
#include "../lua/pfl.h"
#include "pfr_exit.h"
#include "pfr_record.h"

void pfr_record_begin(lua_State *L, const char *script, int quiet, int overwrite)
{
    pfl_record_configure(L, script, quiet, overwrite);
}

int pfr_record_end(lua_State *L, int status, const char *error, int nsets, char **sets)
{
    int rc = pfl_record_finish(L, status == PFR_EXIT_OK, error, nsets, sets);
    return rc != 0 && status == PFR_EXIT_OK ? PFR_EXIT_SCRIPT : status;
}

/* Temporary files are half-written by definition; removing them is all the
 * handler does (unlink is async-signal-safe), then the default action runs
 * so the exit status still says which signal ended the run. */
static void on_interrupt(int sig)
{
    pf_safe_remove_all_partial();
    signal(sig, SIG_DFL);
    raise(sig);
}

void pfr_install_interrupt_cleanup(void)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_interrupt;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, NULL);
    sigaction(SIGTERM, &sa, NULL);
    sigaction(SIGHUP, &sa, NULL);
}
