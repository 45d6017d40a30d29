/* test_guard.c - grid guards: band figures against a naive loop over every
 * point, the wrap-around warning for a too-small grid, the aliasing warning
 * for a kick beyond the Nyquist limit pi/dx (common practice: the sampling
 * theorem, no source needed), lazy attribution to the step log, the
 * once-per-axis rule, the configurable threshold, and the state extents
 * against the Gaussian quantiles of GSL (gsl_cdf_ugaussian_Pinv). */
#include "pft.h"
#include <gsl/gsl_cdf.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_guard.h"
#include "pf_observe.h"
#include "pf_wave.h"

#define MASS pft_mass("87Rb") /* from the species table */

typedef struct warnings {
    int count;
    char last[1024];
} warnings;

static void capture(void *user, const char *text)
{
    warnings *w = user;
    w->count++;
    snprintf(w->last, sizeof w->last, "%s", text);
}

typedef struct fixture {
    pf_context *ctx;
    warnings seen;
} fixture;

static int setup(void **state)
{
    fixture *f = calloc(1, sizeof *f);
    f->ctx = pft_context();
    pf_context_set_warn_handler(f->ctx, capture, &f->seen);
    *state = f;
    return 0;
}

static int teardown(void **state)
{
    fixture *f = *state;
    pf_context_release(f->ctx);
    free(f);
    return 0;
}

typedef struct blob {
    int dim;
    double s, x0[3], k0[3];
} blob;

static int fill_blob(void *user, const double *x, double complex *v)
{
    const blob *b = user;
    double complex z = 1;
    for (int a = 0; a < b->dim; a++) {
        double d = x[a] - b->x0[a];
        z *= exp(-d * d / (4 * b->s * b->s)) * cexp(I * b->k0[a] * x[a]);
    }
    *v = z;
    return 0;
}

static pf_wave *make(fixture *f, int dim, const size_t *n, const double *span, const blob *b)
{
    pf_grid *g;
    pft_ok(pf_grid_new(f->ctx, dim, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, MASS, &w));
    pf_grid_release(g);
    pft_ok(pf_wave_fill(w, PF_POSITION, fill_blob, (void *)b));
    pft_ok(pf_wave_normalize(w));
    pf_wave_record(w, "build", "test", 0, 0);
    return w;
}

/* Naive band probability: every point, asking whether its index on axis a
 * is among the outer b at either end (position) or among the b largest
 * |k| at either end of the ascending order (momentum). */
static double naive_band(pf_wave *w, pf_rep rep, int a)
{
    pf_grid *g = pf_wave_grid(w);
    int d = pf_grid_dim(g);
    double *rho = malloc(pf_grid_total(g) * sizeof *rho);
    pft_ok(pf_wave_density(w, rep, rho)); /* momentum: ascending order */
    size_t n = pf_grid_points(g, a), b = pf_guard_band_points(n);
    double in = 0, all = 0;
    size_t idx[3] = {0, 0, 0};
    for (size_t off = 0; off < pf_grid_total(g); off++) {
        size_t rest = off;
        for (int i = d - 1; i >= 0; i--) {
            idx[i] = rest % pf_grid_points(g, i);
            rest /= pf_grid_points(g, i);
        }
        all += rho[off];
        if (idx[a] < b || idx[a] >= n - b) in += rho[off];
    }
    free(rho);
    return in / all;
}

static void band_figures_match_a_naive_loop(void **state)
{
    fixture *f = *state;
    /* A packet placed near the corner so every band holds something. */
    blob b = {2, 2e-6, {11e-6, -9e-6}, {0.7 / 2e-6 * 6, -0.5 / 2e-6 * 5}};
    size_t n[2] = {96, 64};
    double span[2] = {32e-6, 30e-6};
    pf_wave *w = make(f, 2, n, span, &b);
    pf_guard_figures gf;
    pft_ok(pf_wave_guard(w, &gf));
    assert_true(gf.known[PF_POSITION]);
    for (int a = 0; a < 2; a++) pft_near(gf.band[PF_POSITION][a], naive_band(w, PF_POSITION, a), 1e-12, 1e-300, NULL);
    pft_ok(pf_wave_to(w, PF_MOMENTUM));
    pft_ok(pf_wave_guard(w, &gf));
    assert_true(gf.known[PF_MOMENTUM]);
    for (int a = 0; a < 2; a++) {
        pft_near(gf.band[PF_MOMENTUM][a], naive_band(w, PF_MOMENTUM, a), 1e-12, 1e-300, NULL);
        assert_true(gf.band[PF_MOMENTUM][a] > 1e-9);
    }
    assert_int_equal(gf.band_points[0], 3);
    assert_int_equal(gf.band_points[1], 2);
    pf_wave_free(w);
}

