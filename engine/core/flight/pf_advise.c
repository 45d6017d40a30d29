/* pf_advise.c - grid proposals for planned flights (see pf_advise.h). */
#include <math.h>
#include <string.h>
#include "pf_advise.h"
#include "pf_resolution.h"
#include "pf_constants.h"
#include "pf_guard.h"

size_t pf_fft_good_size(size_t n)
{
    if (n < 2) return 2;
    for (size_t m = n + (n & 1);; m += 2) {
        size_t r = m;
        static const size_t primes[] = {2, 3, 5, 7};
        for (int i = 0; i < 4; i++)
            while (r % primes[i] == 0) r /= primes[i];
        if (r == 1) return m;
    }
}

/* Bounds of the classical image on axis a at time t: the slowest and the
 * fastest parts of the state, with every kick before t applied in the
 * direction that widens the range (a kick may split the state). */
static void image(const pf_advice_request *q, int a, double t, double *lo, double *hi)
{
    double vlo = q->k_lo[a] * t, vhi = q->k_hi[a] * t;
    for (size_t i = 0; i < q->nkicks; i++) {
        double dt = t - q->kick_time[i];
        if (dt <= 0) continue;
        double dk = q->kick_k[i * (size_t)q->dim + (size_t)a];
        vlo += fmin(0, dk) * dt;
        vhi += fmax(0, dk) * dt;
    }
    *lo = q->x_lo[a] + PF_HBAR * vlo / q->mass;
    *hi = q->x_hi[a] + PF_HBAR * vhi / q->mass;
}

/* Position range over [0, t]: the bounds move piecewise linearly, with
 * corners at the kicks, so the extremes are at 0, the kicks or t. */
static void range_until(const pf_advice_request *q, int a, double t, double *lo, double *hi)
{
    image(q, a, 0, lo, hi);
    double l, h;
    image(q, a, t, &l, &h);
    *lo = fmin(*lo, l);
    *hi = fmax(*hi, h);
    for (size_t i = 0; i < q->nkicks; i++) {
        if (q->kick_time[i] > t) continue;
        image(q, a, q->kick_time[i], &l, &h);
        *lo = fmin(*lo, l);
        *hi = fmax(*hi, h);
    }
}

/* Wave-number range once every kick before t has acted. */
static void krange(const pf_advice_request *q, int a, double t, double *lo, double *hi)
{
    *lo = q->k_lo[a];
    *hi = q->k_hi[a];
    for (size_t i = 0; i < q->nkicks; i++) {
        if (q->kick_time[i] > t) continue;
        double dk = q->kick_k[i * (size_t)q->dim + (size_t)a];
        *lo += fmin(0, dk);
        *hi += fmax(0, dk);
    }
}

static double proposal_points(const pf_grid_proposal *p, int dim)
{
    double n = 1;
    for (int a = 0; a < dim; a++) n *= (double)p->points[a];
    return n;
}

/* Largest point count the advisor proposes per axis (pf_grid.c's limit). */
#define ADVISE_MAX_POINTS ((double)((size_t)1 << 30))

/* Point count for `need` points, or 0 when need is not finite or beyond
 * ADVISE_MAX_POINTS (a conversion to size_t would then be undefined). */
static size_t good_count(double need)
{
    if (!(need <= ADVISE_MAX_POINTS)) return 0;
    return pf_fft_good_size(need > 2 ? (size_t)ceil(need) : 2);
}

static pf_status too_many(pf_context *ctx, int a, double need)
{
    return pf_fail(ctx, PF_EINVAL,
                   "advisor: the grid for this flight needs %g points on axis %d, beyond the largest axis of %.0f "
                   "points; shorten the flight or narrow the extents",
                   need, a + 1, ADVISE_MAX_POINTS);
}

/* A grid of at least `span` with spacing at most `dx`, centred at c; 0 when
 * that needs more points than any grid may have. */
static int propose(pf_grid_proposal *p, int a, double span, double dx, double c)
{
    size_t n = good_count(span / dx);
    if (!n) return 0;
    p->points[a] = n;
    p->span[a] = span;
    p->spacing[a] = span / (double)n;
    p->origin[a] = c;
    return 1;
}

