-- load_file.lua - loads one HDF5 file with pf.load_wave and prints every
-- sample and coordinate at full precision, for test_h5_isolation.sh (which
-- compares the isolated read with the in-process one).  The path is given
-- relative to this script's folder, as a colleague's recipe would name it.
local pf = require "psiflight"
local p = pf.parameters{
  file = {default = "state.h5", help = "HDF5 file to load (relative to this folder)"},
  dataset = {default = "", help = "complex dataset to read; empty: the psiflight item 'wave'"},
}
local opts = {mass = 1.4e-25}
if p.dataset ~= "" then opts.dataset = p.dataset end
local w = pf.load_wave(p.file, opts)
local g = w:grid()
print(string.format("clock %.17g norm %.17g", w:clock(), w:norm()))
for i = 1, g:points(1) do
  for j = 1, g:points(2) do
    local z = w:psi(i, j)
    print(string.format("%d %d %.17g %.17g %.17g %.17g", i, j, g:x(1, i), g:x(2, j), z.re, z.im))
  end
end
