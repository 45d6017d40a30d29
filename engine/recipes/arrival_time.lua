-- arrival_time.lua - arrival-time distribution of a moving packet at a detector plane
--
-- A Gaussian packet (rms width sigma, mean velocity v) starts at x = 0 and
-- flies towards a detector plane at x = distance.  The recipe samples the
-- probability beyond the plane, P(t), on a uniform time grid (each sample one
-- exact free flight), and takes the arrival-time density as its derivative,
-- Pi(t) = dP/dt, which is the probability current through the plane by the
-- continuity equation (common practice for a plane nothing crosses back).
-- Results: the detected fraction in the window, mean and rms arrival time,
-- the most probable time, and the classical time distance / v.
--
-- Model: free flight only; Pi(t) is the flux, which can be negative for
-- packets with backward momentum components (then it is not a probability
-- density; the recipe reports the negative part).  Outputs are model
-- predictions.
local pf = require "psiflight"
local common = require "psiflight.recipes.common"

local recipe = {name = "arrival_time"}

recipe.parameters = {
  mass = {default = 22.9897692820, unit = "u", help = "particle mass"},
  velocity = {default = 20, unit = "mm/s", help = "mean velocity towards the detector"},
  sigma = {default = 5, unit = "um", help = "rms width of the initial packet"},
  distance = {default = 100, unit = "um", help = "distance from the start to the detector plane"},
  window = {default = 10, unit = "ms", help = "end of the time window (starts at 0)"},
  samples = {default = 200, help = "time samples of P(t) in the window", min = 8, max = 1000000},
  max_points = {default = 16384, help = "largest grid size", min = 64, max = 1048576},
}

function recipe.run(p)
  local m, v, s0 = p.mass, p.velocity, p.sigma
  local k0 = m * v / common.hbar
  local sk = 1 / (2 * s0)
  local tmax = p.window
  local sigma_end = s0 * math.sqrt(1 + (common.hbar * tmax / (2 * m * s0 * s0)) ^ 2)
  -- The grid holds the packet from its start to the end of the window with
  -- 8 widths of margin on each side, so nothing wraps round the periodic box.
  local left = -8 * math.max(s0, sigma_end)
  local right = math.max(p.distance, v * tmax) + 8 * sigma_end
  local span = right - left
  local dx = math.pi / (math.abs(k0) + 10 * sk)
  local n = common.pow2(span / dx)
  if n > p.max_points then
    error(string.format("arrival_time: needs %d grid points; raise max_points or shorten the window", n), 0)
  end
  local grid = pf.grid{points = n, span = span, origin = (left + right) / 2}
  local wave = pf.wave(grid, {
    mass = m,
    position = function(x)
      local a = math.exp(-x * x / (4 * s0 * s0))
      return a * math.cos(k0 * x), a * math.sin(k0 * x)
    end,
  })
  local dt = tmax / p.samples
  local times, beyond = {}, {}
  for j = 0, p.samples do
    if j > 0 then wave:fly(dt) end
    times[j + 1] = j * dt
    beyond[j + 1] = common.probability_between(wave, p.distance, math.huge)
  end
  -- Pi at the sample midpoints (centred differences of P).
  local flux, mids = {}, {}
  local total, mean, second, negative, peak, tpeak = 0, 0, 0, 0, -math.huge, 0
  for j = 1, p.samples do
    local f = (beyond[j + 1] - beyond[j]) / dt
    local tm = (times[j] + times[j + 1]) / 2
    flux[j], mids[j] = f, tm
    total = total + f * dt
    mean = mean + tm * f * dt
    second = second + tm * tm * f * dt
    if f < 0 then negative = negative - f * dt end
    if f > peak then peak, tpeak = f, tm end
  end
  mean = mean / total
  local rms = math.sqrt(math.max(0, second / total - mean * mean))
  return {
    times = times, beyond = beyond, flux = flux, mids = mids, points = n,
    results = {
      detected_fraction = {beyond[#beyond] - beyond[1], ""},
      mean_arrival_time = {mean, "s"},
      rms_arrival_spread = {rms, "s"},
      most_probable_time = {tpeak, "s"},
      classical_time = {p.distance / v, "s"},
      negative_flux_part = {negative, ""},
    },
  }
end

function recipe.main(p)
  local out = recipe.run(p)
  print(string.format("arrival_time: %d grid points, %d samples up to %.4g ms", out.points, #out.flux, p.window * 1e3))
  print("  t (ms)      P beyond plane")
  local every = math.max(1, math.floor(#out.times / 20))
  for j = 1, #out.times, every do
    print(string.format("  %9.5f   %.12f", out.times[j] * 1e3, out.beyond[j]))
  end
  for _, name in ipairs(common.sorted_keys(out.results)) do
    common.report(name, out.results[name][1], out.results[name][2])
  end
  return out
end

return recipe
