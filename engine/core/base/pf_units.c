/* pf_units.c - the unit and constant tables behind pf.units and
 * pf.constants, and the edit distance used to suggest close names. */
#include <ctype.h>
#include <string.h>
#include "pf_units.h"

#define CODATA "CODATA 2018"
#define CODATA_EXACT "CODATA 2018, exact in the 2019 SI"
#define SI_PREFIX "SI prefix (exact)"

static const pf_quantity units[] = {
    /* length */
    {"m", 1.0, "m", "SI base unit"},
    {"cm", 1e-2, "m", SI_PREFIX},
    {"mm", 1e-3, "m", SI_PREFIX},
    {"um", 1e-6, "m", SI_PREFIX},
    {"nm", 1e-9, "m", SI_PREFIX},
    {"pm", 1e-12, "m", SI_PREFIX},
    /* time */
    {"s", 1.0, "s", "SI base unit"},
    {"ms", 1e-3, "s", SI_PREFIX},
    {"us", 1e-6, "s", SI_PREFIX},
    {"ns", 1e-9, "s", SI_PREFIX},
    /* frequency; the twopi_ units turn a frequency into an angular frequency */
    {"Hz", 1.0, "1/s", "SI derived unit"},
    {"kHz", 1e3, "1/s", SI_PREFIX},
    {"MHz", 1e6, "1/s", SI_PREFIX},
    {"GHz", 1e9, "1/s", SI_PREFIX},
    {"rad_per_s", 1.0, "rad/s", "SI derived unit"},
    {"twopi_Hz", PF_TWO_PI, "rad/s", "2 pi rad per cycle (exact)"},
    {"twopi_kHz", PF_TWO_PI * 1e3, "rad/s", "2 pi rad per cycle (exact)"},
    {"twopi_MHz", PF_TWO_PI * 1e6, "rad/s", "2 pi rad per cycle (exact)"},
    /* mass */
    {"kg", 1.0, "kg", "SI base unit"},
    {"g", 1e-3, "kg", SI_PREFIX},
    {"u", PF_ATOMIC_MASS, "kg", CODATA " atomic mass constant"},
    {"Da", PF_ATOMIC_MASS, "kg", CODATA " atomic mass constant"},
    /* energy, also as the temperature (kB T) and frequency (h f) equivalents */
    {"J", 1.0, "J", "SI derived unit"},
    {"eV", PF_ELEMENTARY_CHARGE, "J", CODATA_EXACT},
    {"meV", 1e-3 * PF_ELEMENTARY_CHARGE, "J", CODATA_EXACT},
    {"ueV", 1e-6 * PF_ELEMENTARY_CHARGE, "J", CODATA_EXACT},
    {"neV", 1e-9 * PF_ELEMENTARY_CHARGE, "J", CODATA_EXACT},
    {"kB_K", PF_BOLTZMANN, "J", CODATA_EXACT},
    {"kB_mK", 1e-3 * PF_BOLTZMANN, "J", CODATA_EXACT},
    {"kB_uK", 1e-6 * PF_BOLTZMANN, "J", CODATA_EXACT},
    {"kB_nK", 1e-9 * PF_BOLTZMANN, "J", CODATA_EXACT},
    {"h_Hz", PF_PLANCK, "J", CODATA_EXACT},
    {"h_kHz", 1e3 * PF_PLANCK, "J", CODATA_EXACT},
    {"h_MHz", 1e6 * PF_PLANCK, "J", CODATA_EXACT},
    {"h_GHz", 1e9 * PF_PLANCK, "J", CODATA_EXACT},
    /* temperature */
    {"K", 1.0, "K", "SI base unit"},
    {"mK", 1e-3, "K", SI_PREFIX},
    {"uK", 1e-6, "K", SI_PREFIX},
    {"nK", 1e-9, "K", SI_PREFIX},
    /* velocity and acceleration */
    {"m_per_s", 1.0, "m/s", "SI derived unit"},
    {"cm_per_s", 1e-2, "m/s", SI_PREFIX},
    {"mm_per_s", 1e-3, "m/s", SI_PREFIX},
    {"um_per_s", 1e-6, "m/s", SI_PREFIX},
    {"m_per_s2", 1.0, "m/s^2", "SI derived unit"},
    {"g_n", PF_STANDARD_GRAVITY, "m/s^2", "standard gravity, exact by definition (3rd CGPM 1901)"},
    /* momentum */
    {"kg_m_per_s", 1.0, "kg m/s", "SI derived unit"},
};

