-- talbot_scan.lua - near-field Talbot scan: a grating-shaped wave flown over a Talbot time
--
-- A matter wave leaves a transmission grating of period d with one Gaussian
-- transmission window of rms width `slit` per period.  In free flight the
-- pattern dephases and re-images itself: the Talbot effect (H. F. Talbot
-- 1836; revival length z_T = 2 d^2 / lambda, Lord Rayleigh 1881), in time
-- T_T = 2 m d^2 / h, with a copy shifted by d / 2 at T_T / 2.  The recipe
-- scans the flight time from 0 to `stop` x T_T and reports, at each time, the
-- overlap of the density with the initial pattern and with the half-period
-- shifted pattern (both normalised to 1 for a perfect image).
--
-- The grating-shaped wave is built natively in momentum space: the train
-- sum_m exp(-(x - m d)^2 / (4 s^2)) has the Fourier series (Poisson
-- summation) proportional to sum_n exp(-s^2 q_n^2) exp(i q_n x), q_n =
-- 2 pi n / d, so pf.sampled{space = "momentum"} gets the coefficients at the
-- orders q_n and zeros at their neighbouring grid wave numbers: exactly
-- d-periodic with every image included, and no Lua call per grid point.
--
-- Model: the grid spans a whole number of periods and is periodic, which is
-- an infinitely wide grating illuminated uniformly (no finite-beam edges,
-- which in a real beam blur the revivals after a few T_T); free flight only.
local pf = require "psiflight"
local common = require "psiflight.recipes.common"

local recipe = {name = "talbot_scan"}

recipe.parameters = {
  mass = {default = common.mass_u("6Li"), unit = "u", help = "particle mass"},
  period = {default = 2, unit = "um", help = "grating period d"},
  slit = {default = 0.15, unit = "um", help = "rms width of each Gaussian transmission window"},
  periods = {default = 8, help = "grating periods spanned by the grid", min = 1, max = 4096},
  points_per_period = {default = 64, help = "grid points per period", min = 8, max = 4096},
  steps = {default = 16, help = "flight times in the scan (after t = 0)", min = 1, max = 100000},
  stop = {default = 1.0, help = "last time of the scan, in Talbot times", min = 0},
}

function recipe.talbot_time(mass, period)
  return 2 * mass * period * period / common.h
end

-- Overlap integral of two densities normalised by the first's square.
local function overlap(a, b, norm)
  local s = 0
  for i = 1, #a do s = s + a[i] * b[i] end
  return s / norm
end

