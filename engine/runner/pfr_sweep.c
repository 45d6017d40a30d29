/* pfr_sweep.c - runs the points of a sweep and writes the combined table.
 *
 * Each point is an ordinary run of the runner in a child process (fork and
 * exec of this very program), so a crash, a sandbox refusal or a resource
 * limit in one point cannot affect another, and each point gets the same
 * sandbox and limits as a single run.  Point i runs with the seed
 * pfr_point_seed(base, i) into DIR/point-NNNN, its stdout and stderr kept in
 * that folder.  Under MPI, point i belongs to rank i mod size; the table is
 * written by rank 0 from the manifests after all ranks are done, so it is the
 * same however the points were distributed. */
#include <errno.h>
#include <fcntl.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <signal.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>
#include "pfl_suffix.h"
#include "pfr_exit.h"
#include "pfr_manifest.h"
#include "pfr_modules.h"
#include "pfr_mpi.h"
#include "pfr_run.h"
#include "pfr_sweep.h"
#include "pfr_sweep_plan.h"

typedef struct sweep {
    const pfr_options *o;
    pfr_plan plan;
    char digest[65];
    char self[PATH_MAX];
    unsigned long long base_seed;
    int width;          /* digits in point folder names */
    int *status;        /* exit status per point; -1 not run by this rank */
    char *resumed;      /* 1: skipped because its manifest matched */
} sweep;

static void point_folder(const sweep *s, size_t i, char *buf, size_t size)
{
    snprintf(buf, size, "%s/point-%0*zu", s->o->out, s->width, i);
}

static int close_enough(double a, double b) { return fabs(a - b) <= 1e-12 * fabs(a); }

/* Two parameter texts mean the same value: equal as typed; or numbers with
 * units of the same quantity and equal SI values; or, when only one has a
 * unit, the bare number equals either its number as typed (a bare number is
 * read in the declared unit) or its SI value (as a manifest may record it). */
static int same_value(const char *a, const char *b)
{
    if (strcmp(a, b) == 0) return 1;
    double va, vb;
    const pfl_unit *ua, *ub;
    char err[200];
    if (pfl_value_parse(a, &va, &ua, err, sizeof err) || pfl_value_parse(b, &vb, &ub, err, sizeof err)) return 0;
    if (ua && ub) return strcmp(ua->quantity, ub->quantity) == 0 && close_enough(va * ua->si, vb * ub->si);
    if (!ua && !ub) return close_enough(va, vb);
    if (ua) return close_enough(vb, va) || close_enough(vb, va * ua->si);
    return close_enough(va, vb) || close_enough(va, vb * ub->si);
}

/* A point is done when its manifest says ok for the same script, seed and
 * parameter values, and every module it loaded still has the recorded
 * digest (a changed helper module makes its results stale). */
static int point_done(const sweep *s, size_t i, const char *folder)
{
    pfr_manifest m;
    char err[512];
    if (pfr_manifest_read(folder, &m, err, sizeof err) != 0) return 0;
    int ok = m.status && strcmp(m.status, "ok") == 0 && m.sha256 && strcmp(m.sha256, s->digest) == 0 && m.has_seed &&
             m.seed == (double)pfr_point_seed(s->base_seed, i);
    for (int k = 0; ok && k < s->plan.nnames; k++) {
        const char *got = pfr_manifest_param(&m, s->plan.names[k]);
        ok = got && same_value(got, pfr_plan_value(&s->plan, i, k));
    }
    for (int k = 0; ok && k < s->o->nsets; k++) {
        const char *eq = strchr(s->o->sets[k], '=');
        char name[256];
        snprintf(name, sizeof name, "%.*s", (int)(eq - s->o->sets[k]), s->o->sets[k]);
        const char *got = pfr_manifest_param(&m, name);
        ok = got && same_value(got, eq + 1);
    }
    for (int k = 0; ok && k < m.nmodules; k++) {
        char hex[65];
        ok = m.msources[k] && m.msha256[k] && pfr_module_digest(m.msources[k], hex) == 0 &&
             strcmp(hex, m.msha256[k]) == 0;
    }
    pfr_manifest_free(&m);
    return ok;
}

