/* test_detector.c - camera models: binning and Beer-Lambert sum rules, the
 * point-spread blur, shot noise, and column densities and marginals. */
#include <stdlib.h>
#include "pft.h"
#include "pf_detector.h"
#include "pf_field.h"

static pf_wave *cloud3d(pf_context *ctx, pf_grid **gout)
{
    size_t n[3] = {48, 40, 32};
    double span[3] = {60e-6, 50e-6, 40e-6}, origin[3] = {0, 0, 0};
    pft_ok(pf_grid_new(ctx, 3, n, span, origin, gout));
    pft_gauss gs = {3, {2e-6, -1e-6, 0.5e-6}, {5e-6, 4e-6, 3e-6}, {0, 0, 0}};
    return pft_gauss_wave(*gout, pft_mass("87Rb"), &gs);
}

/* Column density (integral along the imaging axis) of a Gaussian is the 2D
 * Gaussian of the other two axes (analytic); binning into pixels and the
 * optical depth conserve the atom number (sum rules). */
static void column_density_binning_and_od(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g;
    pf_wave *w = cloud3d(ctx, &g);
    pf_field f, col, pix, od;
    pft_ok(pf_field_for_grid(g, PF_POSITION, &f));
    pft_ok(pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL));
    int keep[3] = {1, 1, 0}; /* image along z */
    pft_ok(pf_field_marginal(&f, keep, &col));
    assert_int_equal(col.dim, 2);
    double worst = 0, peak = 1 / (2 * PF_PI * 5e-6 * 4e-6);
    for (size_t i = 0; i < col.n[0]; i++)
        for (size_t j = 0; j < col.n[1]; j++) {
            double x = pf_field_coord(&col, 0, i) - 2e-6, y = pf_field_coord(&col, 1, j) + 1e-6;
            double ref = peak * exp(-x * x / (2 * 25e-12) - y * y / (2 * 16e-12));
            worst = fmax(worst, fabs(col.values[i * col.n[1] + j] - ref));
        }
    /* 1e-7: the state is normalised on the finite box, whose edges cut
     * Gaussian tails of relative weight ~1e-8. */
    pft_near(worst / peak, 0, 0, 1e-7, "column density of a Gaussian (analytic 2D Gaussian)");
    /* Pixels of 3.3 um (not commensurate with the 1.25 um cells) covering the grid. */
    pf_camera cam = {2, {20, 17}, {3.3e-6, 3.3e-6}, {-33e-6, -28e-6}};
    pft_ok(pf_field_bin(&col, &cam, &pix));
    double sum = 0;
    for (size_t i = 0; i < pix.total; i++) sum += pix.values[i];
    pft_near(sum, pf_field_integral(&col), 0, 1e-13, "pixel binning conserves atom number (sum rule)");
    double atoms = 2.5e4, sigma = pf_resonant_cross_section(780.241e-9);
    pf_field_scale(&pix, atoms);
    pft_ok(pf_field_optical_depth(&pix, sigma, &od));
    double recovered = pf_field_atoms_from_optical_depth(&od, sigma);
    pft_near(recovered, atoms, 0, 1e-9 * atoms, "Beer-Lambert OD sum x A / sigma = atom number (sum rule)");
    pf_field_free(&f);
    pf_field_free(&col);
    pf_field_free(&pix);
    pf_field_free(&od);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* The picture's column integrals (pf_column_integrals: each row along z
 * summed, times dz) of the same Gaussian are the analytic 2D Gaussian too
 * (the Gaussian integral over z: common practice, no source);
 * they agree with the marginal's per-value weighting to rounding (about
 * n_z ulps); a row's value is its in-order sum times dz to the bit (the
 * distributed picture relies on it), and in place gives the same bits. */
