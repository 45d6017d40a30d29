#!/usr/bin/env bash
# test_h5_isolation.sh - libhdf5 reads data files in a child process
# (engine/io/pf_h5_isolate.c).  Files that crash libhdf5 1.10 itself
# (tests/fuzz/known-crashes) end the load with a script error naming the
# file as written and the script line - exit 1 or 5, never a signal - and
# the run still writes a manifest recording the failure; a corrupt size
# field cannot make the library map gigabytes; an ordinary file loads with
# exactly the values of the in-process read (PSIFLIGHT_H5_INPROCESS=1).
source "$(dirname "$0")/lib.sh"
set -e
rec="$work/recipe"; outdir="$work/out"
mkdir -p "$rec"
cp "$root"/tests/runner/h5iso/load_file.lua "$root"/tests/runner/h5iso/write_state.lua "$rec/"
cp "$root"/tests/fuzz/known-crashes/h5-* "$rec/"
cd "$rec"
line=$(grep -n "^local w = pf.load_wave" load_file.lua | cut -d: -f1)
load() { "$runner" run load_file.lua --out "$outdir" --overwrite --set file="$1" "${@:2}"; }
has_trace() { strace -f -o /dev/null true 2>/dev/null; }

# refused FILE DATASET [options]: exit 1 or 5 (a signal would be 128+N),
# the message names the file as written and the script line, the run's
# stdout stays empty (the child cannot print), the manifest says failed.
refused() {
  local file=$1 ds=$2; shift 2
  rm -rf "$outdir"
  set +e
  load "$file" --set dataset="$ds" "$@" >"$work/.stdout" 2>"$work/.stderr"
  local rc=$?
  set -e
  out=$(cat "$work/.stdout"); err=$(cat "$work/.stderr")
  [ "$rc" -eq 1 ] || [ "$rc" -eq 5 ] || fail "$file '$ds' $*: exit $rc, want 1 or 5; stderr: $(head -c 600 "$work/.stderr")"
  ok "$file '$ds' $*: refused with exit $rc"
  has "load_file.lua:$line: load_wave: " "$file '$ds': the error names the script line"
  has "'$file'" "$file '$ds': the error names the file as written"
  [ -z "$out" ] || fail "$file '$ds': something reached the run's stdout: $out"
  [ -f "$outdir/manifest.json" ] || fail "$file '$ds': no manifest"
  grep -Eq '"status":[[:space:]]*"failed"' "$outdir/manifest.json" || fail "$file '$ds': the manifest does not record the failure"
  ok "$file '$ds': manifest with status failed, nothing on stdout"
}

for f in h5-*; do
  for ds in "" psi2d; do refused "$f" "$ds"; done
  refused "$f" psi2d --memory-cap 64MiB
done
# The corrupt local heap makes libhdf5 copy from NULL: the child's crash
# classifier (engine/io/pf_fault.c) finds libhdf5 on the faulting stack and
# the parent refuses the file as the library's crash, not as psiflight's
# bug.  (The classifier replaces a sanitizer's SEGV handler in the child, so
# a sanitizer build says the same.)
refused h5-libhdf5-local-heap ""
has "'h5-libhdf5-local-heap': file refused: the HDF5 library crashed on it (signal 11 inside libhdf5); the file is probably corrupt" \
  "the crash is reported as libhdf5's crash on a corrupt file"
case "$err" in *"internal error"*) fail "the library's crash was reported as psiflight's bug: $err" ;; esac

# The corrupt object header makes libhdf5 ask for 4278190168 bytes: under a
# 64 MiB cap the child's address-space limit refuses the mapping, and the
# parent never makes it.
if has_trace; then
  set +e
  strace -f -e trace=mmap -o "$work/trace" "$runner" run load_file.lua --out "$outdir" --overwrite \
    --set file=h5-libhdf5-metadata-4GiB --set dataset=psi2d --memory-cap 64MiB >/dev/null 2>&1
  set -e
  big=$(grep -E 'mmap\(NULL, 42[0-9]{8},' "$work/trace" || true)
  [ -n "$big" ] || fail "the trace shows no 4 GiB request; was the file read? $(tail -3 "$work/trace")"
  granted=$(printf '%s\n' "$big" | grep -v ENOMEM || true)
  [ -z "$granted" ] || fail "a 4 GiB mapping was granted: $granted"
  ok "libhdf5's 4 GiB request was refused ($(printf '%s\n' "$big" | wc -l) attempts, all ENOMEM)"
