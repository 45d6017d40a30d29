/* pf_csv.c - CSV tables with a units header, written in full precision and
 * read back, both independent of the process locale. */
#include <ctype.h>
#include <errno.h>
#include <locale.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include "pf_readcap.h"
#include "pf_safefile.h"
#include "pf_table.h"

/* printf and strtod follow LC_NUMERIC; a uselocale("C") object makes the
 * result the same whatever the user's locale, without touching the global
 * locale of a host program. */
static locale_t c_locale(void)
{
    static locale_t loc = (locale_t)0;
    if (!loc) loc = newlocale(LC_NUMERIC_MASK, "C", (locale_t)0);
    return loc;
}

void pf_format_double(double v, char buf[32])
{
    locale_t old = uselocale(c_locale());
    if (isnan(v)) snprintf(buf, 32, "nan");
    else if (isinf(v)) snprintf(buf, 32, v > 0 ? "inf" : "-inf");
    else {
        for (int p = 1; p <= 17; p++) {
            snprintf(buf, 32, "%.*g", p, v);
            if (strtod(buf, NULL) == v) break;
        }
    }
    uselocale(old);
}

int pf_parse_double(const char *text, double *out)
{
    locale_t old = uselocale(c_locale());
    char *end;
    errno = 0;
    double v = strtod(text, &end);
    uselocale(old);
    if (end == text) return 0;
    while (*end == ' ' || *end == '\t' || *end == '\r') end++;
    if (*end) return 0;
    *out = v;
    return 1;
}

void pf_table_free(pf_table *t)
{
    for (size_t c = 0; c < t->ncols; c++) {
        if (t->names) free(t->names[c]);
        if (t->units) free(t->units[c]);
        if (t->values) free(t->values[c]);
        if (t->text && t->text[c]) {
            for (size_t r = 0; r < t->nrows; r++) free(t->text[c][r]);
            free(t->text[c]);
        }
    }
    free(t->names);
    free(t->units);
    free(t->values);
    free(t->text);
    memset(t, 0, sizeof *t);
}

int pf_table_find(const pf_table *t, const char *name)
{
    for (size_t c = 0; c < t->ncols; c++) {
        const char *a = t->names[c], *b = name;
        while (*a && *b && tolower((unsigned char)*a) == tolower((unsigned char)*b)) a++, b++;
        if (!*a && !*b) return (int)c;
    }
    return -1;
}

pf_status pf_csv_write(pf_context *ctx, const char *path, int overwrite, size_t ncols, const pf_column *cols)
{
    if (ncols < 1) return pf_fail(ctx, PF_EINVAL, "a table needs at least one column");
    size_t rows = cols[0].count;
    for (size_t c = 0; c < ncols; c++) {
        if (!cols[c].name || !*cols[c].name || strpbrk(cols[c].name, ",;\"\n\r\t[]"))
            return pf_fail(ctx, PF_EINVAL, "column %zu: name '%s' must be non-empty without , ; \" [ ] tabs or line breaks",
                           c + 1, cols[c].name ? cols[c].name : "");
        if (cols[c].unit && strpbrk(cols[c].unit, ",;\"\n\r\t[]"))
            return pf_fail(ctx, PF_EINVAL, "column '%s': unit '%s' must not contain , ; \" [ ] tabs or line breaks",
                           cols[c].name, cols[c].unit);
        for (size_t r = 0; cols[c].text && r < cols[c].count; r++)
            if (!cols[c].text[r] || strpbrk(cols[c].text[r], ",\"\n\r"))
                return pf_fail(ctx, PF_EINVAL, "column '%s' entry %zu must be text without commas, quotes or line breaks",
                               cols[c].name, r + 1);
        if (cols[c].count != rows)
            return pf_fail(ctx, PF_EINVAL, "column '%s' has %zu entries but column '%s' has %zu", cols[c].name,
                           cols[c].count, cols[0].name, rows);
    }
    if (rows < 1) return pf_fail(ctx, PF_EINVAL, "table columns are empty");
    pf_safefile sf;
    pf_status s = pf_safe_begin(ctx, path, overwrite, &sf);
    if (s) return s;
    FILE *f = fopen(sf.temp_path, "w");
    if (!f) {
        s = pf_fail(ctx, PF_EIO, "cannot write '%s': %s", sf.temp_path, strerror(errno));
        pf_safe_abandon(&sf);
        return s;
    }
    for (size_t c = 0; c < ncols; c++) {
        if (c) fputc(',', f);
        if (cols[c].unit && *cols[c].unit) fprintf(f, "%s [%s]", cols[c].name, cols[c].unit);
        else fputs(cols[c].name, f);
    }
    fputc('\n', f);
    char buf[32];
    for (size_t r = 0; r < rows; r++) {
        for (size_t c = 0; c < ncols; c++) {
            if (c) fputc(',', f);
            if (cols[c].text) {
                fputs(cols[c].text[r], f);
                continue;
            }
            pf_format_double(cols[c].values[r], buf);
            fputs(buf, f);
        }
        fputc('\n', f);
    }
    int bad = ferror(f);
    if (fclose(f) != 0) bad = 1;
    if (bad) {
        pf_safe_abandon(&sf);
        return pf_fail(ctx, PF_EIO, "error writing '%s' (disk full?)", path);
    }
    return pf_safe_commit(ctx, &sf);
}

