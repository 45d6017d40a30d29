/* pfr_sweep_plan.c - expands --vary specs (ranges, lists) or a CSV of points
 * into the table of parameter values a sweep runs, and derives point seeds. */
#include <ctype.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pfl_suffix.h"
#include "pfr_sweep_plan.h"

#define MAX_POINTS 1000000

unsigned long long pfr_point_seed(unsigned long long base, size_t i)
{
    /* splitmix64 (S. Vigna, public-domain reference implementation of the
     * generator of Steele, Lea and Flood 2014): state advances by the golden
     * gamma; the output is the state passed through the mix function. */
    unsigned long long z = base + (unsigned long long)(i + 1) * 0x9E3779B97F4A7C15ULL;
    z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ULL;
    z = (z ^ (z >> 27)) * 0x94D049BB133111EBULL;
    z ^= z >> 31;
    return z >> 11;
}

typedef struct axis {
    int count;
    char **values;
} axis;

static char *trimmed(const char *s, size_t n)
{
    while (n && isspace((unsigned char)*s)) s++, n--;
    while (n && isspace((unsigned char)s[n - 1])) n--;
    return strndup(s, n);
}

/* START:STOP:COUNT or V1,V2,... into ax. */
static int expand(const pfr_vary *v, axis *ax, char *err, size_t errsize)
{
    const char *spec = v->spec;
    const char *c1 = strchr(spec, ':');
    if (c1) {
        const char *c2 = strchr(c1 + 1, ':');
        if (!c2 || strchr(c2 + 1, ':')) {
            snprintf(err, errsize, "--vary %s=%s: a range is START:STOP:COUNT", v->name, spec);
            return -1;
        }
        char *a = strndup(spec, (size_t)(c1 - spec)), *b = strndup(c1 + 1, (size_t)(c2 - c1 - 1));
        char *end;
        long n = strtol(c2 + 1, &end, 10);
        double va, vb;
        const pfl_unit *ua, *ub;
        char why[256];
        int bad = 0;
        if (*end || end == c2 + 1 || n < 1 || n > MAX_POINTS) {
            snprintf(err, errsize, "--vary %s=%s: COUNT must be an integer of 1..%d", v->name, spec, MAX_POINTS);
            bad = 1;
        } else if (pfl_value_parse(a, &va, &ua, why, sizeof why) != 0 || pfl_value_parse(b, &vb, &ub, why, sizeof why) != 0) {
            snprintf(err, errsize, "--vary %s=%s: %s", v->name, spec, why);
            bad = 1;
        } else if ((ua == NULL) != (ub == NULL) || (ua && strcmp(ua->quantity, ub->quantity) != 0)) {
            snprintf(err, errsize, "--vary %s=%s: START and STOP need units of the same quantity (or both none)", v->name, spec);
            bad = 1;
        }
        free(a);
        free(b);
        if (bad) return -1;
        if (ua) vb = vb * ub->si / ua->si; /* STOP in START's unit */
        ax->count = (int)n;
        ax->values = calloc((size_t)n, sizeof *ax->values);
        if (!ax->values) return snprintf(err, errsize, "out of memory"), -1;
        for (long i = 0; i < n; i++) {
            /* Both ends exact: a + (b - a) i / (n - 1), with i = n - 1 giving b. */
            double x = n == 1 ? va : (i == n - 1 ? vb : va + (vb - va) * (double)i / (double)(n - 1));
            char buf[96];
            snprintf(buf, sizeof buf, "%.15g%s", x, ua ? ua->name : "");
            ax->values[i] = strdup(buf);
        }
        return 0;
    }
    int n = 1;
    for (const char *p = spec; *p; p++) n += *p == ',';
    ax->count = n;
    ax->values = calloc((size_t)n, sizeof *ax->values);
    if (!ax->values) return snprintf(err, errsize, "out of memory"), -1;
    const char *s = spec;
    for (int i = 0; i < n; i++) {
        const char *comma = strchr(s, ',');
        size_t len = comma ? (size_t)(comma - s) : strlen(s);
        ax->values[i] = trimmed(s, len);
        if (!ax->values[i][0]) {
            snprintf(err, errsize, "--vary %s=%s: value %d is empty", v->name, spec, i + 1);
            return -1;
        }
        s = comma ? comma + 1 : s + len;
    }
    return 0;
}

static int split_csv_line(char *line, char **cells, int max)
{
    int n = 0;
    char *s = line;
    for (;;) {
        char *comma = strchr(s, ',');
        if (comma) *comma = 0;
        if (n == max) return -1;
        cells[n++] = s;
        if (!comma) break;
        s = comma + 1;
    }
    return n;
}

/* CSV of points: first non-comment line names the parameters, each further
 * line is one point.  Plain comma-separated cells (no quoting); lines starting
 * with '#' and blank lines are skipped; cells are trimmed. */
