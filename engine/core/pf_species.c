/* pf_species.c - the species mass table and the label matching behind
 * pf.species and every builder's mass = "87Rb". */
#include <ctype.h>
#include <stdio.h>
#include <string.h>
#include "pf_species.h"
#include "pf_units.h"

#define AME "AME2020"
#define ATOM(label, sym, name, a, m, unc) {label, sym, name, a, m, unc, (m) * PF_ATOMIC_MASS, AME}

/* Values in u with their standard uncertainties, AME2020 atomic masses. */
static const pf_species table[] = {
    ATOM("1H", "H", "hydrogen", 1, 1.007825031898, 1.4e-11),
    ATOM("2H", "H", "hydrogen", 2, 2.014101777844, 1.5e-11),
    ATOM("3He", "He", "helium", 3, 3.016029321967, 6.0e-11),
    ATOM("4He", "He", "helium", 4, 4.002603254130, 1.58e-10),
    ATOM("6Li", "Li", "lithium", 6, 6.0151228874, 1.5e-9),
    ATOM("7Li", "Li", "lithium", 7, 7.016003434, 4e-9),
    ATOM("23Na", "Na", "sodium", 23, 22.9897692820, 1.9e-9),
    ATOM("39K", "K", "potassium", 39, 38.9637064864, 4.9e-9),
    ATOM("40K", "K", "potassium", 40, 39.963998166, 6.0e-8),
    ATOM("41K", "K", "potassium", 41, 40.9618252579, 4.1e-9),
    ATOM("84Sr", "Sr", "strontium", 84, 83.9134191, 1.3e-6),
    ATOM("86Sr", "Sr", "strontium", 86, 85.9092606, 1.2e-6),
    ATOM("87Sr", "Sr", "strontium", 87, 86.9088775, 1.2e-6),
    ATOM("88Sr", "Sr", "strontium", 88, 87.9056125, 1.2e-6),
    ATOM("85Rb", "Rb", "rubidium", 85, 84.9117897360, 5.4e-9),
    ATOM("87Rb", "Rb", "rubidium", 87, 86.9091805310, 6.0e-9),
    ATOM("133Cs", "Cs", "caesium", 133, 132.9054519610, 8.0e-9),
    ATOM("164Dy", "Dy", "dysprosium", 164, 163.9291819, 1.3e-6),
    ATOM("166Er", "Er", "erbium", 166, 165.9302995, 1.3e-6),
    ATOM("171Yb", "Yb", "ytterbium", 171, 170.9363302, 1.4e-6),
    ATOM("174Yb", "Yb", "ytterbium", 174, 173.9388664, 1.4e-6),
    /* Particles: CODATA 2018, mass in kg as published (not via u). */
    {"electron", "e", "electron", 0, 5.48579909065e-4, 1.6e-14, PF_ELECTRON_MASS, "CODATA 2018"},
    {"proton", "p", "proton", 1, 1.007276466621, 5.3e-11, PF_PROTON_MASS, "CODATA 2018"},
    {"neutron", "n", "neutron", 1, 1.00866491595, 4.9e-10, PF_NEUTRON_MASS, "CODATA 2018"},
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
