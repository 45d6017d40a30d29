/* pf_units.h - SI unit values and physical constants offered to scripts.
 *
 * Everything inside the engine is SI.  The unit table lets a script write
 * 1.2 * um or 80 * twopi_Hz; the constant table gives CODATA 2018 values.
 * Each entry carries the name of its source, so documentation and run
 * reports can say where a number comes from. */
#ifndef PF_UNITS_H
#define PF_UNITS_H

#include <stddef.h>
#include "pf_constants.h"

/* CODATA 2018 recommended values (E. Tiesinga et al., Rev. Mod. Phys. 93,
 * 025010 (2021)); "exact" marks the defining constants of the 2019 SI. */
#define PF_SPEED_OF_LIGHT 299792458.0          /* m/s, exact */
#define PF_ELEMENTARY_CHARGE 1.602176634e-19   /* C, exact */
#define PF_BOLTZMANN 1.380649e-23              /* J/K, exact */
#define PF_AVOGADRO 6.02214076e23              /* 1/mol, exact */
#define PF_ATOMIC_MASS 1.66053906660e-27       /* kg, u = m(12C)/12, rel. unc. 3.0e-10 */
#define PF_ATOMIC_MASS_UNCERTAINTY 0.00000000050e-27 /* kg, standard uncertainty of u */
#define PF_ELECTRON_MASS 9.1093837015e-31      /* kg, rel. unc. 3.0e-10 */
#define PF_NEUTRON_MASS 1.67492749804e-27      /* kg, rel. unc. 5.7e-10 */
#define PF_PROTON_MASS 1.67262192369e-27       /* kg, rel. unc. 3.1e-10 */
/* Standard acceleration of gravity, exact by definition (3rd CGPM, 1901). */
#define PF_STANDARD_GRAVITY 9.80665            /* m/s^2 */

/* One named value: a unit (its size in SI) or a constant (its SI value). */
typedef struct pf_quantity {
    const char *name;   /* identifier a script uses, e.g. "um", "hbar" */
    double value;       /* SI value */
    const char *si;     /* SI unit of value, e.g. "m", "J s" */
    const char *source; /* where the value comes from */
} pf_quantity;

/* The unit and constant tables, sorted by nothing in particular but stable
 * (documentation lists them in this order).  *count receives the length. */
const pf_quantity *pf_units_table(size_t *count);
const pf_quantity *pf_constants_table(size_t *count);
/* Entry with the given name in a table, or NULL. */
const pf_quantity *pf_quantity_find(const pf_quantity *table, size_t count, const char *name);

/* Energies expressed in the lab's other units: E / kB (K) and E / h (Hz). */
double pf_energy_as_temperature(double joules);
double pf_energy_as_frequency(double joules);

/* Levenshtein distance between two strings, case-insensitive, for "did you
 * mean" suggestions.  Strings longer than 63 characters count as far away. */
int pf_edit_distance(const char *a, const char *b);
/* Whether a name typed at distance dist from a known one is close enough to
 * suggest it: one edit for names of up to three letters, two up to six,
 * three beyond, and never a whole rewrite.  Farther matches are more often a
 * different word than a typo.  One rule for every "did you mean". */
int pf_edit_suggestible(const char *typed, int dist);

#endif
