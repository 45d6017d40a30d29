/* test_fused_step.c - the fused split step on 2D/3D grids (chunk sweeps with
 * the potential between the trailing-axes transforms, kinetic factor in the
 * column blocks, merged half steps).
 *
 * Implementation checks: the fused step equals the separate steps
 * (pf_wave_evolve_separate) to rounding for every kind of potential sub-step,
 * and gives the same bits at 1 and 2 threads; the set-up kept between calls
 * (exponentials, kinetic tables, plans) is reused and is the right one.
 * Physics check: a displaced
 * ground state in an anisotropic 2D trap follows the textbook coherent state
 * on each axis, through the fused path. */
#include <stdlib.h>
#include <string.h>
#include "pf_observe.h"
#include "pft.h"
#include "pf_internal.h"
#include "pf_cis.h"
#include "pf_kernels.h"
#include "pf_splitstep.h"

/* Invented test scenario: 87Rb in a trap of 50 Hz on axis 0, 70 Hz on axis 1
 * and 90 Hz on axis 2. */
static const double TRAP_HZ[3] = {50.0, 70.0, 90.0};

typedef struct scene {
    pf_context *ctx;
    pf_grid *g;
    double *V;
    double aho[3]; /* oscillator lengths sqrt(hbar / m omega_a) */
} scene;

static double omega(int a) { return 2 * PF_PI * TRAP_HZ[a]; }

static scene make_scene(int threads, int dim, const size_t *n, double span_aho)
{
    scene s;
    s.ctx = pft_context();
    pf_context_set_warn_handler(s.ctx, pft_count_warning, NULL); /* large V at the grid edges, by design */
    pft_ok(pf_context_set_threads(s.ctx, threads));
    double span[3];
    for (int a = 0; a < dim; a++) {
        s.aho[a] = sqrt(PF_HBAR / (pft_mass("87Rb") * omega(a)));
        span[a] = span_aho * s.aho[a];
    }
    s.g = pft_grid(s.ctx, dim, n, span, NULL);
    size_t total = pf_grid_total(s.g);
    s.V = malloc(total * sizeof *s.V);
    assert_non_null(s.V);
    for (size_t off = 0; off < total; off++) {
        size_t rest = off;
        double v = 0;
        for (int a = dim - 1; a >= 0; a--) {
            double x = pf_grid_x(s.g, a, rest % n[a]);
            rest /= n[a];
            v += 0.5 * pft_mass("87Rb") * omega(a) * omega(a) * x * x;
        }
        s.V[off] = v;
    }
    return s;
}

static void free_scene(scene *s)
{
    free(s->V);
    pf_grid_release(s->g);
    pf_context_release(s->ctx);
}

/* A displaced, moving, slightly squeezed packet: every term of the step
 * (kinetic, potential, mean field) changes it. */
static pf_wave *packet(const scene *s)
{
    int dim = pf_grid_dim(s->g);
    pft_gauss p = {.dim = dim};
    for (int a = 0; a < dim; a++) {
        p.x0[a] = (2.0 - 0.7 * a) * s->aho[a];
        p.sigma[a] = 0.6 * s->aho[a];
        p.k0[a] = (0.8 + 0.3 * a) / s->aho[a];
    }
    return pft_gauss_wave(s->g, pft_mass("87Rb"), &p);
}

/* V(x, t) = (1 + 0.3 sin(omega_0 t)) V(x): a modulated trap. */
typedef struct modulated {
    const double *V;
    size_t n;
} modulated;

static int modulated_fn(void *user, double t, double *out)
{
    const modulated *m = user;
    double f = 1.0 + 0.3 * sin(omega(0) * t);
    for (size_t i = 0; i < m->n; i++) out[i] = f * m->V[i];
    return 0;
}

enum { STATIC, STATIC_CACHED, MEAN_FIELD, VARYING, KINDS };
static const char *const KIND_NAME[KINDS] = {"static", "static+cache", "mean field", "V(x,t)"};

/* Fills spec for kind k (cache and m are the caller's storage). */
static pf_evolve_spec spec_for(const scene *s, int kind, int order, double dt, pf_evolve_cache *cache,
                               modulated *m)
{
    pf_evolve_spec spec = {.potential = s->V, .dt = dt, .order = order};
    if (kind == STATIC_CACHED) spec.cache = cache;
    if (kind == MEAN_FIELD) {
        /* g |psi|^2 at the packet's peak (prod_a 1 / (sqrt(2 pi) sigma_a))
         * gives a phase of half a radian per step from the mean field alone. */
        double peak = 1;
        for (int a = 0; a < pf_grid_dim(s->g); a++) peak /= sqrt(2 * PF_PI) * 0.6 * s->aho[a];
        spec.g = 0.5 * PF_HBAR / (dt * peak);
    }
    if (kind == VARYING) {
        m->V = s->V;
        m->n = pf_grid_total(s->g);
        spec.potential = NULL;
        spec.varying = modulated_fn;
        spec.user = m;
    }
    return spec;
}

