/* test_flux.c - probability current, plane flux and arrival times against the
 * continuity equation and the analytic free Gaussian packet. */
#include <gsl/gsl_integration.h>
#include <stdlib.h>
#include <string.h>
#include "pft.h"
#include "pf_flight.h"
#include "pf_flux.h"
#include "pf_frame.h"
#include "pf_guard.h"
#include "pf_observe.h"

/* Free Gaussian packet (textbook form, e.g. any quantum-mechanics text's
 * spreading wave packet): |psi|^2 width sigma0 at t = 0, centre x0, mean wave
 * number k0; tau = hbar t / (2 m sigma0^2), b = x - x0 - v t:
 *   |psi|^2 = exp(-b^2 / (2 sigma0^2 (1 + tau^2))) / sqrt(2 pi sigma0^2 (1 + tau^2)),
 *   j = (hbar/m) |psi|^2 (k0 + b tau / (2 sigma0^2 (1 + tau^2))). */
typedef struct packet { double x0, s0, k0, m, L; } packet;

static double analytic_flux(double t, void *user)
{
    const packet *p = user;
    double tau = PF_HBAR * t / (2 * p->m * p->s0 * p->s0);
    double v = PF_HBAR * p->k0 / p->m;
    double b = p->L - p->x0 - v * t, q = 1 + tau * tau;
    double rho = exp(-b * b / (2 * p->s0 * p->s0 * q)) / sqrt(2 * PF_PI * p->s0 * p->s0 * q);
    return PF_HBAR / p->m * rho * (p->k0 + b * tau / (2 * p->s0 * p->s0 * q));
}

