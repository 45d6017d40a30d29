/* pf_table.h - named columns of numbers with units: what CSV tables and HDF5
 * table items are made of. */
#ifndef PF_TABLE_H
#define PF_TABLE_H

#include <stddef.h>
#include "pf_context.h"

/* One column, borrowed from the caller.  unit may be "" (dimensionless).
 * A text column (step kinds, labels) sets text and leaves values NULL. */
typedef struct pf_column {
    const char *name;
    const char *unit;
    const double *values;
    const char *const *text;
    size_t count;
} pf_column;

/* A table read from a file: owns its strings and arrays. */
typedef struct pf_table {
    size_t ncols, nrows;
    char **names;
    char **units;
    double **values;   /* values[c][r]; NULL for a text column */
    char ***text;      /* text[c][r] for a text column, else NULL */
} pf_table;

void pf_table_free(pf_table *t);
/* Index of the column whose name equals name (ASCII case-insensitive), or -1. */
int pf_table_find(const pf_table *t, const char *name);

/* Writes cols as CSV to path through the safe writer (temporary name, then
 * rename; an existing file is kept unless overwrite).  First line: the
 * column headers "name [unit]" (no brackets when the unit is empty); then
 * one row per entry in the shortest round-trip form, C locale (text
 * entries as they are).  Columns must all have the same count (>= 1);
 * names, units and text entries may not hold commas, quotes, brackets or
 * line breaks. */
pf_status pf_csv_write(pf_context *ctx, const char *path, int overwrite, size_t ncols, const pf_column *cols);
/* Reads a CSV file with one header line in the form written above (also
 * accepts "name (unit)", bare names, '#' comment lines, and ';' or tab
 * separators).  A column all of whose entries are numbers is numeric, any
 * other is a text column.  Locale-independent.  Errors name the file and
 * line. */
pf_status pf_csv_read(pf_context *ctx, const char *path, pf_table *out);

/* Shortest "%.*g" form (precision 1..17) that reads back to exactly v, into
 * buf (32 bytes).  Independent of the locale's decimal separator. */
void pf_format_double(double v, char buf[32]);
/* Parses a number in C-locale form ("1.5e-3", "inf", "nan"); returns 0 when
 * the whole of text (surrounding blanks allowed) is not a number. */
int pf_parse_double(const char *text, double *out);

#endif
