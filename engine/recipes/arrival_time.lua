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
-- With an acceleration (gravity for a cloud dropped onto a plane below it)
-- the packet flies in its own frame (docs/frames.md): the launch velocity
-- goes into the frame (w:kick with frame = true), the grid holds only the
-- packet's spread, and w:arrival_times measures the flux through the lab
-- plane while the frame falls (the Avron-Herbst form, exact).  The plane may
-- then lie on either side of the start; the flux counts in the direction of
-- the plane, and P is the probability on the plane's far side.
--
-- Model: a uniform acceleration at most, no other force; Pi(t) is the flux,
-- which can be negative for packets with backward momentum components (then
-- it is not a probability density; the recipe reports the negative part).
-- Outputs are model predictions.
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
  acceleration = {default = 0, unit = "m/s^2",
                  help = "uniform acceleration along the flight (e.g. -9.80665 m/s^2: gravity towards a plane below)"},
}

-- Grid cells the fastest resolved wave crosses per sub-step of the flux
-- series (smaller: finer time grid, more accurate P(t) and moments).
recipe.FINE_CELLS = 0.5

-- First positive time at which x(t) = v t + a t^2 / 2 reaches L (Newton),
-- or nil when it never does.
local function classical_time(L, v, a)
  if a == 0 then return (v ~= 0 and L / v > 0) and L / v or nil end
  local disc = v * v + 2 * a * L
  if disc < 0 then return nil end
  local r = math.sqrt(disc)
  local best
  for _, t in ipairs{(-v + r) / a, (-v - r) / a} do
    if t > 0 and (not best or t < best) then best = t end
  end
  return best
end

function recipe.run(p)
  common.check_params(recipe, p)
  local m, v, s0, a = p.mass, p.velocity, p.sigma, p.acceleration or 0
  local k0 = m * v / common.hbar
  local sk = 1 / (2 * s0)
  local tmax = p.window
  local sigma_end = s0 * math.sqrt(1 + (common.hbar * tmax / (2 * m * s0 * s0)) ^ 2)
  local in_frame = a ~= 0
  local grid, wave, left, right, dx
  if in_frame then
    -- The grid holds the packet's spread only; the drop and the launch
    -- velocity are the frame's.
    left, right = -8 * math.max(s0, sigma_end), 8 * math.max(s0, sigma_end)
    dx = math.pi / (10 * sk)
  else
    -- The grid holds the packet from its start to the end of the window with
    -- 8 widths of margin on each side, so nothing wraps round the periodic box.
    left = -8 * math.max(s0, sigma_end)
    right = math.max(p.distance, v * tmax) + 8 * sigma_end
    dx = math.pi / (math.abs(k0) + 10 * sk)
  end
  local span = right - left
  local n = common.pow2(span / dx)
  if n > p.max_points then
    error(string.format("arrival_time: needs %d grid points; raise max_points or shorten the window", n), 0)
  end
  grid = pf.grid{points = n, span = span, origin = (left + right) / 2}
  if in_frame then
    wave = pf.gaussian(grid, {mass = m, width = s0})
    wave:kick(k0, {frame = true})
  else
    wave = pf.gaussian(grid, {mass = m, width = s0, wavenumber = k0})
  end
  -- Sub-steps: the fastest wave the grid holds, v_max = hbar (pi / dx) / m
  -- (plus, in the frame, the frame's largest speed over the window, at which
  -- the plane crosses the co-moving grid), moves at most FINE_CELLS cells
  -- per sub-step; an even count per sample interval, so Simpson's rule closes
  -- on every sample time and the sample midpoints are sub-step times.
  local dt = tmax / p.samples
  local vmax = common.hbar * (math.pi / grid:spacing(1)) / m
  if in_frame then vmax = vmax + math.abs(v) + math.abs(a) * tmax end
  local sub = 2 * math.max(1, math.ceil(dt * vmax / (2 * recipe.FINE_CELLS * grid:spacing(1))))
  local h = dt / sub
  if p.samples * sub + 1 > 1e7 then
    error(string.format("arrival_time: needs %d flux times (%d per sample); use fewer samples or a shorter window",
      p.samples * sub + 1, sub), 0)
  end
  local series = wave:arrival_times{axis = 1, at = p.distance, from = 0, to = tmax, steps = p.samples * sub + 1,
                                    acceleration = in_frame and a or false}
  -- The flux counts in the direction from the start to the plane.
  local dir = p.distance >= 0 and 1 or -1
  local f = {} -- f[i] = dir Pi((i - 1) h)
  for i, value in ipairs(series.flux) do f[i] = dir * value end
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
  local start_beyond
  if in_frame then
    -- The plane on the co-moving grid at the start, or beside it (the
    -- packet is negligible beyond the grid's edges).
    local xs = wave:x_axis(1)
    local lo, hi = xs[1] - 0.5 * dx, xs[#xs] + 0.5 * dx
    if p.distance <= lo then start_beyond = 1
    elseif p.distance >= hi then start_beyond = 0
    else start_beyond = wave:beyond{axis = 1, at = p.distance} end
  else
    start_beyond = n <= 65536 and wave:beyond{axis = 1, at = p.distance}
      or wave:probability_in(pf.half_space{point = {p.distance}, normal = {1}})
  end
  -- P: the probability on the plane's far side (seen from the start).
  if dir < 0 then start_beyond = 1 - start_beyond end
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
  local tc = classical_time(p.distance, v, a) -- nil: the classical path never reaches the plane
  return {
    times = times, beyond = beyond, flux = flux, mids = mids, points = n, substeps = sub, in_frame = in_frame,
    fine = {time = series.time, flux = f},
    results = {
      detected_fraction = {beyond[#beyond] - beyond[1], ""},
      mean_arrival_time = {mean, "s"},
      rms_arrival_spread = {rms, "s"},
      most_probable_time = {tpeak, "s"},
      negative_flux_part = {negative, ""},
      classical_time = tc and {tc, "s"} or nil,
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
