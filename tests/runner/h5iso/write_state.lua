-- write_state.lua - writes a small 2D state (an invented test cloud) as the
-- psiflight item "wave" of NAME.h5 (pf.params.name, default "state"), on
-- pf.params.points x pf.params.ny points (default 24 x 16), for
-- test_h5_isolation.sh and the timing in DEVELOPERS.md.
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local n = tonumber(pf.params.points) or 24
local ny = tonumber(pf.params.ny) or n * 2 // 3
local g = pf.grid{points = {n, ny}, span = {30e-6, 20e-6}, origin = {1e-6, -0.5e-6}}
local w = pf.wave(g, {mass = 1.4e-25, position = function(x, y)
  local a = math.exp(-(x - 1e-6) ^ 2 / (4 * 2e-6 ^ 2) - (y + 0.5e-6) ^ 2 / (4 * 1.5e-6 ^ 2))
  return a * math.cos(0.7e6 * x), a * math.sin(0.7e6 * x + 0.3e6 * y)
end})
w:fly(tonumber(pf.params.t) or 0.1e-3)
local f = pf.h5file((pf.params.name or "state") .. ".h5")
f:put_wave("wave", w)
f:close()
