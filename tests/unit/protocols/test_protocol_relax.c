/* test_protocol_relax.c - imaginary-time ground states against the harmonic
 * oscillator and the 1D Thomas-Fermi chemical potential. */
#include "pf_observe.h"
#include "pft.h"
#include "pf_relax.h"

#define OMEGA (2 * PF_PI * 80.0) /* invented test trap: 80 Hz */

static double *harmonic(pf_grid *g, const double *omega)
{
    size_t n = pf_grid_total(g);
    int d = pf_grid_dim(g);
    double *V = malloc(n * sizeof *V);
    for (size_t off = 0; off < n; off++) {
        size_t rest = off;
        double v = 0;
        for (int a = d - 1; a >= 0; a--) {
            size_t j = rest % pf_grid_points(g, a);
            rest /= pf_grid_points(g, a);
            double x = pf_grid_x(g, a, j);
            v += 0.5 * pft_mass("87Rb") * omega[a] * omega[a] * x * x;
        }
        V[off] = v;
    }
    return V;
}

/* A 1D trap of frequency OMEGA for 87Rb on n points spanning span_aho
 * oscillator lengths: the grid in *g, the length in *aho, V returned (the
 * caller frees it and releases the grid). */
static double *trap_1d(pf_context *ctx, size_t n, double span_aho, pf_grid **g, double *aho)
{
    *aho = sqrt(PF_HBAR / (pft_mass("87Rb") * OMEGA));
    double span = span_aho * *aho, omega1[1] = {OMEGA};
    *g = pft_grid(ctx, 1, &n, &span, NULL);
    return harmonic(*g, omega1);
}

/* Ground-state energy of the harmonic oscillator: hbar omega / 2 per axis
 * (textbook).  1D and anisotropic 2D; the start is a displaced, too-wide
 * Gaussian so the flow has work to do. */
