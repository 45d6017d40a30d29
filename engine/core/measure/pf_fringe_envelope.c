/* pf_fringe_envelope.c - fringe fit under an envelope (contract in
 * pf_fringe.h): y = E(x; x_c, W) (c0 + c1 cos qx + c2 sin qx), six
 * parameters, Levenberg-Marquardt on analytic derivatives.
 *
 * Why: a plain cosine fit over a window where the fringes sit under a
 * sloped envelope (the single-slit sinc^2 of a double slit) shifts the
 * fitted period by a relative amount of order (period / envelope width)^2;
 * modelling the envelope removes that bias. */
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_fringe.h"
#include "pf_internal.h"

#define NPAR 6 /* c0, c1, c2, q, x_c, W */

/* Envelope and its derivatives with respect to x_c and W. */
static double envelope(pf_fringe_envelope env, double x, double xc, double W, double *d_xc, double *d_w)
{
    double r = x - xc;
    if (env == PF_ENVELOPE_GAUSSIAN) {
        double e = exp(-r * r / (2 * W * W));
        *d_xc = e * r / (W * W);
        *d_w = e * r * r / (W * W * W);
        return e;
    }
    double u = PF_PI * r / W, s, ds; /* s = sin u / u, ds = d s / d u */
    if (fabs(u) < 1e-4) {
        s = 1 - u * u / 6;
        ds = -u / 3;
    } else {
        s = sin(u) / u;
        ds = (u * cos(u) - sin(u)) / (u * u);
    }
    double de_du = 2 * s * ds;
    *d_xc = de_du * (-PF_PI / W);
    *d_w = de_du * (-u / W);
    return s * s;
}

typedef struct samples {
    const double *x, *y;
    size_t *idx; /* in-window samples, sorted by x */
    size_t m;
} samples;


/* Sum of squared residuals at p, and (when jtj) the normal equations. */
static double normal_equations(const samples *S, pf_fringe_envelope env, const double *p, double jtj[NPAR][NPAR],
                               double *jtr)
{
    if (jtj) {
        memset(jtj, 0, sizeof(double) * NPAR * NPAR);
        memset(jtr, 0, sizeof(double) * NPAR);
    }
    double res = 0;
    for (size_t i = 0; i < S->m; i++) {
        double x = S->x[S->idx[i]], y = S->y[S->idx[i]];
        double dxc, dw, e = envelope(env, x, p[4], p[5], &dxc, &dw);
        double c = cos(p[3] * x), s = sin(p[3] * x);
        double lin = p[0] + p[1] * c + p[2] * s;
        double r = y - e * lin;
        res += r * r;
        if (!jtj) continue;
        double J[NPAR] = {e, e * c, e * s, e * x * (-p[1] * s + p[2] * c), dxc * lin, dw * lin};
        for (int a = 0; a < NPAR; a++) {
            jtr[a] += J[a] * r;
            for (int b = 0; b < NPAR; b++) jtj[a][b] += J[a] * J[b];
        }
    }
    return res;
}

/* Solves A d = b (NPAR x NPAR) by Gaussian elimination with partial
 * pivoting; returns 0 when singular. */
static int solve(double A[NPAR][NPAR + 1], double *d)
{
    for (int col = 0; col < NPAR; col++) {
        int piv = col;
        for (int r = col + 1; r < NPAR; r++)
            if (fabs(A[r][col]) > fabs(A[piv][col])) piv = r;
        if (A[piv][col] == 0) return 0;
        for (int k = 0; k <= NPAR; k++) {
            double t = A[col][k];
            A[col][k] = A[piv][k];
            A[piv][k] = t;
        }
        for (int r = col + 1; r < NPAR; r++) {
            double f = A[r][col] / A[col][col];
            for (int k = col; k <= NPAR; k++) A[r][k] -= f * A[col][k];
        }
    }
    for (int r = NPAR - 1; r >= 0; r--) {
        double v = A[r][NPAR];
        for (int k = r + 1; k < NPAR; k++) v -= A[r][k] * d[k];
        d[r] = v / A[r][r];
    }
    return 1;
}

