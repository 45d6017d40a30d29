/* pfr_sweep_plan.h - the points of a sweep: parameter names and, for each
 * point, the value of each as text, expanded from --vary specs or read from
 * a CSV file (pfr_sweep_plan.c). */
#ifndef PFR_SWEEP_PLAN_H
#define PFR_SWEEP_PLAN_H

#include <stddef.h>
#include "pfr_options.h"

typedef struct pfr_plan {
    int nnames;
    char **names;     /* varied parameters, in --vary (or CSV column) order */
    size_t npoints;
    char **values;    /* npoints x nnames texts, row-major */
} pfr_plan;

/* Builds the plan.  --vary NAME=START:STOP:COUNT gives COUNT evenly spaced
 * values (both ends included) in START's unit; NAME=V1,V2,... the listed
 * values as typed.  Several --vary give their Cartesian product, the first
 * one varying slowest.  Returns 0, or -1 after writing the problem to err. */
int pfr_plan_build(const pfr_options *o, pfr_plan *plan, char *err, size_t errsize);
void pfr_plan_free(pfr_plan *plan);
static inline const char *pfr_plan_value(const pfr_plan *p, size_t point, int name)
{
    return p->values[point * (size_t)p->nnames + (size_t)name];
}
/* Seed of point i (0-based) from the base seed: the (i+1)-th output of the
 * splitmix64 generator seeded with base, keeping its top 53 bits so that every
 * JSON reader holds it exactly.  docs/runner.md states the formula. */
unsigned long long pfr_point_seed(unsigned long long base, size_t i);

#endif
