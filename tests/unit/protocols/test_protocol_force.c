/* test_protocol_force.c - exact flight under a uniform force (pf_wave_fall)
 * against classical kinematics and against force-free flight. */
#include "pf_observe.h"
#include "pft.h"
#include "pf_flight.h"
#include "pf_force.h"
#include "pf_splitstep.h"

/* <x>(t) = x0 + v0 t + a t^2 / 2 (Ehrenfest's theorem is exact for a linear
 * potential; classical kinematics) and the width identical to the free
 * flight of the same state (the force only translates and kicks; Avron-Herbst
 * factorisation), both to 1e-10. */
static void test_fall_kinematics_1d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 4096;
    double span = 400e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    const double m = pft_mass("87Rb"), v0 = 2.0e-3, a = -9.80665; /* standard gravity (CGPM 1901) */
    pft_gauss p = {.x0 = {30e-6}, .sigma = {3e-6}, .k0 = {m * v0 / PF_HBAR}};
    pf_wave *w = pft_gauss_wave(g, m, &p), *free_w = NULL;
    pft_ok(pf_wave_copy(w, &free_w));
    double x0, var0;
    pft_ok(pf_wave_position_moments(w, &x0, &var0));
    const double t = 1e-3;
    pft_ok(pf_wave_fall(w, t, &a));
    pft_ok(pf_wave_fly(free_w, t));
    double x, var, xf, varf, k, kvar;
    pft_ok(pf_wave_position_moments(w, &x, &var));
    pft_ok(pf_wave_position_moments(free_w, &xf, &varf));
    double want = x0 + v0 * t + 0.5 * a * t * t;
    pft_near(x, want, 0, 1e-10 * fabs(want), "fall <x>(t) = x0 + v0 t + a t^2/2");
    pft_near(sqrt(var) / sqrt(varf), 1.0, 0, 1e-10, "fall width / free-flight width");
    pft_ok(pf_wave_wavenumber_moments(w, &k, &kvar));
    double kwant = m * (v0 + a * t) / PF_HBAR;
    pft_near(k, kwant, 0, 1e-10 * fabs(kwant), "fall <p>(t) = m (v0 + a t)");
    assert_true(pf_wave_clock(w) == t);
    pf_wave_free(w);
    pf_wave_free(free_w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* 2D: gravity along y, none along x (classical kinematics per axis). */
static void test_fall_kinematics_2d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {128, 2048};
    double span[2] = {60e-6, 120e-6};
    pf_grid *g = pft_grid(ctx, 2, n, span, NULL);
    const double m = pft_mass("87Rb"), a[2] = {0.0, -9.80665};
    pft_gauss p = {.x0 = {2e-6, 20e-6}, .sigma = {2.5e-6, 3e-6}, .k0 = {m * 1e-3 / PF_HBAR, 0}};
    pf_wave *w = pft_gauss_wave(g, m, &p), *free_w = NULL;
    pft_ok(pf_wave_copy(w, &free_w));
    const double t = 1e-3;
    pft_ok(pf_wave_fall(w, t, a));
    pft_ok(pf_wave_fly(free_w, t));
    double x[2], v[2], xf[2], vf[2];
    pft_ok(pf_wave_position_moments(w, x, v));
    pft_ok(pf_wave_position_moments(free_w, xf, vf));
    pft_near(x[0], 2e-6 + 1e-3 * t, 0, 1e-10 * (2e-6 + 1e-3 * t), "fall 2D <x> (no force on x)");
    double wy = 20e-6 + 0.5 * a[1] * t * t;
    pft_near(x[1], wy, 0, 1e-10 * fabs(wy), "fall 2D <y> = y0 - g t^2/2");
    pft_near(sqrt(v[0] / vf[0]), 1.0, 0, 1e-10, "fall 2D width x / free");
    pft_near(sqrt(v[1] / vf[1]), 1.0, 0, 1e-10, "fall 2D width y / free");
    pf_wave_free(w);
    pf_wave_free(free_w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static int linear_potential(void *user, double t, double *V)
{
    (void)user;
    (void)t;
    (void)V;
    return 0;
}

/* The closed form, global phase included, agrees with split-step flight in
 * V = -m a x: for a linear potential the Strang splitting is exact up to the
 * order-h^2 commutator terms, so at small h the two states must coincide
 * (internal cross-check of the phase -m a^2 t^3 / 6 hbar; the physics
 * reference is the kinematics test above). */
static void test_fall_matches_splitstep(void **state)
{
    (void)state;
    (void)linear_potential;
    pf_context *ctx = pft_context();
    size_t n = 2048;
    double span = 200e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    const double m = pft_mass("87Rb"), a = -9.80665;
    pft_gauss p = {.x0 = {20e-6}, .sigma = {3e-6}, .k0 = {0}};
    pf_wave *w = pft_gauss_wave(g, m, &p), *s = NULL;
    pft_ok(pf_wave_copy(w, &s));
    double *V = malloc(n * sizeof *V);
    for (size_t i = 0; i < n; i++) V[i] = -m * a * pf_grid_x(g, 0, i);
    const double t = 1e-3;
    pft_ok(pf_wave_fall(w, t, &a));
    pf_evolve_spec spec = {.potential = V, .dt = t / 200, .order = 4};
    pf_context_set_warn_handler(ctx, pft_count_warning, NULL); /* the linear ramp spans a large phase */
    pft_ok(pf_wave_evolve(s, t, &spec, NULL));
    double diff = pft_difference(w, s);
    pft_near(diff, 0.0, 0, 1e-9, "fall vs split-step in V = -m a x (with phase)");
    free(V);
    pf_wave_free(w);
    pf_wave_free(s);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void test_fall_rejects_bad_input(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 64;
    double span = 1e-5;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss p = {.sigma = {1e-6}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    double a = NAN, ok = 1.0;
    assert_int_equal(pf_wave_fall(w, 1e-3, &a), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "acceleration on axis 1"));
    assert_int_equal(pf_wave_fall(w, INFINITY, &ok), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "time must be finite"));
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_fall_kinematics_1d),
        cmocka_unit_test(test_fall_kinematics_2d),
        cmocka_unit_test(test_fall_matches_splitstep),
        cmocka_unit_test(test_fall_rejects_bad_input),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
