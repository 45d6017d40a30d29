/* pf_expand.c - Gross-Pitaevskii expansion in the Castin-Dum scaled frame
 * with a free handover (see pf_expand.h for the equations). */
#include <math.h>
#include <stdlib.h>
#include <stdio.h>
#include <string.h>
#include "pf_cis.h"
#include "pf_constants.h"
#include "pf_dist.h"
#include "pf_expand.h"
#include "pf_frame.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_kernels.h"
#include "pf_observe.h"

#define MAX_STEPS 100000000.0
/* Points per piece of a row in the potential pass (phases kept on the stack). */
#define PHASE_CHUNK 512
/* Density below this fraction of the peak does not count as occupied when
 * sizing a step (as in pf_splitstep.c). */
#define OCCUPIED_FRACTION 1e-12

const char *pf_expand_scaling_name(pf_expand_scaling s)
{
    switch (s) {
    case PF_SCALING_BALLISTIC: return "ballistic";
    case PF_SCALING_FIXED: return "fixed";
    default: return "castin-dum";
    }
}

/* ---- the scaling factors ---- */

/* lambda_j, lambda_j' and the kinetic integral I_j = int dt / lambda_j^2. */
typedef struct frame {
    int dim;
    pf_expand_scaling law;
    int free;                  /* after the handover: lambda'' = 0 */
    double omega2[PF_MAX_DIM];
    double lam[PF_MAX_DIM], rate[PF_MAX_DIM], kin[PF_MAX_DIM];
} frame;

static void frame_accel(const frame *f, const double *lam, double *acc)
{
    double big = 1;
    for (int a = 0; a < f->dim; a++) big *= lam[a];
    for (int a = 0; a < f->dim; a++) {
        if (f->free || f->law == PF_SCALING_FIXED) acc[a] = 0;
        else if (f->law == PF_SCALING_BALLISTIC) acc[a] = f->omega2[a] / (lam[a] * lam[a] * lam[a]);
        else acc[a] = f->omega2[a] / (lam[a] * big);
    }
}

/* Classical Runge-Kutta over dt (either sign) in sub-steps short against the
 * frame's own time scales; the kinetic integral rides along. */
static void frame_advance_capped(frame *f, double dt, double max_subs);

static void frame_advance(frame *f, double dt) { frame_advance_capped(f, dt, 1e6); }

/* Whether the rest of the flight may use the linear frame of the handover:
 * the scaling law would end within PF_EXPAND_LINEAR_GAP of lambda + lambda' rest
 * on every axis, so chi stays on its grid (a g = 0 cloud released at rest
 * has lambda' = 0 and must first gather speed in its frame). */
static int frame_nearly_linear(const frame *f, double rest)
{
    frame law = *f;
    law.free = 0;
    frame_advance_capped(&law, rest, 4000);
    for (int a = 0; a < f->dim; a++) {
        double lin = f->lam[a] + f->rate[a] * rest;
        if (!(fabs(lin / law.lam[a] - 1) <= PF_EXPAND_LINEAR_GAP)) return 0;
    }
    return 1;
}

static void frame_advance_capped(frame *f, double dt, double max_subs)
{
    if (dt == 0) return;
    const int d = f->dim;
    double acc[PF_MAX_DIM], rate_scale = 0;
    frame_accel(f, f->lam, acc);
    for (int a = 0; a < d; a++)
        rate_scale = fmax(rate_scale, fabs(f->rate[a]) / f->lam[a] + sqrt(fabs(acc[a]) / f->lam[a]) +
                                          sqrt(f->omega2[a]) / (f->lam[a] * f->lam[a]));
    double subs = ceil(fabs(dt) * rate_scale / 0.01);
    if (subs < 4) subs = 4;
    if (subs > max_subs) subs = max_subs;
    const double h = dt / subs;
    for (long s = 0; s < (long)subs; s++) {
        double l0[PF_MAX_DIM], v0[PF_MAX_DIM], kl[4][PF_MAX_DIM], kv[4][PF_MAX_DIM], ki[4][PF_MAX_DIM];
        double lt[PF_MAX_DIM], vt[PF_MAX_DIM];
        memcpy(l0, f->lam, sizeof l0);
        memcpy(v0, f->rate, sizeof v0);
        for (int st = 0; st < 4; st++) {
            double c = st == 0 ? 0 : st == 3 ? 1.0 : 0.5;
            for (int a = 0; a < d; a++) {
                lt[a] = st == 0 ? l0[a] : l0[a] + c * h * kl[st - 1][a];
                vt[a] = st == 0 ? v0[a] : v0[a] + c * h * kv[st - 1][a];
            }
            frame_accel(f, lt, acc);
            for (int a = 0; a < d; a++) {
                kl[st][a] = vt[a];
                kv[st][a] = acc[a];
                ki[st][a] = 1.0 / (lt[a] * lt[a]);
            }
        }
        for (int a = 0; a < d; a++) {
            f->lam[a] = l0[a] + h / 6 * (kl[0][a] + 2 * kl[1][a] + 2 * kl[2][a] + kl[3][a]);
            f->rate[a] = v0[a] + h / 6 * (kv[0][a] + 2 * kv[1][a] + 2 * kv[2][a] + kv[3][a]);
            f->kin[a] += h / 6 * (ki[0][a] + 2 * ki[1][a] + 2 * ki[2][a] + ki[3][a]);
        }
    }
}