static int read_csv(const char *path, pfr_plan *plan, char *err, size_t errsize)
{
    FILE *f = fopen(path, "r");
    if (!f) return snprintf(err, errsize, "--points %s: cannot open", path), -1;
    char line[8192];
    char *cells[256];
    size_t cap = 0;
    int lineno = 0;
    while (fgets(line, sizeof line, f)) {
        lineno++;
        line[strcspn(line, "\r\n")] = 0;
        char *p = line;
        while (isspace((unsigned char)*p)) p++;
        if (!*p || *p == '#') continue;
        int n = split_csv_line(line, cells, 256);
        if (n < 0) return fclose(f), snprintf(err, errsize, "--points %s:%d: too many columns", path, lineno), -1;
        if (!plan->names) {
            plan->nnames = n;
            plan->names = calloc((size_t)n, sizeof *plan->names);
            for (int i = 0; i < n; i++) {
                plan->names[i] = trimmed(cells[i], strlen(cells[i]));
                if (!plan->names[i][0]) return fclose(f), snprintf(err, errsize, "--points %s:%d: empty column name", path, lineno), -1;
            }
            continue;
        }
        if (n != plan->nnames)
            return fclose(f), snprintf(err, errsize, "--points %s:%d: %d cells, the header has %d", path, lineno, n, plan->nnames), -1;
        if (plan->npoints == cap) {
            cap = cap ? 2 * cap : 64;
            char **nv = realloc(plan->values, cap * (size_t)n * sizeof *nv);
            if (!nv) return fclose(f), snprintf(err, errsize, "out of memory"), -1;
            plan->values = nv;
        }
        for (int i = 0; i < n; i++) {
            char *v = trimmed(cells[i], strlen(cells[i]));
            if (!v[0]) {
                /* The row is not counted yet, so pfr_plan_free would miss its
                 * earlier cells. */
                for (int k = 0; k < i; k++) free(plan->values[plan->npoints * (size_t)n + (size_t)k]);
                return free(v), fclose(f), snprintf(err, errsize, "--points %s:%d: empty cell", path, lineno), -1;
            }
            plan->values[plan->npoints * (size_t)n + (size_t)i] = v;
        }
        plan->npoints++;
    }
    fclose(f);
    if (!plan->names || plan->npoints == 0) return snprintf(err, errsize, "--points %s: no header or no points", path), -1;
    return 0;
}

int pfr_plan_build(const pfr_options *o, pfr_plan *plan, char *err, size_t errsize)
{
    memset(plan, 0, sizeof *plan);
    if (o->points_csv) return read_csv(o->points_csv, plan, err, errsize);
    axis *axes = calloc((size_t)o->nvary, sizeof *axes);
    if (!axes) return snprintf(err, errsize, "out of memory"), -1;
    int rc = 0;
    size_t total = 1;
    for (int i = 0; i < o->nvary && rc == 0; i++) {
        for (int j = 0; j < i; j++)
            if (strcmp(o->vary[i].name, o->vary[j].name) == 0) {
                snprintf(err, errsize, "--vary %s is given twice", o->vary[i].name);
                rc = -1;
            }
        if (rc == 0) rc = expand(&o->vary[i], &axes[i], err, errsize);
        if (rc == 0) {
            total *= (size_t)axes[i].count;
            if (total > MAX_POINTS) {
                snprintf(err, errsize, "the sweep has more than %d points", MAX_POINTS);
                rc = -1;
            }
        }
    }
    if (rc == 0) {
        plan->nnames = o->nvary;
        plan->names = calloc((size_t)o->nvary, sizeof *plan->names);
        plan->values = calloc(total * (size_t)o->nvary, sizeof *plan->values);
        plan->npoints = total;
        for (int i = 0; i < o->nvary; i++) plan->names[i] = strdup(o->vary[i].name);
        for (size_t p = 0; p < total; p++) {
            size_t rest = p;
            for (int i = o->nvary - 1; i >= 0; i--) { /* last --vary fastest */
                size_t k = rest % (size_t)axes[i].count;
                rest /= (size_t)axes[i].count;
                plan->values[p * (size_t)o->nvary + (size_t)i] = strdup(axes[i].values[k]);
            }
        }
    }
    for (int i = 0; i < o->nvary; i++) {
        for (int k = 0; k < axes[i].count; k++) free(axes[i].values ? axes[i].values[k] : NULL);
        free(axes[i].values);
    }
    free(axes);
    return rc;
}

void pfr_plan_free(pfr_plan *plan)
{
    if (plan->values)
        for (size_t i = 0; i < plan->npoints * (size_t)plan->nnames; i++) free(plan->values[i]);
    for (int i = 0; i < plan->nnames; i++) free(plan->names ? plan->names[i] : NULL);
    free(plan->values);
    free(plan->names);
    memset(plan, 0, sizeof *plan);
}
