/* test_longflight.c - scaled-grid flights against outside references:
 *  - the free Gaussian packet with complex width (textbook result, e.g. any
 *    quantum-mechanics text's free-particle section):
 *      psi(x, t) = (2 pi s^2)^(-1/4) (1 + i tau)^(-1/2)
 *                  exp(-(x - x0 - v t)^2 / (4 s^2 (1 + i tau)) + i k0 (x - v t / 2)),
 *      tau = hbar t / (2 m s^2), v = hbar k0 / m,
 *    after widths grown 100x and 1000x, in density and phase, 1D/2D/3D;
 *  - agreement with the exact same-grid flight where both are valid;
 *  - flying back (t -> -t) restores the state on the original grid;
 *  - the Galilean boost identity for a kick between two flights (textbook):
 *      e^{iqx} psi_t1 flown t2 = e^{i q x - i hbar q^2 t2 / 2m} psi_{t1+t2}(x - hbar q t2 / m);
 *  - the far-field peak density of a Gaussian, sqrt(1 + 4 N_F^2) times the
 *    exact one (derived from the same textbook formula), and its N_F^2 rate. */
#include "pft.h"
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_farfield.h"
#include "pf_internal.h"
#include "pf_flight.h"
#include "pf_observe.h"
#include "pf_longflight.h"
#include "pf_wave.h"

#define MASS pft_mass("87Rb") /* from the species table */


typedef struct gauss {
    int dim;
    double s[3], x0[3], k0[3];
} gauss;

/* The textbook complex-width Gaussian on one axis (see the file comment). */
static double complex gauss_axis(double x, double s, double x0, double k0, double t)
{
    double tau = PF_HBAR * t / (2 * MASS * s * s), v = PF_HBAR * k0 / MASS;
    double complex q = 1 + I * tau;
    double u = x - x0 - v * t;
    return pow(2 * PF_PI * s * s, -0.25) / csqrt(q) * cexp(-u * u / (4 * s * s * q) + I * k0 * (x - 0.5 * v * t));
}

static double complex gauss_at(const gauss *p, const double *x, double t)
{
    double complex z = 1;
    for (int a = 0; a < p->dim; a++) z *= gauss_axis(x[a], p->s[a], p->x0[a], p->k0[a], t);
    return z;
}

static int fill_gauss(void *user, const double *x, double complex *v)
{
    *v = gauss_at(user, x, 0.0);
    return 0;
}

static double width_at(double s, double t)
{
    double tau = PF_HBAR * t / (2 * MASS * s * s);
    return s * sqrt(1 + tau * tau);
}

/* Compares w (position representation) with the analytic packet at time t
 * wherever every axis is within `within` widths of the centre; returns the
 * number of points compared and the worst relative density / phase errors. */
static size_t compare_gauss(pf_wave *w, const gauss *p, double t, double within, double *worst_rho, double *worst_phase)
{
    pf_grid *g = pf_wave_grid(w);
    pft_ok(pf_wave_to(w, PF_POSITION));
    const double complex *d = pf_wave_data(w);
    size_t idx[3] = {0, 0, 0}, count = 0;
    *worst_rho = *worst_phase = 0;
    for (size_t off = 0; off < pf_grid_total(g); off++) {
        size_t rest = off;
        for (int a = p->dim - 1; a >= 0; a--) {
            idx[a] = rest % pf_grid_points(g, a);
            rest /= pf_grid_points(g, a);
        }
        double x[3];
        int inside = 1;
        for (int a = 0; a < p->dim; a++) {
            x[a] = pf_grid_x(g, a, idx[a]);
            double c = p->x0[a] + PF_HBAR * p->k0[a] * t / MASS;
            if (fabs(x[a] - c) > within * width_at(p->s[a], t)) inside = 0;
        }
        if (!inside) continue;
        double complex want = gauss_at(p, x, t), got = d[off];
        double rw = creal(want * conj(want)), rg = creal(got * conj(got));
        *worst_rho = fmax(*worst_rho, fabs(rg / rw - 1));
        *worst_phase = fmax(*worst_phase, fabs(carg(got / want)));
        count++;
    }
    return count;
}

