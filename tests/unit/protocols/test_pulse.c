/* test_pulse.c - two-level and Bragg pulses (pf_pulse.c) against closed
 * forms: the Rabi formula with the generalised Rabi frequency, the Rabi
 * lineshape per velocity class of a Raman pulse, Ramsey fringes, the pulse
 * area theorem for a Gaussian envelope, and Raman-Nath orders J_n^2 (GSL). */
#include <gsl/gsl_sf_bessel.h>
#include "pf_observe.h"
#include "pft.h"
#include "pf_flight.h"
#include "pf_constants.h"
#include "pf_pulse.h"

/* Population in level b of a pulse of duration t from level a:
 * P = (Omega / W)^2 sin^2(W t / 2), W = sqrt(Omega^2 + delta^2), delta the
 * detuning from resonance (I. I. Rabi, Phys. Rev. 51, 652 (1937); any
 * quantum-optics text, e.g. Allen & Eberly, "Optical Resonance and
 * Two-Level Atoms", ch. 3). */
static double rabi_formula(double omega, double delta, double t)
{
    double W = sqrt(omega * omega + delta * delta);
    double s = sin(0.5 * W * t);
    return omega * omega / (W * W) * s * s;
}

static pf_wave *empty_like(pf_wave *a)
{
    pf_wave *b = NULL;
    pft_ok(pf_wave_new(pf_wave_grid(a), pf_wave_mass(a), &b));
    return b;
}

/* Microwave pulse (no kick): every momentum class sees the same detuning,
 * so the transferred population is the Rabi formula exactly, with the
 * light shifts moving the resonance by s_b - s_a. */
static void test_rabi_formula(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 128;
    double span = 40e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss gp = {.x0 = {0}, .sigma = {3e-6}, .k0 = {0}};
    const double omega = 2 * PF_PI * 5e3;
    const struct {
        double delta, sa, sb, t;
    } cases[] = {
        {0, 0, 0, 37e-6}, {0.7 * omega, 0, 0, 61e-6}, {-2.3 * omega, 0, 0, 250e-6}, {0.4 * omega, 1e4, -3e4, 80e-6},
    };
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        pf_wave *a = pft_gauss_wave(g, pft_mass("87Rb"), &gp), *b = empty_like(a);
        pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = cases[i].t, .rabi = omega};
        pf_pulse_light li = {.detuning = cases[i].delta, .phase = 0.3, .shift_a = cases[i].sa, .shift_b = cases[i].sb};
        pft_ok(pf_pulse_two_level(a, b, &sh, &li));
        double want = rabi_formula(omega, cases[i].delta - (cases[i].sb - cases[i].sa), cases[i].t);
        char label[96];
        snprintf(label, sizeof label, "Rabi formula, case %zu: P_b (Rabi 1937)", i);
        pft_near(pf_wave_norm(b), want, 0, 1e-12, label);
        snprintf(label, sizeof label, "Rabi formula, case %zu: P_a + P_b = 1", i);
        pft_near(pf_wave_norm(a) + pf_wave_norm(b), 1.0, 0, 1e-12, label);
        pft_near(pf_wave_clock(a), cases[i].t, 0, 1e-20, "pulse advances the clock by its duration");
        pf_wave_free(a);
        pf_wave_free(b);
    }
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Raman pulse with kick K: class k goes to k + K with the Rabi lineshape at
 * the detuning delta - (w(k + K) - w(k)), w = hbar k^2 / 2m (Doppler shift
 * K.v plus recoil; Kasevich et al., PRL 66, 2297 (1991) use this velocity
 * selection).  Checked per momentum point. */
