-- tof_image_harrowgate.lua - the (invented) Harrowgate cold-atom lab images a
-- potassium-41 cloud released from a 95 Hz x 30 Hz dipole trap after 12 ms
-- of flight, on a camera with 3.45 um pixels (object plane, unit
-- magnification).  Uses the bundled tof_image recipe with the lab's defaults;
-- every value can be changed on the command line:
--   build/psiflight run examples/recipes/tof_image_harrowgate.lua --help
--   build/psiflight run examples/recipes/tof_image_harrowgate.lua --set tof=20ms
local pf = require "psiflight"
local common = require "psiflight.recipes.common"
local recipe = require "psiflight.recipes.tof_image"

-- 41K mass from the engine's species table (AME2020), in u.
local p = pf.parameters(common.with_defaults(recipe.parameters, {
  mass = common.mass_u("41K"), trap_x = 95, trap_y = 30, tof = 12, pixel = 3.45, atoms = 4e4,
}))
print("Harrowgate lab: 41K release, time-of-flight image")
recipe.main(p)
