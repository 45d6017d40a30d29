-- drop_tof_3d.lua - a 87Rb cloud released from a crossed dipole trap in the
-- (invented) Hollowmere cold-atom lab falls under gravity for 25 ms and is
-- imaged from the side.  The state lives on a 128^3 grid that moves with the
-- cloud (docs/frames.md): the grid holds the cloud, never the 3 mm drop, and
-- every figure and file is in lab coordinates.
--
-- Axes: x horizontal, y vertical (gravity along -y), z the camera's line of
-- sight, so the picture shows the column density over x and y.
--
-- The model: one non-interacting atom in the trap's ground state, then free
-- fall under standard gravity (no interactions, no residual fields, no
-- magnetic forces).  The outputs are model predictions, not settings for the
-- lab's lasers or traps: local safety rules and the lab's qualified staff
-- come first.
--
-- Outputs (in the run's folder): drop.h5 (the lab-frame density of the cloud
-- in the trap and after the drop, with lab axes), drop.png (the side image)
-- and the manifest.
--
-- Run: build/psiflight run examples/drop_tof_3d.lua [--set tof=15ms] [--set trap_y=300Hz]
local pf = require "psiflight"
local p = pf.parameters{
  tof    = {default = 25, unit = "ms", help = "time of flight after release", min = 1, max = 60},
  trap_x = {default = 180, unit = "Hz", help = "trap frequency along x", min = 20},
  trap_y = {default = 240, unit = "Hz", help = "trap frequency along y (vertical)", min = 20},
  trap_z = {default = 60, unit = "Hz", help = "trap frequency along z (the camera axis)", min = 10},
  points = {default = 128, help = "grid points per axis of the co-moving grid", min = 112, max = 256},
}

local hbar = pf.constants.hbar          -- CODATA 2018 (engine constants table)
local g_n = pf.constants.g_n            -- standard gravity (engine constants table)
local mass = pf.mass("87Rb")            -- AME2020 (engine species table)
local omega = {2 * math.pi * p.trap_x, 2 * math.pi * p.trap_y, 2 * math.pi * p.trap_z}
local tof = p.tof

-- Ground-state widths sqrt(hbar / 2 m omega) and the free width law
-- (harmonic oscillator and free Gaussian, textbook).
local s0 = {}
for a = 1, 3 do s0[a] = math.sqrt(hbar / (2 * mass * omega[a])) end
local function width_law(a, t) return s0[a] * math.sqrt(1 + (hbar * t / (2 * mass * s0[a] ^ 2)) ^ 2) end

print(string.format("87Rb released from a %.0f x %.0f x %.0f Hz trap (Hollowmere); drop %.1f ms under g = %.5f m/s^2",
  p.trap_x, p.trap_y, p.trap_z, tof * 1e3, g_n))

-- The grid advisor sizes the co-moving grid for a scaled flight of the
-- cloud's expansion (gravity needs no room: the frame carries the drop).
local advice = pf.grid_advice{mass = mass, time = tof, width = s0}
local n = math.floor(p.points)
local grid = pf.grid{points = {n, n, n}, span = advice.scaled.input.span}
local cloud = pf.ground_state(grid, {mass = mass, omega = omega})
local out <close> = pf.h5file("drop.h5")
out:put_density("trapped", cloud)

-- The drop: gravity goes into the frame, the cloud's expansion onto the
-- grid (the engine picks the flight method and reports it).
local gravity = {0, -g_n, 0}
local _, report = cloud:fly_long(tof, {acceleration = gravity})
local x, y, z = cloud:position_mean()
local wx, wy, wz = cloud:position_width()
print(string.format("flight method: %s; co-moving grid now %.1f x %.1f x %.1f um",
  report.method, cloud:grid():span(1) * 1e6, cloud:grid():span(2) * 1e6, cloud:grid():span(3) * 1e6))
print(string.format("centre (lab): x = %.6f mm, y = %.6f mm, z = %.6f mm   (-g t^2/2 = %.6f mm)",
  x * 1e3, y * 1e3, z * 1e3, -0.5 * g_n * tof * tof * 1e3))
print(" axis   width (um)   textbook (um)")
for a, w in ipairs{wx, wy, wz} do
  print(string.format("  %s   %10.4f   %10.4f", ({"x", "y", "z"})[a], w * 1e6, width_law(a, tof) * 1e6))
end
-- The fall velocity is the frame's (a scaled grid holds positions exactly but
-- not the expansion's steep phase, so momentum is not measured on it:
-- docs/long-flights.md).
local frame = cloud:frame()
print(string.format("frame: fell %.6f mm, vertical velocity %.6f m/s (-g t = %.6f m/s)",
  frame.position[2] * 1e3, frame.velocity[2], -g_n * tof))

out:put_density("dropped", cloud)
out:put_value("tof", tof, "s")
out:put_value("gravity", g_n, "m/s^2")
out:close()
pf.picture_map("drop.png", cloud, {title = string.format("87Rb after a %.0f ms drop (side view)", tof * 1e3)})
pf.report("centre_y", y, "m")
pf.report("width_x", wx, "m")
pf.report("width_y", wy, "m")
pf.report("width_z", wz, "m")
