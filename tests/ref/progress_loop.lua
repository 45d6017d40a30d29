-- progress_loop.lua - helper for test_progress.sh: a script loop with a
-- progress bar, a carpet picture (which draws its own bar), a long
-- engine call (evolve), which reports to the engine's progress hook, and an
-- ensemble's per-member loop.
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
-- A long engine call (evolve, about a second on a small machine) shows its
-- own bar after half a second; its result goes to a file, which must not
-- depend on whether the bar was drawn.
local g2 = pf.grid{points = {256, 256}, span = {40e-6, 40e-6}}
local m = 1.15e-26
local omega = 2 * math.pi * 300
local V, xs, ys = {}, g2:x_axis(1), g2:x_axis(2)
for a = 1, #xs do
  for b = 1, #ys do V[#V + 1] = 0.5 * m * omega * omega * (xs[a] ^ 2 + ys[b] ^ 2) end
end
local w2 = pf.gaussian(g2, {mass = m, width = {2e-6, 2e-6}})
w2:evolve(600 * 2e-6, {potential = V, dt = 2e-6})
-- An ensemble's per-member loop (e:each) shows its own bar.
local ens = pf.mixture({w, w:copy():kick(1e5), w:copy():kick(-1e5)}, {0.5, 0.25, 0.25})
ens:each(function(member)
  local t0 = os.clock()
  while os.clock() - t0 < 0.05 do end
  member:fly(1e-4)
end)
local f = pf.h5file("evolved.h5")
f:put_wave("evolved", w2)
f:close()
print("result line", bar:shown())
