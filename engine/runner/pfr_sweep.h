/* pfr_sweep.h - `psiflight sweep`: runs a script at every point of a
 * parameter plan in worker processes (and MPI ranks), resumes finished
 * points, and writes one combined table (docs/runner.md, "Sweeps"). */
#ifndef PFR_SWEEP_H
#define PFR_SWEEP_H

#include "pfr_options.h"

/* Name of the combined table in the sweep folder. */
#define PFR_SWEEP_TABLE "sweep.csv"

/* Runs the sweep o describes; argv0 locates the runner when /proc/self/exe
 * cannot.  Returns 0 when every point succeeded, PFR_EXIT_POINTS when some
 * failed, PFR_EXIT_USAGE for a bad plan. */
int pfr_sweep_main(const pfr_options *o, const char *argv0);

#endif