/* Inverse time scale on which lambda and lambda'' change (1/s). */
static double frame_rate(const frame *f)
{
    double acc[PF_MAX_DIM], r = 0;
    frame_accel(f, f->lam, acc);
    for (int a = 0; a < f->dim; a++)
        r = fmax(r, fabs(f->rate[a]) / f->lam[a] + sqrt(fabs(acc[a]) / f->lam[a]));
    return r;
}

static double frame_volume(const frame *f)
{
    double v = 1;
    for (int a = 0; a < f->dim; a++) v *= f->lam[a];
    return v;
}

/* ---- passes over the chi samples ---- */

typedef struct expand_ws {
    pf_wave *w;
    pf_grid *g;
    double g_mf;                     /* mean-field coefficient (J m^d) */
    double *quad[PF_MAX_DIM];        /* per-axis (xi - o)^2 (m^2) */
    double complex *tab[PF_MAX_DIM]; /* per-axis kinetic or chirp factors */
} expand_ws;

/* What a potential pass saw: the peak density and, over the points above
 * OCCUPIED_FRACTION of the previous peak, the range of the chi-frame
 * potential (J) - the figures the next step is sized with. */
typedef struct pass_stats {
    double peak, lo, hi;
} pass_stats;

/* Per-axis potential tables q_j (xi_j - o_j)^2 with q_j = m lambda_j lambda_j'' / 2
 * summed per point with (g / Lambda) |chi|^2; the loop walks the grid as rows
 * of the last axis so the per-point work is one cexp.  With coef = 0 it only
 * measures (no phase is applied).  The min/max reductions do not depend on
 * the thread count. */
