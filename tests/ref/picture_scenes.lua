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
