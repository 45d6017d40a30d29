#!/usr/bin/env bash
# run-bench.sh BUILD [quick] - runs every benchmark program and, when
# Debian's numpy and scipy are installed, the numpy comparison script.
# Timings are never asserted; they are reported with ratios against raw FFTW
# timed in the same run.
set -u
build=${1:-build}
mode=${2:-${BENCH_MODE:-full}}
root=$(cd "$(dirname "$0")/../.." && pwd)
export PSIFLIGHT_WISDOM=${PSIFLIGHT_WISDOM:-$root/$build/bench-wisdom}
arg=""; [ "$mode" = quick ] && arg=quick
echo "psiflight benchmarks ($(nproc) cores; FFTW measured planning, wisdom in $PSIFLIGHT_WISDOM)"
echo "first run on a machine spends extra time planning; later runs reuse the wisdom"
echo
for b in "$root/$build"/bench/bench_*; do
  [ -x "$b" ] || continue
  case "$(basename "$b")" in bench_dist | bench_dist_measure) continue ;; esac # below, under mpirun
  echo "== $(basename "$b")"
  "$b" $arg
  echo
done
# Distributed flights (docs/distributed.md): strong scaling (one 3D grid on
# 1 and 2 ranks) and weak scaling (the grid's first axis grows with the
# ranks), each beside the single-process flight of the same grid.
dist="$root/$build/bench/bench_dist"
if [ -x "$dist" ] && command -v mpirun >/dev/null && ldd "$dist" | grep -q libfftw3_mpi; then
  export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1
  n=128; steps=10; [ "$mode" = quick ] && n=64 && steps=5
  echo "== bench_dist (exact 3D flight, position -> position; time per step; and one scaled-flight stage)"
  echo "strong scaling: ${n}^3"
  "$dist" $n $n $n $steps
  for r in 1 2; do mpirun -n $r --oversubscribe "$dist" $n $n $n $steps; done
  echo "weak scaling: $((n / 2)) x ${n} x ${n} points per rank"
  "$dist" $((n / 2)) $n $n $steps
  for r in 1 2; do mpirun -n $r --oversubscribe "$dist" $((n / 2 * r)) $n $n $steps; done
  echo
  # Per-slab measurements (pf_dist_measure.c) beside the single process's
  # whole-field path on the same grid.
  echo "== bench_dist_measure (column densities and covariance of a ${n}^3 density; time per call)"
  "$dist"_measure $n $n $n $steps
  for r in 1 2; do mpirun -n $r --oversubscribe "$dist"_measure $n $n $n $steps; done
  echo
else
  echo "(no FFTW-MPI build or no mpirun: distributed rows skipped)"
fi
py=/usr/bin/python3
if [ -x "$py" ] && "$py" -c 'import numpy, scipy' 2>/dev/null; then
  # Each size and thread count is timed three times, numpy and psiflight in
  # alternation (each in its own process, best of three blocks), and the
  # median of the three ratios is printed: timing all of one and then all of
  # the other would let the machine's drifting speed into the ratio.
  echo "== numpy/scipy comparison (same step: fftn, phase multiply, ifftn; alternating, median of 3)"
  shapes=("1D 1048576" "1D 4194304" "2D 1024x1024" "2D 2048x2048" "3D 128x128x128" "3D 256x256x256")
  indices="0 1 2 3 4 5"; [ "$mode" = quick ] && indices="0 2 4"
  for i in $indices; do
    for threads in 1 2; do
      ratios=() last_np="" last_pf=""
      for round in 1 2 3; do
        np_ms=$("$py" "$root/tests/bench/numpy_flight.py" one "$i" "$threads") || break
        pf_ms=$("$root/$build/bench/bench_flight" step "$i" "$threads") || break
        ratios+=("$("$py" -c "print($np_ms / $pf_ms)")")
        last_np=$np_ms last_pf=$pf_ms
      done
      [ ${#ratios[@]} -eq 3 ] || { echo "numpy   ${shapes[$i]}: timing failed"; continue; }
      "$py" - "${shapes[$i]}" "$threads" "$last_np" "$last_pf" "${ratios[@]}" <<'PY'
import statistics, sys
shape, threads, np_ms, pf_ms = sys.argv[1], sys.argv[2], float(sys.argv[3]), float(sys.argv[4])
r = sorted(float(x) for x in sys.argv[5:])
print(f"numpy   {shape:<16} threads {threads}   numpy step {np_ms:9.3f} ms   psiflight step {pf_ms:9.3f} ms   "
      f"psiflight is {statistics.median(r):5.2f}x faster (rounds {r[0]:.2f}-{r[-1]:.2f})")
PY
    done
  done
else
  echo "(numpy/scipy from Debian not installed: comparison skipped)"
fi
