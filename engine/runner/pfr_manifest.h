/* pfr_manifest.h - reading a run's manifest.json (the provenance record a run
 * writes into its output folder; BRIEF's agreed schema).  Sweeps read it to
 * decide whether a point is done and to collect what it reported.  All JSON
 * reading of the runner is in pfr_manifest.c. */
#ifndef PFR_MANIFEST_H
#define PFR_MANIFEST_H

#include <stddef.h>

#define PFR_MANIFEST_FILE "manifest.json"

typedef struct pfr_result {
    char *name;
    double value;
    char *unit; /* "" when none */
} pfr_result;

typedef struct pfr_manifest {
    char *status;      /* "ok", "failed", or NULL when absent */
    char *sha256;      /* script.sha256, or NULL */
    int has_seed;
    double seed;       /* JSON numbers are doubles; point seeds fit in 53 bits */
    int nparams;
    char **pnames, **pvalues; /* parameters as text */
    int nresults;
    pfr_result *results;      /* sorted by name */
    int nmodules;
    char **msources, **msha256; /* modules: where each was loaded from, its digest */
} pfr_manifest;

/* Reads folder/manifest.json.  Returns 0; 1 when there is no manifest; -1 when
 * it is not a psiflight run manifest of a known format version (err says
 * why). */
int pfr_manifest_read(const char *folder, pfr_manifest *m, char *err, size_t errsize);
/* The same from text already in memory (len bytes, need not end in NUL);
 * path only names the source in err.  The entry point for fuzzing. */
int pfr_manifest_parse(const char *text, size_t len, const char *path, pfr_manifest *m, char *err, size_t errsize);
void pfr_manifest_free(pfr_manifest *m);
/* The parameter's text, or NULL. */
const char *pfr_manifest_param(const pfr_manifest *m, const char *name);

#endif
