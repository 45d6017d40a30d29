#!/usr/bin/env bash
# test_distributed_measure.sh - measurements and masks on one grid split
# over MPI ranks (pf.setup{distribute = true}, docs/distributed.md): the
# probes in tests/runner/distm/ run as one process and under mpirun -n 1,
# 2, 3 and 4 (oversubscribed; 18 planes do not divide among 4 ranks).
# Reference: the single-process engine (its masks, densities, samples,
# cameras, fits and energies are checked against outside references in
# tests/unit, tests/lua and tests/ref), plus closed forms named in the
# probes.  Lines tagged "exact" (no transform touched the data) must be the
# same bits as one process at every rank count; "flown" lines the same bits
# at every rank count and within 1e-14 of one process (FFTW's serial and MPI
# plans round differently).  probe_slab.lua and probe_slabcap.lua cover the
# measurements computed on each rank's planes (pf_dist_measure.c).  Skipped with a note when the runner has no
# FFTW-MPI or mpirun is missing.
source "$(dirname "$0")/lib.sh"
set -e
mpi_ready "distributed measurements" || { done_checks; exit 0; }

# law.py FILE TOL NAME...: "law NAME got expected" lines within TOL relative.
cat >"$work/law.py" <<'PY'
import sys
path, tol, names = sys.argv[1], float(sys.argv[2]), sys.argv[3:]
got = {l.split()[1]: [float(t) for t in l.split()[2:]] for l in open(path) if l.startswith("law ")}
worst = 0.0
for n in names:
    v, e = got[n][0], got[n][1]
    worst = max(worst, abs(v - e) / abs(e))
assert worst <= tol, ("worst", worst, "over", tol)
print("%.2g" % worst)
PY

# run NAME PROBE: one process, then mpirun -n 1..4; the printed lines land
# in NAME.plain.txt and NAME.N.txt, the files in the folders NAME.plain and
# NAME.N.
run_probe() {
  local name=$1 probe=$2
  one_run "$name" "$work/$name.plain.txt" "$probe" --out "$work/$name.plain"
  has "distribute false" "$name: one process: nothing distributed without mpirun"
  for n in 1 2 3 4; do
    mpi_run "$n" "$name" "$work/$name.$n.txt" "$probe" --out "$work/$name.$n"
    [ "$(grep -c '^ranks' "$work/$name.$n.txt")" -eq 1 ] && ok "$name -n $n: only rank 0 prints" ||
      fail "$name -n $n: only rank 0 prints"
  done
}

# compare_probe NAME WHAT: the exact and flown lines of every rank count.
compare_probe() {
  local name=$1 what=$2
  for n in 1 2 3 4; do
    agree "$work/$name.plain.txt" "$work/$name.$n.txt" exact 0 "$name -n $n: $what on untransformed data bit-identical to one process"
    if grep -q '^flown' "$work/$name.plain.txt"; then
      agree "$work/$name.1.txt" "$work/$name.$n.txt" flown 0 "$name -n $n: figures after transforms bit-identical to -n 1"
      agree "$work/$name.plain.txt" "$work/$name.$n.txt" flown 1e-14 "$name -n $n: figures after transforms within 1e-14 of one process"
    fi
  done
}

# Masks (probe_masks.lua): slits, mask gratings, rectangular and circular
# apertures, cell-switched and exact (sub-cell, soft) edges, along the split
# axis and across it; the exact shift; velocity selection (box and
# Gaussian, on the transposed momentum slab).
masks="$root/tests/runner/distm/probe_masks.lua"
run_probe masks "$masks"
compare_probe masks "slits, mask gratings and apertures"
has "refusal named" "masks -n 4: a function without a distributed path still refuses by name"
# Translation moves the centre by d exactly (common practice); 1e-6 leaves
# room for the Gaussian tails the periodic grid wraps (about 6 sigma away).
worst=$(/usr/bin/python3 "$work/law.py" "$work/masks.4.txt" 1e-6 shift1 shift2) &&
  ok "masks -n 4: w:shift moves the centre by the distance given ($worst)" || fail "masks -n 4: shift law missed"

# Velocity selection of a kicked packet by a Gaussian filter: the overlap
# of two Gaussians (textbook), to the grid's sampling.
worst=$(/usr/bin/python3 "$work/law.py" "$work/masks.3.txt" 1e-8 vgauss) &&
  ok "masks -n 3: w:select_velocity passes the Gaussian-overlap fraction ($worst)" ||
  fail "masks -n 3: velocity selection law missed"