static void test_raman_velocity_selection(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 512;
    double span = 400e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    const double dk = pf_grid_kspacing(g, 0);
    const double K = 40 * dk;
    pft_gauss gp = {.x0 = {0}, .sigma = {2e-6}, .k0 = {0}}; /* broad in momentum: many classes */
    pf_wave *a = pft_gauss_wave(g, pft_mass("87Rb"), &gp), *b = empty_like(a);
    pf_wave *ref = NULL;
    pft_ok(pf_wave_copy(a, &ref));
    pft_ok(pf_wave_to(ref, PF_MOMENTUM));
    const double hm = PF_HBAR / (2 * pft_mass("87Rb"));
    const double omega = 2 * PF_PI * 2e3, tpi = PF_PI / omega;
    const double delta = hm * K * K; /* resonant for the class at rest */
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = tpi, .rabi = omega};
    pf_pulse_light li = {.kick = {K}, .detuning = delta};
    pft_ok(pf_pulse_two_level(a, b, &sh, &li));
    const double complex *s0 = pf_wave_data(ref), *sb = pf_wave_data(b);
    double worst = 0, total = 0;
    for (size_t j = 0; j < n; j++) {
        double k = pf_grid_k(g, 0, j);
        size_t q = (j + 40) % n;
        if (fabs(k + K) >= pf_grid_knyquist(g, 0)) continue; /* wrapped partners */
        double p0 = creal(s0[j] * conj(s0[j]));
        double want = p0 * rabi_formula(omega, delta - hm * ((k + K) * (k + K) - k * k), tpi);
        double got = creal(sb[q] * conj(sb[q]));
        worst = fmax(worst, fabs(got - want));
        total += p0;
    }
    pft_near(worst / (total / n), 0.0, 0, 1e-12, "Raman pi pulse: P_b(k) = P_a(k) * Rabi lineshape(k), max rel.");
    /* The selected class moved by K: its momentum mean is K above level a's. */
    pf_wave_free(a);
    pf_wave_free(b);
    pf_wave_free(ref);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Ramsey sequence pi/2 - T - pi/2 (square pulses of length tau, no kick):
 * P = 4 (Omega/W)^2 sin^2(W tau / 2) [cos(W tau/2) cos(delta T/2)
 *       - (delta/W) sin(W tau/2) sin(delta T/2)]^2
 * (N. F. Ramsey, Phys. Rev. 78, 695 (1950); written from memory in this
 * form, and it reduces to the Rabi formula at T = 0). */
static void test_ramsey_fringes(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 64;
    double span = 40e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss gp = {.sigma = {3e-6}};
    const double omega = 2 * PF_PI * 10e3, tau = PF_PI / (2 * omega), T = 2e-3;
    for (int i = -6; i <= 6; i++) {
        double delta = i * 2 * PF_PI * 97.0;
        pf_wave *a = pft_gauss_wave(g, pft_mass("87Rb"), &gp), *b = empty_like(a);
        pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = tau, .rabi = omega};
        pf_pulse_light li = {.detuning = delta};
        pft_ok(pf_pulse_two_level(a, b, &sh, &li));
        pft_ok(pf_wave_fly(a, T));
        pft_ok(pf_wave_fly(b, T));
        pft_ok(pf_pulse_two_level(a, b, &sh, &li));
        double W = sqrt(omega * omega + delta * delta);
        double c = cos(0.5 * W * tau), s = sin(0.5 * W * tau);
        double br = c * cos(0.5 * delta * T) - delta / W * s * sin(0.5 * delta * T);
        double want = 4 * omega * omega / (W * W) * s * s * br * br;
        char label[96];
        snprintf(label, sizeof label, "Ramsey fringe at delta = %+.0f rad/s (Ramsey 1950)", delta);
        pft_near(pf_wave_norm(b), want, 0, 1e-12, label);
        pf_wave_free(a);
        pf_wave_free(b);
    }
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* On resonance the transfer of any envelope depends on its area only:
 * P_b = sin^2(A/2), A = integral Omega dt (pulse area theorem; common
 * practice).  A Gaussian Omega(t) = Omega0 exp(-(t-t_c)^2/(2 s^2)) over the
 * window of length L has A = Omega0 s sqrt(2 pi) erf(L / (2 sqrt(2) s)). */
