-- load_file.lua - loads one (possibly hostile) data file with pf.load_wave,
-- for tests/runner/test_hostile_files.sh.  The path is given relative to the
-- script folder, as a colleague's recipe would name it.
local pf = require "psiflight"
local p = pf.parameters{
  file = {default = "plain.h5", help = "data file to load (relative to this folder)"},
  dataset = {default = "psi", help = "dataset to read from an HDF5 file"},
}
local opts = {mass = 1.44e-25, grid = pf.grid{points = {16}, span = 2e-6}}
-- An empty dataset name reads the psiflight item "wave" instead.
if not p.file:match("%.csv$") and p.dataset ~= "" then opts.dataset = p.dataset end
local w = pf.load_wave(p.file, opts)
print(string.format("loaded %s: norm %.6f", p.file, w:norm()))