# Measurements (probe_measure.lua): density tables, distributions and
# marginals, covariances, seeded samples, cameras, energies, fringe fits.
measure="$root/tests/runner/distm/probe_measure.lua"
run_probe measure "$measure"
compare_probe measure "density tables, covariances, samples, cameras and fringe fits"
# Plane figures (w:beyond, w:flux, w:arrival_times), w:current, w:wigner
# and w:position_momentum_covariance run
# on the wave gathered onto rank 0; the picture is drawn from the gathered
# density and only rank 0's file is kept.
for n in 2 3 4; do
  cmp -s "$work/measure.plain/cloud.png" "$work/measure.$n/cloud.png" &&
    ok "measure -n $n: pf.picture_map of a distributed wave is byte-identical to the single process's" ||
    fail "measure -n $n: cloud.png differs from the single process's"
  [ "$(ls "$work/measure.$n")" = "$(ls "$work/measure.plain")" ] && ok "measure -n $n: the same files in the output folder" ||
    fail "measure -n $n: other files in the output folder: $(ls "$work/measure.$n")"
done
grep -q '^accelerated_arrival ran' "$work/measure.4.txt" &&
  ok "measure -n 4: arrival_times under an acceleration runs on a distributed wave (figures: test_distributed.sh)" ||
  fail "measure -n 4: arrival_times under an acceleration failed: $(grep '^accelerated_arrival' "$work/measure.4.txt")"
grep -q '^accelerated_arrival ran' "$work/measure.plain.txt" &&
  ok "measure: one process: arrival_times under an acceleration runs" || fail "measure: one process: accelerated arrival"
# The probability beyond a plane of a Gaussian at rest: 1/2 at its centre
# (symmetry), the normal tail (1 - erf(1/sqrt 2)) / 2 one sigma out
# (normal distribution; value from Python's math.erf, quoted in the probe).
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.4.txt" 1e-7 beyond_half beyond_sigma) &&
  ok "measure -n 4: w:beyond gives the normal distribution's tails ($worst)" || fail "measure -n 4: beyond law missed"
# A chirp exp(i c x y) on a separable Gaussian: cov(x, p_y) = hbar c s_x^2,
# cov(y, p_x) = hbar c s_y^2 (Gaussian moments); 1e-5 is the sampling of the
# 1.5 um width by 1.4 um cells.
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.3.txt" 1e-5 pmcov12 pmcov21) &&
  ok "measure -n 3: position-momentum covariance of a chirped packet is hbar c s^2 ($worst)" ||
  fail "measure -n 3: position-momentum covariance law missed"
# 1e-6: the grid's tails of the 1.5 um packet (the sum is 5e-8 off).
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.2.txt" 1e-6 current) &&
  ok "measure -n 2: the integrated current of a moving packet is hbar k0 / m ($worst)" ||
  fail "measure -n 2: current law missed"
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.3.txt" 1e-9 wigner_peak) &&
  ok "measure -n 3: the reduced Gaussian's Wigner function peaks at 1 / (pi hbar) ($worst)" ||
  fail "measure -n 3: Wigner peak law missed"
# Bivariate normal covariance (textbook): the grid's sums of a resolved
# Gaussian converge fast; 1e-7 is the sampling of this 18 x 16 grid.
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.3.txt" 1e-7 cov11 cov12 cov22) &&
  ok "measure -n 3: position covariance is the bivariate normal's ($worst)" || fail "measure -n 3: covariance law missed"
# Gaussian energies in a harmonic trap with a mean field (textbook Gaussian
# integrals); 1e-6 covers the grid's resolution of the kinetic term.
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.4.txt" 1e-6 energy chemical) &&
  ok "measure -n 4: w:energy and the chemical potential follow the Gaussian closed forms ($worst)" ||
  fail "measure -n 4: energy law missed"
# Two-beam fringes under a Gaussian envelope (textbook): the fit recovers
# the period and visibility the wave was built with.
worst=$(/usr/bin/python3 "$work/law.py" "$work/measure.2.txt" 1e-9 fperiod fvisibility) &&
  ok "measure -n 2: fringes recover the period and visibility built in ($worst)" || fail "measure -n 2: fringe law missed"

# Per-slab measurements (probe_slab.lua, engine/core/dist/pf_dist_measure.c): on
# a 3D wave (22 x 18 x 16; 3 ranks hold 8, 8, 6 planes, 4 ranks 6, 6, 6, 4)
# every marginal and column density (along the split axis too), slices,
# radial profiles, covariances, region probabilities, fringe fits, cameras
# imaging along and across the split axis, the column picture and Born-rule
# samples (seeded, and from the run's generator kept in step), in
# position (the same bits as one process) and in momentum (the same bits at
# every rank count).
slab="$root/tests/runner/distm/probe_slab.lua"
run_probe slab "$slab"
compare_probe slab "per-slab marginals, columns, slices, radial profiles, covariances, regions, fringes and cameras"
for n in plain 1 2 3 4; do
  # "same" flags: the per-slab figure equals, bit for bit, the single
  # process's summation (written out in the probe) of the table gathered in
  # the same run; in momentum this is the promise that has no one-process
  # reference of its own (the MPI transforms round differently).
  flags=$(grep -E '^exact same_[xk]2? ' "$work/slab.$n.txt" | cut -d' ' -f3- | tr ' ' '\n' | sort -u | tr '\n' ' ')
  [ "$(grep -cE '^exact same_[xk]2? ' "$work/slab.$n.txt")" -eq 3 ] && [ "$flags" = "1 " ] &&
    ok "slab $n: per-slab marginals, radial profiles and covariances are the single process's sums of the gathered table" ||
    fail "slab $n: a per-slab figure differs from the single process's sum of the gathered table (flags: $flags)"
