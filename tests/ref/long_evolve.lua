-- long_evolve.lua - helper for test_interrupt.sh: one engine call (evolve)
-- that would run for hours, with an HDF5 file open, so the test can stop it
-- mid-call.  Invented scenario: a 7Li cloud held in a 400 Hz trap.
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local hbar = pf.constants.hbar -- the engine's CODATA 2018 value
local m = pf.mass("7Li")
local omega = 2 * math.pi * 400.0 -- trap angular frequency (rad/s)
local aho = math.sqrt(hbar / (m * omega)) -- oscillator length (m)
local g = pf.grid{points = {128, 128}, span = {20 * aho, 20 * aho}}
local w = pf.wave(g, {mass = m, position = function(x, y) return math.exp(-(x * x + y * y) / (2 * aho * aho)) end})
local f = pf.h5file("during.h5")
f:put_value("n", 1, "")
print("evolving")
io.stdout:flush()
-- The trap as a table, so no Lua code runs during the call: only the
-- engine's own stop check can end it.
-- (x^2 + y^2 on a square grid: the same in either storage order.)
local V, xs, ys = {}, g:x_axis(1), g:x_axis(2)
for a = 1, #xs do
  for b = 1, #ys do V[#V + 1] = 0.5 * m * omega * omega * (xs[a] ^ 2 + ys[b] ^ 2) end
end
-- 100 s of trap time in 10 us steps: 1e7 steps, far longer than the test waits.
w:evolve(100, {potential = V, dt = 1e-5})
print("finished")
