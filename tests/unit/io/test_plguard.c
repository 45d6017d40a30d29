/* test_plguard.c - PLplot's fatal and non-fatal errors come back as a
 * status (engine/io/pf_plguard.c), and picture names are never read as
 * PLplot file-name patterns (engine/io/pf_picture.c).  No physics here; the
 * behaviour guarded against is PLplot's own (plexit ends the process unless
 * its handler leaves by a jump; "%n" in a name given to plsfnam is a
 * family-member number), as documented in PLplot 5.15's reference manual. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#include <plplot.h>
#include "pf_context.h"
#include "pf_picture.h"
#include "pf_plguard.h"
#include "pft.h"

/* PLplot's fatal-error routine: exported by libplplot and declared in its
 * private header plplotP.h; every fatal error inside PLplot ends here, and
 * by default it calls exit(). */
void plexit(const char *errormsg);

/* A stream that fails fatally half-way through a picture. */
static void provoke_exit(void *user)
{
    FILE *out = user;
    PLINT strm;
    plmkstrm(&strm);
    plsdev("pngcairo");
    plsfile(out);
    plinit();
    pladv(0);
    plexit("guard test: simulated fatal error");
    plend1();
}

/* Drawing before plinit is a non-fatal PLplot error (plabort). */
static void provoke_abort(void *user)
{
    (void)user;
    PLINT strm;
    plmkstrm(&strm);
    plvpor(0.1, 0.9, 0.1, 0.9);
    plend1();
}

static int png_file(const char *path)
{
    static const unsigned char sig[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};
    unsigned char head[8];
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    int ok = fread(head, 1, 8, f) == 8 && memcmp(head, sig, 8) == 0;
    fclose(f);
    return ok;
}

static pf_status one_picture(pf_context *ctx, const char *path)
{
    double x[3] = {0, 1e-6, 2e-6}, y[3] = {0, 1, 0};
    pf_series s = {x, y, 3, "profile", 0, 0};
    pf_lines p = {"guard", {"x", PF_Q_LENGTH}, "density", "", 0, 0, 1, 1, &s, 0, 0, 0, 0};
    return pf_picture_lines(ctx, path, 0, &p);
}

static void fatal_error_becomes_status(void **state)
{
    (void)state;
    char dir[] = "/tmp/pf-plguard-XXXXXX";
    assert_non_null(mkdtemp(dir));
    char here[4096];
    assert_non_null(getcwd(here, sizeof here));
    assert_int_equal(chdir(dir), 0);
    pf_context *ctx = pft_context();
    FILE *out = fopen("fatal.png", "wb");
    assert_non_null(out);
    assert_int_equal(pf_plguard_run(ctx, provoke_exit, out), PF_EIO); /* the guard's plend1 closes out */
    assert_string_equal(pf_context_message(ctx), "PLplot failed: guard test: simulated fatal error");
    /* The process lives on, and the next picture is drawn normally. */
    pft_ok(one_picture(ctx, "after.png"));
    assert_true(png_file("after.png"));
    assert_int_equal(pf_plguard_run(ctx, provoke_abort, NULL), PF_EIO);
    assert_non_null(strstr(pf_context_message(ctx), "plinit"));
    pf_context_release(ctx);
    assert_int_equal(chdir(here), 0);
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
    assert_int_equal(system(cmd), 0);
}

/* Names with PLplot's family syntax are literal names: the file appears
 * under exactly that name, in the folder given, and nowhere else. */
static void percent_names_are_literal(void **state)
{
    (void)state;
    char dir[] = "/tmp/pf-plguard-XXXXXX";
    assert_non_null(mkdtemp(dir));
    pf_context *ctx = pft_context();
    const char *names[] = {"a%n%n.png", ".%n./p.png", "%s%d%n.png"};
    for (int i = 0; i < 3; i++) {
        char path[512];
        snprintf(path, sizeof path, "%s/%s", dir, names[i]);
        pft_ok(one_picture(ctx, path));
        assert_true(png_file(path));
    }
    /* Nothing was made from an expanded pattern ("%n" -> member number). */
    char probe[512];
    snprintf(probe, sizeof probe, "%s/a1.png", dir);
    assert_int_not_equal(access(probe, F_OK), 0);
    snprintf(probe, sizeof probe, "%s/.1./p.png", dir);
    assert_int_not_equal(access(probe, F_OK), 0);
    pf_context_release(ctx);
    char cmd[128];
    snprintf(cmd, sizeof cmd, "rm -rf '%s'", dir);
    assert_int_equal(system(cmd), 0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(fatal_error_becomes_status),
        cmocka_unit_test(percent_names_are_literal),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
