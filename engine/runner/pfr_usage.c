/* pfr_usage.c - the runner's one table of commands, options, exit statuses
 * and environment variables, and the three texts made from it (short usage,
 * --help, the man page).  A new option is added here and in the parser
 * (pfr_options.c); tests/runner/test_install.sh checks that every option
 * listed here is accepted and that the man page lists the same options as
 * --help. */
#include <string.h>
#include "pf_version.h"
#include "pfr_usage.h"

static const char *const SYNOPSIS[] = {
    "psiflight run SCRIPT.lua [--help] [RUN OPTIONS]",
    "psiflight recipe [NAME [--help] [RUN OPTIONS]]",
    "psiflight sweep SCRIPT.lua (--vary NAME=SPEC)... | --points FILE.csv",
    "                --out DIR [-j N] [--rerun] [RUN OPTIONS]",
    "psiflight --help | --help-man | --version",
    NULL,
};

static const struct { const char *name, *help; } COMMANDS[] = {
    {"run", "Runs a Lua script with the psiflight module preloaded (as require \"psiflight\"), in a sandbox that "
            "confines its files to --out and --data."},
    {"recipe", "Alone, lists the recipes bundled into the runner; with a NAME, runs that recipe "
               "(the same as run recipe:NAME)."},
    {"sweep", "Runs a script once per point of a parameter grid (--vary) or table (--points), each point in its "
              "own subfolder of --out, and collects the results in sweep.csv; finished points are not run again."},
    {NULL, NULL},
};

const pfr_option_doc pfr_option_docs[] = {
    {"--help", "-h", NULL, PFR_FOR_RUN,
     "After the script: list its declared parameters (name, default with unit, help) and stop without computing."},
    {"--set", NULL, "NAME=VALUE", PFR_FOR_RUN,
     "Set a declared parameter; the value may carry a unit suffix (4ms, 30uK). Repeatable; the last one wins."},
    {"--seed", NULL, "N", PFR_FOR_RUN, "Base seed of the run's random numbers (non-negative integer, default 1)."},
    {"--out", NULL, "DIR", PFR_FOR_RUN,
     "Output folder, created if missing; the script writes there and the run manifest lands there."},
    {"--data", NULL, "PATH", PFR_FOR_RUN, "A file or folder the script may read (repeatable; read-only)."},
    {"--threads", NULL, "N", PFR_FOR_RUN, "Engine threads, 1..1024 (default 1)."},
    {"--strict", NULL, NULL, PFR_FOR_RUN, "Numerical guard warnings become errors (exit status 3)."},
    {"--planning", NULL, "measure|estimate", PFR_FOR_RUN, "FFTW planning mode."},
    {"--wisdom", NULL, "PATH|off", PFR_FOR_RUN,
     "FFTW wisdom file (default $PSIFLIGHT_WISDOM, else the user cache); off uses none."},
    {"--trusted", NULL, NULL, PFR_FOR_RUN, "Lift the sandbox for a script you trust."},
    {"--time-limit", NULL, "DURATION", PFR_FOR_RUN,
     "Wall-clock limit: 90, 90s, 1.5min, 500ms (a bare number is seconds); reaching it is exit status 5."},
    {"--memory-cap", NULL, "SIZE", PFR_FOR_RUN,
     "Cap on the Lua heap and on the engine's memory: bytes, or with kB MB GB TB or KiB MiB GiB TiB; at least 64KiB."},
    {"--quiet", NULL, NULL, PFR_FOR_RUN, "No progress bars on stderr."},
    {"--overwrite", NULL, NULL, PFR_FOR_RUN,
     "Let this run replace files of an earlier run in its output folder, and its manifest."},
    {"--vary", NULL, "NAME=SPEC", PFR_FOR_SWEEP,
     "Vary a declared parameter over START:STOP:COUNT (evenly spaced, ends included) or a list V1,V2,...; "
     "several --vary make a grid."},
    {"--points", NULL, "FILE.csv", PFR_FOR_SWEEP, "Take the points from a CSV table with one column per parameter."},
    {"--jobs", "-j", "N", PFR_FOR_SWEEP, "Worker processes running points in parallel (default 1)."},
    {"--rerun", NULL, NULL, PFR_FOR_SWEEP, "Run every point again, even those with a matching finished manifest."},
    {NULL, NULL, NULL, 0, NULL},
};

