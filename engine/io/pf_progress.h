/* pf_progress.h - a progress bar for long sequences of steps, on a terminal.
 *
 * The bar is drawn on the given stream (stderr in practice) only when it is
 * enabled, which the caller decides (terminal and not quiet); it never
 * touches stdout, so a run's printed results stay byte-identical. */
#ifndef PF_PROGRESS_H
#define PF_PROGRESS_H

#include <stdio.h>

typedef struct pf_progress {
    FILE *out;
    int enabled;
    double total, done;
    double start, last_draw;  /* monotonic seconds */
    int drawn;                /* a bar line is on screen */
    char label[40];
} pf_progress;

/* True when f is a terminal (isatty). */
int pf_progress_is_terminal(FILE *f);
/* Starts a bar for total units of work (> 0) labelled label (may be NULL). */
void pf_progress_begin(pf_progress *p, FILE *out, int enabled, double total, const char *label);
/* Adds amount done and redraws at most ten times a second. */
void pf_progress_advance(pf_progress *p, double amount);
/* Draws the final state and ends the line; harmless when disabled or
 * finished already. */
void pf_progress_end(pf_progress *p);
/* The bar line for the given state, without drawing (for tests): elapsed
 * and estimated remaining seconds are formatted as m:ss or h:mm:ss. */
void pf_progress_format(const pf_progress *p, double now, char *buf, size_t size);

#endif