static pf_wave *make_gauss(void **state, const gauss *p, const size_t *n, const double *span)
{
    pf_grid *g;
    pft_ok(pf_grid_new(*state, p->dim, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    pf_grid_release(g);
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_gauss, (void *)p));
    pf_wave_record(w, "build", "test", 0, 0);
    return w;
}

/* Flight time after which the width has grown by the factor f (from the
 * textbook width law sigma(t) = s sqrt(1 + tau^2)). */
static double time_for_growth(double s, double f) { return 2 * MASS * s * s * sqrt(f * f - 1) / PF_HBAR; }

/* A 1D packet flown by sign * time_for_growth(growth) on n points with the
 * output window centred off the packet by `offset` of its span (the output
 * chirp then has a linear part as well). */
static void growth_1d_on(void **state, size_t points, double growth, double sign, double offset)
{
    const double s = 1e-6;
    gauss p = {1, {s}, {3e-6}, {3.0 / s}};
    size_t n[1] = {points};
    double span[1] = {64 * s};
    pf_wave *w = make_gauss(state, &p, n, span);
    double t = sign * time_for_growth(s, growth);
    double D = PF_TWO_PI * PF_HBAR * fabs(t) / (MASS * span[0]);
    double centre = p.x0[0] + PF_HBAR * p.k0[0] * t / MASS + offset * D * (double)points;
    pft_ok(pf_wave_fly_scaled(w, t, NULL, &centre));
    /* The new grid's spacing is 2 pi hbar t / (m N dx) (the single-FFT form). */
    pft_near(pf_grid_spacing(pf_wave_grid(w), 0), D, 1e-14, 0, NULL);
    double er, ep;
    size_t count = compare_gauss(w, &p, t, 4.0, &er, &ep);
    assert_true(count >= 20);
    pft_near(er, 0, 0, 1e-9, NULL);
    pft_near(ep, 0, 0, 1e-9, NULL);
    pft_near(pf_wave_clock(w), t, 1e-15, 0, NULL);
    pft_near(pf_wave_norm(w), 1, 0, 1e-12, NULL);
    const pf_steplog *log = pf_wave_steplog(w);
    assert_string_equal(log->steps[log->count - 1].method, "scaled-fresnel");
    pf_wave_free(w);
}

static void gaussian_growth_1d(void **state, double growth) { growth_1d_on(state, 256, growth, 1.0, 0.0); }

/* Implementation check (no physics claim): the 1D chirps evaluated in place
 * by segments (start factor, powers of a ratio, a 32-entry chirp) equal the
 * defining formula (pf_scaled_chirp_tables, one exponential per point) at
 * every point, including odd counts, a short tail and backward flights, to
 * the rounding of phases as large as the chirp reaches; and give the same
 * bits on 1 and 2 threads. */