static void test_harmonic_ground_energy(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double aho;
    pf_grid *g;
    double *V = trap_1d(ctx, 256, 24, &g, &aho);
    pft_gauss p = {.x0 = {0.7 * aho}, .sigma = {1.5 * aho}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    pf_relax_spec spec = {.potential = V, .dt = 0.002 / OMEGA, .tolerance = 1e-13, .max_steps = 200000,
                          .check_every = 20};
    pf_relax_info info;
    pft_ok(pf_wave_relax(w, &spec, &info));
    assert_true(info.converged);
    printf("note 1D relax: %zu steps\n", info.steps);
    /* Strang's fixed point is off by O(dtau^2): (0.002)^2 ~ 4e-6 relative at most. */
    pft_near(info.energy / (PF_HBAR * OMEGA), 0.5, 0, 1e-6, "1D ground energy = hbar omega / 2");
    pft_near(info.chemical_potential, info.energy, 0, 1e-30, "mu = E without mean field");
    double var;
    pft_ok(pf_wave_position_moments(w, NULL, &var));
    pft_near(sqrt(var) / aho, sqrt(0.5), 0, 1e-6, "1D ground width = sqrt(hbar / 2 m omega)");
    pf_wave_free(w);
    free(V);
    pf_grid_release(g);

    size_t n2[2] = {64, 96};
    double omega2[2] = {OMEGA, 2.5 * OMEGA};
    double span2[2] = {16 * aho, 12 * aho};
    g = pft_grid(ctx, 2, n2, span2, NULL);
    V = harmonic(g, omega2);
    pft_gauss p2 = {.x0 = {0.3 * aho, -0.2 * aho}, .sigma = {1.2 * aho, 0.9 * aho}};
    w = pft_gauss_wave(g, pft_mass("87Rb"), &p2);
    spec.potential = V;
    spec.dt = 0.004 / OMEGA;
    spec.tolerance = 1e-12;
    pft_ok(pf_wave_relax(w, &spec, &info));
    assert_true(info.converged);
    pft_near(info.energy / (PF_HBAR * OMEGA), 0.5 * (1 + 2.5), 0, 1e-5, "2D ground energy = hbar (wx + wy) / 2");
    pf_wave_free(w);
    free(V);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Thomas-Fermi limit in 1D: for large g N the chemical potential approaches
 * mu_TF = (3 g N m^(1/2) omega / (4 sqrt 2))^(2/3) (standard result of
 * neglecting the kinetic energy in the GP equation).  The kinetic energy
 * raises mu slightly above mu_TF; the relative gap must shrink with g N and
 * be below 0.05% at mu_TF = 40 hbar omega (measured 0.25% at 10, 0.019% at 40). */
static void test_thomas_fermi(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double aho;
    pf_grid *g;
    double *V = trap_1d(ctx, 1024, 28, &g, &aho);
    double gap[2];
    const double targets[2] = {10.0, 40.0};
    for (int i = 0; i < 2; i++) {
        double mu_tf = targets[i] * PF_HBAR * OMEGA;
        /* invert mu_TF for g N */
        double gN = pow(mu_tf, 1.5) * 4.0 * sqrt(2.0) / (3.0 * sqrt(pft_mass("87Rb")) * OMEGA);
        double check = pow(3.0 * gN * sqrt(pft_mass("87Rb")) * OMEGA / (4.0 * sqrt(2.0)), 2.0 / 3.0);
        pft_near(check / mu_tf, 1.0, 0, 1e-12, "mu_TF formula inverted consistently");
        pft_gauss p = {.sigma = {3 * aho}};
        pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
        /* Strang's fixed point is off by O((mu dtau / hbar)^2): keep mu dtau / hbar = 0.01. */
        pf_relax_spec spec = {.potential = V, .dt = 0.01 / (targets[i] * OMEGA), .g = gN, .tolerance = 1e-11,
                              .max_steps = 200000, .check_every = 20};
        pf_relax_info info;
        pft_ok(pf_wave_relax(w, &spec, &info));
        assert_true(info.converged);
        gap[i] = info.chemical_potential / mu_tf - 1.0;
        printf("note TF: mu_TF = %.0f hbar omega, GP mu / mu_TF - 1 = %.3e (%zu steps)\n", targets[i], gap[i],
               info.steps);
        pf_wave_free(w);
    }
    assert_true(gap[0] > 0 && gap[1] > 0);
    assert_true(gap[1] < gap[0]);
    pft_near(gap[1], 0.0, 0, 5e-4, "GP mu -> Thomas-Fermi mu at 40 hbar omega (0.05%)");
    free(V);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* The mean-field fixed point moves as dtau^2 (Strang splitting, common
 * practice): doubling mu dtau / hbar from 0.02 to 0.04 must shift mu by far
 * less than the O(dtau) shift (about 1.4e-3 relative) of a scheme whose two
 * half-steps see different norms. */
static void test_mean_field_step_order(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double aho;
    pf_grid *g;
    double *V = trap_1d(ctx, 1024, 28, &g, &aho);
    double mu_tf = 40 * PF_HBAR * OMEGA;
    double gN = pow(mu_tf, 1.5) * 4.0 * sqrt(2.0) / (3.0 * sqrt(pft_mass("87Rb")) * OMEGA);
    double mu[2];
    for (int i = 0; i < 2; i++) {
        pft_gauss p = {.sigma = {3 * aho}};
        pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
        pf_relax_spec spec = {.potential = V, .dt = (i ? 0.04 : 0.02) / (40 * OMEGA), .g = gN, .tolerance = 1e-12,
                              .max_steps = 200000, .check_every = 20};
        pf_relax_info info;
        pft_ok(pf_wave_relax(w, &spec, &info));
        assert_true(info.converged);
        mu[i] = info.chemical_potential;
        pf_wave_free(w);
    }
    pft_near(mu[1] / mu[0], 1.0, 0, 2e-5, "GP mu at mu dtau/hbar = 0.04 vs 0.02 (dtau^2 fixed point)");
    free(V);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Counts only the relaxation's own warnings (grid guards may warn too). */
static void count_relax_warnings(void *user, const char *text)
{
    if (strstr(text, "relax: not converged")) (*(int *)user)++;
}

static void test_relax_limits(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    int warnings = 0;
    pf_context_set_warn_handler(ctx, count_relax_warnings, &warnings);
    double aho;
    pf_grid *g;
    double *V = trap_1d(ctx, 64, 16, &g, &aho);
    pft_gauss p = {.sigma = {2 * aho}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    pf_relax_spec spec = {.potential = V, .dt = 0.01 / OMEGA, .tolerance = 1e-14, .max_steps = 5, .check_every = 2};
    pf_relax_info info;
    pft_ok(pf_wave_relax(w, &spec, &info));
    assert_false(info.converged);
    assert_int_equal((int)info.steps, 5);
    assert_int_equal(warnings, 1); /* "not converged" */
    spec.tolerance = 0;
    assert_int_equal(pf_wave_relax(w, &spec, &info), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "tolerance"));
    pf_wave_free(w);
    free(V);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_harmonic_ground_energy),
        cmocka_unit_test(test_thomas_fermi),
        cmocka_unit_test(test_mean_field_step_order),
        cmocka_unit_test(test_relax_limits),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
