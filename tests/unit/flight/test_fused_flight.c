/* test_fused_flight.c - deferred flights and the fused flight sweep
 * (pf_fused.c) on 2D and 3D grids.
 *
 * Outside references:
 *  - the exact free evolution of a Gaussian packet with mean momentum,
 *    psi(x, t) = prod_a (2 pi s_a(t)^2)^(-1/4) ... in closed form: per axis
 *    psi = (2 pi sigma0^2)^(-1/4) (1 + i hbar t / 2 m sigma0^2)^(-1/2)
 *          exp(-(x - x0 - v t)^2 / (4 sigma0^2 (1 + i hbar t / 2 m sigma0^2))
 *              + i k0 (x - x0) - i hbar k0^2 t / 2m)
 *    (textbook free Gaussian packet; the complex width form), compared
 *    point by point on grids whose column count leaves a partial block;
 *  - the group law of free flight U(t1) U(t2) = U(t1 + t2) (definition of a
 *    time-independent propagator).
 * Implementation checks (no physics claim, same arithmetic reordered): the
 * fused sweep agrees with the separate forward transform, phase pass and
 * backward transform; operations after a deferred flight see the flown
 * state; the fused sweep gives the same bits at 1 and 2 threads (estimate
 * and measured planning). */
#include "pft.h"
#include <stdlib.h>
#include <string.h>
#include "pf_algebra.h"
#include "pf_constants.h"
#include "pf_flight.h"
#include "pf_force.h"
#include "pf_guard.h"
#include "pf_observe.h"
#include "pf_ops.h"
#include "pf_wave.h"

/* 41K from the species table; the laws do not depend on the mass. */
#define MASS pft_mass("41K")


typedef struct packet {
    int dim;
    double sigma[3], x0[3], k0[3], t;
} packet;

/* The closed-form free Gaussian packet at time p->t (see the header). */
static int exact_packet(void *user, const double *x, double complex *v)
{
    const packet *p = user;
    double complex z = 1;
    for (int a = 0; a < p->dim; a++) {
        double s2 = p->sigma[a] * p->sigma[a];
        double complex c = 1 + I * PF_HBAR * p->t / (2 * MASS * s2);
        double vel = PF_HBAR * p->k0[a] / MASS;
        double u = x[a] - p->x0[a] - vel * p->t;
        z *= pow(PF_TWO_PI * s2, -0.25) / csqrt(c) *
             cexp(-u * u / (4 * s2 * c) + I * p->k0[a] * (x[a] - p->x0[a]) -
                  I * PF_HBAR * p->k0[a] * p->k0[a] * p->t / (2 * MASS));
    }
    *v = z;
    return 0;
}

/* Has the guard measure the momentum band of a freshly filled state, as a
 * first flight would: deferred flights of such a state are then fused. */
static void know_momentum_band(pf_wave *w)
{
    pf_guard_figures f;
    pft_ok(pf_wave_to(w, PF_MOMENTUM));
    pft_ok(pf_wave_guard(w, &f));
    pft_ok(pf_wave_to(w, PF_POSITION));
    assert_true(pf_guard_momentum_known(w));
}

static double worst_difference(pf_wave *a, pf_wave *b, double *peak)
{
    const double complex *x = pf_wave_data_const(a), *y = pf_wave_data_const(b);
    double worst = 0;
    *peak = 0;
    for (size_t i = 0; i < pf_grid_total(pf_wave_grid(a)); i++) {
        worst = fmax(worst, cabs(x[i] - y[i]));
        *peak = fmax(*peak, cabs(y[i]));
    }
    return worst;
}

/* A packet flown with the fused sweep against the closed form.  The first
 * flight of a new state goes through momentum representation (the guard
 * measures its momentum band there); later ones are fused. */
