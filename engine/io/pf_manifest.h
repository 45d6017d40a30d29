/* pf_manifest.h - the provenance manifest of a run ("manifest.json" in the
 * run's output folder), written with cJSON.
 *
 * Schema (agreed between psiflight's parts; docs/outputs.md): format,
 * format_version, script {path, sha256}, parameters {name: text} sorted by
 * name, seed, threads, status, results {name: {value, unit}} sorted by name,
 * outputs [{path, sha256}] sorted by path, modules [{name, sha256}], versions,
 * planning, plans [{transform, digest}] and guard figures.  No timestamps or host names: identical runs give
 * identical manifests. */
#ifndef PF_MANIFEST_H
#define PF_MANIFEST_H

#include <stddef.h>
#include "pf_context.h"

#define PF_MANIFEST_NAME "manifest.json"

typedef struct pf_manifest_param { const char *name, *value; } pf_manifest_param;
typedef struct pf_manifest_result { const char *name; double value; const char *unit; } pf_manifest_result;
/* path: as recorded (relative to the output folder); file: where to read it
 * for the digest. */
typedef struct pf_manifest_output { const char *path, *file; } pf_manifest_output;
/* A Lua module the script loaded: its name for require and the SHA-256 of
 * its source. */
typedef struct pf_manifest_module { const char *name, *source, *sha256; } pf_manifest_module;

typedef struct pf_manifest {
    const char *script_path;   /* as given on the command line, NULL: none */
    const char *script_sha256; /* digest known to the caller (bundled recipes), NULL: hash script_path */
    const char *status;        /* "ok" or "failed" */
    const char *error;         /* first line of the error when failed, or NULL */
    unsigned long long seed;
    int threads;
    const char *planning;
    /* The FFTW plans the run made: pf_plans.h; taken from ctx. */
    const char *engine_version, *lua_version, *fftw_version;
    int strict;
    unsigned long warnings;    /* warnings the engine emitted during the run */
    double edge_x_max, edge_k_max; /* largest guard figures in written waves' logs, < 0: none measured */
    size_t nparams;
    const pf_manifest_param *params;
    size_t nresults;
    const pf_manifest_result *results;
    size_t noutputs;
    const pf_manifest_output *outputs;
    size_t nmodules;
    const pf_manifest_module *modules; /* in the order they were loaded */
} pf_manifest;

/* Hashes the script and every output (an output that no longer exists is
 * listed with sha256 null and "missing": reason), then writes folder/manifest.json
 * atomically (replacing an older manifest: it always describes the latest
 * run in that folder).  Fails with PF_EIO naming a file that cannot be read. */
pf_status pf_manifest_write(pf_context *ctx, const char *folder, const pf_manifest *m);

/* cJSON's version string. */
const char *pf_cjson_version(void);

#endif
