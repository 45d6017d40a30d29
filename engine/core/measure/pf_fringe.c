/* pf_fringe.c - Fourier-component fringe analysis with a least-squares fit. */
#include <math.h>
#include <stdlib.h>
#include "pf_constants.h"
#include "pf_fringe.h"
#include "pf_internal.h"

/* The samples and which of them lie in the window (x need not be sorted). */
typedef struct win {
    const double *x, *y;
    const unsigned char *in;
    size_t n;
} win;

/* Least-squares fit of y = c0 + c1 cos qx + c2 sin qx; returns the residual
 * sum of squares (the refinement minimises it: it is zero at the true q of
 * a pure cosine, while the fitted amplitude need not peak there). */
static double lsq(const win *w, double q, double c[3])
{
    double M[3][4] = {{0}};
    for (size_t i = 0; i < w->n; i++) {
        if (!w->in[i]) continue;
        double b[3] = {1, cos(q * w->x[i]), sin(q * w->x[i])};
        for (int r = 0; r < 3; r++) {
            for (int s = 0; s < 3; s++) M[r][s] += b[r] * b[s];
            M[r][3] += b[r] * w->y[i];
        }
    }
    /* Gaussian elimination with partial pivoting on the 3x3 normal equations. */
    for (int col = 0; col < 3; col++) {
        int piv = col;
        for (int r = col + 1; r < 3; r++)
            if (fabs(M[r][col]) > fabs(M[piv][col])) piv = r;
        for (int s = 0; s < 4; s++) {
            double t = M[col][s];
            M[col][s] = M[piv][s];
            M[piv][s] = t;
        }
        if (M[col][col] == 0) {
            c[0] = c[1] = c[2] = 0;
            return INFINITY;
        }
        for (int r = 0; r < 3; r++) {
            if (r == col) continue;
            double f = M[r][col] / M[col][col];
            for (int s = col; s < 4; s++) M[r][s] -= f * M[col][s];
        }
    }
    for (int r = 0; r < 3; r++) c[r] = M[r][3] / M[r][r];
    double res = 0;
    for (size_t i = 0; i < w->n; i++) {
        if (!w->in[i]) continue;
        double e = w->y[i] - c[0] - c[1] * cos(q * w->x[i]) - c[2] * sin(q * w->x[i]);
        res += e * e;
    }
    return res;
}

static double fourier_power(const win *w, double q, double mean)
{
    double re = 0, im = 0;
    for (size_t i = 0; i < w->n; i++) {
        if (!w->in[i]) continue;
        double v = w->y[i] - mean;
        re += v * cos(q * w->x[i]);
        im -= v * sin(q * w->x[i]);
    }
    return re * re + im * im;
}

pf_status pf_fringe_analyse(pf_context *ctx, const double *x, const double *y, size_t n, double from, double to,
                            double period_guess, pf_fringe_fit *out)
{
    return pf_fringe_analyse_above(ctx, x, y, n, from, to, period_guess, 0.0, out);
}

pf_status pf_fringe_analyse_above(pf_context *ctx, const double *x, const double *y, size_t n, double from,
                                  double to, double period_guess, double q_floor, pf_fringe_fit *out)
{
    if (!(from < to)) return pf_fail(ctx, PF_EINVAL, "fringe window needs from < to, got %g and %g", from, to);
    unsigned char *in = pf_calloc(ctx, n ? n : 1, 1);
    if (!in) return pf_context_status(ctx);
    size_t count = 0;
    double mean = 0, xmin = INFINITY, xmax = -INFINITY, minstep = INFINITY, prev = NAN;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i])) {
            pf_context_free(ctx, in);
            return pf_fail(ctx, PF_EINVAL, "fringe sample %zu is not finite", i + 1);
        }
        if (x[i] < from || x[i] > to) continue;
        in[i] = 1;
        count++;
        mean += y[i];
        if (x[i] < xmin) xmin = x[i];
        if (x[i] > xmax) xmax = x[i];
        if (isfinite(prev) && fabs(x[i] - prev) > 0 && fabs(x[i] - prev) < minstep) minstep = fabs(x[i] - prev);
        prev = x[i];
    }
    if (count < 8) {
        pf_context_free(ctx, in);
        return pf_fail(ctx, PF_EINVAL, "fringe window [%g, %g] holds %zu samples, need at least 8", from, to, count);
    }
    mean /= (double)count;
    win w = {x, y, in, n};
    double L = xmax - xmin;
    double qmin, qmax;
    if (period_guess > 0) {
        qmin = PF_TWO_PI / (1.3 * period_guess);
        qmax = PF_TWO_PI / (0.7 * period_guess);
    } else {
        qmin = fmax(PF_TWO_PI / L, q_floor);
        qmax = PF_PI / minstep;
        if (!(qmin < qmax)) {
            pf_context_free(ctx, in);
            return pf_fail(ctx, PF_EINVAL,
                           "fringe window [%g, %g]: no fringe wave number between %g and the sampling limit %g; "
                           "give a period guess", from, to, qmin, qmax);
        }
    }
    double dq = PF_TWO_PI / (4 * L);
    size_t steps = (size_t)ceil((qmax - qmin) / dq);
    if (steps > 200000) steps = 200000;
    if (steps < 8) steps = 8;
    dq = (qmax - qmin) / (double)steps;
    double best = -1, qbest = qmin;
    for (size_t s = 0; s <= steps; s++) {
        double q = qmin + (double)s * dq;
        double pw = fourier_power(&w, q, mean);
        if (pw > best) {
            best = pw;
            qbest = q;
        }
    }
    /* Golden-section refinement (minimum of the least-squares residual) in
     * the bracket around the scan's best point. */
    double a = fmax(qmin, qbest - dq), b = fmin(qmax, qbest + dq);
    const double gr = 0.6180339887498949;
    double c[3];
    double x1 = b - gr * (b - a), x2 = a + gr * (b - a);
    double f1 = lsq(&w, x1, c), f2 = lsq(&w, x2, c);
    for (int it = 0; it < 100 && b - a > 1e-14 * fabs(b); it++) {
        if (f1 < f2) {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - gr * (b - a);
            f1 = lsq(&w, x1, c);
        } else {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + gr * (b - a);
            f2 = lsq(&w, x2, c);
        }
    }
    double q = 0.5 * (a + b);
    lsq(&w, q, c);
    double amp = hypot(c[1], c[2]);
    pf_context_free(ctx, in);
    if (!(c[0] != 0)) return pf_fail(ctx, PF_EINVAL, "fringe offset is zero; visibility undefined");
    out->wavenumber = q;
    out->period = PF_TWO_PI / q;
    out->offset = c[0];
    out->amplitude = amp;
    out->visibility = amp / c[0];
    /* c1 cos + c2 sin = amp cos(qx + phase): c1 = amp cos phase, c2 = -amp sin phase. */
    out->phase = atan2(-c[2], c[1]);
    out->points = count;
    out->envelope_center = NAN;
    out->envelope_width = NAN;
    return PF_OK;
}
