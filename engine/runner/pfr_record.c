/* pfr_record.c - runner hooks for outputs: configuring the record, writing
 * the manifest at the end, and stopping cleanly on interrupts.
 *
 * The first SIGINT, SIGTERM or SIGHUP during a script asks the script to
 * stop, as lua.c does for Ctrl-C: a hook raises an error at the next Lua
 * step, so open outputs are discarded and the manifest records the failed
 * run.  A second signal (or one outside the script, or while C code runs
 * for a long time and the user insists) removes the partial files at once
 * and ends the process by the signal's default action. */
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include "../io/pf_safefile.h"
#include "../lua/pfl.h"
#include "pfr_exit.h"
#include "pfr_record.h"

/* Signal handlers cannot be given arguments; these two are the only state
 * they share with the runner. */
static lua_State *volatile running;
static volatile sig_atomic_t stop_signal;

static void stop_hook(lua_State *L, lua_Debug *ar)
{
    (void)ar;
    lua_sethook(L, NULL, 0, 0);
    luaL_error(L, "interrupted by signal %d (%s)", (int)stop_signal,
               stop_signal == SIGINT ? "SIGINT" : stop_signal == SIGTERM ? "SIGTERM" : "SIGHUP");
}

void pfr_record_begin(lua_State *L, const char *script, const char *sha256, int quiet, int overwrite)
{
    pfl_record_configure(L, script, sha256, quiet, overwrite);
    running = L;
}

int pfr_record_end(lua_State *L, int status, const char *error, int nsets, char **sets)
{
    running = NULL;
    int sig = stop_signal;
    char text[96];
    if (sig) {
        /* The script may have caught the error; the run was interrupted all
         * the same. */
        snprintf(text, sizeof text, "interrupted by signal %d", sig);
        if (status == PFR_EXIT_OK || !error) error = text;
        status = PFR_EXIT_SCRIPT;
    }
    int rc = pfl_record_finish(L, status == PFR_EXIT_OK, error, nsets, sets);
    if (sig) return 128 + sig; /* the shells' convention for "ended by a signal" */
    return rc != 0 && status == PFR_EXIT_OK ? PFR_EXIT_SCRIPT : status;
}

static void on_interrupt(int sig)
{
    lua_State *L = running;
    if (L && !stop_signal) {
        stop_signal = sig;
        /* lua_sethook may be called from a signal handler (lua.c relies on
         * it); every kind of event fires it, so the script stops soon. */
        lua_sethook(L, stop_hook, LUA_MASKCALL | LUA_MASKRET | LUA_MASKCOUNT, 1);
        return;
    }
    /* Temporary files are half-written by definition; unlink is
     * async-signal-safe.  Then the default action, so the exit status
     * still says which signal ended the run. */
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