/* ---- reading ---- */

static char *trim(char *s)
{
    while (*s == ' ' || *s == '\t') s++;
    char *e = s + strlen(s);
    while (e > s && (e[-1] == ' ' || e[-1] == '\t' || e[-1] == '\r' || e[-1] == '\n')) *--e = '\0';
    /* Tolerate quoted headers written by spreadsheets. */
    if (e - s >= 2 && s[0] == '"' && e[-1] == '"') {
        e[-1] = '\0';
        s++;
    }
    return s;
}

/* Splits line in place at sep; returns the field count (at most max). */
static size_t split(char *line, char sep, char **fields, size_t max)
{
    size_t n = 0;
    char *p = line;
    for (;;) {
        char *q = strchr(p, sep);
        if (n < max) fields[n] = p;
        n++;
        if (!q) break;
        *q = '\0';
        p = q + 1;
    }
    return n;
}

/* "name [unit]" or "name (unit)" or "name". */
static int parse_header_field(char *field, char **name, char **unit)
{
    char *s = trim(field);
    char *open = strchr(s, '[');
    char close = ']';
    if (!open) {
        open = strrchr(s, '(');
        close = ')';
    }
    const char *u = "";
    if (open) {
        char *end = strrchr(open, close);
        if (!end) return 0;
        *end = '\0';
        u = trim(open + 1);
        *open = '\0';
    }
    *name = strdup(trim(s));
    *unit = strdup(u);
    return *name && *unit;
}

/* Limits on what a CSV file may claim.  A table of samples has a handful of
 * columns and lines of a few hundred bytes; these bounds are far above that
 * and far below what would exhaust memory before the cap is consulted. */
#define CSV_MAX_LINE ((size_t)1 << 20)
#define CSV_MAX_COLUMNS 4096
/* Bytes one cell costs beyond its text: the row pointer, the allocator's
 * own bookkeeping (glibc: 16) and the double it may become. */
#define CSV_CELL_OVERHEAD (sizeof(char *) + 16 + sizeof(double))

enum { LINE_OK = 1, LINE_END = 0, LINE_TOO_LONG = -1, LINE_NUL = -2, LINE_NOMEM = -3 };

/* Reads one line into *buf, refusing lines longer than CSV_MAX_LINE and NUL
 * bytes (a binary file, or /dev/zero) before they can grow the buffer
 * without bound, which getline would do. */
static int read_line(FILE *f, char **buf, size_t *cap)
{
    size_t len = 0;
    int c, any = 0;
    while ((c = getc_unlocked(f)) != EOF) {
        any = 1;
        if (c == '\0') return LINE_NUL;
        if (len + 2 > *cap) {
            if (len >= CSV_MAX_LINE) return LINE_TOO_LONG;
            size_t grown = *cap ? 2 * *cap : 256;
            if (grown > CSV_MAX_LINE + 2) grown = CSV_MAX_LINE + 2;
            char *p = realloc(*buf, grown);
            if (!p) return LINE_NOMEM;
            *buf = p;
            *cap = grown;
        }
        (*buf)[len++] = (char)c;
        if (c == '\n') break;
    }
    if (!any) return LINE_END;
    (*buf)[len] = '\0';
    return LINE_OK;
}

