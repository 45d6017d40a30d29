/* test_frame.c - the moving frame's closed-form advance (pf_frame_advance)
 * and its bookkeeping (pf_wave_fly_in_frame, kicks into the frame).
 *
 * References: the frame's phase obeys theta' = L / hbar with the classical
 * Lagrangian L = m v^2 / 2 + m a.x of a particle on x(t) = X0 + V0 t + a t^2/2
 * (Avron-Herbst form; the phase is the classical action, Feynman and Hibbs,
 * Quantum Mechanics and Path Integrals, ch. 3, from memory).  The action is
 * integrated here numerically with GSL's adaptive quadrature
 * (gsl_integration_qag), an outside reference for the closed form.
 * The lab density window (pf_wave_lab_density_window) against the closed-form
 * density of a Gaussian under a uniform force: centre a t^2/2 (Newton) and the
 * free width law sigma sqrt(1 + (hbar t / 2 m sigma^2)^2) (textbook free
 * spreading, from memory). */
#include <gsl/gsl_integration.h>
#include "pft.h"
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_frame.h"

typedef struct path { double x0, v0, a, m; } path;

static double lagrangian(double s, void *user)
{
    const path *p = user;
    double v = p->v0 + p->a * s, x = p->x0 + p->v0 * s + 0.5 * p->a * s * s;
    return 0.5 * p->m * v * v + p->m * p->a * x;
}

static void test_advance_matches_action_integral(void **state)
{
    (void)state;
    const double m = pft_mass("87Rb");
    pf_frame f = {{12e-6, -3e-6, 0.5e-3}, {2e6, -1e7, 3e5}, 0.25};
    const double acc[3] = {0.3, -9.80665, 1.7};
    const double t = 4e-3;
    pf_frame g = f;
    pf_frame_advance(&g, 3, m, t, acc);
    gsl_integration_workspace *ws = gsl_integration_workspace_alloc(64);
    double action = 0.0;
    for (int a = 0; a < 3; a++) {
        path p = {f.position[a], PF_HBAR * f.wavenumber[a] / m, acc[a], m};
        gsl_function fn = {lagrangian, &p};
        double r, err;
        gsl_integration_qag(&fn, 0.0, t, 0.0, 1e-13, 64, GSL_INTEG_GAUSS61, ws, &r, &err);
        action += r;
        double x = f.position[a] + p.v0 * t + 0.5 * acc[a] * t * t;
        pft_near(g.position[a], x, 0, 1e-14 * fabs(x), "X(t) = X0 + V0 t + a t^2/2 (Newton)");
        double k = f.wavenumber[a] + m * acc[a] * t / PF_HBAR;
        pft_near(g.wavenumber[a], k, 0, 1e-14 * fabs(k), "K(t) = K0 + m a t / hbar (Newton)");
    }
    gsl_integration_workspace_free(ws);
    double want = f.phase + action / PF_HBAR;
    pft_near(g.phase, want, 0, 1e-12 * fabs(want), "theta(t) - theta0 = action / hbar (GSL quadrature)");
}

/* Two steps compose to one: the frame advance is the exact flow of a
 * time-independent problem (group property; common practice). */
static void test_advance_composes(void **state)
{
    (void)state;
    const double m = pft_mass("87Rb"), acc[2] = {-2.0, -9.80665};
    pf_frame one = {{1e-6, 2e-6}, {3e6, -4e6}, 1.0}, two = one;
    pf_frame_advance(&one, 2, m, 5e-3, acc);
    pf_frame_advance(&two, 2, m, 2e-3, acc);
    pf_frame_advance(&two, 2, m, 3e-3, acc);
    for (int a = 0; a < 2; a++) {
        pft_near(two.position[a], one.position[a], 0, 1e-14 * fabs(one.position[a]), "X composes");
        pft_near(two.wavenumber[a], one.wavenumber[a], 0, 1e-14 * fabs(one.wavenumber[a]), "K composes");
    }
    pft_near(two.phase, one.phase, 0, 1e-12 * fabs(one.phase), "theta composes");
}