static void segment_chirps_match_the_formula(void **state)
{
    (void)state;
    static const size_t counts[] = {255, 300, 4096 + 17, 65536};
    for (size_t c = 0; c < sizeof counts / sizeof counts[0]; c++) {
        const size_t n = counts[c];
        double complex *data = malloc(n * sizeof *data), *pre = malloc(n * sizeof *pre),
                       *post = malloc(n * sizeof *post), *other = malloc(n * sizeof *other);
        assert_true(data && pre && post && other);
        const double dx = 0.25e-6;
        for (int variant = 0; variant < 4; variant++) {
            double ta = (variant & 1 ? -1 : 1) * 3e-3 * (1 + 0.37 * c);
            double D = PF_TWO_PI * PF_HBAR * fabs(ta) / (MASS * (double)n * dx);
            double delta = variant & 2 ? 0.13 * D * (double)n : 0.0;
            pf_scaled_chirp_tables(MASS, ta, n, dx, D, delta, pre, post);
            for (int which = 0; which < 2; which++) {
                uint64_t st = 99;
                for (size_t j = 0; j < n; j++) {
                    st = st * 6364136223846793005ULL + 1442695040888963407ULL;
                    double a = (double)(st >> 11) * 0x1.0p-53;
                    st = st * 6364136223846793005ULL + 1442695040888963407ULL;
                    data[j] = a - 0.5 + I * ((double)(st >> 11) * 0x1.0p-53 - 0.5);
                }
                memcpy(other, data, n * sizeof *data);
                const double complex *table = which ? post : pre;
                pf_scaled_chirp_1d(data, n, MASS, ta, dx, D, delta, which, 1);
                pf_scaled_chirp_1d(other, n, MASS, ta, dx, D, delta, which, 2);
                assert_memory_equal(data, other, n * sizeof *data);
                /* the reference from the same random values */
                st = 99;
                double worst = 0, scale = 0;
                for (size_t j = 0; j < n; j++) {
                    st = st * 6364136223846793005ULL + 1442695040888963407ULL;
                    double a = (double)(st >> 11) * 0x1.0p-53;
                    st = st * 6364136223846793005ULL + 1442695040888963407ULL;
                    double complex v = a - 0.5 + I * ((double)(st >> 11) * 0x1.0p-53 - 0.5);
                    worst = fmax(worst, cabs(data[j] - v * table[j]));
                    scale = fmax(scale, cabs(v * table[j]));
                }
                /* the largest phase, at an end of the axis */
                double beta = MASS / (PF_HBAR * ta), h = (double)(n / 2);
                double X = fabs(delta) + h * D, eta = h * dx;
                double top = fabs(which ? 0.5 * beta * X * X : beta * (0.5 * eta * eta + fabs(delta) * eta));
                printf("n %zu %s chirp, t %+.2g s, shift %.2g m: worst %.2e of the largest value (phases to %.2g "
                       "rad)\n", n, which ? "output" : "input", ta, delta, worst / scale, top);
                /* each phase carries a rounding of about 2^-53 of itself;
                 * allow 16 of them, plus 1e-14 for the powers */
                assert_true(worst <= scale * (16 * 0x1.0p-53 * top + 1e-14));
            }
        }
        free(data);
        free(pre);
        free(post);
        free(other);
    }
}

/* The 1D chirps are evaluated by segments of 32 points (pf_longflight.c): point
 * counts that are odd (the turn h j mod n is not a sign) or leave a short
 * tail, backward flights and an off-centre window follow the same textbook
 * packet. */
static void gaussian_1d_odd_and_unaligned_counts(void **state)
{
    static const size_t counts[] = {255, 300, 333, 4096 + 17};
    for (size_t i = 0; i < sizeof counts / sizeof counts[0]; i++) {
        growth_1d_on(state, counts[i], 100, 1.0, 0.0);
        growth_1d_on(state, counts[i], 100, -1.0, 0.1);
        growth_1d_on(state, counts[i], 1000, 1.0, -0.15);
    }
}

static void gaussian_grown_100x_matches_textbook(void **state) { gaussian_growth_1d(state, 100); }
static void gaussian_grown_1000x_matches_textbook(void **state) { gaussian_growth_1d(state, 1000); }

static void gaussian_2d_and_3d_match_textbook(void **state)
{
    const double s = 1e-6;
    gauss p2 = {2, {s, 1.5 * s}, {1e-6, -2e-6}, {1.0 / s, -0.5 / s}};
    size_t n2[2] = {128, 96};
    double span2[2] = {40 * s, 48 * s};
    pf_wave *w = make_gauss(state, &p2, n2, span2);
    double t = time_for_growth(s, 300);
    double c2[2] = {PF_HBAR * p2.k0[0] * t / MASS, PF_HBAR * p2.k0[1] * t / MASS};
    pft_ok(pf_wave_fly_scaled(w, t, NULL, c2));
    double er, ep;
    assert_true(compare_gauss(w, &p2, t, 3.5, &er, &ep) >= 100);
    pft_near(er, 0, 0, 1e-9, NULL);
    pft_near(ep, 0, 0, 1e-9, NULL);
    pf_wave_free(w);

    gauss p3 = {3, {s, s, 0.8 * s}, {0, 1e-6, 0}, {0, 0, 1.0 / s}};
    size_t n3[3] = {48, 48, 48};
    double span3[3] = {24 * s, 24 * s, 19.2 * s};
    w = make_gauss(state, &p3, n3, span3);
    t = time_for_growth(s, 100);
    double c3[3] = {0, 0, PF_HBAR * p3.k0[2] * t / MASS};
    pft_ok(pf_wave_fly_scaled(w, t, NULL, c3));
    assert_true(compare_gauss(w, &p3, t, 3.0, &er, &ep) >= 300);
    pft_near(er, 0, 0, 1e-9, NULL);
    pft_near(ep, 0, 0, 1e-9, NULL);
    pf_wave_free(w);
}

