#!/usr/bin/env bash
# test_interrupt.sh - a run killed while it writes a large HDF5 file leaves
# no file under the final name (SIGKILL: a hidden .partial file may stay;
# SIGTERM and SIGINT: the runner removes it too).  Fact of the trade
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
  wait $pid 2>/dev/null || true
  [ ! -e "$dir/big.h5" ] || { echo "FAIL $sig left big.h5 under its final name"; exit 1; }
  echo "ok SIG$sig during a ${size}-byte write leaves no big.h5"
  if [ "$sig" != KILL ]; then
    if ls -A "$dir" | grep -q partial; then echo "FAIL SIG$sig left the partial file"; exit 1; fi
    echo "ok SIG$sig: the runner removed the partial file"
  else
    ls -A "$dir" | grep -q '^\.big\.h5\.partial-' && echo "ok SIGKILL: only a hidden .partial file remains"
  fi
}
interrupt KILL
interrupt TERM
interrupt INT