/* argv of the child run for point i (strings in a malloc'd block). */
static char **child_argv(const sweep *s, size_t i, const char *folder)
{
    const pfr_options *o = s->o;
    int max = 40 + 2 * (o->nsets + s->plan.nnames + o->ndata);
    char **av = calloc((size_t)max, sizeof *av);
    int n = 0;
    char buf[PATH_MAX + 64];
#define ADD(str) (av[n++] = strdup(str))
    ADD(s->self);
    ADD("run");
    ADD(o->script);
    for (int k = 0; k < o->nsets; k++) ADD("--set"), ADD(o->sets[k]);
    for (int k = 0; k < s->plan.nnames; k++) {
        snprintf(buf, sizeof buf, "%s=%s", s->plan.names[k], pfr_plan_value(&s->plan, i, k));
        ADD("--set"), ADD(buf);
    }
    snprintf(buf, sizeof buf, "%llu", pfr_point_seed(s->base_seed, i));
    ADD("--seed"), ADD(buf);
    /* The sweep owns its point folders: a point that runs (again) replaces
     * what an earlier, stale or failed run of it left there. */
    ADD("--out"), ADD(folder), ADD("--overwrite");
    for (int k = 0; k < o->ndata; k++) ADD("--data"), ADD(o->data[k]);
    if (o->threads) snprintf(buf, sizeof buf, "%d", o->threads), ADD("--threads"), ADD(buf);
    if (o->strict) ADD("--strict");
    if (o->planning) ADD("--planning"), ADD(o->planning);
    if (o->wisdom) ADD("--wisdom"), ADD(o->wisdom);
    if (o->trusted) ADD("--trusted");
    if (o->time_limit > 0) snprintf(buf, sizeof buf, "%.17g", o->time_limit), ADD("--time-limit"), ADD(buf);
    if (o->memory_cap) snprintf(buf, sizeof buf, "%zu", o->memory_cap), ADD("--memory-cap"), ADD(buf);
#undef ADD
    return av;
}

static void free_argv(char **av)
{
    for (char **p = av; *p; p++) free(*p);
    free(av);
}

static int make_folder(const char *path)
{
    return mkdir(path, 0777) == 0 || errno == EEXIST ? 0 : -1;
}

/* Starts point i; returns the child's pid or -1. */
static pid_t start_point(const sweep *s, size_t i)
{
    char folder[PATH_MAX];
    point_folder(s, i, folder, sizeof folder);
    if (make_folder(folder) != 0) return -1;
    char outp[PATH_MAX + 16], errp[PATH_MAX + 16];
    snprintf(outp, sizeof outp, "%s/stdout.txt", folder);
    snprintf(errp, sizeof errp, "%s/stderr.txt", folder);
    char **av = child_argv(s, i, folder);
    fflush(NULL);
    pid_t pid = fork();
    if (pid == 0) {
        int fo = open(outp, O_WRONLY | O_CREAT | O_TRUNC, 0666);
        int fe = open(errp, O_WRONLY | O_CREAT | O_TRUNC, 0666);
        if (fo < 0 || fe < 0 || dup2(fo, 1) < 0 || dup2(fe, 2) < 0) _exit(127);
        close(fo);
        close(fe);
        pfr_mpi_forget_launcher(); /* a point is one plain run, not an MPI rank (pfr_run_script) */
        execv(s->self, av);
        dprintf(2, "psiflight sweep: cannot start %s: %s\n", s->self, strerror(errno));
        _exit(127);
    }
    free_argv(av);
    return pid;
}

static void describe_point(const sweep *s, size_t i, char *buf, size_t size)
{
    size_t used = 0;
    buf[0] = 0;
    for (int k = 0; k < s->plan.nnames && used < size; k++) {
        int w = snprintf(buf + used, size - used, "%s%s=%s", k ? " " : "", s->plan.names[k], pfr_plan_value(&s->plan, i, k));
        if (w < 0) break;
        used += (size_t)w;
    }
}

/* The first line of the point's stderr that says what went wrong. */
static void first_error_line(const char *folder, char *buf, size_t size)
{
    char path[PATH_MAX + 16];
    snprintf(path, sizeof path, "%s/stderr.txt", folder);
    buf[0] = 0;
    FILE *f = fopen(path, "r");
    if (!f) return;
    char line[1024];
    while (fgets(line, sizeof line, f)) {
        if (strstr(line, "warning:")) continue;
        line[strcspn(line, "\n")] = 0;
        snprintf(buf, size, "%s", line);
        break;
    }
    fclose(f);
}

