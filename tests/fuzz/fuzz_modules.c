/* fuzz_modules.c - libFuzzer harness for module search (pfr_modules.c): the
 * module name given to require (dots to folders, NAME.lua or NAME/init.lua,
 * the psiflight.recipes. prefix of the bundled library) and the folder list
 * in $PSIFLIGHT_RECIPE_PATH, in sandboxed and trusted runs.
 *
 * Input: byte 0: bit 0 = sandboxed, bit 1 = the script folder is "mods".
 * Line 1 is the module name, line 2 the value of $PSIFLIGHT_RECIPE_PATH
 * (relative folders resolve in the scratch folder).  The scratch folder
 * holds modules the search can find: plain, package (init.lua), nested, one
 * with a syntax error, one precompiled-looking (refused in the sandbox) and
 * a symbolic link leaving its folder (refused in the sandbox).  Besides the
 * sanitizers it checks that the sandbox never loads the link's target. */
#include <limits.h>
#include "fuzz_util.h"
#include "pfr_modules.h"
#include "pfr_sandbox.h"

static void make_tree(void)
{
    static int done;
    if (done) return;
    done = 1;
    static const struct { const char *path, *text; } files[] = {
        {"mods/alpha.lua", "return {name = 'alpha'}\n"},
        {"mods/pkg/init.lua", "return {name = 'pkg'}\n"},
        {"mods/pkg/sub.lua", "return require('alpha')\n"},
        {"mods/broken.lua", "return {\n"},
        {"mods/chunk.lua", "\x1bLua\x54\x00"},
        {"other/beta.lua", "return 2\n"},
        {"outside/evil.lua", "escaped = true; return 'evil'\n"},
    };
    for (size_t i = 0; i < sizeof files / sizeof files[0]; i++) {
        char cmd[600];
        snprintf(cmd, sizeof cmd, "mkdir -p \"$(dirname '%s/%s')\"", fuzz_dir(), files[i].path);
        if (system(cmd) != 0) abort();
        (void)fuzz_write_file(files[i].path, (const uint8_t *)files[i].text, strlen(files[i].text));
    }
    char target[PATH_MAX], link[PATH_MAX];
    snprintf(target, sizeof target, "%s/outside/evil.lua", fuzz_dir());
    snprintf(link, sizeof link, "%s/mods/escape.lua", fuzz_dir());
    if (symlink(target, link) != 0) abort();
    /* Relative folders in $PSIFLIGHT_RECIPE_PATH resolve from here. */
    if (chdir(fuzz_dir()) != 0) abort();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    make_tree();
    int sandboxed = data[0] & 1;
    char *text = fuzz_text(data + 1, size - 1);
    char *name = text, *env = NULL;
    char *nl = strchr(text, '\n');
    if (nl) {
        *nl = 0;
        env = nl + 1;
        char *nl2 = strchr(env, '\n');
        if (nl2) *nl2 = 0;
    }
    if (env) setenv(PFR_MODULE_PATH_ENV, env, 1);
    else unsetenv(PFR_MODULE_PATH_ENV);
    char script_dir[PATH_MAX];
    snprintf(script_dir, sizeof script_dir, "%s/mods", fuzz_dir());

    lua_State *L = luaL_newstate();
    if (!L) abort();
    pfr_sandbox_open_libs(L, sandboxed);
    luaL_requiref(L, "psiflight", luaopen_psiflight, 0);
    lua_pop(L, 1);
    pfr_modules_install(L, data[0] & 2 ? script_dir : NULL, sandboxed);
    lua_getglobal(L, "require");
    lua_pushstring(L, name);
    (void)lua_pcall(L, 1, 1, 0);
    if (sandboxed && lua_getglobal(L, "escaped") != LUA_TNIL) abort(); /* the link was followed */
    (void)pfr_recipe_find(name);
    lua_close(L);
    free(text);
    return 0;
}