static void too_small_grid_warns_of_wrap_around_once(void **state)
{
    fixture *f = *state;
    blob b = {1, 1e-6, {0}, {0}};
    size_t n[1] = {128};
    double span[1] = {24e-6};
    pf_wave *w = make(f, 1, n, span, &b);
    assert_int_equal(f->seen.count, 0);
    /* Width 1 um grows to ~10 um: far beyond a 24 um box. */
    double t = 2 * MASS * 1e-12 * 10 / PF_HBAR;
    pft_ok(pf_wave_fly(w, t));
    const pf_steplog *log = pf_wave_steplog(w);
    /* In momentum representation after the flight: the position band waits. */
    assert_true(log->steps[log->count - 1].edge_x < 0);
    assert_int_equal(f->seen.count, 0);
    pft_ok(pf_wave_to(w, PF_POSITION));
    assert_true(log->steps[log->count - 1].edge_x > 1e-3);
    assert_int_equal(f->seen.count, 1);
    assert_non_null(strstr(f->seen.last, "position axis 1"));
    assert_non_null(strstr(f->seen.last, "wraps"));
    assert_non_null(strstr(f->seen.last, "Remedy: enlarge the span on axis 1 by x"));
    assert_non_null(strstr(f->seen.last, "step 2 (flight)"));
    /* Once per wave function and axis. */
    pft_ok(pf_wave_fly(w, t));
    pft_ok(pf_wave_to(w, PF_POSITION));
    assert_int_equal(f->seen.count, 1);
    pf_wave_free(w);
}

/* On a 2-point axis the guard bands are the whole axis, so the remedy's
 * growth factor is infinite; the suggested count is capped at 2^40 points
 * (pf_guard.c) instead of converting infinity to size_t, which is undefined
 * (found by the CSV fuzz harness; clang's -fsanitize=float-cast-overflow
 * flags the old conversion).  Position first, then momentum. */
/* The smallest axes: a 2-point axis is refused when the grid is made (its
 * guard bands would be the whole axis), and on the smallest accepted axis a
 * cloud that fills it gets a finite remedy within the grid's own limit of
 * 2^30 points per axis, never an out-of-range conversion to size_t (found by
 * the CSV fuzz harness when 2-point grids were still accepted). */
static void smallest_axis_remedy_is_capped(void **state)
{
    fixture *f = *state;
    size_t two[1] = {2};
    double span2[1] = {2e-6};
    pf_grid *g = NULL;
    assert_int_equal(pf_grid_new(f->ctx, 1, two, span2, NULL, &g), PF_EINVAL);
    assert_null(g);
    blob b = {1, 1e-6, {0}, {0}};
    size_t n[1] = {PF_GRID_MIN_POINTS};
    double span[1] = {2e-6};
    pf_wave *w = make(f, 1, n, span, &b);
    assert_int_equal(f->seen.count, 1);
    assert_non_null(strstr(f->seen.last, "position axis 1"));
    const char *about = strstr(f->seen.last, "about ");
    assert_non_null(about);
    unsigned long long suggested = strtoull(about + 6, NULL, 10);
    assert_true(suggested > PF_GRID_MIN_POINTS);
    assert_true(suggested <= (1ull << 30));
    pf_wave_free(w);
}

