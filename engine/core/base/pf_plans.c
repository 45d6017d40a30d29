/* pf_plans.c - the context's register of FFTW plans it has made (see
 * pf_plans.h for why a run records them). */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_internal.h"
#include "pf_plans.h"

struct pf_plan_note {
    char label[64];
    char digest[17];
};

/* FNV-1a 64 over a NUL-terminated text, continuing from h. */
static uint64_t fnv1a(uint64_t h, const char *text)
{
    for (const unsigned char *p = (const unsigned char *)text; *p; p++) {
        h ^= *p;
        h *= 1099511628211ull; /* FNV-1a 64 prime */
    }
    return h;
}

pf_status pf_context_note_plans(pf_context *ctx, const char *kind, const pf_grid *g, const fftw_plan *plans,
                                int nplans)
{
    struct pf_plan_note note;
    memset(&note, 0, sizeof note);
    int len = snprintf(note.label, sizeof note.label, "%s ", kind);
    for (int a = 0; a < g->dim && len < (int)sizeof note.label; a++)
        len += snprintf(note.label + len, sizeof note.label - (size_t)len, "%s%zu", a ? "x" : "", g->n[a]);
    if (len < (int)sizeof note.label)
        snprintf(note.label + len, sizeof note.label - (size_t)len, ", %d thread%s", ctx->threads,
                 ctx->threads == 1 ? "" : "s");
    uint64_t h = 14695981039346656037ull; /* FNV-1a 64 offset basis */
    for (int i = 0; i < nplans; i++) {
        if (!plans[i]) continue;
        /* FFTW's own text of the plan tree: algorithms, radices, loops and
         * threading, but no addresses, so equal plans give equal text. */
        char *text = fftw_sprint_plan(plans[i]);
        if (!text) return pf_fail(ctx, PF_ENOMEM, "out of memory describing an FFTW plan");
        h = fnv1a(h, text);
        h = fnv1a(h, "\n");
        free(text);
    }
    snprintf(note.digest, sizeof note.digest, "%016llx", (unsigned long long)h);
    for (size_t i = 0; i < ctx->nplan_notes; i++)
        if (!strcmp(ctx->plan_notes[i].label, note.label) && !strcmp(ctx->plan_notes[i].digest, note.digest))
            return PF_OK;
    if (ctx->nplan_notes == ctx->plan_notes_cap) {
        size_t cap = ctx->plan_notes_cap ? 2 * ctx->plan_notes_cap : 8;
        struct pf_plan_note *p = realloc(ctx->plan_notes, cap * sizeof *p);
        if (!p) return pf_fail(ctx, PF_ENOMEM, "out of memory recording an FFTW plan");
        ctx->plan_notes = p;
        ctx->plan_notes_cap = cap;
    }
    ctx->plan_notes[ctx->nplan_notes++] = note;
    return PF_OK;
}

void pf_context_free_plan_notes(pf_context *ctx)
{
    free(ctx->plan_notes);
    ctx->plan_notes = NULL;
    ctx->nplan_notes = ctx->plan_notes_cap = 0;
}

size_t pf_context_plan_count(const pf_context *ctx) { return ctx->nplan_notes; }
const char *pf_context_plan_label(const pf_context *ctx, size_t i) { return ctx->plan_notes[i].label; }
const char *pf_context_plan_digest(const pf_context *ctx, size_t i) { return ctx->plan_notes[i].digest; }
