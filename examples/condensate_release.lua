-- condensate_release.lua - a cigar-shaped 23Na condensate released from its
-- trap in the (invented) Larkspur Hall sodium lab and imaged after several
-- times of flight.  The cloud interacts while it expands: w:expand follows it
-- on a grid that grows with it (Castin-Dum scaled frame, docs/expansion.md),
-- so one small 3D grid covers the whole flight.  The tight axes expand
-- fastest and the aspect ratio inverts - the hallmark of a released
-- condensate, which a thermal cloud does not show.
--
-- The engine's radii are compared with the Thomas-Fermi scaling law of
-- Castin and Dum (Phys. Rev. Lett. 77, 5315 (1996)): sigma_j(t) / sigma_j(0)
-- = lambda_j(t), which the engine reports beside each image.
--
-- Outputs (docs/outputs.md) in the run's folder (--out DIR): an HDF5 file
-- with the trapped and the released column densities, the radii table and an
-- absorption image per time; a CSV of the radii; PNG pictures of the column
-- density at the last time and of the radii against the scaling law; the
-- run manifest.
--
-- The outputs are model predictions of the zero-temperature Gross-Pitaevskii
-- mean-field equation (contact interaction, no thermal fraction, no losses,
-- the trap switched off instantly, no gravity: the drop would only move the
-- centre), not settings for the lab's lasers or traps; local safety rules and
-- the lab's qualified staff come first.
--
-- Run: build/psiflight run examples/condensate_release.lua [--set atoms=5e5] [--set tof=30ms]
local pf = require "psiflight"
local p = pf.parameters{
  atoms     = {default = 2e5, type = "number", help = "atoms in the condensate", min = 1e3, max = 1e8},
  scattering = {default = 52, type = "number", help = "s-wave scattering length in Bohr radii (52 for 23Na in its lower hyperfine state; value from memory, check your own)", min = 1, max = 500},
  trap_long = {default = 25, unit = "Hz", help = "trap frequency along x (the long axis)", min = 5},
  trap_tight = {default = 250, unit = "Hz", help = "trap frequency along y and z (the tight axes)", min = 50},
  tof       = {default = 20, unit = "ms", help = "last time of flight", min = 1, max = 60},
}

local C = pf.constants                 -- CODATA 2018 (engine constants table)
local hbar, pi = C.hbar, math.pi
local mass = pf.mass("23Na")           -- AME2020 (species table)
local omega = {2 * pi * p.trap_long, 2 * pi * p.trap_tight, 2 * pi * p.trap_tight}
local c = pf.coupling{scattering_length = p.scattering * C.a0, atoms = p.atoms, mass = mass, dim = 3}

-- Thomas-Fermi estimate for the grid: mu = (hbar wbar / 2)(15 N a / a_ho)^(2/5)
-- (Pethick & Smith), radii R_j = sqrt(2 mu / m omega_j^2).
local wbar = (omega[1] * omega[2] * omega[3]) ^ (1 / 3)
local aho = math.sqrt(hbar / (mass * wbar))
local mu = 0.5 * hbar * wbar * (15 * p.atoms * p.scattering * C.a0 / aho) ^ 0.4
local R = {}
for a = 1, 3 do R[a] = math.sqrt(2 * mu / (mass * omega[a] ^ 2)) end
local grid = pf.grid{points = {96, 40, 40}, span = {3 * R[1], 3 * R[2], 3 * R[3]}}
print(string.format("Larkspur Hall: 23Na, N = %.3g, a = %g a0, trap %.4g x %.4g x %.4g Hz", p.atoms, p.scattering,
  p.trap_long, p.trap_tight, p.trap_tight))
print(string.format("Thomas-Fermi: mu = %.2f hbar omega_tight, radii %.2f x %.2f um; grid %d x %d x %d",
  mu / (hbar * omega[2]), R[1] * 1e6, R[2] * 1e6, grid:points(1), grid:points(2), grid:points(3)))

