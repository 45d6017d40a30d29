-- test_shared_readers.lua - the binding's shared readers (one piece of code
-- behind several functions) keep each function's own name, field and unit in
-- its error text, and the paired accessors agree entry for entry.  No physics
-- value is compared except the DFT wave-number grid (common practice, no
-- source: k_j = 2 pi j / span for j = -n/2 .. n/2 - 1).
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}

local mass = 1.6e-25 -- kg, an invented species of about 96 u
local g1 = pf.grid{points = 64, span = 64e-6}
local g2 = pf.grid{points = {32, 32}, span = {64e-6, 64e-6}}
local w1 = pf.gaussian(g1, {mass = mass, width = 3e-6})
local w2 = pf.gaussian(g2, {mass = mass, width = {3e-6, 3e-6}})

-- the 'axes' list: one reader for marginal and slice
check.fails(function() w2:marginal{axes = {1, 3}} end,
  "marginal names the bad entry", "marginal: entry 2 of 'axes' must be an axis 1..2, got 3")
check.fails(function() w2:marginal{space = "position"} end,
  "marginal needs the list", "marginal: field 'axes' must list the axes to keep")
check.fails(function() w2:slice{axes = {0}, through = {0, 0}} end,
  "slice names the bad entry", "slice: entry 1 of 'axes' must be an axis 1..2, got 0")
check.fails(function() w2:slice{through = {0, 0}} end,
  "slice needs the list", "slice: field 'axes' must list the free axes")
check.equal(#w2:marginal{axes = {2}}.values, 32, "marginal keeps axis 2 (32 points)")

-- x / x_axis and k / k_axis: one reader per point and per axis
local xs, ks = g2:x_axis(2), g2:k_axis(2)
check.equal(#xs, 32, "x_axis length")
check.equal(#ks, 32, "k_axis length")
for i = 1, 32 do
  check.equal(g2:x(2, i), xs[i], "g:x(2, " .. i .. ") is x_axis entry " .. i)
  check.equal(g2:k(2, i), ks[i], "g:k(2, " .. i .. ") is k_axis entry " .. i)
  check.near(ks[i], 2 * math.pi * (i - 1 - 16) / 64e-6, 1e-12,
    "k_axis entry " .. i .. " on the ascending DFT grid", "DFT wave numbers (common practice)", 1e-6)
end
check.fails(function() g2:k(2, 33) end, "g:k past the axis", "index out of range")

-- member and weight: one reader for the two lists of an ensemble
local e = pf.mixture({w1:copy(), w1:copy()}, {0.25, 0.75})
check.equal(e:weight(2), 0.75, "weight 2")
check.truthy(e:member(1), "member 1")
check.fails(function() e:member(3) end, "member past the end", "member index must be 1..2")
check.fails(function() e:weight(0) end, "weight before the start", "member index must be 1..2")
-- the regions' paired vectors and their axis count: one reader, one finish
check.fails(function() pf.box{min = {-1e-6, -1e-6}, max = {1e-6}} end,
  "box corners of different lengths", "box: 'min' and 'max' must have the same number of entries")
check.fails(function() pf.half_space{point = {0}, normal = {1, 0}} end,
  "half-space point and normal of different lengths",
  "half_space: 'point' and 'normal' must have the same number of entries")
-- a box or a ball over the whole grid holds all of a normalised state
check.near(w1:probability_in(pf.box{min = {-1}, max = {1}}), 1.0, 1e-9, "box over the grid", "normalisation (docs/conventions.md)")
check.near(w1:probability_in(pf.ball{center = {0}, radius = 1}), 1.0, 1e-9, "ball over the grid", "normalisation (docs/conventions.md)")

check.done()
