-- probe_samples.lua - reading and writing single samples of a distributed
-- wave (w:psi, w:phi, w:set_psi, w:set_phi), for
-- tests/runner/test_distributed.sh (run as one process and under mpirun
-- with pf.setup{distribute = true}; tags as in probe_flight.lua: "exact"
-- the same bits everywhere, "flown" the same bits at every rank count and
-- within 1e-14 of one process, "law" against a closed form).
-- Invented scene: a 7Li packet of the (invented) Mereworth source, 18 x 16 x
-- 12 points, so 4 ranks hold 5, 5, 5, 3 planes of axis 1 in position and
-- 4, 4, 4, 4 planes of axis 2 in momentum.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local mass = pf.mass("7Li")
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
local span = {36e-6, 30e-6, 26e-6}
local g = pf.grid{points = {18, 16, 12}, span = span}
-- psi = prod_a (2 pi s_a^2)^(-1/4) exp(-(x_a - c_a)^2 / (4 s_a^2)) exp(i k0 x_1)
local s = {2.5e-6, 2.2e-6, 2.0e-6}
local c = {1.0e-6, -0.5e-6, 0.8e-6}
local k0 = 3.0e5
local w = pf.wave(g, {mass = mass, normalize = false, position = function(x, y, z)
  local r = {x, y, z}
  local a = 1
  for i = 1, 3 do a = a * (2 * math.pi * s[i] ^ 2) ^ -0.25 * math.exp(-(r[i] - c[i]) ^ 2 / (4 * s[i] ^ 2)) end
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end})
-- Samples on every rank's slab at any rank count up to 4 (planes 1, 5, 6,
-- 10, 11, 16, 18 of axis 1: both sides of each slab boundary at 4 ranks).
local planes = {1, 5, 6, 10, 11, 16, 18}
for _, i in ipairs(planes) do
  local z = w:psi(i, 7, 5)
  line("exact psi" .. i, z.re, z.im)
end
-- Out of range: the same clear error on every rank, before any message.
local ok, err = pcall(function() return w:psi(19, 1, 1) end)
print("bad index " .. (ok and "accepted" or (tostring(err):match("must be 1%.%.18, got 19") and "refused" or tostring(err))))

-- Every rank receives the same value: a sample held by the last rank is
-- written into a plane on each rank's slab; had any rank received another
-- value, the norm (a fixed-block sum of all slabs) would differ from one
-- process's.
local far = w:psi(18, 9, 6)
local dv = g:spacing(1) * g:spacing(2) * g:spacing(3)
local n0 = w:norm()
local removed = 0
for _, i in ipairs({1, 6, 11, 16}) do
  local old = w:psi(i, 9, 6)
  removed = removed + (old.re ^ 2 + old.im ^ 2) - (far.re ^ 2 + far.im ^ 2)
  w:set_psi(i, 9, 6, far)
end
local n1 = w:norm()
line("exact spread", n1, w:position_mean())
line("exact readback", w:psi(11, 9, 6).re, w:psi(11, 9, 6).im)
-- The norm is the Riemann sum sum |psi|^2 dV (docs/conventions.md), so
-- overwriting samples changes it by exactly the change of their |psi|^2 dV
-- (common practice; to rounding of the sum).
line("law setnorm", n0 - n1, removed * dv)
w:set_psi(3, 2, 2, pf.complex(-0.0, 1.5e7))
line("exact setneg", w:psi(3, 2, 2).re, w:psi(3, 2, 2).im, w:norm())

-- Momentum: phi at ascending wave-number indices on each rank's transposed
-- slab (axis 2's planes), beside the largest |phi| (the peak), so each line
-- is judged on the packet's scale.
local u = pf.wave(g, {mass = mass, normalize = false, position = function(x, y, z)
  local r = {x, y, z}
  local a = 1
  for i = 1, 3 do a = a * (2 * math.pi * s[i] ^ 2) ^ -0.25 * math.exp(-(r[i] - c[i]) ^ 2 / (4 * s[i] ^ 2)) end
  return a * math.cos(k0 * x), a * math.sin(k0 * x)
end})
-- The Fourier transform of the Gaussian (textbook): with
-- phi(k) = (2 pi)^(-3/2) int psi e^(-ik.x) dx (docs/conventions.md),
-- phi(k) = prod_a (2 s_a^2 / pi)^(1/4) exp(-(k_a - q_a)^2 s_a^2) e^(-i (k_a - q_a) c_a),
-- q = (k0, 0, 0).
local function phi_law(kk)
  local q = {k0, 0, 0}
  local re, im = 1, 0
  for a = 1, 3 do
    local m = (2 * s[a] ^ 2 / math.pi) ^ 0.25 * math.exp(-(kk[a] - q[a]) ^ 2 * s[a] ^ 2)
    local ph = -(kk[a] - q[a]) * c[a]
    re, im = re * m * math.cos(ph) - im * m * math.sin(ph), re * m * math.sin(ph) + im * m * math.cos(ph)
  end
  return re, im
end
local peak = phi_law({k0, 0, 0})
local worst = 0
for _, j in ipairs({1, 4, 5, 8, 9, 12, 13, 16}) do
  local i, k = 10, 7
  local z = u:phi(i, j, k)
  line("flown phi" .. j, z.re, z.im, peak)
  local lr, li = phi_law({g:k(1, i), g:k(2, j), g:k(3, k)})
  worst = math.max(worst, math.abs(z.re - lr) / peak, math.abs(z.im - li) / peak)
end
local zp = u:phi(10, 9, 7)
local lr, li = phi_law({g:k(1, 10), g:k(2, 9), g:k(3, 7)})
line("law phipeak", zp.re, lr)
line("law phiworst", worst, 0)
-- Writing in momentum: set samples on each rank's transposed slab, read
-- them back, then the norm (Parseval: sum |phi|^2 dk = sum |psi|^2 dx,
-- textbook) and the first position sample after the way back.
local dk = g:kspacing(1) * g:kspacing(2) * g:kspacing(3)
local m0 = u:norm()
local added = 0
for _, j in ipairs({2, 6, 11, 15}) do
  local old = u:phi(9, j, 6)
  local new = pf.complex(0.3 * peak, -0.1 * peak * j / 16)
  added = added + (new.re ^ 2 + new.im ^ 2) - (old.re ^ 2 + old.im ^ 2)
  u:set_phi(9, j, 6, new)
  local back = u:phi(9, j, 6)
  line("flown setphi" .. j, back.re, back.im, peak)
end
local m1 = u:norm()
line("flown setphinorm", m1, m0)
line("law parseval", m1 - m0, added * dk)
local p = u:psi(10, 8, 6)
line("flown psiback", p.re, p.im, u:psi(10, 9, 7).re)
line("flown kmean", u:wavenumber_mean())
w:close()
u:close()