-- The trapped condensate: relax from the Thomas-Fermi profile.
local cloud = pf.thomas_fermi(grid, {mass = mass, radius = R})
local trap = pf.potential(grid, function(x, y, z)
  return 0.5 * mass * (omega[1] ^ 2 * x * x + omega[2] ^ 2 * y * y + omega[3] ^ 2 * z * z)
end)
local _, ground = cloud:relax{potential = trap, g = c.g, tolerance = 1e-9}
print(string.format("ground state: mu = %.3f hbar omega_tight (Thomas-Fermi %.3f), %d steps", ground.chemical_potential / (hbar * omega[2]),
  mu / (hbar * omega[2]), ground.steps))
local trapped = cloud:copy()
local s0 = {cloud:position_width()}

-- Release and image.
local times = {}
for _, tms in ipairs{1, 2, 3, 5, 7.5, 10, 15} do if tms < p.tof * 1e3 then times[#times + 1] = tms * 1e-3 end end
times[#times + 1] = p.tof
local cam = pf.camera{pixels = {64, 64}, pitch = 4e-6, imaging_axis = 3}
local h5 <close> = pf.h5file("condensate_release.h5")
h5:put_density("trapped_column_density", trapped)
local rows = {t = {0}, sx = {s0[1]}, sy = {s0[2]}, lx = {s0[1]}, ly = {s0[2]}, aspect = {s0[2] / s0[1]}}
print(" t (ms)   sigma_x (um)  sigma_y (um)  aspect y/x   sigma/sigma0 - lambda (x, y)   steps")
local flown = 0
for _, t in ipairs(times) do
  local _, info = cloud:expand(t - flown, {g = c.g, omega = omega})
  flown = t
  local sx, sy = cloud:position_width()
  local dx, dy = sx / s0[1] / info.lambda[1] - 1, sy / s0[2] / info.lambda[2] - 1
  print(string.format("%7.2f   %11.3f   %11.3f   %9.4f   %+10.2e %+10.2e   %5d%s", t * 1e3, sx * 1e6, sy * 1e6, sy / sx,
    dx, dy, info.steps, info.handed_over and "  (free after handover)" or ""))
  for k, v in pairs{t = t, sx = sx, sy = sy, lx = info.lambda[1] * s0[1], ly = info.lambda[2] * s0[2], aspect = sy / sx} do
    table.insert(rows[k], v)
  end
  local shot = cam:absorb(cloud, {atoms = p.atoms, cross_section = pf.resonant_cross_section(589.0e-9)})
  h5:put_table(string.format("absorption_%gms", t * 1e3), {{"od", "", shot.od}})
end
h5:put_density("released_column_density", cloud)
h5:put_table("radii", {
  {"t", "s", rows.t}, {"sigma_x", "m", rows.sx}, {"sigma_y", "m", rows.sy},
  {"sigma_x_scaling_law", "m", rows.lx}, {"sigma_y_scaling_law", "m", rows.ly}, {"aspect_y_over_x", "", rows.aspect},
})
local h5_path = h5:close()
local csv_path = pf.write_csv("radii.csv", {
  {"t", "s", rows.t}, {"sigma_x", "m", rows.sx}, {"sigma_y", "m", rows.sy},
  {"sigma_x_scaling_law", "m", rows.lx}, {"sigma_y_scaling_law", "m", rows.ly},
})
local map_path = pf.picture_map("cloud_after_release.png", cloud,
  {title = string.format("23Na column density after %.0f ms (Larkspur Hall)", flown * 1e3)})
local um = function(v) local o = {} for i, x in ipairs(v) do o[i] = x * 1e6 end return o end
local radii_path = pf.picture_lines("radii.png", {
  title = "rms radii after release: engine against the Castin-Dum law",
  x_name = "t", x_quantity = "time", y_name = "rms radius", y_unit = "#gmm", legend = "upper left",
  series = {
    {x = rows.t, y = um(rows.sx), label = "x (long), engine"}, {x = rows.t, y = um(rows.lx), label = "x, scaling law", points = true},
    {x = rows.t, y = um(rows.sy), label = "y (tight), engine"}, {x = rows.t, y = um(rows.ly), label = "y, scaling law", points = true},
  },
})
pf.report("sigma_x_final", rows.sx[#rows.sx], "m")
pf.report("sigma_y_final", rows.sy[#rows.sy], "m")
pf.report("aspect_y_over_x_final", rows.aspect[#rows.aspect], "")
print("outputs:")
for _, path in ipairs{h5_path, csv_path, map_path, radii_path} do print("  " .. path) end
