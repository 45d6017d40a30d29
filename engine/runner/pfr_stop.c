/* pfr_stop.c - stopping a run early, on a signal or at the time limit (the
 * contract is in pfr_stop.h).
 *
 * Why each piece exists:
 * - no hook while the run is undisturbed: any count hook makes Lua trace
 *   every instruction (a pure Lua loop runs about 3 times slower), so the
 *   stop hook is set only once a stop is requested, as lua.c does for
 *   Ctrl-C;
 * - hooks belong to one Lua thread, so the runner tracks which thread runs
 *   (coroutine.resume and coroutine.wrap go through enter/leave below): the
 *   signal handler hooks the running thread, and a thread resumed or
 *   returned to later gets the hook on its way in or out;
 * - the time limit is an interval timer whose signal is handled like
 *   SIGTERM, so it costs nothing until it fires;
 * - the stop hook fires at every instruction of the hooked thread and
 *   raises each time, and the pcall/xpcall/coroutine.resume/coroutine.close
 *   wrappers re-raise the stop, so catching it does not keep the script
 *   running: the run unwinds, and writes its manifest, within milliseconds
 *   (batch systems send TERM and KILL a few seconds apart);
 * - the engine's stop check (pf_context_poll_stop), so a long evolve or relax
 *   ends within one step instead of at its end;
 * - an alarm after the time limit plus a grace period, or 3 s after a
 *   signal, for code that does not poll (an FFTW plan being measured, a
 *   finaliser, which Lua runs with hooks off): it can only remove the
 *   partial files and exit, since the Lua state is busy. */
#define _GNU_SOURCE
#include <signal.h>
#include <stdio.h>
#include <string.h>
#include <sys/time.h>
#include <unistd.h>
#include <lauxlib.h>
#include "pf_context.h"
#include "pf_safefile.h"
#include "pfl.h"
#include "pfr_exit.h"
#include "pfr_stop.h"

/* Seconds after the first signal at which the process ends even if nothing
 * in Lua or the engine noticed the request. */
#define SIGNAL_BACKSTOP 3

/* Shared with the signal handlers: sig_atomic_t flags and the thread that
 * runs Lua code now (lua_sethook may be called from a signal handler; lua.c
 * relies on it). */
static volatile sig_atomic_t watching;
static volatile sig_atomic_t stop_signal;
static volatile sig_atomic_t time_hit;
static volatile sig_atomic_t grace_seconds;
static lua_State *volatile current;

/* Used by the main thread only (hook, engine check, wrappers). */
static double limit_seconds;
static char stop_text[600];

static const char *signal_name(int sig)
{
    return sig == SIGINT ? "SIGINT" : sig == SIGTERM ? "SIGTERM" : sig == SIGHUP ? "SIGHUP" : "signal";
}

static void watch_hook(lua_State *L, lua_Debug *ar);

/* Hooks thread L so that its next Lua instruction raises the stop error.
 * Instruction counts only, no call events: a call hook would also fire on
 * the run's C message handler and replace the error being reported (an
 * engine call's "stopped on request" by the stop text). */
static void hook_thread(lua_State *L)
{
    lua_sethook(L, watch_hook, LUA_MASKCOUNT, 1);
}

