-- h5_writer.lua - helper for test_h5py.sh: writes a small 2D state of an
-- invented "Lowmoor" sodium-23 test cloud to the run's output folder.
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local u = 1.66053906660e-27                 -- CODATA 2018
local mass = 22.9897692820 * u              -- 23Na, AME2020 (from memory)
local hbar = 6.62607015e-34 / (2 * math.pi) -- h exact (SI 2019)
local sx, sy = 3.0e-6, 2.5e-6
local k0 = 0.5e6
local g = pf.grid{points = {48, 32}, span = {60e-6, 50e-6}, origin = {2e-6, -1e-6}}
local w = pf.wave(g, {mass = mass, position = function(x, y)
  local a = math.exp(-(x - 2e-6) ^ 2 / (4 * sx * sx) - (y + 1e-6) ^ 2 / (4 * sy * sy))
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end})
w:fly(tonumber(pf.params.t) or 0.2e-3)
local f = pf.h5file("state.h5")
f:put_wave("cloud", w, {parts = "both"})
f:put_density("cloud_density", w)
f:put_table("numbers", {{"a", "s", {1, 2, 3}}, {"b", "m", {0.5, 0.25, 0.125}}})
f:put_value("tof", w:clock(), "s")
f:close()
