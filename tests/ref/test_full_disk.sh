#!/usr/bin/env bash
# test_full_disk.sh - a run that runs out of space while writing (simulated
# with a file-size limit, `ulimit -f`, which makes write() fail with EFBIG
# once SIGXFSZ is ignored, as POSIX setrlimit specifies) reports an error,
# exits non-zero, and leaves neither the final file nor a partial one.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
cat >"$tmp/big.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = {256, 256}, span = {1e-4, 1e-4}}
local w = pf.wave(g, {mass = 1e-26, position = function(x, y) return math.exp(-(x * x + y * y) / 1e-10) end})
local what = pf.params.what
if what == "h5" then
  local f = pf.h5file("big.h5"); f:put_wave("w", w, {parts = "both"}); f:close()
elseif what == "png" then
  pf.picture_map("big.png", w)
else
  local xs, ys = {}, {}
  for i = 1, 20000 do xs[i], ys[i] = i * 1e-7, math.sin(i) end
  pf.write_csv("big.csv", {{"x", "m", xs}, {"y", "", ys}})
end
LUA
for what in h5 png csv; do
  set +e
  ( trap '' XFSZ; ulimit -f 16; "$runner" run "$tmp/big.lua" --set what=$what --out "$tmp/$what" --quiet ) \
    >"$tmp/$what.out" 2>"$tmp/$what.err"
  rc=$?
  set -e
  [ $rc -ne 0 ] || { echo "FAIL $what: a write beyond the size limit succeeded"; exit 1; }
  [ ! -e "$tmp/$what/big.$what" ] || { echo "FAIL $what: final file exists"; exit 1; }
  if ls -A "$tmp/$what" 2>/dev/null | grep -q partial; then echo "FAIL $what: partial file left"; exit 1; fi
  grep -q "big.$what" "$tmp/$what.err" || { echo "FAIL $what: error does not name the file"; cat "$tmp/$what.err"; exit 1; }
  echo "ok $what: out of space gives exit $rc, an error naming the file, no final or partial file"
done
