#!/usr/bin/env bash
# test_distributed.sh - one grid split over MPI ranks (pf.setup{distribute =
# true}, docs/distributed.md): the same script as one process and under
# mpirun -n 1, 2, 3 and 4 (oversubscribed on this machine; 18 planes do not
# divide among 4 ranks).  References: the single-process engine (its
# results were checked against closed forms elsewhere in the suite), and the
# free Gaussian's centre and width laws (textbook) for the flight itself.
# Figures of untransformed data must be the same bits everywhere; figures
# after transforms the same bits at every rank count and within 1e-14 of
# one process (FFTW's serial and MPI plans may round differently; largest
# difference seen 6.7e-16.  It was 2.4e-14 on a wave-number mean while
# weighted moments were plain sums: the storage order and the transposed
# order of a momentum slab rounded differently.  They are compensated sums
# now, pf_reduce.c).  Skipped with a note when
# the runner has no FFTW-MPI or mpirun is missing.
source "$(dirname "$0")/lib.sh"
set -e
probe="$root/tests/runner/dist/probe_flight.lua"
mpi_ready "distributed grids" || { done_checks; exit 0; }

one_run "flight" "$work/plain.txt" "$probe"
has "distribute false" "one process: nothing distributed without mpirun"
for n in 1 2 3 4; do
  mpi_run "$n" "flight" "$work/ranks$n.txt" "$probe"
  has "refusal named" "mpirun -n $n: a function without a distributed path refuses by name"
  [ "$(grep -c '^ranks' "$work/ranks$n.txt")" -eq 1 ] && ok "mpirun -n $n: only rank 0 prints" || fail "mpirun -n $n: only rank 0 prints"
done

for n in 1 2 3 4; do
  agree "$work/plain.txt" "$work/ranks$n.txt" exact 0 "-n $n: norms, means and widths before any transform are bit-identical to one process"
  agree "$work/ranks1.txt" "$work/ranks$n.txt" flown,law 0 "-n $n: figures after the flight are bit-identical to -n 1"
  agree "$work/plain.txt" "$work/ranks$n.txt" flown,law 1e-14 "-n $n: figures after the flight within 1e-14 of one process"
done

# The flight against the textbook laws (the discrete grid samples the
# Gaussian: agreement to 1e-8 relative is the sampling, not the flight).
law_within "$work/ranks4.txt" . 1e-8 "-n 4: centre and widths after 1.5 ms follow the free Gaussian laws (textbook)"

# Long flights (probe_longflight.lua): w:fly_scaled, w:fly_long choosing
# the scaled or the same-grid method from extents reduced over the ranks,
# its fly-back after a scaled flight, two stages onto a chosen spacing, the
# grid advisor and the far-field image of a split wave, a
# backward flight on a 2D sheet, a long flight under gravity; 18 planes (5, 5, 5, 3 on 4 ranks) and 21
# planes (6, 6, 6, 3).  The new grids keep the point counts, so the ranks
# keep their slabs.
long="$root/tests/runner/dist/probe_longflight.lua"
one_run "long" "$work/xplain.txt" "$long"
for n in 1 2 3 4; do
  mpi_run "$n" "long" "$work/xranks$n.txt" "$long"
  has "refusal points named" "long -n $n: fly_scaled onto another count on the split axis refused by name at the script line"
  has "refusal long_points named" "long -n $n: fly_long onto another count on the split axis refused by name"
  has "refusal toggled 3 of 3 named" "long -n $n: after pf.setup{distribute = false} fly_scaled, fly_long and expand refuse to regrid a split wave"
  agree "$work/xplain.txt" "$work/xranks$n.txt" exact 0 "long -n $n: the new grids' spacings and origins are the single process's"
  [ "$(grep '^text' "$work/xplain.txt")" = "$(grep '^text' "$work/xranks$n.txt")" ] &&
    ok "long -n $n: the same methods chosen and the same step logs as one process" ||
    fail "long -n $n: methods or step logs differ: $(diff <(grep '^text' "$work/xplain.txt") <(grep '^text' "$work/xranks$n.txt") | head -4)"
  agree "$work/xranks1.txt" "$work/xranks$n.txt" flown,law 0 "long -n $n: scaled, chosen, two-stage and backward flights bit-identical to -n 1"
  agree "$work/xplain.txt" "$work/xranks$n.txt" flown,law 1e-14 "long -n $n: long-flight figures within 1e-14 of one process"
