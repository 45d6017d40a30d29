/* test_levels.c - the levels view (pf_levels.c) on the grid and in the shared
 * moving frame: the Rabi formula through the view, Stern-Gerlach means
 * against Newton, a light-pulse Mach-Zehnder against K a T^2 (Kasevich and
 * Chu) with the frame and the lab grid agreeing pointwise, Raman velocity
 * selection in a moving frame against the Rabi lineshape at the lab Doppler
 * detuning, and Born sampling that leaks nothing when an allocation fails. */
#include "pf_observe.h"
#include "pft.h"
#include "pf_frame.h"
#include "pf_levels.h"
#include "pf_ops.h"
#include "pf_random.h"

/* P = (Omega / W)^2 sin^2(W t / 2), W^2 = Omega^2 + delta^2 (I. I. Rabi,
 * Phys. Rev. 51, 652 (1937)). */
static double rabi_formula(double omega, double delta, double t)
{
    double W = sqrt(omega * omega + delta * delta), s = sin(0.5 * W * t);
    return omega * omega / (W * W) * s * s;
}

typedef struct set {
    pf_context *ctx;
    pf_grid *g;
    pf_wave *w[3];
    pf_levels *lv;
} set;

/* count levels on a 1D grid of n points and the given span, level 0 a
 * Gaussian (width sigma, centre x0, wave number k0), the others empty. */
static void set_make(set *s, int count, size_t n, double span, double sigma, double x0, double k0, int moving)
{
    s->ctx = pft_context();
    s->g = pft_grid(s->ctx, 1, &n, &span, NULL);
    pft_gauss gp = {.x0 = {x0}, .sigma = {sigma}, .k0 = {k0}};
    s->w[0] = pft_gauss_wave(s->g, pft_mass("87Rb"), &gp);
    for (int i = 1; i < count; i++) pft_ok(pf_wave_new(s->g, pft_mass("87Rb"), &s->w[i]));
    const char *labels[3] = {"a", "b", "c"};
    pft_ok(pf_levels_new(s->ctx, count, labels, NULL, s->w, moving, &s->lv));
}

static void set_free(set *s, int count)
{
    pf_levels_free(s->lv);
    for (int i = 0; i < count; i++) pf_wave_free(s->w[i]);
    pf_grid_release(s->g);
    pf_context_release(s->ctx);
}

/* A detuned microwave pulse between levels a and c of three: the Rabi
 * formula, unitarity, and b flying along (clock). */
static void test_rabi_through_levels(void **state)
{
    (void)state;
    set s;
    set_make(&s, 3, 128, 40e-6, 3e-6, 0, 0, 0);
    const double om = 2 * PF_PI * 5e3, delta = 0.6 * om, t = 70e-6;
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = t, .rabi = om};
    pf_pulse_light li = {.detuning = delta};
    pft_ok(pf_levels_pulse(s.lv, 0, 2, &sh, &li, 0, NULL, 1));
    double pop[3], total;
    pft_ok(pf_levels_populations(s.lv, pop, &total));
    pft_near(pop[2], rabi_formula(om, delta, t), 0, 1e-12, "levels pulse a -> c: Rabi formula (Rabi 1937)");
    pft_near(total, 1.0, 0, 1e-12, "populations add up to 1 (unitarity)");
    pft_near(pf_wave_clock(s.w[1]), t, 0, 1e-20, "the uncoupled level flew along");
    assert_int_equal(pf_levels_pulse(s.lv, 1, 1, &sh, &li, 0, NULL, 1), PF_EINVAL);
    set_free(&s, 3);
}

/* Per-level forces: means x0 + v0 t + a_i t^2 / 2 (Newton; the exact
 * uniform-force propagator moves the mean so, Ehrenfest), on the grid and in
 * the shared frame with a common part; the lab density of each level agrees
 * between the two to rounding. */
