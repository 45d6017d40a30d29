/* test_coupling.c - the mean-field coupling from lab quantities and the
 * relativistic beam helper, against the published formulas evaluated here
 * independently with GSL's constants (gsl_const_mksa.h, CODATA 2006: they
 * differ from the engine's CODATA 2018 values by < 1e-6 relative, so the
 * comparisons allow 1e-6) and against tabulated values. */
#include "pft.h"
#include <gsl/gsl_const_mksa.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_zeta.h>
#include "pf_beam.h"
#include "pf_coupling.h"

#define HB GSL_CONST_MKSA_PLANCKS_CONSTANT_HBAR
#define A0 GSL_CONST_MKSA_BOHR_RADIUS
/* 87Rb mass from the species table.  It is only an input: the same m goes to
 * the engine and to the reference formula. */
#define M_RB87 pft_mass("87Rb")

static pf_coupling_spec spec(int dim, double a, double n, double w, int olsh)
{
    pf_coupling_spec s = {dim, a, n, M_RB87, w, olsh};
    return s;
}

/* 3D: g = 4 pi hbar^2 a N / m (e.g. Pethick & Smith, Bose-Einstein
 * Condensation in Dilute Gases, eq. 5.33 with U0 = 4 pi hbar^2 a / m). */
static void coupling_3d(void **state)
{
    pf_coupling_spec s = spec(3, 100 * A0, 1e5, 0, 0);
    pf_coupling_result r;
    pft_ok(pf_coupling_compute(*state, &s, &r));
    double want = 4 * M_PI * HB * HB * s.scattering_length * s.atoms / s.mass;
    pft_near(r.g, want, 1e-6, 0, NULL);
    pft_near(r.g_one_atom, want / s.atoms, 1e-6, 0, NULL);
    assert_true(r.confinement_length == 0 && r.correction == 1);
}

/* Quasi-1D: g = 2 hbar omega_perp a N, and with Olshanii's correction
 * 1/(1 - C a/a_perp), C = -zeta(1/2)/sqrt(2) (M. Olshanii, PRL 81, 938
 * (1998)); zeta(1/2) from GSL's gsl_sf_zeta. */
static void coupling_1d(void **state)
{
    double w = 2 * M_PI * 20e3, a = 100 * A0;
    pf_coupling_spec s = spec(1, a, 2000, w, 0);
    pf_coupling_result r;
    pft_ok(pf_coupling_compute(*state, &s, &r));
    double aperp = sqrt(HB / (s.mass * w));
    pft_near(r.g, 2 * HB * w * a * 2000, 1e-6, 0, NULL);
    pft_near(r.confinement_length, aperp, 1e-6, 0, NULL);
    s.olshanii = 1;
    pft_ok(pf_coupling_compute(*state, &s, &r));
    double c = -gsl_sf_zeta(0.5) / M_SQRT2;
    pft_near(PF_OLSHANII_C, c, 1e-4, 0, NULL); /* the published 1.0326 is C to 4 digits */
    double corr = 1 / (1 - 1.0326 * a / aperp); /* C as the paper and the brief print it */
    pft_near(r.correction, corr, 1e-6, 0, NULL);
    pft_near(r.g, 2 * HB * w * a * 2000 * corr, 1e-6, 0, NULL);
    /* the correction raises g for a > 0, by a few percent here (a/a_perp ~ 0.07) */
    assert_true(r.correction > 1.03 && r.correction < 1.1);
}

/* Quasi-2D: g = 2 sqrt(2 pi) hbar^2 a N / (m a_z), a_z = sqrt(hbar/(m omega_z))
 * (D. S. Petrov, M. Holzmann, G. V. Shlyapnikov, PRL 84, 2551 (2000), a << a_z). */
static void coupling_2d(void **state)
{
    double w = 2 * M_PI * 5e3, a = 100 * A0;
    pf_coupling_spec s = spec(2, a, 3e4, w, 0);
    pf_coupling_result r;
    pft_ok(pf_coupling_compute(*state, &s, &r));
    double az = sqrt(HB / (s.mass * w));
    pft_near(r.g, 2 * sqrt(2 * M_PI) * HB * HB * a * 3e4 / (s.mass * az), 1e-6, 0, NULL);
    /* the same thing written another way: g_2D = g_3D / (sqrt(2 pi) a_z),
     * the 3D coupling averaged over the Gaussian axial ground state */
    pft_near(r.g, 4 * M_PI * HB * HB * a * 3e4 / s.mass / (sqrt(2 * M_PI) * az), 1e-6, 0, NULL);
}