done
# The free Gaussian (textbook): centre c + hbar k0 t / m and width
# s sqrt(1 + (hbar t / 2 m s^2)^2) after 25 ms and 40 ms.  The grids sample
# the packet at about 1.2 points per rms width: 1e-8 relative for the
# single-FFT and same-grid flights (5e-9 seen; under gravity the centre also
# falls by a t^2 / 2); the two-stage flight lands on
# about one point per rms width, 1e-5 (2.9e-6 seen).
for pre in scaled long again short sheet fall padded; do
  law_within "$work/xranks4.txt" "^${pre}_" 1e-8 "long -n 4: $pre flight follows the free Gaussian laws"
done
law_within "$work/xranks3.txt" "^(twostage|target)_" 1e-5 "long -n 3: the two-stage flights (a spacing, a target grid) follow the free Gaussian laws"
has_choice() { grep -q "^text $1" "$work/xranks4.txt"; }
has_choice "choice scaled stages 1 same_ok false scaled_ok true" && has_choice "short same-grid" &&
  has_choice "twostage scaled stages 2 scaled_ok true" && has_choice "again scaled" &&
  has_choice "target scaled stages 2 on_target true" &&
  ok "long -n 4: fly_long takes the scaled form for 25 ms, the same grid for 0.4 ms, two stages for a spacing and onto a target grid" ||
  fail "long -n 4: unexpected choices: $(grep -E '^text (choice|short|twostage|again) ' "$work/xranks4.txt")"

# Expansion in the scaled frame (probe_expand.lua): w:expand on a 3D grid
# (22 planes: 6, 6, 6, 4 on 4 ranks) with g = 0, and on a 2D sheet (21
# planes) with a mean field, continued, under gravity.  Every step's kinetic
# factor is applied on the transposed slab between FFTW-MPI transforms, the
# potential pass runs over each rank's planes, and the step sizes come from
# exact minima and maxima over the ranks, so all ranks take the same steps.
expand="$root/tests/runner/dist/probe_expand.lua"
one_run "expand" "$work/pplain.txt" "$expand"
for n in 1 2 3 4; do
  mpi_run "$n" "expand" "$work/pranks$n.txt" "$expand"
  [ "$(grep '^text' "$work/pplain.txt")" = "$(grep '^text' "$work/pranks$n.txt")" ] &&
    ok "expand -n $n: the same step counts, handovers and step logs as one process" ||
    fail "expand -n $n: steps or logs differ: $(diff <(grep '^text' "$work/pplain.txt") <(grep '^text' "$work/pranks$n.txt") | head -4)"
  agree "$work/pranks1.txt" "$work/pranks$n.txt" flown,law 0 "expand -n $n: grids, frames and figures bit-identical to -n 1"
  agree "$work/pplain.txt" "$work/pranks$n.txt" flown,law 1e-14 "expand -n $n: grids, frames and figures within 1e-14 of one process"
done
# Textbook laws: the released ground state with g = 0 spreads as
# sigma0 sqrt(1 + omega^2 t^2) (1e-7: the grid's sampling, 2.3e-8 seen);
# the frame carries the fall -g t1^2 / 2 - g t1 t2 and the drift hbar k t / m
# (1e-9).
law_within "$work/pranks4.txt" "^ballistic_width" 1e-7 "expand -n 4: released widths follow sigma0 sqrt(1 + omega^2 t^2)"
law_within "$work/pranks3.txt" "^mf_" 1e-9 "expand -n 3: the interacting cloud falls and drifts with its frame"

