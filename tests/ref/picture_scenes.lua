-- picture_scenes.lua - helper for test_picture_pixels.sh: carpets and maps
-- whose pixels the test reads.  Invented "Hollin Gate" 87Rb bench numbers.
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g1 = pf.grid{points = 1024, span = 100e-6}
local w1 = pf.gaussian(g1, {mass = "87Rb", width = 0.7e-6})
local peak = 0
for _, v in ipairs(w1:density()) do peak = math.max(peak, v) end
local dur = 6e-3
-- Few frames: a blocky rendering shows 12 bands, a smooth one a gradient.
pf.picture_carpet("carpet_12.png", w1, {duration = dur, frames = 12, x_range = {-20e-6, 20e-6}})
-- The colour scale's top below the peak (clipped) and above it (not).
pf.picture_carpet("carpet_clip.png", w1, {duration = dur, frames = 60, x_range = {-20e-6, 20e-6}, value_max = 0.5 * peak})
pf.picture_carpet("carpet_noclip.png", w1, {duration = dur, frames = 60, x_range = {-20e-6, 20e-6}, value_max = 2 * peak})
-- A mark half-way, and the same carpet without it.
pf.picture_carpet("carpet_mark.png", w1, {duration = dur, frames = 60, x_range = {-20e-6, 20e-6},
  marks = {{at = dur / 2, label = "half-way"}}})
pf.picture_carpet("carpet_plain.png", w1, {duration = dur, frames = 60, x_range = {-20e-6, 20e-6}})
-- A cloud falling in its frame: 0.5 ms of fall first, then a 3 ms carpet
-- under gravity on one lab window (each time's profile at its lab offset).
local gf = pf.grid{points = 512, span = 40e-6}
local wf = pf.gaussian(gf, {mass = "87Rb", width = 1e-6})
wf:fly(0.5e-3, {acceleration = -pf.constants.g_n})
pf.picture_carpet("carpet_fall.png", wf, {duration = 3e-3, frames = 61, per_frame = true,
  acceleration = -pf.constants.g_n, title = "falling cloud"})
print(string.format("fall window %.9e %.9e", gf:x(1, 1) - 0.5 * pf.constants.g_n * 3.5e-3 ^ 2,
  gf:x(1, 512) - 0.5 * pf.constants.g_n * 0.5e-3 ^ 2))
-- A wide cloud (equal aspect): the picture's height follows the map.
local g2 = pf.grid{points = {128, 64}, span = {160e-6, 80e-6}}
pf.picture_map("map_wide.png", pf.gaussian(g2, {mass = "87Rb", width = {12e-6, 6e-6}}), {title = "wide cloud", crop = false})
-- A tall cloud: the picture's width follows the map.
local g3 = pf.grid{points = {64, 128}, span = {60e-6, 180e-6}}
pf.picture_map("map_tall.png", pf.gaussian(g3, {mass = "87Rb", width = {4.5e-6, 14e-6}}), {title = "tall cloud", crop = false})
-- 80 um x 3.4 mm: equal aspect would be a sliver.
local g4 = pf.grid{points = {32, 256}, span = {80e-6, 3.4e-3}}
pf.picture_map("map_sliver.png", pf.gaussian(g4, {mass = "87Rb", width = {6e-6, 250e-6}}), {title = "long cloud", crop = false})
-- Vector formats for papers, chosen by the name.
pf.picture_carpet("carpet.pdf", w1, {duration = dur, frames = 60, x_range = {-20e-6, 20e-6}})
pf.picture_lines("lines.pdf", {title = "PDF lines", x_name = "t", x_quantity = "time",
  series = {{x = {0, 1e-3, 2e-3}, y = {0, 1, 4}, label = "y"}}})
print(string.format("peak %.6e", peak))
-- Line plots: coinciding curves, a curve filling the top, a residual panel.
local xs, a, b, c, flat = {}, {}, {}, {}, {}
for i = 0, 200 do
  local x = i * 1e-3 / 200
  xs[#xs + 1], a[#a + 1] = x, math.exp(-((x - 5e-4) / 2e-4) ^ 2)
  b[#b + 1], c[#c + 1], flat[#flat + 1] = a[#a], 0.6 * a[#a], 1 - 0.1 * math.sin(6.283 * x / 1e-3) ^ 2
end
local function two(second, name)
  pf.picture_lines(name, {title = "two curves", x_name = "t", x_quantity = "time",
    series = {{x = xs, y = a, label = "engine"}, {x = xs, y = second, label = "formula", dashed = true}}})
end
two(b, "lines_coincide.png")
two(c, "lines_apart.png")
pf.picture_lines("lines_flat.png", {title = "a curve across the top", x_name = "t", x_quantity = "time",
  series = {{x = xs, y = flat, label = "nearly flat"}, {x = xs, y = a, label = "bump"}}})
local coarse, noisy = {}, {}
for i = 1, #xs, 10 do coarse[#coarse + 1], noisy[#noisy + 1] = xs[i], a[i] + 0.01 * math.sin(i) end
pf.picture_lines("lines_residual.png", {title = "result against formula", x_name = "t", x_quantity = "time",
  series = {{x = coarse, y = noisy, label = "result", points = true}, {x = xs, y = a, label = "formula", dashed = true}},
  residual = {result = 1, formula = 2}})
pf.picture_lines("lines_plain.png", {title = "result against formula", x_name = "t", x_quantity = "time",
  series = {{x = coarse, y = noisy, label = "result", points = true}, {x = xs, y = a, label = "formula", dashed = true}}})
