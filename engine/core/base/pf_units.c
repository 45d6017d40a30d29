/* pf_units.c - the unit and constant tables behind pf.units and
 * pf.constants, and the edit distance used to suggest close names. */
#include <ctype.h>
#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <string.h>
#include "pf_units.h"

#define CODATA "CODATA 2018"
#define CODATA_EXACT "CODATA 2018, exact in the 2019 SI"
#define SI_PREFIX "SI prefix (exact)"

/* The SI prefixes the unit table uses, u standing for micro (a fact of the
 * trade: the SI Brochure's prefixes). */
static const struct si_prefix {
    char symbol;
    double factor;
} si_prefixes[] = {
    {'G', 1e9}, {'M', 1e6}, {'k', 1e3}, {'c', 1e-2}, {'m', 1e-3}, {'u', 1e-6}, {'n', 1e-9}, {'p', 1e-12},
};

/* A unit and the SI prefixes it is also offered with.  Its prefixed entries
 * follow it in the table, one per prefix in the order listed, named head
 * prefix tail ("kB_" "m" "K") and worth factor * value (1e-3 * kB: the
 * product the table always held, so the same doubles).  A prefixed SI unit
 * (value 1) is exact by the prefix's definition and cites the prefix; a
 * prefixed multiple of a constant cites the constant. */
typedef struct unit_row {
    const char *head, *tail; /* the unprefixed name is head tail */
    double value;            /* SI value */
    const char *si, *source;
    const char *prefixes; /* SI prefix symbols, in table order */
} unit_row;

static const unit_row unit_rows[] = {
    /* length */
    {"", "m", 1.0, "m", "SI base unit", "cmunp"},
    /* time */
    {"", "s", 1.0, "s", "SI base unit", "mun"},
    /* frequency; the twopi_ units turn a frequency into an angular frequency */
    {"", "Hz", 1.0, "1/s", "SI derived unit", "kMG"},
    {"", "rad_per_s", 1.0, "rad/s", "SI derived unit", ""},
    {"twopi_", "Hz", PF_TWO_PI, "rad/s", "2 pi rad per cycle (exact)", "kM"},
    /* mass: the gram is the base unit kg without its prefix */
    {"", "kg", 1.0, "kg", "SI base unit", ""},
    {"", "g", 1e-3, "kg", SI_PREFIX, ""},
    {"", "u", PF_ATOMIC_MASS, "kg", CODATA " atomic mass constant", ""},
    {"", "Da", PF_ATOMIC_MASS, "kg", CODATA " atomic mass constant", ""},
    /* energy, also as the temperature (kB T) and frequency (h f) equivalents */
    {"", "J", 1.0, "J", "SI derived unit", ""},
    {"", "eV", PF_ELEMENTARY_CHARGE, "J", CODATA_EXACT, "mun"},
    {"kB_", "K", PF_BOLTZMANN, "J", CODATA_EXACT, "mun"},
    {"h_", "Hz", PF_PLANCK, "J", CODATA_EXACT, "kMG"},
    /* temperature */
    {"", "K", 1.0, "K", "SI base unit", "mun"},
    /* velocity and acceleration */
    {"", "m_per_s", 1.0, "m/s", "SI derived unit", "cmu"},
    {"", "m_per_s2", 1.0, "m/s^2", "SI derived unit", ""},
    {"", "g_n", PF_STANDARD_GRAVITY, "m/s^2", "standard gravity, exact by definition (3rd CGPM 1901)", ""},
    /* momentum */
    {"", "kg_m_per_s", 1.0, "kg m/s", "SI derived unit", ""},
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

/* The unit table itself, made from unit_rows once.  Its size and name length
 * cover the rows above; the unit test lists every entry, so a row that no
 * longer fits shows there as a missing or cut entry. */
enum { UNIT_ENTRIES_MAX = 64, UNIT_NAME_MAX = 16 };
static pf_quantity units[UNIT_ENTRIES_MAX];
static char unit_names[UNIT_ENTRIES_MAX][UNIT_NAME_MAX];
static size_t unit_count;
static pthread_once_t units_made = PTHREAD_ONCE_INIT;

static double si_prefix_factor(char symbol)
{
    for (size_t i = 0; i < sizeof si_prefixes / sizeof si_prefixes[0]; i++)
        if (si_prefixes[i].symbol == symbol) return si_prefixes[i].factor;
    return NAN; /* not in si_prefixes: the unit test reports the entry */
}

/* Appends row r's entry with prefix symbol p, or its unprefixed entry for p = 0. */
static void add_unit(const unit_row *r, char p)
{
    if (unit_count == UNIT_ENTRIES_MAX) return;
    char *name = unit_names[unit_count];
    pf_quantity *q = &units[unit_count++];
    if (!p) {
        snprintf(name, UNIT_NAME_MAX, "%s%s", r->head, r->tail);
        *q = (pf_quantity){name, r->value, r->si, r->source};
    } else {
        snprintf(name, UNIT_NAME_MAX, "%s%c%s", r->head, p, r->tail);
        *q = (pf_quantity){name, si_prefix_factor(p) * r->value, r->si, r->value == 1.0 ? SI_PREFIX : r->source};
    }
}

static void make_units(void)
{
    for (size_t i = 0; i < sizeof unit_rows / sizeof unit_rows[0]; i++) {
        add_unit(&unit_rows[i], 0);
        for (const char *p = unit_rows[i].prefixes; *p; p++) add_unit(&unit_rows[i], *p);
    }
}

const pf_quantity *pf_units_table(size_t *count)
{
    pthread_once(&units_made, make_units);
    *count = unit_count;
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
