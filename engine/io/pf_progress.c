/* pf_progress.c - drawing of the terminal progress bar with elapsed time and
 * an estimate of the time left (linear extrapolation of the rate so far). */
#include <string.h>
#include <time.h>
#include <unistd.h>
#include "pf_progress.h"

static double now_s(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

int pf_progress_is_terminal(FILE *f) { return f && isatty(fileno(f)); }

static void clock_text(double s, char *buf, size_t size)
{
    if (!(s >= 0) || s > 359999) {
        snprintf(buf, size, "--:--");
        return;
    }
    long t = (long)(s + 0.5);
    if (t >= 3600) snprintf(buf, size, "%ld:%02ld:%02ld", t / 3600, t / 60 % 60, t % 60);
    else snprintf(buf, size, "%ld:%02ld", t / 60, t % 60);
}

void pf_progress_format(const pf_progress *p, double now, char *buf, size_t size)
{
    double frac = p->total > 0 ? p->done / p->total : 0;
    if (frac > 1) frac = 1;
    enum { WIDTH = 28 };
    char bar[WIDTH + 1];
    int full = (int)(frac * WIDTH);
    for (int i = 0; i < WIDTH; i++) bar[i] = i < full ? '#' : '.';
    bar[WIDTH] = '\0';
    double elapsed = now - p->start;
    char el[32], left[32];
    clock_text(elapsed, el, sizeof el);
    if (frac > 0) clock_text(elapsed * (1 - frac) / frac, left, sizeof left);
    else snprintf(left, sizeof left, "--:--");
    snprintf(buf, size, "%s [%s] %3.0f%%  elapsed %s  left %s", p->label, bar, 100 * frac, el, left);
}

static void draw(pf_progress *p, double now)
{
    char line[160];
    pf_progress_format(p, now, line, sizeof line);
    /* \r and erase-to-end keep the bar on one line. */
    fprintf(p->out, "\r%s\033[K", line);
    fflush(p->out);
    p->drawn = 1;
    p->last_draw = now;
}

void pf_progress_begin(pf_progress *p, FILE *out, int enabled, double total, const char *label)
{
    memset(p, 0, sizeof *p);
    p->out = out;
    p->enabled = enabled && out && total > 0;
    p->total = total;
    snprintf(p->label, sizeof p->label, "%s", label && *label ? label : "progress");
    p->start = now_s();
    p->last_draw = -1;
    if (p->enabled) draw(p, p->start);
}

void pf_progress_advance(pf_progress *p, double amount)
{
    p->done += amount;
    if (!p->enabled) return;
    double t = now_s();
    if (t - p->last_draw >= 0.1) draw(p, t);
}

void pf_progress_end(pf_progress *p)
{
    if (!p->enabled) return;
    p->done = p->total;
    draw(p, now_s());
    fputc('\n', p->out);
    fflush(p->out);
    p->enabled = 0;
}