/* Fused against separate steps, order 2 and 4, every kind of potential
 * sub-step; steps of about 1/40 of the trap period.  The two differ by the
 * order of floating-point operations only: the state's L2 distance stays at
 * rounding level (1e-12 against a norm of 1; measured about 1e-14). */
static void fused_equals_separate(int dim, const size_t *n)
{
    scene s = make_scene(1, dim, n, 16.0);
    const double dt = 1.0 / (40 * TRAP_HZ[0]);
    for (int order = 2; order <= 4; order += 2)
        for (int kind = 0; kind < KINDS; kind++) {
            pf_evolve_cache cache;
            pf_evolve_cache_init(&cache);
            modulated m;
            pf_evolve_spec spec = spec_for(&s, kind, order, dt, &cache, &m);
            pf_wave *a = packet(&s), *b = packet(&s);
            /* Two calls, the second reusing the cache when there is one. */
            for (int call = 0; call < 2; call++) {
                pft_ok(pf_wave_evolve(a, 5 * dt, &spec, NULL));
                pft_ok(pf_wave_evolve_separate(b, 5 * dt, &spec, NULL));
            }
            double d = pft_difference(a, b);
            char label[96];
            snprintf(label, sizeof label, "%dD fused = separate, order %d, %s", dim, order, KIND_NAME[kind]);
            pft_near(d, 0.0, 0, 1e-12, label);
            assert_true(pf_wave_clock(a) == pf_wave_clock(b));
            /* The evolution must have moved the state well beyond rounding,
             * or the comparison above would prove nothing. */
            pf_wave *start = packet(&s);
            assert_true(pft_difference(a, start) > 1e-2);
            pf_wave_free(start);
            pf_wave_free(a);
            pf_wave_free(b);
            pf_evolve_cache_clear(&cache);
        }
    free_scene(&s);
}

static void fused_equals_separate_2d(void **state)
{
    (void)state;
    size_t n[2] = {48, 40};
    fused_equals_separate(2, n);
}

/* 2048-point rows make chunks of 8 rows, so 20 rows end in a short chunk. */
static void fused_equals_separate_2d_short_chunk(void **state)
{
    (void)state;
    size_t n[2] = {20, 2048};
    fused_equals_separate(2, n);
}

static void fused_equals_separate_3d(void **state)
{
    (void)state;
    size_t n[3] = {20, 16, 12};
    fused_equals_separate(3, n);
}

/* The chunks and column blocks do not depend on the thread count, and each
 * runs one-thread plans, so 1 and 2 threads give the same bits. */
static void fused_bits_do_not_depend_on_threads(int dim, const size_t *n, int kind, int order)
{
    double complex *first = NULL;
    size_t bytes = 0;
    for (int threads = 1; threads <= 2; threads++) {
        scene s = make_scene(threads, dim, n, 16.0);
        pf_evolve_cache cache;
        pf_evolve_cache_init(&cache);
        modulated m;
        pf_evolve_spec spec = spec_for(&s, kind, order, 1.0 / (40 * TRAP_HZ[0]), &cache, &m);
        pf_wave *w = packet(&s);
        pft_ok(pf_wave_evolve(w, 7 * spec.dt, &spec, NULL));
        const double complex *d = pf_wave_data_const(w);
        if (!first) {
            bytes = pf_grid_total(s.g) * sizeof *d;
            first = malloc(bytes);
            memcpy(first, d, bytes);
        } else {
            assert_memory_equal(first, d, bytes);
        }
        pf_wave_free(w);
        pf_evolve_cache_clear(&cache);
        free_scene(&s);
    }
    free(first);
}

static void bits_2d_static_short_chunk(void **state)
{
    (void)state;
    size_t n[2] = {20, 2048};
    fused_bits_do_not_depend_on_threads(2, n, STATIC, 2);
}

/* 48 x 40 planes make chunks of 8 planes: 3 chunks, so both threads work. */
static void bits_3d_mean_field_order4(void **state)
{
    (void)state;
    size_t n[3] = {24, 48, 40};
    fused_bits_do_not_depend_on_threads(3, n, MEAN_FIELD, 4);
}

