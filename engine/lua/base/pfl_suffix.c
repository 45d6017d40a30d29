/* pfl_suffix.c - the unit-suffix table and the NUMBER[UNIT] parser for values
 * typed on the command line (pf.parameters, sweep ranges).
 *
 * Suffixes are case-sensitive because SI prefixes are (mHz vs MHz).  "u" and
 * the micro sign both mean micro.  Frequencies are in Hz (cycles per second),
 * angular frequencies in rad/s: they are different quantities here so that a
 * missing 2 pi is caught as a unit mismatch rather than computed silently. */
#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_constants.h"
#include "pfl_suffix.h"

#define MICRO "\xc2\xb5" /* U+00B5 MICRO SIGN in UTF-8 */

/* CODATA 2018: elementary charge (exact since 2019), atomic mass constant. */
#define EV 1.602176634e-19
#define AMU 1.66053906660e-27

static const pfl_unit units[] = {
    {"m", "length", 1.0}, {"km", "length", 1e3}, {"cm", "length", 1e-2}, {"mm", "length", 1e-3},
    {"um", "length", 1e-6}, {MICRO "m", "length", 1e-6}, {"nm", "length", 1e-9}, {"pm", "length", 1e-12},
    {"s", "time", 1.0}, {"ms", "time", 1e-3}, {"us", "time", 1e-6}, {MICRO "s", "time", 1e-6},
    {"ns", "time", 1e-9}, {"ps", "time", 1e-12}, {"min", "time", 60.0},
    {"Hz", "frequency", 1.0}, {"mHz", "frequency", 1e-3}, {"kHz", "frequency", 1e3},
    {"MHz", "frequency", 1e6}, {"GHz", "frequency", 1e9},
    {"rad/s", "angular frequency", 1.0}, {"krad/s", "angular frequency", 1e3},
    {"kg", "mass", 1.0}, {"g", "mass", 1e-3}, {"u", "mass", AMU}, {"Da", "mass", AMU},
    {"m/s", "velocity", 1.0}, {"cm/s", "velocity", 1e-2}, {"mm/s", "velocity", 1e-3},
    {"um/s", "velocity", 1e-6}, {"km/s", "velocity", 1e3},
    {"m/s2", "acceleration", 1.0}, {"m/s^2", "acceleration", 1.0},
    {"J", "energy", 1.0}, {"eV", "energy", EV}, {"keV", "energy", 1e3 * EV}, {"meV", "energy", 1e-3 * EV},
    {"ueV", "energy", 1e-6 * EV}, {"neV", "energy", 1e-9 * EV}, {"peV", "energy", 1e-12 * EV},
    {"K", "temperature", 1.0}, {"mK", "temperature", 1e-3}, {"uK", "temperature", 1e-6},
    {MICRO "K", "temperature", 1e-6}, {"nK", "temperature", 1e-9},
    {"rad", "angle", 1.0}, {"mrad", "angle", 1e-3}, {"urad", "angle", 1e-6},
    {"deg", "angle", PF_PI / 180.0},
    {"1/m", "wavenumber", 1.0}, {"1/mm", "wavenumber", 1e3}, {"1/um", "wavenumber", 1e6},
    {"1/nm", "wavenumber", 1e9},
    {"V", "voltage", 1.0}, {"mV", "voltage", 1e-3}, {"kV", "voltage", 1e3},
    {"W", "power", 1.0}, {"mW", "power", 1e-3}, {"uW", "power", 1e-6},
    {"T", "magnetic field", 1.0}, {"mT", "magnetic field", 1e-3}, {"uT", "magnetic field", 1e-6},
    {"G", "magnetic field", 1e-4}, {"mG", "magnetic field", 1e-7},
};

const pfl_unit *pfl_unit_find(const char *name)
{
    for (size_t i = 0; i < sizeof units / sizeof units[0]; i++)
        if (strcmp(units[i].name, name) == 0) return &units[i];
    return NULL;
}

const pfl_unit *pfl_unit_at(size_t i)
{
    return i < sizeof units / sizeof units[0] ? &units[i] : NULL;
}

const char *pfl_unit_names(const char *quantity, char *buf, size_t size)
{
    size_t used = 0;
    buf[0] = 0;
    for (size_t i = 0; i < sizeof units / sizeof units[0]; i++) {
        if (strcmp(units[i].quantity, quantity) != 0) continue;
        int n = snprintf(buf + used, size - used, "%s%s", used ? ", " : "", units[i].name);
        if (n < 0 || (size_t)n >= size - used) break;
        used += (size_t)n;
    }
    return buf;
}

/* Length of the decimal number at the start of s (0 when none): sign, digits,
 * optional fraction, optional exponent.  Written out rather than trusting
 * strtod, which would also accept hex, "inf" and "nan". */
static size_t number_length(const char *s)
{
    size_t i = 0, digits = 0;
    if (s[i] == '+' || s[i] == '-') i++;
    while (isdigit((unsigned char)s[i])) i++, digits++;
    if (s[i] == '.') {
        i++;
        while (isdigit((unsigned char)s[i])) i++, digits++;
    }
    if (!digits) return 0;
    if (s[i] == 'e' || s[i] == 'E') {
        size_t j = i + 1;
        if (s[j] == '+' || s[j] == '-') j++;
        if (isdigit((unsigned char)s[j])) {
            while (isdigit((unsigned char)s[j])) j++;
            i = j;
        }
    }
    return i;
}

int pfl_value_parse(const char *text, double *number, const pfl_unit **unit, char *err, size_t errsize)
{
    size_t n = number_length(text);
    if (n == 0) {
        snprintf(err, errsize, "'%s' does not start with a decimal number", text);
        return -1;
    }
    char num[64];
    if (n >= sizeof num) {
        snprintf(err, errsize, "'%s': number too long", text);
        return -1;
    }
    memcpy(num, text, n);
    num[n] = 0;
    double v = strtod(num, NULL);
    if (!isfinite(v)) {
        snprintf(err, errsize, "'%s' is out of the range of a double", text);
        return -1;
    }
    const char *rest = text + n;
    if (*rest == ' ') rest++;
    *number = v;
    *unit = NULL;
    if (!*rest) return 0;
    const pfl_unit *u = pfl_unit_find(rest);
    if (!u) {
        snprintf(err, errsize, "'%s': unknown unit '%s' (docs/runner.md lists the suffixes)", text, rest);
        return -1;
    }
    *unit = u;
    return 0;
}

const char *pfl_unit_si_name(const char *quantity)
{
    for (size_t i = 0; pfl_unit_at(i); i++) {
        const pfl_unit *u = pfl_unit_at(i);
        if (strcmp(u->quantity, quantity) == 0 && u->si == 1.0) return u->name;
    }
    return NULL;
}