static void column_integrals_of_a_gaussian(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    pf_grid *g;
    pf_wave *w = cloud3d(ctx, &g);
    pf_field f, col;
    pft_ok(pf_field_for_grid(g, PF_POSITION, &f));
    pft_ok(pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL));
    int keep[3] = {1, 1, 0};
    pft_ok(pf_field_marginal(&f, keep, &col));
    const size_t n1 = f.n[1], nz = f.n[2], rows = f.n[0] * n1;
    const double dz = f.step[2], peak = 1 / (2 * PF_PI * 5e-6 * 4e-6);
    double *out = malloc(rows * sizeof *out), *in_place = malloc(f.total * sizeof *in_place);
    assert_non_null(out);
    assert_non_null(in_place);
    pf_column_integrals(f.values, rows, nz, dz, out);
    double worst = 0;
    for (size_t i = 0; i < f.n[0]; i++)
        for (size_t j = 0; j < n1; j++) {
            double x = pf_field_coord(&col, 0, i) - 2e-6, y = pf_field_coord(&col, 1, j) + 1e-6;
            double ref = peak * exp(-x * x / (2 * 25e-12) - y * y / (2 * 16e-12));
            worst = fmax(worst, fabs(out[i * n1 + j] - ref));
        }
    /* 1e-7 as for the marginal above: the box cuts tails of weight ~1e-8. */
    pft_near(worst / peak, 0, 0, 1e-7, "column integrals of a Gaussian (analytic 2D Gaussian)");
    for (size_t r = 0; r < rows; r++) {
        pft_near(out[r], col.values[r], 1e-14, 0, "column integrals = marginal to rounding");
        double sum = 0;
        for (size_t k = 0; k < nz; k++) sum += f.values[r * nz + k];
        assert_true(out[r] == sum * dz);
    }
    memcpy(in_place, f.values, f.total * sizeof *in_place);
    pf_column_integrals(in_place, rows, nz, dz, in_place);
    assert_memory_equal(in_place, out, rows * sizeof *out);
    free(out);
    free(in_place);
    pf_field_free(&f);
    pf_field_free(&col);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* Beer-Lambert law (common practice): a column density n (atoms/m^2) seen by
 * a probe of cross-section sigma transmits I/I0 = exp(-sigma n); an optical
 * depth of ln 2 passes half the light and one of 1 passes 1/e; the atom
 * number is the column density integrated over the image. */
static void beer_lambert_transmission(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {4, 3};
    double first[2] = {-3e-6, 0}, step[2] = {2e-6, 3.5e-6}, area = 2e-6 * 3.5e-6, sigma = 1.5e-13;
    pf_field atoms, od;
    pft_ok(pf_field_new(ctx, 2, n, first, step, &atoms));
    double column[12], total = 0;
    for (size_t i = 0; i < 12; i++) {
        column[i] = (0.25 * (double)i + (i == 3 ? log(2.0) - 0.75 : 0)) / sigma; /* atoms per m^2 */
        atoms.values[i] = column[i] * area;
        total += atoms.values[i];
    }
    pft_ok(pf_field_optical_depth(&atoms, sigma, &od));
    pft_near(pf_field_atoms_from_optical_depth(&od, sigma), total, 0, 1e-12 * total, "sum(OD) A / sigma gives back the atom number (Beer-Lambert, common practice)");
    pf_field_transmission(&od);
    for (size_t i = 0; i < 12; i++)
        pft_near(od.values[i], exp(-sigma * column[i]), 0, 1e-15, "I/I0 = exp(-sigma n) (Beer-Lambert, common practice)");
    pft_near(od.values[0], 1, 0, 0, "no atoms: the probe passes whole");
    pft_near(od.values[3], 0.5, 0, 1e-15, "OD = ln 2 passes half the light (Beer-Lambert)");
    pft_near(od.values[4], 0.36787944117144233, 0, 1e-15, "OD = 1 passes 1/e (Beer-Lambert; 1/e to 17 digits)");
    pf_field_free(&atoms);
    pf_field_free(&od);
    pf_context_release(ctx);
}

/* 3 lambda^2 / 2 pi at the 87Rb D2 line (780.241 nm): 2.907e-13 m^2, the
 * resonant cross-section for the cycling transition listed in D. A. Steck,
 * "Rubidium 87 D Line Data" (value from memory: 2.907 x 10^-9 cm^2). */
