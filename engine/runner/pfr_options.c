/* pfr_options.c - parses the runner's command line into pfr_options.  The
 * options are those of the runner's one table (pfr_usage.c); every bad value is a usage
 * error (exit 2) that names the option and the value. */
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>
#include "pf_units.h"
#include "pfl_suffix.h"
#include "pfr_exit.h"
#include "pfr_options.h"
#include "pfr_usage.h"

int pfr_usage_error(const char *fmt, ...)
{
    va_list ap;
    fputs("psiflight: ", stderr);
    va_start(ap, fmt);
    vfprintf(stderr, fmt, ap);
    va_end(ap);
    fputc('\n', stderr);
    pfr_usage(stderr);
    return PFR_EXIT_USAGE;
}

/* "512MiB", "2GB", "1e9": bytes.  Binary (KiB, MiB, GiB) and decimal (kB, MB,
 * GB) multiples; a bare number is bytes. */
static int parse_bytes(const char *text, size_t *out)
{
    static const struct { const char *name; double mult; } mult[] = {
        {"", 1}, {"B", 1}, {"kB", 1e3}, {"KB", 1e3}, {"MB", 1e6}, {"GB", 1e9}, {"TB", 1e12},
        {"KiB", 1024.0}, {"MiB", 1048576.0}, {"GiB", 1073741824.0}, {"TiB", 1099511627776.0},
    };
    char *end;
    double v = strtod(text, &end);
    if (end == text || !(v > 0)) return -1;
    for (size_t i = 0; i < sizeof mult / sizeof mult[0]; i++) {
        if (strcmp(end, mult[i].name) == 0) {
            double b = v * mult[i].mult;
            if (b < 65536 || b > 1e18) return -1;
            *out = (size_t)b;
            return 0;
        }
    }
    return -1;
}

/* "90", "90s", "1.5min", "500ms": seconds (the unit-suffix rule, time). */
static int parse_seconds(const char *text, double *out)
{
    double v;
    const pfl_unit *u;
    char err[200];
    if (pfl_value_parse(text, &v, &u, err, sizeof err) != 0) return -1;
    if (u && strcmp(u->quantity, "time") != 0) return -1;
    v *= u ? u->si : 1.0;
    if (!(v > 0) || v > 1e7) return -1;
    *out = v;
    return 0;
}

static int is_sweep(const char *command) { return strcmp(command, "sweep") == 0; }

/* The accepted option closest to a typed one, when close enough to be a
 * typo (the engine's one rule, pf_edit_suggestible), else NULL.  The
 * candidates are the options of the runner's one table (pfr_usage.c); the
 * sweep-only ones are offered for sweep. */
static const char *nearest_option(const char *typed, int sweep)
{
    const char *best = NULL;
    int best_d = 1 << 30;
    for (const pfr_option_doc *o = pfr_option_docs; o->name; o++) {
        if (o->commands == PFR_FOR_SWEEP && !sweep) continue;
        int d = pf_edit_distance(typed, o->name);
        if (d < best_d) { best_d = d; best = o->name; }
    }
    /* The leading dashes are shared by every option: judge the name. */
    const char *name = typed;
    while (*name == '-') name++;
    return best && *name && pf_edit_suggestible(name, best_d) ? best : NULL;
}

/* Whether a is an option only sweep accepts (by name or alias). */
static int sweep_only_option(const char *a)
{
    for (const pfr_option_doc *o = pfr_option_docs; o->name; o++)
        if (o->commands == PFR_FOR_SWEEP && (strcmp(a, o->name) == 0 || (o->alias && strcmp(a, o->alias) == 0)))
            return 1;
    return 0;
}

/* The usage error for an option `a` the command does not take: one of
 * sweep's given to another command, or a misspelling (with the nearest
 * option's name when one is close). */
static int unknown_option(const char *a, const char *command)
{
    if (!is_sweep(command) && sweep_only_option(a))
        return pfr_usage_error("'%s' is an option of psiflight sweep, not of %s", a, command);
    const char *near = nearest_option(a, is_sweep(command));
    if (near) return pfr_usage_error("unknown option '%s' for %s (did you mean '%s'?)", a, command, near);
    return pfr_usage_error("unknown option '%s' for %s (see psiflight --help)", a, command);
}

/* What the command needs once every argument is read: a script (but for
 * recipe), and for sweep an output folder and one source of points. */
static int check_complete(const pfr_options *o, const char *command)
{
    if (!o->script && strcmp(command, "recipe") != 0) return pfr_usage_error("%s needs a script file", command);
    if (is_sweep(command)) {
        if (!o->out) return pfr_usage_error("sweep needs --out DIR (each point writes into its own subfolder)");
        if (!o->nvary && !o->points_csv) return pfr_usage_error("sweep needs --vary NAME=... or --points FILE.csv");
        if (o->nvary && o->points_csv) return pfr_usage_error("give either --vary or --points, not both");
        if (o->help) return pfr_usage_error("--help lists a script's parameters: psiflight run SCRIPT --help");
    }
    return PFR_EXIT_OK;
}