static pf_wave *moving_packet(pf_context *ctx, packet *p)
{
    pf_grid *g = pft_grid1(ctx, 512, 200e-6, 0.0);
    p->m = pft_mass("87Rb");
    p->x0 = -30e-6;
    p->s0 = 2e-6;
    p->k0 = pft_mass("87Rb") * 2e-3 / PF_HBAR; /* 2 mm/s */
    p->L = 0.3e-6;                    /* plane between grid points */
    pft_gauss gs = {1, {p->x0}, {p->s0}, {p->k0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    pf_grid_release(g);
    return w;
}

static double beyond_at(pf_wave *w, double t, double L)
{
    pf_wave *c;
    pft_ok(pf_wave_copy(w, &c));
    pft_ok(pf_wave_fly(c, t));
    double P;
    pft_ok(pf_wave_beyond(c, 0, L, &P));
    pf_wave_free(c);
    return P;
}

/* Continuity equation (conservation of probability): dP_beyond/dt = J. */
static void continuity_1d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    packet p;
    pf_wave *w = moving_packet(ctx, &p);
    double times[] = {10e-3, 15e-3, 20e-3};
    for (int i = 0; i < 3; i++) {
        /* Sixth-order central difference (Fornberg's coefficients
         * -1, 9, -45, 0, 45, -9, 1 over 60 h), truncation ~ h^6. */
        double t = times[i], h = 1e-5;
        double dP = (-beyond_at(w, t - 3 * h, p.L) + 9 * beyond_at(w, t - 2 * h, p.L) - 45 * beyond_at(w, t - h, p.L) +
                     45 * beyond_at(w, t + h, p.L) - 9 * beyond_at(w, t + 2 * h, p.L) + beyond_at(w, t + 3 * h, p.L)) /
                    (60 * h);
        pf_wave *c;
        pft_ok(pf_wave_copy(w, &c));
        pft_ok(pf_wave_fly(c, t));
        double J;
        pft_ok(pf_wave_flux(c, 0, p.L, &J));
        pf_wave_free(c);
        pft_near(dP, J, 0, 1e-8 * fabs(J), "continuity equation dP/dt = J (conservation law)");
    }
    pf_wave_free(w);
    pf_context_release(ctx);
}

/* Oblique packet on a 2D grid: the transverse integration of the flux. */
static void continuity_2d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {384, 128};
    double span[2] = {200e-6, 120e-6}, origin[2] = {0, 0};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    double k0 = pft_mass("87Rb") * 2e-3 / PF_HBAR;
    pft_gauss gs = {2, {-30e-6, 3e-6}, {2e-6, 3e-6}, {k0, 0.3 * k0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    double t = 14e-3, h = 2e-6, L = 0.1e-6;
    double P[6], off[6] = {-3, -2, -1, 1, 2, 3};
    for (int i = 0; i < 6; i++) P[i] = beyond_at(w, t + off[i] * h, L);
    double dP = (-P[0] + 9 * P[1] - 45 * P[2] + 45 * P[3] - 9 * P[4] + P[5]) / (60 * h);
    pft_ok(pf_wave_fly(w, t));
    /* The region is [L, far cell edge b]: what leaves through b (the state
     * has spread to the box edge by now) counts too, dP/dt = J(L) - J(b). */
    double J, Jb, b = pf_grid_x(g, 0, 0) - 0.5 * pf_grid_spacing(g, 0) + span[0];
    pft_ok(pf_wave_flux(w, 0, L, &J));
    pft_ok(pf_wave_flux(w, 0, b, &Jb));
    pft_near(dP, J - Jb, 0, 1e-10 * fabs(J), "continuity equation in 2D (conservation law)");
    /* The current map integrates to the plane flux's neighbourhood too:
     * at a grid plane, the sum of j over the transverse points times dy. */
    double *j = malloc(pf_grid_total(g) * sizeof *j);
    pft_ok(pf_wave_current(w, 0, j));
    size_t i0 = n[0] / 2; /* x = 0, a grid plane */
    double Jg = 0;
    for (size_t k = 0; k < n[1]; k++) Jg += j[i0 * n[1] + k] * pf_grid_spacing(g, 1);
    double Jp;
    pft_ok(pf_wave_flux(w, 0, pf_grid_x(g, 0, i0), &Jp));
    pft_near(Jg, Jp, 0, 1e-10 * fabs(Jp), "current map vs plane flux (trapezoid exact for periodic band-limited)");
    free(j);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Arrival-time distribution at distance L against the analytic flux of the
 * free Gaussian, and the arrived probability against GSL's adaptive
 * quadrature (gsl_integration_qag) of the analytic flux. */
static void arrival_vs_analytic(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    packet p;
    pf_wave *w = moving_packet(ctx, &p);
    enum { NT = 2001 };
    double t0 = 0, t1 = 40e-3, dt = (t1 - t0) / (NT - 1);
    double *J = malloc(NT * sizeof *J);
    pft_ok(pf_wave_arrival(w, &(pf_arrival_window){0, p.L, t0, dt, NT}, J));
    double peak = 0, worst = 0;
    for (int k = 0; k < NT; k++) peak = fmax(peak, fabs(analytic_flux(t0 + k * dt, &p)));
    for (int k = 0; k < NT; k++) worst = fmax(worst, fabs(J[k] - analytic_flux(t0 + k * dt, &p)));
    pft_near(worst / peak, 0, 0, 1e-9, "J(t) vs analytic free-Gaussian flux (textbook)");
    /* Simpson's rule over the engine's samples. */
    double simpson = J[0] + J[NT - 1];
    for (int k = 1; k < NT - 1; k++) simpson += (k % 2 ? 4 : 2) * J[k];
    simpson *= dt / 3;
    gsl_integration_workspace *ws = gsl_integration_workspace_alloc(1000);
    gsl_function F = {analytic_flux, &p};
    double ref, err;
    gsl_integration_qag(&F, t0, t1, 1e-14, 1e-12, 1000, GSL_INTEG_GAUSS61, ws, &ref, &err);
    gsl_integration_workspace_free(ws);
    pft_near(simpson, ref, 0, 1e-8, "arrived probability vs GSL qag of the analytic flux");
    assert_true(ref > 0.99);
    /* The wave itself is unchanged by the arrival-time computation. */
    pft_near(pf_wave_clock(w), 0, 0, 0, "arrival series leaves the state alone");
    free(J);
    pf_wave_free(w);
    pf_context_release(ctx);
}

/* A real state carries no current (j = (hbar/m) Im(psi* psi') = 0 for real
 * psi, definition), even with content at the Nyquist wave number; and the
 * continuity equation still holds for a moving state with such content. */
typedef struct nyq { double s, k0, a; } nyq;
static int nyq_fn(void *user, const double *x, double complex *v)
{
    const nyq *p = user;
    /* A Gaussian plus a term that alternates in sign from point to point
     * (pure Nyquist content on the grid of the test: dx = 200 um / 512). */
    double j = nearbyint(x[0] / (200e-6 / 512));
    *v = exp(-x[0] * x[0] / (4 * p->s * p->s)) * cexp(I * p->k0 * x[0]) + p->a * (fmod(fabs(j), 2) ? -1 : 1) *
         exp(-x[0] * x[0] / (4 * 25 * p->s * p->s));
    return 0;
}

static void nyquist_content(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pft_ok(pf_context_set_guard_threshold(ctx, INFINITY)); /* Nyquist content on purpose */
    pf_grid *g = pft_grid1(ctx, 512, 200e-6, 0.0);
    pf_wave *w;
    nyq real = {3e-6, 0, 0.2};
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, nyq_fn, &real));
    pft_ok(pf_wave_normalize(w));
    double J, *j = malloc(512 * sizeof *j), worst = 0;
    pft_ok(pf_wave_flux(w, 0, 0.7e-6, &J));
    pft_near(J, 0, 0, 1e-12, "flux of a real state is zero (definition of j)");
    pft_ok(pf_wave_current(w, 0, j));
    for (int i = 0; i < 512; i++) worst = fmax(worst, fabs(j[i]));
    pft_near(worst, 0, 0, 1e-10, "current map of a real state is zero (definition of j)");
    pf_wave_free(w);
    nyq moving = {3e-6, pft_mass("87Rb") * 2e-3 / PF_HBAR, 0.2};
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, nyq_fn, &moving));
    pft_ok(pf_wave_normalize(w));
    double t = 3e-3, h = 1e-6, L = 2.1e-6; /* h resolves the Nyquist mode's phase rate */
    double dP = (-beyond_at(w, t - 3 * h, L) + 9 * beyond_at(w, t - 2 * h, L) - 45 * beyond_at(w, t - h, L) +
                 45 * beyond_at(w, t + h, L) - 9 * beyond_at(w, t + 2 * h, L) + beyond_at(w, t + 3 * h, L)) /
                (60 * h);
    pft_ok(pf_wave_fly(w, t));
    double Jb, b = pf_grid_x(g, 0, 0) - 0.5 * pf_grid_spacing(g, 0) + 200e-6;
    pft_ok(pf_wave_flux(w, 0, L, &J));
    pft_ok(pf_wave_flux(w, 0, b, &Jb));
    pft_near(dP, J - Jb, 0, 1e-8 * fabs(J), "continuity with Nyquist content: dP/dt = J(L) - J(b) (conservation law)");
    free(j);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void plane_outside_grid_fails(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    packet p;
    pf_wave *w = moving_packet(ctx, &p);
    double J;
    assert_int_equal(pf_wave_flux(w, 0, 1.0, &J), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "outside the grid"));
    assert_int_equal(pf_wave_flux(w, 1, 0.0, &J), PF_EINVAL);
    pf_wave_free(w);
    pf_context_release(ctx);
}

/* The one arrival window (pf_arrival_window) is checked the same way by
 * the grid-plane and the lab-plane arrival series: a step that is not
 * positive or an empty window is refused with a message, before any flight. */
static void arrival_window_refused(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    packet p;
    pf_wave *w = moving_packet(ctx, &p);
    double J[4];
    const pf_arrival_window no_step = {0, p.L, 0.0, 0.0, 4}, empty = {0, p.L, 0.0, 1e-3, 0};
    assert_int_equal(pf_wave_arrival(w, &no_step, J), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "positive step"));
    assert_int_equal(pf_wave_lab_arrival(w, NULL, &no_step, J), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "positive step"));
    assert_int_equal(pf_wave_arrival(w, &empty, J), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "at least one time"));
    assert_int_equal(pf_wave_lab_arrival(w, NULL, &empty, J), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "at least one time"));
    pf_wave_free(w);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(continuity_1d),
        cmocka_unit_test(continuity_2d),
        cmocka_unit_test(arrival_vs_analytic),
        cmocka_unit_test(nyquist_content),
        cmocka_unit_test(plane_outside_grid_fails),
        cmocka_unit_test(arrival_window_refused),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