/* The signal that asked the sweep to stop (SIGINT, SIGTERM, SIGHUP), or 0.
 * A handler can only set such a flag; the loop below acts on it. */
static volatile sig_atomic_t stop_signal;

static void on_stop(int sig) { stop_signal = sig; }

static void catch_stop_signals(void)
{
    struct sigaction sa;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = on_stop; /* no SA_RESTART: wait() returns with EINTR */
    sigaction(SIGINT, &sa, NULL);
    sigaction(SIGTERM, &sa, NULL);
    sigaction(SIGHUP, &sa, NULL);
}

/* Runs this rank's pending points, at most o->jobs at a time.  Returns 0, or
 * the signal number when the sweep was asked to stop: then every running
 * point has been stopped with that signal and waited for, so no point keeps
 * writing after the sweep has gone. */
static int run_points(sweep *s, const pfr_mpi *mpi)
{
    size_t n = s->plan.npoints;
    pid_t *pids = calloc((size_t)s->o->jobs, sizeof *pids);
    size_t *which = calloc((size_t)s->o->jobs, sizeof *which);
    int running = 0;
    size_t next = 0, done = 0, mine = 0;
    for (size_t i = 0; i < n; i++) mine += (int)(i % (size_t)mpi->size) == mpi->rank && !s->resumed[i];
    for (;;) {
        if (stop_signal) {
            for (int k = 0; k < s->o->jobs; k++)
                if (pids[k]) kill(pids[k], (int)stop_signal);
            while (running > 0 && wait(NULL) > 0) running--;
            break;
        }
        while (running < s->o->jobs && !stop_signal) {
            while (next < n && ((int)(next % (size_t)mpi->size) != mpi->rank || s->resumed[next])) next++;
            if (next == n) break;
            pid_t pid = start_point(s, next);
            if (pid < 0) {
                s->status[next] = 127;
                fprintf(stderr, "psiflight sweep: point %zu: cannot start: %s\n", next, strerror(errno));
                next++;
                done++;
                continue;
            }
            for (int k = 0; k < s->o->jobs; k++)
                if (!pids[k]) {
                    pids[k] = pid, which[k] = next;
                    break;
                }
            running++;
            next++;
        }
        if (running == 0) break;
        int ws;
        pid_t pid = wait(&ws);
        if (pid < 0) {
            if (errno == EINTR) continue;
            break;
        }
        for (int k = 0; k < s->o->jobs; k++) {
            if (pids[k] != pid) continue;
            size_t i = which[k];
            pids[k] = 0;
            running--;
            done++;
            s->status[i] = WIFEXITED(ws) ? WEXITSTATUS(ws) : 128 + (WIFSIGNALED(ws) ? WTERMSIG(ws) : 0);
            char desc[512], folder[PATH_MAX], why[1024] = "";
            describe_point(s, i, desc, sizeof desc);
            point_folder(s, i, folder, sizeof folder);
            if (s->status[i]) first_error_line(folder, why, sizeof why);
            char rank[32] = "";
            if (mpi->size > 1) snprintf(rank, sizeof rank, " rank %d:", mpi->rank);
            fprintf(stderr, "psiflight sweep:%s point %zu (%zu/%zu) %s%s%s (exit %d)%s%s\n", rank, i, done, mine, desc,
                    desc[0] ? ": " : "", s->status[i] ? "failed" : "ok", s->status[i], why[0] ? " " : "", why);
        }
    }
    free(pids);
    free(which);
    return (int)stop_signal;
}

/* A CSV cell: quoted when it holds a comma, quote or newline. */
static void put_cell(FILE *f, const char *text, int first)
{
    if (!first) fputc(',', f);
    if (!strpbrk(text, ",\"\n")) {
        fputs(text, f);
        return;
    }
    fputc('"', f);
    for (const char *p = text; *p; p++) {
        if (*p == '"') fputc('"', f);
        fputc(*p, f);
    }
    fputc('"', f);
}

/* The quantity every value of varied column k was typed in ("4ms", "6ms":
 * time), when all of them carry a unit of one quantity; else NULL, and the
 * column keeps the values as typed (plain numbers, words). */
