/* test_expand.c - mean-field expansion in the Castin-Dum scaled frame
 * (pf_expand.c): the free Gaussian width law, the same expansion on a fixed
 * large grid, continuation, handover, the virial release frequency and the
 * refusals. */
#include "pf_observe.h"
#include "pft.h"
#include "pf_expand.h"
#include "pf_relax.h"
#include "pf_splitstep.h"

/* Invented test scenario: 87Rb released from a 100 Hz trap. */
#define OMEGA (2 * PF_PI * 100.0)

static double aho(void) { return sqrt(PF_HBAR / (pft_mass("87Rb") * OMEGA)); }

static double *harmonic(pf_grid *g, const double *omega)
{
    size_t n = pf_grid_total(g);
    int d = pf_grid_dim(g);
    double *V = malloc(n * sizeof *V);
    size_t idx[3] = {0, 0, 0};
    for (size_t i = 0; i < n; i++) {
        double v = 0;
        for (int a = 0; a < d; a++) {
            double x = pf_grid_x(g, a, idx[a]);
            v += 0.5 * pft_mass("87Rb") * omega[a] * omega[a] * x * x;
        }
        V[i] = v;
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < pf_grid_points(g, a)) break;
            idx[a] = 0;
        }
    }
    return V;
}

/* Mean-field ground state of the trap by imaginary time. */
static pf_wave *ground(pf_grid *g, const double *omega, double gN)
{
    double *V = harmonic(g, omega);
    pft_gauss p = {.sigma = {3 * aho(), 3 * aho(), 3 * aho()}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    pf_relax_spec spec = {.potential = V, .dt = 0.05 / (15 * OMEGA), .g = gN, .tolerance = 1e-10,
                          .max_steps = 200000, .check_every = 20};
    pf_relax_info info;
    pft_ok(pf_wave_relax(w, &spec, &info));
    assert_true(info.converged);
    free(V);
    return w;
}

/* g N of a 1D Thomas-Fermi cloud with chemical potential mu:
 * mu = (3 g N sqrt(m) omega / (4 sqrt 2))^(2/3) (integral of the inverted
 * parabola; textbook Thomas-Fermi, as in test_protocol_relax.c). */
static double gN_for_mu_1d(double mu) { return pow(mu, 1.5) * 4.0 * sqrt(2.0) / (3.0 * sqrt(pft_mass("87Rb")) * OMEGA); }

/* The same samples on a larger grid of the same spacing and origin (zero
 * outside), so both runs start from one state. */
static pf_wave *embed(pf_wave *src, pf_grid *big)
{
    const pf_grid *gs = pf_wave_grid(src);
    int d = pf_grid_dim(gs);
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(big, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_to(src, PF_POSITION));
    const double complex *z = pf_wave_data(src);
    double complex *out = pf_wave_data(w);
    size_t idx[3] = {0, 0, 0};
    for (size_t i = 0; i < pf_grid_total(gs); i++) {
        size_t off = 0;
        for (int a = 0; a < d; a++) {
            assert_true(fabs(pf_grid_spacing(gs, a) / pf_grid_spacing(big, a) - 1) < 1e-12);
            off = off * pf_grid_points(big, a) + idx[a] + pf_grid_points(big, a) / 2 - pf_grid_points(gs, a) / 2;
        }
        out[off] = z[i];
        for (int a = d - 1; a >= 0; a--) {
            if (++idx[a] < pf_grid_points(gs, a)) break;
            idx[a] = 0;
        }
    }
    pft_ok(pf_wave_normalize(w));
    return w;
}

typedef struct shape {
    double var[3], peak, quartic;
} shape;

/* Widths (variance per axis), density at the grid's origin (a sample on
 * every grid here, unlike the maximum, which picks the highest ripple) and
 * integral rho^2 of a state. */
static shape shape_of(pf_wave *w)
{
    shape s;
    memset(&s, 0, sizeof s);
    pft_ok(pf_wave_position_moments(w, NULL, s.var));
    pft_ok(pf_wave_to(w, PF_POSITION));
    const pf_grid *g = pf_wave_grid(w);
    const double complex *z = pf_wave_data(w);
    double sum = 0, sum2 = 0;
    size_t centre = 0;
    for (int a = 0; a < pf_grid_dim(g); a++) centre = centre * pf_grid_points(g, a) + pf_grid_points(g, a) / 2;
    s.peak = creal(z[centre]) * creal(z[centre]) + cimag(z[centre]) * cimag(z[centre]);
    for (size_t i = 0; i < pf_grid_total(g); i++) {
        double r = creal(z[i]) * creal(z[i]) + cimag(z[i]) * cimag(z[i]);
        sum += r;
        sum2 += r * r;
    }
    double dv = pf_grid_cell_volume(g);
    s.peak /= sum * dv;
    s.quartic = sum2 / (sum * sum * dv);
    return s;
}

/* Exact free spreading of a minimum-uncertainty Gaussian (textbook):
 * density width sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2), which
 * for the oscillator ground state (sigma0^2 = hbar / 2 m omega) is
 * sigma0 sqrt(1 + omega^2 t^2).  The closed-form psi(x, t) is the Gaussian
 * with complex width; compared sample by sample on the expanded grid. */
typedef struct free_gauss {
    int dim;
    double sigma0[3], t;
} free_gauss;

static int free_gauss_fn(void *user, const double *x, double complex *v)
{
    const free_gauss *p = user;
    double complex z = 1.0;
    for (int a = 0; a < p->dim; a++) {
        double s0 = p->sigma0[a];
        double complex st = s0 * (1.0 + I * PF_HBAR * p->t / (2 * pft_mass("87Rb") * s0 * s0));
        z *= cexp(-x[a] * x[a] / (4 * s0 * st)) / csqrt(st);
    }
    *v = z;
    return 0;
}

static void test_ballistic_gaussian(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {64, 48};
    double span[2] = {16 * aho(), 16 * aho()}, omega[2] = {OMEGA, 0.5 * OMEGA};
    pf_grid *g = pft_grid(ctx, 2, n, span, NULL);
    free_gauss fg = {.dim = 2};
    for (int a = 0; a < 2; a++) fg.sigma0[a] = sqrt(PF_HBAR / (2 * pft_mass("87Rb") * omega[a]));
    for (int with_omega = 0; with_omega < 2; with_omega++) {
        pf_wave *w = NULL;
        pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
        pft_ok(pf_wave_fill(w, PF_POSITION, free_gauss_fn, &fg));
        pft_ok(pf_wave_normalize(w));
        double t = 30e-3; /* omega t = 19: the cloud grows about 19-fold on axis 1 */
        /* Fourth order: the Strang propagator's own fixed point differs from
         * the oscillator ground state by O((omega h)^2), which would dominate. */
        pf_expand_spec sp = {.scaling = PF_SCALING_BALLISTIC, .order = 4};
        if (with_omega) memcpy(sp.omega, omega, sizeof omega);
        pf_expand_info info;
        pft_ok(pf_wave_expand(w, t, &sp, &info));
        /* The virial estimate of a harmonic ground state is its trap frequency. */
        pft_near(info.omega[0] / OMEGA, 1.0, 0, 1e-9, "release omega, axis 1 (given or from the virial relation)");
        pft_near(info.omega[1] / (0.5 * OMEGA), 1.0, 0, 1e-9, "release omega, axis 2");
        for (int a = 0; a < 2; a++)
            pft_near(info.lambda[a] / sqrt(1 + omega[a] * omega[a] * t * t), 1.0, 0, 1e-9, "ballistic lambda = sqrt(1 + omega^2 t^2) (Gaussian width law)");
        pf_grid *ge = pf_wave_grid(w);
        assert_true(pf_grid_spacing(ge, 0) > 15 * pf_grid_spacing(g, 0));
        pf_wave *exact = NULL;
        fg.t = t;
        pft_ok(pf_wave_new(ge, pft_mass("87Rb"), &exact));
        pft_ok(pf_wave_fill(exact, PF_POSITION, free_gauss_fn, &fg));
        pft_ok(pf_wave_normalize(exact));
        fg.t = 0;
        double dist = pft_distance(w, exact);
        pft_near(dist, 0.0, 0, 1e-6, "expanded state = closed-form free Gaussian, sample by sample, with its chirp");
        printf("note ballistic: %zu steps\n", info.steps);
        pf_wave_free(exact);
        pf_wave_free(w);
    }
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* One Thomas-Fermi cloud (mu = 15 hbar omega) released for t: the scaled
 * frame on a grid just larger than the cloud against plain split-step
 * evolution on a grid 8 times as wide with the same spacing.  Both are
 * discretisations of the same Gross-Pitaevskii equation, so widths, central
 * density and integral rho^2 must agree to the discretisation error. */
static void compare_1d(pf_expand_scaling law, int order, double tol, const char *what)
{
    pf_context *ctx = pft_context();
    pf_context_set_warn_handler(ctx, pft_count_warning, NULL);
    double gN = gN_for_mu_1d(15 * PF_HBAR * OMEGA), R = sqrt(2 * 15 * PF_HBAR * OMEGA / (pft_mass("87Rb") * OMEGA * OMEGA));
    size_t ns = 256, nb = 2048;
    double spans = 2.6 * R, spanb = spans * nb / ns, omega[1] = {OMEGA};
    pf_grid *gs = pft_grid(ctx, 1, &ns, &spans, NULL), *gb = pft_grid(ctx, 1, &nb, &spanb, NULL);
    pf_wave *ws = ground(gs, omega, gN), *wb = embed(ws, gb);
    double t = 4e-3; /* omega t = 2.5 */
    pf_expand_spec sp = {.g = gN, .scaling = law, .order = order};
    memcpy(sp.omega, omega, sizeof omega);
    pf_expand_info info;
    pft_ok(pf_wave_expand(ws, t, &sp, &info));
    pf_evolve_spec ev = {.g = gN, .order = 4, .dt = 2e-6};
    pft_ok(pf_wave_evolve(wb, t, &ev, NULL));
    shape a = shape_of(ws), b = shape_of(wb);
    printf("note %s: %zu steps, lambda %.6f, width ratio %.6f\n", what, info.steps, info.lambda[0],
           sqrt(a.var[0] / b.var[0]));
    char buf[160];
    snprintf(buf, sizeof buf, "%s: width vs fixed large grid", what);
    pft_near(sqrt(a.var[0] / b.var[0]), 1.0, 0, tol, buf);
    /* The central sample differs by about 1e-4 even with 800 steps: the two
     * grids resolve the healing-length ripples differently (measured). */
    snprintf(buf, sizeof buf, "%s: central density vs fixed large grid", what);
    pft_near(a.peak / b.peak, 1.0, 0, 30 * tol, buf);
    snprintf(buf, sizeof buf, "%s: int rho^2 vs fixed large grid", what);
    pft_near(a.quartic / b.quartic, 1.0, 0, 3 * tol, buf);
    assert_true(info.lambda[0] > 2.0); /* the grid really expanded */
    pf_wave_free(ws);
    pf_wave_free(wb);
    pf_grid_release(gs);
    pf_grid_release(gb);
    pf_context_release(ctx);
}

static void test_castin_dum_vs_fixed_grid(void **state)
{
    (void)state;
    compare_1d(PF_SCALING_CASTIN_DUM, 2, 1e-5, "castin-dum, Strang");
    compare_1d(PF_SCALING_CASTIN_DUM, 4, 1e-5, "castin-dum, Yoshida");
    compare_1d(PF_SCALING_BALLISTIC, 2, 1e-4, "ballistic frame, interacting cloud");
}

/* 2D: an anisotropic cloud; the scaled run on 64 x 48 points against plain
 * evolution on 192 x 144 points of the same spacing. */
static void test_2d_vs_fixed_grid(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_context_set_warn_handler(ctx, pft_count_warning, NULL);
    double omega[2] = {OMEGA, 0.6 * OMEGA};
    /* 2D Thomas-Fermi: mu = sqrt(g N m omega_x omega_y / pi) (textbook); choose mu = 8 hbar omega_x. */
    double mu = 8 * PF_HBAR * OMEGA, gN = PF_PI * mu * mu / (pft_mass("87Rb") * omega[0] * omega[1]);
    double Rx = sqrt(2 * mu / (pft_mass("87Rb") * omega[0] * omega[0])), Ry = Rx * omega[0] / omega[1];
    size_t ns[2] = {64, 48}, nb[2] = {192, 144};
    double spans[2] = {2.8 * Rx, 2.8 * Ry};
    /* the same spacing on both grids: 3 times the span */
    double spanb[2] = {3 * spans[0], 3 * spans[1]};
    pf_grid *gs = pft_grid(ctx, 2, ns, spans, NULL), *gb = pft_grid(ctx, 2, nb, spanb, NULL);
    pf_wave *ws = ground(gs, omega, gN), *wb = embed(ws, gb);
    double t = 3e-3;
    pf_expand_spec sp = {.g = gN, .scaling = PF_SCALING_CASTIN_DUM, .order = 2};
    memcpy(sp.omega, omega, sizeof omega);
    pf_expand_info info;
    pft_ok(pf_wave_expand(ws, t, &sp, &info));
    pf_evolve_spec ev = {.g = gN, .order = 4, .dt = 6e-6};
    pft_ok(pf_wave_evolve(wb, t, &ev, NULL));
    shape a = shape_of(ws), b = shape_of(wb);
    printf("note 2D: %zu steps, lambda %.4f %.4f\n", info.steps, info.lambda[0], info.lambda[1]);
    pft_near(sqrt(a.var[0] / b.var[0]), 1.0, 0, 2e-4, "2D castin-dum: x width vs fixed large grid");
    pft_near(sqrt(a.var[1] / b.var[1]), 1.0, 0, 2e-4, "2D castin-dum: y width vs fixed large grid");
    pft_near(a.peak / b.peak, 1.0, 0, 1e-3, "2D castin-dum: central density vs fixed large grid");
    assert_true(info.lambda[0] > info.lambda[1]); /* the tighter axis expands faster */
    pf_wave_free(ws);
    pf_wave_free(wb);
    pf_grid_release(gs);
    pf_grid_release(gb);
    pf_context_release(ctx);
}

/* Two expands in a row continue the frame: the same result as one. */
static void test_continuation_and_handover(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_context_set_warn_handler(ctx, pft_count_warning, NULL);
    double gN = gN_for_mu_1d(15 * PF_HBAR * OMEGA), R = sqrt(2 * 15 * PF_HBAR * OMEGA / (pft_mass("87Rb") * OMEGA * OMEGA));
    size_t n = 256;
    double span = 2.6 * R, omega[1] = {OMEGA};
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pf_wave *w0 = ground(g, omega, gN), *w1 = NULL, *w2 = NULL, *w3 = NULL;
    pft_ok(pf_wave_copy(w0, &w1));
    pft_ok(pf_wave_copy(w0, &w2));
    pft_ok(pf_wave_copy(w0, &w3));
    pf_expand_spec sp = {.g = gN, .scaling = PF_SCALING_CASTIN_DUM, .order = 4, .steps = 400};
    memcpy(sp.omega, omega, sizeof omega);
    pf_expand_info i1, i2, i3;
    double t = 20e-3; /* omega t = 12.6 */
    pft_ok(pf_wave_expand(w1, t, &sp, &i1));
    sp.steps = 200;
    pft_ok(pf_wave_expand(w2, t / 2, &sp, &i2));
    pft_ok(pf_wave_expand(w2, t / 2, &sp, &i2));
    assert_true(i2.continued);
    shape a = shape_of(w1), b = shape_of(w2);
    pft_near(sqrt(a.var[0] / b.var[0]), 1.0, 0, 1e-9, "two expands of t/2 = one of t (width)");
    pft_near(a.peak / b.peak, 1.0, 0, 1e-8, "two expands of t/2 = one of t (peak)");
    /* Handover: the free step can only miss the interaction energy left,
     * so the width differs by less than the fraction (pf_expand.h). */
    sp.steps = 0;
    sp.handover = 0.1;
    pft_ok(pf_wave_expand(w3, t, &sp, &i3));
    assert_true(i3.handed_over);
    assert_true(i3.handover_time > 0 && i3.handover_time < t);
    assert_true(i3.interaction_fraction < 0.1);
    shape c = shape_of(w3);
    double miss = fabs(sqrt(c.var[0] / a.var[0]) - 1);
    printf("note handover at %.3g s after %zu steps, width off by %.2e\n", i3.handover_time, i3.steps, miss);
    assert_true(miss < 0.5 * 0.1);
    assert_true(miss > 1e-6); /* the mean field after the handover really was dropped */
    /* Energy fraction in interaction at the release of a 1D Thomas-Fermi
     * cloud: E_int / E = (g/2) int n^2 / ((g/2) int n^2 + 0) -> 1 as kinetic
     * energy vanishes; the virial relation (pf_expand.h) then gives back the
     * trap frequency to the Thomas-Fermi accuracy. */
    pf_expand_spec probe = {.g = gN, .scaling = PF_SCALING_CASTIN_DUM, .order = 2};
    pf_expand_info ip;
    pf_wave *w4 = NULL;
    pft_ok(pf_wave_copy(w0, &w4));
    pft_ok(pf_wave_expand(w4, 0.0, &probe, &ip));
    pft_near(ip.omega[0] / OMEGA, 1.0, 0, 2e-2, "virial release omega of a Thomas-Fermi cloud (mu = 15 hbar omega)");
    pf_wave_free(w4);
    pf_wave_free(w0);
    pf_wave_free(w1);
    pf_wave_free(w2);
    pf_wave_free(w3);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void test_refusals(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 64;
    double span = 16 * aho();
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss p = {.sigma = {aho()}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &p);
    pf_expand_spec sp = {.order = 2, .omega = {OMEGA}};
    assert_int_equal(pf_wave_expand(w, -1e-3, &sp, NULL), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "not negative"));
    sp.order = 3;
    assert_int_equal(pf_wave_expand(w, 1e-3, &sp, NULL), PF_EINVAL);
    sp.order = 2;
    sp.handover = 1.0;
    assert_int_equal(pf_wave_expand(w, 1e-3, &sp, NULL), PF_EINVAL);
    sp.handover = 0;
    sp.omega[0] = -1;
    assert_int_equal(pf_wave_expand(w, 1e-3, &sp, NULL), PF_EINVAL);
    sp.omega[0] = NAN;
    assert_int_equal(pf_wave_expand(w, 1e-3, &sp, NULL), PF_EINVAL);
    assert_true(pf_grid_same(pf_wave_grid(w), g)); /* nothing changed */
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ballistic_gaussian),
        cmocka_unit_test(test_castin_dum_vs_fixed_grid),
        cmocka_unit_test(test_2d_vs_fixed_grid),
        cmocka_unit_test(test_continuation_and_handover),
        cmocka_unit_test(test_refusals),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
