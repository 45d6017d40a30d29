-- distributed_release.lua - a 87Rb condensate in the (invented) Tarnbrook
-- Quay lab's elongated trap, found by imaginary-time relaxation and then
-- released for a time of flight, its interaction energy driving the
-- expansion on a grid that stretches with the cloud.  The same script
-- runs as one process or spread over MPI ranks: pf.setup{distribute = true}
-- splits the 3D grid into slabs along x when the runner was started by
-- mpirun (docs/distributed.md), and every figure and file is the same to
-- rounding.
--
--   build/psiflight run examples/distributed_release.lua
--   mpirun -n 4 build/psiflight run examples/distributed_release.lua --out run4
--
-- The model: the zero-temperature Gross-Pitaevskii equation (contact
-- interaction, no thermal fraction, no losses, no gravity, the trap
-- switched off at once).  Outputs are model predictions, not settings for
-- the lab's lasers or traps; local safety rules and the lab's qualified
-- staff come first.
--
-- Outputs (in the run's folder): release.h5 (the trapped and the released
-- density, and the widths table), widths.png (rms widths against time) and
-- the manifest.
local pf = require "psiflight"
pf.setup{distribute = true}
local p = pf.parameters{
  atoms      = {default = 5e3, type = "number", help = "atoms in the condensate", min = 100, max = 1e7},
  scattering = {default = 100, type = "number", help = "s-wave scattering length in Bohr radii (about 100 for 87Rb; value from memory, check your own)", min = 1, max = 500},
  trap_long  = {default = 40, unit = "Hz", help = "trap frequency along x (the long, split axis)", min = 5},
  trap_tight = {default = 160, unit = "Hz", help = "trap frequency along y and z", min = 20},
  release    = {default = 15, unit = "ms", help = "time of flight after release", min = 0.5, max = 40},
}
local C = pf.constants                          -- CODATA 2018 (engine constants table)
local mass = pf.mass("87Rb")                    -- AME2020 (engine species table)
local omega = {2 * math.pi * p.trap_long, 2 * math.pi * p.trap_tight, 2 * math.pi * p.trap_tight}
local c = pf.coupling{scattering_length = p.scattering * C.a0, atoms = p.atoms, mass = mass, dim = 3}
-- Trap ground-state widths sqrt(hbar / 2 m omega) (harmonic oscillator)
-- size the grid: the condensate is a few times wider, the release more.
local s = {}
for a = 1, 3 do s[a] = math.sqrt(C.hbar / (2 * mass * omega[a])) end
local grid = pf.grid{points = {64, 36, 36}, span = {30 * s[1], 40 * s[2], 40 * s[3]}}
local info = pf.mpi_info()
print(string.format("Tarnbrook Quay: 87Rb, N = %.3g, a = %g a0, trap %g x %g x %g Hz; grid 64 x 36 x 36 on %d rank(s)",
  p.atoms, p.scattering, p.trap_long, p.trap_tight, p.trap_tight, info.distribute and info.ranks or 1))

-- Sampled once into an object: on several ranks each keeps the values (and
-- the split-step exponentials) of its own planes only.
local trap = pf.potential(grid, function(x, y, z)
  return 0.5 * mass * (omega[1] ^ 2 * x * x + omega[2] ^ 2 * y * y + omega[3] ^ 2 * z * z)
end)
-- Start from a Gaussian 1.5 to 2 times the trap's ground-state widths (the
-- interactions widen the condensate beyond it) and relax.
local cloud = pf.gaussian(grid, {mass = mass, width = {1.5 * s[1], 2 * s[2], 2 * s[3]}})
local _, ground = cloud:relax{potential = trap, g = c.g, tolerance = 1e-8}
print(string.format("ground state: mu = %.3f hbar omega_tight after %d steps", ground.chemical_potential / (C.hbar * omega[2]),
  ground.steps))
local h5 <close> = pf.h5file("release.h5")
h5:put_density("trapped_density", cloud)
-- The peak density at the trap centre, N |psi|^2 at the grid point x = 0
-- (index n/2 + 1 on each axis): the rank holding it reads it for all.
local centre = cloud:psi(grid:points(1) // 2 + 1, grid:points(2) // 2 + 1, grid:points(3) // 2 + 1)
print(string.format("peak density %.4g atoms/um^3", p.atoms * (centre.re ^ 2 + centre.im ^ 2) * 1e-18))

local rows = {t = {0}, sx = {}, sy = {}}
rows.sx[1], rows.sy[1] = cloud:position_width()
local flown, t_end = 0, p.release
-- The release: w:expand evolves the mean field in the cloud's scaled frame,
-- on a grid that stretches with the cloud (docs/expansion.md), so a long
-- time of flight fits the trap's grid; each call continues the last one's
-- frame.  Split over ranks, the grid keeps its slabs while it stretches.
for _, t in ipairs({0.25 * t_end, 0.5 * t_end, 0.75 * t_end, t_end}) do
  cloud:expand(t - flown, {g = c.g})   -- the trap is off; release frequencies from the state
  flown = t
  local sx, sy = cloud:position_width()
  rows.t[#rows.t + 1], rows.sx[#rows.sx + 1], rows.sy[#rows.sy + 1] = t, sx, sy
  print(string.format("t = %5.2f ms: rms widths %.3f um (x), %.3f um (y); grid %.0f x %.0f um", t * 1e3, sx * 1e6,
    sy * 1e6, cloud:grid():span(1) * 1e6, cloud:grid():span(2) * 1e6))
end
h5:put_density("released_density", cloud)
h5:put_table("widths", {{"t", "s", rows.t}, {"sigma_x", "m", rows.sx}, {"sigma_y", "m", rows.sy}})
local h5_path = h5:close()
local um = function(v) local o = {} for i, x in ipairs(v) do o[i] = x * 1e6 end return o end
local png = pf.picture_lines("widths.png", {
  title = "87Rb condensate after release (Tarnbrook Quay)",
  x_name = "t", x_quantity = "time", y_name = "rms width", y_unit = "#gmm", legend = "upper left",
  series = {{x = rows.t, y = um(rows.sx), label = "x (long)"}, {x = rows.t, y = um(rows.sy), label = "y (tight)"}},
})
pf.report("sigma_y_final", rows.sy[#rows.sy], "m")
print("outputs:")
for _, path in ipairs{h5_path, png} do print("  " .. path) end
