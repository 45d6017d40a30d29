-- wrenfield_electron_bench.lua - transverse spreading of a focused electron
-- probe along the drift section of the (invented) Wrenfield electron bench.
--
-- The bench's gun delivers electrons of a chosen kinetic energy (200 keV by
-- default); a lens forms a Gaussian waist w0 at the start of a field-free
-- drift.  pf.beam gives the relativistic de Broglie wavelength, the speed and
-- the transverse mass gamma m0; in the paraxial approximation the transverse
-- profile at distance L along the beam is the free Schrodinger evolution of
-- that mass for the time L / v (b.flight_time(L)).  The engine's flight is
-- compared with the Gaussian-beam law w(L) = w0 sqrt(1 + (L / z_R)^2),
-- z_R = k w0^2 / 2, and the table goes to a CSV file.
--
-- The outputs are model predictions (paraxial, monoenergetic, no spin, no
-- space charge, no stray fields), not settings for the bench: high voltage,
-- vacuum and radiation work follows local safety rules and the lab's
-- qualified staff.
--
-- Run: build/psiflight run examples/wrenfield_electron_bench.lua [--set energy=300000] [--set waist=2nm]
local pf = require "psiflight"
local p = pf.parameters{
  energy = {default = 200e3, unit = "eV", help = "kinetic energy of the electrons", min = 1, max = 3e6},
  waist  = {default = 1, unit = "nm", help = "amplitude waist w0 of the probe at the start of the drift", min = 0.2, max = 100},
  drift  = {default = 10, unit = "um", help = "longest distance along the beam to tabulate", min = 0.01, max = 1000},
}

local b = pf.beam{particle = "e", kinetic_energy = p.energy}  -- CODATA 2018 electron mass and constants
local zr = b.wavenumber * p.waist ^ 2 / 2                       -- Rayleigh range (Gaussian beam)
print(string.format("Wrenfield bench: E_k = %.4g keV, lambda = %.4f pm, v = %.5f c, gamma = %.5f",
  p.energy / pf.constants.e / 1e3, b.wavelength * 1e12, b.velocity / pf.constants.c, b.gamma))
print(string.format("waist %.3g nm, Rayleigh range %.4g nm", p.waist * 1e9, zr * 1e9))

-- Transverse grid across the beam: 16 far-end waists wide, with at least 4
-- points per starting waist (a power of two for the FFT).
local w_end = p.waist * math.sqrt(1 + (p.drift / zr) ^ 2)
local points = 1024
while points < 64 * w_end / p.waist do points = points * 2 end
if points > 2 ^ 20 then
  error(string.format("drift %.3g m is %.0f Rayleigh ranges: the probe spreads beyond a 2^20-point grid; "
    .. "shorten the drift or widen the waist", p.drift, p.drift / zr), 0)
end
local grid = pf.grid{points = points, span = 16 * w_end}
local rows = {L = {}, t = {}, w = {}, law = {}}
print("  L (um)      t (fs)      w (nm)      law (nm)")
for i = 0, 10 do
  local L = p.drift * i / 10
  local probe = pf.gaussian(grid, {mass = b.transverse_mass, width = p.waist / 2})  -- rms of |psi|^2 = w0 / 2
  local t = b.flight_time(L)
  probe:fly(t)
  local w = 2 * probe:position_width()
  local law = p.waist * math.sqrt(1 + (L / zr) ^ 2)
  rows.L[#rows.L + 1], rows.t[#rows.t + 1], rows.w[#rows.w + 1], rows.law[#rows.law + 1] = L, t, w, law
  print(string.format("%9.2f  %10.4f  %10.4f  %10.4f", L * 1e6, t * 1e15, w * 1e9, law * 1e9))
  probe:close()
end
local columns = {
  {"distance", "m", rows.L}, {"flight_time", "s", rows.t}, {"waist", "m", rows.w}, {"waist_gaussian_beam_law", "m", rows.law},
}
local path = pf.write_csv("drift_widths.csv", columns)
local h5 <close> = pf.h5file("drift_widths.h5")
h5:put_table("drift_widths", columns)
h5:close()
local um, nm_w, nm_law = {}, {}, {}
for i = 1, #rows.L do um[i], nm_w[i], nm_law[i] = rows.L[i] * 1e6, rows.w[i] * 1e9, rows.law[i] * 1e9 end
pf.picture_lines("drift_widths.png", {
  title = "electron probe waist along the drift (Wrenfield bench)", x_name = "drift distance (#gmm)",
  y_name = "waist", y_unit = "nm", legend = "upper left",
  series = {{x = um, y = nm_w, label = "engine"}, {x = um, y = nm_law, label = "Gaussian-beam law", points = true}},
})
print("wrote " .. path)