static void resonant_cross_section(void **state)
{
    (void)state;
    pft_near(pf_resonant_cross_section(780.241209686e-9), 2.907e-13, 0, 0.0005e-13, "3 lambda^2/2pi, Steck Rb-87 D line data (from memory)");
}

/* Blurring a Gaussian by a Gaussian PSF adds the variances (convolution of
 * Gaussians, standard result) and keeps the sum away from the edges. */
static void psf_adds_variance(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {200, 160};
    double first[2] = {-50e-6, -40e-6}, step[2] = {0.5e-6, 0.5e-6};
    pf_field f;
    pft_ok(pf_field_new(ctx, 2, n, first, step, &f));
    for (size_t i = 0; i < n[0]; i++)
        for (size_t j = 0; j < n[1]; j++) {
            double x = pf_field_coord(&f, 0, i), y = pf_field_coord(&f, 1, j);
            f.values[i * n[1] + j] = exp(-x * x / (2 * 9e-12) - y * y / (2 * 4e-12));
        }
    double before = pf_field_integral(&f);
    double psf[2] = {2e-6, 1.5e-6};
    pft_ok(pf_field_blur(&f, psf));
    pft_near(pf_field_integral(&f) / before, 1, 0, 1e-12, "blur conserves the total (normalised kernel)");
    double mean[2], cov[4];
    pft_ok(pf_field_moments(&f, mean, cov));
    /* Cell-integrated kernel: its variance is sigma^2 + step^2/12 (uniform). */
    pft_near(cov[0], 9e-12 + 4e-12 + 0.25e-12 / 12, 0, 1e-15, "blurred variance = sum of variances (convolution)");
    pft_near(cov[3], 4e-12 + 2.25e-12 + 0.25e-12 / 12, 0, 1e-15, "blurred variance on axis 2 (convolution)");
    pf_field_free(&f);
    pf_context_release(ctx);
}

/* Shot noise: each pixel Poisson with the expected count, so the mean of
 * many noisy totals is the expected total and its variance equals it. */
static void shot_noise_statistics(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {16, 16};
    double first[2] = {0, 0}, step[2] = {1, 1};
    pf_rng r;
    pf_rng_seed(&r, 8, 1);
    int shots = 400;
    double s1 = 0, s2 = 0, expect = 0;
    for (int t = 0; t < shots; t++) {
        pf_field f;
        pft_ok(pf_field_new(ctx, 2, n, first, step, &f));
        expect = 0;
        for (size_t i = 0; i < f.total; i++) expect += f.values[i] = 0.5 + 30.0 * (double)(i % 5);
        pft_ok(pf_field_poisson(&f, &r));
        double tot = 0;
        for (size_t i = 0; i < f.total; i++) tot += f.values[i];
        s1 += tot;
        s2 += tot * tot;
        pf_field_free(&f);
    }
    double m = s1 / shots, v = s2 / shots - m * m;
    pft_near(m, expect, 0, 4 * sqrt(expect / shots), "noisy total mean = expected (Poisson)");
    pft_near(v / expect, 1, 0, 4 * sqrt(2.0 / shots), "noisy total variance = mean (Poisson)");
    pf_context_release(ctx);
}

