/* test_flight_progress.c - a long flight reports its progress while it runs
 * (engine/core/flight/pf_longflight.c): the context's progress hook hears "fly_long"
 * start at 0, then once per pass of each scaled stage (input chirp, FFT,
 * output chirp: three for the one-stage form, six for the two-stage form)
 * with the fraction done rising strictly below 1, and the end at 1.  A
 * plain scaled flight (pf_wave_fly_scaled) reports nothing, and the hook
 * never changes the result: the state is the same bits with and without it.
 * (Progress reporting is engine behaviour, no outside source.) */
#include <string.h>
#include "pft.h"
#include "pf_build.h"
#include "pf_grid.h"
#include "pf_longflight.h"
#include "pf_wave.h"

#define MAXCALLS 64
typedef struct heard {
    int n;
    char task[MAXCALLS][32];
    double done[MAXCALLS], total[MAXCALLS];
} heard;

static void listen(void *user, const char *task, double done, double total)
{
    heard *h = user;
    if (h->n >= MAXCALLS) return;
    snprintf(h->task[h->n], sizeof h->task[0], "%s", task);
    h->done[h->n] = done, h->total[h->n] = total;
    h->n++;
}

static pf_wave *packet(pf_context *ctx)
{
    size_t n[1] = {512};
    double span[1] = {64e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 1, n, span, NULL, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pf_grid_release(g);
    pf_gaussian_spec spec;
    pf_gaussian_spec_init(&spec, 1e-6);
    pft_ok(pf_build_gaussian(w, &spec, 1));
    return w;
}

/* Checks one fly_long call's reports: start 0, `passes` rising fractions
 * strictly inside (0, 1), end 1, all under "fly_long" with total 1. */
static void check_reports(const heard *h, int passes)
{
    assert_int_equal(h->n, passes + 2);
    for (int i = 0; i < h->n; i++) {
        assert_string_equal(h->task[i], "fly_long");
        assert_true(h->total[i] == 1);
    }
    assert_true(h->done[0] == 0);
    assert_true(h->done[h->n - 1] == 1);
    for (int i = 1; i <= passes; i++) {
        assert_true(h->done[i] > h->done[i - 1]);
        assert_true(h->done[i] < 1);
    }
}

static void long_flight_reports_each_pass(void **state)
{
    pf_context *ctx = *state;
    heard h = {0};
    pf_context_set_progress(ctx, listen, &h);
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    o.method = PF_FLIGHT_SCALED;
    pf_long_flight_report r;
    pf_wave *w = packet(ctx);
    pft_ok(pf_wave_fly_long(w, 0.5, &o, &r));
    assert_int_equal(r.stages, 1);
    check_reports(&h, 3);
    /* The two-stage form: a requested output spacing. */
    pf_wave *v = packet(ctx);
    o.spacing[0] = 0.8 * r.out_spacing[0];
    memset(&h, 0, sizeof h);
    pft_ok(pf_wave_fly_long(v, 0.5, &o, &r));
    assert_int_equal(r.stages, 2);
    check_reports(&h, 6);
    /* A plain scaled flight is not a fly_long call: silent. */
    pf_wave *u = packet(ctx);
    memset(&h, 0, sizeof h);
    size_t pts[1] = {512};
    pft_ok(pf_wave_fly_scaled(u, 0.5, pts, NULL));
    assert_int_equal(h.n, 0);
    pf_context_set_progress(ctx, NULL, NULL);
    pf_wave_free(u);
    pf_wave_free(v);
    pf_wave_free(w);
}

static void the_hook_changes_no_bit(void **state)
{
    pf_context *ctx = *state;
    pf_long_flight_opts o;
    memset(&o, 0, sizeof o);
    o.method = PF_FLIGHT_SCALED;
    pf_wave *a = packet(ctx), *b = packet(ctx);
    pft_ok(pf_wave_fly_long(a, 0.5, &o, NULL));
    heard h = {0};
    pf_context_set_progress(ctx, listen, &h);
    pft_ok(pf_wave_fly_long(b, 0.5, &o, NULL));
    pf_context_set_progress(ctx, NULL, NULL);
    size_t n = pf_grid_total(pf_wave_grid(a));
    const double complex *da = pf_wave_data(a), *db = pf_wave_data(b);
    assert_true(da && db);
    assert_int_equal(memcmp(da, db, n * sizeof *da), 0);
    pf_wave_free(a);
    pf_wave_free(b);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(long_flight_reports_each_pass, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(the_hook_changes_no_bit, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