static void fused_against_closed_form(void **state, int dim, const size_t *n, const double *span)
{
    pf_grid *g;
    pft_ok(pf_grid_new(*state, dim, n, span, NULL, &g));
    pf_wave *w, *want;
    pft_ok(pf_wave_new(g, MASS, &w));
    pft_ok(pf_wave_new(g, MASS, &want));
    /* Grids hold the packet to 1e-13 at the edges and at the Nyquist limit. */
    packet p = {dim, {1.6e-6, 1.6e-6, 1.6e-6}, {1e-6, -0.5e-6, 0.3e-6}, {4e5, -2e5, 1e5}, 0};
    pft_ok(pf_wave_fill(w, PF_POSITION, exact_packet, &p));
    const double steps[3] = {0.2e-3, 0.5e-3, 0.3e-3};
    for (int i = 0; i < 3; i++) {
        pft_ok(pf_wave_fly(w, steps[i]));
        assert_int_equal(pf_wave_rep(w), PF_POSITION); /* deferred, not transformed */
        p.t += steps[i];
        pft_ok(pf_wave_fill(want, PF_POSITION, exact_packet, &p));
        double peak, worst = worst_difference(w, want, &peak);
        pft_near(worst, 0, 0, 1e-11 * peak, NULL);
    }
    pf_wave_free(w);
    pf_wave_free(want);
    pf_grid_release(g);
}

/* 2D: 48 x 45 leaves 45 = 32 + 13 columns, a partial block. */
static void fused_2d_partial_block(void **state)
{
    size_t n[2] = {48, 45};
    double span[2] = {40e-6, 38e-6};
    fused_against_closed_form(state, 2, n, span);
}

/* 3D: 48 x 46 x 47 has 2162 = 67 x 32 + 18 columns, a partial block. */
static void fused_3d_partial_block(void **state)
{
    size_t n[3] = {48, 46, 47};
    double span[3] = {40e-6, 39e-6, 39e-6};
    fused_against_closed_form(state, 3, n, span);
}

/* A state with no symmetry: random-looking amplitudes and phases. */
static int rough_state(void *user, const double *x, double complex *v)
{
    (void)user;
    double r = sin(3.1e5 * x[0] + 1.7) * cos(2.3e5 * x[1] - 0.4);
    *v = exp(-(x[0] * x[0] + x[1] * x[1]) / (2 * 25e-12)) * (1 + 0.5 * r) * cexp(I * 2e5 * (x[0] - 0.7 * x[1]));
    return 0;
}

/* Fused sweep versus separate transforms and phase pass (implementation
 * check): a wave kept in momentum representation never defers. */
static void fused_equals_separate_steps(void **state)
{
    pf_grid *g;
    size_t n[2] = {48, 50};
    double span[2] = {48e-6, 50e-6};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    pf_wave *a, *b;
    pft_ok(pf_wave_new(g, MASS, &a));
    pft_ok(pf_wave_fill(a, PF_POSITION, rough_state, NULL));
    pft_ok(pf_wave_normalize(a));
    know_momentum_band(a);
    pft_ok(pf_wave_copy(a, &b));
    pft_ok(pf_wave_fly(a, 0.7e-3)); /* deferred, then fused */
    pft_ok(pf_wave_to(a, PF_POSITION));
    pft_ok(pf_wave_to(b, PF_MOMENTUM));
    pft_ok(pf_wave_fly(b, 0.7e-3)); /* phase pass only */
    pft_ok(pf_wave_to(b, PF_POSITION));
    double peak, worst = worst_difference(a, b, &peak);
    pft_near(worst, 0, 0, 1e-13 * peak, NULL);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
}

/* Group law: two deferred flights equal one flight of their sum. */
static void deferred_flights_compose(void **state)
{
    pf_grid *g;
    size_t n[3] = {20, 24, 18};
    double span[3] = {30e-6, 30e-6, 28e-6};
    pft_ok(pf_grid_new(*state, 3, n, span, NULL, &g));
    pf_wave *a, *b;
    pft_ok(pf_wave_new(g, MASS, &a));
    packet p = {3, {2.5e-6, 2.5e-6, 2.2e-6}, {0, 1e-6, 0}, {2e5, 0, -3e5}, 0};
    pft_ok(pf_wave_fill(a, PF_POSITION, exact_packet, &p));
    know_momentum_band(a);
    pft_ok(pf_wave_copy(a, &b));
    pft_ok(pf_wave_fly(a, 0.4e-3));
    pft_ok(pf_wave_fly(a, 0.9e-3));
    pft_ok(pf_wave_fly(a, -0.2e-3));
    pft_ok(pf_wave_fly(b, 1.1e-3));
    pft_near(pf_wave_clock(a), 1.1e-3, 1e-15, 0, NULL);
    const pf_steplog *log = pf_wave_steplog(a);
    assert_int_equal(log->count, 3); /* every flight is logged */
    double peak, worst = worst_difference(a, b, &peak);
    pft_near(worst, 0, 0, 1e-13 * peak, NULL);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
}