/* Slices and radial profiles of an isotropic 2D Gaussian (analytic). */
static void slice_and_radial(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[2] = {96, 96};
    double span[2] = {48e-6, 48e-6}, origin[2] = {0, 0};
    pf_grid *g;
    pft_ok(pf_grid_new(ctx, 2, n, span, origin, &g));
    double s = 4e-6;
    pft_gauss gs = {2, {0, 0}, {s, s}, {0, 0}};
    pf_wave *w = pft_gauss_wave(g, pft_mass("87Rb"), &gs);
    pf_field f, sl;
    pft_ok(pf_field_for_grid(g, PF_POSITION, &f));
    pft_ok(pf_field_add_density(&f, w, PF_POSITION, 1.0, NULL));
    size_t fixed[2] = {PF_FREE_AXIS, pf_field_nearest(&f, 1, 0.0)};
    pft_ok(pf_field_slice(&f, fixed, &sl));
    double worst = 0, peak = 1 / (2 * PF_PI * s * s);
    for (size_t i = 0; i < sl.n[0]; i++) {
        double x = pf_field_coord(&sl, 0, i);
        worst = fmax(worst, fabs(sl.values[i] - peak * exp(-x * x / (2 * s * s))));
    }
    pft_near(worst / peak, 0, 0, 1e-8, "slice through a Gaussian (analytic; box cuts tails ~1e-9)");
    double center[2] = {0, 0}, prof[10], cnt[10];
    pft_ok(pf_field_radial(&f, center, 1e-6, 10, prof, cnt));
    /* Ring average of exp(-r^2/2s^2) over the grid points in each ring,
     * computed directly from the points (naive reference). */
    double ref = 0;
    int count = 0;
    for (size_t i = 0; i < 96; i++)
        for (size_t j = 0; j < 96; j++) {
            double x = pf_field_coord(&f, 0, i), y = pf_field_coord(&f, 1, j), r2 = x * x + y * y;
            if (r2 >= 9e-12 && r2 < 16e-12) {
                ref += peak * exp(-r2 / (2 * s * s));
                count++;
            }
        }
    pft_near(prof[3], ref / count, 0, 1e-8 * peak, "radial ring average (naive reference; box cuts tails)");
    pft_near(cnt[3], count, 0, 0, "radial ring point count");
    pf_field_free(&f);
    pf_field_free(&sl);
    pf_wave_free(w);
    pf_grid_release(g);
    pf_context_release(ctx);
}

/* A point-spread width far beyond the sensor: once ceil(6 sigma / h) became
 * an out-of-range size_t (undefined) and a kernel the size of the address
 * space.  Now the kernel stops at the line length and keeps the untruncated
 * normalisation, so what lands on the sensor is the Gaussian's share of it:
 * for one central sample on n cells, erf(n h / (2 sqrt 2 sigma)) at most
 * (Gaussian probability of an interval, textbook formula), here < 1e-290. */
static void huge_psf_sends_the_light_off_the_sensor(void **state)
{
    (void)state;
    pf_context *ctx = pft_context();
    size_t n[1] = {64};
    double first[1] = {0}, step[1] = {1e-6}, psf[1] = {1e300};
    pf_field f;
    pft_ok(pf_field_new(ctx, 1, n, first, step, &f));
    f.values[32] = 1.0;
    pft_ok(pf_field_blur(&f, psf));
    double sum = 0;
    for (size_t i = 0; i < 64; i++) sum += f.values[i];
    double bound = erf(64 * 1e-6 / (2 * sqrt(2.0) * 1e300)) * 1.0000001;
    assert_true(isfinite(sum) && sum >= 0 && sum <= bound);
    /* A width of a few cells is unchanged in total (kernel inside the line). */
    for (size_t i = 0; i < 64; i++) f.values[i] = i == 32 ? 1.0 : 0.0;
    psf[0] = 3e-6;
    pft_ok(pf_field_blur(&f, psf));
    sum = 0;
    for (size_t i = 0; i < 64; i++) sum += f.values[i];
    pft_near(sum, 1, 0, 1e-12, "a blur inside the line conserves the total (normalised kernel)");
    pf_field_free(&f);
    pf_context_release(ctx);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(column_density_binning_and_od),
        cmocka_unit_test(column_integrals_of_a_gaussian),
        cmocka_unit_test(beer_lambert_transmission),
        cmocka_unit_test(resonant_cross_section),
        cmocka_unit_test(psf_adds_variance),
        cmocka_unit_test(shot_noise_statistics),
        cmocka_unit_test(slice_and_radial),
        cmocka_unit_test(huge_psf_sends_the_light_off_the_sensor),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