# Split-step evolution (probe_evolve.lua): relax without and with a mean
# field, a kick, evolve with g in the trap, a slit; 18 x 24 points, so 4
# ranks hold 5, 5, 5, 3 planes.
evolve="$root/tests/runner/dist/probe_evolve.lua"
one_run "evolve" "$work/eplain.txt" "$evolve"
for n in 1 2 4; do
  mpi_run "$n" "evolve" "$work/eranks$n.txt" "$evolve"
  agree "$work/eplain.txt" "$work/eranks$n.txt" exact 0 "evolve -n $n: the start is bit-identical to one process"
  agree "$work/eranks1.txt" "$work/eranks$n.txt" flown,law 0 "evolve -n $n: relax, kick, evolve with g, envelope and acceleration, slit, imprint and masks bit-identical to -n 1"
  agree "$work/eplain.txt" "$work/eranks$n.txt" flown,law 1e-14 "evolve -n $n: relax, kick, evolve with g, envelope and acceleration, slit, imprint and masks within 1e-14 of one process"
done
# Closed forms: the linear ground-state energy hbar (wx + wy) / 2, and the
# kicked centre (hbar k / m wx) sin(wx t) in a harmonic trap, interacting or
# not (Kohn's theorem); both textbook.  Tolerances: the energy to 1e-9
# (sampling and the O(dtau^2) offset of imaginary time at dtau = 20 us), the
# centre to 1e-4 (the O(dt^2) splitting error at dt = 20 us).
law_within "$work/eranks4.txt" "^energy0$" 1e-9 "-n 4: relaxed energy is hbar (wx + wy) / 2"
law_within "$work/eranks4.txt" "^kohn$" 1e-4 "-n 4: the kicked centre follows (hbar k / m w) sin(w t)"
# An acceleration (uniform force, each rank sampling -m a.x at its points)
# and an envelope on the trap: the centre follows (a / w^2)(1 - cos w t)
# (to the O(dt^2) splitting error, 1e-4) and the relaxed state sags by
# a / w^2 (1e-5; textbook, Ehrenfest's theorem exact for a quadratic trap).
law_within "$work/eranks4.txt" "^tilt[xy]$" 1e-4 "-n 4: under an acceleration the centre follows (a / w^2)(1 - cos w t)"
law_within "$work/eranks4.txt" "^sag[xy]$" 1e-5 "-n 4: relaxed under an acceleration the state sags by a / w^2"

# Files (probe_files.lua): rank 0 gathers and writes.  start.h5 (a density
# no transform touched) must be byte-identical to the single process's file;
# flown.h5 (psi, phi and the momentum density after a flight) must hold the
# same items and attributes (but the step logs, whose guard columns a
# distributed flight fills at once instead of when a deferred flight is
# carried out), and values within 1e-14 of the largest; h5py
# (Debian python3-h5py) reads both.  10 planes: 3, 3, 3, 1 on 4 ranks.
files="$root/tests/runner/dist/probe_files.lua"
# h5same.py A B TOL: the same items and attributes (but the step logs), and
# values within TOL of each dataset's largest; prints the worst.
cat >"$work/h5same.py" <<'PY'
import sys, h5py, numpy as np
def items(p):
    data, attrs = {}, {}
    with h5py.File(p, "r") as f:
        def visit(name, obj):
            attrs[name] = {k: str(v) for k, v in obj.attrs.items() if k not in ("DIMENSION_LIST", "REFERENCE_LIST")}
            if isinstance(obj, h5py.Dataset):
                data[name] = obj[()]
        f.visititems(visit)
    return data, attrs
(a, aa), (b, ba) = items(sys.argv[1]), items(sys.argv[2])
assert sorted(a) == sorted(b) and len(a) >= 10, (sorted(a), sorted(b))
for k in aa:
    for name in aa[k]:
        if name in ("step_log", "step_logs"):
            # A distributed flight is carried out at once, not deferred, so
            # the guards' edge columns of the log are filled a step earlier.
            continue
        assert aa[k][name] == ba[k][name], (k, name, aa[k][name], ba[k][name])
worst = 0.0
for k in a:
    x, y = np.asarray(a[k]), np.asarray(b[k])
    assert x.shape == y.shape, k
    worst = max(worst, float(np.max(np.abs(x - y)) / max(np.max(np.abs(x)), 1e-300)))
