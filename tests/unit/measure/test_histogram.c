/* test_histogram.c - equal-width binning (pf_histogram.c) against GSL's
 * gsl_histogram (the reference library): bin edges, counts, values on the
 * edges (left edge in, right edge out, `to` outside) and values outside. */
#include <float.h>
#include <gsl/gsl_errno.h>
#include <gsl/gsl_histogram.h>
#include <gsl/gsl_rng.h>
#include "pft.h"
#include "pf_histogram.h"

/* Counts of values in GSL's histogram over the given ranges (bins + 1
 * edges); values GSL refuses (gsl_histogram_increment returns GSL_EDOM
 * outside [range[0], range[bins])) are counted in *outside. */
static void gsl_counts(const double *ranges, size_t bins, const double *values, size_t n, double *counts,
                       double *outside)
{
    gsl_histogram *h = gsl_histogram_alloc(bins);
    assert_non_null(h);
    assert_int_equal(gsl_histogram_set_ranges(h, ranges, bins + 1), GSL_SUCCESS);
    *outside = 0;
    for (size_t i = 0; i < n; i++)
        if (gsl_histogram_increment(h, values[i]) != GSL_SUCCESS) (*outside)++;
    for (size_t b = 0; b < bins; b++) counts[b] = gsl_histogram_get(h, b);
    gsl_histogram_free(h);
}

/* A dyadic range, so every edge is exact in binary: from = -1, to = 1, 8
 * bins of 1/4.  Values on every edge, just inside and outside both ends,
 * and uniform random ones (GSL's mt19937, seed 7) over a wider interval.
 * Edges equal GSL's uniform ranges exactly; counts and the outside count
 * equal GSL's. */
static void test_dyadic_edges_against_gsl(void **state)
{
    pf_context *ctx = *state;
    const pf_histogram_spec spec = {.from = -1, .to = 1, .bins = 8};
    double edges[9], centers[8];
    pf_histogram_edges(&spec, edges);
    pf_histogram_centers(&spec, centers);
    gsl_histogram *u = gsl_histogram_alloc(8);
    gsl_histogram_set_ranges_uniform(u, -1, 1);
    for (size_t b = 0; b <= 8; b++) assert_true(edges[b] == u->range[b]); /* exact: dyadic */
    for (size_t b = 0; b < 8; b++) {
        double lo, hi;
        gsl_histogram_get_range(u, b, &lo, &hi);
        assert_true(centers[b] == 0.5 * (lo + hi));
    }
    gsl_histogram_free(u);

    enum { RANDOM = 5000 };
    double values[RANDOM + 32];
    size_t n = 0;
    for (size_t b = 0; b <= 8; b++) values[n++] = edges[b]; /* each edge, incl. `to` */
    /* Next to edges, including values whose quotient (x - from) / w rounds
     * onto the edge: nextafter(1, 0) (1 + it rounds to 2, a quotient of 8)
     * belongs in bin 7 and -1e-300 in bin 3, as gsl_histogram has them (the
     * quotient alone put them outside and in bin 4 before the edge check). */
    const double special[] = {nextafter(-1, -2), nextafter(1, 2), -0.0, 0.0, 1e-300, nextafter(-0.5, 0),
                              nextafter(-0.5, -1), -1e300, 1e300, nextafter(1, 0), -1e-300,
                              nextafter(0.5, 0), nextafter(-0.75, -1)};
    for (size_t i = 0; i < sizeof special / sizeof special[0]; i++) values[n++] = special[i];
    gsl_rng *r = gsl_rng_alloc(gsl_rng_mt19937);
    gsl_rng_set(r, 7);
    for (int i = 0; i < RANDOM; i++) values[n++] = -1.5 + 3.0 * gsl_rng_uniform(r);
    gsl_rng_free(r);

    double counts[8], outside, want[8], want_outside;
    pft_ok(pf_histogram_count(ctx, &spec, values, n, counts, &outside));
    gsl_counts(edges, 8, values, n, want, &want_outside);
    for (size_t b = 0; b < 8; b++) assert_true(counts[b] == want[b]);
    assert_true(outside == want_outside);
    pft_near(outside, want_outside, 0, 0, "dyadic histogram: outside count = gsl_histogram's");

    /* The edge convention value by value: an edge belongs to the bin on its
     * right, `to` and beyond are outside, as in gsl_histogram_find. */
    gsl_histogram *h = gsl_histogram_alloc(8);
    gsl_histogram_set_ranges(h, edges, 9);
    for (size_t i = 0; i < n; i++) {
        size_t gb;
        int in = gsl_histogram_find(h, values[i], &gb) == GSL_SUCCESS;
        ptrdiff_t b = pf_histogram_bin(&spec, values[i]);
        if (!in) assert_int_equal(b, -1);
        else assert_int_equal(b, (ptrdiff_t)gb);
    }
    gsl_histogram_free(h);
    assert_int_equal(pf_histogram_bin(&spec, 1.0), -1);
    assert_int_equal(pf_histogram_bin(&spec, -1.0), 0);
    assert_int_equal(pf_histogram_bin(&spec, 0.75), 7);
    assert_int_equal(pf_histogram_bin(&spec, NAN), -1);
    assert_int_equal(pf_histogram_bin(&spec, nextafter(1, 0)), 7);
    assert_int_equal(pf_histogram_bin(&spec, -1e-300), 3);
}

