/* test_covariance.c - symmetrised position-momentum covariance against the
 * closed form of chirped Gaussians and the free-particle moment equations. */
#include <stdlib.h>
#include <string.h>
#include "pft.h"
#include "pf_covariance.h"
#include "pf_flight.h"
#include "pf_observe.h"

/* Chirped Gaussian psi = exp(-u^T P u / 4 + i u^T B u + i k0 . r), u = r - c,
 * P and B real symmetric (P positive).  Closed form (textbook Gaussian
 * integrals; derived here): |psi|^2 is normal with covariance Sigma = P^-1;
 * the phase phi has gradient 2 B u + k0, and Im(conj(psi) d_b psi) =
 * (d_b phi) |psi|^2, so <(x_a p_b + p_b x_a)/2> = hbar <x_a (2 B u + k0)_b>
 * and C_ab = <..> - <x_a><p_b> = 2 hbar (Sigma B)_ab.  In 1D with
 * P = 1/s^2, B = b: C = 2 hbar b s^2.  The wave-number variance is
 * (1/4) P + 4 B Sigma B (per axis in 1D: 1/(4 s^2) + 4 b^2 s^2). */
typedef struct chirp {
    int dim;
    double c[2], k0[2], P[2][2], B[2][2];
} chirp;

static int chirp_fn(void *user, const double *x, double complex *v)
{
    const chirp *q = user;
    double u[2] = {0, 0}, re = 0, ph = 0;
    for (int a = 0; a < q->dim; a++) u[a] = x[a] - q->c[a];
    for (int a = 0; a < q->dim; a++) {
        ph += q->k0[a] * x[a];
        for (int b = 0; b < q->dim; b++) {
            re -= u[a] * q->P[a][b] * u[b] / 4;
            ph += u[a] * q->B[a][b] * u[b];
        }
    }
    *v = cexp(re + I * ph);
    return 0;
}

static pf_wave *chirp_wave(pf_context *ctx, const chirp *q, size_t n, double span)
{
    size_t ns[2] = {n, n};
    double spans[2] = {span, span}, origin[2] = {0, 0};
    pf_grid *g = NULL;
    pft_ok(pf_grid_new(ctx, q->dim, ns, spans, origin, &g));
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, chirp_fn, (void *)q));
    pft_ok(pf_wave_normalize(w));
    pf_grid_release(g);
    return w;
}

/* 1D: the closed form 2 hbar b s^2, then free flight: the moment equations
 * of a free particle (Ehrenfest; common practice) give dC/dt = Var(p)/m with
 * Var(p) constant, so C(t) = C(0) + Var(p) t / m, and d Var(x)/dt = 2 C / m
 * (checked against a central difference of the engine's own variances,
 * exact for the quadratic Var(x)(t) up to rounding). */
static void chirped_1d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double s = 2e-6, b = 2e10;
    chirp q = {1, {-5e-6}, {3e5}, {{1 / (s * s)}}, {{b}}};
    pf_wave *w = chirp_wave(ctx, &q, 256, 100e-6);
    double C, scale = PF_HBAR;
    pft_ok(pf_wave_position_momentum_covariance(w, &C));
    pft_near(C / scale, 2 * b * s * s, 0, 1e-12, "chirped Gaussian <xp+px>/2 = 2 hbar b s^2 (textbook, derived above)");
    double vark = 1 / (4 * s * s) + 4 * b * b * s * s, m = pft_mass("87Rb"), t = 6e-3, h = 1e-3;
    pft_ok(pf_wave_fly(w, t));
    pft_ok(pf_wave_position_momentum_covariance(w, &C));
    double want = 2 * b * s * s + vark * PF_HBAR * t / m;
    pft_near(C / scale, want, 0, 1e-10 * fabs(want), "free particle: C(t) = C(0) + <dp^2> t / m (Ehrenfest moment equations, common practice)");
    pf_wave *lo, *hi;
    double vlo, vhi;
    pft_ok(pf_wave_copy(w, &lo));
    pft_ok(pf_wave_copy(w, &hi));
    pft_ok(pf_wave_fly(lo, -h));
    pft_ok(pf_wave_fly(hi, h));
    pft_ok(pf_wave_position_moments(lo, NULL, &vlo));
    pft_ok(pf_wave_position_moments(hi, NULL, &vhi));
    double dvar = (vhi - vlo) / (2 * h);
    pft_near(dvar / (2 * C / m), 1.0, 0, 1e-9, "d<dx^2>/dt = 2 C / m (free-particle moment equations, common practice)");
    pf_wave_free(lo);
    pf_wave_free(hi);
    pf_wave_free(w);
    pf_context_release(ctx);
}

