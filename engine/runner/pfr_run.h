/* pfr_run.h - the runner's command interpreter and the single-run machinery. */
#ifndef PFR_RUN_H
#define PFR_RUN_H

#include "pfr_options.h"

/* Script argument naming a bundled recipe instead of a file: recipe:NAME. */
#define PFR_RECIPE_SCHEME "recipe:"

/* Parses argv, runs the requested command and returns the exit status. */
int pfr_main(int argc, char **argv);
/* Runs one script (or bundled recipe) with the options, in this process, and
 * returns the exit status (pfr_exit.h).  Prints failures on stderr. */
int pfr_run_script(const pfr_options *o);
/* SHA-256 of the script o->script names (file or bundled recipe) into hex.
 * Returns 0, or -1 when it cannot be read. */
int pfr_script_digest(const char *script, char hex[65]);

/* mkdir -p path.  Returns 0, or -1 with errno set. */
int pfr_make_folders(const char *path);
/* 1 when path has a ".." component (refused for --out in the sandbox). */
int pfr_path_has_dotdot(const char *path);

#endif