assert worst <= float(sys.argv[3]), worst
print("%.2g" % worst)
PY
expect 0 "files: one process" -- "$runner" run "$files" --out "$work/fplain"
for n in 2 4; do
  expect 0 "files: mpirun -n $n" -- timeout 120 mpirun -n "$n" --oversubscribe "$runner" run "$files" --out "$work/franks$n"
  cmp -s "$work/fplain/start.h5" "$work/franks$n/start.h5" &&
    ok "files -n $n: start.h5 is byte-identical to the single process's" || fail "files -n $n: start.h5 differs"
  worst=$(/usr/bin/python3 "$work/h5same.py" "$work/fplain/flown.h5" "$work/franks$n/flown.h5" 1e-14) && ok "files -n $n: flown.h5 has the single process's items and attributes, values within 1e-14 (worst $worst)" ||
    fail "files -n $n: flown.h5 differs from the single process's"
  [ "$(ls "$work/franks$n")" = "$(ls "$work/fplain")" ] && ok "files -n $n: the same files in the output folder" ||
    fail "files -n $n: other files in the output folder: $(ls "$work/franks$n")"
done

# Fields written piece by piece (probe_bigfile.lua): rank 0 writes one
# chunk of rows at a time as the ranks send them, and never holds a whole
# field.  big_start.h5 (psi and |psi|^2, no transform) must be the single
# process's file byte for byte at 1 to 4 ranks (512 planes: 171, 171, 170 on
# 3); big_flown.h5 (psi, phi, |phi|^2 of a 2D sheet and a 3D box after
# flights, momentum chunks wrapping round the FFT order) the same bytes at
# every rank count, and the single process's items and attributes with
# values within 1e-14 of each dataset's largest.  On 4 ranks a 6.5 MB cap
# per rank holds a slab of the 8 MiB sheet and a few 1 MiB chunks, not the
# whole field: gathering it onto rank 0 would be refused.
big="$root/tests/runner/dist/probe_bigfile.lua"
expect 0 "big files: one process" -- "$runner" run "$big" --out "$work/gplain"
for n in 1 2 3 4; do
  expect 0 "big files: mpirun -n $n" -- timeout 180 mpirun -n "$n" --oversubscribe "$runner" run "$big" --out "$work/granks$n"
  cmp -s "$work/gplain/big_start.h5" "$work/granks$n/big_start.h5" &&
    ok "big files -n $n: big_start.h5 (psi, |psi|^2) is byte-identical to the single process's" ||
    fail "big files -n $n: big_start.h5 differs from the single process's"
  cmp -s "$work/granks1/big_flown.h5" "$work/granks$n/big_flown.h5" &&
    ok "big files -n $n: big_flown.h5 is byte-identical to -n 1's" || fail "big files -n $n: big_flown.h5 differs from -n 1's"
  worst=$(/usr/bin/python3 "$work/h5same.py" "$work/gplain/big_flown.h5" "$work/granks$n/big_flown.h5" 1e-14) &&
    ok "big files -n $n: big_flown.h5 has the single process's items and attributes, values within 1e-14 (worst $worst)" ||
    fail "big files -n $n: big_flown.h5 differs from the single process's"
done

# Loading a saved wave (probe_load.lua): each rank reads only its share of
# the file (position: its planes; momentum: its planes of axis 1; onto a
# script's own grid: the file entries around its coordinates, interpolated
# point by point).  Written once by one process; loaded by one process and
# by -n 1..4: "exact" figures the same bits, the others the same bits at
# every rank count and within 1e-14 of one process.  On 4 ranks a 2.5 MB cap
# per rank, under the file's 3 MiB of values, still fits.
load="$root/tests/runner/dist/probe_load.lua"
expect 0 "load: one process writes saved.h5" -- "$runner" run "$load" --out "$work/lsave"
one_run "load" "$work/lplain.txt" "$load" --data "$work/lsave" --set "source=$work/lsave/saved.h5"
for n in 1 2 3 4; do
  mpi_run "$n" "load" "$work/lranks$n.txt" "$load" --data "$work/lsave" \
    --set "source=$work/lsave/saved.h5"
  agree "$work/lplain.txt" "$work/lranks$n.txt" exact 0 "load -n $n: waves loaded in position, and interpolated onto another grid, bit-identical to one process"
  agree "$work/lranks1.txt" "$work/lranks$n.txt" flown 0 "load -n $n: momentum loads and transformed figures bit-identical to -n 1"
  agree "$work/lplain.txt" "$work/lranks$n.txt" flown 1e-14 "load -n $n: momentum loads and transformed figures within 1e-14 of one process"
