-- test_outputs.lua - the output API: CSV and HDF5 round trips, loading a
-- wave back (exact on the same grid, a clear error on another, linear
-- interpolation on request), overwrite protection, bad names and paths.
-- Files go to a private folder (build/test-out/outputs under the suite).
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

-- The suite runner gives each test its own output folder (--out, under
-- build/ so `make clean` removes it).  Leftovers of an interrupted earlier
-- run are removed first.
local tmp = assert(pf.run_info().output_dir, "run this test with --out DIR")
for _, n in ipairs{"samples.csv", "special.csv", "coarse.csv", "state.h5", "log.csv", "phi_only.h5", "col.png"} do
  os.remove(tmp .. "/" .. n)
end

-- 40Ca+ style mass for the invented "Harrow Point" ion-free test cloud;
-- any positive mass works, the value only has to round-trip.
local u = 1.66053906660e-27              -- CODATA 2018 atomic mass constant
local mass = 39.962590863 * u            -- 40Ca atomic mass, AME2020 (from memory)
local sigma = 2.0e-6

-- Normalised Gaussian psi(x) = (2 pi sigma^2)^(-1/4) exp(-x^2 / 4 sigma^2)
-- (textbook minimum-uncertainty packet).
local function gauss(x) return (2 * math.pi * sigma ^ 2) ^ -0.25 * math.exp(-x * x / (4 * sigma ^ 2)) end

local g = pf.grid{points = 128, span = 40e-6}
local w = pf.wave(g, {mass = mass, position = function(x) return gauss(x), 0.3 * gauss(x) end})

-- ---- CSV ----
local xs, re, im = g:x_axis(1), {}, {}
for i = 1, g:points(1) do
  local z = w:psi(i)
  re[i], im[i] = z.re, z.im
end
local special = {0.1, 1 / 3, math.pi, -2.5e17, 1e-300, 2 ^ -1074, 1.7976931348623157e308, 0}
local csv = pf.write_csv("samples.csv", {{"x", "m", xs}, {"re", "m^-1/2", re}, {"im", "m^-1/2", im}})
local edge = pf.write_csv("special.csv", {{name = "v", unit = "", values = special}})
local t = pf.read_csv(edge)
for i, v in ipairs(special) do
  -- IEEE 754 round trip of the shortest %.17g form (common practice).
  check.equal(t.v.values[i], v, "CSV keeps " .. string.format("%.17g", v) .. " exactly")
end
local f = io.open(csv)
local header = f:read("l")
f:close()
check.equal(header, "x [m],re [m^-1/2],im [m^-1/2]", "CSV header names columns and units")

-- Samples exactly on the grid are taken as they are.
local back = pf.load_wave(csv, {mass = mass, grid = g, normalize = false})
local worst = 0
for i = 1, g:points(1) do worst = math.max(worst, (back:psi(i) - w:psi(i)):abs()) end
check.equal(worst, 0, "CSV samples on the grid load exactly")
-- The builder normalised (1 + 0.3 i) gauss(x): psi = gauss(x) (1 + 0.3 i) / sqrt(1.09).
local c = 1 / math.sqrt(1.09)
worst = 0
for i = 1, g:points(1) do
  local x = g:x(1, i)
  worst = math.max(worst, math.abs(back:psi(i).re - c * gauss(x)), math.abs(back:psi(i).im - 0.3 * c * gauss(x)))
end
check.truthy(worst <= 1e-12 * gauss(0), string.format("loaded CSV matches the normalised Gaussian formula (max diff %.1e)", worst))

