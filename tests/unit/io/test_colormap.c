/* test_colormap.c - the map colours read as monotonic lightness: each of the
 * 256 entries psiflight gives PLplot (engine/io/pf_picture.c: cubehelix at
 * i / 255, rounded to 8 bits) is lighter than the one before, measured as
 * CIE 1976 L*.  References: the sRGB transfer function and its D65 luminance
 * weights (IEC 61966-2-1:1999; the weights are the Rec. ITU-R BT.709
 * primaries' Y row), and L* = 116 (Y/Yn)^(1/3) - 16 with the linear segment
 * below (6/29)^3 (CIE 15:2004, CIE 1976 L*a*b*). */
#include <math.h>
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>
#include <stdio.h>
#include "pf_cubehelix.h"
#include "pft.h"

/* sRGB component (0..1) to linear light, IEC 61966-2-1. */
static double srgb_to_linear(double c)
{
    return c <= 0.04045 ? c / 12.92 : pow((c + 0.055) / 1.055, 2.4);
}

/* CIE 1976 L* of an 8-bit sRGB colour (white point D65, Yn = 1). */
static double lightness(const int rgb[3])
{
    double y = 0.2126 * srgb_to_linear(rgb[0] / 255.0) + 0.7152 * srgb_to_linear(rgb[1] / 255.0) +
               0.0722 * srgb_to_linear(rgb[2] / 255.0);
    const double eps = 216.0 / 24389.0, kappa = 24389.0 / 27.0; /* (6/29)^3 and (29/3)^3 */
    return y > eps ? 116.0 * cbrt(y) - 16.0 : kappa * y;
}

/* The 8-bit colour table as the pictures use it. */
static void table_entry(const pf_cubehelix_params *p, int i, int rgb[3])
{
    double c[3];
    pf_cubehelix(p, i / 255.0, c);
    for (int k = 0; k < 3; k++) rgb[k] = (int)lround(255 * c[k]);
}

static double smallest_step(const pf_cubehelix_params *p, int *where)
{
    int prev[3], cur[3];
    table_entry(p, 0, prev);
    double worst = INFINITY;
    for (int i = 1; i < 256; i++) {
        table_entry(p, i, cur);
        double step = lightness(cur) - lightness(prev);
        if (step < worst) worst = step, *where = i;
        for (int k = 0; k < 3; k++) prev[k] = cur[k];
    }
    return worst;
}

static void default_map_lightness_rises(void **state)
{
    (void)state;
    int where = 0;
    double worst = smallest_step(&pf_cubehelix_default, &where);
    printf("ok smallest L* step of the map's 256 colours: %.4f (entry %d) [IEC 61966-2-1, CIE 15:2004]\n", worst, where);
    assert_true(worst > 0.0);
    int black[3], white[3];
    table_entry(&pf_cubehelix_default, 0, black);
    table_entry(&pf_cubehelix_default, 255, white);
    assert_true(lightness(black) < 1e-9 && fabs(lightness(white) - 100.0) < 1e-6);
}

/* The check can fail: Green's example saturation 1.2 over 1.5 rotations
 * clips in the pinks and steps back in lightness (the earlier default). */
static void saturated_helix_is_caught(void **state)
{
    (void)state;
    const pf_cubehelix_params saturated = {0.5, -1.5, 1.2, 1.0};
    int where = 0;
    double worst = smallest_step(&saturated, &where);
    printf("ok hue 1.2 steps back by %.4f in L* at entry %d: the check sees it\n", -worst, where);
    assert_true(worst < 0.0);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(default_map_lightness_rises),
        cmocka_unit_test(saturated_helix_is_caught),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