/* Every kind of operation after a deferred flight acts on the flown state:
 * each chain is run twice, once with the flight deferred and once with the
 * wave in momentum representation (nothing deferred), and must agree. */
typedef enum { OP_KICK, OP_SHIFT, OP_FALL, OP_SCALE, OP_COPY, OP_AXPY, OP_MOMENTS, OP_GUARD, OP_COUNT } op_kind;

static pf_status run_op(pf_wave *w, op_kind op, pf_wave **out)
{
    const double k[2] = {1.5e5, -0.8e5}, d[2] = {2e-6, -1e-6}, acc[2] = {0, -2.0};
    *out = w;
    switch (op) {
    case OP_KICK: return pf_wave_kick(w, k);
    case OP_SHIFT: return pf_wave_shift(w, d);
    case OP_FALL: return pf_wave_fall(w, 0.5e-3, acc);
    case OP_SCALE: return pf_wave_scale(w, 0.6 - 0.8 * I);
    case OP_COPY: return pf_wave_copy(w, out);
    case OP_AXPY: return pf_wave_axpy(w, 0.25, w); /* same wave: 1.25 w */
    case OP_MOMENTS: {
        double mean[2], var[2];
        return pf_wave_position_moments(w, mean, var);
    }
    case OP_GUARD: {
        pf_guard_figures f;
        return pf_wave_guard(w, &f);
    }
    default: return PF_EINVAL;
    }
}

static void operations_see_the_flown_state(void **state)
{
    pf_grid *g;
    size_t n[2] = {64, 48};
    double span[2] = {64e-6, 48e-6};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    for (int op = 0; op < OP_COUNT; op++) {
        pf_wave *a, *b, *ra, *rb;
        pft_ok(pf_wave_new(g, MASS, &a));
        pft_ok(pf_wave_fill(a, PF_POSITION, rough_state, NULL));
        pft_ok(pf_wave_normalize(a));
        know_momentum_band(a);
        pft_ok(pf_wave_copy(a, &b));
        pft_ok(pf_wave_to(b, PF_MOMENTUM));
        pft_ok(pf_wave_fly(a, 0.6e-3)); /* deferred */
        pft_ok(pf_wave_fly(b, 0.6e-3)); /* applied at once */
        pft_ok(run_op(a, (op_kind)op, &ra));
        pft_ok(run_op(b, (op_kind)op, &rb));
        pft_ok(pf_wave_to(ra, PF_POSITION));
        pft_ok(pf_wave_to(rb, PF_POSITION));
        double peak, worst = worst_difference(ra, rb, &peak);
        pft_near(worst, 0, 0, 1e-13 * peak, NULL);
        pft_near(pf_wave_clock(ra), pf_wave_clock(rb), 0, 1e-18, NULL);
        if (ra != a) pf_wave_free(ra);
        if (rb != b) pf_wave_free(rb);
        pf_wave_free(a);
        pf_wave_free(b);
    }
    pf_grid_release(g);
}

/* Neither the column blocks nor the chunks of slices depend on the thread
 * count, and both run one-thread plans, so the bits agree (the same check
 * the reductions have) - in measured planning too, where a threaded FFTW
 * plan would be measured separately for 2 threads.  Sizes with several
 * blocks and chunks, so that both threads work in both sweeps. */