/* At t = 2 t_c (t_c = m N dx^2 / 2 pi hbar) the scaled grid's points are
 * every other point of the original grid; there both methods must agree. */
static void scaled_agrees_with_same_grid(void **state)
{
    const double s = 1e-6;
    gauss p = {1, {s}, {-4e-6}, {0.8 / s}};
    size_t n[1] = {512};
    double span[1] = {128 * s};
    pf_wave *a = make_gauss(state, &p, n, span);
    pf_wave *b;
    pft_ok(pf_wave_copy(a, &b));
    double dx = span[0] / (double)n[0];
    double t = 2 * MASS * (double)n[0] * dx * dx / (PF_TWO_PI * PF_HBAR);
    pft_ok(pf_wave_fly(a, t));
    pft_ok(pf_wave_to(a, PF_POSITION));
    pft_ok(pf_wave_fly_scaled(b, t, NULL, NULL));
    pf_grid *gb = pf_wave_grid(b);
    pft_near(pf_grid_spacing(gb, 0), 2 * dx, 1e-13, 0, NULL);
    const double complex *da = pf_wave_data(a), *db = pf_wave_data(b);
    double peak = 0, worst = 0;
    size_t matched = 0;
    for (size_t l = 0; l < n[0]; l++) {
        /* x_l = (l - 256) 2 dx = x_j with j = 2 l - 256 on the original grid. */
        long j = 2 * (long)l - 256;
        if (j < 0 || j >= (long)n[0]) continue;
        pft_near(pf_grid_x(gb, 0, l), pf_grid_x(pf_wave_grid(a), 0, (size_t)j), 0, 1e-12 * span[0], NULL);
        peak = fmax(peak, cabs(da[j]));
        worst = fmax(worst, cabs(db[l] - da[j]));
        matched++;
    }
    assert_int_equal(matched, 256);
    pft_near(worst / peak, 0, 0, 1e-10, NULL);

    /* The two-stage form onto the original grid itself: same result. */
    pf_wave *c = make_gauss(state, &p, n, span);
    pft_ok(pf_wave_fly_onto(c, t, pf_wave_grid(a)));
    pft_ok(pf_wave_to(c, PF_POSITION));
    const double complex *dc = pf_wave_data(c);
    worst = 0;
    for (size_t j = 0; j < n[0]; j++) worst = fmax(worst, cabs(dc[j] - da[j]));
    pft_near(worst / peak, 0, 0, 1e-10, NULL);
    const pf_steplog *log = pf_wave_steplog(c);
    assert_string_equal(log->steps[log->count - 1].method, "scaled-2stage");
    pf_wave_free(a);
    pf_wave_free(b);
    pf_wave_free(c);
}

static void flying_back_restores_the_state(void **state)
{
    const double s = 1e-6;
    gauss p = {2, {s, 2 * s}, {0, 1e-6}, {1.0 / s, 0}};
    size_t n[2] = {64, 64};
    double span[2] = {32 * s, 48 * s};
    pf_wave *w = make_gauss(state, &p, n, span);
    pf_wave *orig;
    pft_ok(pf_wave_copy(w, &orig));
    double t = time_for_growth(s, 50);
    pft_ok(pf_wave_fly_scaled(w, t, NULL, NULL));
    pft_ok(pf_wave_fly_scaled(w, -t, NULL, NULL));
    pf_grid *g = pf_wave_grid(w);
    for (int a = 0; a < 2; a++) pft_near(pf_grid_spacing(g, a), span[a] / 64, 1e-13, 0, NULL);
    const double complex *d = pf_wave_data(w), *o = pf_wave_data(orig);
    double worst = 0;
    for (size_t i = 0; i < 64 * 64; i++) worst = fmax(worst, cabs(d[i] - o[i]));
    pft_near(worst, 0, 0, 1e-10 * cabs(o[32 * 64 + 32]), NULL);
    pft_near(pf_wave_clock(w), 0, 0, 1e-18, NULL);
    pf_wave_free(w);
    pf_wave_free(orig);
}

