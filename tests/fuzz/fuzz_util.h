/* fuzz_util.h - what every libFuzzer harness in tests/fuzz needs: the input as
 * a C string, a private scratch folder for inputs that must be files, and a
 * Lua state with the engine opened the way the runner opens it.
 *
 * Harnesses are one translation unit each, so the helpers are static. */
#ifndef FUZZ_UTIL_H
#define FUZZ_UTIL_H

#define _GNU_SOURCE /* mkdtemp, strndup */
#include <stddef.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <lauxlib.h>
#include <lua.h>
#include <lualib.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);
int luaopen_psiflight(lua_State *L);

/* The input with a terminating NUL (libFuzzer's buffer has none).  Caller
 * frees.  Embedded NULs stay: C parsers then see a shorter string, which is
 * exactly what they would see from a file or argv. */
__attribute__((unused)) static char *fuzz_text(const uint8_t *data, size_t size)
{
    char *s = malloc(size + 1);
    if (!s) abort();
    memcpy(s, data, size);
    s[size] = 0;
    return s;
}

/* One scratch folder per process (under $TMPDIR or /tmp), removed at exit.
 * A crash leaves it behind; run-fuzz.sh points TMPDIR at a folder of its
 * own and removes that afterwards. */
static char fuzz_dir_path[256];

static void fuzz_dir_remove(void)
{
    if (!fuzz_dir_path[0]) return;
    char cmd[300];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", fuzz_dir_path);
    if (system(cmd) != 0) { /* best effort: a leftover folder is harmless */ }
}

__attribute__((unused)) static const char *fuzz_dir(void)
{
    if (!fuzz_dir_path[0]) {
        const char *tmp = getenv("TMPDIR");
        snprintf(fuzz_dir_path, sizeof fuzz_dir_path, "%s/psiflight-fuzz-XXXXXX", tmp && *tmp ? tmp : "/tmp");
        if (!mkdtemp(fuzz_dir_path)) {
            perror("fuzz: mkdtemp");
            abort();
        }
        atexit(fuzz_dir_remove);
    }
    return fuzz_dir_path;
}

/* Writes the bytes to DIR/name (replacing it) and returns the full path in
 * a static buffer. */
__attribute__((unused)) static const char *fuzz_write_file(const char *name, const uint8_t *data, size_t size)
{
    static char path[512];
    snprintf(path, sizeof path, "%s/%s", fuzz_dir(), name);
    FILE *f = fopen(path, "wb");
    if (!f || (size && fwrite(data, 1, size, f) != size) || fclose(f) != 0) {
        perror("fuzz: writing the input file");
        abort();
    }
    return path;
}

/* A Lua state with the standard libraries and the engine as the global `pf`,
 * set up as tests run it: estimate planning (no measuring, no wisdom file)
 * and a 256 MiB engine memory cap, so a hostile size is refused by the cap
 * instead of exhausting the fuzzer's memory. */
__attribute__((unused)) static lua_State *fuzz_lua(void)
{
    lua_State *L = luaL_newstate();
    if (!L) abort();
    luaL_openlibs(L);
    luaL_requiref(L, "psiflight", luaopen_psiflight, 0);
    lua_setglobal(L, "pf");
    static const char setup[] = "pf.setup{planning = 'estimate', wisdom = false, memory_cap = 256 * 2^20}";
    if (luaL_dostring(L, setup) != LUA_OK) {
        fprintf(stderr, "fuzz: engine setup failed: %s\n", lua_tostring(L, -1));
        abort();
    }
    return L;
}

/* A Lua state (fuzz_lua) holding, as the global fuzz_probe, the function
 * of one argument (a file path) that the Lua chunk `chunk` returns. */
__attribute__((unused)) static lua_State *fuzz_probe_state(const char *chunk)
{
    lua_State *L = fuzz_lua();
    if (luaL_loadstring(L, chunk) != LUA_OK || lua_pcall(L, 0, 1, 0) != LUA_OK || !lua_isfunction(L, -1)) {
        fprintf(stderr, "fuzz: harness chunk failed: %s\n", lua_tostring(L, -1));
        abort();
    }
    lua_setglobal(L, "fuzz_probe");
    return L;
}

/* Calls that function on path and collects garbage, so every wave is
 * freed and counted off the memory cap before the next input; an error
 * escaping the function is a harness bug and aborts. */
__attribute__((unused)) static void fuzz_probe_in(lua_State *L, const char *path)
{
    lua_getglobal(L, "fuzz_probe");
    lua_pushstring(L, path);
    if (lua_pcall(L, 1, 0, 0) != LUA_OK) {
        fprintf(stderr, "fuzz: harness function failed: %s\n", lua_tostring(L, -1));
        abort();
    }
    lua_gc(L, LUA_GCCOLLECT, 0);
}

/* The same, in one Lua state kept for the whole run: making a state per
 * input (engine setup, grid plans) would cost more than the parsing. */
__attribute__((unused)) static void fuzz_probe(const char *chunk, const char *path)
{
    static lua_State *L;
    if (!L) L = fuzz_probe_state(chunk);
    fuzz_probe_in(L, path);
}

#endif
