/* pfr_sandbox.c - restricts the standard libraries for untrusted scripts.
 *
 * What a shared recipe must not do: run programs (os.execute, io.popen), load
 * native code (package.loadlib, C module searchers, binary chunks, which can
 * corrupt the VM), read the environment, change the locale, leave the folders
 * the file policy allows, or switch off the time limit (debug.sethook).  Each
 * such function stays in place as a refusal, so the error names the operation
 * and the script line instead of "attempt to call a nil value". */
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <string.h>
#include <unistd.h>
#include <lauxlib.h>
#include <lualib.h>
#include "pfl.h"
#include "pfl_options.h"
#include "pfr_sandbox.h"

/* Upvalue 1: the operation's name; upvalue 2: why it is refused. */
static int refuse(lua_State *L)
{
    return pfl_error(L, PFL_ERROR_SANDBOX, "%s is not allowed in the sandbox (%s); a script you trust can be run with --trusted",
                     lua_tostring(L, lua_upvalueindex(1)), lua_tostring(L, lua_upvalueindex(2)));
}

static void set_refusal(lua_State *L, int table, const char *lib, const char *field, const char *why)
{
    lua_pushfstring(L, "%s%s%s", lib, *lib ? "." : "", field);
    lua_pushstring(L, why);
    lua_pushcclosure(L, refuse, 2);
    lua_setfield(L, table, field);
}

/* Calls the original function (upvalue 1) with the arguments unchanged. */
static int call_original(lua_State *L)
{
    int n = lua_gettop(L);
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_insert(L, 1);
    lua_call(L, n, LUA_MULTRET);
    return lua_gettop(L);
}

/* Closes a file opened by open_resolved (as liolib's own close does). */
static int stream_close(lua_State *L)
{
    luaL_Stream *p = luaL_checkudata(L, 1, LUA_FILEHANDLE);
    errno = 0;
    return luaL_fileresult(L, fclose(p->f) == 0, NULL);
}

/* Open flags for a Lua file mode ("r", "w", "a", "r+", "w+", "a+", any "b"). */
static int open_flags(const char *mode, int *flags)
{
    int plus = mode[0] && mode[1] == '+';
    const char *tail = mode + (mode[0] ? 1 : 0) + plus;
    if (strspn(tail, "b") != strlen(tail)) return -1;
    switch (mode[0]) {
    case 'r': *flags = plus ? O_RDWR : O_RDONLY; return 0;
    case 'w': *flags = (plus ? O_RDWR : O_WRONLY) | O_CREAT | O_TRUNC; return 0;
    case 'a': *flags = (plus ? O_RDWR : O_WRONLY) | O_CREAT | O_APPEND; return 0;
    default: return -1;
    }
}

/* io.open in the sandbox: checks the path, then opens the resolved path it
 * checked (free of links) with O_NOFOLLOW, so a link put in place after the
 * check is refused instead of followed.  Failures return nil, message, errno
 * with the path as the script wrote it, like the stock io.open. */
static int open_resolved(lua_State *L, const char *path, const char *mode, const char *op)
{
    int flags;
    if (open_flags(mode, &flags) != 0) return luaL_argerror(L, 2, "invalid mode");
    const char *real = pfl_files_resolve(L, path, flags == O_RDONLY ? PFL_ACCESS_READ : PFL_ACCESS_WRITE, op);
    /* The handle exists before the file is opened, so a memory error
     * cannot leak the descriptor (liolib does the same). */
    luaL_Stream *p = lua_newuserdatauv(L, sizeof *p, 0);
    p->closef = NULL;
    p->f = NULL;
    luaL_setmetatable(L, LUA_FILEHANDLE);
    int fd = open(real, flags | O_NOFOLLOW | O_CLOEXEC, 0666);
    if (fd < 0) return luaL_fileresult(L, 0, path);
    p->f = fdopen(fd, mode);
    if (!p->f) {
        int e = errno;
        close(fd);
        errno = e;
        return luaL_fileresult(L, 0, path);
    }
    p->closef = stream_close;
    return 1;
}

static int io_open_checked(lua_State *L)
{
    const char *path = luaL_checkstring(L, 1);
    const char *mode = luaL_optstring(L, 2, "r");
    return open_resolved(L, path, mode, "io.open");
}

static int io_lines_checked(lua_State *L)
{
    if (!lua_isnoneornil(L, 1)) pfl_files_check(L, luaL_checkstring(L, 1), PFL_ACCESS_READ, "io.lines");
    return call_original(L);
}