static void test_stern_gerlach_frame(void **state)
{
    (void)state;
    set lab, fr;
    const double v0k = 2e6, t = 6e-3, x0 = -10e-6;
    /* Two populated levels: a pi/2 microwave pulse splits the cloud, then
     * accelerations g + a and g - a (a common g in the frame). */
    set_make(&lab, 2, 2048, 400e-6, 4e-6, x0, v0k, 0);
    set_make(&fr, 2, 2048, 400e-6, 4e-6, x0, v0k, 1);
    /* g makes the frame's wave number m g t / hbar a whole number of
     * momentum spacings, so the lab momenta of both states share points. */
    const double g = -200 * pf_grid_kspacing(lab.g, 0) * PF_HBAR / (pft_mass("87Rb") * t), a = 0.3;
    pf_levels_forces f = {.has = {1, 1}, .accel = {{g + a}, {g - a}}};
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = 1e-6, .rabi = PF_PI / 2 / 1e-6};
    pf_pulse_light li = {0};
    pft_ok(pf_levels_pulse(lab.lv, 0, 1, &sh, &li, 0, NULL, 1));
    pft_ok(pf_levels_pulse(fr.lv, 0, 1, &sh, &li, 0, NULL, 1));
    pft_ok(pf_levels_fly(lab.lv, t, &f));
    pft_ok(pf_levels_fly(fr.lv, t, &f));
    const double v0 = PF_HBAR * v0k / pft_mass("87Rb"), tt = t + 1e-6;
    for (int i = 0; i < 2; i++) {
        double mean_lab, mean_fr, acc = f.accel[i][0];
        /* the pulse took 1 us of free flight first */
        double want = x0 + v0 * tt + 0.5 * acc * t * t;
        pft_ok(pf_wave_position_moments(lab.w[i], &mean_lab, NULL));
        pft_ok(pf_wave_lab_position_moments(fr.w[i], &mean_fr, NULL));
        pft_near(mean_lab, want, 0, 1e-15, "grid: level mean = x0 + v0 t + a_i t^2/2 (Newton)");
        pft_near(mean_fr, want, 0, 1e-15, "frame: lab mean = x0 + v0 t + a_i t^2/2 (Newton)");
    }
    pf_frame fa, fb;
    pf_wave_frame(fr.w[0], &fa);
    pf_wave_frame(fr.w[1], &fb);
    pft_near(fa.position[0], fb.position[0], 0, 0, "the levels share the frame position");
    pft_near(fa.position[0], 0.5 * g * t * t, 0, 1e-18, "the frame took the common acceleration g t^2/2");
    /* Pointwise: the lab momentum amplitude of the frame state equals the
     * lab grid's at the same lab wave number, so the frame's phase (theta
     * with the difference-force term) is right too. */
    double worst = 0, peak = 0;
    for (int i = 0; i < 2; i++)
        for (size_t j = 0; j < 2048; j++) {
            double complex vf, vl;
            size_t idx = j;
            pft_ok(pf_wave_lab_value(fr.w[i], PF_MOMENTUM, &idx, &vf));
            /* momentum: the lab wave number of storage j in the frame is
             * k_j + K; find the lab-grid storage index with that k. */
            double klab = pf_grid_k(fr.g, 0, j) + fa.wavenumber[0];
            double m = klab / pf_grid_kspacing(lab.g, 0);
            long r = lround(m);
            if (fabs(m - r) > 1e-6) continue;
            long nn = 2048;
            if (r <= -nn / 2 || r >= nn / 2) continue;
            size_t q = (size_t)((r + nn) % nn);
            pft_ok(pf_wave_value(lab.w[i], PF_MOMENTUM, &q, &vl));
            worst = fmax(worst, cabs(vf - vl));
            peak = fmax(peak, cabs(vl));
        }
    pft_near(worst / peak, 0.0, 0, 1e-9, "frame vs lab grid: lab momentum amplitudes of both levels (max rel.)");
    set_free(&lab, 2);
    set_free(&fr, 2);
}

/* Mach-Zehnder pi/2 - T - pi - T - pi/2 under acceleration a: exit port
 * (1 - cos(K a T^2 + phi3)) / 2 for short pulses (M. Kasevich and S. Chu,
 * Phys. Rev. Lett. 67, 181 (1991)); the frame and the lab grid agree to
 * rounding when gravity acts in the flights. */