static void test_gaussian_area(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 64;
    double span = 40e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss gp = {.sigma = {3e-6}};
    const double s = 10e-6, L = 6 * s;
    const double areas[] = {0.5 * PF_PI, PF_PI, 2.6};
    for (size_t i = 0; i < 3; i++) {
        double frac = sqrt(2 * PF_PI) * s * erf(L / (2 * sqrt(2.0) * s));
        double omega0 = areas[i] / frac;
        pf_wave *a = pft_gauss_wave(g, pft_mass("87Rb"), &gp), *b = empty_like(a);
        pf_pulse_shape sh = {.envelope = PF_ENVELOPE_GAUSSIAN, .duration = L, .rabi = omega0, .width = s};
        pf_pulse_light li = {0};
        pft_ok(pf_pulse_two_level(a, b, &sh, &li));
        double sn = sin(0.5 * areas[i]);
        pft_near(pf_wave_norm(b), sn * sn, 0, 1e-9, "Gaussian pulse on resonance: sin^2(area/2) (area theorem)");
        pf_wave_free(a);
        pf_wave_free(b);
    }
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* A Bragg pulse much shorter than the recoil time acts as a thin grating:
 * order n gets J_n(Omega t)^2 (Raman-Nath; Jacobi-Anger, Bessel functions
 * from GSL).  A large mass makes the kinetic energy negligible. */
static void test_bragg_raman_nath(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 512;
    double span = 400e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    const double K = 16 * pf_grid_kspacing(g, 0);
    pft_gauss flat = {.sigma = {1e9}}; /* a plane wave: only k = 0 */
    pf_wave *w = pft_gauss_wave(g, 1e-18, &flat);
    const double t = 20e-6, omega = 2.2 / t;
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = t, .rabi = omega, .substeps = 4};
    pf_pulse_light li = {.kick = {K}, .phase = 0.4};
    pft_ok(pf_pulse_bragg(w, &sh, &li));
    const double complex *S = pf_wave_data(w);
    for (int order = -4; order <= 4; order++) {
        size_t j = (size_t)((order * 16 + (int)n) % (int)n);
        double P = span * creal(S[j] * conj(S[j]));
        double J = gsl_sf_bessel_Jn(order, omega * t);
        char label[96];
        snprintf(label, sizeof label, "Raman-Nath order %+d = J_n(Omega t)^2 [GSL]", order);
        pft_near(P, J * J, 0, 1e-11, label);
    }
    pft_near(pf_wave_norm(w), 1.0, 0, 1e-12, "Bragg pulse is unitary");
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* First-order Bragg on resonance from k = -K/2 to +K/2 with a weak,
 * long square pulse: an effective two-level Rabi oscillation at Omega
 * (in the deep Bragg regime Omega << recoil frequency; off-resonant orders
 * put an error of order (Omega / 8 w_r)^2 on it).  Common practice. */
static void test_bragg_pi_pulse(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 256;
    double span = 200e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    const double K = 32 * pf_grid_kspacing(g, 0);
    pft_gauss flat = {.sigma = {1e9}, .k0 = {-K / 2}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &flat);
    const double wr = PF_HBAR * K * K / (2 * pft_mass("87Rb"));
    const double omega = wr / 50, t = PF_PI / omega;
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = t, .rabi = omega};
    pf_pulse_light li = {.kick = {K}, .detuning = 0}; /* -K/2 -> +K/2 is resonant at delta = 0 */
    pft_ok(pf_pulse_bragg(w, &sh, &li));
    const double complex *S = pf_wave_data(w);
    double P = span * creal(S[16] * conj(S[16]));
    pft_near(P, 1.0, 0, 2e-4, "Bragg pi pulse moves -K/2 to +K/2 (deep Bragg regime)");
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

static void test_bad_input(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n = 64;
    double span = 40e-6;
    pf_grid *g = pft_grid(ctx, 1, &n, &span, NULL);
    pft_gauss gp = {.sigma = {3e-6}};
    pf_wave *a = pft_gauss_wave(g, pft_mass("87Rb"), &gp), *b = empty_like(a);
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = 1e-6, .rabi = 1e5};
    pf_pulse_light li = {.kick = {2.5 * pf_grid_kspacing(g, 0)}};
    assert_int_equal(pf_pulse_two_level(a, b, &sh, &li), PF_EINVAL); /* not whole spacings */
    li.kick[0] = 0;
    assert_int_equal(pf_pulse_bragg(a, &sh, &li), PF_EINVAL); /* Bragg needs a kick */
    assert_int_equal(pf_pulse_two_level(a, a, &sh, &li), PF_EINVAL);
    sh.duration = -1;
    assert_int_equal(pf_pulse_two_level(a, b, &sh, &li), PF_EINVAL);
    sh.duration = 1e-6;
    pft_ok(pf_wave_fly(b, 1e-3));
    assert_int_equal(pf_pulse_two_level(a, b, &sh, &li), PF_EINVAL); /* clocks differ */
    /* The pair's other checks (check_pair): one mass, one grid, finite light. */
    size_t n2 = 32;
    pf_grid *g2 = pft_grid(ctx, 1, &n2, &span, NULL);
    pf_wave *c = empty_like(a), *heavy = NULL, *other = NULL;
    pft_ok(pf_wave_new(g, pft_mass("133Cs"), &heavy));
    pft_ok(pf_wave_new(g2, pft_mass("87Rb"), &other));
    assert_int_equal(pf_pulse_two_level(a, heavy, &sh, &li), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "must have one mass"));
    assert_int_equal(pf_pulse_two_level(a, other, &sh, &li), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "must share one grid"));
    li.detuning = NAN;
    assert_int_equal(pf_pulse_two_level(a, c, &sh, &li), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "must be finite"));
    li.detuning = 0;
    pft_ok(pf_pulse_two_level(a, c, &sh, &li)); /* the same pair with finite light */
    pf_wave_free(c);
    pf_wave_free(heavy);
    pf_wave_free(other);
    pf_grid_release(g2);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* 2D and 3D grids: every momentum class k (all axes) goes to k + K with the
 * Rabi lineshape at the detuning delta - (w(k + K) - w(k)), w = hbar |k|^2 / 2m
 * (as the 1D check above; Rabi 1937), and keeps its own amplitude phase
 * |P_a| in the lower level.  Kicks along the first, middle and last axis
 * (the separable tables), none (microwave), and along two axes (the
 * general per-point path). */
