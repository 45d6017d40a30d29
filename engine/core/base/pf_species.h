/* pf_species.h - masses of common laboratory species, looked up by label.
 *
 * Atomic (neutral-atom) masses are the AME2020 values of the Atomic Mass Data
 * Center's unrounded table mass_1.mas20 (W. J. Huang et al., Chinese Phys. C
 * 45, 030002 (2021); M. Wang et al., Chinese Phys. C 45, 030003 (2021)),
 * kept as the published micro-u digits; kg = micro-u * 1e-6 * u with u from
 * CODATA 2018.  The electron, proton and neutron masses are CODATA 2018.
 * tests/ref/test_species_ame2020.sh compares every entry, to all digits,
 * with the committed excerpt tests/data/ame2020_mass_1.mas20.excerpt.
 * Labels are accepted as "87Rb", "Rb87", "Rb-87" or "rubidium-87", in any
 * letter case. */
#ifndef PF_SPECIES_H
#define PF_SPECIES_H

#include <stddef.h>

typedef struct pf_species {
    const char *label;               /* canonical label, e.g. "87Rb", "electron" */
    const char *symbol;              /* element symbol ("Rb"), or the particle name */
    const char *name;                /* element or particle name in English */
    int atomic_number;               /* Z of an atom; 0 for the particles */
    int mass_number;                 /* A, 0 for the electron */
    const char *mass_micro_u;        /* published mass in micro-u, digits exactly as in the source */
    const char *uncertainty_micro_u; /* its published standard uncertainty in micro-u */
    double mass_u;                   /* mass in u (mass_micro_u / 1e6) */
    double uncertainty_u;            /* standard uncertainty of mass_u (u) */
    double mass_kg;                  /* mass in kg (CODATA kg value for particles) */
    double published_uncertainty_kg; /* particles: CODATA's kg uncertainty; atoms: 0 (see below) */
    const char *source;              /* evaluation: "AME2020" or "CODATA 2018" */
    const char *reference;           /* publication and source file */
} pf_species;

/* The whole table; *count receives its length. */
const pf_species *pf_species_table(size_t *count);
/* Species matching the label (see above for the accepted forms), or NULL. */
const pf_species *pf_species_find(const char *label);
/* Up to max species whose labels are close to label (edit distance on the
 * normalised forms), nearest first.  Returns how many were written. */
size_t pf_species_suggest(const char *label, const pf_species **out, size_t max);
/* Standard uncertainty of s->mass_kg.  For an atom, mass_kg = mass_u * u, so
 * the AME uncertainty and u's CODATA uncertainty combine in quadrature (they
 * are independent); u's part (relative 3.0e-10) dominates for most atoms.
 * For a particle, CODATA's published kg uncertainty. */
double pf_species_uncertainty_kg(const pf_species *s);

#endif
