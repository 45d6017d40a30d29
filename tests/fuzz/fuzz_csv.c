/* fuzz_csv.c - libFuzzer harness for CSV input: the table reader
 * (pf_csv_read, behind pf.read_csv) and CSV samples loaded as a wave
 * (pf.load_wave on a .csv: column pick, units, grid from the coordinates,
 * transfer onto a grid in pf_samples.c, with and without interpolation).
 *
 * The input is the file's content.  Besides the sanitizers it checks the
 * reader's promises: a table has equal columns, each numeric or text. */
#include "fuzz_util.h"
#include "pf_context.h"
#include "pf_table.h"

/* The three ways a script loads CSV samples: the grid from the file, a grid
 * of its own (exact match or refusal), and a grid with interpolation. */
static const char load_calls[] =
    "local g = pf.grid{points = 32, span = 40e-6}\n"
    "return function(path)\n"
    "  pcall(pf.read_csv, path)\n"
    "  pcall(pf.load_wave, path, {mass = 1.4e-25})\n"
    "  pcall(pf.load_wave, path, {mass = 1.4e-25, grid = g, normalize = false})\n"
    "  pcall(pf.load_wave, path, {mass = 1.4e-25, grid = g, interpolate = true})\n"
    "end\n";

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_file("samples.csv", data, size);
    pf_context *ctx = pf_context_new();
    if (!ctx) abort();
    pf_table t;
    memset(&t, 0, sizeof t);
    if (pf_csv_read(ctx, path, &t) == PF_OK) {
        for (size_t c = 0; c < t.ncols; c++) {
            if (!t.names[c] || !t.units[c]) abort();
            if ((t.values[c] == NULL) == (t.text[c] == NULL)) abort(); /* exactly one kind */
        }
    }
    pf_table_free(&t);
    pf_context_release(ctx);

    fuzz_probe(load_calls, path);
    return 0;
}