static void test_fly_in_frame_bookkeeping(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 256;
    double span = 40e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss p = {.sigma = {2e-6}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    assert_false(pf_wave_frame_moved(w));
    /* No acceleration, unmoved frame: plain free flight, frame untouched. */
    pft_ok(pf_wave_fly_in_frame(w, 1e-3, NULL));
    assert_false(pf_wave_frame_moved(w));
    double a = NAN;
    assert_int_equal(pf_wave_fly_in_frame(w, 1e-3, &a), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "acceleration on axis 1"));
    assert_false(pf_wave_frame_moved(w));
    a = -9.80665;
    pft_ok(pf_wave_fly_in_frame(w, 1e-3, &a));
    assert_true(pf_wave_frame_moved(w));
    /* A kick into the frame at X: K += q, theta += q X. */
    pf_frame before, after;
    pf_wave_frame(w, &before);
    double q = 1e6;
    pft_ok(pf_wave_frame_kick(w, &q));
    pf_wave_frame(w, &after);
    assert_true(after.wavenumber[0] == before.wavenumber[0] + q);
    assert_true(after.phase == before.phase + q * before.position[0]);
    pf_frame bad = after;
    bad.phase = INFINITY;
    assert_int_equal(pf_wave_set_frame(w, &bad), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void test_lab_density_window(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 256;
    double span = 40e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    const double sigma = 1e-6, t = 1e-3, m = pft_mass("87Rb");
    pft_gauss p = {.sigma = {sigma}};
    pf_wave *w = pft_gauss_wave(g, m, &p);
    double a = -9.80665;
    pft_ok(pf_wave_fly_in_frame(w, t, &a));
    pf_frame before;
    pf_wave_frame(w, &before);
    const double dx = pf_grid_spacing(g, 0);
    /* The frame offset is not a whole number of cells: the window needs the
     * sub-cell shift. */
    double cells = before.position[0] / dx;
    assert_true(fabs(cells - round(cells)) > 0.2);
    const double c = 0.5 * a * t * t;
    const double s = sigma * sqrt(1 + pow(PF_HBAR * t / (2 * m * sigma * sigma), 2));
    const double peak = 1 / sqrt(2 * PF_PI * s * s);
    double out[200];
    const double lo = -20e-6;
    pft_ok(pf_wave_lab_density_window(w, lo, 200, out));
    double worst = 0;
    for (size_t i = 0; i < 200; i++) {
        double x = lo + (double)i * dx;
        double want = peak * exp(-(x - c) * (x - c) / (2 * s * s));
        worst = fmax(worst, fabs(out[i] - want));
    }
    pft_near(worst / peak, 0.0, 0, 1e-12, "lab density window vs the closed-form falling Gaussian");
    /* Beyond the co-moving grid (its lab end is X + 20 um): zero. */
    pft_ok(pf_wave_lab_density_window(w, 10e-6, 100, out));
    assert_true(out[99] == 0.0);
    assert_true(out[0] > 0.0);
    pf_frame after;
    pf_wave_frame(w, &after);
    assert_true(after.position[0] == before.position[0] && after.phase == before.phase);
    size_t n2[2] = {8, 8};
    double span2[2] = {1e-6, 1e-6};
    pf_grid *g2 = pft_grid(ctx, 2, n2, span2, NULL);
    pf_wave *w2 = NULL;
    pft_ok(pf_wave_new(g2, m, &w2));
    assert_int_equal(pf_wave_lab_density_window(w2, 0, 4, out), PF_EINVAL);
    pf_wave_free(w2);
    pf_grid_release(g2);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_advance_matches_action_integral),
        cmocka_unit_test(test_advance_composes),
        cmocka_unit_test(test_fly_in_frame_bookkeeping),
        cmocka_unit_test(test_lab_density_window),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