static const struct { const char *status, *help; } EXITS[] = {
    {"0", "success (also after --help)"},
    {"1", "the script raised an error (including syntax errors)"},
    {"2", "usage error: bad command line, unknown or malformed --set, missing script"},
    {"3", "a numerical guard tripped in strict mode (--strict)"},
    {"4", "the sandbox refused an operation"},
    {"5", "a resource limit was reached (memory cap, time limit) or the system ran out of memory"},
    {"6", "sweep only: the sweep finished but at least one point failed"},
    {"128+N", "stopped by signal N (130 for SIGINT, 143 for SIGTERM)"},
    {NULL, NULL},
};

static const struct { const char *name, *help; } ENVIRONMENT[] = {
    {"PSIFLIGHT_WISDOM", "FFTW wisdom file used when --wisdom is not given."},
    {"PSIFLIGHT_RECIPE_PATH", "Colon-separated folders searched by require after the script's folder."},
    {"PSIFLIGHT_FAIL_ALLOC", "N: make the N-th engine allocation fail (fault injection for tests)."},
    {NULL, NULL},
};

static void print_option_head(FILE *f, const pfr_option_doc *o)
{
    fprintf(f, "%s%s%s%s%s", o->name, o->alias ? ", " : "", o->alias ? o->alias : "", o->arg ? " " : "",
            o->arg ? o->arg : "");
}

/* Prints text word-wrapped to 79 columns, starting at column `col` (the
 * caller has printed that much) and indenting continuation lines by
 * `indent`; ends the line. */
static void print_wrapped(FILE *f, int col, int indent, const char *text)
{
    const char *p = text;
    while (*p) {
        size_t word = strcspn(p, " ");
        if (col > indent && col + 1 + (int)word > 79) col = fprintf(f, "\n%*s", indent, "") - 1;
        else if (p != text) col += fprintf(f, " ");
        col += fprintf(f, "%.*s", (int)word, p);
        p += word;
        while (*p == ' ') p++;
    }
    fputc('\n', f);
}

void pfr_usage(FILE *f)
{
    for (int i = 0; SYNOPSIS[i]; i++) fprintf(f, "%s%s\n", i ? "       " : "usage: ", SYNOPSIS[i]);
    for (int which = PFR_FOR_RUN; which <= PFR_FOR_SWEEP; which++) {
        int col = fprintf(f, "%s", which == PFR_FOR_RUN ? "run options:" : "sweep options:");
        for (const pfr_option_doc *o = pfr_option_docs; o->name; o++) {
            if (o->commands != which) continue;
            int w = (int)strlen(o->name) + (o->arg ? 1 + (int)strlen(o->arg) : 0);
            if (col + 2 + w > 100) col = fprintf(f, "\n            ");
            col += fprintf(f, "  %s%s%s", o->name, o->arg ? " " : "", o->arg ? o->arg : "");
        }
        fputc('\n', f);
    }
    fputs("psiflight --help explains each option and the exit statuses; see also man psiflight.\n", f);
}

void pfr_help(FILE *f)
{
    fprintf(f, "psiflight %s - runs Lua scripts that prepare wave packets and fly them\n\n", PF_VERSION);
    for (int i = 0; SYNOPSIS[i]; i++) fprintf(f, "%s%s\n", i ? "       " : "usage: ", SYNOPSIS[i]);
    fputs("\ncommands:\n", f);
    for (int i = 0; COMMANDS[i].name; i++) print_wrapped(f, fprintf(f, "  %-8s", COMMANDS[i].name), 10, COMMANDS[i].help);
    for (int which = PFR_FOR_RUN; which <= PFR_FOR_SWEEP; which++) {
        fputs(which == PFR_FOR_RUN ? "\nrun options (run, recipe and sweep):\n" : "\nsweep options:\n", f);
        for (const pfr_option_doc *o = pfr_option_docs; o->name; o++) {
            if (o->commands != which) continue;
            fputs("  ", f);
            print_option_head(f, o);
            print_wrapped(f, fprintf(f, "\n      ") - 1, 6, o->help);
        }
    }
    fputs("\nexit status:\n", f);
    for (int i = 0; EXITS[i].help; i++) print_wrapped(f, fprintf(f, "  %-6s", EXITS[i].status), 8, EXITS[i].help);
    fputs("\nenvironment:\n", f);
    for (int i = 0; ENVIRONMENT[i].name; i++)
        print_wrapped(f, fprintf(f, "  %-22s", ENVIRONMENT[i].name), 24, ENVIRONMENT[i].help);
    fputs("\nThe documentation (docs/runner.md, or man psiflight) describes parameters,\nsweeps, the sandbox and the outputs.\n", f);
}

