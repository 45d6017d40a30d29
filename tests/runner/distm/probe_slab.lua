-- probe_slab.lua - the density measurements that run on each rank's own
-- planes (engine/core/dist/pf_dist_measure.c), on a 3D wave split over MPI
-- ranks, for tests/runner/test_distributed_measure.sh (run as one process
-- and under mpirun with pf.setup{distribute = true}).  Tags: "exact" the
-- same bits everywhere, "flown" the same bits at every rank count and
-- within 1e-14 of one process, "law" a figure and its closed form, "same"
-- flags (1 = the per-slab figure is, bit for bit, what the single process's
-- summation gives on the gathered table in this very run).
-- Invented scene: a 41K cloud released from a tilted trap (its density a
-- correlated Gaussian) with a small push, imaged along each axis by the
-- Quillan bench's cameras; 22 x 18 x 16 points (4 ranks: 6, 6, 6, 4 planes
-- in position, 5, 5, 5, 3 in the transposed momentum layout).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar = pf.constants.hbar
local mass = pf.mass("41K")
local g = pf.grid{points = {22, 18, 16}, span = {30e-6, 24e-6, 24e-6}}
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local function list(tag, t)
  local parts = {}
  for i = 1, #t do parts[i] = string.format("%.17g", t[i]) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))

-- |psi|^2 a trivariate normal of covariance S (axes 1 and 3 correlated):
-- psi = exp(-r^T S^-1 r / 4 + i k0.r).
local a, b, c, rho = 2.0e-6, 1.7e-6, 1.9e-6, 0.4
local S = {{a * a, 0, rho * a * c}, {0, b * b, 0}, {rho * a * c, 0, c * c}}
local det13 = a * a * c * c * (1 - rho * rho)
local i11, i33, i13, i22 = c * c / det13, a * a / det13, -rho * a * c / det13, 1 / (b * b)
local k0 = {1.2e5, -0.8e5, 0.6e5}
local w = pf.wave(g, {mass = mass, normalize = true, position = function(x, y, z)
  local amp = math.exp(-(i11 * x * x + 2 * i13 * x * z + i33 * z * z + i22 * y * y) / 4)
  local ph = k0[1] * x + k0[2] * y + k0[3] * z
  return amp * math.cos(ph), amp * math.sin(ph)
end})