/* A scaled output is an ordinary wave: kick it and fly it on its own grid. */
static void scaled_output_can_be_kicked_and_flown_again(void **state)
{
    const double s = 1e-6;
    gauss p = {1, {s}, {0}, {0}};
    size_t n[1] = {256};
    double span[1] = {64 * s};
    pf_wave *w = make_gauss(state, &p, n, span);
    double dx = span[0] / 256;
    double tc = MASS * 256 * dx * dx / (PF_TWO_PI * PF_HBAR);
    double t1 = 1.2 * tc, t2 = 0.6 * tc;
    pft_ok(pf_wave_fly_scaled(w, t1, NULL, NULL));
    /* Kick: multiply by e^{iqx} on the new grid. */
    double q = 0.3 / s;
    pf_grid *g = pf_wave_grid(w);
    double complex *d = pf_wave_data(w);
    for (size_t j = 0; j < 256; j++) d[j] *= cexp(I * q * pf_grid_x(g, 0, j));
    pf_wave_record(w, "kick", "test", 0, 0);
    pft_ok(pf_wave_fly(w, t2));
    pft_ok(pf_wave_to(w, PF_POSITION));
    d = pf_wave_data(w);
    double worst = 0, peak = 0;
    for (size_t j = 0; j < 256; j++) {
        double x = pf_grid_x(g, 0, j);
        double complex want = cexp(I * (q * x - PF_HBAR * q * q * t2 / (2 * MASS))) *
                              gauss_axis(x - PF_HBAR * q * t2 / MASS, s, 0, 0, t1 + t2);
        worst = fmax(worst, cabs(d[j] - want));
        peak = fmax(peak, cabs(want));
    }
    pft_near(worst / peak, 0, 0, 1e-10, NULL);
    pf_wave_free(w);
}

/* The choosing flight: same-grid while the packet fits, scaled after. */
static void automatic_choice_follows_the_criteria(void **state)
{
    const double s = 1e-6;
    gauss p = {1, {s}, {0}, {0.5 / s}};
    size_t n[1] = {256};
    double span[1] = {64 * s};
    pf_wave *w = make_gauss(state, &p, n, span);
    pf_long_flight_report r;
    pft_ok(pf_wave_fly_long(w, time_for_growth(s, 2), NULL, &r));
    assert_int_equal(r.method, PF_FLIGHT_SAME_GRID);
    assert_true(r.same_grid_ok);
    pft_ok(pf_wave_fly_long(w, time_for_growth(s, 500), NULL, &r));
    assert_int_equal(r.method, PF_FLIGHT_SCALED);
    assert_false(r.same_grid_ok);
    assert_true(r.scaled_ok);
    const pf_steplog *log = pf_wave_steplog(w);
    assert_string_equal(log->steps[log->count - 2].method, "momentum-exact");
    assert_string_equal(log->steps[log->count - 1].method, "scaled-fresnel");
    /* The result is still the textbook packet (two flights in a row). */
    double t = pf_wave_clock(w), er, ep;
    assert_true(compare_gauss(w, &p, t, 4.0, &er, &ep) >= 20);
    pft_near(er, 0, 0, 1e-9, NULL);
    pft_near(ep, 0, 0, 1e-9, NULL);
    /* A requested spacing: two stages, landing on that spacing. */
    pf_wave *v = make_gauss(state, &p, n, span);
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    o.spacing[0] = 0.8 * r.out_spacing[0];
    pft_ok(pf_wave_fly_long(v, time_for_growth(s, 500), &o, &r));
    assert_int_equal(r.method, PF_FLIGHT_SCALED);
    assert_int_equal(r.stages, 2);
    pft_near(pf_grid_spacing(pf_wave_grid(v), 0), o.spacing[0], 1e-14, 0, NULL);
    assert_true(compare_gauss(v, &p, pf_wave_clock(v), 4.0, &er, &ep) >= 20);
    pft_near(er, 0, 0, 1e-9, NULL);
    pft_near(ep, 0, 0, 1e-9, NULL);
    pf_wave_free(v);
    pf_wave_free(w);
}

