/* pfr_options.h - the command-line options shared by `run`, `recipe` and
 * `sweep` (pfr_options.c parses them; docs/runner.md documents them). */
#ifndef PFR_OPTIONS_H
#define PFR_OPTIONS_H

#include <stddef.h>
#include <stdio.h>
#include "pfr_usage.h" /* pfr_usage */

/* One --vary NAME=SPEC as typed (the sweep planner expands it). */
typedef struct pfr_vary {
    char *name;
    char *spec;
} pfr_vary;

typedef struct pfr_options {
    const char *command;  /* "run", "recipe" or "sweep" */
    const char *script;   /* script path; for `recipe` the recipe name */
    int nsets;
    char **sets;          /* "NAME=VALUE" strings, in command-line order */
    int ndata;
    char **data;          /* --data PATH: files or folders the script may read */
    int threads;          /* 0: leave the engine default (1) */
    int strict;
    const char *planning; /* NULL: default */
    const char *wisdom;   /* NULL: default, "off" disables */
    const char *out;      /* output folder, NULL: none */
    long long seed;       /* -1: default */
    int help;             /* --help after the script: list its parameters */
    int trusted;          /* --trusted: no sandbox */
    int quiet;            /* --quiet: no progress bars */
    int overwrite;        /* --overwrite: writers may replace existing files */
    double time_limit;    /* wall-clock seconds, 0: none */
    size_t memory_cap;    /* bytes, 0: defaults (Lua heap 4 GiB, engine 16 GiB) */
    /* sweep only */
    int nvary;
    pfr_vary *vary;
    const char *points_csv; /* --points FILE.csv */
    int jobs;               /* -j N worker processes */
    int rerun;              /* --rerun: ignore matching manifests */
} pfr_options;

/* Parses argv[first..] for the given command into o (which it initialises).
 * Returns PFR_EXIT_OK or PFR_EXIT_USAGE after printing the problem. */
int pfr_options_parse(int argc, char **argv, int first, const char *command, pfr_options *o);
void pfr_options_free(pfr_options *o);
/* Prints "psiflight: MESSAGE" and the short usage to stderr; returns PFR_EXIT_USAGE. */
int pfr_usage_error(const char *fmt, ...) __attribute__((format(printf, 1, 2)));

#endif
