-- point.lua - one sweep point for the runner tests: a sodium-23 packet of
-- the given initial width flies for the given time; the script reports its
-- final width and the seed it was given.  `fail_at` makes chosen points fail,
-- `dwell` keeps each point busy for a while (so a test can kill a sweep
-- half way).
local pf = require "psiflight"
local manifest = require "manifest_fallback"
local p = pf.parameters{
  width = {default = 2, unit = "um", help = "initial rms width"},
  tof = {default = 1, unit = "ms", help = "flight time"},
  fail_at = {default = -1, help = "fail when the width in um equals this"},
  dwell = {default = 0, unit = "s", help = "busy time per point (CPU seconds)"},
}
pf.setup{planning = "estimate"}
local start = os.clock()
while os.clock() - start < p.dwell do end
if math.abs(p.width * 1e6 - p.fail_at) < 1e-9 then error("point asked to fail (fail_at)") end
local mass = pf.mass("23Na") -- AME2020 via the species table (test_sweep.sh checks it)
local g = pf.grid{points = 256, span = 200e-6}
local s = p.width
local w = pf.wave(g, {mass = mass, position = function(x) return math.exp(-x * x / (4 * s * s)) end})
w:fly(p.tof)
manifest.report("final_width", w:position_width(), "m")
manifest.report("seed_low_digits", pf.run_info().seed % 1000000)
print(string.format("width %.6g um after %.6g ms: %.12g um", s * 1e6, p.tof * 1e3, w:position_width() * 1e6))
manifest.finish()
