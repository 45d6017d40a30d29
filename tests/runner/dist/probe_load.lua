-- probe_load.lua - loading a saved wave into a distributed grid
-- (pf.load_wave: each rank reads only its share of the file, counted
-- against its memory cap), for tests/runner/test_distributed.sh.
-- Without `source` it writes saved.h5 (run as one process); with
-- source=PATH it loads that file and prints figures of the loaded states:
-- "exact" lines must be the one-process bits (the samples are copied, or
-- interpolated point by point, with the same arithmetic), "flown" lines
-- follow a transform (or, in momentum, sums in the transposed order).
-- Invented scene: a 39K cloud on a 64 x 64 x 48 grid (3 MiB per amplitude;
-- 22, 22, 20 planes on 3 ranks).
local pf = require "psiflight"
local p = pf.parameters{source = {default = "", help = "saved wave to load (empty: write saved.h5)"}}
local ranks = pf.mpi_info().ranks
-- On 4 ranks the 2.5 MB cap holds a rank's share of the 3 MiB amplitude,
-- its slab of the file and one 1 MiB HDF5 chunk, but not the whole file's
-- values (a whole read would be refused).
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge,
  memory_cap = ranks >= 4 and 2.5e6 or nil}
local mass = pf.mass("39K")
local g = pf.grid{points = {64, 64, 48}, span = {40e-6, 36e-6, 30e-6}}
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end

if p.source == "" then
  local w = pf.gaussian(g, {mass = mass, width = {2.4e-6, 2.2e-6, 2e-6}, center = {1e-6, -0.5e-6, 0.3e-6},
    wavenumber = {1.2e6, -0.8e6, 0.4e6}})
  w:fly(2e-5)
  local f <close> = pf.h5file("saved.h5")
  f:put_wave("cloud", w, {parts = "both"})
  f:close()
  print("written")
  return
end

local a = pf.load_wave(p.source, {item = "cloud"})
line("exact pos_norm", a:norm())
line("exact pos_mean", a:position_mean())
line("exact pos_width", a:position_width())
line("flown pos_k", a:wavenumber_mean())
a:close()
local b = pf.load_wave(p.source, {item = "cloud", space = "momentum"})
line("flown mom_norm", b:norm())
line("flown mom_k", b:wavenumber_mean())
line("flown mom_kwidth", b:wavenumber_width())
line("flown mom_mean", b:position_mean())
b:close()
-- onto a finer, shifted grid of the script's own (interpolated per point)
local fine = pf.grid{points = {72, 60, 40}, span = {38e-6, 34e-6, 28e-6}, origin = {0.4e-6, 0, 0}}
local c = pf.load_wave(p.source, {item = "cloud", grid = fine, interpolate = true})
line("exact fine_norm", c:norm())
line("exact fine_mean", c:position_mean())
print(string.format("ranks %d distribute %s", ranks, tostring(pf.mpi_info().distribute)))