static const char *column_quantity(const sweep *s, int k)
{
    const char *quantity = NULL;
    for (size_t i = 0; i < s->plan.npoints; i++) {
        double v;
        const pfl_unit *u;
        char err[160];
        if (pfl_value_parse(pfr_plan_value(&s->plan, i, k), &v, &u, err, sizeof err) != 0 || !u) return NULL;
        if (quantity && strcmp(quantity, u->quantity) != 0) return NULL;
        quantity = u->quantity;
    }
    return quantity && pfl_unit_si_name(quantity) ? quantity : NULL;
}

static int compare_strings(const void *a, const void *b) { return strcmp(*(char *const *)a, *(char *const *)b); }

/* Result names in the order points first reported them, each with the
 * unit it was first reported in. */
typedef struct result_names {
    char **names, **units;
    int n, cap;
} result_names;

/* Adds point i's results to rn (a name already there with another unit is
 * warned about and keeps its first unit). */
static void note_results(result_names *rn, const pfr_manifest *m, size_t i)
{
    for (int r = 0; r < m->nresults; r++) {
        int k = 0;
        while (k < rn->n && strcmp(rn->names[k], m->results[r].name) != 0) k++;
        if (k < rn->n) {
            if (strcmp(rn->units[k], m->results[r].unit) != 0)
                fprintf(stderr, "psiflight sweep: point %zu reports %s in '%s', earlier points in '%s'\n", i, rn->names[k],
                        m->results[r].unit, rn->units[k]);
            continue;
        }
        if (rn->n == rn->cap) {
            rn->cap = rn->cap ? 2 * rn->cap : 16;
            rn->names = realloc(rn->names, (size_t)rn->cap * sizeof *rn->names);
            rn->units = realloc(rn->units, (size_t)rn->cap * sizeof *rn->units);
        }
        rn->names[rn->n] = m->results[r].name;
        rn->units[rn->n] = m->results[r].unit;
        rn->n++;
    }
}

/* Reads every point's manifest into m[0..npoints) (warning about a point
 * that wrote none: its results stay empty) and returns the result columns:
 * "name\1unit" strings sorted by name, *count of them (free each and the
 * array). */
static char **read_manifests(const sweep *s, pfr_manifest *m, int *count)
{
    result_names rn = {0};
    for (size_t i = 0; i < s->plan.npoints; i++) {
        char folder[PATH_MAX], err[512];
        point_folder(s, i, folder, sizeof folder);
        int rc = pfr_manifest_read(folder, &m[i], err, sizeof err);
        if (rc < 0) fprintf(stderr, "psiflight sweep: point %zu: %s\n", i, err);
        if (rc == 1 && s->status[i] == 0)
            fprintf(stderr, "psiflight sweep: point %zu wrote no %s; its results are empty\n", i, PFR_MANIFEST_FILE);
        note_results(&rn, &m[i], i);
    }
    /* Sort result columns by name, keeping each unit with its name. */
    char **pairs = calloc((size_t)rn.n + 1, sizeof *pairs);
    for (int k = 0; k < rn.n; k++) {
        size_t len = strlen(rn.names[k]) + strlen(rn.units[k]) + 2;
        pairs[k] = malloc(len);
        snprintf(pairs[k], len, "%s%c%s", rn.names[k], 1, rn.units[k]);
    }
    qsort(pairs, (size_t)rn.n, sizeof *pairs, compare_strings);
    free(rn.names);
    free(rn.units);
    *count = rn.n;
    return pairs;
}

/* The header line: point, the varied parameters (with the SI unit where
 * quantity[k] is set), seed, status, exit_code, the result columns. */
static void write_header(FILE *f, const sweep *s, const char **quantity, char **pairs, int npairs)
{
    put_cell(f, "point", 1);
    for (int k = 0; k < s->plan.nnames; k++) {
        char head[512];
        if (quantity && quantity[k]) snprintf(head, sizeof head, "%s [%s]", s->plan.names[k], pfl_unit_si_name(quantity[k]));
        else snprintf(head, sizeof head, "%s", s->plan.names[k]);
        put_cell(f, head, 0);
    }
    put_cell(f, "seed", 0);
    put_cell(f, "status", 0);
    put_cell(f, "exit_code", 0);
    for (int k = 0; k < npairs; k++) {
        char head[512];
        char *sep = strchr(pairs[k], 1);
        *sep = 0;
        if (sep[1]) snprintf(head, sizeof head, "%s [%s]", pairs[k], sep + 1);
        else snprintf(head, sizeof head, "%s", pairs[k]);
        *sep = 1;
        put_cell(f, head, 0);
    }
    fputc('\n', f);
}