/* A range whose edges are not exact in binary (from = -1.1, to = 2.2, 33
 * bins; and a narrow one of 1000 bins): the edges agree with GSL's uniform
 * ranges, from + (b / bins) (to - from), to rounding (a few ulp), the
 * counts of random values agree with GSL's over the engine's own edges, and
 * so does the bin of every value on or one ulp beside an edge. */
static void test_inexact_ranges_against_gsl(void **state)
{
    pf_context *ctx = *state;
    const pf_histogram_spec specs[] = {{.from = -1.1, .to = 2.2, .bins = 33}, {.from = -3e-3, .to = 5e-3, .bins = 1000}};
    enum { N = 20000 };
    double *values = malloc(N * sizeof *values);
    assert_non_null(values);
    for (size_t s = 0; s < sizeof specs / sizeof specs[0]; s++) {
        const pf_histogram_spec *sp = &specs[s];
        const size_t nb = sp->bins;
        double *edges = malloc((nb + 1) * sizeof *edges), *counts = malloc(nb * sizeof *counts),
               *want = malloc(nb * sizeof *want);
        assert_true(edges && counts && want);
        pf_histogram_edges(sp, edges);
        gsl_histogram *u = gsl_histogram_alloc(nb);
        gsl_histogram_set_ranges_uniform(u, sp->from, sp->to);
        const double scale = fmax(fabs(sp->from), fabs(sp->to));
        for (size_t b = 0; b <= nb; b++) pft_near(edges[b], u->range[b], 0, 4 * DBL_EPSILON * scale, "histogram edges = gsl_histogram_set_ranges_uniform (to 4 ulp of the range)");
        gsl_histogram_free(u);
        gsl_rng *r = gsl_rng_alloc(gsl_rng_mt19937);
        gsl_rng_set(r, 11 + s);
        const double span = sp->to - sp->from;
        for (int i = 0; i < N; i++) values[i] = sp->from - 0.1 * span + 1.2 * span * gsl_rng_uniform(r);
        gsl_rng_free(r);
        double outside, want_outside;
        pft_ok(pf_histogram_count(ctx, sp, values, N, counts, &outside));
        gsl_counts(edges, nb, values, N, want, &want_outside);
        double total = outside;
        for (size_t b = 0; b < nb; b++) {
            assert_true(counts[b] == want[b]);
            total += counts[b];
        }
        assert_true(outside == want_outside);
        assert_true(outside > 0);
        assert_true(total == N);
        /* Values on every printed edge and one ulp either side of it, where
         * the rounded quotient lands one bin off for some edges of these
         * ranges (68 of the 1001 edges of the narrow one, before the edge
         * check): the bin is the one gsl_histogram_find gives over the same
         * edges, value by value. */
        gsl_histogram *h = gsl_histogram_alloc(nb);
        gsl_histogram_set_ranges(h, edges, nb + 1);
        size_t off_by_quotient = 0;
        for (size_t b = 0; b <= nb; b++) {
            const double near[3] = {nextafter(edges[b], -INFINITY), edges[b], nextafter(edges[b], INFINITY)};
            for (int k = 0; k < 3; k++) {
                size_t gb;
                int in = gsl_histogram_find(h, near[k], &gb) == GSL_SUCCESS;
                ptrdiff_t mine = pf_histogram_bin(sp, near[k]);
                double q = floor((near[k] - sp->from) / ((sp->to - sp->from) / (double)nb));
                if (in && q != (double)gb) off_by_quotient++;
                assert_int_equal(mine, in ? (ptrdiff_t)gb : -1);
            }
        }
        gsl_histogram_free(h);
        printf("ok %zu bins: every edge and its neighbours binned as gsl_histogram_find (%zu where the quotient alone is off)\n",
               nb, off_by_quotient);
        free(edges);
        free(counts);
        free(want);
    }
    free(values);
}

/* Bad ranges fail with PF_EINVAL and leave the counts untouched. */
static void test_bad_spec(void **state)
{
    pf_context *ctx = *state;
    double counts[2] = {-7, -7}, outside = -7, v = 0.5;
    const pf_histogram_spec bad[] = {{.from = 1, .to = 1, .bins = 2}, {.from = 2, .to = 1, .bins = 2},
                                     {.from = 0, .to = INFINITY, .bins = 2}, {.from = NAN, .to = 1, .bins = 2},
                                     {.from = 0, .to = 1, .bins = 0}};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        assert_int_equal(pf_histogram_count(ctx, &bad[i], &v, 1, counts, &outside), PF_EINVAL);
        assert_true(counts[0] == -7 && counts[1] == -7 && outside == -7);
    }
}

int main(void)
{
    gsl_set_error_handler_off(); /* a value outside is an answer here (GSL_EDOM), not an abort */
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(test_dyadic_edges_against_gsl, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(test_inexact_ranges_against_gsl, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(test_bad_spec, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
