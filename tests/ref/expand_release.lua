-- expand_release.lua - helper of test_expand_scipy.sh: relaxed Thomas-Fermi
-- clouds of 87Rb released with w:expand; prints, per case and time, the
-- trap frequencies, the rms width ratios sigma_j(t) / sigma_j(0) and the
-- engine's lambda_j.  Invented scenario numbers.
local pf = require "psiflight"
pf.setup{planning = "estimate", guard_threshold = 1e-5}
local C = pf.constants
local hbar, pi = C.hbar, math.pi
local m = pf.species("87Rb").mass

local function case(label, omega, mu_units, points, times)
  local d = #omega
  local mu = mu_units * hbar * omega[1]
  local R, span = {}, {}
  for a = 1, d do
    R[a] = math.sqrt(2 * mu / (m * omega[a] ^ 2))
    span[a] = 3.0 * R[a]
  end
  -- g for psi normalised to 1 from the Thomas-Fermi normalisation
  -- (inverted parabola; textbook): 2D 1 = (pi / 2) (mu / g) R_x R_y,
  -- 3D 1 = (8 pi / 15) (mu / g) R_x R_y R_z.
  local gN = d == 2 and pi / 2 * mu * R[1] * R[2] or 8 * pi / 15 * mu * R[1] * R[2] * R[3]
  local g = pf.grid{points = points, span = span}
  local w = pf.thomas_fermi(g, {mass = "87Rb", radius = R})
  local V = pf.potential(g, function(...)
    local x, v = {...}, 0
    for a = 1, d do v = v + 0.5 * m * omega[a] ^ 2 * x[a] ^ 2 end
    return v
  end)
  w:relax{potential = V, g = gN, tolerance = 1e-10}
  local s0 = {w:position_width()}
  local last = 0
  for _, t in ipairs(times) do
    local _, info = w:expand(t - last, {g = gN, omega = omega, handover = 0})
    last = t
    local s = {w:position_width()}
    local out = {label, string.format("%d %.17g %.17g", d, mu_units, t)}
    for a = 1, d do out[#out + 1] = string.format("%.17g", omega[a]) end
    for a = 1, d do out[#out + 1] = string.format("%.17g", s[a] / s0[a]) end
    for a = 1, d do out[#out + 1] = string.format("%.17g", info.lambda[a]) end
    print(table.concat(out, " "))
  end
end

case("2d", {2 * pi * 150, 2 * pi * 60}, 8, {64, 64}, {5e-3, 15e-3})
case("2d", {2 * pi * 150, 2 * pi * 60}, 16, {96, 96}, {5e-3, 15e-3})
case("2d", {2 * pi * 150, 2 * pi * 60}, 32, {128, 128}, {5e-3, 15e-3})
case("3d", {2 * pi * 160, 2 * pi * 160, 2 * pi * 40}, 10, {32, 32, 48}, {5e-3, 20e-3})
