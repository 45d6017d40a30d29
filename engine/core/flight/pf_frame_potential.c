/* pf_frame_potential.c - potentials, uniform forces and energies given in
 * lab coordinates for a wave whose frame is moved (pf_frame.h).
 *
 * A potential acts in the lab, so the frame's momentum offset cannot stay in
 * the frame while it acts (a trap stops the cloud; the co-moving frame would
 * keep flying).  The wave number offset is therefore folded onto the grid
 * first (chi <- exp(i K.xi) chi, K <- 0), which leaves the lab state
 * unchanged; with K = 0 the frame no longer moves, X is a constant lab
 * offset of the grid and the potential on the grid is V(xi + X), static in
 * time, so the split-step caches keep their meaning.  A uniform force
 * -m a.x splits into -m a.xi on the grid and the constant -m a.X, whose
 * phase goes into theta exactly. */
#include <math.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_force.h"
#include "pf_frame.h"
#include "pf_guard.h"
#include "pf_internal.h"
#include "pf_kernels.h"
#include "pf_observe.h"
#include "pf_relax.h"

/* Tail probability used to decide whether the folded momentum fits: the
 * guard's own threshold, or its default when the guards are switched off
 * (a fold that aliases would be wrong physics, guards or not). */
static double fold_tail(const pf_grid *g)
{
    double thr = pf_context_guard_threshold(g->ctx);
    return isfinite(thr) && thr > 0 && thr < 1 ? thr : PF_GUARD_DEFAULT_THRESHOLD;
}