-- The periodic train of Gaussian windows (rms width s of |psi|^2, one per
-- period d) on a grid spanning P periods, from its Fourier coefficients.
-- The grid's wave numbers are j dk with dk = 2 pi / (P d), so the orders
-- q_n are the points j = n P; each order is sampled with its neighbours
-- j +- 1 set to zero (when P > 1), so the linear interpolation of
-- pf.sampled is zero at every other grid wave number.
local function comb(grid, mass, d, s, P)
  local dk = grid:kspacing(1)
  local n = grid:points(1)
  local jmin = math.floor(grid:k(1, 1) / dk + 0.5)
  local jmax = math.floor(grid:k(1, n) / dk + 0.5)
  local ks, vs, last = {}, {}, -math.huge
  local function add(j, v)
    if j > last and j >= jmin and j <= jmax then
      ks[#ks + 1], vs[#vs + 1], last = j * dk, v, j
    end
  end
  for o = P * math.ceil(jmin / P), jmax, P do
    local q = o * dk
    if P > 1 then add(o - 1, 0) end -- with P = 1 every grid wave number is an order
    add(o, math.exp(-s * s * q * q))
    if P > 1 then add(o + 1, 0) end
  end
  return pf.sampled(grid, {mass = mass, space = "momentum", k = ks, values = vs})
end

-- The grating fills the periodic cell on purpose: the grid stands for an
-- infinite grating, so the edge guards (and the builder's edge check, which
-- uses the same threshold) would only report that.  The threshold is raised
-- while the scan runs and restored afterwards, also on error.
local function with_periodic_cell(fn, ...)
  local saved = pf.run_info().guard_threshold
  pf.setup{guard_threshold = 2}
  local results = table.pack(pcall(fn, ...))
  pf.setup{guard_threshold = saved}
  if not results[1] then error(results[2], 0) end
  return table.unpack(results, 2, results.n)
end

local function run_scan(p)
  local d, n = p.period, p.periods * p.points_per_period
  local grid = pf.grid{points = n, span = p.periods * d}
  local start = comb(grid, p.mass, d, p.slit, p.periods)
  local grating = start:copy() -- kept for the carpet picture
  local wave = start:copy()
  local rho0 = wave:density()
  local shifted = start:copy():shift(d / 2):density()
  local norm = overlap(rho0, rho0, 1)
  local tt = recipe.talbot_time(p.mass, d)
  local scan = {}
  local flown = 0
  for j = 0, p.steps do
    local t = p.stop * tt * j / p.steps
    wave:fly(t - flown)
    flown = t
    local rho = wave:density()
    scan[#scan + 1] = {t = t, image = overlap(rho, rho0, norm), shifted = overlap(rho, shifted, norm)}
  end
  -- The revivals themselves, each by one exact flight from the start.
  local half = start:copy():fly(tt / 2):density()
  local full = start:fly(tt):density()
  return {
    scan = scan, talbot_time = tt, points = n, initial_density = rho0, grating = grating,
    results = {
      talbot_time = {tt, "s"},
      revival_overlap = {overlap(full, rho0, norm), ""},
      half_revival_shifted_overlap = {overlap(half, shifted, norm), ""},
      half_revival_direct_overlap = {overlap(half, rho0, norm), ""},
    },
  }
end

function recipe.run(p)
  common.check_params(recipe, p)
  return with_periodic_cell(run_scan, p)
end

-- The carpet over the scanned times, two periods wide, with the revivals
-- the recipe knows marked: the half Talbot times (shifted images) and the
-- Talbot times (images) up to the end of the scan.
local function carpet(p, out)
  local tt, stop = out.talbot_time, p.stop * out.talbot_time
  local marks = {}
  for k = 1, math.floor(2 * p.stop + 1e-9) do
    local label = k % 2 == 1 and string.format("%sT#dT#u/2: shifted image", k > 1 and tostring(k) or "")
      or string.format("%sT#dT#u: image", k > 2 and tostring(k // 2) or "")
    marks[#marks + 1] = {at = k * tt / 2, label = label}
  end
  return pf.picture_carpet("talbot_carpet.png", out.grating, {
    duration = stop, frames = 400, x_range = {-p.period, p.period}, marks = marks,
    title = string.format("Talbot carpet, grating period %.3g #gmm", p.period * 1e6),
  })
end

function recipe.main(p)
  local out = recipe.run(p)
  print(string.format("talbot_scan: %d points over %d periods of %.4g um; Talbot time %.6g ms",
    out.points, p.periods, p.period * 1e6, out.talbot_time * 1e3))
  print("   t/T_T     t (ms)        overlap    shifted overlap")
  for _, s in ipairs(out.scan) do
    print(string.format("%8.4f  %10.5f   %12.8f   %12.8f", s.t / out.talbot_time, s.t * 1e3, s.image, s.shifted))
  end
  for _, name in ipairs(common.sorted_keys(out.results)) do
    common.report(name, out.results[name][1], out.results[name][2])
  end
  local ts, image, shifted = {}, {}, {}
  for i, s in ipairs(out.scan) do ts[i], image[i], shifted[i] = s.t / out.talbot_time, s.image, s.shifted end
  common.write_results(recipe.name, out, {
    tables = {{"scan", {{"t_over_talbot", "", ts}, {"overlap", "", image}, {"shifted_overlap", "", shifted}}}},
    pictures = {{"talbot_scan.png", {
      title = "overlap with the initial grating image over Talbot times", x_name = "t / T#dT#u",
      y_name = "overlap", legend = "lower right",
      series = {{x = ts, y = image, label = "with the initial image"},
                {x = ts, y = shifted, label = "with the half-period shifted image", dashed = true}},
    }}},
  })
  if p.stop > 0 then with_periodic_cell(carpet, p, out) end
  return out
end

return recipe
