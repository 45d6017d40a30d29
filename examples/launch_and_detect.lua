-- launch_and_detect.lua - one protocol, two detectors, in the (invented)
-- Saltmarsh Row potassium lab.  The coldest part of a 41K cloud, modelled as
-- the ground state of a 2 pi x (150, 110) Hz trap, is released while being
-- launched at 4 mm/s along x:
--   * an absorption image is taken after 10 ms of flight (camera with
--     3.2 um object-plane pixels, 2.5 um optical resolution, imaging along z
--     - the 2D state is the column density, exact for a separable trap -,
--     resonant cross-section of the 766.70 nm D2 line, atom shot noise);
--   * a thin light sheet 60 um downstream counts atoms as they cross it
--     (40 % efficiency): an arrival-time histogram of detected atoms.
-- Then the same launch for a thermal cloud at 20 nK (Boltzmann-weighted trap
-- eigenstates, 1D along the launch axis) shows how temperature spreads the
-- arrival times.
--
-- The numbers are model predictions: ideal free flight (no gravity, no
-- interactions, no residual fields), absorption by Beer-Lambert with probe
-- saturation neglected, detection by independent atoms with Poisson noise.
-- They are not settings for lasers or detectors: local laser-safety rules
-- and the lab's qualified staff come first.
--
-- Run: build/psiflight run examples/launch_and_detect.lua [--set image=8ms] [--set temperature=30nK]
local pf = require "psiflight"
local p = pf.parameters{
  image       = {default = 10, unit = "ms", help = "flight time before the absorption image"},
  launch      = {default = 4, unit = "mm/s", help = "launch velocity along x"},
  sheet       = {default = 60, unit = "um", help = "light-sheet position downstream of the trap"},
  atoms       = {default = 5000, type = "number", help = "atoms in the cloud", min = 1},
  efficiency  = {default = 0.4, help = "light-sheet detection efficiency", min = 0, max = 1},
  temperature = {default = 20, unit = "nK", help = "temperature of the thermal cloud"},
}

local k41 = pf.species("41K")
local omega = {2 * math.pi * 150, 2 * math.pi * 110}
local launch = p.launch                          -- m/s along x
local sheet = p.sheet                            -- light-sheet position (m)
local image_ms = p.image * 1e3
local atoms, efficiency = p.atoms, p.efficiency