static void potential_pass(expand_ws *ws, const frame *f, double coef, pass_stats *st)
{
    pf_grid *g = ws->g;
    const int d = g->dim;
    double acc[PF_MAX_DIM], q[PF_MAX_DIM] = {0, 0, 0};
    frame_accel(f, f->lam, acc);
    for (int a = 0; a < d; a++) q[a] = 0.5 * ws->w->mass * f->lam[a] * acc[a];
    const double fac = coef / PF_HBAR, gl = ws->g_mf / frame_volume(f);
    const double cut = OCCUPIED_FRACTION * st->peak;
    /* On a grid split over MPI ranks this rank walks the rows of its own
     * planes of axis 0; row numbers stay global for the table indices. */
    const size_t nlast = g->n[d - 1];
    size_t rows = g->total / nlast, row0 = 0;
    if (g->dist) { /* 2D or 3D: whole rows of the last axis in each plane */
        size_t first, count, per_plane = g->total / g->n[0] / nlast;
        pf_grid_slab(g, PF_POSITION, &first, &count);
        rows = count * per_plane;
        row0 = first * per_plane;
    }
    double complex *z = ws->w->store;
    double *const *quad = ws->quad;
    double peak = 0, lo = INFINITY, hi = -INFINITY;
#pragma omp parallel for num_threads(g->ctx->threads) schedule(static) reduction(max : peak, hi) reduction(min : lo)
    for (ptrdiff_t r = 0; r < (ptrdiff_t)rows; r++) {
        double base = 0;
        size_t rest = row0 + (size_t)r;
        for (int a = d - 2; a >= 0; a--) {
            size_t i = rest % g->n[a];
            rest /= g->n[a];
            base += q[a] * quad[a][i];
        }
        double complex *row = z + (size_t)r * nlast;
        const double *ql = quad[d - 1];
        /* Phases of a piece of the row on the stack, then the vectorised
         * exp(-i phase) of the split-step machinery (pf_cis.h). */
        double phase[PHASE_CHUNK];
        for (size_t i0 = 0; i0 < nlast; i0 += PHASE_CHUNK) {
            size_t len = nlast - i0 < PHASE_CHUNK ? nlast - i0 : PHASE_CHUNK;
            for (size_t k = 0; k < len; k++) {
                double complex c = row[i0 + k];
                double rho = creal(c) * creal(c) + cimag(c) * cimag(c);
                double u = base + q[d - 1] * ql[i0 + k] + gl * rho;
                if (rho > peak) peak = rho;
                if (rho >= cut) {
                    if (u < lo) lo = u;
                    if (u > hi) hi = u;
                }
                phase[k] = u * fac;
            }
            if (fac != 0) pf_cis_multiply(row + i0, phase, len);
        }
    }
    /* Exact minima and maxima over the ranks: every rank sizes the next
     * step alike (no-ops for a grid held whole). */
    double none = INFINITY;
    pf_dist_minmax(g, &lo, &hi);
    pf_dist_minmax(g, &none, &peak);
    st->peak = peak;
    st->lo = lo;
    st->hi = hi;
}

/* Adds into acc in order, so a block a slab boundary cuts continues the
 * previous rank's partial (pf_dist_reduce) exactly as one pass would. */
static void quartic_block(void *user, size_t begin, size_t end, const size_t *idx, double *acc)
{
    (void)idx;
    const double complex *z = user;
    for (size_t i = begin; i < end; i++) {
        double rho = creal(z[i]) * creal(z[i]) + cimag(z[i]) * cimag(z[i]);
        acc[0] += rho;
        acc[1] += rho * rho;
    }
}

/* Interaction energy (g / 2) int |psi|^2 dx of the normalised lab state:
 * (g / 2 Lambda) sum rho^2 dv / (sum rho dv)^2 in chi samples (deterministic
 * fixed-block sums). */
static double interaction_energy(expand_ws *ws, const frame *f)
{
    double sums[2];
    pf_reduce_blocks(ws->g, 2, quartic_block, ws->w->store, sums); /* over the ranks when split */
    double dv = pf_grid_cell_volume(ws->g);
    if (!(sums[0] > 0)) return 0;
    return 0.5 * ws->g_mf * sums[1] / (sums[0] * sums[0] * dv) / frame_volume(f);
}

/* Exact kinetic factor exp(-i hbar k_j^2 dI_j / 2 m) per axis, over one FFT pair. */
static pf_status kinetic_step(expand_ws *ws, const double *dkin)
{
    pf_grid *g = ws->g;
    for (int a = 0; a < g->dim; a++) {
        double c = 0.5 * PF_HBAR * dkin[a] / ws->w->mass;
        for (size_t j = 0; j < g->n[a]; j++) {
            double k = g->k[a][j];
            ws->tab[a][j] = cexp(-I * (c * k * k));
        }
    }
    if (g->dist) {
        /* FFTW-MPI's pair, the factors applied on the transposed slab. */
        pf_dist_kinetic(g, ws->w->store, ws->tab, 1.0 / (double)g->total);
        return PF_OK;
    }
    pf_status s = pf_grid_fft(g, ws->w->store, -1);
    if (s) return s;
    pf_kernel_axis_multiply(g, ws->w->store, (const double complex *const *)ws->tab, 1.0 / (double)g->total);
    return pf_grid_fft(g, ws->w->store, +1);
}