pf_status pf_wave_frame_fold(pf_wave *w, const char *what)
{
    pf_grid *g = w->grid;
    int any = 0;
    for (int a = 0; a < g->dim; a++) any = any || w->frame.wavenumber[a] != 0.0;
    if (!any) return PF_OK;
    double lo[PF_MAX_DIM], hi[PF_MAX_DIM];
    pf_status s = pf_wave_extent(w, PF_MOMENTUM, fold_tail(g), lo, hi);
    if (s) return s;
    for (int a = 0; a < g->dim; a++) {
        const double K = w->frame.wavenumber[a];
        if (K == 0.0) continue;
        const size_t band = pf_guard_band_points(g->n[a]);
        const double nyq = pf_grid_knyquist(g, a);
        const double limit = nyq - (double)band * pf_grid_kspacing(g, a);
        const double reach = fmax(fabs(lo[a] + K), fabs(hi[a] + K));
        if (reach > limit) {
            /* The spacing that would hold the folded momentum inside the
             * guard band's inner edge. */
            const double want_dx = PF_PI * (1.0 - 2.0 * (double)band / (double)g->n[a]) / reach;
            return pf_fail(g->ctx, PF_EINVAL,
                           "%s acts in the lab, so the frame's momentum must go onto the grid, and it does not fit: on "
                           "axis %d the frame's wave number %g rad/m (velocity %g m/s) moves the cloud's momentum to "
                           "%g rad/m, beyond %g rad/m (the Nyquist limit pi/dx = %g rad/m less the guard band); use a "
                           "grid with spacing below %g m (now %g m), or stop the cloud first (w:kick with "
                           "{frame = true}), or fly without a potential (w:fly with acceleration)",
                           what, a + 1, K, PF_HBAR * K / w->mass, reach, limit, nyq, want_dx, g->dx[a]);
        }
    }
    /* exp(i K.xi) from per-axis tables (no trigonometry per point). */
    double complex *tables[PF_MAX_DIM] = {NULL, NULL, NULL};
    for (int a = 0; a < g->dim && !s; a++) {
        if (w->frame.wavenumber[a] == 0.0) continue;
        tables[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
        if (!tables[a]) {
            s = pf_context_status(g->ctx);
            break;
        }
        for (size_t j = 0; j < g->n[a]; j++) tables[a][j] = cexp(I * w->frame.wavenumber[a] * g->x[a][j]);
    }
    double norm = s ? 0.0 : pf_wave_last_logged_norm(w);
    if (!s) s = pf_wave_to(w, PF_POSITION);
    if (!s) {
        pf_kernel_axis_multiply(g, w->store, (const double complex *const *)tables, 1.0);
        for (int a = 0; a < g->dim; a++) w->frame.wavenumber[a] = 0.0;
        pf_wave_log_step(w, "kick", "frame-fold", 0.0, 0.0, norm);
    }
    for (int a = 0; a < PF_MAX_DIM; a++) pf_context_free(g->ctx, tables[a]);
    return s;
}

pf_status pf_frame_check_acceleration(const pf_grid *g, const double *accel)
{
    if (!accel) return PF_OK;
    for (int a = 0; a < g->dim; a++)
        if (!isfinite(accel[a]))
            return pf_fail(g->ctx, PF_EINVAL, "acceleration on axis %d must be finite (m/s^2), got %g", a + 1, accel[a]);
    return PF_OK;
}

void pf_frame_tilt_add(const pf_grid *g, double mass, const double *accel, double *V)
{
    pf_frame_tilt_add_range(g, mass, accel, 0, g->total, V);
}

void pf_frame_tilt_add_range(const pf_grid *g, double mass, const double *accel, size_t first, size_t count, double *V)
{
    if (!accel) return;
    int any = 0;
    for (int a = 0; a < g->dim; a++) any = any || accel[a] != 0.0;
    if (!any) return;
    const size_t n = count;
    const int d = g->dim;
    /* -m a.xi as a sum of per-axis terms, walked in row-major order. */
    #pragma omp parallel for num_threads(PF_OMP_THREADS(g->ctx)) schedule(static)
    for (size_t i = 0; i < n; i++) {
        size_t off = first + i, rest = off;
        double v = 0.0;
        for (int a = d - 1; a >= 0; a--) {
            size_t j = rest % g->n[a];
            rest /= g->n[a];
            v -= mass * accel[a] * g->x[a][j];
        }
        V[i] += v;
    }
}

double pf_frame_tilt_constant(const pf_wave *w, const double *accel)
{
    if (!accel) return 0.0;
    double c = 0.0;
    for (int a = 0; a < w->grid->dim; a++) c -= w->mass * accel[a] * w->frame.position[a];
    return c;
}

void pf_frame_tilt_phase(pf_wave *w, const double *accel, double t)
{
    /* exp(-i c t / hbar) of the constant part c = -m a.X of the force's potential. */
    double c = pf_frame_tilt_constant(w, accel);
    if (c != 0.0) w->frame.phase -= c * t / PF_HBAR;
}

pf_status pf_wave_lab_fall(pf_wave *w, double t, const double *accel)
{
    pf_grid *g = w->grid;
    if (!isfinite(t)) return pf_fail(g->ctx, PF_EINVAL, "time must be finite (s), got %g", t);
    pf_status s = pf_frame_check_acceleration(g, accel);
    if (s) return s;
    if (!pf_wave_frame_moved(w)) return pf_wave_fall(w, t, accel);
    if ((s = pf_wave_frame_fold(w, "the uniform force"))) return s;
    /* H = p^2/2m - m a.xi - m a.X on the grid: the closed-form flight for
     * the first two terms, the constant's phase into theta. */
    if ((s = pf_wave_fall(w, t, accel))) return s;
    pf_frame_tilt_phase(w, accel, t);
    return PF_OK;
}

pf_status pf_wave_lab_energy(pf_wave *w, const double *potential, double g_mf, const double *accel, double *energy,
                             double *mu)
{
    pf_grid *g = w->grid;
    pf_status s = pf_frame_check_acceleration(g, accel);
    if (s) return s;
    double e = 0.0, m = 0.0;
    if ((s = pf_wave_energy(w, potential, g_mf, &e, &m))) return s;
    double shift = 0.0;
    if (pf_wave_frame_moved(w)) {
        /* <p^2>/2m in the lab: the grid's plus hbar^2 (K.<k> + |K|^2/2)/m. */
        double kmean[PF_MAX_DIM];
        if ((s = pf_wave_wavenumber_moments(w, kmean, NULL))) return s;
        for (int a = 0; a < g->dim; a++) {
            const double K = w->frame.wavenumber[a];
            shift += PF_HBAR * PF_HBAR * (K * kmean[a] + 0.5 * K * K) / w->mass;
        }
    }
    int any = 0;
    if (accel)
        for (int a = 0; a < g->dim; a++) any = any || accel[a] != 0.0;
    if (any) {
        /* <-m a.x> with x the lab position. */
        double xmean[PF_MAX_DIM];
        if ((s = pf_wave_lab_position_moments(w, xmean, NULL))) return s;
        for (int a = 0; a < g->dim; a++) shift -= w->mass * accel[a] * xmean[a];
    }
    if (energy) *energy = e + shift;
    if (mu) *mu = m + shift;
    return PF_OK;
}
