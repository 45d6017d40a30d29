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
flight_csv=$(mktemp)
for b in "$root/$build"/bench/bench_*; do
  [ -x "$b" ] || continue
  echo "== $(basename "$b")"
  if [ "$(basename "$b")" = bench_flight ]; then
    BENCH_FLIGHT_CSV=$flight_csv "$b" $arg
  else
    "$b" $arg
  fi
  echo
done
py=/usr/bin/python3
if [ -x "$py" ] && "$py" -c 'import numpy, scipy' 2>/dev/null && [ -s "$flight_csv" ]; then
  echo "== numpy/scipy comparison (same step: fftn, phase multiply, ifftn)"
  np_csv=$(mktemp)
  "$py" "$root/tests/bench/numpy_flight.py" $arg > "$np_csv"
  "$py" - "$flight_csv" "$np_csv" <<'PY'
import sys
ours = {(r[0], r[1]): float(r[2]) for r in (l.strip().split(",") for l in open(sys.argv[1])) if r[0]}
for line in open(sys.argv[2]):
    shape, threads, ms = line.strip().split(",")
    if (shape, threads) in ours:
        o = ours[(shape, threads)]
        print(f"numpy   {shape:<16} threads {threads}   numpy step {float(ms):9.3f} ms   psiflight step {o:9.3f} ms   psiflight is {float(ms)/o:5.2f}x faster")
PY
  rm -f "$np_csv"
else
  echo "(numpy/scipy from Debian not installed: comparison skipped)"
fi
rm -f "$flight_csv"