static void bits_do_not_depend_on_threads(void **state, int dim, const size_t *n, const double *span)
{
    /* The whole-grid transforms that learn the momentum band beforehand use
     * the grid's threaded plans, which measured planning may make
     * differently for 2 threads: there the sweep sums the band itself. */
    const int measured = pf_context_planning(*state) == PF_PLAN_MEASURE;
    double complex *first = NULL;
    for (int threads = 1; threads <= 2; threads++) {
        pft_ok(pf_context_set_threads(*state, threads));
        pf_grid *g;
        pft_ok(pf_grid_new(*state, dim, n, span, NULL, &g));
        pf_wave *w;
        pft_ok(pf_wave_new(g, MASS, &w));
        pft_ok(pf_wave_fill(w, PF_POSITION, rough_state, NULL));
        if (!measured) know_momentum_band(w);
        pft_ok(pf_wave_fly(w, 0.9e-3));
        const double complex *d = pf_wave_data_const(w);
        size_t bytes = pf_grid_total(g) * sizeof *d;
        if (!first) {
            first = malloc(bytes);
            memcpy(first, d, bytes);
        } else {
            assert_memory_equal(first, d, bytes);
        }
        pf_wave_free(w);
        pf_grid_release(g);
    }
    free(first);
    pft_ok(pf_context_set_threads(*state, 1));
}

static void fused_bits_do_not_depend_on_threads(void **state)
{
    size_t n[2] = {64, 40};
    double span[2] = {64e-6, 40e-6};
    bits_do_not_depend_on_threads(state, 2, n, span);
}

/* 4096-point rows: chunks of 4 rows, 6 chunks. */
static void fused_bits_do_not_depend_on_threads_measured_2d(void **state)
{
    pft_ok(pf_context_set_planning(*state, PF_PLAN_MEASURE));
    size_t n[2] = {24, 4096};
    double span[2] = {48e-6, 80e-6};
    bits_do_not_depend_on_threads(state, 2, n, span);
}

static void ignore_warning(void *user, const char *text)
{
    (void)user;
    (void)text;
}

/* 48 x 40 planes: chunks of 8 planes, 3 chunks; 60 column blocks.  (The
 * state fills axis 2, which the grid guard reports: expected here.) */
static void fused_bits_do_not_depend_on_threads_measured_3d(void **state)
{
    pf_context_set_warn_handler(*state, ignore_warning, NULL);
    pft_ok(pf_context_set_planning(*state, PF_PLAN_MEASURE));
    size_t n[3] = {24, 48, 40};
    double span[3] = {48e-6, 64e-6, 40e-6};
    bits_do_not_depend_on_threads(state, 3, n, span);
}

/* The momentum guard band summed inside the fused sweep (for a state whose
 * band is unknown, as after a kick) equals the band the guard measures in
 * momentum representation (implementation check: same sum, other order).
 * The state's band is made well above zero by a kick towards the edge. */
static void fused_sweep_measures_momentum_band(void **state)
{
    pf_grid *g;
    size_t n[2] = {64, 40};
    double span[2] = {64e-6, 40e-6};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    pft_ok(pf_context_set_guard_threshold(*state, 1.0)); /* record, never warn */
    pf_wave *a, *b;
    pft_ok(pf_wave_new(g, MASS, &a));
    pft_ok(pf_wave_fill(a, PF_POSITION, rough_state, NULL));
    pft_ok(pf_wave_normalize(a));
    const double k[2] = {2.7e6, -2.7e6}; /* into the bands: pi/dx = 3.1e6 1/m, bands beyond 2.9e6 */
    pft_ok(pf_wave_kick(a, k));
    assert_false(pf_guard_momentum_known(a));
    pft_ok(pf_wave_copy(a, &b));
    pft_ok(pf_wave_fly(a, 0.3e-3)); /* deferred; fused with the band sums */
    pft_ok(pf_wave_to(a, PF_POSITION));
    assert_true(pf_guard_momentum_known(a));
    pft_ok(pf_wave_to(b, PF_MOMENTUM));
    pf_guard_figures fa, fb;
    pft_ok(pf_wave_guard(b, &fb));
    pft_ok(pf_wave_to(a, PF_MOMENTUM));
    pft_ok(pf_wave_guard(a, &fa));
    for (int ax = 0; ax < 2; ax++) {
        assert_true(fb.band[PF_MOMENTUM][ax] > 1e-6);
        pft_near(fa.band[PF_MOMENTUM][ax], fb.band[PF_MOMENTUM][ax], 1e-12, 0, NULL);
    }
    const pf_steplog *log = pf_wave_steplog(a);
    pft_near(log->steps[log->count - 1].edge_k, fmax(fb.band[PF_MOMENTUM][0], fb.band[PF_MOMENTUM][1]), 1e-12, 0, NULL);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
}

