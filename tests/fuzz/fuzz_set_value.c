/* fuzz_set_value.c - libFuzzer harness for what a person types on the
 * command line: values with unit suffixes (pfl_value_parse, the rule behind
 * --set, --vary ranges and --time-limit), the unit table lookup, and the
 * runner's option parser (pfr_options_parse) for `run`, `recipe` and `sweep`.
 *
 * Input: lines.  The whole input is parsed as one value; then the lines are
 * the argument vector after the command word, the first byte choosing the
 * command.  Besides the sanitizers, it checks the parser's documented
 * promises: a parsed number is finite and the unit is the table's entry. */
#include <math.h>
#include "fuzz_util.h"
#include "pfl_suffix.h"
#include "pfr_options.h"

#define MAX_ARGS 64

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char *text = fuzz_text(data, size);
    double number;
    const pfl_unit *unit;
    char err[256];
    if (pfl_value_parse(text, &number, &unit, err, sizeof err) == 0) {
        /* pfl_suffix.h: "NUMBER is a finite decimal"; the unit is a table entry. */
        if (!isfinite(number)) abort();
        if (unit && pfl_unit_find(unit->name) != unit) abort();
    } else if (!err[0]) {
        abort(); /* a refusal must say why */
    }
    (void)pfl_unit_find(text);

    /* The same bytes as an argument vector: one argument per line. */
    char *argv[MAX_ARGS + 1];
    int argc = 0;
    for (char *line = text; line && argc < MAX_ARGS;) {
        char *nl = strchr(line, '\n');
        if (nl) *nl = 0;
        argv[argc++] = line;
        line = nl ? nl + 1 : NULL;
    }
    argv[argc] = NULL;
    static const char *const commands[] = {"run", "recipe", "sweep"};
    const char *command = commands[size ? data[0] % 3 : 0];
    pfr_options o;
    /* Errors print the usage to stderr: run-fuzz.sh silences it. */
    (void)pfr_options_parse(argc, argv, 1, command, &o);
    pfr_options_free(&o);
    free(text);
    return 0;
}
