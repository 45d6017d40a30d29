/* fuzz_manifest.c - libFuzzer harness for the run manifest reader
 * (pfr_manifest_read, which sweeps use to decide whether a point is done and
 * to collect its results).  The input is the content of manifest.json.
 * Besides the sanitizers it checks the reader's promises: results sorted by
 * name, every parameter with a name and a text, lookups of those names
 * answer. */
#include "fuzz_util.h"
#include "pfr_manifest.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    (void)fuzz_write_file(PFR_MANIFEST_FILE, data, size);
    pfr_manifest m;
    char err[512];
    memset(&m, 0, sizeof m);
    int rc = pfr_manifest_read(fuzz_dir(), &m, err, sizeof err);
    if (rc == 0) {
        for (int i = 0; i < m.nparams; i++) {
            if (!m.pnames[i] || !m.pvalues[i]) abort();
            if (!pfr_manifest_param(&m, m.pnames[i])) abort();
        }
        for (int i = 0; i < m.nresults; i++) {
            if (!m.results[i].name || !m.results[i].unit) abort();
            if (i && strcmp(m.results[i - 1].name, m.results[i].name) > 0) abort();
        }
    } else if (rc < 0 && !err[0]) {
        abort(); /* a refusal says why */
    } else if (rc == 1) {
        abort(); /* the file is there: "no manifest" would be wrong */
    }
    pfr_manifest_free(&m);
    return 0;
}
