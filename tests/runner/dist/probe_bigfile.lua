-- probe_bigfile.lua - HDF5 items of distributed waves written piece by
-- piece (engine/io/pf_h5.c: rank 0 writes one chunk of rows at a time and
-- never holds a whole field), for tests/runner/test_distributed.sh.
-- Invented scene: a 39K cloud in a 2D sheet of 512 x 1024 points (8 MiB per
-- wave function, many 1 MiB chunks) and a 3D cloud of 96 x 48 x 32 points
-- whose momentum chunks wrap around the FFT order.  On 4 ranks the memory
-- cap (6.5 MB a rank) holds a rank's slab of the sheet and a few chunks
-- but not the whole sheet: gathering it onto rank 0 would be refused.
--   big_start.h5: psi and |psi|^2 before any transform (the single
--                 process's file byte for byte);
--   big_flown.h5: psi, phi and |phi|^2 after a flight (same items, values
--                 within rounding of the single process's).
local pf = require "psiflight"
local ranks = pf.mpi_info().ranks
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge,
  memory_cap = ranks >= 4 and 6.5e6 or nil}
local mass = pf.mass("39K")

local sheet = pf.grid{points = {512, 1024}, span = {60e-6, 90e-6}}
local w = pf.gaussian(sheet, {mass = mass, width = {4e-6, 6e-6}, center = {1.5e-6, -2e-6},
  wavenumber = {2e6, -1e6}})
local f <close> = pf.h5file("big_start.h5")
f:put_wave("sheet", w, {parts = "psi"})
f:put_density("sheet_density", w)
f:close()
w:fly(2e-4)
local h <close> = pf.h5file("big_flown.h5")
h:put_wave("sheet", w, {parts = "both"})
h:put_density("sheet_spectrum", w, "momentum")
print(string.format("ranks %d sheet norm %.17g", ranks, w:norm()))
w:close()

local box = pf.grid{points = {96, 48, 32}, span = {40e-6, 36e-6, 28e-6}}
local v = pf.gaussian(box, {mass = mass, width = {3e-6, 2.5e-6, 2e-6}, center = {0.5e-6, 0, -0.3e-6},
  wavenumber = {-1.5e6, 1e6, 0.5e6}})
h:put_density("box_density", v)
v:fly(1e-4)
h:put_wave("box", v, {parts = "both"})
h:put_density("box_spectrum", v, "momentum")
h:close()
print(string.format("ranks %d box norm %.17g", ranks, v:norm()))