/* The next multi-index in storage (row-major) order. */
static void next_index(int dim, const size_t *n, size_t *idx)
{
    for (int d = dim - 1; d >= 0; d--) {
        if (++idx[d] < n[d]) return;
        idx[d] = 0;
    }
}

static void test_rabi_lineshape_2d_3d(void **state)
{
    (void)state;
    const struct {
        int dim;
        size_t n[3];
        int kick[3]; /* spacings per axis */
    } cases[] = {
        {2, {64, 32}, {9, 0}}, {3, {16, 24, 32}, {0, 0, 7}}, {3, {16, 24, 32}, {0, -5, 0}},
        {3, {16, 16, 16}, {0, 0, 0}}, {2, {64, 32}, {6, 3}},
    };
    for (size_t c = 0; c < sizeof cases / sizeof cases[0]; c++) {
        pf_context *ctx = pft_context();
        const int dim = cases[c].dim;
        double span[3] = {40e-6, 30e-6, 20e-6};
        pf_grid *g = pft_grid(ctx, dim, cases[c].n, span, NULL);
        pf_context_set_warn_handler(ctx, pft_count_warning, NULL); /* partners beyond Nyquist are skipped below */
        pft_gauss gp = {.x0 = {1e-6, -2e-6, 0}, .sigma = {1.5e-6, 1.2e-6, 1e-6}, .k0 = {2e5, -1e5, 3e5}};
        pf_wave *a = pft_gauss_wave(g, pft_mass("87Rb"), &gp), *b = empty_like(a), *ref = NULL;
        pft_ok(pf_wave_copy(a, &ref));
        pft_ok(pf_wave_to(ref, PF_MOMENTUM));
        double K[3] = {0};
        for (int d = 0; d < dim; d++) K[d] = cases[c].kick[d] * pf_grid_kspacing(g, d);
        const double hm = PF_HBAR / (2 * pft_mass("87Rb")), omega = 2 * PF_PI * 3e3, t = 0.8 * PF_PI / omega;
        const double delta = hm * (K[0] * K[0] + K[1] * K[1] + K[2] * K[2]) + 0.3 * omega;
        pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = t, .rabi = omega};
        pf_pulse_light li = {.kick = {K[0], K[1], K[2]}, .detuning = delta, .phase = 0.4, .shift_a = 300, .shift_b = -200};
        pft_ok(pf_pulse_two_level(a, b, &sh, &li));
        pft_ok(pf_wave_to(a, PF_MOMENTUM));
        pft_ok(pf_wave_to(b, PF_MOMENTUM));
        const double complex *s0 = pf_wave_data(ref), *sa = pf_wave_data(a), *sb = pf_wave_data(b);
        double worst = 0, total = 0;
        size_t idx[3] = {0};
        const size_t N = pf_grid_total(g);
        for (size_t p = 0; p < N; p++, next_index(dim, cases[c].n, idx)) {
            double k2 = 0, kq2 = 0;
            size_t q = 0;
            int wraps = 0;
            for (int d = 0; d < dim; d++) {
                double k = pf_grid_k(g, d, idx[d]);
                long nn = (long)cases[c].n[d];
                long jq = (((long)idx[d] + cases[c].kick[d]) % nn + nn) % nn;
                if (fabs(k + K[d]) >= pf_grid_knyquist(g, d)) wraps = 1;
                k2 += k * k;
                kq2 += (k + K[d]) * (k + K[d]);
                q = q * cases[c].n[d] + (size_t)jq;
            }
            double p0 = creal(s0[p] * conj(s0[p]));
            total += p0;
            if (wraps) continue;
            double pb = rabi_formula(omega, delta - hm * (kq2 - k2) - (li.shift_b - li.shift_a), t);
            worst = fmax(worst, fabs(creal(sb[q] * conj(sb[q])) - p0 * pb));
            worst = fmax(worst, fabs(creal(sa[p] * conj(sa[p])) - p0 * (1 - pb)));
        }
        char label[120];
        snprintf(label, sizeof label, "%dD kick (%d, %d, %d) spacings: P(k) = Rabi lineshape per class (Rabi 1937), max rel.",
                 dim, cases[c].kick[0], cases[c].kick[1], cases[c].kick[2]);
        pft_near(worst / (total / (double)N), 0.0, 0, 1e-11, label);
        pft_near(pf_wave_norm(a) + pf_wave_norm(b), 1.0, 0, 1e-12, "unitarity (2D/3D)");
        pf_wave_free(a);
        pf_wave_free(b);
        pf_wave_free(ref);
        pf_grid_release(g);
        pf_context_release(ctx);
    }
}