/* io.input(name) opens name for reading: through open_resolved too. */
static int io_input_checked(lua_State *L)
{
    if (lua_type(L, 1) == LUA_TSTRING) {
        const char *path = lua_tostring(L, 1);
        if (open_resolved(L, path, "r", "io.input") != 1 || lua_isnil(L, -1))
            return luaL_error(L, "%s", lua_tostring(L, -2));
        lua_replace(L, 1);
        lua_settop(L, 1);
    }
    return call_original(L);
}

/* io.output(name) opens name for writing: through open_resolved, then the
 * stock io.output is given the handle. */
static int io_output_checked(lua_State *L)
{
    if (lua_type(L, 1) == LUA_TSTRING) {
        const char *path = lua_tostring(L, 1);
        if (open_resolved(L, path, "w", "io.output") != 1 || lua_isnil(L, -1))
            return luaL_error(L, "%s", lua_tostring(L, -2));
        lua_replace(L, 1);
        lua_settop(L, 1);
    }
    return call_original(L);
}

static int os_remove_checked(lua_State *L)
{
    pfl_files_check(L, luaL_checkstring(L, 1), PFL_ACCESS_WRITE, "os.remove");
    return call_original(L);
}

static int os_rename_checked(lua_State *L)
{
    pfl_files_check(L, luaL_checkstring(L, 1), PFL_ACCESS_WRITE, "os.rename");
    pfl_files_check(L, luaL_checkstring(L, 2), PFL_ACCESS_WRITE, "os.rename");
    return call_original(L);
}

/* load(chunk [, name [, mode [, env]]]) with mode forced to text. */
static int load_text_only(lua_State *L)
{
    lua_settop(L, 4);
    if (lua_type(L, 1) == LUA_TSTRING && strncmp(lua_tostring(L, 1), LUA_SIGNATURE, strlen(LUA_SIGNATURE)) == 0)
        return pfl_error(L, PFL_ERROR_SANDBOX, "load of a binary (precompiled) chunk is not allowed in the sandbox");
    if (!lua_isnil(L, 3) && strcmp(luaL_checkstring(L, 3), "t") != 0 && !strchr(lua_tostring(L, 3), 't'))
        return pfl_error(L, PFL_ERROR_SANDBOX, "load of binary chunks is not allowed in the sandbox (mode '%s')",
                         lua_tostring(L, 3));
    lua_pushliteral(L, "t");
    lua_replace(L, 3);
    return call_original(L);
}

static int loadfile_checked(lua_State *L)
{
    lua_settop(L, 3);
    if (!lua_isnil(L, 1)) pfl_files_check(L, luaL_checkstring(L, 1), PFL_ACCESS_READ, "loadfile");
    lua_pushliteral(L, "t");
    lua_replace(L, 2);
    return call_original(L);
}

static int dofile_checked(lua_State *L)
{
    const char *path = luaL_checkstring(L, 1);
    pfl_files_check(L, path, PFL_ACCESS_READ, "dofile");
    lua_settop(L, 1);
    if (luaL_loadfilex(L, path, "t") != LUA_OK) return lua_error(L);
    lua_call(L, 0, LUA_MULTRET);
    return lua_gettop(L) - 1;
}

/* Replaces table[field] by a closure of fn over the original. */
static void wrap(lua_State *L, int table, const char *field, lua_CFunction fn)
{
    lua_getfield(L, table, field);
    lua_pushcclosure(L, fn, 1);
    lua_setfield(L, table, field);
}