/* Point i's line: its varied values (numbers in SI where quantity[k] is
 * set, else as typed), seed, status, exit code and results (empty cells
 * for results it did not report). */
static void write_row(FILE *f, const sweep *s, size_t i, const char **quantity, const pfr_manifest *m, char **pairs,
                      int npairs)
{
    char cell[64];
    snprintf(cell, sizeof cell, "%zu", i);
    put_cell(f, cell, 1);
    for (int k = 0; k < s->plan.nnames; k++) {
        const char *typed = pfr_plan_value(&s->plan, i, k);
        double v;
        const pfl_unit *u;
        char err[160];
        if (quantity && quantity[k] && pfl_value_parse(typed, &v, &u, err, sizeof err) == 0 && u) {
            snprintf(cell, sizeof cell, "%.17g", v * u->si);
            put_cell(f, cell, 0);
        } else {
            put_cell(f, typed, 0);
        }
    }
    snprintf(cell, sizeof cell, "%llu", pfr_point_seed(s->base_seed, i));
    put_cell(f, cell, 0);
    put_cell(f, s->status[i] == 0 ? "ok" : "failed", 0);
    snprintf(cell, sizeof cell, "%d", s->status[i]);
    put_cell(f, cell, 0);
    for (int k = 0; k < npairs; k++) {
        char *sep = strchr(pairs[k], 1);
        *sep = 0;
        cell[0] = 0;
        for (int r = 0; r < m->nresults; r++)
            if (strcmp(m->results[r].name, pairs[k]) == 0) snprintf(cell, sizeof cell, "%.17g", m->results[r].value);
        *sep = 1;
        put_cell(f, cell, 0);
    }
    fputc('\n', f);
}

/* Writes DIR/sweep.csv from the manifests: one row per point in point order;
 * columns point, the varied parameters, seed, status, exit_code, then every
 * result any point reported, sorted by name, headed "name [unit]".  Written
 * to a temporary file and renamed, so a reader never sees half a table. */
static int write_table(const sweep *s)
{
    size_t n = s->plan.npoints;
    pfr_manifest *m = calloc(n, sizeof *m);
    int npairs = 0;
    char **pairs = read_manifests(s, m, &npairs);
    char path[PATH_MAX + 32], tmp[PATH_MAX + 64];
    snprintf(path, sizeof path, "%s/%s", s->o->out, PFR_SWEEP_TABLE);
    snprintf(tmp, sizeof tmp, "%s.tmp.%ld", path, (long)getpid());
    FILE *f = fopen(tmp, "w");
    int rc = f ? 0 : -1;
    if (f) {
        /* Varied values typed with units are written as numbers in SI, the
         * unit in the header, like every other number column. */
        const char **quantity = calloc((size_t)s->plan.nnames + 1, sizeof *quantity);
        for (int k = 0; quantity && k < s->plan.nnames; k++) quantity[k] = column_quantity(s, k);
        write_header(f, s, quantity, pairs, npairs);
        for (size_t i = 0; i < n; i++) write_row(f, s, i, quantity, &m[i], pairs, npairs);
        free(quantity);
        if (fflush(f) != 0 || ferror(f) || fsync(fileno(f)) != 0) rc = -1;
        if (fclose(f) != 0) rc = -1;
        if (rc == 0 && rename(tmp, path) != 0) rc = -1;
        if (rc != 0) unlink(tmp);
    }
    if (rc != 0) fprintf(stderr, "psiflight sweep: cannot write %s: %s\n", path, strerror(errno));
    for (int k = 0; k < npairs; k++) free(pairs[k]);
    free(pairs);
    for (size_t i = 0; i < n; i++) pfr_manifest_free(&m[i]);
    free(m);
    return rc;
}

static int check_names(const sweep *s)
{
    for (int k = 0; k < s->o->nsets; k++)
        for (int j = 0; j < s->plan.nnames; j++) {
            size_t len = strlen(s->plan.names[j]);
            if (strncmp(s->o->sets[k], s->plan.names[j], len) == 0 && s->o->sets[k][len] == '=')
                return pfr_usage_error("'%s' is both fixed (--set) and varied", s->plan.names[j]);
        }
    return PFR_EXIT_OK;
}