/* Far-field image of a centred Gaussian: peak density ratio to the exact
 * density is sqrt(1 + 4 N_F^2), N_F = m s^2 / (hbar t) (from the textbook
 * width law: exact width s sqrt(1 + tau^2), far-field width s tau). */
static void far_field_converges_at_the_fraunhofer_rate(void **state)
{
    const double s = 1e-6;
    gauss p = {1, {s}, {0}, {0}};
    size_t n[1] = {256};
    double span[1] = {64 * s};
    double err[2];
    for (int i = 0; i < 2; i++) {
        pf_wave *w = make_gauss(state, &p, n, span);
        double t = time_for_growth(s, 10) * (i ? 2 : 1);
        double ff[256];
        pf_far_field_info info;
        pft_ok(pf_wave_far_field(w, t, ff, &info));
        double nf = MASS * s * s / (PF_HBAR * t);
        pft_near(info.fraunhofer[0], nf, 1e-9, 0, NULL);
        /* The exact density at x = 0, computed by the engine (scaled flight
         * onto the far-field image grid: origin 0, spacing hbar t dk / m). */
        pft_ok(pf_wave_fly_scaled(w, t, NULL, (double[]){0}));
        pft_near(pf_grid_spacing(pf_wave_grid(w), 0), info.spacing[0], 1e-13, 0, NULL);
        double complex z = pf_wave_data(w)[128];
        double exact = creal(z * conj(z));
        pft_near(ff[128] / exact, sqrt(1 + 4 * nf * nf), 1e-9, 0, NULL);
        err[i] = ff[128] / exact - 1;
        pf_wave_free(w);
    }
    /* Doubling t quarters the error (N_F^2 rate), to leading order. */
    pft_near(err[0] / err[1], 4.0, 0.02, 0, NULL);
}

/* More output points pad the input with zeros (finer output spacing); fewer
 * crop it (the dropped probability is logged as removed). */
static void padding_and_cropping_keep_the_textbook_packet(void **state)
{
    const double s = 1e-6;
    gauss p = {1, {s}, {1e-6}, {1.0 / s}};
    size_t n[1] = {128};
    double span[1] = {32 * s};
    double t = time_for_growth(s, 200);
    double c[1] = {p.x0[0] + PF_HBAR * p.k0[0] * t / MASS};
    for (int i = 0; i < 2; i++) {
        pf_wave *w = make_gauss(state, &p, n, span);
        size_t pts[1] = {i ? 96 : 512};
        pft_ok(pf_wave_fly_scaled(w, t, pts, c));
        pf_grid *g = pf_wave_grid(w);
        assert_int_equal(pf_grid_points(g, 0), pts[0]);
        pft_near(pf_grid_spacing(g, 0), PF_TWO_PI * PF_HBAR * t / (MASS * (double)pts[0] * span[0] / 128), 1e-13, 0, NULL);
        double er, ep;
        assert_true(compare_gauss(w, &p, t, 4.0, &er, &ep) >= (i ? 10u : 40u));
        pft_near(er, 0, 0, 1e-9, NULL);
        pft_near(ep, 0, 0, 1e-9, NULL);
        const pf_steplog *log = pf_wave_steplog(w);
        double removed = log->steps[log->count - 1].removed;
        assert_true(removed >= 0 && removed < 1e-12);
        pf_wave_free(w);
    }
}

/* Two stages with a different spacing on each axis (the propagator
 * factorises over axes, so each axis has its own stage durations). */
