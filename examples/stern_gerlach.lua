-- stern_gerlach.lua - Stern-Gerlach separation of the three Zeeman levels
-- of 87Rb F = 1 in the (invented) Ashgrove magnetics lab: a cloud released
-- with equal populations in m_F = -1, 0, +1 feels a magnetic field gradient
-- for a short time, then flies freely and is imaged.
--
-- In the weak-field (linear Zeeman) regime level m_F has the energy
-- g_F m_F mu_B |B|, so a gradient b = d|B|/dx pushes it with the force
-- -g_F m_F mu_B b: each level flies under its own uniform acceleration
-- (exact propagator per level).  g_F = -1/2 for 87Rb F = 1 (Lande factor,
-- quoted from memory).  The script compares each level's centre with its
-- classical trajectory and writes the density per level and in total
-- (CSV, PNG) and the three level waves (HDF5).
--
-- Apparatus: outputs are model predictions (linear Zeeman shift, no
-- gravity along x, no collisions).  Coil currents and magnetic fields on a
-- real apparatus follow the local electrical safety rules and qualified staff.
--
-- Run: build/psiflight run examples/stern_gerlach.lua [--set gradient=20G] [--set flight=10ms]
local pf = require "psiflight"
local p = pf.parameters{
  gradient = {default = 15, unit = "G", help = "field gradient d|B|/dx per cm (value in G; 1 G/cm = 0.01 T/m)", min = 0, max = 500},
  pulse    = {default = 3, unit = "ms", help = "time the gradient is on", min = 0.01, max = 50},
  flight   = {default = 12, unit = "ms", help = "free flight after the gradient", min = 0, max = 100},
  width    = {default = 6, unit = "um", help = "rms width of the released cloud", min = 1, max = 100},
}
local C = pf.constants
local mass = pf.mass("87Rb")              -- AME2020 via the species table
local gF = -0.5                            -- 87Rb F = 1 Lande g-factor (from memory)
local b = p.gradient * 100                 -- G/cm in T/m: value (T, from the G unit) per cm
local labels = {"mF-1", "mF0", "mF1"}     -- level labels double as HDF5 item names
local mF = {-1, 0, 1}

pf.setup{planning = "estimate"}
local reach = 0
local accel = {}
for i, m in ipairs(mF) do
  accel[labels[i]] = -gF * m * C.mu_B * b / mass
  local a = math.abs(accel[labels[i]])
  reach = math.max(reach, a * p.pulse^2 / 2 + a * p.pulse * p.flight)
end
-- The grid holds the outer levels plus 12 widths, and resolves both the
-- cloud (4 points per width) and the momentum m a t1 / hbar the gradient gives.
local span = 2 * (reach + 12 * p.width)
local points = 256
while span / points > math.min(p.width / 4, math.pi / (2 * mass * (math.abs(accel[labels[1]]) * p.pulse) / C.hbar)) do
  points = points * 2
end
local grid = pf.grid{points = points, span = span}
local cloud = pf.gaussian(grid, {mass = mass, width = p.width})
local third = cloud:copy():scale(math.sqrt(1 / 3))
local lv = pf.levels{labels = labels, waves = {["mF-1"] = third, mF0 = third, mF1 = third}}

print(string.format("psiflight example: Stern-Gerlach, 87Rb F=1, gradient %.4g G/cm for %.4g ms, then %.4g ms (Ashgrove lab)",
  p.gradient * 1e4, p.pulse * 1e3, p.flight * 1e3))
print(string.format("grid %d points over %.4g mm", points, span * 1e3))
lv:fly(p.pulse, {acceleration = accel})
lv:fly(p.flight)
local xs = grid:x_axis(1)
local columns, series = {{"x", "m", xs}}, {}
local total = {}
for i = 1, #xs do total[i] = 0 end
for i, lab in ipairs(labels) do
  local w = lv:level(lab)
  local a = accel[lab]
  local want = a * p.pulse^2 / 2 + a * p.pulse * p.flight -- classical: x = a t1^2/2 + (a t1) t2
  print(string.format("  %-6s acceleration %+9.4f m/s^2   centre %+9.3f um   classical %+9.3f um   population %.4f",
    lab, a, w:position_mean() * 1e6, want * 1e6, w:norm()))
  pf.report("centre_" .. lab, w:position_mean(), "m")
  local d = w:density()
  for j = 1, #d do total[j] = total[j] + d[j] end
  columns[#columns + 1] = {"density_" .. lab, "1/m", d}
  series[#series + 1] = {x = xs, y = d, label = lab, dashed = (i == 2)}
end
columns[#columns + 1] = {"density_total", "1/m", total}
series[#series + 1] = {x = xs, y = total, label = "total"}
local csv = pf.write_csv("stern_gerlach.csv", columns)
local png = pf.picture_lines("stern_gerlach.png", {
  title = "87Rb F=1 after the gradient and the flight", x_name = "x", x_quantity = "length",
  y_name = "density", y_per_x = true, legend = "upper right", series = series,
})
local f <close> = pf.h5file("stern_gerlach.h5")
for _, lab in ipairs(labels) do f:put_wave(lab, lv:level(lab)) end
local h5 = f:close()
print("outputs:")
for _, path in ipairs{csv, png, h5} do print("  " .. path) end