else
  echo "note: strace cannot trace processes here; the 4 GiB check was skipped"
fi

# An ordinary file (written by the engine) reads the same both ways.
"$runner" run write_state.lua --out "$work/wout" --overwrite >/dev/null
"$runner" run write_state.lua --out "$work/wout" --overwrite --set name=big --set points=512 >/dev/null
cp "$work/wout/state.h5" "$work/wout/big.h5" .
expect 0 "state.h5 loads through the child" -- load state.h5
isolated=$out
expect 0 "state.h5 loads in-process (PSIFLIGHT_H5_INPROCESS=1)" -- env PSIFLIGHT_H5_INPROCESS=1 "$runner" run load_file.lua \
  --out "$outdir" --overwrite --set file=state.h5
[ "$(printf '%s\n' "$isolated" | wc -l)" -eq 385 ] || fail "expected 385 lines (clock, 24 x 16 samples), got: $(printf '%s\n' "$isolated" | head -3)"
[ "$isolated" = "$out" ] || fail "the isolated read differs: $(diff <(printf '%s\n' "$isolated") <(printf '%s\n' "$out") | head -5)"
ok "isolated and in-process reads print identical values (clock, norm, 384 samples and coordinates)"

# The child really is a separate process: one more process (not thread)
# created than in-process.
if has_trace; then
  procs() { grep -E ' (fork|vfork|clone3?)\(' "$1" | grep -v CLONE_THREAD | grep -vc ' = -1' || true; }
  # (LeakSanitizer cannot run under ptrace: sanitizer builds skip it here.)
  saved_asan=${ASAN_OPTIONS-}
  export ASAN_OPTIONS=${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0
  strace -f -e trace=fork,vfork,clone,clone3 -o "$work/t1" "$runner" run load_file.lua --out "$outdir" --overwrite \
    --set file=state.h5 >/dev/null
  PSIFLIGHT_H5_INPROCESS=1 strace -f -e trace=fork,vfork,clone,clone3 -o "$work/t2" "$runner" run load_file.lua \
    --out "$outdir" --overwrite --set file=state.h5 >/dev/null
  [ "$(procs "$work/t1")" -eq $(($(procs "$work/t2") + 1)) ] ||
    fail "processes created: isolated $(procs "$work/t1"), in-process $(procs "$work/t2"); want one more"
  ok "the isolated read creates one child process, the in-process read none"
  export ASAN_OPTIONS=$saved_asan
fi

# Statuses cross the pipe as codes: the child's memory-cap refusal (a
# limit) is exit 5 with the reader's own message.
rm -rf "$outdir"
expect 5 "big.h5 over a 2 MiB cap is a limit" -- load big.h5 --memory-cap 2MiB
has "load_file.lua:$line: load_wave: file 'big.h5' needs" "the child's cap message reaches the script error"
grep -Eq '"status":[[:space:]]*"failed"' "$outdir/manifest.json" || fail "big.h5: no manifest recording the failure"
ok "big.h5: manifest with status failed"
# A stop request while the parent waits for the child: SIGTERM during a
# loop of loads ends the run promptly with its manifest (the parent kills
# the child, or the stop lands between loads), and no reader is left behind.
cat >loop.lua <<'LUA'
local pf = require "psiflight"
for i = 1, 100000 do local w = pf.load_wave("big.h5", {mass = 1.4e-25}); w = nil; collectgarbage() end
LUA
rm -rf "$outdir"
set +e
"$runner" run loop.lua --out "$outdir" --overwrite >"$work/.stdout" 2>"$work/.stderr" &
pid=$!
sleep 1.5
kill -TERM "$pid"
wait "$pid"; rc=$?
set -e
[ "$rc" -eq 143 ] || fail "SIGTERM during loads: exit $rc, want 143; stderr: $(head -c 600 "$work/.stderr")"
grep -q "without its manifest" "$work/.stderr" && fail "the stop was not honoured: $(cat "$work/.stderr")"
grep -Eq '"status":[[:space:]]*"failed"' "$outdir/manifest.json" || fail "SIGTERM during loads: no manifest"
sleep 0.2
left=$(pgrep -P 1 -f "loop.lua --out $outdir" || true)
[ -z "$left" ] || fail "a reading process outlived the run: $left"
ok "SIGTERM during loads: exit 143, manifest written, no reader left ($(grep -c . "$work/.stderr") stderr lines)"
done_checks
