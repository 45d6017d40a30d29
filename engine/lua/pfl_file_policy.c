/* pfl_file_policy.c - the file access policy of a Lua state: which folders a script
 * may read and write.  The runner fills it (script folder, --data paths,
 * output folder); io.open, os.remove and engine functions that open files ask
 * it before touching a path.
 *
 * A path is allowed when it has no ".." component and its resolved form (every
 * symbolic link followed, by realpath) lies inside an allowed root.  For a file
 * that does not exist yet the parent folder is resolved instead.  Scripts have
 * no way to create links, so checking before opening is enough here. */
#define _DEFAULT_SOURCE /* realpath */
#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include "pfl.h"

#define MAX_ROOTS 64

typedef struct file_policy {
    int count;
    char *root[MAX_ROOTS];
    pfl_access access[MAX_ROOTS];
} file_policy;

static const char POLICY_KEY = 'F';

static int policy_gc(lua_State *L)
{
    file_policy *p = lua_touserdata(L, 1);
    for (int i = 0; i < p->count; i++) free(p->root[i]);
    p->count = 0;
    return 0;
}

static file_policy *get_policy(lua_State *L, int create)
{
    if (lua_rawgetp(L, LUA_REGISTRYINDEX, &POLICY_KEY) == LUA_TUSERDATA) {
        file_policy *p = lua_touserdata(L, -1);
        lua_pop(L, 1);
        return p;
    }
    lua_pop(L, 1);
    if (!create) return NULL;
    file_policy *p = lua_newuserdatauv(L, sizeof *p, 0);
    memset(p, 0, sizeof *p);
    lua_createtable(L, 0, 1);
    lua_pushcfunction(L, policy_gc);
    lua_setfield(L, -2, "__gc");
    lua_setmetatable(L, -2);
    lua_rawsetp(L, LUA_REGISTRYINDEX, &POLICY_KEY);
    return p;
}

int pfl_files_allow(lua_State *L, const char *path, pfl_access access)
{
    file_policy *p = get_policy(L, 1);
    if (p->count == MAX_ROOTS) {
        errno = ENOSPC;
        return -1;
    }
    char *real = realpath(path, NULL);
    if (!real) return -1;
    p->root[p->count] = real;
    p->access[p->count] = access;
    p->count++;
    return 0;
}

int pfl_files_enforced(lua_State *L)
{
    file_policy *p = get_policy(L, 0);
    return p && p->count > 0;
}

static int has_dotdot(const char *path)
{
    for (const char *s = path; (s = strstr(s, "..")) != NULL; s += 2) {
        int starts = s == path || s[-1] == '/';
        int ends = s[2] == 0 || s[2] == '/';
        if (starts && ends) return 1;
    }
    return 0;
}

/* Resolves path like realpath, or, when the file does not exist, resolves its
 * folder and appends the last component.  Returns a malloc'd string or NULL. */
static char *resolve(const char *path)
{
    char *real = realpath(path, NULL);
    if (real) return real;
    if (errno != ENOENT) return NULL;
    const char *slash = strrchr(path, '/');
    const char *base = slash ? slash + 1 : path;
    if (!*base || strcmp(base, ".") == 0) return NULL;
    char dir[PATH_MAX];
    if (!slash) strcpy(dir, ".");
    else if (slash == path) strcpy(dir, "/");
    else {
        size_t n = (size_t)(slash - path);
        if (n >= sizeof dir) return NULL;
        memcpy(dir, path, n);
        dir[n] = 0;
    }
    char *rdir = realpath(dir, NULL);
    if (!rdir) return NULL;
    size_t len = strlen(rdir) + strlen(base) + 2;
    char *out = malloc(len);
    if (out) {
        strcpy(out, rdir);
        if (strcmp(rdir, "/") != 0) strcat(out, "/");
        strcat(out, base);
    }
    free(rdir);
    return out;
}

static int inside(const char *path, const char *root)
{
    size_t n = strlen(root);
    if (strcmp(root, "/") == 0) return 1;
    return strncmp(path, root, n) == 0 && (path[n] == 0 || path[n] == '/');
}

void pfl_files_check(lua_State *L, const char *path, pfl_access access, const char *op)
{
    file_policy *p = get_policy(L, 0);
    if (!p || p->count == 0) return;
    const char *what = access == PFL_ACCESS_WRITE ? "write" : "read";
    if (!path || !*path) pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox: empty path", op);
    if (has_dotdot(path))
        pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox refused to %s '%s': paths with '..' are not allowed", op, what, path);
    char *real = resolve(path);
    if (!real)
        pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox refused to %s '%s': its folder does not exist or cannot be resolved",
                  op, what, path);
    int ok = 0;
    for (int i = 0; i < p->count && !ok; i++)
        if ((access == PFL_ACCESS_READ || p->access[i] == PFL_ACCESS_WRITE) && inside(real, p->root[i])) ok = 1;
    if (ok) {
        free(real);
        return;
    }
    /* Copy onto the Lua stack so nothing leaks when we raise. */
    lua_pushstring(L, real);
    free(real);
    pfl_error(L, PFL_ERROR_SANDBOX,
              "%s: sandbox refused to %s '%s' (resolves to %s): outside the script folder, the --data paths%s "
              "and the output folder; see docs/sharing-recipes.md",
              op, what, path, lua_tostring(L, -1), access == PFL_ACCESS_WRITE ? " (read-only)" : "");
}