/* psi (lab grid) <-> chi: multiplies by Lambda^(-+1/2) exp(+-i m lambda' lambda (xi - o)^2 / 2 hbar). */
static void chirp_map(expand_ws *ws, const frame *f, int to_lab)
{
    pf_grid *g = ws->g;
    const double sgn = to_lab ? 1.0 : -1.0;
    for (int a = 0; a < g->dim; a++) {
        double c = sgn * ws->w->mass * f->rate[a] * f->lam[a] / (2 * PF_HBAR);
        for (size_t j = 0; j < g->n[a]; j++) ws->tab[a][j] = cexp(I * (c * ws->quad[a][j]));
    }
    double vol = frame_volume(f);
    double scale = to_lab ? 1.0 / sqrt(vol) : sqrt(vol);
    pf_kernel_axis_multiply(g, ws->w->store, (const double complex *const *)ws->tab, scale);
}

/* Puts the wave on a new grid with the same points and origin and the
 * spacings of g times factor[a]. */
static pf_status regrid(pf_wave *w, const double *factor)
{
    pf_grid *gin = w->grid;
    double span[PF_MAX_DIM];
    for (int a = 0; a < gin->dim; a++) {
        span[a] = gin->span[a] * factor[a];
        if (!(span[a] <= PF_GRID_MAX_EXTENT))
            return pf_fail(gin->ctx, PF_EINVAL,
                           "expand: the cloud's grid would span %g m on axis %d, beyond the largest grid span of %g m; "
                           "expand for a shorter time", span[a], a + 1, PF_GRID_MAX_EXTENT);
    }
    pf_grid *gout;
    pf_status s = pf_grid_new(gin->ctx, gin->dim, gin->n, span, gin->origin, &gout);
    if (s) return s;
    w->grid = gout;
    pf_grid_release(gin);
    pf_guard_rebind(w);
    return PF_OK;
}

static void ws_free(expand_ws *ws)
{
    for (int a = 0; a < PF_MAX_DIM; a++) {
        pf_context_free(ws->g->ctx, ws->quad[a]);
        pf_context_free(ws->g->ctx, ws->tab[a]);
    }
}

static pf_status ws_make(expand_ws *ws)
{
    pf_grid *g = ws->g;
    for (int a = 0; a < g->dim; a++) {
        ws->quad[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double));
        ws->tab[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
        if (!ws->quad[a] || !ws->tab[a]) return pf_context_status(g->ctx);
        for (size_t j = 0; j < g->n[a]; j++) {
            double u = g->x[a][j] - g->origin[a];
            ws->quad[a][j] = u * u;
        }
    }
    return PF_OK;
}

/* ---- set-up ---- */

static pf_status check_spec(pf_context *ctx, int d, double t, const pf_expand_spec *sp)
{
    if (!isfinite(t) || t < 0)
        return pf_fail(ctx, PF_EINVAL, "expand time must be finite and not negative (s), got %g", t);
    if (sp->order != 2 && sp->order != 4)
        return pf_fail(ctx, PF_EINVAL, "order must be 2 (Strang) or 4 (Yoshida), got %d", sp->order);
    if (!isfinite(sp->g)) return pf_fail(ctx, PF_EINVAL, "g must be finite (J m^%d), got %g", d, sp->g);
    if (sp->scaling != PF_SCALING_CASTIN_DUM && sp->scaling != PF_SCALING_BALLISTIC && sp->scaling != PF_SCALING_FIXED)
        return pf_fail(ctx, PF_EINVAL, "unknown scaling law %d", (int)sp->scaling);
    if (!(sp->handover >= 0 && sp->handover < 1))
        return pf_fail(ctx, PF_EINVAL, "handover must be a fraction in [0, 1) of the cloud's energy, got %g", sp->handover);
    if ((double)sp->steps > MAX_STEPS)
        return pf_fail(ctx, PF_EINVAL, "steps must be at most %.0f, got %zu", MAX_STEPS, sp->steps);
    for (int a = 0; a < d; a++)
        if (!isfinite(sp->acceleration[a]))
            return pf_fail(ctx, PF_EINVAL, "acceleration on axis %d must be finite (m/s^2), got %g", a + 1,
                           sp->acceleration[a]);
    for (int a = 0; a < d; a++)
        if (!isfinite(sp->omega[a]) || sp->omega[a] < 0)
            return pf_fail(ctx, PF_EINVAL, "omega on axis %d must be finite and not negative (rad/s), got %g", a + 1,
                           sp->omega[a]);
    return PF_OK;
}

/* omega_j^2 from the virial relation (pf_expand.h) for a state at rest in
 * its own frame (chi = psi). */