-- The single process's summations written out in Lua (doubles, the same
-- operations in the same order), run on the gathered table: pf_field_marginal
-- (out[o] += value * weight in field order), pf_field_radial and
-- pf_field_moments (engine/core/measure/pf_field.c).
local function marginal_of(dist, keep, steps)
  local n, weight, kept = dist.shape, 1, {}
  for ax = 1, 3 do
    if keep[ax] then kept[#kept + 1] = ax else weight = weight * steps[ax] end
  end
  local size = 1
  for _, ax in ipairs(kept) do size = size * n[ax] end
  local out = {}
  for o = 1, size do out[o] = 0 end
  local v, off = dist.values, 0
  for i = 0, n[1] - 1 do
    for j = 0, n[2] - 1 do
      for k = 0, n[3] - 1 do
        off = off + 1
        local idx = {i, j, k}
        local o = 0
        for _, ax in ipairs(kept) do o = o * n[ax] + idx[ax] end
        out[o + 1] = out[o + 1] + v[off] * weight
      end
    end
  end
  return out
end
local function radial_of(dist, center, bin, bins)
  local n, ax, v = dist.shape, dist.axes, dist.values
  local prof, cnt, off = {}, {}, 0
  for q = 1, bins do prof[q], cnt[q] = 0, 0 end
  for i = 1, n[1] do
    for j = 1, n[2] do
      for k = 1, n[3] do
        off = off + 1
        local r2 = 0
        local d1 = ax[1][i] - center[1]; r2 = r2 + d1 * d1
        local d2 = ax[2][j] - center[2]; r2 = r2 + d2 * d2
        local d3 = ax[3][k] - center[3]; r2 = r2 + d3 * d3
        local q = math.floor(math.sqrt(r2) / bin)
        if q < bins then
          prof[q + 1] = prof[q + 1] + v[off]
          cnt[q + 1] = cnt[q + 1] + 1
        end
      end
    end
  end
  for q = 1, bins do if cnt[q] > 0 then prof[q] = prof[q] / cnt[q] end end
  return prof
end
local function covariance_of(dist)
  local n, ax, v = dist.shape, dist.axes, dist.values
  local s0, s1, off = 0, {0, 0, 0}, 0
  for i = 1, n[1] do for j = 1, n[2] do for k = 1, n[3] do
    off = off + 1
    local x = {ax[1][i], ax[2][j], ax[3][k]}
    s0 = s0 + v[off]
    for p = 1, 3 do s1[p] = s1[p] + v[off] * x[p] end
  end end end
  local m = {s1[1] / s0, s1[2] / s0, s1[3] / s0}
  local s2 = {0, 0, 0, 0, 0, 0, 0, 0, 0}
  off = 0
  for i = 1, n[1] do for j = 1, n[2] do for k = 1, n[3] do
    off = off + 1
    local dx = {ax[1][i] - m[1], ax[2][j] - m[2], ax[3][k] - m[3]}
    for p = 1, 3 do for q = p, 3 do s2[(p - 1) * 3 + q] = s2[(p - 1) * 3 + q] + v[off] * dx[p] * dx[q] end end
  end end end
  return {s2[1] / s0, s2[2] / s0, s2[3] / s0, s2[5] / s0, s2[6] / s0, s2[9] / s0}
end
local function same(x, y)
  if #x ~= #y then return 0 end
  for i = 1, #x do if x[i] ~= y[i] then return 0 end end
  return 1
end

-- Position, before any transform: the same bits as one process.
local keeps = {{true, false, false}, {false, true, false}, {false, false, true}, {true, true, false},
               {true, false, true}, {false, true, true}}
local axes_of = {{1}, {2}, {3}, {1, 2}, {1, 3}, {2, 3}}
for q, ax in ipairs(axes_of) do list("exact xmarginal" .. q, w:marginal{axes = ax}.values) end
for ax = 1, 3 do list("exact xprofile" .. ax, w:profile(ax).values) end
for ax = 1, 3 do list("exact column" .. ax, w:column_density(ax).values) end
list("exact xslice23", w:slice{axes = {2, 3}, through = {1.1e-6, 0, 0}}.values)
list("exact xslice1", w:slice{axes = {1}, through = {0, -0.6e-6, 1.2e-6}}.values)
list("exact xslice13", w:slice{axes = {1, 3}, through = {0, 2e-6, 0}}.values)
list("exact xradial", w:radial_profile{center = {0.3e-6, -0.2e-6, 0.1e-6}, bin = 1.3e-6, bins = 7}.values)
local C = w:position_covariance()
line("exact xcovariance", C[1][1], C[1][2], C[1][3], C[2][2], C[2][3], C[3][3])
local mask_calls = 0
line("exact regions", w:probability_in(pf.box{min = {-1e-6, -2e-6, -3e-6}, max = {2.5e-6, 1e-6, 2e-6}}),
  w:probability_in(pf.half_space{point = {0.3e-6, 0, 0}, normal = {1, 1, -1}}),
  w:probability_in(pf.ball{center = {0.5e-6, -0.2e-6, 0}, radius = 2.6e-6}),
  w:probability_in(pf.mask(function(x, y, z) mask_calls = mask_calls + 1 return math.exp(-(x - z) ^ 2 / 1e-11) end)))
-- A mask function is called at this rank's points only (rank 0 prints its
-- count), and a function failing on another rank's points fails every rank.
print("calls mask " .. mask_calls)
local okm = pcall(function()
  return w:probability_in(pf.mask(function(x, y, z) return x > 9e-6 and 2 or 1 end))
end)
print("mask_error " .. (okm and "ran" or "refused"))
local fx = w:fringes{axis = 1}
local fz = w:fringes{axis = 3}
line("exact fringes", fx.offset, fx.amplitude, fz.offset, fz.amplitude)
-- Cameras imaging along the split axis and across it.
local cam1 = pf.camera{pixels = {5, 4}, pitch = {4e-6, 5e-6}, psf = {1e-6, 1.5e-6}, imaging_axis = 1}
local shot1 = cam1:expose(w, {atoms = 3e4, seed = 8})
list("exact cam1_expected", shot1.expected)
list("exact cam1_counts", shot1.counts)
local cam3 = pf.camera{pixels = {6, 5}, pitch = {4e-6, 4e-6}, psf = {1e-6, 1e-6}, imaging_axis = 3}
list("exact cam3_od", cam3:absorb(w, {atoms = 3e4, cross_section = pf.resonant_cross_section(767e-9)}).od)
-- The picture of the column density along axis 3 (rank 0 writes it).
pf.picture_map("cloud3.png", w, {title = "41K cloud, column along z"})