/* Text for roff: a backslash is written \e, a minus sign \-, and a line
 * never starts with a control character ('.' or '\''). */
static void roff_text(FILE *f, const char *s)
{
    if (*s == '.' || *s == '\'') fputs("\\&", f);
    for (; *s; s++) {
        if (*s == '\\') fputs("\\e", f);
        else if (*s == '-') fputs("\\-", f);
        else fputc(*s, f);
    }
}

static void roff_option_head(FILE *f, const pfr_option_doc *o)
{
    fputs(".TP\n\\fB", f);
    roff_text(f, o->name);
    fputs("\\fR", f);
    if (o->alias) {
        fputs(", \\fB", f);
        roff_text(f, o->alias);
        fputs("\\fR", f);
    }
    if (o->arg) {
        fputs(" \\fI", f);
        roff_text(f, o->arg);
        fputs("\\fR", f);
    }
    fputc('\n', f);
}

void pfr_help_man(FILE *f)
{
    /* No date: the page is generated at build time and must be the same
     * every time (deterministic outputs). */
    fprintf(f, ".TH PSIFLIGHT 1 \"\" \"psiflight %s\" \"User Commands\"\n", PF_VERSION);
    fputs(".SH NAME\npsiflight \\- runs Lua scripts that prepare wave packets and fly them freely\n", f);
    fputs(".SH SYNOPSIS\n.nf\n", f);
    for (int i = 0; SYNOPSIS[i]; i++) {
        roff_text(f, SYNOPSIS[i]);
        fputc('\n', f);
    }
    fputs(".fi\n.SH DESCRIPTION\n", f);
    fputs("A psiflight script describes how a quantum state is prepared and what happens to it: free flight, "
          "flight under a uniform force, pulses, masks, detectors.  The engine evolves the wave function in "
          "momentum space and writes results (HDF5, CSV, PNG) with a run manifest.  Outputs are model "
          "predictions; where they inform work on real apparatus, follow local safety rules and qualified "
          "staff.\n",
          f);
    fputs(".SH COMMANDS\n", f);
    for (int i = 0; COMMANDS[i].name; i++) {
        fputs(".TP\n\\fB", f);
        roff_text(f, COMMANDS[i].name);
        fputs("\\fR\n", f);
        roff_text(f, COMMANDS[i].help);
        fputc('\n', f);
    }
    for (int which = PFR_FOR_RUN; which <= PFR_FOR_SWEEP; which++) {
        fputs(which == PFR_FOR_RUN ? ".SH RUN OPTIONS\nAccepted by run, recipe and sweep.\n" : ".SH SWEEP OPTIONS\n",
              f);
        for (const pfr_option_doc *o = pfr_option_docs; o->name; o++) {
            if (o->commands != which) continue;
            roff_option_head(f, o);
            roff_text(f, o->help);
            fputc('\n', f);
        }
    }
    fputs(".SH EXIT STATUS\n", f);
    for (int i = 0; EXITS[i].help; i++) {
        fprintf(f, ".TP\n.B %s\n", EXITS[i].status);
        roff_text(f, EXITS[i].help);
        fputc('\n', f);
    }
    fputs(".SH ENVIRONMENT\n", f);
    for (int i = 0; ENVIRONMENT[i].name; i++) {
        fputs(".TP\n.B ", f);
        roff_text(f, ENVIRONMENT[i].name);
        fputc('\n', f);
        roff_text(f, ENVIRONMENT[i].help);
        fputc('\n', f);
    }
    fputs(".SH FILES\nThe documentation is installed under \\fIshare/doc/psiflight\\fR of the installation "
          "prefix (runner.md: parameters, sweeps, sandbox; install.md: set-up), the bundled recipes' sources "
          "under \\fIshare/psiflight/recipes\\fR.\n",
          f);
    fputs(".SH SEE ALSO\n.BR lua5.4 (1)\n", f);
}
