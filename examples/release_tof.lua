-- release_tof.lua - flagship example: time-of-flight of a potassium-39 cloud
-- released from an elongated optical trap in the (invented) Kestrel Row
-- quantum-gas lab.  The cloud starts in the trap's ground state: tight along
-- x (2 pi x 1.2 kHz), loose along y (2 pi x 150 Hz), drifting slowly along
-- x.  After release the tight axis expands fastest, so the aspect ratio
-- inverts during the flight - the classic time-of-flight signature.
--
-- The engine's exact momentum-space flight is compared with the textbook
-- width law sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2) and with
-- the free drift <x>(t) = x0 + v t.
--
-- Run: build/psiflight run examples/release_tof.lua [--set tof_ms=5]
local pf = require "psiflight"

-- CODATA 2018: h exact (2019 SI), atomic mass constant u.
local h = 6.62607015e-34
local hbar = h / (2 * math.pi)
local u = 1.66053906660e-27
local mass = pf.mass("39K")              -- 39K atomic mass, AME2020 (species table)
local omega_x = 2 * math.pi * 1200.0    -- trap frequencies (rad/s)
local omega_y = 2 * math.pi * 150.0
local drift = 1.5e-3                    -- residual drift along x (m/s)
local tof_ms = tonumber(pf.params.tof_ms) or 5.0

-- Ground-state widths sqrt(hbar / 2 m omega) (harmonic oscillator, textbook).
local sx = math.sqrt(hbar / (2 * mass * omega_x))
local sy = math.sqrt(hbar / (2 * mass * omega_y))

local grid = pf.grid{points = {1024, 256}, span = {210e-6, 80e-6}}
local k0 = mass * drift / hbar
local cloud = pf.wave(grid, {
  mass = mass,
  position = function(x, y)
    local amp = math.exp(-x * x / (4 * sx * sx) - y * y / (4 * sy * sy))
    return amp * math.cos(k0 * x), amp * math.sin(k0 * x)
  end,
})

local function width_law(s0, t)
  return s0 * math.sqrt(1 + (hbar * t / (2 * mass * s0 * s0)) ^ 2)
end

print("psiflight flagship: 39K release from a 1.2 kHz x 150 Hz trap (Kestrel Row lab)")
print(string.format("grid %d x %d points, span %.0f x %.0f um; sigma0 = %.4f x %.4f um",
  grid:points(1), grid:points(2), grid:span(1) * 1e6, grid:span(2) * 1e6, sx * 1e6, sy * 1e6))
print(" t (ms)   sigma_x (um)  textbook      sigma_y (um)  textbook      <x> (um)   drift     aspect y/x")
local worst = 0
local times = {0, 0.5, 1, 2, 3.5, tof_ms}
local flown = 0
for _, tms in ipairs(times) do
  local t = tms * 1e-3
  cloud:fly(t - flown)
  flown = t
  local wx, wy = cloud:position_width()
  local mx = cloud:position_mean()
  local ex, ey = width_law(sx, t), width_law(sy, t)
  local ev = drift * t
  worst = math.max(worst, math.abs(wx / ex - 1), math.abs(wy / ey - 1))
  print(string.format("%7.2f   %11.5f  %11.5f   %11.5f  %11.5f   %9.4f  %9.4f   %8.4f",
    tms, wx * 1e6, ex * 1e6, wy * 1e6, ey * 1e6, mx * 1e6, ev * 1e6, wy / wx))
end
print(string.format("largest relative deviation from the textbook width law: %.1e", worst))
print(string.format("norm after %.2f ms of flight: %.15f", flown * 1e3, cloud:norm()))