static void kick_beyond_nyquist_warns_of_aliasing(void **state)
{
    fixture *f = *state;
    blob b = {1, 2e-6, {0}, {0}};
    size_t n[1] = {128};
    double span[1] = {64e-6};
    pf_wave *w = make(f, 1, n, span, &b);
    /* A kick by 1.05 pi/dx: in position it is just a phase, so the position
     * band stays empty; the momentum content folds back to near -pi/dx. */
    double kick = 1.05 * PF_PI / (span[0] / 128);
    pf_grid *g = pf_wave_grid(w);
    double complex *d = pf_wave_data(w);
    for (size_t j = 0; j < 128; j++) d[j] *= cexp(I * kick * pf_grid_x(g, 0, j));
    pf_wave_record(w, "kick", "test", 0, 0);
    assert_int_equal(f->seen.count, 0);
    pft_ok(pf_wave_fly(w, 1e-4));
    assert_int_equal(f->seen.count, 1);
    assert_non_null(strstr(f->seen.last, "momentum axis 1"));
    assert_non_null(strstr(f->seen.last, "Nyquist"));
    assert_non_null(strstr(f->seen.last, "reduce the spacing on axis 1"));
    const pf_steplog *log = pf_wave_steplog(w);
    assert_true(log->steps[log->count - 1].edge_k > 0.1);
    pf_wave_free(w);
}

static void threshold_is_configurable(void **state)
{
    fixture *f = *state;
    assert_int_equal(pf_context_set_guard_threshold(f->ctx, -1), PF_EINVAL);
    assert_int_equal(pf_context_set_guard_threshold(f->ctx, NAN), PF_EINVAL);
    pft_near(pf_context_guard_threshold(f->ctx), PF_GUARD_DEFAULT_THRESHOLD, 0, 0, NULL);
    pft_ok(pf_context_set_guard_threshold(f->ctx, 0.5));
    blob b = {1, 1e-6, {0}, {0}};
    size_t n[1] = {128};
    double span[1] = {24e-6};
    pf_wave *w = make(f, 1, n, span, &b);
    pft_ok(pf_wave_fly(w, 2 * MASS * 1e-12 * 10 / PF_HBAR));
    pft_ok(pf_wave_to(w, PF_POSITION));
    assert_int_equal(f->seen.count, 0);
    pf_wave_free(w);
}

/* Extent of a Gaussian at tail probability eps: mean +- z s with
 * z = -Phi^-1(eps / 2) (GSL's inverse normal CDF), to within a grid cell. */
static void extent_matches_gaussian_quantiles(void **state)
{
    fixture *f = *state;
    const double s = 1e-6;
    blob b = {1, s, {2e-6}, {0}};
    size_t n[1] = {1024};
    double span[1] = {40e-6};
    pf_wave *w = make(f, 1, n, span, &b);
    double lo, hi, eps = 1e-6;
    pft_ok(pf_wave_extent(w, PF_POSITION, eps, &lo, &hi));
    double z = -gsl_cdf_ugaussian_Pinv(eps / 2);
    double dx = span[0] / 1024;
    pft_near(lo, 2e-6 - z * s, 0, dx, NULL);
    pft_near(hi, 2e-6 + z * s, 0, dx, NULL);
    /* Momentum: rms width 1 / (2 s) (minimum-uncertainty Gaussian). */
    pft_ok(pf_wave_extent(w, PF_MOMENTUM, eps, &lo, &hi));
    double dk = PF_TWO_PI / span[0];
    pft_near(hi, z / (2 * s), 0, dk, NULL);
    pft_near(lo, -z / (2 * s), 0, dk, NULL);
    pf_wave_free(w);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(band_figures_match_a_naive_loop, setup, teardown),
        cmocka_unit_test_setup_teardown(too_small_grid_warns_of_wrap_around_once, setup, teardown),
        cmocka_unit_test_setup_teardown(kick_beyond_nyquist_warns_of_aliasing, setup, teardown),
        cmocka_unit_test_setup_teardown(smallest_axis_remedy_is_capped, setup, teardown),
        cmocka_unit_test_setup_teardown(threshold_is_configurable, setup, teardown),
        cmocka_unit_test_setup_teardown(extent_matches_gaussian_quantiles, setup, teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