/* Start of the envelope: the profile averaged over one fringe period (a
 * sliding window on the x-sorted samples), its maximum and the half-maximum
 * crossings on either side.  Returns 0 when either crossing is missing. */
static int envelope_start(const samples *S, double period, pf_fringe_envelope env, double *avg, double *xc,
                          double *W)
{
    size_t lo = 0, hi = 0;
    double sum = 0;
    for (size_t i = 0; i < S->m; i++) {
        double xi = S->x[S->idx[i]];
        while (hi < S->m && S->x[S->idx[hi]] <= xi + 0.5 * period) sum += S->y[S->idx[hi++]];
        while (S->x[S->idx[lo]] < xi - 0.5 * period) sum -= S->y[S->idx[lo++]];
        avg[i] = sum / (double)(hi - lo);
    }
    size_t top = 0;
    for (size_t i = 1; i < S->m; i++)
        if (avg[i] > avg[top]) top = i;
    double half = 0.5 * avg[top];
    size_t l = top, r = top;
    while (l > 0 && avg[l] > half) l--;
    while (r + 1 < S->m && avg[r] > half) r++;
    if (avg[l] > half || avg[r] > half) return 0;
    /* Linear interpolation of each crossing. */
    double xl = S->x[S->idx[l]], xl1 = S->x[S->idx[l + 1]], xr = S->x[S->idx[r]], xr1 = S->x[S->idx[r - 1]];
    double cl = xl + (half - avg[l]) * (xl1 - xl) / (avg[l + 1] - avg[l]);
    double cr = xr + (half - avg[r]) * (xr1 - xr) / (avg[r - 1] - avg[r]);
    double fwhm = cr - cl;
    *xc = 0.5 * (cl + cr);
    /* sinc^2(pi u / W) = 1/2 at u = 0.44295 W; a Gaussian's FWHM is 2.35482 s. */
    *W = env == PF_ENVELOPE_GAUSSIAN ? fwhm / 2.3548200450309493 : fwhm / (2 * 0.4429560480);
    return fwhm > 0;
}

/* x-order of the in-window samples, for the sliding average (insertion
 * into a merge sort keeps this independent of qsort's stability). */
static void sort_indices(const double *x, size_t *idx, size_t *tmp, size_t m)
{
    for (size_t width = 1; width < m; width *= 2) {
        for (size_t a = 0; a < m; a += 2 * width) {
            size_t mid = a + width < m ? a + width : m, end = a + 2 * width < m ? a + 2 * width : m;
            size_t i = a, j = mid, k = a;
            while (i < mid && j < end) tmp[k++] = x[idx[j]] < x[idx[i]] ? idx[j++] : idx[i++];
            while (i < mid) tmp[k++] = idx[i++];
            while (j < end) tmp[k++] = idx[j++];
        }
        memcpy(idx, tmp, m * sizeof *idx);
    }
}

