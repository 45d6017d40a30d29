/* test_beyond.c - pf_wave_beyond (FFT autocorrelation) against a direct
 * O(N^2) evaluation of the same band-limited integral, across thread counts,
 * and against the closed-form free Gaussian tail. */
#include <gsl/gsl_rng.h>
#include <gsl/gsl_sf_erf.h>
#include <stdlib.h>
#include <string.h>
#include "pft.h"
#include "pf_flight.h"
#include "pf_flux.h"

/* Reference: the definition written out.  For the interpolant
 * psi(x) = sum_m a_m exp(i q_m (x - x0)), q_m = 2 pi mu_m / span (an even
 * axis splits its Nyquist amplitude between mu = -n/2 and +n/2, pf_flux.h),
 * integral_at^b |psi|^2 dx = sum_{m,m'} conj(a_m) a_m' I(mu_m' - mu_m),
 * I(0) = b - at, I(D) = (e^{i q_D (b - x0)} - e^{i q_D (at - x0)}) / (i q_D),
 * b = x0 + span - dx/2.  Over the transverse axes Parseval sums |.|^2 of the
 * transverse modes, each times its span, a split Nyquist mode counting 1/2. */
static double reference_beyond(pf_wave *w, int axis, double at)
{
    pf_grid *g = pf_wave_grid(w);
    pft_ok(pf_wave_to(w, PF_MOMENTUM));
    const double complex *S = pf_wave_data_const(w);
    int d = pf_grid_dim(g);
    size_t n[3] = {1, 1, 1};
    for (int a = 0; a < d; a++) n[a] = pf_grid_points(g, a);
    size_t na = n[axis], inner = 1, outer = 1;
    for (int a = 0; a < axis; a++) outer *= n[a];
    for (int a = axis + 1; a < d; a++) inner *= n[a];
    double span = pf_grid_span(g, axis), dx = pf_grid_spacing(g, axis);
    double x0 = pf_grid_x(g, axis, 0), b = x0 + span - dx / 2, u = (at - x0) / span;
    const double *k = pf_grid_k_table(g, axis);
    double complex *amp = malloc((na + 1) * sizeof *amp);
    long *mode = malloc((na + 1) * sizeof *mode);
    double total = 0;
    for (size_t o = 0; o < outer; o++)
        for (size_t i = 0; i < inner; i++) {
            /* transverse weight: 1/2 per even transverse axis at its Nyquist index */
            double lw = 1;
            size_t idx[3] = {0, 0, 0}, rest = o;
            for (int a = axis - 1; a >= 0; a--) idx[a] = rest % n[a], rest /= n[a];
            rest = i;
            for (int a = d - 1; a > axis; a--) idx[a] = rest % n[a], rest /= n[a];
            for (int a = 0; a < d; a++)
                if (a != axis && n[a] % 2 == 0 && idx[a] == n[a] / 2) lw *= 0.5;
            size_t L = 0;
            for (size_t m = 0; m < na; m++) {
                double complex z = S[(o * na + m) * inner + i];
                long mu = lround(k[m] * span / (2 * PF_PI));
                if (na % 2 == 0 && m == na / 2) {
                    amp[L] = z / 2, mode[L++] = -(long)na / 2;
                    amp[L] = z / 2, mode[L++] = (long)na / 2;
                } else {
                    amp[L] = z, mode[L++] = mu;
                }
            }
            double complex s = 0;
            for (size_t p = 0; p < L; p++)
                for (size_t r = 0; r < L; r++) {
                    long D = mode[r] - mode[p];
                    double complex I_D;
                    if (D == 0) {
                        I_D = b - at;
                    } else {
                        double q = 2 * PF_PI * (double)D / span;
                        I_D = (cexp(-I * PF_PI * (double)D / (double)na) -
                               cexp(2 * PF_PI * I * fmod((double)D * u, 1.0))) / (I * q);
                    }
                    s += conj(amp[p]) * amp[r] * I_D;
                }
            total += lw * creal(s);
        }
    free(amp);
    free(mode);
    for (int a = 0; a < d; a++)
        if (a != axis) total *= pf_grid_span(g, a);
    return total;
}

static gsl_rng *rng;

/* White noise in both parts: every mode up to Nyquist is occupied. */
static int noise_fn(void *user, const double *x, double complex *v)
{
    (void)user, (void)x;
    *v = (gsl_rng_uniform(rng) - 0.5) + I * (gsl_rng_uniform(rng) - 0.5);
    return 0;
}

