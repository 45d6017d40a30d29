/* pfr_stop.c - stopping a run early, on a signal or at the time limit (the
 * contract is in pfr_stop.h).
 *
 * Why each piece exists:
 * - a count hook on the main thread, set before the script is loaded: Lua
 *   hooks belong to one thread, and a coroutine copies its creator's hook
 *   when it is created, so only a hook present from the start reaches a loop
 *   inside a coroutine;
 * - the stop error is raised again at every hook tick and re-raised by the
 *   pcall/xpcall/coroutine.resume/coroutine.close wrappers, so catching it
 *   does not keep the script running;
 * - the engine's stop check (pf_context_poll_stop), so a long evolve or relax
 *   ends within one step instead of at its end;
 * - a hard end from the hook half a second after the request, for whatever
 *   still swallows the error (an error handler that loops, say): batch
 *   systems send TERM and KILL a few seconds apart, and the manifest must be
 *   written before the KILL;
 * - an alarm after the time limit plus a grace period, or 3 s after a
 *   signal, for code that does not poll (an FFTW plan being measured, a
 *   finaliser, which Lua runs with hooks off): it can only remove the
 *   partial files and exit, since the Lua state is busy. */
#define _GNU_SOURCE
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <sys/time.h>
#include <time.h>
#include <unistd.h>
#include <lauxlib.h>
#include "../core/pf_context.h"
#include "../io/pf_safefile.h"
#include "../lua/pfl.h"
#include "pfr_exit.h"
#include "pfr_stop.h"

/* Instructions between two looks at the stop state: about 10 microseconds
 * of Lua, so the look (a flag, and a clock read under a time limit) costs
 * well under a percent. */
#define WATCH_EVERY 1000
/* A stop still ignored this long after it was first seen ends the run from
 * the hook (well inside the 1 s a batch system's TERM-to-KILL gap allows). */
#define HARD_END_AFTER 0.5

/* Shared with the signal handler: only sig_atomic_t flags. */
static volatile sig_atomic_t watching;
static volatile sig_atomic_t stop_signal;

/* Used by the main thread only (hook, engine check, wrappers). */
static double deadline, limit_seconds, first_seen;
static int time_hit;
static char stop_text[600];
static pfr_stop_finisher finisher;
static void *finisher_user;

static double now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static const char *signal_name(int sig)
{
    return sig == SIGINT ? "SIGINT" : sig == SIGTERM ? "SIGTERM" : sig == SIGHUP ? "SIGHUP" : "signal";
}

/* Looks at the stop state; the first look that finds a stop records when. */
static int stop_now(void)
{
    if (!stop_signal && !time_hit) {
        if (!(deadline > 0) || now() < deadline) return 0;
        time_hit = 1;
    }
    if (!(first_seen > 0)) first_seen = now();
    return 1;
}

int pfr_stop_pending(void)
{
    return stop_signal || time_hit;
}

const char *pfr_stop_reason(void)
{
    static char text[160];
    if (time_hit) snprintf(text, sizeof text, "time limit of %g s reached", limit_seconds);
    else if (stop_signal)
        snprintf(text, sizeof text, "interrupted by signal %d (%s)", (int)stop_signal, signal_name(stop_signal));
    else text[0] = 0;
    return text;
}

int pfr_stop_exit_status(int status)
{
    if (time_hit) return PFR_EXIT_LIMIT;
    if (stop_signal) return 128 + stop_signal; /* the shells' convention for "ended by a signal" */
    return status;
}

/* The error the script sees; fixed at the first raise so that every later
 * raise (hook ticks, wrappers) carries the same text and script line. */
static int raise_stop(lua_State *L, lua_Debug *ar)
{
    if (!stop_text[0]) {
        lua_Debug here;
        if (!ar && lua_getstack(L, 1, &here)) ar = &here;
        if (ar) lua_getinfo(L, "Sl", ar);
        if (ar && ar->currentline > 0)
            snprintf(stop_text, sizeof stop_text, "%s while running %s:%d%s", pfr_stop_reason(), ar->short_src,
                     ar->currentline, time_hit ? " (--time-limit)" : "");
        else
            snprintf(stop_text, sizeof stop_text, "%s%s", pfr_stop_reason(), time_hit ? " (--time-limit)" : "");
    }
    lua_pushstring(L, stop_text);
    return lua_error(L);
}

static int finish_protected(lua_State *L)
{
    lua_pushinteger(L, finisher(L, finisher_user));
    return 1;
}

/* Ends the run from inside the hook: the script's stack is not unwound, but
 * the manifest is written and the partial files go. */
static void hard_end(lua_State *L)
{
    lua_sethook(L, NULL, 0, 0);
    watching = 0; /* a signal from now on ends the process at once */
    fprintf(stderr, "psiflight: %s; the script kept running after the stop request, run ended\n",
            stop_text[0] ? stop_text : pfr_stop_reason());
    int status = pfr_stop_exit_status(PFR_EXIT_SCRIPT);
    if (finisher) {
        lua_pushcfunction(L, finish_protected);
        if (lua_pcall(L, 0, 1, 0) == LUA_OK) status = (int)lua_tointeger(L, -1);
        lua_pop(L, 1);
    }
    pf_safe_remove_all_partial();
    fflush(stdout);
    fflush(stderr);
    _exit(status);
}

static void watch_hook(lua_State *L, lua_Debug *ar)
{
    if (!stop_now()) return;
    if (now() - first_seen > HARD_END_AFTER) hard_end(L);
    raise_stop(L, ar);
}