static void count_warning(void *user, const char *text)
{
    (void)text;
    ++*(int *)user;
}

/* A band over the threshold found inside the sweep still gives the guard's
 * warning, once per axis, as the separate path would. */
static void fused_sweep_band_over_threshold_warns(void **state)
{
    pf_grid *g;
    size_t n[2] = {64, 40};
    double span[2] = {64e-6, 40e-6};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    int warnings = 0;
    pf_context_set_warn_handler(*state, count_warning, &warnings);
    pf_wave *a, *b;
    pft_ok(pf_wave_new(g, MASS, &a));
    pft_ok(pf_wave_fill(a, PF_POSITION, rough_state, NULL));
    pft_ok(pf_wave_normalize(a));
    const double k[2] = {2.2e6, 0};
    pft_ok(pf_wave_kick(a, k));
    pft_ok(pf_wave_copy(a, &b));
    int before = warnings;
    pft_ok(pf_wave_fly(a, 0.3e-3));
    pft_ok(pf_wave_to(a, PF_POSITION));
    int fused_warnings = warnings - before;
    before = warnings;
    pft_ok(pf_wave_to(b, PF_MOMENTUM)); /* nothing deferred: the separate path */
    pft_ok(pf_wave_fly(b, 0.3e-3));
    pft_ok(pf_wave_to(b, PF_POSITION));
    int separate_warnings = warnings - before;
    assert_true(fused_warnings >= 1);
    assert_int_equal(fused_warnings, separate_warnings);
    assert_true(pf_guard_momentum_known(a));
    pf_context_set_warn_handler(*state, NULL, NULL);
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
}

/* Under a memory cap that leaves no room for the sweep's planning scratch,
 * a deferred flight is still carried out (by the separate steps). */
static void tight_memory_cap_falls_back(void **state)
{
    pf_grid *g;
    size_t n[2] = {64, 48};
    double span[2] = {64e-6, 48e-6};
    pft_ok(pf_grid_new(*state, 2, n, span, NULL, &g));
    pf_wave *a, *b;
    pft_ok(pf_wave_new(g, MASS, &a));
    pft_ok(pf_wave_fill(a, PF_POSITION, rough_state, NULL));
    know_momentum_band(a); /* makes the grid's plans while there is room */
    pft_ok(pf_wave_copy(a, &b));
    size_t bytes = pf_grid_total(g) * sizeof(double complex);
    pft_ok(pf_context_set_memory_cap(*state, 2 * bytes + bytes / 2));
    pft_ok(pf_wave_fly(a, 0.5e-3));
    pft_ok(pf_wave_to(a, PF_POSITION)); /* no room for a third array: separate steps */
    pft_ok(pf_wave_to(b, PF_MOMENTUM));
    pft_ok(pf_wave_fly(b, 0.5e-3));
    pft_ok(pf_wave_to(b, PF_POSITION));
    double peak, worst = worst_difference(a, b, &peak);
    pft_near(worst, 0, 0, 1e-13 * peak, NULL);
    pft_ok(pf_context_set_memory_cap(*state, (size_t)16 << 30)); /* the default */
    pf_wave_free(a);
    pf_wave_free(b);
    pf_grid_release(g);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(fused_2d_partial_block, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(fused_3d_partial_block, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(fused_equals_separate_steps, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(deferred_flights_compose, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(operations_see_the_flown_state, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(fused_bits_do_not_depend_on_threads, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(fused_bits_do_not_depend_on_threads_measured_2d, pft_setup,
                                        pft_teardown),
        cmocka_unit_test_setup_teardown(fused_bits_do_not_depend_on_threads_measured_3d, pft_setup,
                                        pft_teardown),
        cmocka_unit_test_setup_teardown(fused_sweep_measures_momentum_band, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(fused_sweep_band_over_threshold_warns, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(tight_memory_cap_falls_back, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
