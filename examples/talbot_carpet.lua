-- talbot_carpet.lua - near-field diffraction of a sodium-23 beam behind a
-- material grating in the (invented) Brackenfield atom-optics lab, seen in
-- the beam's co-moving frame as a 1D state flying freely.
--
-- A grating of period d leaves a comb of narrow slits' worth of amplitude;
-- after the Talbot time T_T = 2 m d^2 / h the density repeats itself, and
-- at T_T / 2 it repeats shifted by half a period (the Talbot effect,
-- H. F. Talbot 1836 and Lord Rayleigh 1881, here in its time-domain form
-- for matter waves).  The script checks both against the formula, writes
-- the space-time carpet, the density at the revival against the initial
-- one, and the profiles to CSV and HDF5.
--
-- Run: build/psiflight run examples/talbot_carpet.lua [--set periods=8] [--set period=3um]
local pf = require "psiflight"
local p = pf.parameters{
  periods = {default = 8, help = "grating periods in the (periodic) box", min = 2, max = 64},
  period  = {default = 2, unit = "um", help = "grating period d", min = 0.5, max = 20},
  open    = {default = 0.3, help = "open fraction of each period", min = 0.05, max = 0.9},
}

local h = pf.constants.h                 -- exact (SI 2019), engine constants table
local mass = pf.mass("23Na")            -- AME2020, from the species table
local d = p.period                       -- grating period (m)
local open = p.open                      -- open fraction of each period
local periods = p.periods
local talbot = 2 * mass * d * d / h      -- Talbot time (s)

-- The box holds a whole number of periods, so every plane wave the grating
-- makes fits the grid and the revival is exact up to rounding.  The grating
-- fills the periodic cell on purpose (the grid stands for an infinite
-- grating), so the position-edge guard would only report that; its
-- threshold is raised above 1 for this script.
pf.setup{guard_threshold = 2}
local grid = pf.grid{points = 256 * periods, span = periods * d}
local half = open * d / 2
local beam = pf.wave(grid, {
  mass = mass,
  position = function(x)
    -- Slits with soft (Gaussian-rounded) edges, width open * d.
    local r = (x / d) % 1
    local s = math.min(r, 1 - r) * d
    return math.exp(-((math.max(s - half, 0)) / (0.04 * d)) ^ 2)
  end,
})

local start = beam:density()
local function worst_against(ref, shift_points)
  local now, worst, peak = beam:density(), 0, 0
  local n = #ref
  for i = 1, n do
    local j = (i - 1 + shift_points) % n + 1
    worst = math.max(worst, math.abs(now[i] - ref[j]))
    peak = math.max(peak, ref[i])
  end
  return worst / peak
end

print(string.format("psiflight example: Talbot carpet of a 23Na beam behind a %.3g um grating (Brackenfield lab)", d * 1e6))
print(string.format("Talbot time 2 m d^2 / h = %.6f ms; grid %d points over %d periods", talbot * 1e3,
  grid:points(1), periods))
beam:fly(talbot / 2)
local err_half = worst_against(start, 128) -- half a period = 128 grid points
beam:fly(talbot / 2)
local err_full = worst_against(start, 0)
print(string.format("at T_T/2 the density equals the initial one shifted by d/2 to %.1e (of the peak)", err_half))
print(string.format("at T_T   the density equals the initial one to %.1e (of the peak)", err_full))
pf.report("talbot_time", talbot, "s")
pf.report("revival_error_full", err_full, "")
pf.report("revival_error_half", err_half, "")

-- Back to the grating plane for the pictures: fly back by T_T.
beam:fly(-talbot)
local carpet = pf.picture_carpet("talbot_carpet.png", beam, {
  duration = talbot, frames = 480, x_range = {-2 * d, 2 * d},
  marks = {{at = talbot / 2, label = "T#dT#u/2: image shifted by d/2"}, {at = talbot, label = "T#dT#u: revival"}},
  title = string.format("Talbot carpet behind a %.3g #gmm grating, one Talbot time", d * 1e6),
})
local xs = grid:x_axis(1)
local at_revival = beam:copy():fly(talbot):density()
local xs_um, a, b = {}, {}, {}
for i, x in ipairs(xs) do
  if math.abs(x) <= 2 * d then
    xs_um[#xs_um + 1], a[#a + 1], b[#b + 1] = x, start[i], at_revival[i]
  end
end
local lines = pf.picture_lines("revival.png", {
  title = "density at the grating and one Talbot time later", x_name = "x", x_quantity = "length",
  y_name = "|#gq|#u2#d", y_per_x = true, legend = "upper right",
  series = {{x = xs_um, y = a, label = "t = 0"}, {x = xs_um, y = b, label = "t = T#dT#u", dashed = true}},
  residual = {result = 2, formula = 1}, -- the revival's error, at rounding level
})
local csv = pf.write_csv("profiles.csv", {{"x", "m", xs}, {"density_t0", "1/m", start}, {"density_tT", "1/m", at_revival}})
local f <close> = pf.h5file("talbot.h5")
f:put_wave("grating_plane", beam)
f:put_value("talbot_time", talbot, "s")
local h5 = f:close()
print("outputs:")
for _, p in ipairs{carpet, lines, csv, h5} do print("  " .. p) end
