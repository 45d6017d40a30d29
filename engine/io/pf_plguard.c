/* pf_plguard.c - PLplot's exit and abort handlers turned into a status
 * (see pf_plguard.h for why a jump is the only way back). */
#include <setjmp.h>
#include <stdio.h>
#include <plplot.h>
#include "pf_plguard.h"

/* Process-wide because PLplot's handlers are: plsexit and plsabort take a
 * plain function without user data. */
static jmp_buf fatal_jump;
static volatile int armed;
static int aborted;
static char message[256];

static int on_exit_request(PLCHAR_VECTOR msg)
{
    snprintf(message, sizeof message, "%s", msg && *msg ? msg : "fatal error");
    if (armed) {
        armed = 0;
        longjmp(fatal_jump, 1);
    }
    return 1; /* not inside a guard: PLplot exits as it would anyway */
}

static void on_abort(PLCHAR_VECTOR msg)
{
    aborted = 1;
    snprintf(message, sizeof message, "%s", msg && *msg ? msg : "error");
}

pf_status pf_plguard_run(pf_context *ctx, void (*draw)(void *user), void *user)
{
    aborted = 0;
    message[0] = '\0';
    plsexit(on_exit_request);
    plsabort(on_abort);
    int fatal = 0;
    if (setjmp(fatal_jump) == 0) {
        armed = 1;
        draw(user);
        armed = 0;
    } else {
        fatal = 1;
        /* Ending the stream closes its output file; if PLplot fails again
         * on the way, the second jump lands here and the stream is left. */
        if (setjmp(fatal_jump) == 0) {
            armed = 1;
            plend1();
        }
        armed = 0;
    }
    plsexit(NULL);
    plsabort(NULL);
    if (fatal || aborted) return pf_fail(ctx, PF_EIO, "PLplot failed: %s", message);
    return PF_OK;
}