/* The stored factors are formed inside the chunks of their first pass,
 * shared among the threads. */
static void bits_3d_static_cached_order4(void **state)
{
    (void)state;
    size_t n[3] = {24, 48, 40};
    fused_bits_do_not_depend_on_threads(3, n, STATIC_CACHED, 4);
}

/* A displaced ground state in a harmonic trap is a coherent state: on each
 * axis a ground-state Gaussian (density width sqrt(hbar / 2 m omega_a))
 * centred on the classical orbit x0 cos(omega_a t) with momentum
 * -m omega_a x0 sin(omega_a t) (textbook harmonic oscillator, common
 * practice; the separable 2D trap factorises).  Fourth order, through the
 * fused path. */
static void fused_follows_coherent_state_2d(void **state)
{
    (void)state;
    size_t n[2] = {128, 96};
    scene s = make_scene(2, 2, n, 24.0);
    const double x0[2] = {3.0 * s.aho[0], -2.0 * s.aho[1]}, time = 0.3 / TRAP_HZ[0];
    pft_gauss p0 = {.dim = 2}, pt = {.dim = 2};
    for (int a = 0; a < 2; a++) {
        double w = omega(a);
        p0.x0[a] = x0[a];
        p0.sigma[a] = pt.sigma[a] = s.aho[a] / sqrt(2.0);
        pt.x0[a] = x0[a] * cos(w * time);
        pt.k0[a] = -pft_mass("87Rb") * w * x0[a] * sin(w * time) / PF_HBAR;
    }
    pf_wave *w = pft_gauss_wave(s.g, pft_mass("87Rb"), &p0), *exact = pft_gauss_wave(s.g, pft_mass("87Rb"), &pt);
    pf_evolve_spec spec = {.potential = s.V, .dt = time / 120, .order = 4};
    pft_ok(pf_wave_evolve(w, time, &spec, NULL));
    pft_near(pft_distance(w, exact), 0.0, 0, 1e-6, "2D coherent state after 0.3 periods (fused, order 4)");
    pft_near(pf_wave_norm(w), 1.0, 0, 1e-12, "norm conserved by the fused step");
    pf_wave_free(w);
    pf_wave_free(exact);
    free_scene(&s);
}

/* Set-up cache: a second call with the same potential and step allocates
 * nothing and makes no new tables (exponentials, kinetic tables, plans);
 * here in 1D (separate steps) and 3D (fused), order 4 with a cache. */
static void second_call_repeats_nothing(int dim, const size_t *n)
{
    scene s = make_scene(1, dim, n, 16.0);
    pf_evolve_cache cache;
    pf_evolve_cache_init(&cache);
    pf_evolve_spec spec = {.potential = s.V, .dt = 1.0 / (40 * TRAP_HZ[0]), .order = 4, .cache = &cache};
    pf_wave *w = packet(&s);
    pft_ok(pf_wave_evolve(w, 3 * spec.dt, &spec, NULL));
    unsigned long before = pf_context_allocations(s.ctx);
    double complex *e[3];
    memcpy(e, cache.e, sizeof e);
    pft_ok(pf_wave_evolve(w, 3 * spec.dt, &spec, NULL));
    assert_int_equal(pf_context_allocations(s.ctx), before);
    for (int k = 0; k < 3; k++) assert_ptr_equal(cache.e[k], e[k]);
    pf_wave_free(w);
    pf_evolve_cache_clear(&cache);
    free_scene(&s);
}

static void second_call_repeats_nothing_1d(void **state)
{
    (void)state;
    size_t n[1] = {512};
    second_call_repeats_nothing(1, n);
}

static void second_call_repeats_nothing_3d(void **state)
{
    (void)state;
    size_t n[3] = {20, 16, 12};
    second_call_repeats_nothing(3, n);
}

/* The stored potential factors are the exponentials they stand for: the
 * end half step e1 = exp(-i V h w1/2 / hbar), the merged boundary e1 e1
 * and, at fourth order, the inner boundary e1 e2 with e2 = exp(-i V h
 * w0/2 / hbar) (w1, w0 of Yoshida 1990, pf_splitstep.h), against libm's
 * cexp within a few ulp (pf_cis is within 2 ulp of GSL's sine and
 * cosine).  The merged product is also the exact bits of plain complex
 * multiplication of e1 by itself (-fcx-limited-range: the textbook
 * formula), as pot_apply formed it per pass before the products were kept.
 * 1D, 2^12 points, phases up to about 60 rad at the edges. */
