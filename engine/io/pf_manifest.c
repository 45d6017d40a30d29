/* pf_manifest.c - building and writing the run manifest with cJSON. */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cJSON.h>
#include "pf_h5.h"
#include "pf_manifest.h"
#include "pf_plans.h"
#include "pf_picture.h"
#include "pf_safefile.h"
#include "pf_sha256.h"

const char *pf_cjson_version(void) { return cJSON_Version(); }

static int by_param(const void *a, const void *b)
{
    return strcmp(((const pf_manifest_param *)a)->name, ((const pf_manifest_param *)b)->name);
}
static int by_result(const void *a, const void *b)
{
    return strcmp(((const pf_manifest_result *)a)->name, ((const pf_manifest_result *)b)->name);
}
static int by_output(const void *a, const void *b)
{
    return strcmp(((const pf_manifest_output *)a)->path, ((const pf_manifest_output *)b)->path);
}

/* Sorted copy of an array (the caller's order stays as it was). */
static void *sorted(const void *src, size_t n, size_t size, int (*cmp)(const void *, const void *))
{
    void *p = malloc(n ? n * size : 1);
    if (!p) return NULL;
    if (n) memcpy(p, src, n * size);
    qsort(p, n, size, cmp);
    return p;
}

static cJSON *number_or_null(double v)
{
    return v >= 0 ? cJSON_CreateNumber(v) : cJSON_CreateNull();
}

/* "script": its path and SHA-256 (given, or hashed from the file now). */
static pf_status add_script(pf_context *ctx, cJSON *root, const pf_manifest *m)
{
    cJSON *script = cJSON_AddObjectToObject(root, "script");
    if (!m->script_path) {
        cJSON_AddNullToObject(script, "path");
        cJSON_AddNullToObject(script, "sha256");
        return PF_OK;
    }
    char hex[65];
    cJSON_AddStringToObject(script, "path", m->script_path);
    if (m->script_sha256 && m->script_sha256[0])
        snprintf(hex, sizeof hex, "%s", m->script_sha256);
    else if (pf_sha256_file(m->script_path, hex) != 0)
        return pf_fail(ctx, PF_EIO, "manifest: cannot read the script '%s': %s", m->script_path, strerror(errno));
    cJSON_AddStringToObject(script, "sha256", hex);
    return PF_OK;
}

/* "outputs": each file's path and SHA-256, in path order. */
static void add_outputs(cJSON *root, const pf_manifest_output *outputs, size_t n)
{
    char hex[65];
    cJSON *jo = cJSON_AddArrayToObject(root, "outputs");
    for (size_t i = 0; i < n; i++) {
        cJSON *o = cJSON_CreateObject();
        cJSON_AddStringToObject(o, "path", outputs[i].path);
        /* A script may delete a file it wrote: the manifest says so rather
         * than failing the run. */
        if (pf_sha256_file(outputs[i].file, hex) != 0) {
            cJSON_AddNullToObject(o, "sha256");
            cJSON_AddStringToObject(o, "missing", strerror(errno));
        } else {
            cJSON_AddStringToObject(o, "sha256", hex);
        }
        cJSON_AddItemToArray(jo, o);
    }
}

/* What decides the last bits of the results besides the script: library
 * versions, the planning mode and the plans made, and the guards' verdict. */
static void add_environment(pf_context *ctx, cJSON *root, const pf_manifest *m)
{
    char h5v[32], plv[80];
    pf_h5_version(h5v, sizeof h5v);
    pf_plplot_version(plv, sizeof plv);
    cJSON *jv = cJSON_AddObjectToObject(root, "versions");
    cJSON_AddStringToObject(jv, "psiflight", m->engine_version);
    cJSON_AddStringToObject(jv, "lua", m->lua_version);
    cJSON_AddStringToObject(jv, "fftw", m->fftw_version);
    cJSON_AddStringToObject(jv, "hdf5", h5v);
    cJSON_AddStringToObject(jv, "plplot", plv);
    cJSON_AddStringToObject(jv, "cjson", cJSON_Version());
    cJSON_AddStringToObject(root, "planning", m->planning);
    /* The plans, not the wisdom file: FFTW re-exports wisdom in a varying
     * order and with entries other runs added, while the plan descriptions
     * are what decides the last bits of the results. */
    cJSON *jplans = cJSON_AddArrayToObject(root, "plans");
    for (size_t i = 0; i < pf_context_plan_count(ctx); i++) {
        cJSON *p = cJSON_CreateObject();
        cJSON_AddStringToObject(p, "transform", pf_context_plan_label(ctx, i));
        cJSON_AddStringToObject(p, "digest", pf_context_plan_digest(ctx, i));
        cJSON_AddItemToArray(jplans, p);
    }
    cJSON *jg = cJSON_AddObjectToObject(root, "guards");
    cJSON_AddBoolToObject(jg, "strict", m->strict);
    cJSON_AddNumberToObject(jg, "warnings", (double)m->warnings);
    cJSON_AddItemToObject(jg, "edge_x_max", number_or_null(m->edge_x_max));
    cJSON_AddItemToObject(jg, "edge_k_max", number_or_null(m->edge_k_max));
}

