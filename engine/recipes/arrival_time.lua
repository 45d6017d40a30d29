-- arrival_time.lua - arrival-time distribution of a moving packet at a detector plane
--
-- A Gaussian packet (rms width sigma, mean velocity v; the engine's
-- pf.gaussian) starts at x = 0 and flies towards a detector plane at
-- x = distance.  The arrival-time density is the probability current through
-- the plane, Pi(t) = J(distance, t) (common practice for a plane nothing
-- crosses back), measured natively by w:arrival_times on the band-limited
-- state, on a fine time grid (SUBSTEPS per sample interval, set so that the
-- fastest resolved wave moves at most FINE_CELLS grid cells per sub-step).
-- The probability beyond the plane is P(t) = P(0) + integral_0^t Pi, with
-- P(0) from w:beyond and the integral by Simpson's rule over the sub-steps
-- (the continuity equation: dP/dt = Pi for a state that does not wrap
-- around).  Results: the detected fraction in the window, mean and rms
-- arrival time, the most probable time, and the classical time distance / v.
--
-- Model: free flight only; Pi(t) is the flux, which can be negative for
-- packets with backward momentum components (then it is not a probability
-- density; the recipe reports the negative part).  Outputs are model
-- predictions.
local pf = require "psiflight"
local common = require "psiflight.recipes.common"

local recipe = {name = "arrival_time"}

recipe.parameters = {
  mass = {default = common.mass_u("23Na"), unit = "u", help = "particle mass"},
  velocity = {default = 20, unit = "mm/s", help = "mean velocity towards the detector"},
  sigma = {default = 5, unit = "um", help = "rms width of the initial packet"},
  distance = {default = 100, unit = "um", help = "distance from the start to the detector plane"},
  window = {default = 10, unit = "ms", help = "end of the time window (starts at 0)"},
  samples = {default = 200, help = "time samples of P(t) in the window", min = 8, max = 1000000},
  max_points = {default = 16384, help = "largest grid size", min = 64, max = 1048576},
}

-- Grid cells the fastest resolved wave crosses per sub-step of the flux
-- series (smaller: finer time grid, more accurate P(t) and moments).
recipe.FINE_CELLS = 0.5

function recipe.run(p)
  common.check_params(recipe, p)
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
  local wave = pf.gaussian(grid, {mass = m, width = s0, wavenumber = k0})
  -- Sub-steps: the fastest wave the grid holds, v_max = hbar (pi / dx) / m,
  -- moves at most FINE_CELLS cells per sub-step; an even count per sample
  -- interval, so Simpson's rule closes on every sample time and the sample
  -- midpoints are sub-step times.
  local dt = tmax / p.samples
  local vmax = common.hbar * (math.pi / grid:spacing(1)) / m
  local sub = 2 * math.max(1, math.ceil(dt * vmax / (2 * recipe.FINE_CELLS * grid:spacing(1))))
  local h = dt / sub
  if p.samples * sub + 1 > 1e7 then
    error(string.format("arrival_time: needs %d flux times (%d per sample); use fewer samples or a shorter window",
      p.samples * sub + 1, sub), 0)
  end
  local series = wave:arrival_times{axis = 1, at = p.distance, from = 0, to = tmax, steps = p.samples * sub + 1}
  local f = series.flux -- f[i] = Pi((i - 1) h)
  -- Simpson's rule over sub-steps i0 .. i0 + 2q (1-based, even count), of
  -- g(i) (a function of the sub-step index).
  local function simpson(i0, i1, g)
    local acc = g(i0) + g(i1)
    for i = i0 + 1, i1 - 1 do acc = acc + ((i - i0) % 2 == 1 and 4 or 2) * g(i) end
    return acc * h / 3
  end
  -- P(0): the engine's probability beyond the plane on the band-limited
  -- state; its cost grows as n^2, so very large grids count the grid points
  -- beyond the plane instead (a region probability).
  local start_beyond = n <= 65536 and wave:beyond{axis = 1, at = p.distance}
    or wave:probability_in(pf.half_space{point = {p.distance}, normal = {1}})
  local times, beyond = {0}, {start_beyond}
  local flux, mids = {}, {}
  for j = 1, p.samples do
    local i0 = (j - 1) * sub + 1
    times[j + 1] = j * dt
    beyond[j + 1] = beyond[j] + simpson(i0, i0 + sub, function(i) return f[i] end)
    mids[j], flux[j] = (j - 0.5) * dt, f[i0 + sub // 2]
  end
  local last = p.samples * sub + 1
  local tof = function(i) return (i - 1) * h end
  local total = simpson(1, last, function(i) return f[i] end)
  local mean = simpson(1, last, function(i) return tof(i) * f[i] end)
  local second = simpson(1, last, function(i) return tof(i) ^ 2 * f[i] end)
  local negative = simpson(1, last, function(i) return math.max(0, -f[i]) end)
  local peak, tpeak = -math.huge, 0
  for i = 1, last do
    if f[i] > peak then peak, tpeak = f[i], tof(i) end
  end
  mean = mean / total
  local rms = math.sqrt(math.max(0, second / total - mean * mean))
  return {
    times = times, beyond = beyond, flux = flux, mids = mids, points = n, substeps = sub,
    fine = {time = series.time, flux = f},
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
  common.write_results(recipe.name, out, {
    tables = {
      {"flux", {{"t", "s", out.mids}, {"flux", "1/s", out.flux}}},
      {"beyond", {{"t", "s", out.times}, {"probability_beyond", "", out.beyond}}},
    },
    pictures = {{"arrival_time.png", {
      title = "probability flux through the detector plane", x_name = "t", x_quantity = "time",
      y_name = "flux", y_unit = "1/s", legend = "upper right",
      series = {{x = out.mids, y = out.flux, label = "engine"}},
    }}},
  })
  return out
end

return recipe