done

# Builders (probe_builders.lua): pf.gaussian, pf.ground_state, pf.oscillator,
# pf.momentum_orders and pf.thomas_fermi fill each rank's planes; every
# figure is the single process's bits (26 planes: 7, 7, 7, 5 on 4 ranks).
# pf.flat_top fills the transposed momentum slab; its figures follow a
# transform.
builders="$root/tests/runner/dist/probe_builders.lua"
one_run "builders" "$work/bplain.txt" "$builders"
[ -z "$err" ] && ok "builders: the grid resolves the states (no warnings)" || fail "builders: warnings: $err"
for n in 2 4; do
  mpi_run "$n" "builders" "$work/branks$n.txt" "$builders"
  agree "$work/bplain.txt" "$work/branks$n.txt" exact 0 "builders -n $n: gaussian, ground state, oscillator, momentum orders and Thomas-Fermi bit-identical to one process"
  agree "$work/branks2.txt" "$work/branks$n.txt" flown 0 "builders -n $n: flat top (built on the transposed momentum slab) bit-identical to -n 2"
  agree "$work/bplain.txt" "$work/branks$n.txt" flown 1e-14 "builders -n $n: flat top within 1e-14 of one process"
done
# The Thomas-Fermi widths against R / sqrt(d + 4) (the inverted parabola's
# second moment in 3D; the grid samples its sharp edge: 4e-4 seen).
law_within "$work/branks4.txt" "^tf_width" 1e-3 "-n 4: Thomas-Fermi widths are R / sqrt(7)"

# Single samples (probe_samples.lua): w:psi, w:phi, w:set_psi, w:set_phi on
# a distributed wave.  The rank holding the sample (its position slab, or
# its planes of the transposed momentum layout) reads it and broadcasts it;
# a write touches only the holder's slab.  18 x 16 x 12 points: samples on
# both sides of every slab boundary at 4 ranks.  Position samples, and the
# norm after a sample held by the last rank was written onto every rank's
# slab, are the single process's bits (a rank that received another value
# would change the norm); momentum samples the same bits at every rank
# count and within 1e-14 of one process.  Laws: phi of the Gaussian (its
# Fourier transform, textbook) to 1e-4 of the peak (the grid's sampling);
# the norm changes by the written samples' |psi|^2 dV (the Riemann-sum norm
# of docs/conventions.md, common practice) and, after set_phi, by their
# |phi|^2 dk (Parseval, textbook), both to 1e-12.
samples="$root/tests/runner/dist/probe_samples.lua"
one_run "samples" "$work/splain.txt" "$samples"
has "bad index refused" "samples: one process refuses an index outside the grid"
for n in 1 2 4; do
  mpi_run "$n" "samples" "$work/sranks$n.txt" "$samples"
  has "bad index refused" "samples -n $n: an index outside the grid refused with the single process's message"
  agree "$work/splain.txt" "$work/sranks$n.txt" exact 0 "samples -n $n: psi read on every slab, and set_psi of a broadcast value, bit-identical to one process"
  agree "$work/sranks1.txt" "$work/sranks$n.txt" flown,law 0 "samples -n $n: phi and set_phi on the transposed slabs bit-identical to -n 1"
  agree "$work/splain.txt" "$work/sranks$n.txt" flown 1e-14 "samples -n $n: phi and set_phi within 1e-14 of one process"
done
phiw=$(awk '$1 == "law" && $2 == "phiworst" { printf "%.2g", $3 }' "$work/sranks4.txt")
awk -v m="$phiw" 'BEGIN { exit !(m != "" && m < 1e-4) }' &&
  ok "samples -n 4: phi on every transposed slab is the Gaussian's Fourier transform to $phiw of the peak" ||
  fail "samples -n 4: phi off the Gaussian's Fourier transform by $phiw of the peak"