/* The message for a read_line result other than LINE_OK / LINE_END. */
static pf_status line_error(pf_context *ctx, const char *path, size_t lineno, int r)
{
    if (r == LINE_TOO_LONG)
        return pf_fail(ctx, PF_ELIMIT, "%s:%zu: line longer than %zu bytes (not a table of samples?)", path, lineno,
                       CSV_MAX_LINE);
    if (r == LINE_NUL) return pf_fail(ctx, PF_EINVAL, "%s:%zu: the line holds a NUL byte (not a text file?)", path, lineno);
    return pf_fail(ctx, PF_ENOMEM, "out of memory reading '%s'", path);
}

/* The header: the first line that is neither blank nor a comment (a UTF-8
 * byte-order mark on the first line skipped), trimmed, in *line's buffer. */
static pf_status find_header(pf_context *ctx, FILE *f, const char *path, char **line, size_t *cap, size_t *lineno,
                             char **hdr)
{
    for (;;) {
        int got = read_line(f, line, cap);
        (*lineno)++;
        if (got == LINE_END) return pf_fail(ctx, PF_EINVAL, "%s: no header line", path);
        if (got != LINE_OK) return line_error(ctx, path, *lineno, got);
        char *t = trim(*line);
        /* Spreadsheets often start UTF-8 files with a byte-order mark. */
        if (*lineno == 1 && (unsigned char)t[0] == 0xEF && (unsigned char)t[1] == 0xBB && (unsigned char)t[2] == 0xBF)
            t = trim(t + 3);
        if (*t && *t != '#') {
            *hdr = t;
            return PF_OK;
        }
    }
}

/* Appends one data row (ncols fields, trimmed copies) to out's text
 * columns, growing them by doubling; every byte is booked against the
 * memory cap first (*held, *rowcap carry over between rows). */
static pf_status store_row(pf_context *ctx, const char *path, char **fields, size_t ncols, size_t *rowcap,
                           size_t *held, pf_table *out)
{
    size_t row_bytes = 0;
    for (size_t c = 0; c < ncols; c++) row_bytes = pf_read_add(row_bytes, strlen(fields[c]) + 1 + CSV_CELL_OVERHEAD);
    *held = pf_read_add(*held, row_bytes);
    int grow = out->nrows == *rowcap;
    if (grow) {
        size_t bytes;
        *rowcap = *rowcap ? 2 * *rowcap : 256;
        /* The doubled pointer arrays may briefly sit beside the old ones. */
        if (__builtin_mul_overflow(*rowcap, ncols * sizeof(char *), &bytes)) *held = SIZE_MAX;
        else *held = pf_read_add(*held, bytes);
    }
    pf_status s = pf_read_budget(ctx, path, *held);
    if (s) return s;
    if (grow) {
        for (size_t c = 0; c < ncols; c++) {
            char **p = realloc(out->text[c], *rowcap * sizeof *p);
            if (!p) return pf_fail(ctx, PF_ENOMEM, "out of memory reading '%s'", path);
            out->text[c] = p;
        }
    }
    for (size_t c = 0; c < ncols; c++) {
        out->text[c][out->nrows] = strdup(trim(fields[c]));
        if (!out->text[c][out->nrows]) {
            for (size_t k = 0; k < c; k++) free(out->text[k][out->nrows]);
            return pf_fail(ctx, PF_ENOMEM, "out of memory reading '%s'", path);
        }
    }
    out->nrows++;
    return PF_OK;
}

/* Turns each column whose every entry parses as a number into numbers
 * (values[c], its text freed); the others stay text. */
