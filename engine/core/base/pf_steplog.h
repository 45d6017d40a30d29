/* pf_steplog.h - the per-wave-function record of what was done to it.
 *
 * Every step the engine applies (build, flight, pulse, mask, measurement)
 * appends one entry, so a script can print or save the history of a state.
 * The text form (pf_steplog_format_entry) is a stable, documented format. */
#ifndef PF_STEPLOG_H
#define PF_STEPLOG_H

#include <stddef.h>
#include "pf_status.h"

typedef struct pf_step {
    char kind[24];      /* short step name: "build", "flight", "kick", ... */
    char method[24];    /* how it was done: "momentum-exact", "" when n/a */
    double duration;    /* seconds of evolution in this step (0 if instantaneous) */
    double clock;       /* total flown time after the step (s) */
    double norm;        /* norm after the step */
    double removed;     /* probability removed by the step (masks), else 0 */
    double edge_x;      /* largest outer-band probability over position axes, -1 if not measured */
    double edge_k;      /* same over momentum axes, -1 if not measured */
} pf_step;

typedef struct pf_steplog {
    pf_step *steps;
    size_t count, capacity;
} pf_steplog;

void pf_steplog_init(pf_steplog *log);
void pf_steplog_clear(pf_steplog *log);
/* Appends a copy of *step; PF_ENOMEM when growing fails (log unchanged). */
pf_status pf_steplog_append(pf_steplog *log, const pf_step *step);
pf_status pf_steplog_copy(pf_steplog *dst, const pf_steplog *src);
/* Column header of the text form, without newline. */
const char *pf_steplog_header(void);
/* One entry as a line of text (no newline) into buf; returns snprintf's count. */
int pf_steplog_format_entry(const pf_step *s, size_t index, char *buf, size_t size);

#endif