void pfr_sandbox_open_libs(lua_State *L, int sandboxed)
{
    luaL_openlibs(L);
    if (!sandboxed) return;
    lua_pushglobaltable(L);
    int g = lua_gettop(L);
    wrap(L, g, "load", load_text_only);
    wrap(L, g, "loadfile", loadfile_checked);
    wrap(L, g, "dofile", dofile_checked);

    lua_getglobal(L, "os");
    int os = lua_gettop(L);
    set_refusal(L, os, "os", "execute", "it runs a program");
    set_refusal(L, os, "os", "exit", "it ends the run without its report; raise an error with error() instead");
    set_refusal(L, os, "os", "getenv", "it reads the environment");
    set_refusal(L, os, "os", "tmpname", "it creates files outside the allowed folders");
    set_refusal(L, os, "os", "setlocale", "it changes how numbers are printed");
    wrap(L, os, "remove", os_remove_checked);
    wrap(L, os, "rename", os_rename_checked);

    lua_getglobal(L, "io");
    int io = lua_gettop(L);
    set_refusal(L, io, "io", "popen", "it runs a program");
    set_refusal(L, io, "io", "tmpfile", "it creates files outside the allowed folders");
    wrap(L, io, "open", io_open_checked);
    wrap(L, io, "lines", io_lines_checked);
    wrap(L, io, "input", io_input_checked);
    wrap(L, io, "output", io_output_checked);

    lua_getglobal(L, "package");
    int pkg = lua_gettop(L);
    set_refusal(L, pkg, "package", "loadlib", "it loads native code");
    set_refusal(L, pkg, "package", "searchpath", "it probes files outside the allowed folders");
    /* The C module path is kept aside: require names a native module that
     * exists there with a sandbox refusal instead of "not found". */
    lua_getfield(L, pkg, "cpath");
    lua_setfield(L, LUA_REGISTRYINDEX, PFR_SANDBOX_CPATH_KEY);
    lua_pushliteral(L, "");
    lua_setfield(L, pkg, "cpath");

    /* debug: the traceback and stack inspection stay; hooks, upvalues,
     * registry and metatables of other types would undo the sandbox. */
    lua_getglobal(L, "debug");
    int dbg = lua_gettop(L);
    static const char *const debug_refused[] = {"debug", "gethook", "getlocal", "getmetatable", "getregistry",
                                                "getupvalue", "getuservalue", "sethook", "setlocal",
                                                "setmetatable", "setupvalue", "setuservalue", "upvalueid",
                                                "upvaluejoin", "setcstacklimit", NULL};
    for (int i = 0; debug_refused[i]; i++) set_refusal(L, dbg, "debug", debug_refused[i], "it can undo the sandbox");
    lua_settop(L, g - 1);
}

int pfr_sandbox_native_searcher(lua_State *L)
{
    const char *name = luaL_checkstring(L, 1);
    lua_getfield(L, LUA_REGISTRYINDEX, PFR_SANDBOX_CPATH_KEY);
    const char *cpath = lua_tostring(L, -1);
    char rel[512];
    snprintf(rel, sizeof rel, "%s", name);
    for (char *p = rel; *p; p++)
        if (*p == '.') *p = '/';
    while (cpath && *cpath) {
        const char *semi = strchr(cpath, ';');
        size_t len = semi ? (size_t)(semi - cpath) : strlen(cpath);
        char tmpl[1024], path[2048];
        if (len < sizeof tmpl) {
            memcpy(tmpl, cpath, len);
            tmpl[len] = 0;
            char *q = strchr(tmpl, '?');
            if (q) {
                *q = 0;
                snprintf(path, sizeof path, "%s%s%s", tmpl, rel, q + 1);
                if (access(path, F_OK) == 0)
                    return pfl_error(L, PFL_ERROR_SANDBOX, "require '%s' would load native code (%s), which is not "
                                     "allowed in the sandbox; a script you trust can be run with --trusted", name, path);
            }
        }
        cpath = semi ? semi + 1 : NULL;
    }
    lua_pushfstring(L, "\n\tno Lua module '%s' (native modules are not loaded in the sandbox)", name);
    return 1;
}

/* Upvalue 1: original setup; upvalue 2: engine cap (number). */
static int setup_guarded(lua_State *L)
{
    pfl_setup_check(L, 1); /* a plain table with declared keys, read raw below and by pf.setup */
    if (pfl_option_get(L, 1, "wisdom") != LUA_TNIL)
        return pfl_error(L, PFL_ERROR_SANDBOX, "pf.setup{wisdom = ...} is not allowed in the sandbox (it writes a file "
                                               "outside the allowed folders); use the runner's --wisdom");
    if (pfl_option_get(L, 1, "output_dir") != LUA_TNIL)
        return pfl_error(L, PFL_ERROR_SANDBOX, "pf.setup{output_dir = ...} is not allowed in the sandbox; use the runner's --out");
    if (pfl_option_get(L, 1, "memory_cap") == LUA_TNUMBER && lua_tonumber(L, -1) > lua_tonumber(L, lua_upvalueindex(2)))
        return pfl_error(L, PFL_ERROR_SANDBOX, "pf.setup{memory_cap = %.0f} exceeds the run's engine cap of %.0f bytes "
                                               "(runner --memory-cap)", lua_tonumber(L, -1), lua_tonumber(L, lua_upvalueindex(2)));
    lua_settop(L, 1);
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_insert(L, 1);
    lua_call(L, 1, 0);
    return 0;
}

void pfr_sandbox_guard_setup(lua_State *L, int mod, size_t engine_cap)
{
    lua_getfield(L, mod, "setup");
    lua_pushnumber(L, (lua_Number)engine_cap);
    lua_pushcclosure(L, setup_guarded, 2);
    lua_setfield(L, mod, "setup");
}
