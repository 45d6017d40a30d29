/* pfr_manifest.c - reads manifest.json with cJSON: format tag and version,
 * script digest, parameters, seed, status, the scalar results and the
 * modules the run loaded.  Unknown
 * keys are ignored, so later manifest additions do not break sweeps. */
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cJSON.h>
#include "pfr_manifest.h"

#define MANIFEST_FORMAT "psiflight-run-manifest"
#define MANIFEST_MAX_BYTES (64u << 20)

static char *slurp(const char *path, int *missing)
{
    FILE *f = fopen(path, "rb");
    *missing = !f && errno == ENOENT;
    if (!f) return NULL;
    size_t cap = 65536, n = 0;
    char *buf = malloc(cap + 1);
    size_t got;
    while (buf && (got = fread(buf + n, 1, cap - n, f)) > 0) {
        n += got;
        if (n == cap) {
            if (cap >= MANIFEST_MAX_BYTES) {
                /* Larger than any manifest psiflight writes: refuse it
                 * rather than parse a truncated text. */
                free(buf);
                fclose(f);
                errno = EFBIG;
                return NULL;
            }
            char *nb = realloc(buf, 2 * cap + 1);
            if (!nb) {
                free(buf);
                buf = NULL;
                break;
            }
            buf = nb;
            cap *= 2;
        }
    }
    fclose(f);
    if (buf) buf[n] = 0;
    return buf;
}

static char *dup_string(const cJSON *item)
{
    return cJSON_IsString(item) && item->valuestring ? strdup(item->valuestring) : NULL;
}

/* A parameter value as text: strings as they are, numbers in %.17g. */
static char *value_text(const cJSON *item)
{
    char buf[64];
    if (cJSON_IsString(item)) return strdup(item->valuestring);
    if (cJSON_IsNumber(item)) return snprintf(buf, sizeof buf, "%.17g", item->valuedouble), strdup(buf);
    if (cJSON_IsBool(item)) return strdup(cJSON_IsTrue(item) ? "true" : "false");
    return strdup("");
}

static int compare_results(const void *a, const void *b)
{
    return strcmp(((const pfr_result *)a)->name, ((const pfr_result *)b)->name);
}

int pfr_manifest_read(const char *folder, pfr_manifest *m, char *err, size_t errsize)
{
    memset(m, 0, sizeof *m);
    char path[4096];
    snprintf(path, sizeof path, "%s/%s", folder, PFR_MANIFEST_FILE);
    int missing;
    char *text = slurp(path, &missing);
    if (!text) {
        if (missing) return 1;
        snprintf(err, errsize, "%s: cannot read: %s", path, strerror(errno));
        return -1;
    }
    int rc = pfr_manifest_parse(text, strlen(text), path, m, err, errsize);
    free(text);
    return rc;
}

int pfr_manifest_parse(const char *text, size_t len, const char *path, pfr_manifest *m, char *err, size_t errsize)
{
    memset(m, 0, sizeof *m);
    cJSON *root = cJSON_ParseWithLength(text, len);
    if (!root) return snprintf(err, errsize, "%s: not valid JSON", path), -1;
    int rc = 0;
    const cJSON *fmt = cJSON_GetObjectItemCaseSensitive(root, "format");
    const cJSON *ver = cJSON_GetObjectItemCaseSensitive(root, "format_version");
    if (!cJSON_IsString(fmt) || strcmp(fmt->valuestring, MANIFEST_FORMAT) != 0 || !cJSON_IsNumber(ver) ||
        ver->valuedouble != 1) {
        snprintf(err, errsize, "%s: not a psiflight run manifest of format version 1", path);
        rc = -1;
    } else {
        m->status = dup_string(cJSON_GetObjectItemCaseSensitive(root, "status"));
        const cJSON *script = cJSON_GetObjectItemCaseSensitive(root, "script");
        m->sha256 = dup_string(cJSON_GetObjectItemCaseSensitive(script, "sha256"));
        const cJSON *seed = cJSON_GetObjectItemCaseSensitive(root, "seed");
        if (cJSON_IsNumber(seed)) m->has_seed = 1, m->seed = seed->valuedouble;
        const cJSON *params = cJSON_GetObjectItemCaseSensitive(root, "parameters");
        int np = cJSON_IsObject(params) ? cJSON_GetArraySize(params) : 0;
        m->pnames = calloc((size_t)np + 1, sizeof *m->pnames);
        m->pvalues = calloc((size_t)np + 1, sizeof *m->pvalues);
        const cJSON *it;
        if (np) cJSON_ArrayForEach(it, params) {
            m->pnames[m->nparams] = strdup(it->string);
            m->pvalues[m->nparams] = value_text(it);
            m->nparams++;
        }
        const cJSON *results = cJSON_GetObjectItemCaseSensitive(root, "results");
        int nr = cJSON_IsObject(results) ? cJSON_GetArraySize(results) : 0;
        m->results = calloc((size_t)nr + 1, sizeof *m->results);
        if (nr) cJSON_ArrayForEach(it, results) {
            /* {"value": number, "unit": string}; a bare number is accepted too. */
            const cJSON *v = cJSON_IsObject(it) ? cJSON_GetObjectItemCaseSensitive(it, "value") : it;
            const cJSON *u = cJSON_IsObject(it) ? cJSON_GetObjectItemCaseSensitive(it, "unit") : NULL;
            if (!cJSON_IsNumber(v)) continue;
            pfr_result *r = &m->results[m->nresults++];
            r->name = strdup(it->string);
            r->value = v->valuedouble;
            r->unit = strdup(cJSON_IsString(u) ? u->valuestring : "");
        }
        qsort(m->results, (size_t)m->nresults, sizeof *m->results, compare_results);
        const cJSON *mods = cJSON_GetObjectItemCaseSensitive(root, "modules");
        int nm = cJSON_IsArray(mods) ? cJSON_GetArraySize(mods) : 0;
        m->msources = calloc((size_t)nm + 1, sizeof *m->msources);
        m->msha256 = calloc((size_t)nm + 1, sizeof *m->msha256);
        if (nm && m->msources && m->msha256) cJSON_ArrayForEach(it, mods) {
            char *src = dup_string(cJSON_GetObjectItemCaseSensitive(it, "source"));
            char *sha = dup_string(cJSON_GetObjectItemCaseSensitive(it, "sha256"));
            if (!src || !sha) {
                /* A module entry that cannot be checked: the point is not
                 * taken as done (the caller sees an unreadable source). */
                free(sha);
                sha = strdup("");
                if (!src) src = strdup("");
            }
            m->msources[m->nmodules] = src;
            m->msha256[m->nmodules] = sha;
            m->nmodules++;
        }
    }
    cJSON_Delete(root);
    if (rc != 0) pfr_manifest_free(m);
    return rc;
}

const char *pfr_manifest_param(const pfr_manifest *m, const char *name)
{
    for (int i = 0; i < m->nparams; i++)
        if (strcmp(m->pnames[i], name) == 0) return m->pvalues[i];
    return NULL;
}

void pfr_manifest_free(pfr_manifest *m)
{
    for (int i = 0; i < m->nparams; i++) free(m->pnames[i]), free(m->pvalues[i]);
    for (int i = 0; i < m->nresults; i++) free(m->results[i].name), free(m->results[i].unit);
    for (int i = 0; i < m->nmodules; i++) free(m->msources[i]), free(m->msha256[i]);
    free(m->msources);
    free(m->msha256);
    free(m->pnames);
    free(m->pvalues);
    free(m->results);
    free(m->status);
    free(m->sha256);
    memset(m, 0, sizeof *m);
}
