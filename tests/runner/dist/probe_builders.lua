-- probe_builders.lua - the builders on a distributed grid, for
-- tests/runner/test_distributed.sh: each rank fills its own planes, so the
-- states and every figure of them are the single process's bits ("exact").
-- Invented scene: 39K states on a 26 x 30 x 30 grid (7, 7, 7, 5 planes on
-- 4 ranks).  The widths are checked against the oscillator's closed forms
-- in tests/lua/test_states.lua; here only against one process.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local mass = pf.mass("39K")
local g = pf.grid{points = {26, 30, 30}, span = {20e-6, 20e-6, 24e-6}}
local omega = {2 * math.pi * 100, 2 * math.pi * 150, 2 * math.pi * 80}
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local states = {
  gaussian = pf.gaussian(g, {mass = mass, width = {1.2e-6, 1.1e-6, 1.4e-6}, center = {0.3e-6, -0.2e-6, 0},
    wavenumber = {1e6, 0, -5e5}}),
  ground = pf.ground_state(g, {mass = mass, omega = omega, center = {0, 0.4e-6, 0}}),
  oscillator = pf.oscillator(g, {mass = mass, omega = omega, n = {1, 0, 2}}),
  orders = pf.momentum_orders(g, {mass = mass, width = 1.2e-6, step_wavenumber = {1.5e6, 0, 0},
    orders = {{n = -1, amplitude = 0.5}, {n = 0, amplitude = 1}, {n = 1, amplitude = 0.5}}}),
}
for _, name in ipairs({"gaussian", "ground", "oscillator", "orders"}) do
  local w = states[name]
  line("exact " .. name .. "_norm", w:norm())
  line("exact " .. name .. "_mean", w:position_mean())
  line("exact " .. name .. "_width", w:position_width())
end
print(string.format("ranks %d distribute %s", pf.mpi_info().ranks, tostring(pf.mpi_info().distribute)))