/* The separable 2D path against the 1D path, which the checks above tie to
 * the Rabi formula and the area theorem: a product state psi(x) psi(y) under
 * a Gaussian Raman pulse kicking along x is the 1D pulse on psi(x) times
 * psi(y) flown freely for the pulse duration (the Hamiltonian separates;
 * common practice), amplitude by amplitude. */
static void test_separable_gaussian_2d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n2[2] = {128, 32}, nx = 128, ny = 32;
    double span2[2] = {60e-6, 20e-6}, sx = 60e-6, sy = 20e-6;
    pf_grid *g2 = pft_grid(ctx, 2, n2, span2, NULL), *gx = pft_grid(ctx, 1, &nx, &sx, NULL), *gy = pft_grid(ctx, 1, &ny, &sy, NULL);
    pft_gauss p2 = {.x0 = {2e-6, -1e-6}, .sigma = {2e-6, 1.5e-6}, .k0 = {3e5, 1e5}};
    pft_gauss px = {.x0 = {2e-6}, .sigma = {2e-6}, .k0 = {3e5}}, py = {.x0 = {-1e-6}, .sigma = {1.5e-6}, .k0 = {1e5}};
    pf_wave *a2 = pft_gauss_wave(g2, pft_mass("87Rb"), &p2), *b2 = empty_like(a2);
    pf_wave *ax = pft_gauss_wave(gx, pft_mass("87Rb"), &px), *bx = empty_like(ax), *ay = pft_gauss_wave(gy, pft_mass("87Rb"), &py);
    const double K = 12 * pf_grid_kspacing(gx, 0), hm = PF_HBAR / (2 * pft_mass("87Rb"));
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_GAUSSIAN, .duration = 60e-6, .width = 10e-6, .rabi = 1.3e5, .substeps = 40};
    pf_pulse_light l2 = {.kick = {K, 0}, .detuning = hm * K * K, .phase = 0.2}, l1 = {.kick = {K}, .detuning = hm * K * K, .phase = 0.2};
    pft_ok(pf_pulse_two_level(a2, b2, &sh, &l2));
    pft_ok(pf_pulse_two_level(ax, bx, &sh, &l1));
    pft_ok(pf_wave_fly(ay, sh.duration));
    pf_wave *lev[2][2] = {{a2, ax}, {b2, bx}};
    double worst = 0, peak = 0;
    for (int L = 0; L < 2; L++) {
        pft_ok(pf_wave_to(lev[L][0], PF_MOMENTUM));
        pft_ok(pf_wave_to(lev[L][1], PF_MOMENTUM));
        pft_ok(pf_wave_to(ay, PF_MOMENTUM));
        const double complex *z2 = pf_wave_data(lev[L][0]), *zx = pf_wave_data(lev[L][1]), *zy = pf_wave_data(ay);
        for (size_t i = 0; i < nx; i++)
            for (size_t j = 0; j < ny; j++) {
                double complex want = zx[i] * zy[j];
                worst = fmax(worst, cabs(z2[i * ny + j] - want));
                peak = fmax(peak, cabs(want));
            }
    }
    pft_near(worst / peak, 0.0, 0, 1e-12, "2D Gaussian Raman pulse = 1D pulse x free flight (max rel.)");
    pf_wave *all[5] = {a2, b2, ax, bx, ay};
    for (int i = 0; i < 5; i++) pf_wave_free(all[i]);
    pf_grid_release(g2);
    pf_grid_release(gx);
    pf_grid_release(gy);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_rabi_formula),     cmocka_unit_test(test_raman_velocity_selection),
        cmocka_unit_test(test_ramsey_fringes),   cmocka_unit_test(test_gaussian_area),
        cmocka_unit_test(test_bragg_raman_nath), cmocka_unit_test(test_bragg_pi_pulse),
        cmocka_unit_test(test_bad_input),        cmocka_unit_test(test_rabi_lineshape_2d_3d),
        cmocka_unit_test(test_separable_gaussian_2d),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