int pfr_sweep_main(const pfr_options *o, const char *argv0)
{
    sweep s;
    memset(&s, 0, sizeof s);
    s.o = o;
    s.base_seed = o->seed >= 0 ? (unsigned long long)o->seed : 1;
    char err[1024];
    if (pfr_plan_build(o, &s.plan, err, sizeof err) != 0) {
        pfr_plan_free(&s.plan);
        return pfr_usage_error("%s", err);
    }
    int st = check_names(&s);
    if (st == PFR_EXIT_OK && pfr_script_digest(o->script, s.digest) != 0)
        st = pfr_usage_error("cannot read the script %s", o->script);
    ssize_t len = readlink("/proc/self/exe", s.self, sizeof s.self - 1);
    if (len > 0) s.self[len] = 0;
    else snprintf(s.self, sizeof s.self, "%s", argv0);
    if (st == PFR_EXIT_OK && !o->trusted && pfr_path_has_dotdot(o->out)) {
        /* Every point would be refused by the sandbox; say so once, first. */
        fprintf(stderr, "psiflight: --out %s: the sandbox refuses output folders with '..'; give a folder below "
                        "the working folder or an absolute path (or run a script you trust with --trusted)\n", o->out);
        st = PFR_EXIT_SANDBOX;
    }
    if (st == PFR_EXIT_OK && pfr_make_folders(o->out) != 0)
        st = pfr_usage_error("cannot create the sweep folder %s: %s", o->out, strerror(errno));
    if (st != PFR_EXIT_OK) {
        pfr_plan_free(&s.plan);
        return st;
    }
    size_t n = s.plan.npoints;
    s.width = 4;
    for (size_t k = n - 1; k >= 10000; k /= 10) s.width++;
    s.status = malloc(n * sizeof *s.status);
    s.resumed = calloc(n, 1);
    pfr_mpi mpi;
    if (pfr_mpi_start(&mpi) != 0) {
        free(s.status);
        free(s.resumed);
        pfr_plan_free(&s.plan);
        return pfr_usage_error("launched as one of several MPI ranks, but this runner %s",
                               pfr_mpi_available() ? "could not start MPI" : "was built without MPI (see docs/runner.md)");
    }
    size_t resumed = 0;
    for (size_t i = 0; i < n; i++) {
        s.status[i] = -1;
        if ((int)(i % (size_t)mpi.size) != mpi.rank) continue;
        char folder[PATH_MAX];
        point_folder(&s, i, folder, sizeof folder);
        if (!o->rerun && point_done(&s, i, folder)) {
            s.resumed[i] = 1;
            s.status[i] = 0;
            resumed++;
        }
    }
    catch_stop_signals();
    int sig = run_points(&s, &mpi);
    if (sig) {
        fprintf(stderr, "psiflight sweep: stopped by signal %d; the finished points are kept - run the same command "
                        "again to resume\n", sig);
        pfr_mpi_abort(&mpi, 128 + sig);
        free(s.status);
        free(s.resumed);
        pfr_plan_free(&s.plan);
        return 128 + sig;
    }
    pfr_mpi_max(&mpi, s.status, (int)n); /* every rank now knows every status */
    size_t failed = 0;
    for (size_t i = 0; i < n; i++) failed += s.status[i] != 0;
    if (mpi.rank == 0) {
        if (write_table(&s) != 0) st = PFR_EXIT_POINTS;
        printf("sweep: %zu points, %zu failed; table %s/%s\n", n, failed, o->out, PFR_SWEEP_TABLE);
        if (resumed) fprintf(stderr, "psiflight sweep: %zu points resumed from matching manifests%s\n", resumed,
                             mpi.size > 1 ? " (rank 0's share)" : "");
        for (size_t i = 0; i < n; i++) {
            if (!s.status[i]) continue;
            char folder[PATH_MAX], why[1024];
            point_folder(&s, i, folder, sizeof folder);
            first_error_line(folder, why, sizeof why);
            fprintf(stderr, "psiflight sweep: point %zu failed with exit %d (%s/stderr.txt): %s\n", i, s.status[i], folder, why);
        }
    }
    fflush(NULL);
    pfr_mpi_finish(&mpi);
    free(s.status);
    free(s.resumed);
    pfr_plan_free(&s.plan);
    if (st == PFR_EXIT_OK && failed) st = PFR_EXIT_POINTS;
    return st;
}
