/* test_picture_axes.c - the arithmetic behind psiflight's pictures
 * (engine/io/pf_picture.c): tick labels of map axes and the resampling
 * that draws fields smoothly.
 *
 * - Ticks: both ends of every axis carry a label with the end's value, the
 *   interior labels step by 1, 2 or 5 x 10^n (common practice in plotting,
 *   no source) and no two labels overlap at the character width given.
 * - PDF dates: the /CreationDate entry is blanked wherever it lies in the
 *   file, also across the 4096-byte reads of the scan, and nothing else
 *   changes (ISO 32000-1 allows white space between dictionary entries).
 * - Resampling: a tent (linear) filter reproduces a linear function exactly
 *   where it interpolates, and an average keeps a constant (both common
 *   practice of linear interpolation, no source); reducing n samples to
 *   fewer pixels keeps the mean of a slowly varying signal. */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>
#include "pf_picture.h"
#include "pft.h"

static int chars(const pf_tick_label *l)
{
    char b[64];
    return snprintf(b, sizeof b, "%.*f", l->decimals, l->value);
}

/* Checks one axis: ends labelled with their values, positions ascending,
 * interior values on the step, no overlap at char_px per character plus gap. */
static void check_axis(double lo, double hi, double len, double cw, double gap)
{
    pf_tick_label lab[64];
    double step = 0;
    int n = pf_picture_ticks(&(pf_tick_spec){lo, hi, len, cw, gap}, &step, lab, 64);
    assert_true(n >= 2);
    assert_true(lab[0].value == lo && lab[0].pos == 0);
    assert_true(lab[n - 1].value == hi && lab[n - 1].pos == 1);
    double mant = step / pow(10.0, floor(log10(step) + 1e-9));
    assert_true(fabs(mant - 1) < 1e-9 || fabs(mant - 2) < 1e-9 || fabs(mant - 5) < 1e-9 || n == 2);
    for (int i = 1; i < n; i++) {
        assert_true(lab[i].pos > lab[i - 1].pos);
        double apart = (lab[i].pos - lab[i - 1].pos) * len;
        double needed = (chars(&lab[i]) + chars(&lab[i - 1])) * cw / 2 + gap;
        if (apart < needed - 1e-9)
            fail_msg("labels %g and %g on %g..%g are %.1f px apart, need %.1f", lab[i - 1].value, lab[i].value, lo, hi,
                     apart, needed);
        if (i < n - 1) {
            double q = lab[i].value / step;
            assert_true(fabs(q - nearbyint(q)) < 1e-9);
        }
    }
}

static void test_ends_labelled_without_overlap(void **state)
{
    (void)state;
    /* The released cloud's map (um): ends off the ticks. */
    check_axis(-58.8, 73.9, 580, 12.4, 24.8);
    check_axis(-24.5, 24.5, 230, 0, 31);
    /* A carpet's time axis from 0 to a Talbot time (us), stacked labels. */
    check_axis(0, 460.912, 520, 0, 31);
    /* Narrow panels: 100 px for 80 um, 580 px for 3.4 mm. */
    check_axis(-40, 40, 100, 12.4, 24.8);
    check_axis(-1.7, 1.7, 580, 12.4, 24.8);
    /* Tiny spans and negative ranges. */
    check_axis(1e-6, 3e-6, 400, 12.4, 24.8);
    check_axis(-0.0031, -0.0029, 300, 12.4, 24.8);
    /* A panel too short for any interval: the two ends alone. */
    pf_tick_label lab[8];
    double step;
    int n = pf_picture_ticks(&(pf_tick_spec){0, 1, 10, 12.4, 24.8}, &step, lab, 8);
    assert_int_equal(n, 2);
}

static void test_end_on_a_tick_reads_as_the_tick(void **state)
{
    (void)state;
    pf_tick_label lab[64];
    double step;
    int n = pf_picture_ticks(&(pf_tick_spec){-4.0039, 4.0039, 580, 12.4, 24.8}, &step, lab, 64);
    assert_true(step == 1);
    assert_int_equal(lab[0].decimals, 0);          /* "-4", not "-4.0" */
    assert_int_equal(lab[n - 1].decimals, 0);
    /* Off a tick, the end is shown to a tenth of the step: "461" beside
     * steps of 50 (a Talbot time of 460.912 us), "-4.3" beside steps of 1. */
    n = pf_picture_ticks(&(pf_tick_spec){0, 460.912, 520, 0, 31}, &step, lab, 64);
    assert_true(step == 50 || step == 20 || step == 100);
    assert_int_equal(lab[n - 1].decimals, 0);
    n = pf_picture_ticks(&(pf_tick_spec){-4.3, 4.3, 580, 12.4, 24.8}, &step, lab, 64);
    assert_true(step == 1);
    assert_int_equal(lab[0].decimals, 1);
    n = pf_picture_ticks(&(pf_tick_spec){-251, 249, 580, 12.4, 24.8}, &step, lab, 64);
    assert_true(step == 100 || step == 50);
    assert_int_equal(lab[0].decimals, 0);
}

