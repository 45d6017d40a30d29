/* pfr_usage.h - the runner's one table of commands, options and exit
 * statuses, and every text made from it: the short usage printed with a
 * usage error, `psiflight --help`, and the man page psiflight(1) printed by
 * `psiflight --help-man`.  The option parser (pfr_options.c) takes its
 * "did you mean" candidates from the same table. */
#ifndef PFR_USAGE_H
#define PFR_USAGE_H

#include <stdio.h>

/* Which commands accept an option. */
enum { PFR_FOR_RUN = 1, PFR_FOR_SWEEP = 2 };

typedef struct pfr_option_doc {
    const char *name;  /* "--set" */
    const char *alias; /* another spelling ("-h", "-j"), or NULL */
    const char *arg;   /* the value it takes ("NAME=VALUE"), or NULL for a flag */
    int commands;      /* PFR_FOR_RUN (run, recipe and sweep) or PFR_FOR_SWEEP only */
    const char *help;  /* one or two sentences */
} pfr_option_doc;

/* The options, terminated by an entry with name NULL. */
extern const pfr_option_doc pfr_option_docs[];

/* Short usage: synopsis and option names (stderr after a usage error). */
void pfr_usage(FILE *f);
/* `psiflight --help`: synopsis, every option with its help, exit statuses. */
void pfr_help(FILE *f);
/* `psiflight --help-man`: the same content as a man page in roff (man(7)). */
void pfr_help_man(FILE *f);

#endif
