-- progress_loop.lua - helper for test_progress.sh: a script loop with a
-- progress bar and a carpet picture (which draws its own bar).
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local bar = pf.progress(30, "scan")
for _ = 1, 30 do
  local t0 = os.clock()
  while os.clock() - t0 < 0.01 do end
  bar:advance()
end
bar:finish()
local g = pf.grid{points = 256, span = 1e-4}
local w = pf.wave(g, {mass = 1e-26, position = function(x) return math.exp(-x * x / 1e-11) end})
pf.picture_carpet("c.png", w, {duration = 1e-3, frames = 40})
print("result line", bar:shown())