/* Looks at the stop state: two flags, cheap enough for every engine step. */
static int stop_now(void)
{
    return stop_signal || time_hit;
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
static int raise_stop(lua_State *L)
{
    if (!stop_text[0]) {
        /* The innermost script frame with a line: check() runs as a C
         * function, which has none, called from the wrappers' chunk. */
        lua_Debug ar;
        int line = -1;
        for (int level = 0; line <= 0 && lua_getstack(L, level, &ar); level++) {
            lua_getinfo(L, "Sl", &ar);
            if (strcmp(ar.source, "=" PFR_STOP_CHUNK) != 0) line = ar.currentline;
        }
        if (line > 0)
            snprintf(stop_text, sizeof stop_text, "%s while running %s:%d%s", pfr_stop_reason(), ar.short_src, line,
                     time_hit ? " (--time-limit)" : "");
        else
            snprintf(stop_text, sizeof stop_text, "%s%s", pfr_stop_reason(), time_hit ? " (--time-limit)" : "");
    }
    lua_pushstring(L, stop_text);
    return lua_error(L);
}

static void watch_hook(lua_State *L, lua_Debug *ar)
{
    (void)ar;
    if (!stop_now()) return;
    raise_stop(L);
}

/* check(): raises the stop error when a stop is pending (for the wrappers),
 * hooking the calling thread too. */
static int check_stop(lua_State *L)
{
    if (!stop_now()) return 0;
    hook_thread(L);
    return raise_stop(L);
}

static int engine_stop_check(void *user)
{
    (void)user;
    return stop_now();
}

/* enter(co): co is about to run; it is the thread a signal must hook. */
static int enter_thread(lua_State *L)
{
    lua_State *co = lua_tothread(L, 1);
    if (co) {
        current = co;
        if (stop_now()) hook_thread(co);
    }
    return 0;
}

/* leave(...): the calling thread runs again; returns its arguments. */
static int leave_thread(lua_State *L)
{
    current = L;
    if (stop_now()) hook_thread(L);
    return lua_gettop(L);
}

/* stopping(): true when a stop is pending (for the message-handler guard). */
static int is_stopping(lua_State *L)
{
    lua_pushboolean(L, stop_now());
    return 1;
}

/* The error catchers and coroutine runners of the base and coroutine
 * libraries, wrapped.  Lua functions, so they stay yieldable.  resume (and
 * wrap, rebuilt on it with the stock error behaviour) tell the runner which
 * thread runs; the catchers pass a pending stop on.  An xpcall message
 * handler is skipped while a stop is pending: Lua runs the handler of an
 * error raised by a hook with hooks switched off, so a handler that loops
 * could not be stopped otherwise. */
static const char WRAPPERS[] =
    "local pcall, xpcall, resume, close, create, check, stopping, enter, leave = ...\n"
    "local type, select, error, format = type, select, error, string.format\n"
    "local function expect(what, name, ...)\n"
    "  local v = ...\n"
    "  if type(v) ~= what then\n"
    "    error(format(\"bad argument #1 to '%s' (%s expected, got %s)\", name, what,\n"
    "                 select('#', ...) == 0 and 'no value' or type(v)), 3)\n"
    "  end\n"
    "end\n"
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
    "local function run(...)\n"
    "  expect('thread', 'resume', ...)\n"
    "  enter((...))\n"
    "  return pass(leave(resume(...)))\n"
    "end\n"
    "coroutine.resume = run\n"
    "coroutine.close = function(...) return pass(close(...)) end\n"
    "local function unwrap(co, ok, ...)\n"
    "  if ok then return ... end\n"
    "  local err = ...\n"
    "  close(co)\n"
    "  if type(err) == 'string' then error(err, 2) end\n"
    "  error(err, 0)\n"
    "end\n"
    "coroutine.wrap = function(...)\n"
    "  expect('function', 'wrap', ...)\n"
    "  local co = create((...))\n"
    "  return function(...) return unwrap(co, run(co, ...)) end\n"
    "end\n";

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
    lua_getfield(L, -3, "create");
    lua_remove(L, -4);
    lua_pushcfunction(L, check_stop);
    lua_pushcfunction(L, is_stopping);
    lua_pushcfunction(L, enter_thread);
    lua_pushcfunction(L, leave_thread);
    if (lua_pcall(L, 9, 0, 0) != LUA_OK) lua_pop(L, 1);
}

/* SIGALRM: at the deadline, a stop like a signal's; the next one (the
 * grace period after the deadline, or SIGNAL_BACKSTOP after a signal) is the
 * last resort for code that cannot be interrupted: only async-signal-safe
 * calls, so no manifest; the partial files go. */
static void on_alarm(int sig)
{
    static const char limit[] = "psiflight: time limit reached inside code that cannot be interrupted; "
                                "run ended without its manifest (--time-limit)\n";
    static const char interrupted[] = "psiflight: the stop request was not honoured within "
                                      "3 s; run ended without its manifest\n";
    (void)sig;
    if (watching && !stop_signal && !time_hit) {
        time_hit = 1;
        lua_State *L = current;
        if (L) hook_thread(L);
        alarm((unsigned)grace_seconds);
        return;
    }
    pf_safe_remove_all_partial();
    int by_signal = stop_signal != 0 && !time_hit;
    ssize_t r = by_signal ? write(2, interrupted, sizeof interrupted - 1) : write(2, limit, sizeof limit - 1);
    (void)r;
    _exit(by_signal ? 128 + stop_signal : PFR_EXIT_LIMIT);
}

static void arm_deadline(double seconds)
{
    double grace = seconds * 0.1 > 2.0 ? seconds * 0.1 : 2.0;
    grace_seconds = (sig_atomic_t)(grace + 0.999);
    struct itimerval it;
    memset(&it, 0, sizeof it);
    it.it_value.tv_sec = (time_t)seconds;
    it.it_value.tv_usec = (suseconds_t)((seconds - (double)(time_t)seconds) * 1e6);
    if (it.it_value.tv_sec == 0 && it.it_value.tv_usec == 0) it.it_value.tv_usec = 1;
    setitimer(ITIMER_REAL, &it, NULL);
}

void pfr_stop_begin(lua_State *L, double seconds)
{
    limit_seconds = seconds;
    wrap_catchers(L);
    pf_context_set_stop_check(pfl_ctx(L), engine_stop_check, NULL);
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_alarm;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGALRM, &sa, NULL);
    current = L;
    watching = 1;
    if (seconds > 0) arm_deadline(seconds);
}

void pfr_stop_end(lua_State *L)
{
    watching = 0;
    struct itimerval it;
    memset(&it, 0, sizeof it);
    setitimer(ITIMER_REAL, &it, NULL);
    current = NULL;
    lua_sethook(L, NULL, 0, 0);
    pf_context_set_stop_check(pfl_ctx(L), NULL, NULL);
}

static void on_signal(int sig)
{
    if (watching && !stop_signal) {
        stop_signal = sig; /* the hook and the engine's check pick it up */
        lua_State *L = current;
        if (L) hook_thread(L);
        if (!time_hit) alarm(SIGNAL_BACKSTOP); /* async-signal-safe; replaces the deadline timer */
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