int pfr_options_parse(int argc, char **argv, int first, const char *command, pfr_options *o)
{
    memset(o, 0, sizeof *o);
    o->command = command;
    o->seed = -1;
    o->jobs = 1;
    o->sets = calloc((size_t)argc, sizeof *o->sets);
    o->data = calloc((size_t)argc, sizeof *o->data);
    o->vary = calloc((size_t)argc, sizeof *o->vary);
    if (!o->sets || !o->data || !o->vary) return pfr_usage_error("out of memory");
    for (int i = first; i < argc; i++) {
        const char *a = argv[i];
        const char *val = i + 1 < argc ? argv[i + 1] : NULL;
#define NEED(what) do { if (!val) return pfr_usage_error("%s needs %s", a, what); i++; } while (0)
        if (strcmp(a, "--set") == 0) {
            NEED("NAME=VALUE");
            if (!strchr(val, '=') || val[0] == '=') return pfr_usage_error("--set needs NAME=VALUE, got '%s'", val);
            o->sets[o->nsets++] = argv[i];
        } else if (strcmp(a, "--data") == 0) {
            NEED("a file or folder");
            o->data[o->ndata++] = argv[i];
        } else if (strcmp(a, "--threads") == 0) {
            NEED("a count");
            char *end;
            long n = strtol(val, &end, 10);
            if (*end || end == val || n < 1 || n > 1024) return pfr_usage_error("--threads needs a count of 1..1024, got '%s'", val);
            o->threads = (int)n;
        } else if (strcmp(a, "--strict") == 0) {
            o->strict = 1;
        } else if (strcmp(a, "--planning") == 0) {
            NEED("measure or estimate");
            if (strcmp(val, "measure") && strcmp(val, "estimate"))
                return pfr_usage_error("--planning must be measure or estimate, got '%s'", val);
            o->planning = val;
        } else if (strcmp(a, "--wisdom") == 0) {
            NEED("a path or off");
            o->wisdom = val;
        } else if (strcmp(a, "--seed") == 0) {
            NEED("a non-negative integer");
            char *end;
            long long n = strtoll(val, &end, 10);
            if (*end || end == val || n < 0) return pfr_usage_error("--seed needs a non-negative integer, got '%s'", val);
            o->seed = n;
        } else if (strcmp(a, "--out") == 0) {
            NEED("a folder");
            if (!val[0]) return pfr_usage_error("--out needs a folder");
            o->out = val;
        } else if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
            o->help = 1;
        } else if (strcmp(a, "--trusted") == 0) {
            o->trusted = 1;
        } else if (strcmp(a, "--quiet") == 0) {
            o->quiet = 1;
        } else if (strcmp(a, "--overwrite") == 0) {
            o->overwrite = 1;
        } else if (strcmp(a, "--time-limit") == 0) {
            NEED("a duration");
            if (parse_seconds(val, &o->time_limit) != 0)
                return pfr_usage_error("--time-limit needs a positive duration (90, 90s, 1.5min), got '%s'", val);
        } else if (strcmp(a, "--memory-cap") == 0) {
            NEED("a size");
            if (parse_bytes(val, &o->memory_cap) != 0)
                return pfr_usage_error("--memory-cap needs a size of at least 64KiB (bytes, or with kB MB GB KiB MiB GiB), got '%s'", val);
        } else if (is_sweep(command) && strcmp(a, "--vary") == 0) {
            NEED("NAME=START:STOP:COUNT or NAME=V1,V2,...");
            const char *eq = strchr(val, '=');
            if (!eq || eq == val || !eq[1]) return pfr_usage_error("--vary needs NAME=SPEC, got '%s'", val);
            o->vary[o->nvary].name = strndup(val, (size_t)(eq - val));
            o->vary[o->nvary].spec = strdup(eq + 1);
            o->nvary++;
        } else if (is_sweep(command) && strcmp(a, "--points") == 0) {
            NEED("a CSV file");
            o->points_csv = val;
        } else if (is_sweep(command) && (strcmp(a, "-j") == 0 || strcmp(a, "--jobs") == 0)) {
            NEED("a worker count");
            char *end;
            long n = strtol(val, &end, 10);
            if (*end || end == val || n < 1 || n > 4096) return pfr_usage_error("-j needs a worker count of 1..4096, got '%s'", val);
            o->jobs = (int)n;
        } else if (is_sweep(command) && strncmp(a, "-j", 2) == 0 && a[2]) {
            char *end;
            long n = strtol(a + 2, &end, 10);
            if (*end || n < 1 || n > 4096) return pfr_usage_error("-j needs a worker count of 1..4096, got '%s'", a);
            o->jobs = (int)n;
        } else if (is_sweep(command) && strcmp(a, "--rerun") == 0) {
            o->rerun = 1;
        } else if (a[0] == '-' && a[1]) {
            return unknown_option(a, command);
        } else if (!o->script) {
            o->script = a;
        } else {
            return pfr_usage_error("unexpected argument '%s' (one script per %s)", a, command);
        }
#undef NEED
    }
    return check_complete(o, command);
}

void pfr_options_free(pfr_options *o)
{
    for (int i = 0; i < o->nvary; i++) {
        free(o->vary[i].name);
        free(o->vary[i].spec);
    }
    free(o->vary);
    free(o->sets);
    free(o->data);
    memset(o, 0, sizeof *o);
}