pf_status pf_grid_advise(pf_context *ctx, const pf_advice_request *q, pf_advice *out)
{
    memset(out, 0, sizeof *out);
    if (q->dim < 1 || q->dim > PF_MAX_DIM) return pf_fail(ctx, PF_EINVAL, "advisor: dimension must be 1..3, got %d", q->dim);
    if (!(q->mass > 0) || !isfinite(q->mass)) return pf_fail(ctx, PF_EINVAL, "advisor: mass must be positive (kg), got %g", q->mass);
    if (!(q->time > 0) || !isfinite(q->time)) return pf_fail(ctx, PF_EINVAL, "advisor: time must be positive (s), got %g", q->time);
    double margin = q->margin > 0 ? q->margin : 1.2;
    if (margin < 1 || !isfinite(margin)) return pf_fail(ctx, PF_EINVAL, "advisor: margin must be at least 1, got %g", margin);
    size_t image_points = q->image_points ? q->image_points : 64;
    for (int a = 0; a < q->dim; a++) {
        if (!(q->x_hi[a] > q->x_lo[a]) || !(q->k_hi[a] > q->k_lo[a]) || !isfinite(q->x_lo[a] + q->x_hi[a] + q->k_lo[a] + q->k_hi[a]))
            return pf_fail(ctx, PF_EINVAL, "advisor: extents on axis %d must be finite intervals of positive width", a + 1);
    }
    double t_last = 0;
    for (size_t i = 0; i < q->nkicks; i++) {
        if (!(q->kick_time[i] >= 0 && q->kick_time[i] <= q->time))
            return pf_fail(ctx, PF_EINVAL, "advisor: kick %zu time must be within 0..%g s, got %g", i + 1, q->time, q->kick_time[i]);
        for (int a = 0; a < q->dim; a++)
            if (!isfinite(q->kick_k[i * (size_t)q->dim + (size_t)a]))
                return pf_fail(ctx, PF_EINVAL, "advisor: kick %zu wave number must be finite", i + 1);
        t_last = fmax(t_last, q->kick_time[i]);
    }
    /* The guard bands are 1/32 of the points at each end: plan with the
     * usable fraction of a large grid and check the result below. */
    const double fin = pf_guard_inner_fraction(1024);
    double chirp_time = 0;
    for (int a = 0; a < q->dim; a++) {
        double klo, khi, xlo, xhi;
        /* Same grid: everything, all the time, on one grid. */
        krange(q, a, q->time, &klo, &khi);
        double kmax = fmax(fabs(klo), fabs(khi));
        double dx = fin * PF_PI / (margin * kmax);
        /* The builders' definition of resolved (pf_resolution.h) as well. */
        dx = fmin(dx, pf_resolution_max_spacing(q->feature[a], kmax));
        range_until(q, a, q->time, &xlo, &xhi);
        if (!propose(&out->same, a, margin * (xhi - xlo) / fin, dx, 0.5 * (xlo + xhi)))
            return too_many(ctx, a, margin * (xhi - xlo) / fin / dx);
        /* Scaled: the input grid carries the state until the last kick; then
         * one scaled flight of the remaining time. */
        double ts = q->time - t_last;
        krange(q, a, t_last, &klo, &khi);
        kmax = fmax(fabs(klo), fabs(khi));
        range_until(q, a, t_last, &xlo, &xhi);
        double in_span = margin * (xhi - xlo) / fin;
        double dx_in = fmin(fin * PF_PI / (margin * kmax), pf_resolution_max_spacing(q->feature[a], kmax));
        double ilo, ihi;
        image(q, a, q->time, &ilo, &ihi);
        if (ts > 0) {
            /* Chirp criterion: state extent at the start of the scaled flight
             * plus its spread must fit the window 2 pi hbar ts / (m dx). */
            double ex, dummy;
            image(q, a, t_last, &ex, &dummy);
            double e_start = dummy - ex;
            double spread = PF_HBAR * ts * (khi - klo) / q->mass;
            dx_in = fmin(dx_in, fin * PF_TWO_PI * PF_HBAR * ts / (q->mass * margin * (e_start + spread)));
        }
        if (!propose(&out->scaled_in, a, in_span, dx_in, 0.5 * (xlo + xhi))) return too_many(ctx, a, in_span / dx_in);
        if (ts > 0) {
            /* Enough points that the final image spans image_points output
             * points: D = 2 pi hbar ts / (m N dx) <= (ihi - ilo) / image_points. */
            double dxi = out->scaled_in.spacing[a];
            double need = PF_TWO_PI * PF_HBAR * ts * (double)image_points / (q->mass * dxi * (ihi - ilo));
            if ((double)out->scaled_in.points[a] < need) {
                size_t n = good_count(need);
                if (!n) return too_many(ctx, a, need);
                out->scaled_in.points[a] = n;
                out->scaled_in.span[a] = (double)n * dxi;
            }
            size_t n = out->scaled_in.points[a];
            double D = PF_TWO_PI * PF_HBAR * ts / (q->mass * (double)n * dxi);
            out->scaled_out.points[a] = n;
            out->scaled_out.spacing[a] = D;
            out->scaled_out.span[a] = D * (double)n;
            out->scaled_out.origin[a] = 0.5 * (ilo + ihi);
            chirp_time = fmax(chirp_time, q->mass * (double)n * dxi * dxi / (PF_TWO_PI * PF_HBAR));
        } else {
            out->scaled_out = out->scaled_in;
        }
    }
    out->scaled_start = t_last;
    out->scaled_time = q->time - t_last;
    out->chirp_time = chirp_time;
    /* Peak storage: one wave plus FFTW planning scratch of the same size for
     * the same grid; input plus output for the scaled flight (the output grid
     * is planned before its storage is allocated). */
    out->same_bytes = 2.0 * 16.0 * proposal_points(&out->same, q->dim);
    double nin = proposal_points(&out->scaled_in, q->dim), nout = proposal_points(&out->scaled_out, q->dim);
    out->scaled_bytes = 16.0 * fmax(2 * nin, nin + nout);
    return PF_OK;
}