static void stored_factors_are_the_exponentials(void **state)
{
    (void)state;
    size_t n[1] = {4096};
    scene s = make_scene(1, 1, n, 16.0);
    const double dt = 1.0 / (40 * TRAP_HZ[0]);
    const double cbrt2 = cbrt(2.0), w1 = 1.0 / (2.0 - cbrt2), w0 = -cbrt2 / (2.0 - cbrt2);
    for (int order = 2; order <= 4; order += 2) {
        pf_evolve_cache cache;
        pf_evolve_cache_init(&cache);
        pf_evolve_spec spec = {.potential = s.V, .dt = dt, .order = order, .cache = &cache};
        pf_wave *w = packet(&s);
        pft_ok(pf_wave_evolve(w, 2 * dt, &spec, NULL));
        assert_non_null(cache.e[0]);
        assert_non_null(cache.e[1]);
        if (order == 2) assert_null(cache.e[2]);
        else assert_non_null(cache.e[2]);
        const double c1 = order == 2 ? 1.0 : w1;
        double worst[3] = {0, 0, 0};
        for (size_t i = 0; i < n[0]; i++) {
            double a = s.V[i] * dt / PF_HBAR;
            double complex want[3] = {cexp(-I * a * c1 / 2), cexp(-I * a * c1), cexp(-I * a * (c1 + w0) / 2)};
            for (int k = 0; k < (order == 2 ? 2 : 3); k++) {
                double d = cabs(cache.e[k][i] - want[k]);
                if (d > worst[k]) worst[k] = d;
            }
            double complex sq = cache.e[0][i] * cache.e[0][i];
            assert_true(creal(cache.e[1][i]) == creal(sq) && cimag(cache.e[1][i]) == cimag(sq));
        }
        pft_near(worst[0], 0.0, 0, 1e-14, "end half-step factor against libm cexp");
        pft_near(worst[1], 0.0, 0, 1e-14, "merged boundary factor e1 e1 against libm cexp");
        if (order == 4) pft_near(worst[2], 0.0, 0, 1e-14, "inner boundary factor e1 e2 against libm cexp");
        pf_wave_free(w);
        pf_evolve_cache_clear(&cache);
    }
    free_scene(&s);
}

/* Kept tables are the right ones: calls with changing step and order on one
 * grid (reusing and replacing kept kinetic tables and exponentials) give the
 * same bits as each call made on a fresh grid that keeps nothing yet. */
static void kept_tables_match_fresh_ones(void **state)
{
    (void)state;
    size_t n[2] = {48, 40};
    scene s = make_scene(1, 2, n, 16.0);
    const double period = 1.0 / TRAP_HZ[0];
    /* Calls of one step leave the merged boundary unformed (it is formed
     * by the first longer call with that step). */
    const struct { double dt; int order, steps; } calls[] = {
        {period / 40, 2, 2}, {period / 30, 4, 2}, {period / 40, 4, 2}, {period / 50, 2, 2}, {period / 30, 4, 2},
        {period / 40, 2, 2}, {period / 60, 2, 1}, {period / 60, 2, 3}, {period / 60, 2, 1}, {period / 70, 4, 1},
        {period / 70, 4, 1}, {period / 70, 4, 3},
    };
    pf_evolve_cache cache;
    pf_evolve_cache_init(&cache);
    pf_wave *w = packet(&s);
    size_t total = pf_grid_total(s.g), bytes = total * sizeof(double complex);
    double complex *ref = malloc(bytes);
    assert_non_null(ref);
    memcpy(ref, pf_wave_data(w), bytes);
    for (size_t c = 0; c < sizeof calls / sizeof calls[0]; c++) {
        pf_evolve_spec spec = {.potential = s.V, .dt = calls[c].dt, .order = calls[c].order, .cache = &cache};
        const double t = calls[c].steps * spec.dt;
        pft_ok(pf_wave_evolve(w, t, &spec, NULL));
        scene fresh = make_scene(1, 2, n, 16.0);
        pf_wave *f;
        pft_ok(pf_wave_new(fresh.g, pft_mass("87Rb"), &f));
        memcpy(pf_wave_data(f), ref, bytes);
        spec.cache = NULL;
        pft_ok(pf_wave_evolve(f, t, &spec, NULL));
        memcpy(ref, pf_wave_data(f), bytes);
        assert_memory_equal(pf_wave_data(w), ref, bytes);
        pf_wave_free(f);
        free_scene(&fresh);
    }
    free(ref);
    pf_wave_free(w);
    pf_evolve_cache_clear(&cache);
    free_scene(&s);
}

