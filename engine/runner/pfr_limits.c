/* pfr_limits.c - the Lua heap cap and the wall-time limit of a run.
 *
 * The heap cap counts every byte the Lua state holds (tables, strings, and
 * userdata headers; wave-function storage is capped separately by the engine's
 * memory cap).  The time limit is checked by a count hook, so it interrupts
 * Lua loops at once; a C call that does not return in time is stopped by an
 * alarm, since the core must not be interrupted half-way through a step. */
#define _GNU_SOURCE
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <sys/time.h>
#include <time.h>
#include <unistd.h>
#include <lauxlib.h>
#include "../lua/pfl.h"
#include "pfr_exit.h"
#include "pfr_limits.h"

void *pfr_limits_alloc(void *ud, void *ptr, size_t osize, size_t nsize)
{
    pfr_limits *lim = ud;
    size_t old = ptr ? osize : 0; /* for a new block osize is a type tag */
    if (nsize == 0) {
        free(ptr);
        lim->used -= old;
        return NULL;
    }
    if (nsize > old && lim->used + (nsize - old) > lim->cap) {
        lim->cap_hit = 1;
        return NULL;
    }
    void *p = realloc(ptr, nsize);
    if (!p) return NULL;
    lim->used = lim->used - old + nsize;
    return p;
}

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Set once the hook has raised the time-limit error, for the alarm handler's
 * message (a signal handler can only read such a flag). */
static volatile sig_atomic_t limit_raised;

static void time_hook(lua_State *L, lua_Debug *ar)
{
    void *ud;
    lua_getallocf(L, &ud);
    pfr_limits *lim = ud;
    if (!lim->deadline || now() < lim->deadline) return;
    lim->time_hit = 1;
    limit_raised = 1;
    lua_getinfo(L, "Sl", ar);
    pfl_error(L, PFL_ERROR_LIMIT, "time limit of %g s reached while running %s:%d (--time-limit)", lim->seconds,
              ar->short_src, ar->currentline);
}

static void on_alarm(int sig)
{
    static const char in_engine[] = "psiflight: time limit reached inside an engine call; run stopped (--time-limit)\n";
    static const char caught[] = "psiflight: time limit reached and the script kept running (it catches the "
                                 "error with pcall); run stopped (--time-limit)\n";
    (void)sig;
    ssize_t r = limit_raised ? write(2, caught, sizeof caught - 1) : write(2, in_engine, sizeof in_engine - 1);
    (void)r;
    _exit(PFR_EXIT_LIMIT);
}

void pfr_limits_arm_time(lua_State *L, double seconds)
{
    void *ud;
    lua_getallocf(L, &ud);
    pfr_limits *lim = ud;
    lim->seconds = seconds;
    lim->deadline = now() + seconds;
    lua_sethook(L, time_hook, LUA_MASKCOUNT, 1000);
    double grace = seconds * 0.1 > 2.0 ? seconds * 0.1 : 2.0;
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_alarm;
    sigaction(SIGALRM, &sa, NULL);
    struct itimerval it;
    memset(&it, 0, sizeof it);
    double hard = seconds + grace;
    it.it_value.tv_sec = (time_t)hard;
    it.it_value.tv_usec = (suseconds_t)((hard - (double)(time_t)hard) * 1e6);
    setitimer(ITIMER_REAL, &it, NULL);
}

void pfr_limits_disarm(void)
{
    struct itimerval it;
    memset(&it, 0, sizeof it);
    setitimer(ITIMER_REAL, &it, NULL);
}
