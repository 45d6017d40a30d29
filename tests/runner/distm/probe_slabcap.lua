-- probe_slabcap.lua - the per-slab density measurements hold no whole
-- density (tests/runner/test_distributed_measure.sh, run under mpirun -n 3
-- and -n 4 only).  A 36 x 30 x 20 grid of N = 21600 points: one wave is 16 N
-- bytes whole, its density 8 N.  A rank holds 12 of 36 planes on 3 ranks
-- (16 N / 3 bytes), at most 8 of 30 planes of the transposed momentum
-- layout on 4 ranks (4.3 N).  The memory cap of 11.5 N bytes per rank
-- admits the grid (a slab and FFTW-MPI's planning scratch: 10.7 N at most)
-- and is below a slab plus the whole density (12.3 N at least), which the
-- gathered path held on every rank: the control at the end, the whole table
-- w:distribution(), is refused on every rank, while every per-slab
-- measurement before it runs.  Prints "fits NAME" per measurement and
-- "exact" lines (the same bits at 3 and 4 ranks).
-- Invented scene: an 87Rb cloud in the Tarrow lab's crossed trap.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge, memory_cap = 11.5 * 21600}
local mass = pf.mass("87Rb")
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
local g = pf.grid{points = {36, 30, 20}, span = {30e-6, 26e-6, 22e-6}}
local w = pf.wave(g, {mass = mass, normalize = true, position = function(x, y, z)
  return math.exp(-(x * x / (2.2e-6) ^ 2 + y * y / (1.9e-6) ^ 2 + z * z / (1.7e-6) ^ 2) / 4)
end})
local function try(name, fn)
  local ok, r = pcall(fn)
  if not ok then
    print("failed " .. name .. " " .. tostring(r):gsub("\n", " "))
    return
  end
  print("fits " .. name)
  local parts = {}
  for i, v in ipairs(r) do parts[i] = string.format("%.17g", v) end
  print("exact " .. name .. " " .. table.concat(parts, " "))
end
try("profile1", function() return w:profile(1).values end)
try("marginal23", function() return w:marginal{axes = {2, 3}}.values end)
try("column1", function() return w:column_density(1).values end)
try("column3", function() return w:column_density(3).values end)
try("slice", function() return w:slice{axes = {2, 3}, through = {0.5e-6, 0, 0}}.values end)
try("radial", function() return w:radial_profile{bin = 1e-6, bins = 8}.values end)
try("covariance", function() local C = w:position_covariance() return {C[1][1], C[2][2], C[3][3], C[1][3]} end)
try("probability_in", function() return {w:probability_in(pf.box{min = {0, -1e-6, -1e-6}, max = {4e-6, 3e-6, 2e-6}})} end)
try("fringes", function() local f = w:fringes{axis = 1} return {f.offset, f.amplitude} end)
try("camera", function()
  local cam = pf.camera{pixels = {6, 5}, pitch = {4e-6, 4e-6}, psf = {1e-6, 1e-6}, imaging_axis = 1}
  return cam:expose(w, {atoms = 1e4, seed = 3}).expected
end)
try("picture", function() pf.picture_map("cloud.png", w) return {} end)
try("sample", function() local ev = w:sample(2000, {seed = 4}) return {ev[1][1], ev[2][1000], ev[3][2000]} end)
try("kmarginal13", function() return w:marginal{axes = {1, 3}, space = "momentum"}.values end)
try("kmarginal3", function() return w:marginal{axes = {3}, space = "momentum"}.values end)
try("kcolumn", function() return w:marginal{axes = {2, 3}, space = "momentum"}.values end)
try("kcovariance", function() local K = w:momentum_covariance() return {K[1][1], K[2][2], K[3][3]} end)
-- The control: the whole table still gathers, and does not fit.
local ok, err = pcall(function() return w:distribution() end)
print(ok and "control distribution fitted" or ("control distribution refused " .. tostring(err):gsub("\n", " ")))
print(string.format("memory_used %.0f", pf.run_info().memory_used))
w:close()
