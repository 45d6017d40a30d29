-- kicked_split.lua - state preparation in lab units, scenario of the
-- (invented) Marram Hill interferometry lab: a 87Rb cloud is released from
-- a 2 pi x 55 Hz trap in its ground state, kicked by one two-photon recoil
-- at 780.241 nm (2 hbar k), then split by a Bragg pulse into the orders
-- -1, 0, +1 (steps of 2 hbar k) with amplitudes chosen by the pulse area.
-- After 12 ms of free flight the orders sit apart; the script checks their
-- positions against v t and their populations against |a_n|^2.
--
-- The numbers are model predictions for ideal pulses (no spontaneous
-- emission, no velocity selectivity of the pulse, no interactions); they are
-- not a prescription for laser powers.  Local laser-safety rules and the
-- qualified staff of the lab come first.
--
-- Run: build/psiflight run examples/kicked_split.lua [--set tof=10ms]
local pf = require "psiflight"
local U, C = pf.units, pf.constants
local p = pf.parameters{
  tof = {default = 12, unit = "ms", help = "free flight after the Bragg split", min = 0, max = 14},
}

local rb = pf.species("87Rb")
local omega = 55 * U.twopi_Hz
local lambda = 780.241 * U.nm
local hk2 = 2 * pf.photon_momentum(lambda)       -- two-photon recoil 2 hbar k
local v_rec = hk2 / rb.mass
local tof = p.tof

print(string.format("Marram Hill: %s, m = %.10f u (%s), trap 2 pi x %.0f Hz", rb.label, rb.mass_u, rb.source, omega / (2 * math.pi)))
print(string.format("two-photon recoil at %.3f nm: 2 hbar k = %.6e kg m/s, velocity %.4f mm/s, energy h x %.3f kHz",
  lambda / U.nm, hk2, v_rec / U.mm_per_s, U.as_frequency(hk2 ^ 2 / (2 * rb.mass)) / 1e3))

-- Grid: 0.6 mm along the kick, origin moved downstream so that the fastest
-- order (3 recoils) is still inside after the flight; the spacing resolves
-- the largest momentum (3 x 2 hbar k) with margin.
local grid = pf.grid{points = 32768, span = 0.6 * U.mm, origin = 0.25 * U.mm}

-- 1. trap ground state, kicked by one recoil.
local cloud = pf.ground_state(grid, {mass = "87Rb", omega = omega, velocity = v_rec})
local sx = math.sqrt(C.hbar / (2 * rb.mass * omega))
print(string.format("ground state: sigma_x = %.4f um (textbook %.4f um), <v> = %.4f mm/s",
  cloud:position_width() / U.um, sx / U.um, cloud:velocity_mean() / U.mm_per_s))

-- 2. the Bragg split: each order is the same packet moved by n 2 hbar k.
local orders = {
  {n = -1, amplitude = 0.45},
  {n = 0, amplitude = 0.62, phase = math.pi / 2},
  {n = 1, amplitude = 0.64, phase = math.pi},
}
local split = pf.momentum_orders(grid, {mass = "87Rb", width = sx, velocity = v_rec,
  step_momentum = hk2, orders = orders})
local overlap = cloud:inner(split)
print(string.format("overlap with the unsplit cloud |<cloud|split>|^2 = %.4f", overlap:abs() ^ 2))

split:fly(tof)
local x = grid:x_axis()
local rho = split:density()
local dx = grid:spacing()
local total = 0
for _, o in ipairs(orders) do total = total + o.amplitude ^ 2 end
print(string.format("after %.1f ms of flight:", tof / U.ms))
print(" order  v (mm/s)  x expected (um)  x measured (um)  population  expected")
local worst = 0
for _, o in ipairs(orders) do
  local v = v_rec * (1 + o.n)
  local xc = v * tof
  local p, px = 0, 0
  for i = 1, #x do
    if math.abs(x[i] - xc) < 0.5 * v_rec * tof then p = p + rho[i] * dx; px = px + x[i] * rho[i] * dx end
  end
  local want = o.amplitude ^ 2 / total
  worst = math.max(worst, math.abs(p - want))
  print(string.format("  %+d   %8.4f   %14.3f   %14.3f   %9.6f   %9.6f", o.n, v / U.mm_per_s, xc / U.um, px / p / U.um, p, want))
end
print(string.format("largest population deviation: %.1e", worst))
local h5 <close> = pf.h5file("kicked_split.h5")
h5:put_wave("split", split, {parts = "both"})
h5:close()
local um_x = {}
for i = 1, #x do um_x[i] = x[i] end
pf.picture_lines("kicked_split.png", {
  title = string.format("87Rb momentum orders after %.1f ms of flight", tof / U.ms), x_name = "x", x_quantity = "length",
  y_name = "|#gq|#u2#d", y_per_x = true, legend = "upper right",
  series = {{x = um_x, y = rho, label = "engine"}},
})
print(string.format("mean velocity %.6f mm/s (expected %.6f mm/s)", split:velocity_mean() / U.mm_per_s,
  v_rec * (1 + (orders[3].amplitude ^ 2 - orders[1].amplitude ^ 2) / total) / U.mm_per_s))
