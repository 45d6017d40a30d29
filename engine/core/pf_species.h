/* pf_species.h - masses of common laboratory species, looked up by label.
 *
 * Atomic (neutral-atom) masses come from the Atomic Mass Evaluation AME2020
 * (M. Wang et al., Chinese Phys. C 45, 030003 (2021)); the electron, proton
 * and neutron masses from CODATA 2018.  Labels are accepted as "87Rb",
 * "Rb87", "Rb-87" or "rubidium-87", in any letter case. */
#ifndef PF_SPECIES_H
#define PF_SPECIES_H

#include <stddef.h>

typedef struct pf_species {
    const char *label;     /* canonical label, e.g. "87Rb", "electron" */
    const char *symbol;    /* element symbol ("Rb"), or the particle name */
    const char *name;      /* element or particle name in English */
    int mass_number;       /* A, 0 for the electron */
    double mass_u;         /* mass in atomic mass units u */
    double uncertainty_u;  /* standard uncertainty of mass_u (u) */
    double mass_kg;        /* mass in kg (CODATA kg value for particles) */
    const char *source;    /* evaluation the value comes from */
} pf_species;

/* The whole table; *count receives its length. */
const pf_species *pf_species_table(size_t *count);
/* Species matching the label (see above for the accepted forms), or NULL. */
const pf_species *pf_species_find(const char *label);
/* Up to max species whose labels are close to label (edit distance on the
 * normalised forms), nearest first.  Returns how many were written. */
size_t pf_species_suggest(const char *label, const pf_species **out, size_t max);

#endif
