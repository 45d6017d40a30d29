#!/usr/bin/env bash
# sweep_harrowgate.sh - the (invented) Harrowgate lab scans its
# time-of-flight image over five flight times and two horizontal trap
# frequencies, two points at a time, into runs/harrowgate-tof/.  Rerunning
# the same command after an interruption runs only the missing points.
# The combined table is runs/harrowgate-tof/sweep.csv (one row per point,
# the reported results as columns once the engine writes run manifests).
#   bash examples/sweep_harrowgate.sh            # on this machine
#   mpirun -n 4 build/psiflight sweep ...        # the same over MPI ranks
set -euo pipefail
cd "$(dirname "$0")/.."
build/psiflight sweep examples/recipes/tof_image_harrowgate.lua \
  --vary tof=4ms:20ms:5 --vary trap_x=80Hz,120Hz \
  --seed 2026 -j 2 --planning estimate --out runs/harrowgate-tof
column -s, -t runs/harrowgate-tof/sweep.csv 2>/dev/null || cat runs/harrowgate-tof/sweep.csv