/* Bad input is refused with PF_EINVAL and a message naming the value. */
static void coupling_refuses(void **state)
{
    pf_coupling_result r;
    double w = 2 * M_PI * 20e3, aperp = sqrt(HB / (M_RB87 * w));
    pf_coupling_spec bad[] = {
        spec(1, 100 * A0, 1e3, 0, 0),           /* 1D without transverse frequency */
        spec(2, 100 * A0, 1e3, -5, 0),          /* 2D with a negative one */
        spec(3, 100 * A0, 1e3, w, 0),           /* 3D with one */
        spec(1, 1.01 * aperp, 1e3, w, 0),       /* a >= a_perp */
        spec(1, 0.99 * aperp, 1e3, w, 1),       /* beyond a_perp / C: Olshanii diverges */
        spec(3, 100 * A0, 0, 0, 0),             /* no atoms */
        spec(3, NAN, 1e3, 0, 0),
        spec(4, 100 * A0, 1e3, 0, 0),
        spec(2, 100 * A0, 1e3, w, 1),           /* Olshanii in 2D */
    };
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        assert_int_equal(pf_coupling_compute(*state, &bad[i], &r), PF_EINVAL);
        assert_true(pf_context_message(*state)[0] != '\0');
    }
    pf_coupling_spec below = spec(1, 0.95 * aperp, 1e3, w, 1); /* just below the resonance: allowed, large */
    pft_ok(pf_coupling_compute(*state, &below, &r));
    assert_true(r.correction > 10);
}

/* Independent relativistic wavelength with GSL's constants. */
static double lambda_ref(double m0, double ek)
{
    double c = GSL_CONST_MKSA_SPEED_OF_LIGHT;
    return GSL_CONST_MKSA_PLANCKS_CONSTANT_H / sqrt(2 * m0 * ek * (1 + ek / (2 * m0 * c * c)));
}

/* 200 keV electrons: lambda = 2.508 pm, m/m0 = 1.391 (Williams & Carter,
 * Transmission Electron Microscopy, table of electron properties; quoted
 * from memory). */
static void beam_electron_200kev(void **state)
{
    double ek = 200e3 * GSL_CONST_MKSA_ELECTRON_VOLT, m0 = GSL_CONST_MKSA_MASS_ELECTRON;
    pf_beam b;
    pft_ok(pf_beam_compute(*state, m0, ek, &b));
    pft_near(b.wavelength, lambda_ref(m0, ek), 1e-6, 0, NULL);
    pft_near(b.wavelength, 2.508e-12, 0, 0.0005e-12, NULL);
    pft_near(b.gamma, 1.391, 0, 0.0005, NULL);
    /* v = c sqrt(1 - 1/gamma^2) (special relativity) */
    pft_near(b.velocity, GSL_CONST_MKSA_SPEED_OF_LIGHT * sqrt(1 - 1 / (b.gamma * b.gamma)), 1e-9, 0, NULL);
    pft_near(b.wavenumber, 2 * M_PI / b.wavelength, 1e-12, 0, NULL);
    pft_near(b.transverse_mass, b.gamma * m0, 1e-12, 0, NULL);
    /* v = p c^2 / E_total (special relativity), with E_total = E_k + m0 c^2 */
    double c = GSL_CONST_MKSA_SPEED_OF_LIGHT;
    pft_near(b.velocity, b.momentum * c * c / (ek + m0 * c * c), 1e-9, 0, NULL);
    /* Paraxial mapping: the Fresnel propagator's phase k_perp^2 L / (2k)
     * equals hbar k_perp^2 t / (2 m) with m the transverse mass. */
    double t;
    pft_ok(pf_beam_flight_time(*state, &b, 0.25, &t));
    pft_near(HB * t / b.transverse_mass, 0.25 / b.wavenumber, 1e-6, 0, NULL);
    assert_int_equal(pf_beam_flight_time(*state, &b, -1, &t), PF_EINVAL);
}

/* Thermal neutrons: 25.3 meV (v = 2200 m/s) -> lambda = 1.798 Angstrom
 * (common practice; e.g. the reference conditions of thermal cross sections). */
static void beam_thermal_neutron(void **state)
{
    double ek = 25.3e-3 * GSL_CONST_MKSA_ELECTRON_VOLT, m0 = GSL_CONST_MKSA_MASS_NEUTRON;
    pf_beam b;
    pft_ok(pf_beam_compute(*state, m0, ek, &b));
    pft_near(b.wavelength, lambda_ref(m0, ek), 1e-6, 0, NULL);
    pft_near(b.wavelength, 1.798e-10, 0, 0.0005e-10, NULL);
    pft_near(b.velocity, 2200, 0, 1.0, NULL);
    pft_near(b.gamma, 1, 0, 1e-10, NULL);
}

static void beam_refuses(void **state)
{
    pf_beam b;
    assert_int_equal(pf_beam_compute(*state, GSL_CONST_MKSA_MASS_ELECTRON, -1e-15, &b), PF_EINVAL);
    assert_int_equal(pf_beam_compute(*state, GSL_CONST_MKSA_MASS_ELECTRON, 0, &b), PF_EINVAL);
    assert_int_equal(pf_beam_compute(*state, 0, 1e-15, &b), PF_EINVAL);
    assert_int_equal(pf_beam_compute(*state, GSL_CONST_MKSA_MASS_ELECTRON, INFINITY, &b), PF_EINVAL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test_setup_teardown(coupling_3d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(coupling_1d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(coupling_2d, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(coupling_refuses, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(beam_electron_200kev, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(beam_thermal_neutron, pft_setup, pft_teardown),
        cmocka_unit_test_setup_teardown(beam_refuses, pft_setup, pft_teardown),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