static const pf_quantity constants[] = {
    {"c", PF_SPEED_OF_LIGHT, "m/s", CODATA_EXACT},
    {"h", PF_PLANCK, "J s", CODATA_EXACT},
    {"hbar", PF_HBAR, "J s", CODATA_EXACT " (h / 2 pi)"},
    {"e", PF_ELEMENTARY_CHARGE, "C", CODATA_EXACT},
    {"kB", PF_BOLTZMANN, "J/K", CODATA_EXACT},
    {"NA", PF_AVOGADRO, "1/mol", CODATA_EXACT},
    {"u", PF_ATOMIC_MASS, "kg", CODATA " (relative uncertainty 3.0e-10)"},
    {"m_e", PF_ELECTRON_MASS, "kg", CODATA " (relative uncertainty 3.0e-10)"},
    {"m_n", PF_NEUTRON_MASS, "kg", CODATA " (relative uncertainty 5.7e-10)"},
    {"m_p", PF_PROTON_MASS, "kg", CODATA " (relative uncertainty 3.1e-10)"},
    {"mu_B", 9.2740100783e-24, "J/T", CODATA " Bohr magneton (relative uncertainty 3.0e-10)"},
    {"a0", 5.29177210903e-11, "m", CODATA " Bohr radius (relative uncertainty 1.5e-10)"},
    {"alpha", 7.2973525693e-3, "1", CODATA " fine-structure constant (relative uncertainty 1.5e-10)"},
    {"g_n", PF_STANDARD_GRAVITY, "m/s^2", "standard gravity, exact by definition (3rd CGPM 1901)"},
};

const pf_quantity *pf_units_table(size_t *count)
{
    *count = sizeof units / sizeof units[0];
    return units;
}

const pf_quantity *pf_constants_table(size_t *count)
{
    *count = sizeof constants / sizeof constants[0];
    return constants;
}

const pf_quantity *pf_quantity_find(const pf_quantity *table, size_t count, const char *name)
{
    for (size_t i = 0; i < count; i++)
        if (strcmp(table[i].name, name) == 0) return &table[i];
    return NULL;
}

double pf_energy_as_temperature(double joules) { return joules / PF_BOLTZMANN; }
double pf_energy_as_frequency(double joules) { return joules / PF_PLANCK; }

int pf_edit_distance(const char *a, const char *b)
{
    enum { MAXLEN = 63 };
    size_t la = strlen(a), lb = strlen(b);
    if (la > MAXLEN || lb > MAXLEN) return 1000;
    /* Two rows of the classic dynamic-programming table suffice. */
    int prev[MAXLEN + 1], cur[MAXLEN + 1];
    for (size_t j = 0; j <= lb; j++) prev[j] = (int)j;
    for (size_t i = 1; i <= la; i++) {
        cur[0] = (int)i;
        for (size_t j = 1; j <= lb; j++) {
            int same = tolower((unsigned char)a[i - 1]) == tolower((unsigned char)b[j - 1]);
            int best = prev[j - 1] + (same ? 0 : 1);
            if (prev[j] + 1 < best) best = prev[j] + 1;
            if (cur[j - 1] + 1 < best) best = cur[j - 1] + 1;
            cur[j] = best;
        }
        memcpy(prev, cur, (lb + 1) * sizeof prev[0]);
    }
    return prev[lb];
}

int pf_edit_suggestible(const char *typed, int dist)
{
    size_t n = strlen(typed);
    int limit = n <= 3 ? 1 : n <= 6 ? 2 : 3;
    return dist <= limit && (size_t)dist < n;
}