pf_status pf_fringe_analyse_envelope(pf_context *ctx, const double *x, const double *y, size_t n, double from,
                                     double to, double period_guess, pf_fringe_envelope env, pf_fringe_fit *out)
{
    if (env != PF_ENVELOPE_NONE && env != PF_ENVELOPE_SINC2 && env != PF_ENVELOPE_GAUSSIAN)
        return pf_fail(ctx, PF_EINVAL, "fringe envelope must be none, sinc2 or gaussian, got %d", (int)env);
    /* The profile's rms width over the window sets the scan's floor. */
    double s0 = 0, s1 = 0, s2 = 0;
    for (size_t i = 0; i < n; i++) {
        if (!(x[i] >= from && x[i] <= to)) continue;
        double wgt = fabs(y[i]);
        s0 += wgt;
        s1 += wgt * x[i];
        s2 += wgt * x[i] * x[i];
    }
    double var = s0 > 0 ? s2 / s0 - (s1 / s0) * (s1 / s0) : 0;
    double floor_q = env != PF_ENVELOPE_NONE && var > 0 ? 1.5 / sqrt(var) : 0.0;
    pf_fringe_fit plain;
    pf_status s = pf_fringe_analyse_above(ctx, x, y, n, from, to, period_guess, floor_q, &plain);
    if (s || env == PF_ENVELOPE_NONE) {
        if (!s) *out = plain;
        return s;
    }
    size_t m = 0;
    for (size_t i = 0; i < n; i++) m += x[i] >= from && x[i] <= to;
    size_t bytes = pf_bytes(m, 2 * sizeof(size_t) + sizeof(double));
    char *buf = pf_alloc(ctx, bytes);
    if (!buf) return pf_context_status(ctx);
    samples S = {x, y, (size_t *)buf, m};
    size_t *tmp = S.idx + m;
    double *avg = (double *)(tmp + m);
    for (size_t i = 0, k = 0; i < n; i++)
        if (x[i] >= from && x[i] <= to) S.idx[k++] = i;
    sort_indices(x, S.idx, tmp, m);
    double p[NPAR] = {0, 0, 0, plain.wavenumber, 0, 0};
    if (!envelope_start(&S, plain.period, env, avg, &p[4], &p[5])) {
        pf_free(ctx, buf, bytes);
        return pf_fail(ctx, PF_EINVAL,
                       "fringe envelope: the profile averaged over one fringe has no half-maximum on both sides "
                       "inside [%g, %g]; widen the window or use envelope = none",
                       from, to);
    }
    /* Linear amplitudes at the start (the other three held), then the full fit. */
    double A[NPAR][NPAR + 1], J[NPAR][NPAR], g[NPAR], d[NPAR];
    normal_equations(&S, env, p, J, g);
    {
        double B[3][4];
        for (int a = 0; a < 3; a++) {
            for (int b = 0; b < 3; b++) B[a][b] = J[a][b];
            B[a][3] = g[a]; /* residual is y at p = 0 amplitudes */
        }
        double A3[NPAR][NPAR + 1] = {{0}};
        for (int a = 0; a < NPAR; a++) A3[a][a] = 1;
        for (int a = 0; a < 3; a++)
            for (int b = 0; b <= 3; b++) A3[a][b == 3 ? NPAR : b] = B[a][b];
        if (solve(A3, d))
            for (int a = 0; a < 3; a++) p[a] = d[a];
    }
    double lambda = 1e-3, res = normal_equations(&S, env, p, J, g);
    int converged = 0;
    for (int it = 0; it < 2000 && !converged; it++) {
        for (int a = 0; a < NPAR; a++) {
            for (int b = 0; b < NPAR; b++) A[a][b] = J[a][b];
            A[a][a] += lambda * J[a][a];
            A[a][NPAR] = g[a];
        }
        if (!solve(A, d)) break;
        double trial[NPAR];
        for (int a = 0; a < NPAR; a++) trial[a] = p[a] + d[a];
        double rt = trial[5] > 0 ? normal_equations(&S, env, trial, NULL, NULL) : INFINITY;
        if (rt <= res) {
            /* Relative steps of q and W; the centre's step relative to W
             * (the centre may sit at 0). */
            double step = fmax(fabs(d[3] / p[3]), fmax(fabs(d[4] / p[5]), fabs(d[5] / p[5])));
            memcpy(p, trial, sizeof p);
            res = normal_equations(&S, env, p, J, g);
            lambda = fmax(lambda / 10, 1e-15);
            if (step < 1e-13 || res == 0) converged = 1;
        } else {
            lambda *= 10;
            if (lambda > 1e12) converged = 1; /* no step lowers the residual: at the minimum to rounding */
        }
    }
    pf_free(ctx, buf, bytes);
    if (!converged || !(p[0] != 0) || !(p[3] > 0))
        return pf_fail(ctx, PF_EINVAL, "fringe envelope fit did not converge in [%g, %g]", from, to);
    *out = plain;
    out->wavenumber = p[3];
    out->period = PF_TWO_PI / p[3];
    out->offset = p[0];
    out->amplitude = hypot(p[1], p[2]);
    out->visibility = out->amplitude / p[0];
    out->phase = atan2(-p[2], p[1]);
    out->envelope_center = p[4];
    out->envelope_width = p[5];
    return PF_OK;
}
