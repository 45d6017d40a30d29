-- species_recoil.lua - which of the bench's species kicks hardest? In the
-- (invented) Brackenfold cooling lab one 1064 nm beam is shared by several
-- experiments; this script takes each species' mass from the engine's
-- AME2020 / CODATA 2018 table, with its uncertainty and source, and lists
-- the single-photon recoil velocity v = h / (m lambda) and recoil energy
-- E = m v^2 / 2 (as a temperature E / kB and a frequency E / h), with the
-- uncertainty the mass passes on (relative: sigma_v / v = sigma_m / m).
--
-- The numbers are model predictions for a free atom absorbing one photon of
-- the stated vacuum wavelength (no light shifts, no lattice, no recoil from
-- spontaneous emission).  They are not settings for lasers: local
-- laser-safety rules and the lab's qualified staff come first.
--
-- Run: build/psiflight run examples/species_recoil.lua [--set wavelength=532nm]
local pf = require "psiflight"
local p = pf.parameters{
  wavelength = {default = 1064, unit = "nm", help = "vacuum wavelength of the shared beam"},
}
local C = pf.constants
local bench = {"7Li", "23Na", "40K", "52Cr", "87Sr", "87Rb", "133Cs", "162Dy", "168Er", "174Yb"}

local cols = {label = {}, mass = {}, mass_unc = {}, micro_u = {}, source = {}, v = {}, v_unc = {}, t_rec = {}, f_rec = {}}
print(string.format("single-photon recoil at %.1f nm", p.wavelength * 1e9))
print(string.format("%-6s %-24s %-12s %-13s %-11s %-11s %s", "label", "mass (micro-u)", "v_rec (mm/s)",
                    "sigma_v (m/s)", "T_rec (nK)", "E/h (kHz)", "source"))
for i, label in ipairs(bench) do
  local s = pf.species(label)
  local v = C.h / (s.mass * p.wavelength)
  local v_unc = v * s.uncertainty / s.mass
  local energy = 0.5 * s.mass * v * v
  cols.label[i], cols.micro_u[i], cols.source[i] = s.label, s.mass_micro_u .. "(" .. s.uncertainty_micro_u .. ")", s.source
  cols.mass[i], cols.mass_unc[i], cols.v[i], cols.v_unc[i] = s.mass, s.uncertainty, v, v_unc
  cols.t_rec[i], cols.f_rec[i] = energy / C.kB, energy / C.h
  print(string.format("%-6s %-24s %-12.6f %-13.2e %-11.4f %-11.4f %s", s.label, cols.micro_u[i], v * 1e3, v_unc,
                      cols.t_rec[i] * 1e9, cols.f_rec[i] * 1e-3, s.source))
end

local columns = {
  {"species", "", cols.label}, {"mass_micro_u", "micro-u", cols.micro_u}, {"mass", "kg", cols.mass},
  {"mass_uncertainty", "kg", cols.mass_unc}, {"recoil_velocity", "m/s", cols.v},
  {"recoil_velocity_uncertainty", "m/s", cols.v_unc}, {"recoil_temperature", "K", cols.t_rec},
  {"recoil_frequency", "Hz", cols.f_rec}, {"mass_source", "", cols.source},
}
local csv = pf.write_csv("recoil.csv", columns)
local h5 <close> = pf.h5file("recoil.h5")
h5:put_table("recoil", columns)
h5:close()
local mass_u, v_mm = {}, {}
for i = 1, #cols.mass do mass_u[i], v_mm[i] = cols.mass[i] / pf.constants.u, cols.v[i] * 1e3 end
pf.picture_lines("recoil.png", {
  title = "single-photon recoil velocity against mass", x_name = "mass (u)", y_name = "recoil velocity",
  y_unit = "mm/s", log_y = true, legend = "upper right",
  series = {{x = mass_u, y = v_mm, label = "species table", points = true}},
})
print("wrote " .. csv)
