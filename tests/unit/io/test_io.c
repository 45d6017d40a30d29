/* test_io.c - unit tests of the output layer (engine/io): SHA-256, the
 * cubehelix colour map, number formatting, the safe writer and the progress
 * bar text.  Reference values name their source beside each check. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include "pf_context.h"
#include "pf_cubehelix.h"
#include "pf_progress.h"
#include "pf_safefile.h"
#include "pf_sha256.h"
#include "pf_table.h"
#include "pft.h"

/* FIPS 180-4 example messages; digests as published with the standard's
 * examples (NIST CSRC "SHA256.pdf"), quoted from memory and cross-checked
 * against Debian's sha256sum / Python hashlib in tests/ref/test_sha256.sh. */
static void sha256_known_vectors(void **state)
{
    (void)state;
    char hex[65];
    pf_sha256_buffer("abc", 3, hex);
    assert_string_equal(hex, "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    pf_sha256_buffer("", 0, hex);
    assert_string_equal(hex, "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
    const char *two = "abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq";
    pf_sha256_buffer(two, strlen(two), hex);
    assert_string_equal(hex, "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}

/* Feeding a message in pieces must give the digest of the whole (property
 * of any hash; the one-shot value is checked against hashlib elsewhere). */
static void sha256_incremental_matches_one_shot(void **state)
{
    (void)state;
    unsigned char msg[1000];
    for (int i = 0; i < 1000; i++) msg[i] = (unsigned char)(i * 7 + 3);
    char whole[65];
    pf_sha256_buffer(msg, sizeof msg, whole);
    for (size_t piece = 1; piece < 130; piece += 13) {
        pf_sha256 s;
        unsigned char d[32];
        char hex[65];
        pf_sha256_init(&s);
        for (size_t off = 0; off < sizeof msg; off += piece)
            pf_sha256_update(&s, msg + off, off + piece <= sizeof msg ? piece : sizeof msg - off);
        pf_sha256_final(&s, d);
        pf_sha256_hex(d, hex);
        assert_string_equal(hex, whole);
    }
}

/* Green (2011), Bull. Astr. Soc. India 39, 289: the helix perturbation is
 * built to have zero luminance for the weights 0.30, 0.59, 0.11 (his eq. 1
 * and 2), so wherever no component is clipped the perceived intensity is
 * exactly lambda^gamma, and the scheme runs from black to white. */
static void cubehelix_luminance_is_lambda(void **state)
{
    (void)state;
    pf_cubehelix_params p = {0.5, -1.5, 1.0, 1.0}; /* Green's default parameters */
    int checked = 0;
    for (int i = 0; i <= 100; i++) {
        double lam = i / 100.0, rgb[3];
        pf_cubehelix(&p, lam, rgb);
        int clipped = 0;
        for (int c = 0; c < 3; c++) clipped |= rgb[c] <= 0 || rgb[c] >= 1;
        if (clipped && i > 0 && i < 100) continue;
        double lum = 0.30 * rgb[0] + 0.59 * rgb[1] + 0.11 * rgb[2];
        /* The published coefficients have 5 decimals, so the zero-luminance
         * property holds to ~1e-5 of the perturbation amplitude. */
        pft_near(lum, lam, 0, 2e-5, NULL);
        checked++;
    }
    assert_true(checked > 80);
    double rgb[3];
    pf_cubehelix(&pf_cubehelix_default, 0, rgb);
    assert_true(rgb[0] == 0 && rgb[1] == 0 && rgb[2] == 0);
    pf_cubehelix(&pf_cubehelix_default, 1, rgb);
    assert_true(rgb[0] == 1 && rgb[1] == 1 && rgb[2] == 1);
}

/* psiflight's own parameters (hue 1.2) clip a little; grey-scale
 * readability needs the luminance to rise monotonically anyway. */
static void cubehelix_default_monotonic_luminance(void **state)
{
    (void)state;
    double last = -1;
    for (int i = 0; i <= 255; i++) {
        double rgb[3];
        pf_cubehelix(&pf_cubehelix_default, i / 255.0, rgb);
        double lum = 0.30 * rgb[0] + 0.59 * rgb[1] + 0.11 * rgb[2];
        assert_true(lum > last);
        last = lum;
    }
}

/* Shortest round-trip form: strtod(format(v)) == v (IEEE 754 round trip,
 * common practice: 17 significant digits always suffice). */
static void format_double_round_trips(void **state)
{
    (void)state;
    const double v[] = {0.1, 1.0 / 3.0, 3.141592653589793, -2.5e17, 1e-300, 5e-324, 1.7976931348623157e308, 0, -0.0, 123456789.0};
    for (size_t i = 0; i < sizeof v / sizeof v[0]; i++) {
        char buf[32];
        double back;
        pf_format_double(v[i], buf);
        assert_true(pf_parse_double(buf, &back));
        assert_memory_equal(&back, &v[i], sizeof back);
        assert_null(strchr(buf, ','));
    }
    char buf[32];
    pf_format_double(0.1, buf);
    assert_string_equal(buf, "0.1");
    double d;
    assert_false(pf_parse_double("1.5x", &d));
    assert_false(pf_parse_double("", &d));
}

static int exists(const char *p)
{
    struct stat st;
    return stat(p, &st) == 0;
}

/* The safe writer: nothing under the final name before commit, an existing
 * file kept without overwrite, abandon leaves nothing behind. */
static void safefile_commit_and_refuse(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    char dir[] = "/tmp/pf-test-io-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char final[256];
    snprintf(final, sizeof final, "%s/sub/a.txt", dir);
    pf_safefile f;
    pft_ok(pf_safe_begin(ctx, final, 0, &f));
    assert_true(exists(f.temp_path));
    assert_false(exists(final));
    FILE *fp = fopen(f.temp_path, "w");
    fputs("one\n", fp);
    fclose(fp);
    pft_ok(pf_safe_commit(ctx, &f));
    assert_true(exists(final));
    assert_int_equal(pf_safe_begin(ctx, final, 0, &f), PF_EIO);
    assert_non_null(strstr(pf_context_message(ctx), "exists"));
    pft_ok(pf_safe_begin(ctx, final, 1, &f));
    char temp[512];
    snprintf(temp, sizeof temp, "%s", f.temp_path);
    pf_safe_abandon(&f);
    assert_false(exists(temp));
    fp = fopen(final, "r");
    char line[16] = "";
    assert_non_null(fgets(line, sizeof line, fp));
    fclose(fp);
    assert_string_equal(line, "one\n");
    unlink(final);
    snprintf(final, sizeof final, "%s/sub", dir);
    rmdir(final);
    rmdir(dir);
    pf_context_release(ctx);
}

/* Progress text: fraction, bar and time left by linear extrapolation. */
static void progress_format_estimates_time_left(void **state)
{
    (void)state;
    pf_progress p;
    pf_progress_begin(&p, NULL, 0, 200, "sweep");
    p.start = 100.0;
    p.done = 50;
    char line[160];
    pf_progress_format(&p, 130.0, line, sizeof line); /* 30 s for a quarter: 90 s left */
    assert_non_null(strstr(line, "sweep ["));
    assert_non_null(strstr(line, " 25%"));
    assert_non_null(strstr(line, "elapsed 0:30"));
    assert_non_null(strstr(line, "left 1:30"));
    p.done = 0;
    pf_progress_format(&p, 130.0, line, sizeof line);
    assert_non_null(strstr(line, "left --:--"));
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(sha256_known_vectors),
        cmocka_unit_test(sha256_incremental_matches_one_shot),
        cmocka_unit_test(cubehelix_luminance_is_lambda),
        cmocka_unit_test(cubehelix_default_monotonic_luminance),
        cmocka_unit_test(format_double_round_trips),
        cmocka_unit_test(safefile_commit_and_refuse),
        cmocka_unit_test(progress_format_estimates_time_left),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
