-- probe_expand.lua - w:expand (mean-field expansion in the scaled frame,
-- docs/expansion.md) on a grid split over MPI ranks, for
-- tests/runner/test_distributed.sh: run as one process and under mpirun at
-- several rank counts with pf.setup{distribute = true}; the lines are
-- compared.  "exact" lines: the same bits everywhere (the grids and the
-- frame's scalars); "flown" lines: the same bits at every rank count and
-- within 1e-14 of one process; "law" lines: a figure and its textbook
-- value; "text" lines: the same text everywhere (step logs, step counts).
local pf = require "psiflight"
pf.setup{distribute = true, planning = "estimate", guard_threshold = math.huge}
local hbar, pi = pf.constants.hbar, math.pi
local mass = pf.mass("87Rb")
local info = pf.mpi_info()
print(string.format("ranks %d distribute %s", info.ranks, tostring(info.distribute)))

local function line(tag, ...)
  local parts = {}
  for i, v in ipairs({...}) do parts[i] = string.format("%.17g", v) end
  print(tag .. " " .. table.concat(parts, " "))
end

local function grid_lines(w, name)
  local gr = w:grid()
  local dx = {}
  for a = 1, gr:dim() do dx[a] = gr:spacing(a) end
  line("flown " .. name .. "_spacing", table.unpack(dx))
end

-- 1. Invented scene: rubidium-87 in the ground state of a (300, 240, 200) Hz
-- trap on 22 x 20 x 24 points (6, 6, 6, 4 planes on 4 ranks), released
-- with g = 0 in the ballistic frame.  A freely spreading minimum-uncertainty
-- Gaussian: sigma_j(t) = sigma_j(0) sqrt(1 + omega_j^2 t^2) (textbook).
local omega = {2 * pi * 300, 2 * pi * 240, 2 * pi * 200}
local span = {}
for a = 1, 3 do span[a] = 10 * math.sqrt(hbar / (mass * omega[a])) end
local g = pf.grid{points = {22, 20, 24}, span = span}
local w = pf.ground_state(g, {mass = mass, omega = omega})
local s0 = {w:position_width()}
local t = 6e-3
local _, ib = w:expand(t, {omega = omega, scaling = "ballistic", order = 4})
grid_lines(w, "ballistic")
line("flown ballistic_norm", w:norm())
line("flown ballistic_width", w:position_width())
line("flown ballistic_lambda", table.unpack(ib.lambda))
print(string.format("text ballistic steps %d handed %s", ib.steps, tostring(ib.handed_over)))
local sw = {w:position_width()}
for a = 1, 3 do line("law ballistic_width" .. a, sw[a], s0[a] * math.sqrt(1 + (omega[a] * t) ^ 2)) end

-- 2. Interacting: a 2D sheet (21 planes: 6, 6, 6, 3 on 4 ranks) from the
-- (150, 120) Hz trap's ground state, expanded with a mean field in the
-- Castin-Dum frame (release frequencies from the state), in two calls (the
-- second continues the first's frame), and a drifting cloud under gravity.
local om2 = {2 * pi * 150, 2 * pi * 120}
local span2 = {10 * math.sqrt(hbar / (mass * om2[1])), 10 * math.sqrt(hbar / (mass * om2[2]))}
local g2 = pf.grid{points = {21, 24}, span = span2}
local w2 = pf.ground_state(g2, {mass = mass, omega = om2})
w2:kick({3e5, 0})
local coupling = 4e-50 -- J m^2, an invented sheet coupling
local _, i1 = w2:expand(2e-3, {g = coupling, acceleration = {0, -9.81}})
grid_lines(w2, "mf1")
line("flown mf1_norm", w2:norm())
line("flown mf1_mean", w2:position_mean())
line("flown mf1_width", w2:position_width())
line("flown mf1_energy", i1.energy)
line("flown mf1_lambda", table.unpack(i1.lambda))
local _, i2 = w2:expand(3e-3, {g = coupling})
grid_lines(w2, "mf2")
line("flown mf2_norm", w2:norm())
line("flown mf2_mean", w2:position_mean())
line("flown mf2_width", w2:position_width())
line("flown mf2_lambda", table.unpack(i2.lambda))
print(string.format("text mf steps %d %d continued %s", i1.steps, i2.steps, tostring(i2.continued)))
for i, st in ipairs(w2:log()) do
  print(string.format("text log%d %s %s %.17g", i, st.kind, st.method, st.duration))
end
-- The frame carries the drift and the fall (textbook kinematics): after
-- 2 ms under g and 3 ms without, y = -g t1^2 / 2 - g t1 t2, and the kicked
-- centre x = x0 + hbar k t / m.
local mx, my = w2:position_mean()
line("law mf_fall", my, -0.5 * 9.81 * 2e-3 ^ 2 - 9.81 * 2e-3 * 3e-3)
line("law mf_drift", mx, hbar * 3e5 * 5e-3 / mass)
