/* pfl_suffix.h - the one rule for values typed with a unit on the command line
 * ("18ms", "2.5um", "1.2kHz"): a decimal number, optionally followed by one
 * unit suffix from a fixed table, converted to SI.  Plain C, no Lua: the
 * runner's sweep planner uses it as well as pf.parameters.  docs/runner.md
 * lists the table. */
#ifndef PFL_SUFFIX_H
#define PFL_SUFFIX_H

#include <stddef.h>

typedef struct pfl_unit {
    const char *name;     /* suffix as typed, case-sensitive: "ms", "MHz", "um" */
    const char *quantity; /* "length", "time", "frequency", ... */
    double si;            /* value of one unit in SI (the quantity's SI unit) */
} pfl_unit;

/* The unit with this exact suffix, or NULL. */
const pfl_unit *pfl_unit_find(const char *name);
/* The SI unit's suffix of a quantity (the table's entry worth 1 SI unit:
 * "s" for time, "m" for length), or NULL for an unknown quantity. */
const char *pfl_unit_si_name(const char *quantity);
/* i-th entry of the table (0-based), NULL past the end: for listings. */
const pfl_unit *pfl_unit_at(size_t i);
/* Writes the suffixes of one quantity, comma-separated, into buf. */
const char *pfl_unit_names(const char *quantity, char *buf, size_t size);

/* Parses text as NUMBER[UNIT]: NUMBER is a finite decimal in the C locale
 * (digits, optional point, optional exponent), UNIT an exact suffix from the
 * table, optionally after one space.  On success returns 0, stores the number
 * as typed in *number and the unit (NULL when none) in *unit.  On failure
 * returns -1 and writes why into err. */
int pfl_value_parse(const char *text, double *number, const pfl_unit **unit, char *err, size_t errsize);

#endif
