/* test_stop.c - the context's stop check (pf_context_poll_stop): long loops
 * poll it once per step and end with PF_ESTOP when it says so.  This is the
 * engine side of the runner's SIGTERM and --time-limit handling; what is
 * checked is the contract (a poll per step, the status code, the clock left
 * alone), not physics, so no outside reference is involved. */
#include "pft.h"
#include "pf_relax.h"
#include "pf_splitstep.h"

/* Counts polls; asks to stop from poll number stop_at on (0: never). */
typedef struct poll_counter {
    size_t calls, stop_at;
} poll_counter;

static int count_polls(void *user)
{
    poll_counter *c = user;
    c->calls++;
    return c->stop_at && c->calls >= c->stop_at;
}

/* Invented scenario: 87Rb in a 50 Hz trap, as in test_protocol_splitstep.c. */
#define OMEGA (2 * PF_PI * 50.0)

typedef struct setup {
    pf_context *ctx;
    pf_grid *g;
    pf_wave *w;
    double V[128];
} setup;

static void make(setup *s)
{
    s->ctx = pft_context();
    pf_context_set_warn_handler(s->ctx, pft_count_warning, NULL);
    size_t n = 128;
    double aho = sqrt(PF_HBAR / (pft_mass("87Rb") * OMEGA)), span = 16 * aho;
    s->g = pft_grid(s->ctx, 1, &n, &span, NULL);
    for (size_t i = 0; i < n; i++) {
        double x = pf_grid_x(s->g, 0, i);
        s->V[i] = 0.5 * pft_mass("87Rb") * OMEGA * OMEGA * x * x;
    }
    pft_gauss p = {.x0 = {aho}, .sigma = {aho}, .k0 = {0}};
    s->w = pft_gauss_wave(s->g, pft_mass("87Rb"), &p);
}

static void unmake(setup *s)
{
    pf_wave_free(s->w);
    pf_grid_release(s->g);
    pf_context_release(s->ctx);
}

/* A check that never stops is asked once per step: 200 steps, 200 polls. */
static void test_evolve_polls_every_step(void **state)
{
    (void)state;
    setup s;
    make(&s);
    poll_counter c = {0, 0};
    pf_context_set_stop_check(s.ctx, count_polls, &c);
    pf_evolve_spec spec = {.potential = s.V, .dt = 1e-5, .order = 2};
    pf_evolve_info info;
    pft_ok(pf_wave_evolve(s.w, 2e-3, &spec, &info));
    assert_int_equal((int)info.steps, 200);
    assert_int_equal((int)c.calls, 200);
    unmake(&s);
}

/* A stop at poll 37 ends evolve there: PF_ESTOP, its message, the clock
 * not advanced; with the check removed the same call runs to the end. */
static void test_evolve_stops(void **state)
{
    (void)state;
    setup s;
    make(&s);
    poll_counter c = {0, 37};
    pf_context_set_stop_check(s.ctx, count_polls, &c);
    pf_evolve_spec spec = {.potential = s.V, .dt = 1e-5, .order = 4};
    double t0 = pf_wave_clock(s.w);
    assert_int_equal(pf_wave_evolve(s.w, 2e-3, &spec, NULL), PF_ESTOP);
    assert_int_equal((int)c.calls, 37);
    assert_true(pf_wave_clock(s.w) == t0);
    assert_non_null(strstr(pf_context_message(s.ctx), "stopped on request"));
    assert_string_equal(pf_status_name(PF_ESTOP), "stopped on request");
    pf_context_set_stop_check(s.ctx, NULL, NULL);
    pft_ok(pf_wave_evolve(s.w, 2e-3, &spec, NULL));
    unmake(&s);
}

/* Relaxation polls per step too: a stop at poll 5 ends it with PF_ESTOP. */
static void test_relax_stops(void **state)
{
    (void)state;
    setup s;
    make(&s);
    poll_counter c = {0, 5};
    pf_context_set_stop_check(s.ctx, count_polls, &c);
    pf_relax_spec spec = {.potential = s.V, .tolerance = 1e-14, .max_steps = 100000, .check_every = 10};
    pf_relax_info info;
    assert_int_equal(pf_wave_relax(s.w, &spec, &info), PF_ESTOP);
    assert_int_equal((int)c.calls, 5);
    unmake(&s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_evolve_polls_every_step),
        cmocka_unit_test(test_evolve_stops),
        cmocka_unit_test(test_relax_stops),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
