-- velocity_selection.lua - Raman velocity selection in the (invented)
-- Brindlewood cold-atom lab: a square Raman pi pulse of duration tau moves
-- only a narrow velocity class of a 87Rb cloud from F=1 to F=2 (and kicks
-- it by hbar k_eff).  The selected class follows the Rabi lineshape
-- (Omega/W)^2 sin^2(W tau / 2), W^2 = Omega^2 + delta(v)^2, with the Doppler
-- and recoil detuning delta(v) = delta0 - k_eff v - hbar k_eff^2 / 2m
-- (I. I. Rabi, Phys. Rev. 51, 652 (1937); the selection scheme of
-- M. Kasevich et al., Phys. Rev. Lett. 66, 2297 (1991)).
--
-- Writes the momentum distributions before and after, per level, with the
-- lineshape (CSV, PNG) and the two level waves (HDF5).  Apparatus: outputs are
-- model predictions (rotating-wave approximation, no spontaneous emission,
-- no light shift); laser work follows local laser safety rules and qualified staff.
--
-- Run: build/psiflight run examples/velocity_selection.lua [--set tau=200us] [--set select=2mm/s]
local pf = require "psiflight"
local p = pf.parameters{
  tau    = {default = 400, unit = "us", help = "pi pulse duration", min = 1, max = 10000},
  select = {default = 1, unit = "mm/s", help = "velocity class to select", min = -20, max = 20},
}
pf.setup{planning = "estimate"}
local C = pf.constants
local m = pf.mass("87Rb")
local lambda = 780.24e-9
-- A cloud about 4 mm/s wide in velocity: 0.3 um in position.
local span_guess = 200e-6
local grid_k = 2 * math.pi / span_guess
local keff = math.floor(2 * (2 * math.pi / lambda) / grid_k + 0.5) * grid_k -- k_eff on the grid's k lattice
local grid = pf.grid{points = 8192, span = span_guess}
local cloud = pf.gaussian(grid, {mass = m, width = 0.15e-6})
local before = cloud:momentum_density()
local lv = pf.levels{labels = {"F1", "F2"}, waves = {F1 = cloud}}
local omega = math.pi / p.tau
local wr = C.hbar * keff^2 / (2 * m)
local delta0 = keff * p.select + wr -- resonant for the chosen class
lv:pulse{from = "F1", to = "F2", rabi = omega, duration = p.tau, wavenumber = keff, detuning = delta0}
print(string.format("psiflight example: Raman velocity selection of 87Rb, pi pulse %.4g us at v = %.4g mm/s (Brindlewood lab)",
  p.tau * 1e6, p.select * 1e3))
local pops = lv:populations()
print(string.format("selected fraction %.5f (F2), remaining %.5f (F1)", pops.F2, pops.F1))
pf.report("selected_fraction", pops.F2, "")

-- Velocities of the original classes; F2 holds them shifted by hbar k_eff / m.
local ks = grid:k_axis(1)
local v, d0, d1, d2, shape = {}, {}, {}, {}, {}
local after1, after2 = lv:level("F1"):momentum_density(), lv:level("F2"):momentum_density()
local shift = math.floor(keff / grid:kspacing(1) + 0.5)
local worst = 0
for i = 1, #ks do
  v[i] = C.hbar * ks[i] / m
  d0[i], d1[i] = before[i], after1[i]
  local j = i + shift
  d2[i] = j <= #ks and after2[j] or 0
  local delta = delta0 - keff * v[i] - wr
  local W = math.sqrt(omega^2 + delta^2)
  shape[i] = before[i] * (omega / W)^2 * math.sin(W * p.tau / 2)^2
  worst = math.max(worst, math.abs(d2[i] - shape[i]))
end
print(string.format("selected class against the Rabi lineshape: max |difference| %.2e (peak %.2e)", worst,
  math.max(table.unpack(shape))))
-- The picture shows the cloud's core, |v| < 8 mm/s.
local vmm, p0, p1, p2, ps = {}, {}, {}, {}, {}
for i, x in ipairs(v) do
  if math.abs(x) < 8e-3 then
    vmm[#vmm + 1], p0[#p0 + 1], p1[#p1 + 1], p2[#p2 + 1], ps[#ps + 1] = x * 1e3, d0[i], d1[i], d2[i], shape[i]
  end
end
local csv = pf.write_csv("velocity_selection.csv", {{"velocity", "m/s", v}, {"density_before", "m", d0},
  {"density_F1_after", "m", d1}, {"density_F2_after_unshifted", "m", d2}, {"rabi_lineshape", "m", shape}})
local png = pf.picture_lines("velocity_selection.png", {
  title = "Raman velocity selection (F2 shown at its velocity before the kick)", x_name = "velocity (mm/s)",
  x_quantity = "plain", y_name = "|#gf|#u2#d (m)", legend = "upper right",
  series = {{x = vmm, y = p0, label = "before"}, {x = vmm, y = p1, label = "F1 after"},
            {x = vmm, y = p2, label = "F2 after"}, {x = vmm, y = ps, label = "Rabi lineshape", dashed = true}},
})
local f <close> = pf.h5file("velocity_selection.h5")
f:put_wave("F1", lv:level("F1"))
f:put_wave("F2", lv:level("F2"))
local h5 = f:close()
print("outputs:")
for _, path in ipairs{csv, png, h5} do print("  " .. path) end