law_within "$work/sranks4.txt" "^setnorm$" 1e-12 "samples -n 4: set_psi changes the norm by the written |psi|^2 dV"
law_within "$work/sranks4.txt" "^parseval$" 1e-12 "samples -n 4: set_phi changes the norm by the written |phi|^2 dk (Parseval)"

# pf.potential objects (probe_potential.lua): each rank samples, keeps and
# exponentiates its own points (from a function or from a table of every
# grid point), the object's tilted table V - m a.x under an acceleration
# too; range() combines the ranks' extremes.  26 x 24 points: 7, 7, 7, 5
# planes on 4 ranks.  "exact" lines (the ranges) the single process's bits;
# "flown" lines (relax, energy, 20 short evolve calls reusing the kept
# exponentials, a mean field, an acceleration, a relax through an object
# made from a wave) the same bits at every rank count and within 1e-14 of
# one process (the docs' promise for evolve); "same" lines the object
# against the same potential given as a function, relative, to 1e-13 (the
# kept exponentials and the per-call ones round alike; rounding only).
# Laws (textbook): hbar (wx + wy) / 2, Kohn's theorem, the tilted centre
# (a / w^2)(1 - cos w t) and the sag a / w^2.
pot="$root/tests/runner/dist/probe_potential.lua"
one_run "potential objects" "$work/pplain.txt" "$pot"
[ -z "$err" ] && ok "potential objects: the grid resolves the states (no warnings)" || fail "potential objects: warnings: $err"
for n in 1 2 4; do
  mpi_run "$n" "potential objects" "$work/pranks$n.txt" "$pot"
  has "cache builds 1 reuses 9" "potential objects -n $n: the tilted table built once and reused 9 times"
  agree "$work/pplain.txt" "$work/pranks$n.txt" exact 0 "potential objects -n $n: range() from a function and from a table bit-identical to one process"
  agree "$work/pranks1.txt" "$work/pranks$n.txt" flown 0 "potential objects -n $n: relax, energy, chunked evolve, mean field and acceleration bit-identical to -n 1"
  agree "$work/pplain.txt" "$work/pranks$n.txt" flown 1e-14 "potential objects -n $n: relax, energy, chunked evolve, mean field and acceleration within 1e-14 of one process"
  same=$(awk '$1 == "same" { for (i = 3; i <= NF; i++) if ($i > m) m = $i } END { printf "%.2g", m }' "$work/pranks$n.txt")
  [ "$(grep -c '^same' "$work/pranks$n.txt")" -eq 5 ] && awk -v m="$same" 'BEGIN { exit !(m < 1e-13) }' &&
    ok "potential objects -n $n: the object gives the function's results to $same" ||
    fail "potential objects -n $n: object and function differ by $same"
done
law_within "$work/pranks4.txt" '^energy0$' 1e-9 "potential objects -n 4: relaxed energy is hbar (wx + wy) / 2"
law_within "$work/pranks4.txt" '^kohn$' 1e-4 "potential objects -n 4: the kicked centre follows (hbar k / m w) sin(w t)"
law_within "$work/pranks4.txt" '^tilt' 1e-4 "potential objects -n 4: under an acceleration the centre follows (a / w^2)(1 - cos w t)"
law_within "$work/pranks4.txt" '^sag' 1e-5 "potential objects -n 4: relaxed through an object under an acceleration the state sags by a / w^2"