/* check(): raises the stop error when a stop is pending (for the wrappers). */
static int check_stop(lua_State *L)
{
    if (stop_now()) return raise_stop(L, NULL);
    return 0;
}

static int engine_stop_check(void *user)
{
    (void)user;
    return stop_now();
}

/* The error catchers of the base and coroutine libraries, wrapped so a
 * pending stop is passed on.  Lua functions, so they stay yieldable.  An
 * xpcall message handler is skipped while a stop is pending: Lua runs the
 * handler of an error raised by a hook with hooks switched off, so a handler
 * that loops could not be stopped otherwise. */
static const char WRAPPERS[] =
    "local pcall, xpcall, resume, close, check, stopping = ...\n"
    "local function pass(ok, ...)\n"
    "  if not ok then check() end\n"
    "  return ok, ...\n"
    "end\n"
    "_G.pcall = function(...) return pass(pcall(...)) end\n"
    "_G.xpcall = function(f, handler, ...)\n"
    "  if type(handler) ~= 'function' then return pass(xpcall(f, handler, ...)) end\n"
    "  local function guarded(e) if stopping() then return e end return handler(e) end\n"
    "  return pass(xpcall(f, guarded, ...))\n"
    "end\n"
    "coroutine.resume = function(...) return pass(resume(...)) end\n"
    "coroutine.close = function(...) return pass(close(...)) end\n";

/* stopping(): true when a stop is pending (for the message-handler guard). */
static int is_stopping(lua_State *L)
{
    lua_pushboolean(L, stop_now());
    return 1;
}

static void wrap_catchers(lua_State *L)
{
    if (luaL_loadbufferx(L, WRAPPERS, sizeof WRAPPERS - 1, "=" PFR_STOP_CHUNK, "t") != LUA_OK) {
        lua_pop(L, 1);
        return;
    }
    lua_getglobal(L, "pcall");
    lua_getglobal(L, "xpcall");
    lua_getglobal(L, "coroutine");
    lua_getfield(L, -1, "resume");
    lua_getfield(L, -2, "close");
    lua_remove(L, -3);
    lua_pushcfunction(L, check_stop);
    lua_pushcfunction(L, is_stopping);
    if (lua_pcall(L, 6, 0, 0) != LUA_OK) lua_pop(L, 1);
}

/* Seconds after the first signal at which the process ends even if nothing
 * in Lua or the engine noticed the request (a finaliser that loops runs with
 * hooks off; an FFTW plan being measured does not poll). */
#define SIGNAL_BACKSTOP 3

/* The last resort, for code that cannot be interrupted: only async-signal-
 * safe calls, so no manifest; the partial files go. */
static void on_alarm(int sig)
{
    static const char limit[] = "psiflight: time limit reached inside code that cannot be interrupted; "
                                "run ended without its manifest (--time-limit)\n";
    static const char interrupted[] = "psiflight: the stop request was not honoured within "
                                      "3 s; run ended without its manifest\n";
    (void)sig;
    pf_safe_remove_all_partial();
    int by_signal = stop_signal != 0;
    ssize_t r = by_signal ? write(2, interrupted, sizeof interrupted - 1) : write(2, limit, sizeof limit - 1);
    (void)r;
    _exit(by_signal ? 128 + stop_signal : PFR_EXIT_LIMIT);
}

static void arm_alarm(double seconds)
{
    double grace = seconds * 0.1 > 2.0 ? seconds * 0.1 : 2.0;
    struct itimerval it;
    memset(&it, 0, sizeof it);
    double hard = seconds + grace;
    it.it_value.tv_sec = (time_t)hard;
    it.it_value.tv_usec = (suseconds_t)((hard - (double)(time_t)hard) * 1e6);
    setitimer(ITIMER_REAL, &it, NULL);
}

void pfr_stop_begin(lua_State *L, double seconds, pfr_stop_finisher fn, void *user)
{
    finisher = fn;
    finisher_user = user;
    limit_seconds = seconds;
    deadline = seconds > 0 ? now() + seconds : 0;
    wrap_catchers(L);
    pf_context_set_stop_check(pfl_ctx(L), engine_stop_check, NULL);
    lua_sethook(L, watch_hook, LUA_MASKCOUNT, WATCH_EVERY);
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_alarm;
    sigaction(SIGALRM, &sa, NULL);
    if (seconds > 0) arm_alarm(seconds);
    watching = 1;
}

void pfr_stop_end(lua_State *L)
{
    watching = 0;
    struct itimerval it;
    memset(&it, 0, sizeof it);
    setitimer(ITIMER_REAL, &it, NULL);
    lua_sethook(L, NULL, 0, 0);
    pf_context_set_stop_check(pfl_ctx(L), NULL, NULL);
}

static void on_signal(int sig)
{
    if (watching && !stop_signal) {
        stop_signal = sig; /* the hook and the engine's check pick it up */
        alarm(SIGNAL_BACKSTOP); /* async-signal-safe; replaces a time-limit alarm */
        return;
    }
    /* A second signal, or one outside the script: files being written are
     * half-written by definition (unlink is async-signal-safe), then the
     * default action, so the exit status still names the signal. */
    pf_safe_remove_all_partial();
    signal(sig, SIG_DFL);
    raise(sig);
}

void pfr_stop_install_signals(void)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_signal;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, NULL);
    sigaction(SIGTERM, &sa, NULL);
    sigaction(SIGHUP, &sa, NULL);
}