static pf_wave *noise_wave(pf_context *ctx, int dim, const size_t *n, pf_rep rep)
{
    double span[3] = {40e-6, 30e-6, 20e-6}, origin[3] = {-3e-6, 1e-6, 0};
    pf_grid *g = NULL;
    pft_ok(pf_grid_new(ctx, dim, n, span, origin, &g));
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, rep, noise_fn, NULL));
    pft_ok(pf_wave_normalize(w));
    pf_grid_release(g);
    return w;
}

/* FFT route = direct double sum to 1e-13 on random states (seeded), odd and
 * even axes, 1D and 2D along either axis, filled in either representation,
 * planes on grid points, between them and at the lower cell edge. */
static void matches_direct_sum(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 20261204);
    const struct { int dim; size_t n[3]; } shapes[] = {{1, {64}}, {1, {63}}, {2, {16, 12}}, {2, {15, 9}}, {2, {10, 17}}};
    int checked = 0;
    for (size_t c = 0; c < sizeof shapes / sizeof shapes[0]; c++)
        for (int rep = 0; rep < 2; rep++)
            for (int axis = 0; axis < shapes[c].dim; axis++) {
                pf_wave *w = noise_wave(ctx, shapes[c].dim, shapes[c].n, rep ? PF_MOMENTUM : PF_POSITION);
                pf_grid *g = pf_wave_grid(w);
                double dx = pf_grid_spacing(g, axis);
                size_t na = shapes[c].n[axis];
                const double at[] = {pf_grid_x(g, axis, 0) - dx / 2, pf_grid_x(g, axis, 3),
                                     pf_grid_x(g, axis, na / 2) + 0.37 * dx, pf_grid_x(g, axis, na - 2) + 0.81 * dx};
                for (size_t j = 0; j < 4; j++) {
                    pf_wave *c1;
                    pft_ok(pf_wave_copy(w, &c1));
                    double P;
                    pft_ok(pf_wave_beyond(c1, axis, at[j], &P));
                    double want = reference_beyond(c1, axis, at[j]);
                    pft_near(P, want, 0, 1e-13, NULL);
                    checked++;
                    pf_wave_free(c1);
                }
                pf_wave_free(w);
            }
    printf("ok %d planes: FFT autocorrelation = direct O(N^2) sum to 1e-13  [definition of the band-limited integral]\n",
           checked);
    assert_int_equal(checked, 64);
    gsl_rng_free(rng);
    pf_context_release(ctx);
}

/* Same bits on 1 and 2 threads: 256 transverse lines make 4 line blocks. */
static void thread_independent(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    rng = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(rng, 7);
    const size_t n[2] = {256, 48};
    pf_wave *w = noise_wave(ctx, 2, n, PF_POSITION);
    double P[2];
    for (int t = 0; t < 2; t++) {
        pft_ok(pf_context_set_threads(ctx, t + 1));
        pf_wave *c;
        pft_ok(pf_wave_copy(w, &c));
        pft_ok(pf_wave_beyond(c, 1, 2.3e-6, &P[t]));
        pf_wave_free(c);
    }
    assert_memory_equal(&P[0], &P[1], sizeof(double));
    printf("ok beyond on 1 and 2 threads: identical bits (%.17g)  [determinism]\n", P[0]);
    pf_wave_free(w);
    gsl_rng_free(rng);
    pf_context_release(ctx);
}

/* Free Gaussian after a flight (textbook spreading packet): |psi|^2 stays
 * normal with centre x0 + v t and width s0 sqrt(1 + tau^2),
 * tau = hbar t / (2 m s0^2), so P(x > a) = erfc((a - xc) / (sqrt2 s)) / 2,
 * erfc from GSL (gsl_sf_erfc). */
static void free_gaussian_tail(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 512, 200e-6, 0.0);
    double s0 = 2e-6, k0 = pft_mass("87Rb") * 1e-3 / PF_HBAR, x0 = -20e-6, t = 4e-3;
    pft_gauss gs = {1, {x0}, {s0}, {k0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    pft_ok(pf_wave_fly(w, t));
    double tau = PF_HBAR * t / (2 * pft_mass("87Rb") * s0 * s0), s = s0 * sqrt(1 + tau * tau);
    double xc = x0 + PF_HBAR * k0 / pft_mass("87Rb") * t;
    const double planes[] = {xc - 1.3 * s, xc + 0.1 * s, xc + 0.77 * s, xc + 2.9 * s};
    for (size_t j = 0; j < 4; j++) {
        double P;
        pft_ok(pf_wave_beyond(w, 0, planes[j], &P));
        pft_near(P, 0.5 * gsl_sf_erfc((planes[j] - xc) / (sqrt(2.0) * s)), 0, 1e-12, "free Gaussian tail erfc/2 (textbook), GSL gsl_sf_erfc");
    }
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(matches_direct_sum),
        cmocka_unit_test(thread_independent),
        cmocka_unit_test(free_gaussian_tail),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
