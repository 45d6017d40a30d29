/* test_species.c - the species table's invariants, label matching and the
 * kg uncertainty.  The digits themselves are compared with the committed
 * AME2020 and CODATA 2018 excerpts by tests/ref/test_species_ame2020.sh. */
#include "pft.h"
#include <stdlib.h>
#include <string.h>
#include "pf_species.h"
#include "pf_units.h"

/* Every row keeps the published micro-u digits and the doubles made from
 * them agree: strtod of the string is the nearest double to the decimal, the
 * table's mass_u is that divided by 1e6 (one more rounding). */
static void strings_and_numbers_agree(void **state)
{
    (void)state;
    size_t n;
    const pf_species *t = pf_species_table(&n);
    assert_true(n >= 34);
    for (size_t i = 0; i < n; i++) {
        char *end;
        double micro = strtod(t[i].mass_micro_u, &end);
        assert_int_equal(*end, '\0');
        pft_near(t[i].mass_u, micro / 1e6, 0.0, 0.0, NULL);
        double unc = strtod(t[i].uncertainty_micro_u, &end);
        assert_int_equal(*end, '\0');
        pft_near(t[i].uncertainty_u, unc / 1e6, 0.0, 0.0, NULL);
        assert_true(t[i].uncertainty_u > 0 && t[i].uncertainty_u < 1e-5 * t[i].mass_u);
    }
}

/* Atoms: label = A + symbol, Z > 0, and |mass - A| < 0.1 u (the mass excess
 * of every stable nuclide is below 0.1 u in magnitude: from memory), so a
 * row with a mistyped A or a shifted digit fails. */
static void atoms_are_consistent(void **state)
{
    (void)state;
    size_t n, atoms = 0;
    const pf_species *t = pf_species_table(&n);
    for (size_t i = 0; i < n; i++) {
        if (strcmp(t[i].source, "AME2020") != 0) continue;
        atoms++;
        char label[16];
        snprintf(label, sizeof label, "%d%s", t[i].mass_number, t[i].symbol);
        assert_string_equal(t[i].label, label);
        assert_true(t[i].atomic_number > 0 && t[i].atomic_number < t[i].mass_number + 1);
        pft_near(t[i].mass_u, t[i].mass_number, 0.0, 0.1, NULL);
        pft_near(t[i].mass_kg, t[i].mass_u * PF_ATOMIC_MASS, 2.3e-16, 0.0, NULL);
        assert_ptr_equal(pf_species_find(t[i].label), &t[i]);
        for (size_t j = 0; j < i; j++) assert_string_not_equal(t[i].label, t[j].label);
    }
    assert_int_equal(atoms, n - 3);
}

/* kg uncertainty of an atom: AME and u's CODATA uncertainty in quadrature
 * (GUM, JCGM 100:2008, 5.1.2); u = 1.66053906660(50)e-27 kg (CODATA 2018,
 * allascii.txt excerpt).  For 87Rb, 6e-9 u * u = 9.96e-36 kg and 86.9 u *
 * 5.0e-37 = 4.35e-35 kg: u dominates.  Particles: CODATA's kg values. */
static void uncertainty_in_kg(void **state)
{
    (void)state;
    const pf_species *rb = pf_species_find("87Rb");
    assert_non_null(rb);
    double ame = 0.006e-6 * 1.66053906660e-27, via_u = 86.909180529 * 0.00000000050e-27;
    pft_near(pf_species_uncertainty_kg(rb), sqrt(ame * ame + via_u * via_u), 1e-15, 0.0, NULL);
    pft_near(pf_species_uncertainty_kg(pf_species_find("electron")), 0.0000000028e-31, 0.0, 0.0, NULL);
    pft_near(pf_species_uncertainty_kg(pf_species_find("neutron")), 0.00000000095e-27, 0.0, 0.0, NULL);
    pft_near(pf_species_uncertainty_kg(pf_species_find("p")), 0.00000000051e-27, 0.0, 0.0, NULL);
}

/* The spellings docs/states.md promises, and the unknown-label suggestions. */
static void labels_and_suggestions(void **state)
{
    (void)state;
    const pf_species *rb = pf_species_find("87Rb");
    const char *forms[] = {"Rb87", "Rb-87", "rubidium-87", "RB87", "87rb"};
    for (size_t i = 0; i < sizeof forms / sizeof forms[0]; i++) assert_ptr_equal(pf_species_find(forms[i]), rb);
    assert_string_equal(pf_species_find("Ca-40")->label, "40Ca");
    assert_string_equal(pf_species_find("chromium-52")->label, "52Cr");
    assert_string_equal(pf_species_find("deuterium")->label, "2H");
    assert_null(pf_species_find("K-42"));
    assert_null(pf_species_find(""));
    const pf_species *near[6];
    size_t k = pf_species_suggest("Dy-165", near, 6);
    assert_int_equal(k, 4); /* the element's isotopes first: 161Dy .. 164Dy */
    for (size_t i = 0; i < k; i++) assert_string_equal(near[i]->symbol, "Dy");
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(strings_and_numbers_agree),
        cmocka_unit_test(atoms_are_consistent),
        cmocka_unit_test(uncertainty_in_kg),
        cmocka_unit_test(labels_and_suggestions),
    };
    return cmocka_run_group_tests_name("species", tests, NULL, NULL);
}
