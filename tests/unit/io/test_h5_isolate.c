/* test_h5_isolate.c - pf_h5_read through the child process
 * (engine/io/pf_h5_isolate.c) against the in-process reader it wraps: the
 * same samples bit for bit, the same bytes charged to the memory cap, the
 * reader's own status codes and messages carried back, the parent's cap
 * check before it allocates, and no child left behind.
 *
 * The reference is pf_h5_read_inprocess, the reader the isolation must not
 * change; the amplitude written is an arbitrary test pattern. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/wait.h>
#include <unistd.h>
#include "pft.h"
#include "pf_grid.h"
#include "pf_wave.h"
#include "pf_h5.h"
#include "pf_samples.h"

static char dir[64], path[128];

static int pattern(void *user, const double *x, double complex *v)
{
    (void)user;
    *v = sin(1e6 * x[0]) + I * cos(2.3e6 * x[1]) * exp(-x[0] * x[0] * 1e10);
    return 0;
}

/* Writes a 12 x 10 item "wave" (position amplitude and axes) to path. */
static void write_file(pf_context *ctx)
{
    snprintf(dir, sizeof dir, "/tmp/pf-h5iso-XXXXXX");
    assert_non_null(mkdtemp(dir));
    snprintf(path, sizeof path, "%s/w.h5", dir);
    size_t pts[2] = {12, 10};
    double span[2] = {12e-6, 8e-6}, origin[2] = {0.5e-6, -1e-6};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, pts, span, origin, &g));
    pf_wave *w;
    pft_ok(pf_wave_new(g, pft_mass("87Rb"), &w));
    pft_ok(pf_wave_fill(w, PF_POSITION, pattern, NULL));
    pf_wave_set_clock(w, 2.5e-3);
    pf_h5 *f;
    pft_ok(pf_h5_create(ctx, path, 1, &f));
    pft_ok(pf_h5_put_wave(f, "wave", w, PF_H5_PSI));
    pft_ok(pf_h5_commit(f));
    pf_wave_free(w);
    pf_grid_release(g);
}

static void remove_file(void)
{
    unlink(path);
    rmdir(dir);
}

/* No child of this process is left (running or a zombie). */
static void assert_no_child(void)
{
    errno = 0;
    assert_int_equal(waitpid(-1, NULL, WNOHANG), -1);
    assert_int_equal(errno, ECHILD);
}

static void test_same_samples_and_charge(void **state)
{
    pf_context *ctx = *state;
    write_file(ctx);
    pf_h5_source src = {"wave", NULL, NULL, NULL, {NULL, NULL, NULL}, -1, 0, 0, 0};
    size_t before = pf_context_memory_used(ctx);
    pf_samples a, b;
    pft_ok(pf_h5_read_inprocess(ctx, path, &src, &a));
    size_t in_process = pf_context_memory_used(ctx) - before;
    pft_ok(pf_h5_read(ctx, path, &src, &b));
    assert_no_child();
    assert_int_equal(pf_context_memory_used(ctx) - before, 2 * in_process);
    assert_int_equal(b.charged, a.charged);
    assert_true(b.charged_ctx == ctx);
    assert_int_equal(b.dim, 2);
    assert_int_equal(b.n[0], 12);
    assert_int_equal(b.n[1], 10);
    assert_int_equal(b.rep, a.rep);
    assert_string_equal(b.origin, "hdf5");
    assert_memory_equal(&b.mass, &a.mass, sizeof a.mass);
    assert_memory_equal(&b.clock, &a.clock, sizeof a.clock);
    assert_int_equal(b.has_grid, a.has_grid);
    assert_int_equal(b.has_grid, 1);
    assert_memory_equal(b.span, a.span, sizeof a.span);
    assert_memory_equal(b.grid_origin, a.grid_origin, sizeof a.grid_origin);
    for (int k = 0; k < 2; k++) {
        assert_non_null(b.axis[k]);
        assert_memory_equal(b.axis[k], a.axis[k], b.n[k] * sizeof(double));
    }
    assert_memory_equal(b.values, a.values, 120 * sizeof(double complex));
    pf_samples_free(&a);
    pf_samples_free(&b);
    assert_int_equal(pf_context_memory_used(ctx), before);
    remove_file();
}