static void two_stage_per_axis_spacing_in_2d(void **state)
{
    const double s = 1e-6;
    gauss p = {2, {s, 1.2 * s}, {0, 1e-6}, {0.5 / s, 0}};
    size_t n[2] = {128, 128};
    double span[2] = {40 * s, 48 * s};
    pf_wave *w = make_gauss(state, &p, n, span);
    double t = time_for_growth(s, 150);
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    o.method = PF_FLIGHT_SCALED;
    double nat0 = PF_TWO_PI * PF_HBAR * t / (MASS * span[0]), nat1 = PF_TWO_PI * PF_HBAR * t / (MASS * span[1]);
    o.spacing[0] = 0.7 * nat0;
    o.spacing[1] = 1.3 * nat1;
    pf_long_flight_report r;
    pft_ok(pf_wave_fly_long(w, t, &o, &r));
    assert_int_equal(r.stages, 2);
    assert_true(r.scaled_ok);
    pft_near(pf_grid_spacing(pf_wave_grid(w), 0), o.spacing[0], 1e-14, 0, NULL);
    pft_near(pf_grid_spacing(pf_wave_grid(w), 1), o.spacing[1], 1e-14, 0, NULL);
    double er, ep;
    assert_true(compare_gauss(w, &p, t, 3.5, &er, &ep) >= 100);
    pft_near(er, 0, 0, 1e-9, NULL);
    pft_near(ep, 0, 0, 1e-9, NULL);
    pf_wave_free(w);
}

/* Direct (non-FFT) DFT of sign sg along axis a of a 3-slot array (n[0] x
 * n[1] x n[2], row-major), with the exponent's integer j l reduced mod N. */
static void direct_dft_axis(double complex *v, const size_t *n, int a, int sg)
{
    const size_t N = n[a], stride = a == 2 ? 1 : a == 1 ? n[2] : n[1] * n[2], total = n[0] * n[1] * n[2];
    double complex *in = malloc(N * sizeof *in), *out = malloc(N * sizeof *out);
    assert_true(in && out);
    for (size_t start = 0; start < total; start++) {
        if ((start / stride) % N != 0) continue; /* each line once, from its first point */
        for (size_t j = 0; j < N; j++) in[j] = v[start + j * stride];
        for (size_t l = 0; l < N; l++) {
            double complex acc = 0;
            for (size_t j = 0; j < N; j++) acc += in[j] * cexp(sg * I * PF_TWO_PI * (double)((j * l) % N) / (double)N);
            out[l] = acc;
        }
        for (size_t l = 0; l < N; l++) v[start + l * stride] = out[l];
    }
    free(in);
    free(out);
}

/* Implementation check (no physics claim): a 2D or 3D single-FFT stage in
 * place runs through the fused sweeps of pf_fused.c (the input chirp just
 * before the trailing-axes transforms, the output chirp just after the
 * axis-0 transforms).  It equals the defining sum of the stage,
 *   psi'_l = post_l sum_j pre_j psi_j exp(-+2 pi i j.l / N)  (per axis),
 * with pf_scaled_chirp_tables' factors and direct DFTs axis by axis, on
 * counts that give several chunks with a short one and column blocks with
 * a short one, forward and backward, with a shifted output window; and the
 * same bits on 1 and 2 threads. */