done
for n in 2 3 4; do
  cmp -s "$work/slab.plain/cloud3.png" "$work/slab.$n/cloud3.png" &&
    ok "slab -n $n: pf.picture_map of a 3D wave (the column density per slab) is byte-identical to the single process's" ||
    fail "slab -n $n: cloud3.png differs from the single process's"
done
# Marginals of a normal distribution are normal with the sub-matrix of the
# covariance (common practice): the profile along the split axis and the
# column density through it at the grid point nearest 0; 1e-8 covers the
# grid's sampling of the 1.7-2 um widths (measured 7e-10).
worst=$(/usr/bin/python3 "$work/law.py" "$work/slab.3.txt" 1e-8 xprofile column1) &&
  ok "slab -n 3: the profile and column density along the split axis are the Gaussian marginals ($worst)" ||
  fail "slab -n 3: Gaussian marginal law missed"
# The Fourier transform of a Gaussian (textbook): psi ~ exp(-r^T S^-1 r / 4)
# has the momentum covariance hbar^2 S^-1 / 4 (measured 1.4e-9 at worst).
worst=$(/usr/bin/python3 "$work/law.py" "$work/slab.4.txt" 1e-8 kcov11 kcov13 kcov22) &&
  ok "slab -n 4: the momentum covariance is hbar^2 S^-1 / 4 ($worst)" || fail "slab -n 4: momentum covariance law missed"

# A mask function (w:probability_in) is sampled at each rank's own points:
# rank 0 calls it at its ceil(22 / n) planes of 18 x 16 points; a function
# that fails only at the last rank's points (x > 9 um) fails every rank.
for n in plain 1 2 3 4; do
  want=$((22 * 288)); [ "$n" != plain ] && want=$(( (22 + n - 1) / n * 288 ))
  grep -qx "calls mask $want" "$work/slab.$n.txt" &&
    ok "slab $n: the mask function ran at rank 0's $want points only" ||
    fail "slab $n: mask function calls: $(grep '^calls mask' "$work/slab.$n.txt"), want $want"
  grep -qx "mask_error refused" "$work/slab.$n.txt" && ok "slab $n: a mask function failing on one rank's points fails every rank" ||
    fail "slab $n: the failing mask function was not refused"
done

# Seeded events drawn per slab (3000 with jitter along every axis): their
# variance along the split axis is S11 + dx^2 / 12 (Sheppard's correction,
# common practice) within 5 standard errors of a sample variance.
/usr/bin/python3 - "$work/slab.4.txt" <<'PY' && ok "slab -n 4: the events' variance along the split axis is the density's (within 5 standard errors)" ||
import sys
got, want, tol = [float(t) for t in next(l for l in open(sys.argv[1]) if l.startswith("stat xsample_var")).split()[2:]]
assert abs(got - want) / want <= tol, (got, want, tol)
PY
  fail "slab -n 4: the events' variance along the split axis is off"

# Memory (probe_slabcap.lua): under a memory cap below a slab plus the whole
# density, which the gathered path held on every rank, every per-slab
# measurement runs; the whole table (the control) is refused on every rank.
slabcap="$root/tests/runner/distm/probe_slabcap.lua"
for n in 3 4; do
  expect 0 "slabcap: mpirun -n $n" -- timeout 120 mpirun -n "$n" --oversubscribe "$runner" run "$slabcap" --out "$work/slabcap.$n"
  printf '%s\n' "$out" >"$work/slabcap.$n.txt"
  fits=$(grep -c '^fits ' "$work/slabcap.$n.txt")
  [ "$fits" -eq 16 ] && ! grep -q '^failed ' "$work/slabcap.$n.txt" &&
    ok "slabcap -n $n: all 16 per-slab measurements run under a cap below one whole density" ||
    fail "slabcap -n $n: $fits of 16 per-slab measurements ran under the cap: $(grep '^failed' "$work/slabcap.$n.txt" | head -3)"
  grep -q '^control distribution refused .*memory cap' "$work/slabcap.$n.txt" &&
    ok "slabcap -n $n: the control (the whole table) does not fit under that cap" ||
    fail "slabcap -n $n: the control fitted: the cap proves nothing"
done
agree "$work/slabcap.3.txt" "$work/slabcap.4.txt" exact 0 "slabcap: the capped measurements are the same bits at 3 and 4 ranks"

done_checks
