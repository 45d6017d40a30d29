-- probe_cap.lua - the memory cap counts this rank's share of a distributed
-- grid (tests/runner/test_distributed.sh): a 32^3 grid needs 1 MiB for one
-- wave and its planning scratch as one process, over the 700 kB cap; on 4
-- ranks each holds 8 planes (256 kB).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", memory_cap = 700e3, guard_threshold = math.huge}
local ok, err = pcall(function()
  local g = pf.grid{points = {32, 32, 32}, span = 1e-5}
  local w = pf.wave(g, {mass = 1e-25, position = function(x, y, z) return math.exp(-(x * x + y * y + z * z) / 1e-12) end})
  return w:norm()
end)
print(ok and string.format("fits norm %.17g", err) or ("refused " .. tostring(err):gsub("\n", " ")))