# Moving frames (probe_frames.lua): w:frame, w:x_axis and w:k_axis read
# the frame every rank keeps alike; w:fall runs its momentum pass on the
# transposed slabs and its kick on the position slabs, and from a moved
# frame first folds the frame's momentum onto the slabs; w:arrival_times at
# a lab plane under an acceleration flies a copy on rank 0 from the
# gathered wave.  26 x 32 points: 7, 7, 7, 5 planes on 4 ranks.  Laws
# (textbook kinematics and the free Gaussian): the frame's X = -g t^2 / 2 and
# V = -g t (1e-12), the fall's centre v0 t + a t^2 / 2 (1e-9) and wave
# number k0 + m a t / hbar (1e-6, the grid's sampling of the start), the
# width law (1e-9), the lab centre after a frame flight and a fall
# a (t3 + t4)^2 / 2 (1e-9); the mean arrival time at a plane 40 um below is
# the classical fall time to 3e-3 (the packet's width against the drop,
# (sigma / h)^2 = 2e-3) and the probability arrived is 1 to 1e-9.
frames="$root/tests/runner/dist/probe_frames.lua"
one_run "frames" "$work/fmplain.txt" "$frames"
[ -z "$err" ] && ok "frames: the grid resolves the states (no warnings)" || fail "frames: warnings: $err"
for n in 1 2 4; do
  mpi_run "$n" "frames" "$work/fmranks$n.txt" "$frames"
  agree "$work/fmplain.txt" "$work/fmranks$n.txt" exact 0 "frames -n $n: w:frame, the lab axes and the frame after a fall from a moved frame bit-identical to one process"
  agree "$work/fmranks1.txt" "$work/fmranks$n.txt" flown,law 0 "frames -n $n: fall, fall from a moved frame and arrival under an acceleration bit-identical to -n 1"
  agree "$work/fmplain.txt" "$work/fmranks$n.txt" flown 1e-14 "frames -n $n: fall, fall from a moved frame and arrival under an acceleration within 1e-14 of one process"
done
check_law() { law_within "$work/fmranks4.txt" "$1" "$2" "frames -n 4: $3"; } # NAME-REGEX TOL WHAT
check_law '^frame[XV]$' 1e-12 "the frame falls by g t^2 / 2 at g t"
check_law '^fall[xy]$' 1e-9 "w:fall moves the centre by v0 t + a t^2 / 2"
check_law '^fallw[xy]$' 1e-9 "w:fall spreads the packet by the free width law"
check_law '^fallkx$' 1e-6 "w:fall adds m a t / hbar to the wave number"
check_law '^movedfall$' 1e-9 "a frame flight then w:fall put the lab centre at a (t3 + t4)^2 / 2"
check_law '^arrivalmean$' 3e-3 "the mean arrival time at a plane 40 um below is the classical fall time"
check_law '^arrived$' 1e-9 "all the probability arrives at the plane in the window"

