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
    ls -A "$dir" | grep -q '^\.big\.h5\.partial-' || { echo "FAIL SIGKILL: no hidden .partial file"; exit 1; }
    echo "ok SIGKILL: only a hidden .partial file remains"
  fi
}
interrupt KILL
interrupt TERM
interrupt INT

# started FILE: waits until the run's stdout has a line.
started() { for _ in $(seq 1 400); do grep -q . "$1" 2>/dev/null && return 0; sleep 0.01; done; return 1; }

# stop_within_1s LABEL DIR PID: batch systems send TERM and KILL a few seconds
# apart, so one second after TERM the manifest must say why the run ended.
stop_within_1s() {
  local label=$1 dir=$2 pid=$3
  kill -TERM "$pid"
  sleep 1
  grep -q '"error":.*"interrupted by signal 15 (SIGTERM)"' "$dir/manifest.json" 2>/dev/null ||
    { echo "FAIL $label: no manifest saying 'interrupted' 1 s after SIGTERM"; kill -9 "$pid"; exit 1; }
  local rc=0
  wait "$pid" 2>/dev/null || rc=$?
  [ "$rc" -eq 143 ] || { echo "FAIL $label: exit status $rc, want 143"; exit 1; }
  if ls -A "$dir" | grep -q partial; then echo "FAIL $label: a partial file stayed"; exit 1; fi
  echo "ok $label: 1 s after SIGTERM the manifest says interrupted, exit 143, no partial file"
}

# Scripts that swallow errors: pcall in a loop, inside a coroutine, and an
# xpcall handler that never returns.  The first SIGTERM stops each of them.
cat >"$tmp/stubborn.lua" <<'LUA'
local pf = require "psiflight"
local kind = pf.params.kind
local f = pf.h5file("held.h5")
f:put_value("n", 1, "")
print("started")
io.stdout:flush()
local function spin() local x = 0 for i = 1, 1e5 do x = x + i end end
if kind == "pcall" then
  while true do pcall(spin) end
elseif kind == "coroutine" then
  local co = coroutine.create(function() while true do pcall(spin) end end)
  while true do coroutine.resume(co) end
elseif kind == "handler" then
  while true do xpcall(function() while true do end end, function(e) while true do end end) end
elseif kind == "wrap" then
  local spinner = coroutine.wrap(function() while true do pcall(spin) coroutine.yield() end end)
  while true do pcall(spinner) end
elseif kind == "raw" then
  -- trusted only: the unwrapped pcall catches each raise, but the stop hook
  -- raises again at the loop's next instruction, outside it
  local raw
  for i = 1, 10 do local n, v = debug.getupvalue(pcall, i) if n == "pcall" then raw = v end end
  assert(raw, "the runner's pcall wrapper keeps the original as upvalue 'pcall'")
  while true do raw(function() while true do end end) end
end
LUA
for kind in pcall coroutine wrap handler raw; do
  trusted=""; [ "$kind" = raw ] && trusted=--trusted
  "$runner" run "$tmp/stubborn.lua" $trusted --set kind=$kind --out "$tmp/stubborn-$kind" --quiet \
    >"$tmp/stubborn-$kind.out" 2>"$tmp/stubborn-$kind.err" &
  pid=$!
  started "$tmp/stubborn-$kind.out" || { echo "FAIL stubborn $kind never started"; kill -9 $pid; exit 1; }
  stop_within_1s "a script that swallows errors ($kind)" "$tmp/stubborn-$kind" $pid
  [ ! -e "$tmp/stubborn-$kind/held.h5" ] || { echo "FAIL held.h5 exists"; exit 1; }
done

# A long engine call: evolve polls the stop request every step.
"$runner" run "$here/long_evolve.lua" --out "$tmp/evolve" --quiet >"$tmp/evolve.out" 2>"$tmp/evolve.err" &
pid=$!
started "$tmp/evolve.out" || { echo "FAIL long_evolve never started"; kill -9 $pid; exit 1; }
sleep 0.3 # well inside the evolve call
stop_within_1s "SIGTERM during a long evolve call" "$tmp/evolve" $pid
grep -q "evolve: stopped on request" "$tmp/evolve.err" || { echo "FAIL the evolve call was not the one stopped"; exit 1; }
echo "ok the evolve call itself was stopped"

# --time-limit during the same call: exit 5, manifest says why, no partial.
rc=0
"$runner" run "$here/long_evolve.lua" --out "$tmp/limit" --quiet --time-limit 0.5s >/dev/null 2>"$tmp/limit.err" || rc=$?
[ "$rc" -eq 5 ] || { echo "FAIL --time-limit during evolve: exit $rc, want 5"; cat "$tmp/limit.err"; exit 1; }
grep -q '"error":.*"time limit of 0.5 s reached"' "$tmp/limit/manifest.json" ||
  { echo "FAIL --time-limit: the manifest does not say why"; exit 1; }
if ls -A "$tmp/limit" | grep -q partial; then echo "FAIL --time-limit left a partial file"; exit 1; fi
echo "ok --time-limit during a long evolve: exit 5, manifest says why, no partial file"

# Building a large thermal ensemble polls between members.  Invented
# scenario: a 23Na cloud at 1 nK in a 100 Hz trap, 200000 sampled members.
cat >"$tmp/thermal.lua" <<'LUA'
local pf = require "psiflight"
pf.setup{planning = "estimate"}
local g = pf.grid{points = 64, span = 2e-4}
pf.thermal{grid = g, mass = pf.mass("23Na"), omega = 2 * math.pi * 100, temperature = 1e-9, samples = 200000, seed = 1}
LUA
rc=0
"$runner" run "$tmp/thermal.lua" --out "$tmp/thermal" --quiet --time-limit 0.2s >/dev/null 2>"$tmp/thermal.err" || rc=$?
[ "$rc" -eq 5 ] || { echo "FAIL --time-limit during pf.thermal: exit $rc, want 5"; cat "$tmp/thermal.err"; exit 1; }
grep -q "thermal: stopped on request" "$tmp/thermal.err" ||
  { echo "FAIL pf.thermal was not the call stopped"; cat "$tmp/thermal.err"; exit 1; }
echo "ok --time-limit while building a thermal ensemble stops the build itself (exit 5)"

# A second signal ends the run at once, whatever the first one started.
"$runner" run "$here/slow_writer.lua" --out "$tmp/twice" --quiet >/dev/null 2>&1 &
pid=$!
for _ in $(seq 1 400); do ls -A "$tmp/twice" 2>/dev/null | grep -q partial && break; sleep 0.01; done
kill -TERM $pid; kill -TERM $pid
rc=0
wait $pid 2>/dev/null || rc=$?
[ "$rc" -eq 143 ] || { echo "FAIL two SIGTERMs: exit status $rc"; exit 1; }
if ls -A "$tmp/twice" | grep -q partial; then echo "FAIL partial file left after two signals"; exit 1; fi
[ ! -e "$tmp/twice/big.h5" ] || { echo "FAIL big.h5 exists"; exit 1; }
echo "ok two SIGTERMs in a row: exit 143, no file left behind"
