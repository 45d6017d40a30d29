-- arrival_fenwick.lua - the (invented) Fenwick light-sheet detector: a
-- sodium-23 packet launched at 30 mm/s crosses a light sheet 150 um away;
-- the bundled arrival_time recipe gives the arrival-time distribution.
--   build/psiflight run examples/recipes/arrival_fenwick.lua --set velocity=20mm/s
local pf = require "psiflight"
local common = require "psiflight.recipes.common"
local recipe = require "psiflight.recipes.arrival_time"

local p = pf.parameters(common.with_defaults(recipe.parameters, {
  velocity = 30, sigma = 3, distance = 150, window = 10, samples = 250,
}))
print("Fenwick: arrival times at a light sheet, 23Na")
recipe.main(p)
