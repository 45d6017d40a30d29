/* pf_safefile.h - atomic creation of output files: write under a temporary
 * name in the final folder, rename into place only when complete.
 *
 * So an interrupted run (Ctrl-C, crash, full disk) never leaves a half-written
 * file under its final name, and an existing file is replaced only when the
 * caller says so. */
#ifndef PF_SAFEFILE_H
#define PF_SAFEFILE_H

#include "pf_context.h"

typedef struct pf_safefile {
    char *final_path;   /* where the file goes when committed */
    char *temp_path;    /* where it is written meanwhile */
    int overwrite;      /* replace an existing final file on commit */
    int slot;           /* entry in the interrupt-cleanup table, -1 if none */
} pf_safefile;

/* Creates the folders above path (like mkdir -p, mode 0777 & ~umask).
 * Returns PF_OK, or PF_EIO with a message naming the folder. */
pf_status pf_make_folders(pf_context *ctx, const char *path);

/* Starts a file: creates the folders, refuses (PF_EIO, "exists") when the
 * final file exists and overwrite is 0, and creates an empty temporary file
 * "<folder>/.<name>.partial-XXXXXX" that the writer then fills by name.  On
 * failure nothing is left behind and *f is cleared. */
pf_status pf_safe_begin(pf_context *ctx, const char *final_path, int overwrite, pf_safefile *f);
/* Flushes the temporary file to disk and moves it to the final name.  Without
 * overwrite the move fails, leaving the existing file alone, if a final file
 * appeared meanwhile.  Frees f's strings in every case; on failure the
 * temporary file is removed. */
pf_status pf_safe_commit(pf_context *ctx, pf_safefile *f);
/* Removes the temporary file and frees f's strings (harmless when cleared). */
void pf_safe_abandon(pf_safefile *f);

/* Removes every temporary file still being written.  Async-signal-safe, for
 * the runner's SIGINT/SIGTERM handler; the table is process-wide because a
 * signal handler has no other way to find the files. */
void pf_safe_remove_all_partial(void);

#endif