double pf_normal_tail_quantile(double tail)
{
    /* erfc is monotonic, so bisection on [0, 40] converges to the last bit
     * within 200 halvings; no library quantile, so the value is the same on
     * every libm that rounds erfc correctly. */
    double lo = 0, hi = 40;
    for (int i = 0; i < 200; i++) {
        double mid = 0.5 * (lo + hi);
        if (erfc(mid / sqrt(2.0)) > tail) lo = mid; else hi = mid;
    }
    return hi;
}

double pf_gaussian_min_wavenumber_width(double width) { return 1.0 / (2.0 * width); }

pf_status pf_advice_gaussian(pf_context *ctx, pf_advice_request *q, const double *width, const double *wavenumber_width,
                             const double *center, const double *wavenumber)
{
    if (q->dim < 1 || q->dim > PF_MAX_DIM) return pf_fail(ctx, PF_EINVAL, "advisor: dimension must be 1..3, got %d", q->dim);
    double sk[PF_MAX_DIM];
    for (int a = 0; a < q->dim; a++) {
        if (!(width[a] > 0) || !isfinite(width[a]))
            return pf_fail(ctx, PF_EINVAL, "advisor: width on axis %d must be positive (m), got %g", a + 1, width[a]);
        sk[a] = wavenumber_width ? wavenumber_width[a] : pf_gaussian_min_wavenumber_width(width[a]);
        if (!(sk[a] > 0) || !isfinite(sk[a]))
            return pf_fail(ctx, PF_EINVAL, "advisor: wave-number width on axis %d must be positive (1/m), got %g", a + 1,
                           sk[a]);
    }
    /* Extents at least as far as the builders check a Gaussian (6 rms
     * widths), and its smallest feature, the FWHM: the proposals then pass
     * the builders' resolution check (one definition, pf_resolution.h). */
    double z = fmax(pf_normal_tail_quantile(pf_flight_extent_tail(ctx)), PF_GAUSS_REACH);
    for (int a = 0; a < q->dim; a++) {
        double c = center ? center[a] : 0.0, k0 = wavenumber ? wavenumber[a] : 0.0;
        q->feature[a] = PF_GAUSS_FWHM_PER_SIGMA * width[a];
        q->x_lo[a] = c - z * width[a];
        q->x_hi[a] = c + z * width[a];
        q->k_lo[a] = k0 - z * sk[a];
        q->k_hi[a] = k0 + z * sk[a];
    }
    return PF_OK;
}