/* Each stored factor is formed by the first pass that uses it: a call of
 * one step forms the end factor e1 (and at fourth order the inner
 * boundary e1 e2), not the merged boundary e1 e1, which the first longer
 * call with the same step forms; a further call forms and allocates
 * nothing. */
static void factors_formed_when_first_used(void **state)
{
    (void)state;
    size_t n[1] = {512};
    scene s = make_scene(1, 1, n, 16.0);
    for (int order = 2; order <= 4; order += 2) {
        pf_evolve_cache cache;
        pf_evolve_cache_init(&cache);
        pf_evolve_spec spec = {.potential = s.V, .dt = 1.0 / (40 * TRAP_HZ[0]), .order = order, .cache = &cache};
        const unsigned inner = order == 4 ? 4u : 0u;
        pf_wave *w = packet(&s);
        pft_ok(pf_wave_evolve(w, spec.dt, &spec, NULL));
        assert_int_equal(cache.formed, 1u | inner);
        pft_ok(pf_wave_evolve(w, 3 * spec.dt, &spec, NULL));
        assert_int_equal(cache.formed, 3u | inner);
        unsigned long before = pf_context_allocations(s.ctx);
        pft_ok(pf_wave_evolve(w, 2 * spec.dt, &spec, NULL));
        assert_int_equal(pf_context_allocations(s.ctx), before);
        assert_int_equal(cache.formed, 3u | inner);
        /* a new step starts afresh */
        spec.dt *= 1.5;
        pft_ok(pf_wave_evolve(w, spec.dt, &spec, NULL));
        assert_int_equal(cache.formed, 1u | inner);
        pf_wave_free(w);
        pf_evolve_cache_clear(&cache);
    }
    free_scene(&s);
}

/* The kinetic tables of a new step are the vectorised exp(-i c m^2) of
 * every entry (pf_cis.h), bit for bit, although each |m| is evaluated once
 * (the entry of -m is a copy), the phases go through in blocks and a long
 * axis is shared among threads: 1D axes of even and odd length above the
 * threading threshold, at 2 threads.  Each entry is also within 4 units in
 * the last place of libm's cexp of the same phase (the outside reference;
 * pf_cis.h promises a few). */
static void kinetic_tables_are_the_exponentials(void **state)
{
    (void)state;
    const size_t lengths[] = {16384, 16383, 64};
    double worst = 0;
    for (size_t l = 0; l < sizeof lengths / sizeof lengths[0]; l++) {
        size_t n[1] = {lengths[l]};
        scene s = make_scene(2, 1, n, 16.0);
        double complex *t = malloc(n[0] * sizeof *t), *tables[1] = {t};
        assert_non_null(t);
        const double tau = PF_HBAR * (1.0 / (40 * TRAP_HZ[0])) / pft_mass("87Rb");
        pf_kernel_kinetic_tables(s.g, tau, NULL, tables);
        const double dk = 2 * PF_PI / (16.0 * s.aho[0]), c = 0.5 * tau * dk * dk;
        for (size_t j = 0; j < n[0]; j++) {
            double m = nearbyint(pf_grid_k(s.g, 0, j) / dk);
            double phase = c * m * m + 2 * PF_PI * 0.0;
            double complex want;
            pf_cis_minus(&phase, &want, 1);
            assert_memory_equal(&t[j], &want, sizeof want);
            double complex libm = cexp(-I * phase);
            double ulp = fabs(nextafter(1.0, 2.0) - 1.0);
            double err = fmax(fabs(creal(t[j]) - creal(libm)), fabs(cimag(t[j]) - cimag(libm))) / ulp;
            if (err > worst) worst = err;
        }
        free(t);
        free_scene(&s);
    }
    printf("ok kinetic tables within %.1f ulp (of 1) of libm cexp (tol 4)\n", worst);
    assert_true(worst <= 4.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(fused_equals_separate_2d),
        cmocka_unit_test(fused_equals_separate_2d_short_chunk),
        cmocka_unit_test(fused_equals_separate_3d),
        cmocka_unit_test(bits_2d_static_short_chunk),
        cmocka_unit_test(bits_3d_mean_field_order4),
        cmocka_unit_test(bits_3d_static_cached_order4),
        cmocka_unit_test(fused_follows_coherent_state_2d),
        cmocka_unit_test(second_call_repeats_nothing_1d),
        cmocka_unit_test(second_call_repeats_nothing_3d),
        cmocka_unit_test(kept_tables_match_fresh_ones),
        cmocka_unit_test(stored_factors_are_the_exponentials),
        cmocka_unit_test(factors_formed_when_first_used),
        cmocka_unit_test(kinetic_tables_are_the_exponentials),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
