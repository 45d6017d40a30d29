#!/usr/bin/env bash
# test_frame_example.sh - examples/drop_tof_3d.lua on a small grid: the cloud
# falls -g t^2/2 in the lab (kinematics, common practice; g_n exact by
# definition, 3rd CGPM 1901), its widths follow the free width law the
# example prints beside them (textbook), and the HDF5 density's vertical
# axis, read with h5dump (Debian hdf5-tools), is centred where it fell.
set -eu
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
work=$(mktemp -d); trap 'rm -rf "$work"' EXIT
"$runner" run "$root/examples/drop_tof_3d.lua" --set points=112 --out "$work/out" >"$work/stdout" 2>"$work/stderr"
if [ -s "$work/stderr" ]; then cat "$work/stderr"; echo "FAIL the example warned"; exit 1; fi
h5dump -d /dropped/y -y -w 1 -m '%.17g' "$work/out/drop.h5" | grep -E '^ *-?[0-9]+\.[0-9]+(e[-+][0-9]+)?,? *$' | tr -d ' ,' >"$work/y.txt"
[ -s "$work/out/drop.png" ] || { echo "FAIL no drop.png"; exit 1; }
/usr/bin/python3 - "$work/stdout" "$work/y.txt" <<'PY'
import re, sys
out = open(sys.argv[1]).read()
g, t = 9.80665, 25e-3                       # standard gravity (exact), the example's default drop
want = -0.5 * g * t * t
m = re.search(r"y = (-?[0-9.]+) mm", out)
y = float(m.group(1)) * 1e-3
assert abs(y - want) < 1e-9, (y, want)
print("ok example centre y = %.6f mm = -g t^2/2  [kinematics, g_n exact]" % (y * 1e3))
rows = re.findall(r"^\s+([xyz])\s+([0-9.]+)\s+([0-9.]+)$", out, re.M)
assert len(rows) == 3, rows
for axis, got, law in rows:
    assert abs(float(got) / float(law) - 1) < 1e-4, (axis, got, law)
print("ok example widths follow the free width law on all three axes  [textbook]")
ys = [float(v) for v in open(sys.argv[2]).read().split()]
mid = 0.5 * (ys[0] + ys[-1])
assert len(ys) == 112 and abs(mid - want) < 0.02 * (ys[-1] - ys[0]), (mid, want)
print("ok HDF5 vertical axis of the dropped cloud is centred near -g t^2/2 (%.4f mm)  [h5dump]" % (mid * 1e3))
PY