static pf_status omega_from_state(pf_wave *w, double e_int, double *omega2)
{
    pf_grid *g = w->grid;
    double varx[PF_MAX_DIM], vark[PF_MAX_DIM];
    pf_status s = pf_wave_position_moments(w, NULL, varx);
    if (!s) s = pf_wave_wavenumber_moments(w, NULL, vark);
    if (!s) s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    for (int a = 0; a < g->dim; a++) {
        double p2 = PF_HBAR * PF_HBAR * vark[a];
        omega2[a] = (p2 / w->mass + e_int) / (w->mass * varx[a]);
        if (!(omega2[a] > 0) || !isfinite(omega2[a]))
            return pf_fail(g->ctx, PF_EINVAL,
                           "expand: the state gives no positive release frequency on axis %d (virial estimate %g "
                           "rad^2/s^2); give 'omega' or 'frequency'", a + 1, omega2[a]);
    }
    return PF_OK;
}

/* ---- the evolution ---- */

/* Applies the pending potential coefficient at the frame's time. */
static void flush(expand_ws *ws, const frame *f, double *pending, pass_stats *st)
{
    if (*pending != 0) potential_pass(ws, f, *pending, st);
    *pending = 0;
}

/* One symmetric step of size h (Strang, or Yoshida's three), leaving half a
 * potential step pending to merge with the next step's first half.  st
 * receives what the last potential pass saw (its peak sets the next occupied
 * cut). */
static pf_status split_step(expand_ws *ws, frame *f, double h, int order, double *pending, pass_stats *st)
{
    double c[3];
    int stages = 1;
    c[0] = 1.0;
    if (order == 4) {
        double cbrt2 = cbrt(2.0);
        c[0] = c[2] = 1.0 / (2.0 - cbrt2);
        c[1] = -cbrt2 / (2.0 - cbrt2);
        stages = 3;
    }
    for (int j = 0; j < stages; j++) {
        double hj = c[j] * h;
        *pending += 0.5 * hj;
        flush(ws, f, pending, st);
        double before[PF_MAX_DIM], dkin[PF_MAX_DIM];
        memcpy(before, f->kin, sizeof before);
        frame_advance(f, hj);
        for (int a = 0; a < f->dim; a++) dkin[a] = f->kin[a] - before[a];
        pf_status s = kinetic_step(ws, dkin);
        if (s) return s;
        *pending = 0.5 * hj;
    }
    return PF_OK;
}

/* The frame of a new expansion (lambda = 1) with the given release
 * frequencies; *given says whether any axis has one (then every axis must). */
static pf_status start_frame(pf_context *ctx, int d, const pf_expand_spec *spec, frame *f, int *given)
{
    memset(f, 0, sizeof *f);
    f->dim = d;
    f->law = spec->scaling;
    for (int a = 0; a < d; a++) {
        f->lam[a] = 1;
        f->omega2[a] = spec->omega[a] * spec->omega[a];
    }
    *given = 0;
    for (int a = 0; a < d; a++) *given |= spec->omega[a] > 0;
    if (*given)
        for (int a = 0; a < d; a++)
            if (!(spec->omega[a] > 0))
                return pf_fail(ctx, PF_EINVAL, "omega on axis %d must be positive (rad/s) when any axis is given, got %g",
                               a + 1, spec->omega[a]);
    return PF_OK;
}

/* Continues the frame of the previous expand (nothing happened since): its
 * scale factors, rates, energy and, unless given, frequencies; the wave
 * goes back to chi, the spacings first (the chirp is written in xi). */
static pf_status resume_frame(pf_wave *w, int given, frame *f, double *energy)
{
    *energy = w->expanded.energy;
    if (!given) memcpy(f->omega2, w->expanded.omega2, sizeof f->omega2);
    double shrink[PF_MAX_DIM];
    for (int a = 0; a < f->dim; a++) shrink[a] = 1.0 / w->expanded.lam[a];
    pf_status s = regrid(w, shrink);
    if (s) return s;
    memcpy(f->lam, w->expanded.lam, sizeof f->lam);
    memcpy(f->rate, w->expanded.rate, sizeof f->rate);
    return PF_OK;
}

/* A new expansion's energy (kinetic + interaction e_int) and, unless given
 * or the law is fixed, the release frequencies from the virial relation. */
