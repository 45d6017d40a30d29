/* pf_safefile.c - temporary-name-then-rename writing of output files, with a
 * small process-wide table of files in progress for interrupt cleanup. */
#include <errno.h>
#include <fcntl.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include "pf_safefile.h"

/* Paths of temporary files being written.  The signal handler only reads
 * entries whose flag is set, and a flag is set only after its path is
 * complete, so a half-filled entry is never used. */
#define PARTIAL_SLOTS 64
static char partial_path[PARTIAL_SLOTS][4096];
static volatile sig_atomic_t partial_used[PARTIAL_SLOTS];

static int partial_add(const char *path)
{
    if (strlen(path) >= sizeof partial_path[0]) return -1;
    for (int i = 0; i < PARTIAL_SLOTS; i++) {
        if (!partial_used[i]) {
            strcpy(partial_path[i], path);
            partial_used[i] = 1;
            return i;
        }
    }
    return -1; /* best effort: more than 64 files open at once go untracked */
}

static void partial_drop(int slot)
{
    if (slot >= 0 && slot < PARTIAL_SLOTS) partial_used[slot] = 0;
}

void pf_safe_remove_all_partial(void)
{
    for (int i = 0; i < PARTIAL_SLOTS; i++)
        if (partial_used[i]) unlink(partial_path[i]);
}

pf_status pf_make_folders(pf_context *ctx, const char *path)
{
    char *copy = strdup(path);
    if (!copy) return pf_fail(ctx, PF_ENOMEM, "out of memory");
    for (char *p = copy + 1; *p; p++) {
        if (*p != '/') continue;
        *p = '\0';
        if (mkdir(copy, 0777) != 0 && errno != EEXIST) {
            pf_status s = pf_fail(ctx, PF_EIO, "cannot create folder '%s': %s", copy, strerror(errno));
            free(copy);
            return s;
        }
        *p = '/';
    }
    free(copy);
    return PF_OK;
}

static void clear(pf_safefile *f)
{
    free(f->final_path);
    free(f->temp_path);
    partial_drop(f->slot);
    f->final_path = f->temp_path = NULL;
    f->slot = -1;
}

pf_status pf_safe_begin(pf_context *ctx, const char *final_path, int overwrite, pf_safefile *f)
{
    memset(f, 0, sizeof *f);
    f->slot = -1;
    if (!final_path || !*final_path || final_path[strlen(final_path) - 1] == '/')
        return pf_fail(ctx, PF_EINVAL, "output file name '%s' is empty or a folder", final_path ? final_path : "");
    pf_status s = pf_make_folders(ctx, final_path);
    if (s) return s;
    struct stat st;
    if (!overwrite && stat(final_path, &st) == 0)
        return pf_fail(ctx, PF_EIO, "'%s' exists; pass overwrite=true (or --overwrite) to replace it", final_path);
    const char *slash = strrchr(final_path, '/');
    size_t dirlen = slash ? (size_t)(slash - final_path + 1) : 0;
    const char *base = slash ? slash + 1 : final_path;
    size_t need = strlen(final_path) + 32;
    f->final_path = strdup(final_path);
    f->temp_path = malloc(need);
    if (!f->final_path || !f->temp_path) {
        clear(f);
        return pf_fail(ctx, PF_ENOMEM, "out of memory");
    }
    snprintf(f->temp_path, need, "%.*s.%s.partial-XXXXXX", (int)dirlen, final_path, base);
    int fd = mkstemp(f->temp_path);
    if (fd < 0) {
        s = pf_fail(ctx, PF_EIO, "cannot create a temporary file beside '%s': %s", final_path, strerror(errno));
        clear(f);
        return s;
    }
    /* mkstemp makes the file private (0600); outputs get the usual mode. */
    mode_t mask = umask(022);
    umask(mask);
    fchmod(fd, 0666 & ~mask);
    close(fd);
    f->overwrite = overwrite;
    f->slot = partial_add(f->temp_path);
    return PF_OK;
}

pf_status pf_safe_commit(pf_context *ctx, pf_safefile *f)
{
    pf_status s = PF_OK;
    int fd = open(f->temp_path, O_RDONLY);
    if (fd < 0 || fsync(fd) != 0) {
        s = pf_fail(ctx, PF_EIO, "cannot flush '%s' to disk: %s", f->temp_path, strerror(errno));
    }
    if (fd >= 0) close(fd);
    if (!s) {
        if (f->overwrite) {
            if (rename(f->temp_path, f->final_path) != 0)
                s = pf_fail(ctx, PF_EIO, "cannot rename '%s' to '%s': %s", f->temp_path, f->final_path, strerror(errno));
        } else if (link(f->temp_path, f->final_path) == 0) {
            /* link() refuses to replace an existing name, atomically. */
            unlink(f->temp_path);
        } else if (errno == EEXIST) {
            s = pf_fail(ctx, PF_EIO, "'%s' exists; pass overwrite=true (or --overwrite) to replace it", f->final_path);
        } else {
            /* File systems without hard links: check, then rename. */
            struct stat st;
            if (stat(f->final_path, &st) == 0)
                s = pf_fail(ctx, PF_EIO, "'%s' exists; pass overwrite=true (or --overwrite) to replace it", f->final_path);
            else if (rename(f->temp_path, f->final_path) != 0)
                s = pf_fail(ctx, PF_EIO, "cannot rename '%s' to '%s': %s", f->temp_path, f->final_path, strerror(errno));
        }
    }
    if (s) unlink(f->temp_path);
    clear(f);
    return s;
}

void pf_safe_abandon(pf_safefile *f)
{
    if (f->temp_path) unlink(f->temp_path);
    clear(f);
}
