-- state_gallery.lua - one of each state builder, in the setting of the
-- (invented) Ouse Bank cold-atom bench, with each state's measured moments
-- printed beside the textbook value.  Demo numbers only.
--
--   6Li oscillator states      pf.oscillator   <x^2> = (n + 1/2) hbar / m omega
--   40K velocity-selected beam pf.flat_top     round super-Gaussian in 2D
--   23Na condensate            pf.thomas_fermi <x^2> = R^2 / 7 in 3D
--   tilted 88Sr cloud          pf.gaussian     full 2D covariance
--   measured profile           pf.sampled      a table of (invented) camera data
--   133Cs cat state            a psi1 + b psi2, <psi1|psi2>
--
-- Outputs are model predictions (ideal, non-interacting states after
-- preparation); they are no substitute for the lab's own calibration, and
-- local laser-safety rules and qualified staff take precedence.
--
-- Run: build/psiflight run examples/state_gallery.lua [--set li_trap=2kHz]
local pf = require "psiflight"
local U, C = pf.units, pf.constants
local p = pf.parameters{
  li_trap = {default = 1.5, unit = "kHz", help = "trap frequency of the 6Li oscillator states", min = 0.5, max = 5},
}
pf.setup{planning = "estimate"}

print("Ouse Bank state gallery")

-- 6Li in a 2 pi x 1.5 kHz trap (by default), n = 0..3.
local li = pf.mass("6Li")
local w_li = 2 * math.pi * p.li_trap
local g1 = pf.grid{points = 512, span = 40 * U.um}
print(string.format(" 6Li oscillator, 2 pi x %.3g kHz:  n   <x^2>^1/2 (um)  textbook   E_kin/h (kHz)  textbook", p.li_trap / 1e3))
for n = 0, 3 do
  local s = pf.oscillator(g1, {mass = "6Li", omega = w_li, n = n})
  local want = math.sqrt((n + 0.5) * C.hbar / (li * w_li))
  print(string.format("%35d   %13.5f  %9.5f   %12.5f  %9.5f", n, s:position_width() / U.um, want / U.um,
    U.as_frequency(s:kinetic_energy()) / 1e3, U.as_frequency(0.5 * (n + 0.5) * C.hbar * w_li) / 1e3))
end

-- 40K beam: velocities within 4 mm/s of 10 mm/s, steep edges (order 6),
-- round in the (x, y) plane.
local g2 = pf.grid{points = {256, 256}, span = {60 * U.um, 60 * U.um}}
local beam = pf.flat_top(g2, {mass = "40K", velocity_half_width = 4 * U.mm_per_s, order = 6,
  shape = "round", velocity = {10 * U.mm_per_s, 0}})
local vx = beam:velocity_mean()
local px = beam:momentum_width()
print(string.format(" 40K flat-top beam: <v_x> = %.4f mm/s, sigma_v = %.4f mm/s", vx / U.mm_per_s, px / pf.mass("40K") / U.mm_per_s))

-- 23Na condensate, Thomas-Fermi radii 9 x 9 x 24 um.
local g3 = pf.grid{points = {48, 48, 96}, span = {24 * U.um, 24 * U.um, 60 * U.um}}
local bec = pf.thomas_fermi(g3, {mass = "23Na", radius = {9 * U.um, 9 * U.um, 24 * U.um}})
local bx, by, bz = bec:position_width()
print(string.format(" 23Na Thomas-Fermi: widths %.3f %.3f %.3f um, textbook R/sqrt 7 = %.3f %.3f %.3f um",
  bx / U.um, by / U.um, bz / U.um, 9 / math.sqrt(7), 9 / math.sqrt(7), 24 / math.sqrt(7)))

-- 88Sr cloud tilted by a correlation of 0.5 between x and y.
local sx, sy, rho = 2.0 * U.um, 1.2 * U.um, 0.5
local tilt = pf.gaussian(g2, {mass = "88Sr", covariance = {{sx * sx, rho * sx * sy}, {rho * sx * sy, sy * sy}}})
local tx, ty = tilt:position_width()
print(string.format(" 88Sr tilted Gaussian: sigma = %.4f, %.4f um (set %.1f, %.1f um)", tx / U.um, ty / U.um, sx / U.um, sy / U.um))

-- A camera profile (invented numbers): column density in arbitrary units
-- every 1.5 um; the amplitude is its square root.
local density = {0, 0.02, 0.09, 0.31, 0.72, 1.00, 0.95, 0.66, 0.30, 0.10, 0.03, 0}
local xs, amps = {}, {}
for i, d in ipairs(density) do
  xs[i] = (i - 6.5) * 1.5 * U.um
  amps[i] = math.sqrt(d)
end
local measured = pf.sampled(g1, {mass = "87Rb", x = xs, values = amps, interpolation = "cubic"})
print(string.format(" sampled profile: centre %.3f um, width %.3f um", measured:position_mean() / U.um, measured:position_width() / U.um))

-- 133Cs cat state: two packets 8 um apart, the second with a phase pi/2.
local left = pf.gaussian(g1, {mass = "133Cs", width = 1.2 * U.um, center = -4 * U.um})
local right = pf.gaussian(g1, {mass = "133Cs", width = 1.2 * U.um, center = 4 * U.um})
local cat = (left + right * pf.complex(0, 1)):normalize()
print(string.format(" 133Cs cat: <left|right> = %.3e (textbook exp(-d^2/8 sigma^2) = %.3e), |<left|cat>|^2 = %.4f",
  left:inner(right).re, math.exp(-(8 / 1.2) ^ 2 / 8), left:inner(cat):abs() ^ 2))

-- Files: the 1D states of the gallery (HDF5) and their densities (PNG).
-- The HDF5 items first and the file closed last: an error on the way (say,
-- out of memory) discards the open file, and the pictures need no engine
-- memory, so a failed run leaves no partial set of files.
local h5 <close> = pf.h5file("state_gallery.h5")
h5:put_wave("cat_133Cs", cat, {parts = "both"})
h5:put_wave("sampled_87Rb", measured)
h5:put_wave("tilted_88Sr", tilt)
local x1, cat_density, measured_density = g1:x_axis(1), cat:density(), measured:density()
pf.picture_map("tilted_88Sr.png", tilt, {title = "88Sr tilted Gaussian (correlation 0.5)"})
pf.picture_lines("state_gallery.png", {
  title = "1D states of the gallery", x_name = "x", x_quantity = "length", y_name = "|#gq|#u2#d", y_per_x = true,
  legend = "upper right",
  series = {{x = x1, y = cat_density, label = "133Cs cat"},
            {x = x1, y = measured_density, label = "87Rb sampled profile", dashed = true}},
})
h5:close()
