/* pf_species.c - the species mass table and the label matching behind
 * pf.species and every builder's mass = "87Rb". */
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <string.h>
#include "pf_species.h"
#include "pf_units.h"

#define AME2020 "AME2020"
#define AME2020_REFERENCE                                                                             \
    "W. J. Huang et al., Chinese Phys. C 45, 030002 (2021); M. Wang et al., Chinese Phys. C 45, " \
    "030003 (2021); AMDC file mass_1.mas20"
#define CODATA2018 "CODATA 2018"
#define CODATA2018_REFERENCE \
    "E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021); NIST allascii.txt, 2018 CODATA adjustment"

/* One AME2020 line: the ATOMIC MASS column of mass_1.mas20 written as one
 * micro-u number ("86 909180.529" -> 86909180.529) and its uncertainty.  The
 * literal is used twice: stringified, so the published digits survive
 * exactly, and as a number for the doubles. */
#define ATOM(label, sym, name, z, a, micro_u, unc_micro_u)                                              \
    {label, sym, name, z, a, #micro_u, #unc_micro_u, (micro_u) / 1e6, (unc_micro_u) / 1e6,              \
     (micro_u) / 1e6 * PF_ATOMIC_MASS, 0.0, AME2020, AME2020_REFERENCE}
/* A CODATA 2018 particle: mass in u (written in micro-u) and the published kg
 * value with its uncertainty, not a conversion through u. */
#define PARTICLE(label, sym, a, micro_u, unc_micro_u, kg, unc_kg)                                      \
    {label, sym, label, 0, a, #micro_u, #unc_micro_u, (micro_u) / 1e6, (unc_micro_u) / 1e6, kg, unc_kg, \
     CODATA2018, CODATA2018_REFERENCE}

/* In mass_1.mas20 file order (by A).  Every row is one data line of
 * tests/data/ame2020_mass_1.mas20.excerpt; change both or neither. */
static const pf_species table[] = {
    ATOM("1H", "H", "hydrogen", 1, 1, 1007825.031898, 0.000014),
    ATOM("2H", "H", "hydrogen", 1, 2, 2014101.777844, 0.000015),
    ATOM("3He", "He", "helium", 2, 3, 3016029.32197, 0.00006),
    ATOM("4He", "He", "helium", 2, 4, 4002603.25413, 0.00016),
    ATOM("6Li", "Li", "lithium", 3, 6, 6015122.88742, 0.00155),
    ATOM("7Li", "Li", "lithium", 3, 7, 7016003.43426, 0.00450),
    ATOM("23Na", "Na", "sodium", 11, 23, 22989769.28195, 0.00194),
    ATOM("39K", "K", "potassium", 19, 39, 38963706.48482, 0.00489),
    ATOM("40K", "K", "potassium", 19, 40, 39963998.165, 0.060),
    ATOM("40Ca", "Ca", "calcium", 20, 40, 39962590.850, 0.022),
    ATOM("41K", "K", "potassium", 19, 41, 40961825.25611, 0.00403),
    ATOM("52Cr", "Cr", "chromium", 24, 52, 51940504.714, 0.120),
    ATOM("53Cr", "Cr", "chromium", 24, 53, 52940646.304, 0.124),
    ATOM("84Sr", "Sr", "strontium", 38, 84, 83913419.118, 1.334),
    ATOM("85Rb", "Rb", "rubidium", 37, 85, 84911789.73604, 0.00537),
    ATOM("86Sr", "Sr", "strontium", 38, 86, 85909260.72473, 0.00563),
    ATOM("87Rb", "Rb", "rubidium", 37, 87, 86909180.529, 0.006),
    ATOM("87Sr", "Sr", "strontium", 38, 87, 86908877.49454, 0.00550),
    ATOM("88Sr", "Sr", "strontium", 38, 88, 87905612.253, 0.006),
    ATOM("133Cs", "Cs", "caesium", 55, 133, 132905451.958, 0.008),
    ATOM("161Dy", "Dy", "dysprosium", 66, 161, 160926939.425, 0.748),
    ATOM("162Dy", "Dy", "dysprosium", 66, 162, 161926804.507, 0.746),
    ATOM("163Dy", "Dy", "dysprosium", 66, 163, 162928737.221, 0.744),
    ATOM("164Dy", "Dy", "dysprosium", 66, 164, 163929180.819, 0.746),
    ATOM("166Er", "Er", "erbium", 68, 166, 165930301.067, 0.358),
    ATOM("167Er", "Er", "erbium", 68, 167, 166932056.192, 0.306),
    ATOM("168Er", "Er", "erbium", 68, 168, 167932378.282, 0.280),
    ATOM("170Yb", "Yb", "ytterbium", 70, 170, 169934767.242, 0.011),
    ATOM("171Yb", "Yb", "ytterbium", 70, 171, 170936331.515, 0.013),
    ATOM("172Yb", "Yb", "ytterbium", 70, 172, 171936386.654, 0.014),
    ATOM("173Yb", "Yb", "ytterbium", 70, 173, 172938216.211, 0.012),
    ATOM("174Yb", "Yb", "ytterbium", 70, 174, 173938867.545, 0.011),
    ATOM("176Yb", "Yb", "ytterbium", 70, 176, 175942574.706, 0.015),
    /* Particles, rows of tests/data/codata2018_allascii.excerpt: "X mass in
     * u" (here in micro-u) and "X mass" in kg with their uncertainties. */
    PARTICLE("electron", "e", 0, 548.579909065, 0.000000016, PF_ELECTRON_MASS, 0.0000000028e-31),
    PARTICLE("proton", "p", 1, 1007276.466621, 0.000053, PF_PROTON_MASS, 0.00000000051e-27),
    PARTICLE("neutron", "n", 1, 1008664.91595, 0.00049, PF_NEUTRON_MASS, 0.00000000095e-27),
};
#define TABLE_SIZE (sizeof table / sizeof table[0])

