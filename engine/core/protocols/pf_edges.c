/* pf_edges.c - band-limited transmission tables of masks with edges anywhere
 * (contracts and the reasoning in pf_edges.h).
 *
 * Each table is built from the mask's Fourier coefficients on the grid's
 * periodic window, taken relative to the window's first point x_0:
 *     c_m = integral over the window of t(x) exp(-i k_m (x - x_0)) dx,
 * so that the grid values are t_j = Re (1/span) sum_m c_m exp(2 pi i m j / n),
 * one inverse FFT.  Taking the real part treats the Nyquist mode of an even
 * grid as the cosine (c_+ + c_-) / 2, which keeps a real mask real. */
#define _DEFAULT_SOURCE /* j1() from libm */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_edges.h"
#include "pf_dist.h"
#include "pf_internal.h"

pf_status pf_edges_check(pf_grid *g, const pf_edges *e)
{
    if (e->mode != PF_EDGES_CELLS && e->mode != PF_EDGES_EXACT)
        return pf_fail(g->ctx, PF_EINVAL, "edge mode must be cells or exact, got %d", (int)e->mode);
    if (!isfinite(e->width) || e->width < 0)
        return pf_fail(g->ctx, PF_EINVAL, "edge_width must be finite and >= 0 (m, Gaussian rms), got %g", e->width);
    if (e->width > 0 && e->mode != PF_EDGES_EXACT)
        return pf_fail(g->ctx, PF_EINVAL, "edge_width %g m needs exact edges; cell-switched edges are always hard",
                       e->width);
    return PF_OK;
}

/* Integral of exp(-i k u) over u in [u0, u0 + w]: w e^{-ik(u0 + w/2)} sinc(kw/2),
 * written so that small k loses nothing. */
static double complex segment(double k, double u0, double w)
{
    double h = 0.5 * k * w;
    double s = fabs(h) < 1e-8 ? 1.0 - h * h / 6.0 : sin(h) / h;
    return w * s * cexp(-I * k * (u0 + 0.5 * w));
}

/* sum_{j=0}^{count-1} exp(-i theta j) for count >= 1, as
 * e^{-i theta (count-1)/2} sin(count theta/2) / sin(theta/2), with theta/2
 * reduced by multiples of pi first so the ratio stays exact at the grating's
 * own harmonics (where it equals +-count). */
static double complex geometric(double theta, double count)
{
    double phi = 0.5 * theta;
    double r = nearbyint(phi / PF_PI);
    double red = phi - r * PF_PI;
    double ratio;
    if (fabs(red) < 1e-12) {
        ratio = count;
    } else {
        ratio = sin(count * red) / sin(red);
    }
    /* (-1)^((count-1) r): the sign picked up by reducing both sines. */
    if (fmod(fabs((count - 1.0) * r), 2.0) == 1.0) ratio = -ratio;
    return ratio * cexp(-I * phi * (count - 1.0));
}

/* One inverse transform of n coefficients in place (FFT order), single
 * threaded and FFTW_ESTIMATE: deterministic whatever the planning mode. */
static pf_status inverse_transform(pf_grid *g, int rank, const int *n, double complex *buf)
{
    pf_context *ctx = g->ctx;
    pf_context_prepare_planner(ctx);
    fftw_plan_with_nthreads(1);
    fftw_plan p = fftw_plan_dft(rank, n, buf, buf, FFTW_BACKWARD, FFTW_ESTIMATE);
    fftw_plan_with_nthreads(ctx->threads);
    if (!p) return pf_fail(ctx, PF_EFFT, "FFTW could not plan the transform of a mask's coefficients");
    fftw_execute(p);
    fftw_destroy_plan(p);
    return PF_OK;
}

