#!/usr/bin/env bash
# test_determinism.sh - two identical runs of the flagship example give
# byte-identical stdout, HDF5, CSV, PNG and manifest files (cmp), and the
# pictures decode to their expected size with Python's zlib + struct.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
# Each run in its own working folder with the same relative --out, so the
# paths the script prints are the same too.
run() {
  mkdir -p "$tmp/$1"
  (cd "$tmp/$1" && "$runner" run "$root/examples/release_tof.lua" --planning estimate --out out --quiet >../$1.stdout)
}
run ra
sleep 1.1   # so any embedded clock would differ
run rb
mv "$tmp/ra/out" "$tmp/a"
mv "$tmp/rb/out" "$tmp/b"
cmp "$tmp/ra.stdout" "$tmp/rb.stdout" || { echo "FAIL stdout differs between identical runs"; exit 1; }
echo "ok stdout identical between runs [cmp]"
n=0
for f in "$tmp"/a/*; do
  name=$(basename "$f")
  cmp "$f" "$tmp/b/$name" || { echo "FAIL $name differs between identical runs"; exit 1; }
  echo "ok $name byte-identical between runs [cmp]"
  n=$((n + 1))
done
for kind in h5 csv png json; do
  ls "$tmp"/a/*."$kind" >/dev/null 2>&1 || { echo "FAIL no .$kind output"; exit 1; }
done
[ "$(ls "$tmp"/a/*.png | wc -l)" -ge 2 ] || { echo "FAIL fewer than two pictures"; exit 1; }
echo "ok the flagship writes HDF5, CSV, $(ls "$tmp"/a/*.png | wc -l) PNG and a manifest ($n files)"
grep -qx "  out/release_tof.h5" "$tmp/ra.stdout" || { echo "FAIL stdout does not say where the files are"; exit 1; }
echo "ok stdout says where the files are (relative paths)"
# The cloud map keeps equal aspect: 210 x 80 um fits a picture of the
# minimum height 420; the carpet (x against t) fills the default 860 x 640.
/usr/bin/python3 "$here/png_check.py" 860 420 "$tmp/a/cloud_after_tof.png"
/usr/bin/python3 "$here/png_check.py" 860 640 "$tmp/a/carpet_x.png"
/usr/bin/python3 "$here/png_check.py" 860 560 "$tmp/a/widths.png"
# No temporary files are left behind.
if ls -A "$tmp/a" | grep -q partial; then echo "FAIL partial files left"; exit 1; fi
echo "ok no temporary files left in the output folder"
