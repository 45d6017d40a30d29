#!/usr/bin/env bash
# test_determinism.sh - reruns of the flagship example in the DEFAULT mode
# (measured FFTW planning with a wisdom file) give byte-identical stdout,
# HDF5, CSV, PNG and manifest files (cmp): the first run with a fresh wisdom
# file, and two later runs that import it.  With 1 against 2 threads the
# promise of docs/outputs.md is checked: stdout identical, data equal to
# rounding level in the default mode (the thread count is part of the plan),
# and data files byte-identical with --planning estimate.  The pictures decode
# to their expected size with Python's zlib + struct (PNG specification).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
# The default mode, with this test's own wisdom file (the suite's or a
# user's cache would make the first run not a first run).
export PSIFLIGHT_WISDOM="$tmp/wisdom"
# Each run in its own working folder with the same relative --out, so the
# paths the script prints are the same too.  No --planning: the default.
run() { # name, extra options...
  local name=$1; shift
  mkdir -p "$tmp/$name"
  (cd "$tmp/$name" && "$runner" run "$root/examples/release_tof.lua" --out out --quiet "$@" >../$name.stdout)
  mv "$tmp/$name/out" "$tmp/$name.out"
}
same_files() { # a b label: every file of folder a equals its namesake in b (cmp)
  local n=0
  for f in "$1"/*; do
    cmp "$f" "$2/$(basename "$f")" || { echo "FAIL $(basename "$f") differs: $3"; exit 1; }
    n=$((n + 1))
  done
  [ "$n" -eq "$(ls "$2" | wc -l)" ] || { echo "FAIL different file lists: $3"; exit 1; }
  echo "ok all $n files byte-identical: $3 [cmp]"
}
[ ! -e "$PSIFLIGHT_WISDOM" ] || { echo "FAIL the wisdom file exists before the first run"; exit 1; }
run first
[ -s "$PSIFLIGHT_WISDOM" ] && echo "ok the first run saved FFTW wisdom (measured planning is the default)"
grep -q '"planning":	"measure"' "$tmp/first.out/manifest.json" && echo "ok the manifest says planning measure (default mode)"
run second
sleep 1.1   # so any embedded clock would differ
run third
for r in second third; do
  cmp "$tmp/first.stdout" "$tmp/$r.stdout" || { echo "FAIL stdout of the $r run differs from the first"; exit 1; }
done
echo "ok stdout identical between the first and two later runs [cmp]"
same_files "$tmp/first.out" "$tmp/second.out" "first run (fresh wisdom) against a later run"
same_files "$tmp/second.out" "$tmp/third.out" "two later runs with the same wisdom"

# The manifest names the plans by their description, not the wisdom text
# (FFTW re-exports wisdom in a varying order).
/usr/bin/python3 - "$tmp/first.out/manifest.json" <<'PY'
import json, re, sys
m = json.load(open(sys.argv[1]))
def ok(c, label):
    if not c: print("FAIL", label, m.get("plans")); sys.exit(1)
    print("ok", label)
ok("wisdom_digest" not in m, "no digest of the wisdom file in the manifest")
labels = [p["transform"] for p in m["plans"]]
ok("grid 1024x256, 1 thread" in labels and "grid 1024, 1 thread" in labels, "plans of both grids listed: %s" % labels)
ok(all(re.fullmatch("[0-9a-f]{16}", p["digest"]) for p in m["plans"]), "each plan has a 16-hex-digit digest")
PY

# 1 against 2 threads.  Default mode: the plan (and so the last bits) may
# differ, the printed table may not, and the data agree to rounding level.
run two --threads 2
# Two stdout lines print rounding-level figures (the deviation from the
# width law, the norm to 15 decimals), which follow the plan; every other
# line, the width table included, must be identical.
rounding='^(largest relative deviation|norm after)'
# The engine-memory line depends on the thread count by design (each thread
# has its own work buffers), so it is left out of the cross-thread comparison.
perthread='^engine memory in use'
cmp <(grep -Ev "$rounding|$perthread" "$tmp/first.stdout") <(grep -Ev "$rounding|$perthread" "$tmp/two.stdout") \
  || { echo "FAIL stdout differs between 1 and 2 threads beyond the rounding-level lines"; exit 1; }
[ "$(grep -Ec "$rounding" "$tmp/two.stdout")" -eq 2 ] || { echo "FAIL rounding-level lines not found"; exit 1; }
echo "ok stdout identical with 1 and 2 threads apart from the 2 rounding-level lines (default mode) [cmp]"
/usr/bin/python3 - "$tmp/two.stdout" <<'PY'
import re, sys
text = open(sys.argv[1]).read()
dev = float(re.search(r"textbook width law: (\S+)", text).group(1))
norm = float(re.search(r"of flight: (\S+)", text).group(1))
# The width law is exact for a free Gaussian (textbook); the flight is
# unitary, so the norm stays 1: both to rounding level (bound 1e-13).
if not (dev < 1e-13 and abs(norm - 1) < 1e-13): print("FAIL 2-thread rounding figures", dev, norm); sys.exit(1)
print("ok 2-thread run: width-law deviation %.1e and |norm - 1| %.1e at rounding level" % (dev, abs(norm - 1)))
PY
run two_again --threads 2
same_files "$tmp/two.out" "$tmp/two_again.out" "two runs with 2 threads (default mode)"
/usr/bin/python3 - "$tmp/first.out/widths.csv" "$tmp/two.out/widths.csv" <<'PY'
import csv, sys
a = list(csv.reader(open(sys.argv[1])))
b = list(csv.reader(open(sys.argv[2])))
if a[0] != b[0] or len(a) != len(b): print("FAIL tables differ in shape"); sys.exit(1)
worst = 0.0
for ra, rb in zip(a[1:], b[1:]):
    for col, (x, y) in enumerate(zip(ra, rb)):
        x, y = float(x), float(y)
        scale = max(abs(x), abs(y), 1e-9 if a[0][col] != "t [s]" else 1.0)
        worst = max(worst, abs(x - y) / scale)
# Rounding level of double-precision FFTs of this size: common practice
# bounds the relative error by a small multiple of eps log2(N) ~ 1e-14.
if worst > 1e-12: print("FAIL widths differ by %.2e between 1 and 2 threads" % worst); sys.exit(1)
print("ok widths with 1 and 2 threads agree to %.1e (rounding level, bound 1e-12)" % worst)
PY
grep -q '"transform":	"grid 1024x256, 2 threads"' "$tmp/two.out/manifest.json" \
  && echo "ok the manifest of the 2-thread run names its 2-thread plans"
# Estimate mode: the same plan whatever the thread count, so the data files
# are byte-identical (the manifests differ in threads and plan labels).
run est1 --planning estimate
run est2 --planning estimate --threads 2
for f in release_tof.h5 widths.csv cloud_after_tof.png widths.png carpet_x.png; do
  cmp "$tmp/est1.out/$f" "$tmp/est2.out/$f" || { echo "FAIL $f differs between 1 and 2 threads (estimate)"; exit 1; }
done
echo "ok data files byte-identical with 1 and 2 threads under --planning estimate [cmp]"

a="$tmp/first.out"
for kind in h5 csv png json; do
  ls "$a"/*."$kind" >/dev/null 2>&1 || { echo "FAIL no .$kind output"; exit 1; }
done
[ "$(ls "$a"/*.png | wc -l)" -ge 2 ] || { echo "FAIL fewer than two pictures"; exit 1; }
echo "ok the flagship writes HDF5, CSV, $(ls "$a"/*.png | wc -l) PNG and a manifest"
grep -qx "  out/release_tof.h5" "$tmp/first.stdout" || { echo "FAIL stdout does not say where the files are"; exit 1; }
echo "ok stdout says where the files are (relative paths)"
# The cloud map keeps equal aspect and the picture follows it: the cropped
# 133 x 49 um region gives a panel about 600 x 225 pixels, plus the title
# and the axis margins (no blank band): 860 x 342; the carpet (x against t)
# fills the default 860 x 640.
/usr/bin/python3 "$here/png_check.py" 860 342 "$a/cloud_after_tof.png"
/usr/bin/python3 "$here/png_check.py" 860 640 "$a/carpet_x.png"
/usr/bin/python3 "$here/png_check.py" 860 560 "$a/widths.png"
# No temporary files are left behind.
if ls -A "$a" | grep -q partial; then echo "FAIL partial files left"; exit 1; fi
echo "ok no temporary files left in the output folder"
