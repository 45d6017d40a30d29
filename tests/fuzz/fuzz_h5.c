/* fuzz_h5.c - libFuzzer harness for HDF5 input: pf.load_wave on an .h5 file
 * in every mode the loader has (a psiflight item, psi or phi; one complex or
 * [..., 2] dataset; a real and an imaginary dataset; coordinate axes named;
 * the grid taken from the file, given, or interpolated onto), which covers
 * pf_h5_read and the transfer in pf_samples.c.
 *
 * The input is the file's content.  Seeds (corpus/h5) hold psiflight items
 * written by the engine and plain datasets written by h5py, with the names
 * used below.  A crash inside libhdf5 itself is reported as such: the stack
 * then has no psiflight frame above the HDF5 ones.
 *
 * pf_h5_read normally runs libhdf5 in a child process (pf_h5_isolate.c);
 * libFuzzer's coverage and sanitizers only see this process, so the harness
 * sets PSIFLIGHT_H5_INPROCESS=1 and fuzzes the parsing in-process.  With
 * FUZZ_H5_ISOLATED=1 it leaves the variable alone and every load goes
 * through the child: tests/ref/test_fuzz_smoke.sh replays
 * tests/fuzz/known-crashes that way, where each must end in a load_wave
 * error instead of a crash of the harness. */
#include "fuzz_util.h"

int LLVMFuzzerInitialize(int *argc, char ***argv);

int LLVMFuzzerInitialize(int *argc, char ***argv)
{
    (void)argc;
    (void)argv;
    const char *isolated = getenv("FUZZ_H5_ISOLATED");
    if (!isolated || strcmp(isolated, "1") != 0) setenv("PSIFLIGHT_H5_INPROCESS", "1", 1);
    return 0;
}

static const char load_calls[] =
    "local m = 1.4e-25\n"
    "local g = pf.grid{points = 8, span = 10e-6}\n"
    "local g2 = pf.grid{points = {4, 4}, span = {10e-6, 10e-6}}\n"
    "return function(path)\n"
    "for _, o in ipairs{\n"
    "  {}, {item = 'wave', representation = 'momentum'}, {item = 'rho'},\n"
    "  {dataset = 'psi', mass = m}, {dataset = 'psi', axes = {'x'}, mass = m},\n"
    "  {dataset = 'psi2', axes = {'x'}, mass = m},\n"
    "  {real = 're', imag = 'im', axes = {'x'}, mass = m},\n"
    "  {dataset = 'psi2d', axes = {'x', 'y'}, mass = m},\n"
    "} do\n"
    "  pcall(pf.load_wave, path, o)\n"
    "  o.grid = #(o.axes or {}) == 2 and g2 or g\n"
    "  pcall(pf.load_wave, path, o)\n"
    "  o.interpolate = true\n"
    "  pcall(pf.load_wave, path, o)\n"
    "end\n"
    "end\n";

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    const char *path = fuzz_write_file("input.h5", data, size);
    fuzz_probe(load_calls, path);
    return 0;
}