static pf_status starting_energy(pf_wave *w, const pf_expand_spec *spec, int given, double e_int, frame *f,
                                 double *energy)
{
    double kin;
    pf_status s = pf_wave_kinetic_energy(w, &kin);
    if (!s) s = pf_wave_to(w, PF_POSITION);
    if (s) return s;
    *energy = kin + e_int;
    if (!given && spec->scaling != PF_SCALING_FIXED) return omega_from_state(w, e_int, f->omega2);
    return PF_OK;
}

/* The next step: one of 'steps' equal steps, or sized from the phase the
 * potential turns in a step (measured now), the frame's rate of change and
 * at most twice the last step; a last step takes what is left. */
static double next_step(expand_ws *ws, const frame *f, const pf_expand_spec *spec, double t, double left,
                        size_t steps, double h_prev, pass_stats *stats)
{
    if (spec->steps) {
        double h = t / (double)spec->steps;
        return h > left || steps + 1 == spec->steps ? left : h;
    }
    /* Measure at the current time (a read-only parallel pass): the figures
     * of the last phase pass are one step old, and sizing from them was
     * measured to cost accuracy. */
    potential_pass(ws, f, 0.0, stats);
    double spread = stats->hi > stats->lo ? stats->hi - stats->lo : 0;
    double h = spread > 0 ? PF_EXPAND_PHASE * PF_HBAR / spread : left;
    /* The frame's coefficients must change little within a step. */
    double rate = frame_rate(f);
    if (rate > 0) h = fmin(h, PF_EXPAND_FRAME_STEP / rate);
    if (h_prev > 0 && h > 2 * h_prev) h = 2 * h_prev;
    if (h >= left * 0.8) h = left; /* no sliver of a last step */
    return h;
}

/* The interacting part: split steps until t, or until the interaction
 * energy falls below the handover fraction of scale_e while the frame
 * moves nearly linearly (*handed).  *done: the time flown. */
static pf_status interacting_part(expand_ws *ws, frame *f, const pf_expand_spec *spec, double t, double scale_e,
                                  pf_expand_info *info, double *done, size_t *steps, int *handed)
{
    pf_context *ctx = ws->g->ctx;
    pf_status s = PF_OK;
    double pending = 0, h_prev = 0;
    /* A first measuring pass finds the peak for the occupied cut. */
    pass_stats stats = {INFINITY, 0, 0};
    potential_pass(ws, f, 0.0, &stats);
    while (*done < t && !s) {
        if ((s = pf_context_poll_stop(ctx))) break;
        double frac = fabs(interaction_energy(ws, f)) / scale_e;
        info->interaction_fraction = frac;
        if (spec->handover > 0 && frac < spec->handover && frame_nearly_linear(f, t - *done)) {
            *handed = 1;
            break;
        }
        double h = next_step(ws, f, spec, t, t - *done, *steps, h_prev, &stats);
        if (*steps >= (size_t)MAX_STEPS) {
            s = pf_fail(ctx, PF_EINVAL, "expand: more than %.0f steps; give 'steps' or a shorter time", MAX_STEPS);
            break;
        }
        s = split_step(ws, f, h, spec->order, &pending, &stats);
        *done += h;
        h_prev = h;
        (*steps)++;
    }
    if (!s) flush(ws, f, &pending, &stats);
    return s;
}

/* Exact free step of rest seconds in the same frame after the handover:
 * lambda grows linearly, so int dt / lambda^2 over s is
 * s / (lambda (lambda + lambda' s)). */
static pf_status free_handover(expand_ws *ws, frame *f, double rest)
{
    double dkin[PF_MAX_DIM];
    for (int a = 0; a < f->dim; a++) {
        double l1 = f->lam[a] + f->rate[a] * rest;
        dkin[a] = rest / (f->lam[a] * l1);
        f->kin[a] += dkin[a];
        f->lam[a] = l1;
    }
    f->free = 1;
    return kinetic_step(ws, dkin);
}

/* After a successful expansion: the report, the clock, the lab frame
 * (which carries the acceleration and any drift, Avron-Herbst), the step
 * log and the frame a following expand continues. */
