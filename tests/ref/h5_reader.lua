-- h5_reader.lua - helper for test_h5py.sh: loads states from a file that
-- h5py wrote (pf.params.file) and compares them with the Gaussian formula
-- the Python side used.
local pf = require "psiflight"
local check = require "check"
pf.setup{planning = "estimate"}
local file = pf.params.file
local sigma, x0 = 3e-6, 1e-6
-- psi(x) = (2 pi sigma^2)^(-1/4) exp(-(x-x0)^2 / 4 sigma^2) exp(i k0 x) (textbook packet)
local k0 = 1.5e6
local function psi(x)
  local a = (2 * math.pi * sigma ^ 2) ^ -0.25 * math.exp(-(x - x0) ^ 2 / (4 * sigma ^ 2))
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end
local g = pf.grid{points = 64, span = 64e-6}
local mass = 1.0e-26
local function worst_against_formula(w)
  local worst = 0
  for i = 1, g:points(1) do
    local re, im = psi(g:x(1, i))
    local z = w:psi(i)
    worst = math.max(worst, math.abs(z.re - re), math.abs(z.im - im))
  end
  return worst
end
local peak = (2 * math.pi * sigma ^ 2) ^ -0.25
local cases = {
  {"complex compound dataset (h5py complex128)", {dataset = "amp", axes = {"xpos"}}},
  {"separate real and imaginary datasets", {real = "re", imag = "im", axes = {"xpos"}}},
  {"real dataset with a last dimension of 2", {dataset = "pair"}},
  {"compound with fields real/imag", {dataset = "named"}},
}
for _, c in ipairs(cases) do
  local opts = c[2]
  opts.grid, opts.mass = g, mass
  local w = pf.load_wave(file, opts)
  local worst = worst_against_formula(w)
  check.truthy(worst <= 1e-12 * peak, string.format("h5py file, %s: matches the formula (max diff %.1e)", c[1], worst))
end
-- phi(k) of the same packet, written by Python from the Fourier-transform
-- formula phi(k) = (2 sigma^2/pi)^(1/4) exp(-(k-k0)^2 sigma^2 - i (k-k0) x0)
-- (textbook Gaussian transform with the convention of docs/conventions.md).
-- The tolerance allows for the periodic images of the packet in the 64 um
-- box: exp(-(31 um - x0)^2 / 4 sigma^2) ~ 1e-11 of the peak.
local w = pf.load_wave(file, {dataset = "phi", axes = {"k"}, space = "momentum", grid = g, mass = mass})
local worst = worst_against_formula(w)
check.truthy(worst <= 1e-9 * peak, string.format("h5py phi(k) loads and gives the packet psi(x) (max diff %.1e)", worst))
-- 2D: psi(x) times (2 pi sy^2)^(-1/4) exp(-y^2 / 4 sy^2), sy = 1.5 um.
local g2 = pf.grid{points = {64, 32}, span = {64e-6, 16e-6}}
local w2 = pf.load_wave(file, {dataset = "amp2", axes = {"xpos", "ypos"}, grid = g2, mass = mass})
local sy, worst2 = 1.5e-6, 0
for i = 1, 64 do
  for j = 1, 32 do
    local re, im = psi(g2:x(1, i))
    local fy = (2 * math.pi * sy ^ 2) ^ -0.25 * math.exp(-g2:x(2, j) ^ 2 / (4 * sy ^ 2))
    local z = w2:psi(i, j)
    worst2 = math.max(worst2, math.abs(z.re - re * fy), math.abs(z.im - im * fy))
  end
end
local peak2 = peak * (2 * math.pi * sy ^ 2) ^ -0.25
check.truthy(worst2 <= 1e-12 * peak2, string.format("h5py 2D dataset with two axes matches the formula (max diff %.1e)", worst2))
check.fails(function() pf.load_wave(file, {dataset = "amp", axes = {"xpos"}, grid = pf.grid{points = 64, span = 70e-6}, mass = mass}) end,
  "h5py data on another grid: clear error", "grid mismatch")
check.fails(function() pf.load_wave(file, {dataset = "xpos", grid = g, mass = mass}) end,
  "a real 1D dataset is not complex", "does not hold complex numbers")
check.done()
