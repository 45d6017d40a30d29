-- release_tof.lua - flagship example: time-of-flight of a potassium-39 cloud
-- released from an elongated optical trap in the (invented) Kestrel Row
-- quantum-gas lab.  The cloud starts in the trap's ground state: tight along
-- x (2 pi x 1.2 kHz by default), loose along y (2 pi x 150 Hz), drifting slowly along
-- x.  After release the tight axis expands fastest, so the aspect ratio
-- inverts during the flight - the classic time-of-flight signature.
--
-- The engine's exact momentum-space flight is compared with the textbook
-- width law sigma(t) = sigma0 sqrt(1 + (hbar t / 2 m sigma0^2)^2) and with
-- the free drift <x>(t) = x0 + v t.
--
-- Outputs (docs/outputs.md) go into the run's output folder (--out DIR,
-- default out/release_tof): an HDF5 file with the trapped and the released
-- cloud, a CSV table of the widths, three PNG pictures (the cloud after the
-- flight, computed widths against the textbook law, and the space-time
-- carpet of the cloud's tight-axis profile) and the run manifest.
--
-- The outputs are model predictions of ideal free flight (no gravity, no
-- interactions, no residual fields), not settings for the lab's lasers or
-- traps: local safety rules and the lab's qualified staff come first.
--
-- Run: build/psiflight run examples/release_tof.lua [--set tof=8ms] [--set trap_x=900Hz]
--      (--help lists the parameters; a bare number is read in the unit shown)
local pf = require "psiflight"
local p = pf.parameters{
  tof    = {default = 5, unit = "ms", help = "time of flight after release", min = 0.5, max = 20},
  trap_x = {default = 1200, unit = "Hz", help = "trap frequency along x (the tight axis)", min = 100},
  trap_y = {default = 150, unit = "Hz", help = "trap frequency along y (the loose axis)", min = 50},
  drift  = {default = 1.5, unit = "mm/s", help = "residual drift of the cloud along x at release"},
}

local hbar = pf.constants.hbar          -- CODATA 2018 (engine constants table)
local mass = pf.mass("39K")             -- 39K atomic mass, AME2020 (species table)
local drift = p.drift                   -- m/s
local tof_ms = p.tof * 1e3              -- the table below is printed in ms

-- Ground-state widths sqrt(hbar / 2 m omega) (harmonic oscillator, textbook).
local sx = math.sqrt(hbar / (2 * mass * 2 * math.pi * p.trap_x))
local sy = math.sqrt(hbar / (2 * mass * 2 * math.pi * p.trap_y))

local grid = pf.grid{points = {1024, 256}, span = {210e-6, 80e-6}}
local cloud = pf.ground_state(grid, {mass = mass, frequency = {p.trap_x, p.trap_y}, velocity = {drift, 0}})

local trapped = cloud:copy()  -- kept for the output file

local function width_law(s0, t)
  return s0 * math.sqrt(1 + (hbar * t / (2 * mass * s0 * s0)) ^ 2)
end

print(string.format("psiflight flagship: 39K release from a %.4g Hz x %.4g Hz trap (Kestrel Row lab)", p.trap_x, p.trap_y))
print(string.format("grid %d x %d points, span %.0f x %.0f um; sigma0 = %.4f x %.4f um",
  grid:points(1), grid:points(2), grid:span(1) * 1e6, grid:span(2) * 1e6, sx * 1e6, sy * 1e6))
print(" t (ms)   sigma_x (um)  textbook      sigma_y (um)  textbook      <x> (um)   drift     aspect y/x")
local worst = 0
local times = {}
for _, tms in ipairs{0, 0.5, 1, 2, 3.5} do  -- table rows before the final time
  if tms < tof_ms then times[#times + 1] = tms end
end
times[#times + 1] = tof_ms
local rows = {t = {}, sx = {}, sx_law = {}, sy = {}, sy_law = {}, mx = {}}
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
  for name, v in pairs{t = t, sx = wx, sx_law = ex, sy = wy, sy_law = ey, mx = mx} do
    table.insert(rows[name], v)
  end
  print(string.format("%7.2f   %11.5f  %11.5f   %11.5f  %11.5f   %9.4f  %9.4f   %8.4f",
    tms, wx * 1e6, ex * 1e6, wy * 1e6, ey * 1e6, mx * 1e6, ev * 1e6, wy / wx))
end
print(string.format("largest relative deviation from the textbook width law: %.1e", worst))
print(string.format("norm after %.2f ms of flight: %.15f", flown * 1e3, cloud:norm()))
-- Position-momentum covariance: zero in the trap, then <dp^2> t / m in free
-- flight (free-particle moment equations).  On a copy, so the cloud's own
-- data (and every output below) stay as they were.
do
  local probe = cloud:copy()
  local cxx = probe:position_momentum_covariance()[1][1]
  local vpx = probe:momentum_variance()
  print(string.format("covariance C_xx after %.2f ms: %.6e kg m^2/s (free flight from rest: %.6e)",
    flown * 1e3, cxx, vpx * flown / pf.mass("39K")))
  probe:close()
end

-- ---- outputs ------------------------------------------------------------
local final_wx, final_wy = cloud:position_width()
pf.report("sigma_x_final", final_wx, "m")
pf.report("sigma_y_final", final_wy, "m")
pf.report("aspect_y_over_x_final", final_wy / final_wx, "")
pf.report("width_law_max_rel_deviation", worst, "")
pf.report("tof", flown, "s")

local h5 <close> = pf.h5file("release_tof.h5")
h5:put_wave("trapped", trapped)
h5:put_wave("released", cloud, {parts = "both"})
h5:put_density("released_density", cloud)
h5:put_table("widths", {
  {"t", "s", rows.t}, {"sigma_x", "m", rows.sx}, {"sigma_x_law", "m", rows.sx_law},
  {"sigma_y", "m", rows.sy}, {"sigma_y_law", "m", rows.sy_law}, {"mean_x", "m", rows.mx},
})
h5:put_value("tof", flown, "s")
local h5_path = h5:close()

local csv_path = pf.write_csv("widths.csv", {
  {"t", "s", rows.t}, {"sigma_x", "m", rows.sx}, {"sigma_x_law", "m", rows.sx_law},
  {"sigma_y", "m", rows.sy}, {"sigma_y_law", "m", rows.sy_law}, {"mean_x", "m", rows.mx},
})

local map_path = pf.picture_map("cloud_after_tof.png", cloud,
  {title = string.format("39K cloud after %.1f ms of flight (Kestrel Row)", flown * 1e3)})

-- Widths on a finer time grid for the picture: computed (solid) against the
-- textbook law (dashed).
local tt, cx, lx, cy, ly = {}, {}, {}, {}, {}
local probe = trapped:copy()
local steps = 20
for j = 0, steps do
  local t = flown * j / steps
  if j > 0 then probe:fly(flown / steps) end
  local wx, wy = probe:position_width()
  tt[#tt + 1], cx[#cx + 1], cy[#cy + 1] = t, wx, wy
  lx[#lx + 1], ly[#ly + 1] = width_law(sx, t), width_law(sy, t)
end
probe:close()
local um = function(v) local o = {} for i, x in ipairs(v) do o[i] = x * 1e6 end return o end
local widths_path = pf.picture_lines("widths.png", {
  title = "rms widths during the flight: engine against the textbook law",
  x_name = "t", x_quantity = "time", y_name = "rms width", y_unit = "#gmm", legend = "upper left",
  series = {
    {x = tt, y = um(cx), label = "x, engine"}, {x = tt, y = um(lx), label = "x, textbook", points = true},
    {x = tt, y = um(cy), label = "y, engine"}, {x = tt, y = um(ly), label = "y, textbook", points = true},
  },
})

-- The tight axis alone, as a 1D state: its density over x and t.
local line = pf.grid{points = grid:points(1), span = grid:span(1)}
local cut = pf.ground_state(line, {mass = mass, frequency = p.trap_x, velocity = drift})
local carpet_path = pf.picture_carpet("carpet_x.png", cut, {
  duration = flown, frames = 120, title = "tight-axis profile during the flight (each time scaled to its peak)",
  per_frame = true, x_range = {-30e-6, 45e-6},
})

-- What the engine holds now against its cap (--memory-cap): a check that a
-- larger grid of the same shape would fit before trying it.
local info = pf.run_info()
print(string.format("engine memory in use: %.2f MiB of a %.0f MiB cap", info.memory_used / 2 ^ 20, info.memory_cap / 2 ^ 20))
print("outputs:")
for _, p in ipairs{h5_path, csv_path, map_path, widths_path, carpet_path} do print("  " .. p) end
print("  " .. pf.output_path("manifest.json") .. " (written when the run ends)")