/* Writes text and a newline to folder/PF_MANIFEST_NAME atomically: the old
 * manifest stays whole until the new one is complete. */
static pf_status write_text(pf_context *ctx, const char *folder, const char *text)
{
    size_t need = strlen(folder) + sizeof PF_MANIFEST_NAME + 2;
    char *path = malloc(need);
    if (!path) return pf_fail(ctx, PF_ENOMEM, "out of memory");
    snprintf(path, need, "%s/%s", folder, PF_MANIFEST_NAME);
    pf_safefile sf;
    pf_status s = pf_safe_begin(ctx, path, 1, &sf);
    if (!s) {
        FILE *f = fopen(sf.temp_path, "w");
        int bad = !f || fputs(text, f) < 0 || fputc('\n', f) == EOF;
        if (f && fclose(f) != 0) bad = 1;
        if (bad) {
            pf_safe_abandon(&sf);
            s = pf_fail(ctx, PF_EIO, "cannot write '%s'", path);
        } else {
            s = pf_safe_commit(ctx, &sf);
        }
    }
    free(path);
    return s;
}

pf_status pf_manifest_write(pf_context *ctx, const char *folder, const pf_manifest *m)
{
    pf_status s = PF_OK;
    pf_manifest_param *params = sorted(m->params, m->nparams, sizeof *params, by_param);
    pf_manifest_result *results = sorted(m->results, m->nresults, sizeof *results, by_result);
    pf_manifest_output *outputs = sorted(m->outputs, m->noutputs, sizeof *outputs, by_output);
    cJSON *root = cJSON_CreateObject();
    if (!params || !results || !outputs || !root) {
        s = pf_fail(ctx, PF_ENOMEM, "out of memory building the manifest");
        goto done;
    }
    /* Keys in this order: cJSON prints them as added. */
    cJSON_AddStringToObject(root, "format", "psiflight-run-manifest");
    cJSON_AddNumberToObject(root, "format_version", 1);
    if ((s = add_script(ctx, root, m))) goto done;
    cJSON *jp = cJSON_AddObjectToObject(root, "parameters");
    for (size_t i = 0; i < m->nparams; i++) cJSON_AddStringToObject(jp, params[i].name, params[i].value);
    /* cJSON prints numbers with a relative round-trip tolerance, which can
     * drop the last digit of a 53-bit seed; write the integer's digits. */
    char seed_text[32];
    snprintf(seed_text, sizeof seed_text, "%llu", (unsigned long long)m->seed);
    cJSON_AddRawToObject(root, "seed", seed_text);
    cJSON_AddNumberToObject(root, "threads", m->threads);
    cJSON_AddStringToObject(root, "status", m->status);
    if (m->error) cJSON_AddStringToObject(root, "error", m->error);
    cJSON *jr = cJSON_AddObjectToObject(root, "results");
    for (size_t i = 0; i < m->nresults; i++) {
        cJSON *r = cJSON_AddObjectToObject(jr, results[i].name);
        cJSON_AddNumberToObject(r, "value", results[i].value); /* NaN/inf become null */
        cJSON_AddStringToObject(r, "unit", results[i].unit ? results[i].unit : "");
    }
    add_outputs(root, outputs, m->noutputs);
    cJSON *jm = cJSON_AddArrayToObject(root, "modules");
    for (size_t i = 0; i < m->nmodules; i++) {
        cJSON *mo = cJSON_CreateObject();
        cJSON_AddStringToObject(mo, "name", m->modules[i].name);
        cJSON_AddStringToObject(mo, "source", m->modules[i].source);
        cJSON_AddStringToObject(mo, "sha256", m->modules[i].sha256);
        cJSON_AddItemToArray(jm, mo);
    }
    add_environment(ctx, root, m);
    char *text = cJSON_Print(root);
    if (!text) {
        s = pf_fail(ctx, PF_ENOMEM, "out of memory printing the manifest");
        goto done;
    }
    s = write_text(ctx, folder, text);
    free(text);
done:
    cJSON_Delete(root);
    free(params);
    free(results);
    free(outputs);
    return s;
}