static double mach_zehnder(int moving, double a, double T, double phi3, int force_in_pulses, double *pa_out,
                           pf_envelope env)
{
    set s;
    set_make(&s, 2, 1024, 200e-6, 5e-6, 0, 0, moving);
    const double dk = pf_grid_kspacing(s.g, 0), K = 64 * dk, tau = 50e-9, om = PF_PI / (2 * tau);
    const double wr = PF_HBAR * K * K / (2 * pft_mass("87Rb"));
    pf_levels_forces f = {.has = {1, 1}, .accel = {{a}, {a}}};
    double areas[3] = {PF_PI / 2, PF_PI, PF_PI / 2}, phases[3] = {0, 0, phi3};
    for (int p = 0; p < 3; p++) {
        pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = areas[p] / om, .rabi = om};
        if (env == PF_ENVELOPE_GAUSSIAN) { /* width tau / 2, window 6 widths, peak sqrt(2 pi) (pi/2) / ... */
            sh.envelope = PF_ENVELOPE_GAUSSIAN;
            sh.width = 0.5 * sh.duration;
            sh.duration = 6 * sh.width;
            sh.rabi = areas[p] / (sh.width * sqrt(2 * PF_PI));
        }
        pf_pulse_light li = {.kick = {K}, .detuning = wr, .phase = phases[p]};
        pft_ok(pf_levels_pulse(s.lv, 0, 1, &sh, &li, 0, force_in_pulses ? &f : NULL, force_in_pulses ? 16 : 1));
        if (p < 2) pft_ok(pf_levels_fly(s.lv, T, &f));
    }
    double pop[2];
    pft_ok(pf_levels_populations(s.lv, pop, NULL));
    if (pa_out) *pa_out = pop[0];
    set_free(&s, 2);
    return pop[1];
}

static void test_mach_zehnder_frame(void **state)
{
    (void)state;
    const double a = 0.1, T = 5e-3;
    const double K = 64 * 2 * PF_PI / 200e-6;
    for (int j = 0; j < 3; j++) {
        double phi3 = 0.7 * j, pa_lab, pa_fr;
        double lab = mach_zehnder(0, a, T, phi3, 0, &pa_lab, PF_ENVELOPE_SQUARE);
        double fr = mach_zehnder(1, a, T, phi3, 0, &pa_fr, PF_ENVELOPE_SQUARE);
        pft_near(fr, lab, 0, 1e-10, "Mach-Zehnder exit port: shared frame = lab grid");
        pft_near(fr, (1 - cos(K * a * T * T + phi3)) / 2, 0, 2e-3, "exit port vs (1 - cos(K a T^2 + phi))/2 (Kasevich & Chu 1991)");
    }
    /* Gravity during the pulses too: both are Strang splittings of the same
     * evolution (16 slices), so they agree to the splitting error. */
    double lab = mach_zehnder(0, a, T, 0.4, 1, NULL, PF_ENVELOPE_SQUARE);
    double fr = mach_zehnder(1, a, T, 0.4, 1, NULL, PF_ENVELOPE_SQUARE);
    pft_near(fr, lab, 0, 1e-10, "gravity during the pulses: frame vs lab grid");
    /* Gaussian envelopes cut into slices of themselves, both ways. */
    lab = mach_zehnder(0, a, T, 0.4, 1, NULL, PF_ENVELOPE_GAUSSIAN);
    fr = mach_zehnder(1, a, T, 0.4, 1, NULL, PF_ENVELOPE_GAUSSIAN);
    pft_near(fr, lab, 0, 1e-10, "Gaussian pulses with gravity: frame vs lab grid");
    pft_near(fr, (1 - cos(K * a * T * T + 0.4)) / 2, 0, 2e-3, "Gaussian pulses: exit port vs K a T^2 (Kasevich & Chu 1991)");
}

/* A Raman pi pulse on a cloud whose frame moves at V: each class q goes to
 * q + K with the Rabi lineshape at the lab detuning
 * delta - (w(q + K_f + K) - w(q + K_f)) (Doppler K.v plus recoil; Kasevich
 * et al., PRL 66, 2297 (1991) use this velocity selection). */