-- Coarse samples interpolated onto the fine grid: linear interpolation
-- error <= h^2/8 max|f''| (standard bound, e.g. Burden & Faires, Numerical
-- Analysis, sec. 3.1); for this Gaussian max|f''| = f(0)/(2 sigma^2).
local cx, cre, cim = {}, {}, {}
local h = 0.5e-6
for j = 0, 80 do
  local x = -20e-6 + j * h
  cx[#cx + 1], cre[#cre + 1], cim[#cim + 1] = x * 1e6, gauss(x), 0
end
local coarse = pf.write_csv("coarse.csv", {{"x", "um", cx}, {"re", "", cre}, {"im", "", cim}})
local fine = pf.load_wave(coarse, {mass = mass, grid = g, normalize = false, interpolate = true})
local bound = h * h / 8 * gauss(0) / (2 * sigma ^ 2)
worst = 0
for i = 1, g:points(1) do
  local x = g:x(1, i)
  if x >= -20e-6 and x <= 20e-6 then worst = math.max(worst, math.abs(fine:psi(i).re - gauss(x))) end
end
check.truthy(worst <= bound, string.format("CSV interpolation error %.2e within h^2/8 max|f''| = %.2e (Burden & Faires bound)", worst, bound))

-- ---- HDF5 ----
w:fly(0.4e-3)
local snapshot = {}
for i = 1, g:points(1) do snapshot[i] = w:psi(i) end -- as stored: psi is written first
local h5 = pf.h5file("state.h5")
h5:put_wave("cloud", w, {parts = "both"})
h5:put_density("rho", w)
h5:put_value("tof", 0.4e-3, "s")
check.fails(function() h5:put_wave("cloud", w) end, "an item name is used once", "already in")
check.fails(function() h5:put_wave("bad name!", w) end, "item names are checked", "item name 'bad name!'")
check.fails(function() h5:put_value("a/../b", 1, "") end, "'..' is not an item name", "item name 'a/../b'")
check.fails(function() h5:put_table("t", {{"a", "", {1, 2}}, {"b", "", {1}}}) end, "table columns must have equal length", "has 1 entries")
local path = h5:close()
check.equal(path, tmp .. "/state.h5", "relative names go into the output folder")
check.fails(function() h5:close() end, "closing twice is an error", "closed already")

local same = pf.load_wave(path, {item = "cloud", grid = g})
worst = 0
for i = 1, g:points(1) do worst = math.max(worst, (same:psi(i) - snapshot[i]):abs()) end
check.equal(worst, 0, "psi loads back bit for bit on the same grid")
check.equal(same:mass(), mass, "mass comes back from the file")
check.equal(same:clock(), w:clock(), "clock comes back from the file")
local log = same:log()
check.equal(log[#log].kind, "load", "loading is recorded in the step log")

-- phi(k) on its own: the free-flight phase is exact, so phi loaded from the
-- file must reproduce the state at every k.
local from_phi = pf.load_wave(path, {item = "cloud", space = "momentum", grid = g})
worst = 0
for i = 1, g:points(1) do worst = math.max(worst, (from_phi:phi(i) - w:phi(i)):abs()) end
local scale = w:phi(g:points(1) // 2 + 1):abs()
check.truthy(worst <= 1e-13 * scale, string.format("phi loads back (max diff %.1e of peak)", worst / scale))

-- Without grid= the grid is rebuilt from the file's axes.
local rebuilt = pf.load_wave(path, {item = "cloud"})
check.equal(rebuilt:grid():points(1), 128, "grid rebuilt from the axes: points")
check.near(rebuilt:grid():span(1), 40e-6, 1e-12, "grid rebuilt from the axes: span", "grid spacing * points (pf_grid.h)")

-- Another grid: a clear error, or interpolation when asked.
local g2 = pf.grid{points = 256, span = 40e-6, origin = 0.1e-6}
check.fails(function() pf.load_wave(path, {item = "cloud", grid = g2}) end,
  "grid mismatch is an error", "grid mismatch on axis 1", "the file has 128 points", "the grid has 256 points", "interpolate=true")
local moved = pf.load_wave(path, {item = "cloud", grid = g2, interpolate = true})
check.near(moved:norm(), w:norm(), 2e-3, "interpolated state keeps its norm",
  "integral of |psi|^2 is preserved to O(h^2) by linear interpolation (Burden & Faires)")
local m1 = w:position_mean()
local m2 = moved:position_mean()
check.close(m2, m1, 1e-9, "interpolated state keeps its centre", "same state on two grids (definition)")

check.fails(function() pf.load_wave(path, {item = "nothing", grid = g}) end, "missing item named", "no item 'nothing'")
check.fails(function() pf.load_wave(path, {item = "cloud", grid = 5}) end, "grid= must be a grid", "field 'grid' must be a grid", "got 5")
check.fails(function() pf.load_wave(tmp .. "/special.csv", {mass = mass, grid = g}) end, "CSV without x, re, im", "needs columns x")

-- ---- overwrite protection and paths ----
check.fails(function() pf.h5file("state.h5") end, "existing files are kept", "exists", "overwrite=true")
check.fails(function() pf.write_csv("samples.csv", {{"x", "m", {1}}}) end, "existing CSV is kept", "exists")
local again = pf.h5file("state.h5", {overwrite = true})
again:put_value("n", 1, "")
again:close()
check.fails(function() pf.write_csv("../escape.csv", {{"x", "m", {1}}}) end, "paths may not leave the folder", "no '..'")
do
  local gone <close> = pf.h5file("dropped.h5")
  gone:put_value("n", 2, "")
  gone:discard()
end
check.equal(io.open(tmp .. "/dropped.h5"), nil, "a discarded file never appears")
local ok = pcall(function()
  local inner <close> = pf.h5file("failed.h5")
  inner:put_value("n", 3, "")
  error("stop")
end)
check.equal(ok, false, "error leaves the block")
check.equal(io.open(tmp .. "/failed.h5"), nil, "a block left by an error leaves no file")

-- ---- step logs as tables ----
local logcsv = pf.write_csv("log.csv", w:log_columns())
local lt = pf.read_csv(logcsv)
check.equal(lt.kind.values[1], "build", "log CSV: text column of step kinds")
check.equal(lt.kind.values[2], "flight", "log CSV: second step is the flight")
check.equal(lt.duration.values[2], 0.4e-3, "log CSV: flight duration round-trips")
check.equal(lt.duration.unit, "s", "log CSV: duration unit")
-- Guard figures: the measured value round-trips, an unmeasured one is NaN.
local wlog = w:log()
for i = 1, #wlog do
  local want, got = wlog[i].edge_k, lt.edge_k.values[i]
  if want == nil then
    check.truthy(got ~= got, "log CSV: unmeasured guard figure of step " .. i .. " reads back as NaN")
  else
    check.equal(got, want, "log CSV: guard figure of step " .. i .. " round-trips")
  end
end
check.fails(function() pf.load_wave(logcsv, {mass = mass, grid = g}) end, "a log is not a state", "needs columns x")

-- phi-only item without grid=: the grid (origin included) comes from the
-- item's attributes, so the state is the same one.
local g3 = pf.grid{points = 64, span = 30e-6, origin = 5e-6}
local off = pf.wave(g3, {mass = mass, position = function(x) return gauss(x - 5e-6) end})
local h3 = pf.h5file("phi_only.h5")
h3:put_wave("wave", off, {parts = "phi"})
h3:put_table("log", off:log_columns())
h3:close()
local again3 = pf.load_wave(tmp .. "/phi_only.h5")
check.equal(again3:grid():origin(1), 5e-6, "grid origin restored from grid_origin_m")
check.close(again3:position_mean(), 5e-6, 1e-15, "phi-only state keeps its centre", "Gaussian centred at 5 um (construction)")

-- ---- pictures: dimension checks ----
check.fails(function() pf.picture_map("m1.png", w) end, "maps need 2D or 3D", "picture_carpet")
check.fails(function() pf.picture_lines("l.png", {series = {{x = {1, 2}, y = {1}}}}) end, "series lengths must match", "2 x and 1 y")
check.fails(function() pf.picture_carpet("c.png", w, {duration = -1}) end, "carpet duration checked", "positive")
local g2d = pf.grid{points = {16, 16, 8}, span = {20e-6, 20e-6, 10e-6}}
local w3 = pf.wave(g2d, {mass = mass, position = function(x, y, z) return math.exp(-(x * x + y * y + z * z) / 2e-11) end})
check.truthy(pf.picture_map("col.png", w3, {space = "momentum", width = 400, height = 300}),
  "3D state: column-density map in momentum space")

-- ---- results ----
pf.report("sigma", sigma, "m")
pf.report("sigma", sigma, "m") -- reporting again keeps the latest value
check.fails(function() pf.report("x", 0 / 0) end, "reported values must be finite", "finite")
check.equal(#pf.outputs(), 7, "outputs recorded once each (samples, special, coarse, state.h5, log.csv, phi_only.h5, col.png)")

-- Clean up our data files; the manifest written at the end of the run then
-- lists them as missing (sha256 null) - also a path worth exercising.
for _, p in ipairs(pf.outputs()) do os.remove(p) end
check.done()