static pf_status record_expansion(pf_wave *w, const pf_expand_spec *spec, const frame *f, double t, double t0,
                                  double norm, double energy, pf_expand_info *info)
{
    const int d = f->dim;
    for (int a = 0; a < d; a++) {
        info->lambda[a] = f->lam[a];
        info->rate[a] = f->rate[a];
    }
    w->clock = t0 + t;
    int accelerated = 0;
    for (int a = 0; a < d; a++) accelerated |= spec->acceleration[a] != 0;
    if (accelerated || pf_wave_frame_moved(w)) {
        pf_frame fr;
        pf_wave_frame(w, &fr);
        pf_frame_advance(&fr, d, w->mass, t, accelerated ? spec->acceleration : NULL);
        pf_status s = pf_wave_set_frame(w, &fr);
        if (s) return s;
    }
    char method[40];
    snprintf(method, sizeof method, "%s%s", pf_expand_scaling_name(spec->scaling), info->handed_over ? "+free" : "");
    pf_wave_log_step(w, "expand", method, t, 0.0, norm);
    w->expanded.log_count = w->log.count;
    memcpy(w->expanded.lam, f->lam, sizeof f->lam);
    memcpy(w->expanded.rate, f->rate, sizeof f->rate);
    memcpy(w->expanded.omega2, f->omega2, sizeof f->omega2);
    w->expanded.energy = energy;
    return PF_OK;
}

pf_status pf_wave_expand(pf_wave *w, double t, const pf_expand_spec *spec, pf_expand_info *info)
{
    pf_context *ctx = w->grid->ctx;
    const int d = w->grid->dim;
    pf_status s = check_spec(ctx, d, t, spec);
    if (s) return s;
    pf_expand_info local;
    if (!info) info = &local;
    memset(info, 0, sizeof *info);
    info->handover_time = NAN;
    double norm = pf_wave_last_logged_norm(w);
    if (!(norm > 0)) return pf_fail(ctx, PF_EINVAL, "expand: the state is zero");
    if ((s = pf_dist_check_regrid(w->grid, NULL, "expand"))) return s;
    frame f;
    int given;
    if ((s = start_frame(ctx, d, spec, &f, &given))) return s;

    /* Continue the frame of the previous expand when nothing happened since. */
    int cont = w->expanded.log_count && w->expanded.log_count == w->log.count;
    /* A new expansion follows the cloud: its centre of mass goes to the
     * grid's origin (about which the grid scales) and its drift into the
     * frame, which carries it exactly (the mean field depends on |psi|^2
     * only: Galilean covariance).  So the grid need not hold the drift, and
     * the energy below is the cloud's own, without the centre-of-mass part. */
    if (!cont && (s = pf_wave_frame_centre(w, NULL))) return s;
    double energy = 0;
    if ((s = pf_wave_to(w, PF_POSITION))) return s;
    if (cont) {
        if ((s = resume_frame(w, given, &f, &energy))) return s;
        info->continued = 1;
    }
    expand_ws ws;
    memset(&ws, 0, sizeof ws);
    ws.w = w;
    ws.g_mf = spec->g;
    ws.g = w->grid;
    if ((s = ws_make(&ws))) goto fail;
    if (cont) chirp_map(&ws, &f, 0);
    double e_int = interaction_energy(&ws, &f);
    if (!cont && (s = starting_energy(w, spec, given, e_int, &f, &energy))) goto fail;
    info->energy = energy;
    for (int a = 0; a < d; a++) info->omega[a] = sqrt(f.omega2[a]);
    const double scale_e = fabs(energy) > 0 ? fabs(energy) : 1.0;

    /* Interacting part, then (maybe) the free handover. */
    const double t0 = w->clock;
    double done = 0;
    size_t steps = 0;
    int handed = 0;
    s = interacting_part(&ws, &f, spec, t, scale_e, info, &done, &steps, &handed);
    if (!s && handed) {
        info->handover_time = t0 + done;
        s = free_handover(&ws, &f, t - done);
    } else if (!s) {
        info->interaction_fraction = fabs(interaction_energy(&ws, &f)) / scale_e;
    }
    if (!s) chirp_map(&ws, &f, 1);
    ws_free(&ws);
    if (!s) s = regrid(w, f.lam);
    if (s) {
        pf_guard_forget(w);
        return s;
    }
    info->steps = steps;
    info->handed_over = handed;
    return record_expansion(w, spec, &f, t, t0, norm, energy, info);
fail:
    ws_free(&ws);
    return s;
}