/* A slab read (a rank's share of a distributed grid) crosses the pipe as
 * the same entries of the whole read, charges only its own bytes, and a
 * slab past the dataset's extent is refused with the extents named. */
static void test_slab_reads(void **state)
{
    pf_context *ctx = *state;
    write_file(ctx);
    pf_h5_source all = {"wave", NULL, NULL, NULL, {NULL, NULL, NULL}, -1, 0, 0, 0};
    pf_samples whole, part, row;
    pft_ok(pf_h5_read(ctx, path, &all, &whole));
    for (int axis = 0; axis < 2; axis++) {
        pf_h5_source src = all;
        src.slab_axis = axis;
        src.slab_first = 3;
        src.slab_count = 4;
        size_t before = pf_context_memory_used(ctx);
        pft_ok(pf_h5_read(ctx, path, &src, &part));
        assert_no_child();
        /* axes whole (12 + 10 doubles), values 4 entries of this axis */
        size_t values = axis == 0 ? 4 * 10 : 12 * 4;
        assert_int_equal(pf_context_memory_used(ctx) - before, (22 * sizeof(double) + values * sizeof(double complex)));
        assert_int_equal(part.n[0], 12);
        assert_int_equal(part.n[1], 10);
        assert_int_equal(part.slab_axis, axis);
        assert_int_equal(part.slab_first, 3);
        assert_int_equal(part.slab_count, 4);
        assert_int_equal(pf_samples_count(&part), values);
        for (size_t i = 0; i < 12; i++)
            for (size_t j = 0; j < 10; j++) {
                size_t k = axis == 0 ? i : j;
                if (k < 3 || k >= 7) continue;
                size_t at = axis == 0 ? (i - 3) * 10 + j : i * 4 + (j - 3);
                assert_memory_equal(&part.values[at], &whole.values[i * 10 + j], sizeof(double complex));
            }
        pf_samples_free(&part);
    }
    pf_h5_source past = all;
    past.slab_first = 10;
    past.slab_count = 3;
    assert_int_equal(pf_h5_read(ctx, path, &past, &row), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "has 12 entries on axis 1; this rank's share needs entries 11 to 13"));
    pf_samples_free(&whole);
    remove_file();
}

/* The reader's refusals come back as their codes, with their messages. */
static void test_status_codes_travel(void **state)
{
    pf_context *ctx = *state;
    write_file(ctx);
    pf_samples s;
    pf_h5_source missing = {"nothing", NULL, NULL, NULL, {NULL, NULL, NULL}, -1, 0, 0, 0};
    assert_int_equal(pf_h5_read(ctx, path, &missing, &s), PF_EINVAL);
    assert_non_null(strstr(pf_context_message(ctx), "has no item 'nothing'"));
    assert_null(s.values);
    pf_h5_source src = {"wave", NULL, NULL, NULL, {NULL, NULL, NULL}, -1, 0, 0, 0};
    /* 1 kB of room: the child's booking refuses the 1920 bytes of values. */
    pft_ok(pf_context_set_memory_cap(ctx, pf_context_memory_used(ctx) + 1024));
    assert_int_equal(pf_h5_read(ctx, path, &src, &s), PF_ELIMIT);
    assert_non_null(strstr(pf_context_message(ctx), "over the memory cap"));
    assert_null(s.values);
    assert_int_equal(pf_h5_read(ctx, "/nonexistent/x.h5", &src, &s), PF_EIO);
    assert_non_null(strstr(pf_context_message(ctx), "'/nonexistent/x.h5' does not exist or is not an HDF5 file"));
    assert_no_child();
    remove_file();
}

int main(void)
{
    /* The test exercises the child; the developer switch would bypass it. */
    unsetenv("PSIFLIGHT_H5_INPROCESS");
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(test_same_samples_and_charge, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(test_status_codes_travel, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(test_slab_reads, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
