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
-- pf.thomas_fermi fills each rank's planes (exact); <x_a^2> = R_a^2 / (d + 4)
-- for the inverted parabola in d = 3 (the profile's own moment integral,
-- common practice; docs/states.md), to the grid's sampling of its edge.
local radius = {7e-6, 6.5e-6, 8e-6}
local tf = pf.thomas_fermi(g, {mass = mass, radius = radius, center = {0.4e-6, 0, 0}})
line("exact tf_norm", tf:norm())
line("exact tf_mean", tf:position_mean())
line("exact tf_width", tf:position_width())
local tw = {tf:position_width()}
for a = 1, 3 do line("law tf_width" .. a, tw[a], radius[a] / math.sqrt(7)) end
-- pf.flat_top fills each rank's planes of the transposed momentum layout;
-- its figures follow the builder's own transform to position (its edge
-- check), so they are "flown": the same bits at every rank count.
local ft = pf.flat_top(g, {mass = mass, wavenumber_half_width = {9e5, 8e5, 7e5}, wavenumber = {6e5, 0, -3e5},
  center = {0.5e-6, -0.3e-6, 0}})
line("flown ft_norm", ft:norm())
line("flown ft_k", ft:wavenumber_mean())
line("flown ft_kwidth", ft:wavenumber_width())
line("flown ft_mean", ft:position_mean())
print(string.format("ranks %d distribute %s", pf.mpi_info().ranks, tostring(pf.mpi_info().distribute)))