static pf_status numeric_columns(pf_context *ctx, const char *path, pf_table *out)
{
    for (size_t c = 0; c < out->ncols; c++) {
        double *v = malloc(out->nrows * sizeof *v);
        if (!v) return pf_fail(ctx, PF_ENOMEM, "out of memory reading '%s'", path);
        size_t r = 0;
        while (r < out->nrows && pf_parse_double(out->text[c][r], &v[r])) r++;
        if (r < out->nrows) {
            free(v); /* a text column */
            continue;
        }
        for (r = 0; r < out->nrows; r++) free(out->text[c][r]);
        free(out->text[c]);
        out->text[c] = NULL;
        out->values[c] = v;
    }
    return PF_OK;
}

pf_status pf_csv_read(pf_context *ctx, const char *path, pf_table *out)
{
    memset(out, 0, sizeof *out);
    FILE *f = fopen(path, "r");
    if (!f) return pf_fail(ctx, PF_EIO, "cannot open '%s': %s", path, strerror(errno));
    char *line = NULL;
    size_t cap = 0, lineno = 0, rowcap = 0;
    char sep = ',';
    char **fields = NULL;
    char *hdr = NULL;
    pf_status s = find_header(ctx, f, path, &line, &cap, &lineno, &hdr);
    if (s) goto done;
    if (!strchr(hdr, ',')) sep = strchr(hdr, ';') ? ';' : (strchr(hdr, '\t') ? '\t' : ',');
    size_t ncols = 1;
    for (const char *p = hdr; *p; p++) ncols += *p == sep;
    if (ncols > CSV_MAX_COLUMNS) {
        s = pf_fail(ctx, PF_ELIMIT, "%s:%zu: the header has %zu columns (at most %d)", path, lineno, ncols, CSV_MAX_COLUMNS);
        goto done;
    }
    /* Everything held is booked against the memory cap as it grows. */
    size_t held = pf_read_add(cap, 4 * ncols * sizeof(char *));
    s = pf_read_budget(ctx, path, held);
    if (s) goto done;
    fields = calloc(ncols, sizeof *fields);
    out->names = calloc(ncols, sizeof *out->names);
    out->units = calloc(ncols, sizeof *out->units);
    out->values = calloc(ncols, sizeof *out->values);
    if (!fields || !out->names || !out->units || !out->values) {
        s = pf_fail(ctx, PF_ENOMEM, "out of memory reading '%s'", path);
        goto done;
    }
    out->ncols = ncols;
    split(hdr, sep, fields, ncols);
    for (size_t c = 0; c < ncols; c++) {
        if (!parse_header_field(fields[c], &out->names[c], &out->units[c]) || !*out->names[c]) {
            s = pf_fail(ctx, PF_EINVAL, "%s:%zu: header column %zu is not 'name [unit]'", path, lineno, c + 1);
            goto done;
        }
        double dummy;
        if (pf_parse_double(out->names[c], &dummy)) {
            s = pf_fail(ctx, PF_EINVAL, "%s:%zu: the first line must be a header of column names, found the number '%s'",
                        path, lineno, out->names[c]);
            goto done;
        }
    }
    /* Cells are kept as text first; each column then becomes numeric when
     * every entry parses as a number. */
    out->text = calloc(ncols, sizeof *out->text);
    if (!out->text) {
        s = pf_fail(ctx, PF_ENOMEM, "out of memory reading '%s'", path);
        goto done;
    }
    for (;;) {
        int got = read_line(f, &line, &cap);
        lineno++;
        if (got == LINE_END) break;
        if (got != LINE_OK) {
            s = line_error(ctx, path, lineno, got);
            goto done;
        }
        char *t = trim(line);
        if (!*t || *t == '#') continue;
        size_t n = split(t, sep, fields, ncols);
        if (n != ncols) {
            s = pf_fail(ctx, PF_EINVAL, "%s:%zu: %zu fields, the header has %zu", path, lineno, n, ncols);
            goto done;
        }
        if ((s = store_row(ctx, path, fields, ncols, &rowcap, &held, out))) goto done;
    }
    if (ferror(f)) s = pf_fail(ctx, PF_EIO, "error reading '%s'", path);
    else if (!out->nrows) s = pf_fail(ctx, PF_EINVAL, "%s: no data rows after the header", path);
    if (!s) s = numeric_columns(ctx, path, out);
done:
    free(fields);
    free(line);
    fclose(f);
    if (s) pf_table_free(out);
    return s;
}
