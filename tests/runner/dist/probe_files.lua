-- probe_files.lua - HDF5 files of a distributed wave, for
-- tests/runner/test_distributed.sh: start.h5 holds the density of a state
-- no transform has touched (the file must be byte-identical to the single
-- process's), flown.h5 the wave function and momentum density after a
-- flight (values within 1e-14 of the single process's).  Invented scene: a
-- 3D packet on a 10 x 12 x 8 grid (10 planes: 3, 3, 3, 1 on 4 ranks).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local mass = pf.mass("39K")
local g = pf.grid{points = {10, 12, 8}, span = {20e-6, 24e-6, 16e-6}}
local w = pf.wave(g, {mass = mass, normalize = true, position = function(x, y, z)
  local a = math.exp(-(x - 1e-6) ^ 2 / 16e-12 - y ^ 2 / 20e-12 - z ^ 2 / 12e-12)
  return a * math.cos(3e5 * y), a * math.sin(3e5 * y)
end})
local f <close> = pf.h5file("start.h5")
f:put_density("cloud", w)
f:close()
w:fly(4e-4)
local h <close> = pf.h5file("flown.h5")
h:put_wave("cloud", w, {parts = "both"})
h:put_density("spectrum", w, "momentum")
h:close()
print(string.format("ranks %d norm %.17g", pf.mpi_info().ranks, w:norm()))