/* Extra spellings that the element/mass-number forms do not cover. */
static const struct { const char *alias, *label; } aliases[] = {
    {"d", "2H"}, {"deuterium", "2H"}, {"cesium", "133Cs"}, {"e-", "electron"},
    {"e", "electron"}, {"n", "neutron"}, {"p", "proton"},
};

const pf_species *pf_species_table(size_t *count)
{
    *count = TABLE_SIZE;
    return table;
}

/* Lower case without separators: "Rb-87" -> "rb87". */
static void normalise(const char *in, char *out, size_t size)
{
    size_t j = 0;
    for (; *in && j + 1 < size; in++) {
        unsigned char c = (unsigned char)*in;
        if (c == '-' || c == '_' || c == ' ') continue;
        out[j++] = (char)tolower(c);
    }
    out[j] = '\0';
}

/* Writes the accepted normalised spellings of species s into forms[]. */
static int forms_of(const pf_species *s, char forms[4][48])
{
    int n = 0;
    if (s->mass_number == 0 || strcmp(s->symbol, "n") == 0 || strcmp(s->symbol, "p") == 0) {
        normalise(s->label, forms[n++], 48);
        return n;
    }
    char buf[48];
    snprintf(buf, sizeof buf, "%d%s", s->mass_number, s->symbol);
    normalise(buf, forms[n++], 48);
    snprintf(buf, sizeof buf, "%s%d", s->symbol, s->mass_number);
    normalise(buf, forms[n++], 48);
    snprintf(buf, sizeof buf, "%s%d", s->name, s->mass_number);
    normalise(buf, forms[n++], 48);
    return n;
}

static const pf_species *find_label(const char *label)
{
    for (size_t i = 0; i < TABLE_SIZE; i++)
        if (strcmp(table[i].label, label) == 0) return &table[i];
    return NULL;
}

const pf_species *pf_species_find(const char *label)
{
    char want[48];
    if (!label || strlen(label) >= sizeof want) return NULL;
    normalise(label, want, sizeof want);
    if (!*want) return NULL;
    char forms[4][48];
    for (size_t i = 0; i < TABLE_SIZE; i++) {
        int n = forms_of(&table[i], forms);
        for (int f = 0; f < n; f++)
            if (strcmp(forms[f], want) == 0) return &table[i];
    }
    for (size_t i = 0; i < sizeof aliases / sizeof aliases[0]; i++) {
        char a[48];
        normalise(aliases[i].alias, a, sizeof a);
        if (strcmp(a, want) == 0) return find_label(aliases[i].label);
    }
    return NULL;
}

size_t pf_species_suggest(const char *label, const pf_species **out, size_t max)
{
    char want[48];
    if (!label || max == 0) return 0;
    normalise(label, want, sizeof want);
    int dist[TABLE_SIZE];
    char forms[4][48];
    for (size_t i = 0; i < TABLE_SIZE; i++) {
        int n = forms_of(&table[i], forms);
        dist[i] = 1000;
        for (int f = 0; f < n; f++) {
            int d = pf_edit_distance(want, forms[f]);
            if (d < dist[i]) dist[i] = d;
        }
    }
    /* Isotopes of the element the label names ("K-42" -> 39K, 40K, 41K)
     * come first, whatever their edit distance. */
    char letters[48];
    size_t nl = 0;
    for (const char *p = want; *p && nl + 1 < sizeof letters; p++)
        if (!isdigit((unsigned char)*p)) letters[nl++] = *p;
    letters[nl] = '\0';
    for (size_t i = 0; i < TABLE_SIZE && nl; i++) {
        char sym[48], name[48];
        normalise(table[i].symbol, sym, sizeof sym);
        normalise(table[i].name, name, sizeof name);
        if (table[i].mass_number > 0 && (strcmp(letters, sym) == 0 || strcmp(letters, name) == 0)) dist[i] = -1;
    }
    /* Close means at most 2 edits, or a third of the label for long names. */
    int limit = (int)strlen(want) / 3;
    if (limit < 2) limit = 2;
    size_t found = 0;
    for (int d = -1; d <= limit && found < max; d++)
        for (size_t i = 0; i < TABLE_SIZE && found < max; i++)
            if (dist[i] == d) out[found++] = &table[i];
    return found;
}

double pf_species_uncertainty_kg(const pf_species *s)
{
    if (s->published_uncertainty_kg > 0) return s->published_uncertainty_kg;
    return hypot(s->uncertainty_u * PF_ATOMIC_MASS, s->mass_u * PF_ATOMIC_MASS_UNCERTAINTY);
}
