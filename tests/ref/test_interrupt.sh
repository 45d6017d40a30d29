#!/usr/bin/env bash
# test_interrupt.sh - a run killed while it writes a large HDF5 file leaves
# no file under the final name (SIGKILL: a hidden .partial file may stay;
# SIGTERM and SIGINT: the script is stopped, the file discarded, and the
# manifest records the interrupted run).  Fact of the trade
# (POSIX rename is atomic), no outside source needed beyond the kernel.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
runner=${PSIFLIGHT_RUNNER:-$here/../../build/psiflight}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

interrupt() { # signal
  local sig=$1 dir=$tmp/$1
  "$runner" run "$here/slow_writer.lua" --out "$dir" --quiet >/dev/null 2>&1 &
  local pid=$! size=0
  # Wait until the partial file holds a few MB: the write is under way.
  for _ in $(seq 1 400); do
    size=$(stat -c %s "$dir"/.big.h5.partial-* 2>/dev/null || echo 0)
    [ "$size" -gt 4000000 ] && break
    sleep 0.01
  done
  [ "$size" -gt 4000000 ] || { echo "FAIL the writer never got going"; kill -9 $pid; exit 1; }
  kill -s "$sig" $pid
  local rc=0
  wait $pid 2>/dev/null || rc=$?
  [ ! -e "$dir/big.h5" ] || { echo "FAIL $sig left big.h5 under its final name"; exit 1; }
  echo "ok SIG$sig during a ${size}-byte write leaves no big.h5"
  if [ "$sig" != KILL ]; then
    if ls -A "$dir" | grep -q partial; then echo "FAIL SIG$sig left the partial file"; exit 1; fi
    echo "ok SIG$sig: the runner removed the partial file"
    local want=$((128 + $(kill -l "$sig")))
    [ "$rc" -eq "$want" ] || { echo "FAIL SIG$sig: exit status $rc, want $want"; exit 1; }
    grep -q '"status":.*"failed"' "$dir/manifest.json" && grep -q 'interrupted by signal' "$dir/manifest.json" ||
      { echo "FAIL SIG$sig: manifest does not record the interruption"; exit 1; }
    echo "ok SIG$sig: exit status $rc (128 + signal), manifest says failed / interrupted"
  else
    ls -A "$dir" | grep -q '^\.big\.h5\.partial-' && echo "ok SIGKILL: only a hidden .partial file remains"
  fi
}
interrupt KILL
interrupt TERM
interrupt INT

# A script that swallows errors ignores the first request; the second
# signal ends the run at once and still removes the partial file.
cat >"$tmp/stubborn.lua" <<'LUA'
local pf = require "psiflight"
local f = pf.h5file("held.h5")
f:put_value("n", 1, "")
print("started")
io.stdout:flush()
while true do pcall(function() local x = 0 for i = 1, 1e5 do x = x + i end end) end
LUA
"$runner" run "$tmp/stubborn.lua" --out "$tmp/stubborn" --quiet >"$tmp/stubborn.out" 2>/dev/null &
pid=$!
for _ in $(seq 1 200); do grep -q started "$tmp/stubborn.out" 2>/dev/null && break; sleep 0.01; done
kill -TERM $pid
sleep 0.3
kill -0 $pid 2>/dev/null || { echo "FAIL the stubborn script stopped at the first signal"; exit 1; }
kill -TERM $pid
rc=0
wait $pid 2>/dev/null || rc=$?
[ "$rc" -eq 143 ] || { echo "FAIL second SIGTERM: exit status $rc"; exit 1; }
if ls -A "$tmp/stubborn" | grep -q partial; then echo "FAIL partial file left after the second signal"; exit 1; fi
[ ! -e "$tmp/stubborn/held.h5" ] || { echo "FAIL held.h5 exists"; exit 1; }
echo "ok a second SIGTERM ends a script that swallowed the first, leaving no file"