-- Arrival events: Poisson count, times drawn from the (non-negative) flux by
-- inverting its cumulative integral.
local function detect(arr, expected, rng)
  local n = math.floor(rng:poisson(expected))
  local cdf = {0}
  for k = 2, #arr.flux do
    cdf[k] = cdf[k - 1] + 0.5 * (math.max(arr.flux[k], 0) + math.max(arr.flux[k - 1], 0)) * (arr.time[k] - arr.time[k - 1])
  end
  local times = {}
  for e = 1, n do
    local u = rng:uniform() * cdf[#cdf]
    local lo, hi = 1, #cdf
    while hi - lo > 1 do
      local mid = (lo + hi) // 2
      if cdf[mid] <= u then lo = mid else hi = mid end
    end
    times[e] = arr.time[lo] + (u - cdf[lo]) / (cdf[hi] - cdf[lo]) * (arr.time[hi] - arr.time[lo])
  end
  return times
end

local function spread(times)
  local m, v = 0, 0
  for _, t in ipairs(times) do m = m + t end
  m = m / #times
  for _, t in ipairs(times) do v = v + (t - m) ^ 2 end
  return m, math.sqrt(v / #times)
end

local function show(h)
  local maxc = 1
  for _, c in ipairs(h.counts) do maxc = math.max(maxc, c) end
  for b, c in ipairs(h.counts) do
    print(string.format("  %5.1f ms %6d %s", h.centers[b] * 1e3, c, string.rep("#", math.floor(50 * c / maxc + 0.5))))
  end
end

local grid = pf.grid{points = {1024, 256}, span = {280e-6, 180e-6}, origin = {100e-6, 0}}
local cloud = pf.ground_state(grid, {mass = k41.mass, omega = omega, velocity = {launch, 0}})
local sx0, sy0 = cloud:position_width()
print(string.format("Saltmarsh Row: %s, trap 2 pi x (%.0f, %.0f) Hz, sigma = %.3f x %.3f um, launched at %.1f mm/s",
  k41.label, omega[1] / (2 * math.pi), omega[2] / (2 * math.pi), sx0 * 1e6, sy0 * 1e6, launch * 1e3))

-- Absorption image after image_ms, on a copy (imaging is destructive).
local shot = cloud:copy():fly(image_ms * 1e-3)
local sx, sy = shot:position_width()
local cam = pf.camera{pixels = {32, 32}, pitch = 3.2e-6, psf = 2.5e-6, corner = {launch * image_ms * 1e-3 - 51.2e-6, -51.2e-6}}
local sigma = pf.resonant_cross_section(766.70e-9)
local img = cam:absorb(shot, {atoms = atoms, cross_section = sigma, noise = true, seed = 17})
local peak, ip = 0, 1
for i, od in ipairs(img.od) do if od > peak then peak, ip = od, i end end
local px, py = (ip - 1) // 32 + 1, (ip - 1) % 32 + 1
print(string.format("\nabsorption image at %.1f ms: cloud sigma = %.2f x %.2f um, centre x = %.2f um (launch x t: %.2f um)",
  image_ms, sx * 1e6, sy * 1e6, shot:position_mean() * 1e6, launch * image_ms * 1e-3 * 1e6))
print(string.format("cross-section 3 lambda^2/2pi = %.4e m^2; peak OD %.3f at pixel (%d, %d) = (%.1f, %.1f) um",
  sigma, peak, px, py, img.axes_um[1][px], img.axes_um[2][py]))
print(string.format("atoms counted from the image: %.0f of %.0f (atom shot noise; probe saturation neglected)",
  img.atoms_recovered, atoms))
print("OD along x through the peak (every 2nd pixel):")
local line = {}
for i = 1, 32, 2 do line[#line + 1] = string.format("%.2f", img.od[(i - 1) * 32 + py]) end
print("  " .. table.concat(line, " "))
-- The absorption image as files: optical depth per pixel (rows along y).
local od_rows = {}
for iy = 1, 32 do
  od_rows[iy] = {}
  for ix = 1, 32 do od_rows[iy][ix] = img.od[(ix - 1) * 32 + iy] end
end
local od_axes = {x = img.axes[1], y = img.axes[2], value_name = "optical depth"}
local h5 <close> = pf.h5file("launch_and_detect.h5")
h5:put_wave("cloud_at_image", shot)
h5:put_image("absorption_od", od_rows, od_axes)
pf.picture_map("absorption_od.png", od_rows, {title = string.format("41K absorption image at %.1f ms (optical depth)", image_ms),
  x = img.axes[1], y = img.axes[2], value_name = "optical depth"})
shot:close()

-- Arrival times at the light sheet: flux through the plane x = sheet.
local arr = cloud:arrival_times{axis = 1, at = sheet, from = 0, to = 30e-3, steps = 301}
local n_exp = atoms * efficiency * arr.arrived
local times = detect(arr, n_exp, pf.random{stream = 6})
local tm, ts = spread(times)
print(string.format("\nlight sheet at x = %.0f um: %.4f of the cloud crosses in 30 ms; %d atoms detected (expected %.0f)",
  sheet * 1e6, arr.arrived, #times, n_exp))
print(string.format("arrival time %.3f +- %.3f ms (L / v = %.3f ms); histogram, 1.5 ms bins:", tm * 1e3, ts * 1e3,
  sheet / launch * 1e3))
local hist = pf.histogram(times, {from = 0, to = 30e-3, bins = 20})
show(hist)
h5:put_table("arrival_flux", {{"t", "s", arr.time}, {"flux", "1/s", arr.flux}})
h5:put_table("arrival_histogram", {{"t_center", "s", hist.centers}, {"atoms", "", hist.counts}})
pf.write_csv("arrival_histogram.csv", {{"t_center", "s", hist.centers}, {"atoms", "", hist.counts}})
pf.picture_lines("arrival_histogram.png", {
  title = "detected arrival times at the light sheet (1.5 ms bins)", x_name = "t", x_quantity = "time",
  y_name = "atoms per bin", legend = "upper right",
  series = {{x = hist.centers, y = hist.counts, label = "detected atoms", points = true}},
})
cloud:close()

-- The same launch for a thermal cloud at 20 nK along x: the thermal state as
-- Boltzmann-weighted trap eigenstates (levels down to weight 1e-6), exact in
-- its density; the grid resolves the highest level kept.
local T = p.temperature
local g1 = pf.grid{points = 4096, span = 400e-6, origin = {140e-6}}
local hot = pf.thermal{grid = g1, mass = k41.mass, omega = omega[1], temperature = T, drift = launch,
                       method = "eigenstates"}
local harr = hot:arrival_times{axis = 1, at = sheet, from = 0, to = 40e-3, steps = 401}
local htimes = detect(harr, atoms * efficiency * harr.arrived, pf.random{stream = 7})
local hm, hs = spread(htimes)
print(string.format("\nthermal cloud at %.0f nK (%d eigenstates, width %.3f um in the trap): %.4f crosses in 40 ms",
  T * 1e9, hot:count(), hot:position_width() * 1e6, harr.arrived))
print(string.format("arrival time %.3f +- %.3f ms, %d atoms detected; histogram, 2 ms bins:", hm * 1e3, hs * 1e3, #htimes))
show(pf.histogram(htimes, {from = 0, to = 40e-3, bins = 20}))
h5:put_table("thermal_arrival_flux", {{"t", "s", harr.time}, {"flux", "1/s", harr.flux}})
h5:close()
hot:close()