pf_status pf_edges_comb_table(pf_grid *g, int axis, const pf_edges_comb *comb, const pf_edges *e,
                              double complex *table)
{
    double start = comb->start, open = comb->open, pitch = comb->pitch, first = comb->first, last = comb->last;
    pf_status s = pf_edges_check(g, e);
    if (s) return s;
    if (e->mode != PF_EDGES_EXACT)
        return pf_fail(g->ctx, PF_EINVAL, "pf_edges_comb_table builds exact edges only");
    if (!(open > 0) || !isfinite(open) || (last > first && !(pitch >= open)) || !(last >= first))
        return pf_fail(g->ctx, PF_EINVAL, "comb of open width %g m, pitch %g m, indices %g..%g is not valid", open,
                       pitch, first, last);
    size_t n = g->n[axis];
    double x0 = g->x[axis][0], L = g->span[axis], x1 = x0 + L;
    /* Intervals wholly inside the window: i_f .. i_l (closed form); the few
     * that straddle an end are clipped one by one. */
    double i_f = first, i_l = first - 1;
    if (last > first) {
        i_f = fmax(first, ceil((x0 - start) / pitch));
        i_l = fmin(last, floor((x1 - open - start) / pitch));
    } else if (start >= x0 && start + open <= x1) {
        i_l = first;
    }
    double cut_lo[8], cut_hi[8];
    int cuts = 0;
    /* Candidates: just below i_f and just above i_l (an interval is at most
     * one pitch long, so three on each side cover every straddler). */
    double cand[12];
    int nc = 0;
    if (last > first) {
        for (double i = i_f - 3; i <= i_f - 1; i++) cand[nc++] = i;
        for (double i = fmax(i_f, i_l + 1); i <= i_l + 3; i++) cand[nc++] = i;
    } else if (i_l < i_f) {
        cand[nc++] = first;
    }
    for (int c = 0; c < nc; c++) {
        double i = cand[c];
        if (i < first || i > last) continue;
        double lo = fmax(start + i * pitch, x0), hi = fmin(start + i * pitch + open, x1);
        if (hi > lo && cuts < 8) {
            cut_lo[cuts] = lo;
            cut_hi[cuts] = hi;
            cuts++;
        }
    }
    double full = i_l >= i_f ? i_l - i_f + 1 : 0;
    double u_full = start + i_f * pitch - x0;
    double damp = e->width;
    for (size_t j = 0; j < n; j++) {
        /* k_m in FFT order, from the index (not from g->k, which holds the
         * same numbers, so that this also serves an axis on its own). */
        double m = j < (n + 1) / 2 ? (double)j : (double)j - (double)n;
        double k = PF_TWO_PI * m / L;
        double complex c = 0;
        if (full > 0) c += segment(k, u_full, open) * geometric(k * pitch, full);
        for (int q = 0; q < cuts; q++) c += segment(k, cut_lo[q] - x0, cut_hi[q] - cut_lo[q]);
        if (damp > 0) c *= exp(-0.5 * k * k * damp * damp);
        table[j] = c / L;
    }
    int nn = (int)n;
    if ((s = inverse_transform(g, 1, &nn, table))) return s;
    for (size_t j = 0; j < n; j++) table[j] = creal(table[j]);
    return PF_OK;
}

pf_status pf_edges_disk_field(pf_grid *g, int axis_a, int axis_b, double c_a, double c_b, double radius,
                              const pf_edges *e, double complex *field)
{
    pf_status s = pf_edges_check(g, e);
    if (s) return s;
    if (e->mode != PF_EDGES_EXACT) return pf_fail(g->ctx, PF_EINVAL, "pf_edges_disk_field builds exact edges only");
    /* Work in the plane (lo, hi) with lo < hi, the grid's own axis order. */
    int lo = axis_a < axis_b ? axis_a : axis_b, hi = axis_a < axis_b ? axis_b : axis_a;
    double c_lo = axis_a < axis_b ? c_a : c_b, c_hi = axis_a < axis_b ? c_b : c_a;
    size_t na = g->n[lo], nb = g->n[hi];
    size_t bytes = pf_bytes(na * nb, sizeof(double complex));
    double complex *plane = pf_alloc(g->ctx, bytes);
    if (!plane) return pf_context_status(g->ctx);
    double La = g->span[lo], Lb = g->span[hi];
    double ua = c_lo - g->x[lo][0], ub = c_hi - g->x[hi][0];
    double area = PF_PI * radius * radius, w = e->width;
    /* Phase tables per axis: the centre's offset from the window's origin. */
    for (size_t i = 0; i < na; i++) {
        double ma = i < (na + 1) / 2 ? (double)i : (double)i - (double)na;
        double ka = PF_TWO_PI * ma / La;
        double complex pa = cexp(-I * ka * ua);
        for (size_t j = 0; j < nb; j++) {
            double mb = j < (nb + 1) / 2 ? (double)j : (double)j - (double)nb;
            double kb = PF_TWO_PI * mb / Lb;
            double kr = sqrt(ka * ka + kb * kb) * radius;
            /* 2 J1(z)/z -> 1 - z^2/8 near 0 */
            double airy = kr < 1e-6 ? 1.0 - kr * kr / 8.0 : 2.0 * j1(kr) / kr;
            double complex c = area * airy * pa * cexp(-I * kb * ub);
            if (w > 0) c *= exp(-0.5 * (ka * ka + kb * kb) * w * w);
            plane[i * nb + j] = c / (La * Lb);
        }
    }
    int dims[2] = {(int)na, (int)nb};
    s = inverse_transform(g, 2, dims, plane);
    if (!s) {
        /* This rank's position samples (all of them on a grid held whole). */
        size_t first, end, idx[PF_MAX_DIM] = {0, 0, 0};
        pf_grid_local_range(g, &first, &end);
        for (size_t rest = first, a = (size_t)g->dim; a-- > 0;) {
            idx[a] = rest % g->n[a];
            rest /= g->n[a];
        }
        for (size_t off = first; off < end; off++) {
            field[off - first] = creal(plane[idx[lo] * nb + idx[hi]]);
            for (int a = g->dim - 1; a >= 0; a--) {
                if (++idx[a] < g->n[a]) break;
                idx[a] = 0;
            }
        }
    }
    pf_free(g->ctx, plane, bytes);
    return s;
}
