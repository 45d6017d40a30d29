/* pf_force.c - exact uniform-force flight (closed form, see pf_force.h). */
#include <math.h>
#include <stdlib.h>
#include "pf_constants.h"
#include "pf_force.h"
#include "pf_kernels.h"

pf_status pf_wave_fall(pf_wave *w, double t, const double *accel)
{
    pf_grid *g = w->grid;
    if (!isfinite(t)) return pf_fail(g->ctx, PF_EINVAL, "time must be finite (s), got %g", t);
    double a2 = 0, shift[PF_MAX_DIM] = {0, 0, 0};
    for (int a = 0; a < g->dim; a++) {
        if (!isfinite(accel[a]))
            return pf_fail(g->ctx, PF_EINVAL, "acceleration on axis %d must be finite (m/s^2), got %g", a + 1,
                           accel[a]);
        a2 += accel[a] * accel[a];
        shift[a] = 0.5 * accel[a] * t * t;
    }
    double complex *tab[PF_MAX_DIM] = {NULL, NULL, NULL};
    for (int a = 0; a < g->dim; a++) {
        tab[a] = pf_alloc(g->ctx, g->n[a] * sizeof(double complex));
        if (!tab[a]) {
            for (int b = 0; b < a; b++) pf_context_free(g->ctx, tab[b]);
            return pf_context_status(g->ctx);
        }
        double q = w->mass * accel[a] * t / PF_HBAR;
        if (fabs(q) >= pf_grid_knyquist(g, a))
            pf_context_warn(g->ctx, "fall: the momentum gained on axis %d, hbar x %g rad/m, reaches the grid's "
                            "Nyquist limit %g rad/m; the momentum wraps around (use a finer grid or a shorter fall)",
                            a + 1, q, pf_grid_knyquist(g, a));
    }
    double norm = pf_wave_last_logged_norm(w);
    /* A deferred flight joins the momentum-space part below. */
    pf_status s = pf_wave_settle_to(w, PF_MOMENTUM);
    double complex scale = 1.0;
    if (!s && g->dist) {
        /* Split over MPI ranks: the same tables on the transposed slab. */
        pf_kernel_kinetic_tables(g, PF_HBAR * t / w->mass, shift, tab);
        s = pf_dist_momentum_pass(w, (const double complex *const *)tab);
    } else if (!s && w->rep == PF_POSITION) {
        s = pf_grid_fft(g, w->store, -1);
        scale = 1.0 / (double)g->total;
    }
    if (!s && !g->dist) {
        /* Momentum space: free flight and translation by a t^2/2 together. */
        pf_kernel_kinetic_tables(g, PF_HBAR * t / w->mass, shift, tab);
        pf_kernel_axis_multiply(g, w->store, (const double complex *const *)tab, scale);
        s = pf_grid_fft(g, w->store, +1);
        w->rep = PF_POSITION;
    }
    if (!s) {
        /* Position space: the kick exp(i m a x t / hbar) and the global phase
         * -m |a|^2 t^3 / (6 hbar) of the closed form. */
        for (int a = 0; a < g->dim; a++) {
            double q = w->mass * accel[a] * t / PF_HBAR;
            for (size_t j = 0; j < g->n[a]; j++) tab[a][j] = cexp(I * q * g->x[a][j]);
        }
        double complex global = cexp(-I * w->mass * a2 * t * t * t / (6.0 * PF_HBAR));
        pf_kernel_axis_multiply(g, w->store, (const double complex *const *)tab, global);
        w->clock += t;
        pf_wave_log_step(w, "fall", "closed-form", t, 0.0, norm);
    }
    for (int a = 0; a < g->dim; a++) pf_context_free(g->ctx, tab[a]);
    return s;
}
