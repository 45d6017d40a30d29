/* pfl_file_policy.c - the file access policy of a Lua state: which folders a script
 * may read and write.  The runner fills it (script folder and --data paths
 * read-only, output folder read-write); io.open, os.remove and engine
 * functions that open files ask it before touching a path.
 *
 * A path is allowed when it has no ".." component and its resolved form lies
 * inside an allowed root.  The path is resolved here, one component at a
 * time with lstat and readlink, rather than by realpath: realpath fails on a
 * link whose target does not exist yet, and falling back to the parent
 * folder then let a shipped link to a missing file outside (a shell start-up
 * file, say) be created through.  Following every link by hand, existing
 * target or not, gives the place the kernel would write to.
 *
 * Refusals name the path as the script wrote it (and the link on the way, if
 * one leads out), never the resolved absolute path: a shared recipe's error
 * output should not tell its author where things live on the user's disk. */
#define _DEFAULT_SOURCE /* realpath, readlink */
#include <errno.h>
#include <limits.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
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
    file_policy *p = pfl_new_gc_box(L, sizeof *p, policy_gc);
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

/* Links followed in one resolution at most, as the kernel's limit (40). */
#define MAX_LINKS 40
/* Longest resolved path or pending remainder we handle. */
#define MAX_RESOLVED (2 * PATH_MAX)

/* Appends "/comp" (n bytes) to out, which holds len bytes. */
static int append_component(char *out, size_t *len, const char *comp, size_t n)
{
    if (*len + 1 + n >= MAX_RESOLVED) return errno = ENAMETOOLONG, -1;
    out[(*len)++] = '/';
    memcpy(out + *len, comp, n);
    *len += n;
    out[*len] = 0;
    return 0;
}

/* Resolves path the way the kernel would, following every symbolic link by
 * hand: out gets the absolute path with no link in it; components from the
 * first missing one on are taken as written (nothing below a missing folder
 * can be a link).  *first_link gets the length of the written prefix that
 * names the first link met in path itself (0: none).  Returns 0, or -1 with
 * errno (ELOOP, ENOTDIR, ENAMETOOLONG, EACCES, ...). */
static int resolve(const char *path, char *out, size_t *first_link)
{
    char rest[MAX_RESOLVED], target[PATH_MAX];
    size_t len = 0, links = 0;
    int missing = 0, expanded = 0;
    *first_link = 0;
    out[0] = 0;
    if (path[0] != '/') {
        /* getcwd gives the folder's real path (the kernel builds it). */
        if (!getcwd(out, PATH_MAX)) return -1;
        len = strlen(out);
        if (len == 1) out[len = 0] = 0; /* "/" is the empty prefix here */
    }
    if (strlen(path) >= sizeof rest) return errno = ENAMETOOLONG, -1;
    strcpy(rest, path);
    size_t pos = 0; /* next unread byte of rest */
    while (rest[pos]) {
        while (rest[pos] == '/') pos++;
        if (!rest[pos]) break;
        const char *comp = rest + pos;
        size_t n = strcspn(comp, "/");
        pos += n;
        /* Offset in the written path, while rest still is that path. */
        size_t written_end = pos;
        if (n == 1 && comp[0] == '.') continue;
        if (n == 2 && comp[0] == '.' && comp[1] == '.') {
            /* Only link targets get here (the written path has no ".."):
             * out has no link in it, so dropping its last component is what
             * the kernel does. */
            while (len > 0 && out[len - 1] != '/') len--;
            if (len > 0) len--;
            out[len] = 0;
            continue;
        }
        size_t before = len;
        if (append_component(out, &len, comp, n) != 0) return -1;
        if (missing) continue;
        struct stat st;
        if (lstat(out, &st) != 0) {
            /* Missing, or below a plain file: nothing further down exists,
             * so nothing further down is a link; the open itself will fail
             * if the path is still bad then. */
            if (errno != ENOENT && errno != ENOTDIR) return -1;
            missing = 1;
            continue;
        }
        if (!S_ISLNK(st.st_mode)) continue;
        if (++links > MAX_LINKS) return errno = ELOOP, -1;
        ssize_t t = readlink(out, target, sizeof target - 1);
        if (t < 0) return -1;
        target[t] = 0;
        if (!expanded) {
            *first_link = written_end;
            expanded = 1;
        }
        /* The rest of the walk is the link's target, then what followed the
         * link in the path. */
        size_t tail = strlen(rest + pos);
        if ((size_t)t + 1 + tail >= sizeof rest) return errno = ENAMETOOLONG, -1;
        memmove(rest + t + 1, rest + pos, tail + 1);
        memcpy(rest, target, (size_t)t);
        rest[t] = '/';
        pos = 0;
        len = target[0] == '/' ? 0 : before;
        out[len] = 0;
    }
    if (len == 0) strcpy(out, "/");
    return 0;
}

static int inside(const char *path, const char *root)
{
    size_t n = strlen(root);
    if (strcmp(root, "/") == 0) return 1;
    return strncmp(path, root, n) == 0 && (path[n] == 0 || path[n] == '/');
}

static int allowed(const file_policy *p, const char *real, pfl_access access)
{
    for (int i = 0; i < p->count; i++)
        if ((access == PFL_ACCESS_READ || p->access[i] == PFL_ACCESS_WRITE) && inside(real, p->root[i])) return 1;
    return 0;
}

/* Does a read-only root hold real?  (For the message: "read-only" or
 * "outside".) */
static int read_only_there(const file_policy *p, const char *real)
{
    for (int i = 0; i < p->count; i++)
        if (p->access[i] == PFL_ACCESS_READ && inside(real, p->root[i])) return 1;
    return 0;
}

const char *pfl_files_resolve(lua_State *L, const char *path, pfl_access access, const char *op)
{
    file_policy *p = get_policy(L, 0);
    if (!p || p->count == 0) {
        lua_pushstring(L, path);
        return lua_tostring(L, -1);
    }
    const char *what = access == PFL_ACCESS_WRITE ? "write" : "read";
    if (!path || !*path) pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox: empty path", op);
    if (has_dotdot(path))
        pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox refused to %s '%s': paths with '..' are not allowed", op, what, path);
    /* The buffer lives on the Lua stack, so nothing leaks when we raise. */
    char *real = lua_newuserdatauv(L, MAX_RESOLVED, 0);
    size_t first_link;
    if (resolve(path, real, &first_link) != 0)
        pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox refused to %s '%s': it cannot be resolved (%s)", op, what, path,
                  strerror(errno));
    if (allowed(p, real, access)) {
        lua_pushstring(L, real);
        lua_remove(L, -2);
        return lua_tostring(L, -1);
    }
    int ro = access == PFL_ACCESS_WRITE && read_only_there(p, real);
    const char *where = ro ? "into a read-only folder (the script folder and the --data paths are read-only; "
                             "write into the output folder)"
                           : "outside the script folder, the --data paths and the output folder";
    if (first_link)
        pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox refused to %s '%s': the symbolic link '%.*s' leads %s; "
                  "see docs/sharing-recipes.md", op, what, path, (int)first_link, path, where);
    pfl_error(L, PFL_ERROR_SANDBOX, "%s: sandbox refused to %s '%s': %s %s; see docs/sharing-recipes.md", op, what,
              path, ro ? "it would write" : "it is", where);
    return NULL;
}

void pfl_files_check(lua_State *L, const char *path, pfl_access access, const char *op)
{
    pfl_files_resolve(L, path, access, op);
    lua_pop(L, 1);
}
