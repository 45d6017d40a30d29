-- common.lua - helpers shared by the bundled recipes: physical constants,
-- parameter-table merging, result printing and reporting.
local pf = require "psiflight"
local common = {}

-- CODATA 2018 (h and e exact since the 2019 SI), atomic mass constant u.
common.h = 6.62607015e-34
common.hbar = common.h / (2 * math.pi)
common.u = 1.66053906660e-27
common.g = 9.80665 -- standard acceleration of gravity (CGPM 1901, exact)

-- Merges parameter declaration tables (later ones win), so a script can
-- declare a recipe's parameters together with its own in one pf.parameters.
function common.merge(...)
  local out = {}
  for _, t in ipairs{...} do
    for k, v in pairs(t) do out[k] = v end
  end
  return out
end

-- A copy of a parameter declaration with some defaults replaced (values in
-- each parameter's declared unit, as a person types them), for scripts that
-- run a recipe in their own scenario.
function common.with_defaults(decl, defaults)
  local out = {}
  for name, spec in pairs(decl) do
    local copy = {}
    for k, v in pairs(spec) do copy[k] = v end
    out[name] = copy
  end
  for name, value in pairs(defaults) do
    if not out[name] then error("with_defaults: no parameter '" .. name .. "' to set a default for", 2) end
    out[name].default = value
  end
  return out
end

-- Reports a scalar result: pf.report when the engine has it (the run
-- manifest then carries it), and always one stable "result" line on stdout.
function common.report(name, value, unit)
  if pf.report then pf.report(name, value, unit) end
  print(string.format("result %-28s %.12g %s", name, value, unit or ""))
end

-- Smallest power of two >= n and >= least (default 16: FFT sizes).
function common.pow2(n, least)
  local p = least or 16
  while p < n do p = p * 2 end
  return p
end

-- Probability in [a, b) of a 1D wave: each grid point stands for a cell of
-- width dx centred on it, counted with the fraction of the cell inside, so a
-- boundary between grid points moves the result smoothly (second-order
-- accurate in dx) instead of in steps of one cell.
function common.probability_between(w, a, b)
  local g = w:grid()
  local xs = g:x_axis(1)
  local rho = w:density()
  local dx = g:spacing(1)
  local sum = 0
  for i = 1, #xs do
    local lo, hi = math.max(xs[i] - dx / 2, a), math.min(xs[i] + dx / 2, b)
    if hi > lo then sum = sum + rho[i] * (hi - lo) end
  end
  return sum
end

-- Sorted keys of a table, for deterministic output.
function common.sorted_keys(t)
  local keys = {}
  for k in pairs(t) do keys[#keys + 1] = k end
  table.sort(keys)
  return keys
end

return common