/* 2D: product state (P, B diagonal) has no cross term; a rotated chirped
 * Gaussian (P = R diag(1/s1^2, 1/s2^2) R^T, B = R diag(b1, b2) R^T) matches
 * C = 2 hbar Sigma B in every entry. */
static void cross_terms_2d(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    double s1 = 3e-6, s2 = 1.5e-6, b1 = 1e10, b2 = -2.5e10;
    chirp prod = {2, {2e-6, -1e-6}, {2e5, -1e5}, {{1 / (s1 * s1), 0}, {0, 1 / (s2 * s2)}}, {{b1, 0}, {0, b2}}};
    pf_wave *w = chirp_wave(ctx, &prod, 128, 60e-6);
    double C[4];
    pft_ok(pf_wave_position_momentum_covariance(w, C));
    pft_near(C[1] / PF_HBAR, 0.0, 0, 1e-9, "product state: C_xy = 0 (independent axes)");
    pft_near(C[2] / PF_HBAR, 0.0, 0, 1e-9, "product state: C_yx = 0 (independent axes)");
    pft_near(C[0] / PF_HBAR, 2 * b1 * s1 * s1, 0, 1e-12, "product state: C_xx = 2 hbar b1 s1^2 (textbook)");
    pft_near(C[3] / PF_HBAR, 2 * b2 * s2 * s2, 0, 1e-12, "product state: C_yy = 2 hbar b2 s2^2 (textbook)");
    pf_wave_free(w);
    double th = 0.6, c = cos(th), s = sin(th);
    double R[2][2] = {{c, -s}, {s, c}}, Sd[2] = {s1 * s1, s2 * s2}, Bd[2] = {b1, b2};
    chirp rot = {2, {2e-6, -1e-6}, {2e5, -1e5}, {{0}}, {{0}}};
    double want[2][2];
    for (int i = 0; i < 2; i++)
        for (int j = 0; j < 2; j++) {
            double p = 0, bb = 0, cc = 0;
            for (int k = 0; k < 2; k++) {
                p += R[i][k] * R[j][k] / Sd[k];
                bb += R[i][k] * Bd[k] * R[j][k];
                cc += R[i][k] * Sd[k] * Bd[k] * R[j][k]; /* Sigma B = R diag(s^2 b) R^T */
            }
            rot.P[i][j] = p, rot.B[i][j] = bb, want[i][j] = 2 * cc;
        }
    w = chirp_wave(ctx, &rot, 128, 60e-6);
    pf_wave *w2; /* each call transforms its wave (rounding), so a twin for the thread check */
    pft_ok(pf_wave_copy(w, &w2));
    pft_ok(pf_wave_position_momentum_covariance(w, C));
    for (int i = 0; i < 2; i++)
        for (int j = 0; j < 2; j++)
            pft_near(C[i * 2 + j] / PF_HBAR, want[i][j], 0, 1e-12, "rotated chirped Gaussian: C = 2 hbar Sigma B (textbook)");
    printf("ok rotated C_xy/hbar = %.6g m*1/m (closed form %.6g)\n", C[1] / PF_HBAR, want[0][1]);
    /* Same bits on 1 and 2 threads. */
    double C2[4];
    pft_ok(pf_context_set_threads(ctx, 2));
    pft_ok(pf_wave_position_momentum_covariance(w2, C2));
    assert_memory_equal(C, C2, sizeof C);
    printf("ok covariance on 1 and 2 threads: identical bits  [determinism]\n");
    pf_wave_free(w2);
    pf_wave_free(w);
    pf_context_release(ctx);
}

static void zero_state_fails(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g = pft_grid1(ctx, 64, 10e-6, 0);
    pf_wave *w = NULL;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    double C;
    assert_int_equal(pf_wave_position_momentum_covariance(w, &C), PF_EINVAL);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(chirped_1d),
        cmocka_unit_test(cross_terms_2d),
        cmocka_unit_test(zero_state_fails),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
