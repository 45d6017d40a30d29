#!/usr/bin/env bash
# batch_fenwick.sh - the (invented) Fenwick group runs its light-sheet
# arrival-time recipe as a batch job with a wall-time allowance.  The run
# stops by itself at --time-limit, and stops cleanly when the batch system
# sends SIGTERM before its KILL: either way no half-written file is left and
# runs/fenwick/manifest.json says why the run ended (docs/runner.md,
# "Stopping a run").  The job decides what to do from the exit status alone.
#   bash examples/batch_fenwick.sh             # or submit it to your queue
set -uo pipefail
cd "$(dirname "$0")/.."
build/psiflight run examples/recipes/arrival_fenwick.lua --planning estimate \
  --time-limit 20min --out runs/fenwick --overwrite
status=$?
case $status in
  0)   echo "fenwick: finished; results and manifest in runs/fenwick" ;;
  5)   echo "fenwick: stopped at the time limit (or a memory cap); see runs/fenwick/manifest.json" ;;
  130|143|129) echo "fenwick: stopped by signal $((status - 128)); resubmit to redo the run" ;;
  *)   echo "fenwick: failed with exit status $status; see the message above" ;;
esac
exit $status