static void fused_stage_matches_the_direct_sum(void **state)
{
    static const size_t shapes[][3] = {{10, 60, 66}, {1, 70, 45}}; /* 3D; 2D 70 x 45 */
    const double dx = 0.2e-6;
    for (size_t c = 0; c < 2; c++) {
        const int dim = c == 0 ? 3 : 2;
        size_t n[3], slot[3] = {1, 1, 1};
        double span[3], centre[3];
        for (int a = 0; a < dim; a++) {
            n[a] = shapes[c][a + 3 - dim];
            slot[a + 3 - dim] = n[a];
            span[a] = (double)n[a] * dx;
            centre[a] = (a + 1) * 3.7e-6;
        }
        const size_t total = slot[0] * slot[1] * slot[2];
        for (int sign = -1; sign <= 1; sign += 2) {
            const double t = sign * 4e-3;
            pf_grid *g;
            pft_ok(pf_grid_new(*state, dim, n, span, NULL, &g));
            pf_wave *w[2];
            for (int k = 0; k < 2; k++) pft_ok(pf_wave_new(g, MASS, &w[k]));
            pf_grid_release(g);
            double complex *want = malloc(total * sizeof *want);
            assert_non_null(want);
            uint64_t st = 7 + c;
            for (size_t i = 0; i < total; i++) {
                st = st * 6364136223846793005ULL + 1442695040888963407ULL;
                double re = (double)(st >> 11) * 0x1.0p-53 - 0.5;
                st = st * 6364136223846793005ULL + 1442695040888963407ULL;
                want[i] = re + I * ((double)(st >> 11) * 0x1.0p-53 - 0.5);
            }
            for (int k = 0; k < 2; k++) {
                pft_ok(pf_wave_to(w[k], PF_POSITION));
                memcpy(pf_wave_data(w[k]), want, total * sizeof *want);
            }
            for (int k = 0; k < 2; k++) {
                pf_context_set_threads(*state, 1 + k);
                pft_ok(pf_wave_fly_scaled(w[k], t, NULL, centre));
            }
            pf_context_set_threads(*state, 1);
            const pf_grid *go = pf_wave_grid(w[0]);
            assert_memory_equal(pf_wave_data(w[0]), pf_wave_data(w[1]), total * sizeof *want);
            /* the defining sum */
            double complex *pre[3], *post[3];
            for (int a = 0; a < dim; a++) {
                pre[a] = malloc(n[a] * sizeof **pre);
                post[a] = malloc(n[a] * sizeof **post);
                assert_true(pre[a] && post[a]);
                assert_int_equal(pf_grid_points(go, a), n[a]);
                pf_scaled_chirp_tables(MASS, t, n[a], dx, pf_grid_spacing(go, a), centre[a], pre[a], post[a]);
            }
            for (int pass = 0; pass < 2; pass++) {
                double complex *const *T = pass ? post : pre;
                if (pass)
                    for (int a = 0; a < dim; a++) direct_dft_axis(want, slot, a + 3 - dim, t > 0 ? -1 : 1);
                for (size_t i = 0; i < total; i++) {
                    size_t i2 = i % slot[2], i1 = (i / slot[2]) % slot[1], i0 = i / (slot[1] * slot[2]);
                    double complex f = dim == 3 ? T[0][i0] * T[1][i1] * T[2][i2] : T[0][i1] * T[1][i2];
                    want[i] *= f;
                }
            }
            const double complex *got = pf_wave_data(w[0]);
            double worst = 0, peak = 0;
            for (size_t i = 0; i < total; i++) {
                worst = fmax(worst, cabs(got[i] - want[i]));
                peak = fmax(peak, cabs(want[i]));
            }
            printf("ok %dD fused scaled stage, t %+.0e s: |fused - direct sum| %.2e of the peak (tol 1e-12)\n", dim, t,
                   worst / peak);
            assert_true(worst <= 1e-12 * peak);
            for (int a = 0; a < dim; a++) {
                free(pre[a]);
                free(post[a]);
            }
            free(want);
            for (int k = 0; k < 2; k++) pf_wave_free(w[k]);
        }
    }
}

static void bad_scaled_requests_are_refused(void **state)
{
    gauss p = {1, {1e-6}, {0}, {0}};
    size_t n[1] = {64};
    double span[1] = {16e-6};
    pf_wave *w = make_gauss(state, &p, n, span);
    assert_int_equal(pf_wave_fly_scaled(w, 0.0, NULL, NULL), PF_EINVAL);
    assert_int_equal(pf_wave_fly_scaled(w, NAN, NULL, NULL), PF_EINVAL);
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    o.method = PF_FLIGHT_SAME_GRID;
    o.spacing[0] = 1e-6;
    assert_int_equal(pf_wave_fly_long(w, 1e-3, &o, NULL), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(*state), "same-grid"));
    pf_wave_free(w);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(gaussian_grown_100x_matches_textbook, pft_setup, pft_teardown),
        cmocka_unit_test(segment_chirps_match_the_formula),
        cmocka_unit_test_setup_teardown(gaussian_1d_odd_and_unaligned_counts, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(gaussian_grown_1000x_matches_textbook, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(gaussian_2d_and_3d_match_textbook, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(scaled_agrees_with_same_grid, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(flying_back_restores_the_state, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(scaled_output_can_be_kicked_and_flown_again, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(automatic_choice_follows_the_criteria, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(far_field_converges_at_the_fraunhofer_rate, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(padding_and_cropping_keep_the_textbook_packet, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(two_stage_per_axis_spacing_in_2d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(fused_stage_matches_the_direct_sum, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(bad_scaled_requests_are_refused, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