# Default planning (probe_default.lua): measured FFTW plans, as users run.
# Every other probe plans with "estimate"; here the runner's default
# (pf.run_info().planning == "measure") makes measured plans, rank 0 reads
# the wisdom file and broadcasts it (fftw_mpi_broadcast_wisdom), and gathers
# every rank's wisdom after planning (fftw_mpi_gather_wisdom) and saves it
# (in PATH-mpi: one-process runs keep PATH).
# Each configuration starts from a fresh wisdom file in $work (not the
# suite's shared one).  Checks: untransformed figures the single process's
# bits; after the flight, evolve with g and the density-table covariance
# within 1e-14 of one process (the docs' promise; measured plans differ
# between rank counts, so no bit-identity across rank counts is asked);
# the saved wisdom is read back without a warning, and two reruns with it
# are byte-identical (outputs.md: reruns with the same wisdom make the same
# plans; the first run itself may differ from them in the last bits, since
# ranks with equal slabs may have measured different local plans and the
# gathered file keeps one).  "flown" lines are compared (means beside
# their widths, so a mean that is zero up to the grid's asymmetry is judged
# on the cloud's scale); "law" lines repeat those figures beside a closed
# form: the free Gaussian's variance s^2 (1 + (hbar t / 2 m s^2)^2) and
# Kohn's theorem (both textbook).  Seen: 4.8e-16 at -n 1, up to 4.8e-15 at
# -n 2 and 4 (evolve with g: FFT rounding grows over 100 nonlinear steps;
# one process alone moves by 3.4e-14 on a rounding-zero y mean between
# estimated and measured plans, hence the widths beside the means).
dflt="$root/tests/runner/dist/probe_default.lua"
one_run "default planning" "$work/dplain.txt" "$dflt" --wisdom "$work/dwis0"
has "planning measure" "default planning: the probe runs with measured plans"
for n in 1 2 4; do
  expect 0 "default planning: mpirun -n $n (fresh wisdom)" -- timeout 180 mpirun -n "$n" --oversubscribe "$runner" run "$dflt" --wisdom "$work/dwis$n"
  printf '%s\n' "$out" >"$work/dranks$n.txt"
  has "ranks $n distribute true" "default planning: mpirun -n $n distributed"
  has "planning measure" "default planning -n $n: measured plans"
  [ -s "$work/dwis$n-mpi" ] && grep -q fftw_mpi "$work/dwis$n-mpi" &&
    ok "default planning -n $n: rank 0 saved the gathered wisdom, FFTW-MPI's plans included, in PATH-mpi" ||
    fail "default planning -n $n: no FFTW-MPI wisdom saved in $work/dwis$n-mpi"
  agree "$work/dplain.txt" "$work/dranks$n.txt" exact 0 "default planning -n $n: untransformed figures bit-identical to one process"
  agree "$work/dplain.txt" "$work/dranks$n.txt" flown 1e-14 "default planning -n $n: flight, evolve with g and covariance within 1e-14 of one process"
  for again in 1 2; do
    expect 0 "default planning: mpirun -n $n, rerun $again with the saved wisdom" -- timeout 180 mpirun -n "$n" --oversubscribe "$runner" run "$dflt" --wisdom "$work/dwis$n"
    printf '%s\n' "$out" >"$work/dagain$n-$again.txt"
    case "$err" in *"could not be read"*) fail "default planning -n $n: the saved wisdom was not read: $err" ;; esac
    ok "default planning -n $n: rerun $again read the saved wisdom"
  done
  cmp -s "$work/dagain$n-1.txt" "$work/dagain$n-2.txt" &&
    ok "default planning -n $n: reruns with the saved wisdom are byte-identical" ||
    fail "default planning -n $n: reruns with the saved wisdom differ"
  # One process with the same --wisdom PATH: FFTW refuses wisdom stamped
  # with another set of planners, so distributed runs keep theirs in
  # PATH-mpi and neither kind of run spoils the other's file.
  expect 0 "default planning: one process with -n $n's wisdom path" -- "$runner" run "$dflt" --wisdom "$work/dwis$n"
  case "$err" in *"could not be read"*) fail "default planning -n $n: a one-process run could not read PATH: $err" ;; esac
  ! grep -q fftw_mpi "$work/dwis$n" 2>/dev/null &&
    ok "default planning -n $n: one-process and distributed runs with one --wisdom PATH keep separate files, read without a warning" ||
    fail "default planning -n $n: FFTW-MPI wisdom ended up in the one-process file $work/dwis$n"
  expect 0 "default planning: mpirun -n $n after the one-process run" -- timeout 180 mpirun -n "$n" --oversubscribe "$runner" run "$dflt" --wisdom "$work/dwis$n"
  case "$err" in *"could not be read"*) fail "default planning -n $n: PATH-mpi not read after a one-process run: $err" ;; esac
  [ "$out" = "$(cat "$work/dagain$n-1.txt")" ] &&
    ok "default planning -n $n: after a one-process run with the same PATH, still the reruns' bytes" ||
    fail "default planning -n $n: the one-process run changed the distributed run's plans"
  agree "$work/dplain.txt" "$work/dagain$n-1.txt" flown 1e-14 "default planning -n $n: rerun within 1e-14 of one process"
done
law_within "$work/dranks4.txt" "^var" 1e-8 "default planning -n 4: the covariance's diagonal is the free Gaussian's variance law"
law_within "$work/dranks4.txt" "^kohn$" 1e-4 "default planning -n 4: the kicked centre with g follows (hbar k / m w) sin(w t)"

# The memory cap counts this rank's share (probe_cap.lua): a 32^3 grid over
# a 700 kB cap is refused as one process and fits on 4 ranks (8 planes each).
cap="$root/tests/runner/dist/probe_cap.lua"
expect 0 "cap: one process" -- "$runner" run "$cap"
has "refused" "cap: one process refuses the grid over the cap"
has "over the memory cap" "cap: the refusal names the memory cap"
expect 0 "cap: mpirun -n 4" -- timeout 120 mpirun -n 4 --oversubscribe "$runner" run "$cap"
has "fits norm" "cap: on 4 ranks each rank's share fits the cap"

done_checks
