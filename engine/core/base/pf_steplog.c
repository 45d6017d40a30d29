/* pf_steplog.c - growable array of step records and their stable text form. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_steplog.h"

void pf_steplog_init(pf_steplog *log)
{
    log->steps = NULL;
    log->count = log->capacity = 0;
}

void pf_steplog_clear(pf_steplog *log)
{
    free(log->steps);
    pf_steplog_init(log);
}

pf_status pf_steplog_append(pf_steplog *log, const pf_step *step)
{
    if (log->count == log->capacity) {
        size_t cap = log->capacity ? 2 * log->capacity : 16;
        pf_step *p = realloc(log->steps, cap * sizeof *p);
        if (!p) return PF_ENOMEM;
        log->steps = p;
        log->capacity = cap;
    }
    log->steps[log->count++] = *step;
    return PF_OK;
}

pf_status pf_steplog_copy(pf_steplog *dst, const pf_steplog *src)
{
    pf_steplog_init(dst);
    if (!src->count) return PF_OK;
    dst->steps = malloc(src->count * sizeof *dst->steps);
    if (!dst->steps) return PF_ENOMEM;
    memcpy(dst->steps, src->steps, src->count * sizeof *dst->steps);
    dst->count = dst->capacity = src->count;
    return PF_OK;
}

const char *pf_steplog_header(void)
{
    return "step kind method duration_s clock_s norm removed edge_x edge_k";
}

/* Fields are separated by single spaces; numbers use %.9e so columns are
 * fixed-width and identical across runs; "-" stands for "not measured". */
int pf_steplog_format_entry(const pf_step *s, size_t index, char *buf, size_t size)
{
    char ex[32], ek[32];
    if (s->edge_x < 0) snprintf(ex, sizeof ex, "-"); else snprintf(ex, sizeof ex, "%.3e", s->edge_x);
    if (s->edge_k < 0) snprintf(ek, sizeof ek, "-"); else snprintf(ek, sizeof ek, "%.3e", s->edge_k);
    return snprintf(buf, size, "%zu %s %s %.9e %.9e %.12f %.9e %s %s", index + 1, s->kind,
                    s->method[0] ? s->method : "-", s->duration, s->clock, s->norm, s->removed, ex, ek);
}
