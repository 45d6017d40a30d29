-- probe_frames.lua - moving frames on a distributed wave: w:frame,
-- w:x_axis, w:k_axis, w:fall (the closed-form fall on the grid, also from a
-- moved frame, whose momentum is folded onto the slabs first) and
-- w:arrival_times at a lab plane under an acceleration, for
-- tests/runner/test_distributed.sh (run as one process and under mpirun
-- with pf.setup{distribute = true}; tags as in probe_flight.lua: "exact"
-- the same bits everywhere, "flown" the same bits at every rank count and
-- within 1e-14 of one process, "law" against a closed form).
-- Invented scene: a 87Rb cloud of the (invented) Alderholt fountain on a
-- 26 x 32 grid (7, 7, 7, 5 planes on 4 ranks), axis 2 vertical.
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar = pf.constants.hbar
local gn = pf.constants.g_n
local mass = pf.mass("87Rb")
local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))
local g = pf.grid{points = {26, 32}, span = {24e-6, 28e-6}}
local s = {1.6e-6, 1.8e-6}
local function cloud() return pf.gaussian(g, {mass = mass, center = {0, 0}, width = s}) end

-- 1. A drop of 2 ms in the frame: the frame's numbers are closed forms of
-- the same inputs, so the single process's bits; the lab axes are the
-- grid's shifted by them.  Kinematics (textbook): X = -g t^2 / 2, V = -g t.
local w = cloud()
local t1 = 2e-3
w:fly(t1, {acceleration = {0, -gn}})
local f = w:frame()
line("exact frame", f.position[1], f.position[2], f.wavenumber[2], f.velocity[2], f.phase)
line("law frameX", f.position[2], -0.5 * gn * t1 ^ 2)
line("law frameV", f.velocity[2], -gn * t1)
local xa, ka = w:x_axis(2), w:k_axis(2)
line("exact axes", xa[1], xa[#xa], ka[1], ka[#ka])
line("flown dropmean", w:position_mean())
line("flown dropwidth", w:position_width())

-- 2. Arrival at a lab plane 40 um below, the cloud falling on: the copy
-- flies on rank 0 from the gathered wave.  Classical kinematics
-- (textbook): the centre reaches it after tau with
-- X + V tau - g tau^2 / 2 = -h; for a cloud narrow against the drop the
-- mean arrival time is tau to about (sigma / h)^2 = 2e-3 (the flux-weighted
-- mean of a packet with position and velocity spread).  The flux points
-- down (-axis 2), so the probability arrived is -1.
local h = 40e-6
local X, V = f.position[2], f.velocity[2]
local tau = (V + math.sqrt(V * V + 2 * gn * (X + h))) / gn
local arr = w:arrival_times{axis = 2, at = -h, from = tau - 6e-4, to = tau + 6e-4, steps = 241, acceleration = {0, -gn}}
line("flown arrived", arr.arrived)
line("flown arrivalmean", arr.mean, arr.spread)
local peak = 0
for i = 1, #arr.flux do peak = math.max(peak, -arr.flux[i]) end
line("flown arrivalpeak", peak)
line("law arrivalmean", arr.mean, tau)
line("law arrived", -arr.arrived, 1)
w:close()

-- 3. w:fall on the grid (an unmoved frame): the free flight and the
-- translation a t^2 / 2 in momentum space (the transposed slabs), then the
-- kick m a t / hbar in position.  Textbook: the centre moves by
-- v0 t + a t^2 / 2, the width follows s sqrt(1 + (hbar t / 2 m s^2)^2).
local u = cloud()
u:kick(3e5, 0)
local t2, a2 = 1.2e-3, {0.8, -1.5}
u:fall(t2, a2)
line("flown fallnorm", u:norm())
line("flown fallmean", u:position_mean())
line("flown fallwidth", u:position_width())
line("flown fallk", u:wavenumber_mean())
local ux, uy = u:position_mean()
line("law fallx", ux, hbar * 3e5 / mass * t2 + 0.5 * a2[1] * t2 ^ 2)
line("law fally", uy, 0.5 * a2[2] * t2 ^ 2)
local wx, wy = u:position_width()
line("law fallwx", wx, s[1] * math.sqrt(1 + (hbar * t2 / (2 * mass * s[1] ^ 2)) ^ 2))
line("law fallwy", wy, s[2] * math.sqrt(1 + (hbar * t2 / (2 * mass * s[2] ^ 2)) ^ 2))
local kx = u:wavenumber_mean()
line("law fallkx", kx, 3e5 + mass * a2[1] * t2 / hbar)
u:close()

-- 4. w:fall from a moved frame: a gentle slope first moves the frame, then
-- the fall folds the frame's momentum onto the slabs and falls on the grid.
-- Lab kinematics (textbook) over both stretches: y = a (t3 + t4)^2 / 2.
local v = cloud()
local t3, t4, a3 = 1.0e-3, 0.8e-3, {0, -0.05}
v:fly(t3, {acceleration = a3})
v:fall(t4, a3)
line("flown movedfallnorm", v:norm())
line("flown movedfall", v:position_mean())
line("flown movedfallk", v:wavenumber_mean())
line("exact movedframe", v:frame().position[2], v:frame().wavenumber[2])
local _, vy = v:position_mean()
line("law movedfall", vy, 0.5 * a3[2] * (t3 + t4) ^ 2)
v:close()
