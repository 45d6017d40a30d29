/* fuzz_sweep_plan.c - libFuzzer harness for sweep plans: --vary specs
 * (ranges START:STOP:COUNT with unit suffixes, value lists) through the
 * runner's option parser and pfr_plan_build, and --points CSV files.
 *
 * Input: byte 0 even: the rest is a --points file; odd: the rest is lines of
 * --vary NAME=SPEC (at most 4, so one input stays under the fuzzer's time
 * limit: a plan may legitimately hold a million points).  Besides the
 * sanitizers it checks the plan's promises: every name and value is there
 * and no plan exceeds a million points. */
#include "fuzz_util.h"
#include "pfr_options.h"
#include "pfr_sweep_plan.h"

#define MAX_VARY 4

static void check_plan(const pfr_plan *p)
{
    if (p->npoints == 0 || p->nnames < 1 || p->npoints > 1000000) abort();
    for (int n = 0; n < p->nnames; n++)
        if (!p->names[n] || !p->names[n][0]) abort();
    for (size_t i = 0; i < p->npoints; i++)
        for (int n = 0; n < p->nnames; n++)
            if (!pfr_plan_value(p, i, n) || !pfr_plan_value(p, i, n)[0]) abort();
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    pfr_plan plan;
    char err[1024];
    if ((data[0] & 1) == 0) {
        pfr_options o;
        memset(&o, 0, sizeof o);
        o.points_csv = fuzz_write_file("points.csv", data + 1, size - 1);
        err[0] = 0;
        if (pfr_plan_build(&o, &plan, err, sizeof err) == 0) check_plan(&plan);
        else if (!err[0]) abort();
        pfr_plan_free(&plan);
        return 0;
    }
    char *text = fuzz_text(data + 1, size - 1);
    /* argv strings are writable in a real main(); these are never written. */
    static char sweep[] = "sweep", script[] = "scan.lua", vary[] = "--vary";
    char *argv[2 + 2 * MAX_VARY + 1] = {sweep, script};
    int argc = 2;
    for (char *line = text, *nl; line && argc < 2 + 2 * MAX_VARY; line = nl ? nl + 1 : NULL) {
        nl = strchr(line, '\n');
        if (nl) *nl = 0;
        argv[argc++] = vary;
        argv[argc++] = line;
    }
    argv[argc] = NULL;
    pfr_options o;
    if (pfr_options_parse(argc, argv, 2, "sweep", &o) == 0) {
        err[0] = 0;
        if (pfr_plan_build(&o, &plan, err, sizeof err) == 0) check_plan(&plan);
        else if (!err[0]) abort();
        pfr_plan_free(&plan);
    }
    pfr_options_free(&o);
    free(text);
    return 0;
}
