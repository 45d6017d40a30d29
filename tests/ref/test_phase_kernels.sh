#!/usr/bin/env bash
# test_phase_kernels.sh - the flight unit tests (width law, moment laws,
# propagator quadrature, phase against its definition, fused sweep against
# the closed-form Gaussian: their references are named in those files) run
# once per phase kernel this machine can execute, so the plain C and AVX2
# paths are checked even where AVX-512 is chosen by default.
set -euo pipefail
build=${PSIFLIGHT_BUILD:-$(cd "$(dirname "$0")/../.." && pwd)/build}
for kernel in plain avx2; do
  for t in test_flight test_fused_flight; do
    if PSIFLIGHT_PHASE_KERNEL=$kernel "$build/tests/$t" >/dev/null 2>&1; then
      echo "ok $t with the $kernel phase kernel"
    else
      echo "FAIL $t with the $kernel phase kernel"
      PSIFLIGHT_PHASE_KERNEL=$kernel "$build/tests/$t" 2>&1 | tail -20
      exit 1
    fi
  done
done