-- Born-rule events drawn per slab: a seeded draw with jitter (the same
-- events as one process), then draws from the run's own generator, whose
-- state must stay the same on every rank: each rank scales its planes of a
-- copy by a figure of the events, and the norm is the single process's
-- only when every rank drew the same events.
local ev = w:sample(3000, {seed = 17})
list("exact xsample1", {ev[1][1], ev[1][2], ev[1][3], ev[1][1500], ev[2][2999], ev[3][3000]})
local run1, run2 = w:sample(50), w:sample(50, {jitter = false})
local sum = 0
for e = 1, 50 do sum = sum + run1[1][e] / 1e-6 + run2[3][e] / 1e-6 end
list("exact xsample2", {run1[1][50], run1[2][7], run2[3][50], sum})
local probe = w:copy()
probe:scale(1 + math.abs(sum) / 1e3)
line("exact xsample_agree", probe:norm())
probe:close()
-- Law (common practice): the events' variance along the split axis is the
-- density's, S11, plus the jitter's dx^2 / 12 (Sheppard's correction);
-- 5 standard errors of a sample variance, 5 sqrt(2 / N), bound the draw.
local m1, v1 = 0, 0
for e = 1, 3000 do m1 = m1 + ev[1][e] end
m1 = m1 / 3000
for e = 1, 3000 do v1 = v1 + (ev[1][e] - m1) ^ 2 end
v1 = v1 / 2999
line("stat xsample_var", v1, S[1][1] + g:spacing(1) ^ 2 / 12, 5 * math.sqrt(2 / 3000))

-- The per-slab figures are the single process's summation of the gathered
-- table, bit for bit (position and momentum).
local steps_x = {g:spacing(1), g:spacing(2), g:spacing(3)}
local dx = w:distribution()
local flags = {}
for q, ax in ipairs(axes_of) do flags[#flags + 1] = same(w:marginal{axes = ax}.values, marginal_of(dx, keeps[q], steps_x)) end
flags[#flags + 1] = same(w:radial_profile{center = {0.3e-6, -0.2e-6, 0.1e-6}, bin = 1.3e-6, bins = 7}.values,
  radial_of(dx, {0.3e-6, -0.2e-6, 0.1e-6}, 1.3e-6, 7))
flags[#flags + 1] = same({C[1][1], C[1][2], C[1][3], C[2][2], C[2][3], C[3][3]}, covariance_of(dx))
list("exact same_x", flags)

-- Laws (common practice: marginals of a normal distribution are normal
-- with the sub-matrix of the covariance): the profile along the split axis
-- at its grid point nearest 0, and the column density along the split axis
-- (the bivariate normal of axes 2 and 3) at the grid point nearest 0.
local p1 = w:profile(1)
local best, at = math.huge, 1
for i, x in ipairs(p1.axes[1]) do if math.abs(x) < best then best, at = math.abs(x), i end end
local x0 = p1.axes[1][at]
line("law xprofile", p1.values[at], math.exp(-x0 * x0 / (2 * S[1][1])) / math.sqrt(2 * math.pi * S[1][1]))
local col = w:column_density(1)
local n2, n3 = col.shape[1], col.shape[2]
local j0, k0i = n2 // 2 + 1, n3 // 2 + 1 -- the grid points at 0 of even axes
local y0, z0 = col.axes[1][j0], col.axes[2][k0i]
line("law column1", col.values[(j0 - 1) * n3 + k0i],
  math.exp(-(y0 * y0 / S[2][2] + z0 * z0 / S[3][3]) / 2) / (2 * math.pi * math.sqrt(S[2][2] * S[3][3])))

-- Momentum (after the MPI transforms): per-slab marginals of every kind,
-- slices, a radial profile and the covariance.
for q, ax in ipairs(axes_of) do list("flown kmarginal" .. q, w:marginal{axes = ax, space = "momentum"}.values) end
list("flown kslice12", w:slice{axes = {1, 2}, through = {0, 0, 0.5e5}, space = "momentum"}.values)
list("flown kslice3", w:slice{axes = {3}, through = {1e5, -1e5, 0}, space = "momentum"}.values)
local krad = w:radial_profile{center = k0, bin = 1.5e5, bins = 6, space = "momentum"}
list("flown kradial", krad.values)
local K = w:momentum_covariance()
local evk = w:sample(400, {seed = 18, space = "momentum", jitter = false})
list("flown ksample", {evk[1][1], evk[2][1], evk[3][1], evk[1][400], evk[2][200], evk[3][399]})
line("flown kcovariance", K[1][1], K[1][2], K[1][3], K[2][2], K[2][3], K[3][3])
local steps_k = {g:kspacing(1), g:kspacing(2), g:kspacing(3)}
local dk = w:distribution{space = "momentum"}
flags = {}
for q, ax in ipairs(axes_of) do
  flags[#flags + 1] = same(w:marginal{axes = ax, space = "momentum"}.values, marginal_of(dk, keeps[q], steps_k))
end
flags[#flags + 1] = same(krad.values, radial_of(dk, k0, 1.5e5, 6))
local kc = covariance_of(dk)
for p = 1, 6 do kc[p] = kc[p] * (hbar * hbar) end
flags[#flags + 1] = same({K[1][1], K[1][2], K[1][3], K[2][2], K[2][3], K[3][3]}, kc)
list("exact same_k", flags)
-- Law (Fourier transform of a Gaussian, textbook): psi ~ exp(-r^T S^-1 r /
-- 4) has |phi(k)|^2 of covariance S^-1 / 4, so the momentum covariance is
-- hbar^2 S^-1 / 4 (the push k0 only moves the mean).
line("law kcov11", K[1][1], hbar * hbar * i11 / 4)
line("law kcov13", K[1][3], hbar * hbar * i13 / 4)
line("law kcov22", K[2][2], hbar * hbar * i22 / 4)
w:close()

-- A 2D wave (18 x 14: 4 ranks hold 5, 5, 5, 3 planes in position and 4, 4,
-- 4, 2 of the transposed momentum layout, where runs along axis 2 are cut
-- between ranks): momentum profiles, a slice and a radial profile, and the
-- single process's summation of the gathered table.
local g2 = pf.grid{points = {18, 14}, span = {24e-6, 20e-6}}
local u = pf.wave(g2, {mass = mass, normalize = true, position = function(x, y)
  local amp = math.exp(-(x * x / (1.8e-6) ^ 2 + y * y / (1.5e-6) ^ 2 + 0.6 * x * y / (1.6e-6) ^ 2) / 4)
  local ph = 2e5 * x - 1e5 * y
  return amp * math.cos(ph), amp * math.sin(ph)
end})
local function marginal2_of(dist, keep, steps)
  local n, v, out, off = dist.shape, dist.values, {}, 0
  local weight = 1
  for ax = 1, 2 do if not keep[ax] then weight = weight * steps[ax] end end
  local along = keep[1] and 1 or 2
  for o = 1, n[along] do out[o] = 0 end
  for i = 1, n[1] do
    for j = 1, n[2] do
      off = off + 1
      local o = along == 1 and i or j
      out[o] = out[o] + v[off] * weight
    end
  end
  return out
end
local ku1 = u:profile(1, {space = "momentum"}).values
local ku2 = u:profile(2, {space = "momentum"}).values
list("flown k2profile1", ku1)
list("flown k2profile2", ku2)
list("flown k2slice", u:slice{axes = {2}, through = {1e5, 0}, space = "momentum"}.values)
list("flown k2radial", u:radial_profile{center = {2e5, -1e5}, bin = 2e5, bins = 5, space = "momentum"}.values)
local du = u:distribution{space = "momentum"}
local steps2 = {g2:kspacing(1), g2:kspacing(2)}
list("exact same_k2", {same(ku1, marginal2_of(du, {true, false}, steps2)), same(ku2, marginal2_of(du, {false, true}, steps2))})
u:close()