static void test_raman_doppler_in_frame(void **state)
{
    (void)state;
    set s;
    const size_t n = 512;
    set_make(&s, 2, n, 400e-6, 2e-6, 0, 0, 1);
    const double dk = pf_grid_kspacing(s.g, 0), K = 40 * dk, Kf = 1234.5 * dk;
    for (int i = 0; i < 2; i++) pft_ok(pf_wave_frame_kick(s.w[i], &Kf));
    pf_wave *ref = NULL;
    pft_ok(pf_wave_copy(s.w[0], &ref));
    pft_ok(pf_wave_to(ref, PF_MOMENTUM));
    const double hm = PF_HBAR / (2 * pft_mass("87Rb")), omega = 2 * PF_PI * 2e3, tpi = PF_PI / omega;
    const double delta = hm * ((Kf + K) * (Kf + K) - Kf * Kf); /* resonant for the class at the frame velocity */
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = tpi, .rabi = omega};
    pf_pulse_light li = {.kick = {K}, .detuning = delta};
    pft_ok(pf_levels_pulse(s.lv, 0, 1, &sh, &li, 0, NULL, 1));
    pft_ok(pf_wave_to(s.w[1], PF_MOMENTUM));
    const double complex *s0 = pf_wave_data(ref), *sb = pf_wave_data(s.w[1]);
    double worst = 0, total = 0;
    for (size_t j = 0; j < n; j++) {
        double q = pf_grid_k(s.g, 0, j), k = q + Kf;
        if (fabs(q + K) >= pf_grid_knyquist(s.g, 0)) continue;
        double p0 = creal(s0[j] * conj(s0[j]));
        double want = p0 * rabi_formula(omega, delta - hm * ((k + K) * (k + K) - k * k), tpi);
        size_t qq = (j + 40) % n;
        worst = fmax(worst, fabs(creal(sb[qq] * conj(sb[qq])) - want));
        total += p0;
    }
    pft_near(worst / (total / n), 0.0, 0, 1e-11, "moving frame: P_b(k) = P_a(k) * Rabi lineshape at the lab Doppler detuning");
    pf_frame f;
    pf_wave_frame(s.w[1], &f);
    pft_near(f.position[0], PF_HBAR * Kf / pft_mass("87Rb") * tpi, 0, 1e-20, "the frame moved at V during the pulse");
    pf_wave_free(ref);
    set_free(&s, 2);
}

/* Born sampling under injected allocation failures: every failing
 * allocation gives PF_ENOMEM and the context holds exactly the bytes it held
 * before (nothing leaked); without a failure the events carry level indices
 * with the populations' shares. */
static void test_sample_no_leak(void **state)
{
    (void)state;
    set s;
    set_make(&s, 2, 256, 60e-6, 3e-6, 0, 0, 0);
    pf_pulse_shape sh = {.envelope = PF_ENVELOPE_SQUARE, .duration = 1e-6, .rabi = PF_PI / 2 / 1e-6};
    pf_pulse_light li = {0};
    pft_ok(pf_levels_pulse(s.lv, 0, 1, &sh, &li, 0, NULL, 1));
    double ev[3 * 2];
    pf_rng rng;
    pf_rng_seed(&rng, 5, 0);
    unsigned long before = pf_context_allocations(s.ctx);
    pft_ok(pf_levels_sample(s.lv, PF_POSITION, 3, 1, &rng, ev));
    unsigned long used = pf_context_allocations(s.ctx) - before;
    assert_true(used >= 4);
    int failures = 0;
    for (unsigned long k = 1; k <= used; k++) {
        size_t held = pf_context_memory_used(s.ctx);
        pf_context_fail_allocation(s.ctx, k);
        pf_status st = pf_levels_sample(s.lv, PF_POSITION, 3, 1, &rng, ev);
        pf_context_fail_allocation(s.ctx, 0);
        if (st == PF_ENOMEM) failures++;
        assert_int_equal(pf_context_memory_used(s.ctx), held);
    }
    pft_near(failures, used, 0, 0, "every injected allocation failure is reported, nothing leaks");
    set_free(&s, 2);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_rabi_through_levels), cmocka_unit_test(test_stern_gerlach_frame),
        cmocka_unit_test(test_mach_zehnder_frame), cmocka_unit_test(test_raman_doppler_in_frame),
        cmocka_unit_test(test_sample_no_leak),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
