/* pfr_modules.c - module search for `require`: the script's folder, the
 * folders of $PSIFLIGHT_RECIPE_PATH, and the recipe library bundled into the
 * runner.  The search ignores package.path in the sandbox, so a script cannot
 * point require at files elsewhere. */
#define _DEFAULT_SOURCE /* realpath */
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include <lauxlib.h>
#include "pf_sha256.h"
#include "pfl.h"
#include "pfr_modules.h"
#include "pfr_sandbox.h"

const pfr_bundled_recipe *pfr_recipe_find(const char *name)
{
    for (const pfr_bundled_recipe *r = pfr_bundled_recipes; r->name; r++)
        if (strcmp(r->name, name) == 0) return r;
    return NULL;
}

/* Module names are dot-separated words of letters, digits, '_' and '-'. */
static int valid_name(const char *s)
{
    if (!*s || *s == '.') return 0;
    for (const char *p = s; *p; p++) {
        int word = (*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') || (*p >= '0' && *p <= '9') || *p == '_' ||
                   *p == '-';
        if (!word && !(*p == '.' && p[1] && p[1] != '.')) return 0;
    }
    return 1;
}

static int inside(const char *path, const char *root)
{
    size_t n = strlen(root);
    return strncmp(path, root, n) == 0 && path[n] == '/';
}

/* Upvalue 1: array of resolved folders; upvalue 2: mode ("t" or nil). */
static int search_folders(lua_State *L)
{
    const char *name = luaL_checkstring(L, 1);
    if (!valid_name(name)) {
        lua_pushfstring(L, "\n\tno module '%s': names are words of letters, digits, _ and - separated by dots", name);
        return 1;
    }
    const char *mode = lua_tostring(L, lua_upvalueindex(2));
    char rel[PATH_MAX];
    snprintf(rel, sizeof rel, "%s", name);
    for (char *p = rel; *p; p++)
        if (*p == '.') *p = '/';
    luaL_Buffer tried;
    luaL_buffinit(L, &tried);
    lua_Integer n = (lua_Integer)lua_rawlen(L, lua_upvalueindex(1));
    for (lua_Integer i = 1; i <= n; i++) {
        /* The folder is copied off the stack: between luaL_buffinit and
         * luaL_addvalue nothing else may sit on the stack, or the buffer's
         * box (made once the message outgrows LUAL_BUFFERSIZE, e.g. with
         * many folders) lands in the wrong slot and is used after free. */
        char dir[PATH_MAX];
        lua_rawgeti(L, lua_upvalueindex(1), i);
        snprintf(dir, sizeof dir, "%s", lua_tostring(L, -1));
        lua_pop(L, 1);
        static const char *const forms[] = {"%s/%s.lua", "%s/%s/init.lua"};
        for (int f = 0; f < 2; f++) {
            char path[PATH_MAX];
            snprintf(path, sizeof path, forms[f], dir, rel);
            char *real = access(path, R_OK) == 0 ? realpath(path, NULL) : NULL;
            if (!real) {
                lua_pushfstring(L, "\n\tno file '%s'", path);
                luaL_addvalue(&tried);
                continue;
            }
            int ok = inside(real, dir);
            free(real);
            if (!ok && mode) /* sandboxed */
                return pfl_error(L, PFL_ERROR_SANDBOX, "require '%s': sandbox refused to load %s: it is a symbolic "
                                 "link that leaves the module folder %s", name, path, dir);
            if (luaL_loadfilex(L, path, mode) != LUA_OK)
                return luaL_error(L, "error loading module '%s' from file '%s':\n\t%s", name, path, lua_tostring(L, -1));
            lua_pushstring(L, path);
            return 2;
        }
    }
    luaL_pushresult(&tried);
    return 1;
}

static int search_bundled(lua_State *L)
{
    const char *name = luaL_checkstring(L, 1);
    size_t plen = strlen(PFR_RECIPE_PREFIX);
    if (strncmp(name, PFR_RECIPE_PREFIX, plen) != 0) {
        lua_pushfstring(L, "\n\tno bundled recipe (bundled recipes are named " PFR_RECIPE_PREFIX "NAME)");
        return 1;
    }
    const pfr_bundled_recipe *r = pfr_recipe_find(name + plen);
    if (!r) {
        lua_pushfstring(L, "\n\tno bundled recipe '%s' (psiflight recipe lists them)", name + plen);
        return 1;
    }
    char chunk[200];
    snprintf(chunk, sizeof chunk, "@bundled:recipes/%s.lua", r->name);
    if (luaL_loadbufferx(L, (const char *)r->source, r->length, chunk, "t") != LUA_OK)
        return luaL_error(L, "error loading bundled recipe '%s':\n\t%s", name, lua_tostring(L, -1));
    lua_pushstring(L, chunk + 1);
    return 2;
}

int pfr_module_digest(const char *source, char hex[65])
{
    static const char bundled[] = "bundled:recipes/";
    size_t n = sizeof bundled - 1, len = strlen(source);
    if (strncmp(source, bundled, n) == 0) {
        char name[128];
        if (len < n + 4 || len - n - 4 >= sizeof name || strcmp(source + len - 4, ".lua") != 0) return -1;
        memcpy(name, source + n, len - n - 4);
        name[len - n - 4] = 0;
        const pfr_bundled_recipe *r = pfr_recipe_find(name);
        if (!r) return -1;
        pf_sha256_buffer(r->source, r->length, hex);
        return 0;
    }
    return pf_sha256_file(source, hex);
}

/* Wraps a searcher (upvalue 1): when it finds the module, records the name,
 * where it was found and the digest of that source for the manifest, so a
 * resumed sweep notices a changed module.  A searcher reports where it
 * found a module as its second result (a file path or the bundled name). */
static int recording_searcher(lua_State *L)
{
    const char *name = luaL_checkstring(L, 1);
    lua_settop(L, 1);
    lua_pushvalue(L, lua_upvalueindex(1));
    lua_pushvalue(L, 1);
    lua_call(L, 1, 2);
    if (lua_type(L, -2) == LUA_TFUNCTION && lua_type(L, -1) == LUA_TSTRING) {
        char hex[65];
        const char *source = lua_tostring(L, -1);
        if (pfr_module_digest(source, hex) != 0)
            return luaL_error(L, "require '%s': cannot read %s to record its digest", name, source);
        if (pfl_record_module(L, name, source, hex) != 0) return luaL_error(L, "require '%s': out of memory", name);
    }
    return 2;
}

/* Appends the resolved folder to the array at t when it exists. */
static void add_folder(lua_State *L, int t, const char *dir, size_t len)
{
    char buf[PATH_MAX];
    if (len == 0 || len >= sizeof buf) return;
    memcpy(buf, dir, len);
    buf[len] = 0;
    char *real = realpath(buf, NULL);
    if (!real) return;
    lua_pushstring(L, real);
    free(real);
    lua_rawseti(L, t, (lua_Integer)lua_rawlen(L, t) + 1);
}

void pfr_modules_install(lua_State *L, const char *script_dir, int sandboxed)
{
    lua_getglobal(L, "package");
    int pkg = lua_gettop(L);
    lua_getfield(L, pkg, "searchers");
    int old = lua_gettop(L);
    lua_createtable(L, 6, 0);
    int searchers = lua_gettop(L);
    lua_rawgeti(L, old, 1); /* package.preload */
    lua_rawseti(L, searchers, 1);
    lua_newtable(L);
    int folders = lua_gettop(L);
    if (script_dir) add_folder(L, folders, script_dir, strlen(script_dir));
    const char *env = getenv(PFR_MODULE_PATH_ENV);
    while (env && *env) {
        const char *colon = strchr(env, ':');
        size_t len = colon ? (size_t)(colon - env) : strlen(env);
        add_folder(L, folders, env, len);
        env = colon ? colon + 1 : NULL;
    }
    if (sandboxed) lua_pushliteral(L, "t"); else lua_pushnil(L);
    lua_pushcclosure(L, search_folders, 2);
    lua_rawseti(L, searchers, 2);
    lua_pushcfunction(L, search_bundled);
    lua_rawseti(L, searchers, 3);
    if (sandboxed) {
        lua_pushcfunction(L, pfr_sandbox_native_searcher);
        lua_rawseti(L, searchers, 4);
    } else {
        for (lua_Integer i = 2; i <= (lua_Integer)lua_rawlen(L, old); i++) {
            lua_rawgeti(L, old, i);
            lua_rawseti(L, searchers, i + 2);
        }
    }
    /* Every searcher but preload (psiflight itself) is wrapped so the
     * manifest lists each module that was loaded. */
    for (lua_Integer i = 2; i <= (lua_Integer)lua_rawlen(L, searchers); i++) {
        lua_rawgeti(L, searchers, i);
        lua_pushcclosure(L, recording_searcher, 1);
        lua_rawseti(L, searchers, i);
    }
    lua_setfield(L, pkg, "searchers");
    lua_settop(L, pkg - 1);
}
