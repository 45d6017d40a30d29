-- recapture_after_drop.lua - the (invented) Tamsworth transport test: a 87Rb
-- cloud is released from a tight trap, falls for a millisecond, and a second,
-- weaker trap centred below the release point catches it again.  The cloud
-- falls in its own frame (docs/frames.md); the recapture trap and gravity are
-- given in lab coordinates, and w:evolve folds the frame's momentum onto the
-- grid so the trap acts where it stands in the lab.  The script prints the
-- cloud's centre against the classical orbit in the tilted trap (it sags by
-- g / omega^2 below the trap centre) and the lab energy, which the trap and
-- gravity conserve.
--
-- Axes: x horizontal, y vertical (gravity along -y).
--
-- The model: one non-interacting atom, harmonic traps switched instantly,
-- standard gravity, no other fields.  The outputs are model predictions, not
-- settings for the lab's lasers or traps: local safety rules and the lab's
-- qualified staff come first.
--
-- Outputs (in the run's folder): recapture.h5 (lab-frame densities at the
-- release, at the recapture and at the end; the table of centre and energy),
-- recapture.csv (the same table), recapture_orbit.png (centre against the
-- classical orbit), recapture_end.png (the cloud at the end), the manifest.
--
-- Run: build/psiflight run examples/recapture_after_drop.lua [--set drop=0.8ms] [--set trap_depth=12um]
local pf = require "psiflight"
local p = pf.parameters{
  drop       = {default = 1, unit = "ms", help = "free fall between release and recapture", min = 0.1, max = 1.5},
  hold       = {default = 5, unit = "ms", help = "time in the recapture trap", min = 0.5, max = 20},
  release_x  = {default = 200, unit = "Hz", help = "release trap frequency along x", min = 50},
  release_y  = {default = 300, unit = "Hz", help = "release trap frequency along y (vertical)", min = 50},
  trap       = {default = 200, unit = "Hz", help = "recapture trap frequency (both axes)", min = 100, max = 400},
  trap_depth = {default = 10, unit = "um", help = "recapture trap centre below the release point", min = 0, max = 20},
  samples    = {default = 20, help = "samples of centre and energy during the hold", min = 2, max = 200},
}

local hbar = pf.constants.hbar          -- CODATA 2018 (engine constants table)
local g_n = pf.constants.g_n            -- standard gravity (engine constants table)
local mass = pf.mass("87Rb")            -- AME2020 (engine species table)
local omega = 2 * math.pi * p.trap
local yc = -p.trap_depth
local gravity = {0, -g_n}

-- The co-moving grid: 16 um across (48 points), and along y the room the orbit needs
-- below the point where the cloud is caught, at a spacing that holds the
-- fall's momentum m g t / hbar once it is folded onto the grid.
local fall_k = mass * g_n * p.drop / hbar
local sag = g_n / omega ^ 2
local y1, v1 = -0.5 * g_n * p.drop ^ 2, -g_n * p.drop
local ye = yc - sag
local amplitude = math.sqrt((y1 - ye) ^ 2 + (v1 / omega) ^ 2)
local low, high = ye - amplitude - 8e-6 - y1, math.max(ye + amplitude, y1) + 8e-6 - y1 -- grid coordinates
local k_orbit = fall_k + mass * omega * amplitude / hbar
local dy = math.pi / (1.25 * k_orbit)
local ny = 2 * math.ceil((high - low) / dy / 2)
local grid = pf.grid{points = {48, ny}, span = {16e-6, ny * dy}, origin = {0, 0.5 * (low + high)}}
print(string.format("Tamsworth recapture: 87Rb, drop %.2f ms, trap %.0f Hz centred %.1f um below the release; grid 48 x %d",
  p.drop * 1e3, p.trap, p.trap_depth * 1e6, ny))

local cloud = pf.ground_state(grid, {mass = mass, omega = {2 * math.pi * p.release_x, 2 * math.pi * p.release_y},
                                     center = {0, 0}})
local out <close> = pf.h5file("recapture.h5")
out:put_density("released", cloud)

-- The drop: gravity in the frame, the grid holds the cloud only.
cloud:fly(p.drop, {acceleration = gravity})
out:put_density("caught", cloud)

-- The recapture trap in lab coordinates, sampled once at the lab positions
-- of this wave's grid (pf.potential(w, f)), so every evolve call below reuses
-- its exponentials.
local trap = pf.potential(cloud, function(x, y) return 0.5 * mass * omega ^ 2 * (x * x + (y - yc) ^ 2) end)
local rows = {t = {}, y = {}, y_orbit = {}, energy = {}}
local function sample(t)
  local _, y = cloud:position_mean()
  -- The classical orbit in the tilted trap: about ye with the state at the catch.
  local orbit = ye + (y1 - ye) * math.cos(omega * t) + v1 / omega * math.sin(omega * t)
  rows.t[#rows.t + 1], rows.y[#rows.y + 1], rows.y_orbit[#rows.y_orbit + 1] = t, y, orbit
  rows.energy[#rows.energy + 1] = cloud:energy{potential = trap, acceleration = gravity}
end
sample(0)
local step = p.hold / p.samples
for i = 1, p.samples do
  cloud:evolve(step, {potential = trap, acceleration = gravity, dt = step / math.ceil(step / 2e-6)})
  sample(i * step)
end
-- The trap object kept the tilted table V - m g.y and its exponentials from
-- the first evolve call on (docs/protocols.md).
local kept = trap:cache_status()
print(string.format("tilted trap table: built %d time(s), reused in %d further evolve calls",
  kept.tilted_builds, kept.tilted_reuses))
print("   t (ms)    centre y (um)   classical orbit (um)   lab energy / (hbar omega)")
for i = 1, #rows.t do
  print(string.format("  %7.3f   %12.5f   %12.5f          %14.9f", rows.t[i] * 1e3, rows.y[i] * 1e6,
    rows.y_orbit[i] * 1e6, rows.energy[i] / (hbar * omega)))
end
local drift = 0
for i = 2, #rows.energy do drift = math.max(drift, math.abs(rows.energy[i] - rows.energy[1])) end
print(string.format("energy change during the hold: %.3e of hbar omega (conserved by the trap and gravity; the split-step error)",
  drift / (hbar * omega)))

out:put_density("held", cloud)
local columns = {{"t", "s", rows.t}, {"centre_y", "m", rows.y}, {"classical_orbit_y", "m", rows.y_orbit},
                 {"lab_energy", "J", rows.energy}}
out:put_table("orbit", columns)
local h5_path = out:close()
local csv_path = pf.write_csv("recapture.csv", columns)
local um = function(v) local o = {} for i, x in ipairs(v) do o[i] = x * 1e6 end return o end
local orbit_path = pf.picture_lines("recapture_orbit.png", {
  title = "cloud centre in the recapture trap (Tamsworth)", x_name = "t", x_quantity = "time",
  y_name = "centre y", y_unit = "#gmm", legend = "lower right",
  series = {{x = rows.t, y = um(rows.y), label = "engine"},
            {x = rows.t, y = um(rows.y_orbit), label = "classical orbit", points = true}},
})
local map_path = pf.picture_map("recapture_end.png", cloud,
  {title = string.format("87Rb after %.0f ms in the recapture trap", p.hold * 1e3)})
pf.report("centre_y_final", rows.y[#rows.y], "m")
pf.report("energy_change", drift, "J")
print("outputs:")
for _, path in ipairs{h5_path, csv_path, orbit_path, map_path} do print("  " .. path) end