static void test_resample_linear_and_mean(void **state)
{
    (void)state;
    /* Enlarging: 12 samples of a ramp to 500 pixels over the same cells. */
    double src[12], dst[500];
    for (int i = 0; i < 12; i++) src[i] = 3 + 2 * i;
    pf_picture_resample(src, 12, 1, dst, 500, 1, 0);
    for (int j = 0; j < 500; j++) {
        double u = (j + 0.5) * 12 / 500.0 - 0.5; /* pixel centre in samples */
        if (u < 0 || u > 11) continue;            /* beyond the outer centres: held */
        pft_near(dst[j], 3 + 2 * u, 0, 1e-12, NULL);
    }
    /* With at_samples the pixels span the first to the last sample. */
    pf_picture_resample(src, 12, 1, dst, 500, 1, 1);
    for (int j = 0; j < 500; j++) pft_near(dst[j], 3 + 2 * ((j + 0.5) * 11 / 500.0), 0, 1e-12, NULL);
    /* Reducing: 4096 samples of a slow sine to 300 pixels keep the mean. */
    static double big[4096];
    double mean = 0, rmean = 0, out[300];
    for (int i = 0; i < 4096; i++) mean += (big[i] = 1 + sin(6.283185307179586 * i / 4096.0)) / 4096;
    pf_picture_resample(big, 4096, 1, out, 300, 1, 0);
    for (int j = 0; j < 300; j++) rmean += out[j] / 300;
    pft_near(rmean, mean, 0, 1e-3, NULL);
    /* A fine stripe pattern (period 2 samples) averages out, no aliasing. */
    for (int i = 0; i < 4096; i++) big[i] = i % 2;
    pf_picture_resample(big, 4096, 1, out, 300, 1, 0);
    for (int j = 1; j < 299; j++) pft_near(out[j], 0.5, 0, 0.02, NULL);
}

/* A fake PDF tail: filler, the information dictionary at offset at, filler. */
static void check_date_dropped_at(long at)
{
    char path[] = "/tmp/pf-test-pdf-XXXXXX";
    int fd = mkstemp(path);
    assert_true(fd >= 0);
    FILE *f = fdopen(fd, "wb");
    static const char entry[] = "<< /Producer (cairo) /CreationDate (D:20261204162226Z) >>";
    long size = at + (long)sizeof entry + 5000;
    char *want = malloc((size_t)size);
    for (long i = 0; i < size; i++) want[i] = (char)('a' + i % 23);
    memcpy(want + at, entry, sizeof entry - 1);
    assert_int_equal(fwrite(want, 1, (size_t)size, f), (size_t)size);
    fclose(f);
    assert_int_equal(pf_picture_pdf_drop_date(path), 1);
    char *key = strstr(want + at, "/CreationDate");
    memset(key, ' ', strlen("/CreationDate (D:20261204162226Z)"));
    char *got = malloc((size_t)size + 1);
    f = fopen(path, "rb");
    assert_int_equal(fread(got, 1, (size_t)size + 1, f), (size_t)size);
    fclose(f);
    remove(path);
    if (memcmp(got, want, (size_t)size) != 0) fail_msg("entry at offset %ld not blanked exactly", at);
    free(got);
    free(want);
}

static void test_pdf_date_dropped_anywhere(void **state)
{
    (void)state;
    /* Around the first and second read boundaries (4096, 8192) and away. */
    for (long at = 4040; at <= 4110; at++) check_date_dropped_at(at);
    for (long at = 8150; at <= 8200; at += 7) check_date_dropped_at(at);
    check_date_dropped_at(100);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_ends_labelled_without_overlap),
        cmocka_unit_test(test_end_on_a_tick_reads_as_the_tick),
        cmocka_unit_test(test_resample_linear_and_mean),
        cmocka_unit_test(test_pdf_date_dropped_anywhere),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
