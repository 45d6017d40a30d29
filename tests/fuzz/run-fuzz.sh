#!/usr/bin/env bash
# run-fuzz.sh BUILD SECONDS [NAME...] - runs each libFuzzer harness
# BUILD/fuzz/fuzz_NAME (all of them when no NAME is given) for SECONDS of
# fuzzing, starting from its committed seeds tests/fuzz/corpus/NAME and the
# inputs earlier runs found (BUILD/fuzz-corpus/NAME; new inputs go there, the
# committed corpus is never written).  Prints one line per harness with its
# executions, and the crash file when there is one; exits 1 if any crashed.
#   FUZZ_PARALLEL=2   two harnesses at a time (the default is one)
#   SECONDS=0         only replay the seeds (what the test suite does first)
#   FUZZ_ASAN_OPTIONS more AddressSanitizer options, appended
#   FUZZ_WORK=DIR     where found inputs, crash files and logs go (default
#                     BUILD; the suite's smoke pass uses a temporary folder)
#   FUZZ_FLAGS        more libFuzzer flags, e.g. "-fork=1 -ignore_crashes=1" to
#                     go on past crashes inside a library (each is still saved)
set -u
build=${1:?usage: run-fuzz.sh BUILD SECONDS [NAME...]}
seconds=${2:-60}
shift 2 || shift $#
root=$(cd "$(dirname "$0")/../.." && pwd)
cd "$root" || exit 2
# Absolute from here on: a harness may change its working folder.
case $build in /*) ;; *) build=$root/$build ;; esac
work=${FUZZ_WORK:-$build}
names=("$@")
if [ ${#names[@]} -eq 0 ]; then
  for b in "$build"/fuzz/fuzz_*; do
    [ -x "$b" ] && names+=("$(basename "$b" | sed 's/^fuzz_//')")
  done
fi
[ ${#names[@]} -gt 0 ] || { echo "run-fuzz: no harnesses in $build/fuzz (make fuzz-build)"; exit 2; }

# Inputs larger than the default 4096 bytes, per harness: HDF5 seeds are
# whole files of several kB.
max_len() { case $1 in h5) echo 20000 ;; *) echo 4096 ;; esac; }

export ASAN_OPTIONS=detect_leaks=1:allocator_may_return_null=1${FUZZ_ASAN_OPTIONS:+:$FUZZ_ASAN_OPTIONS}
export LSAN_OPTIONS=suppressions=$root/tests/fuzz/lsan-suppressions.txt:print_suppressions=0
export UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1

run_one() { # name -> writes WORK/fuzz-logs/NAME.log, returns the fuzzer's status
  local name=$1 bin="$build/fuzz/fuzz_$1"
  local seeds="$root/tests/fuzz/corpus/$name" found="$work/fuzz-corpus/$name"
  # The harnesses' scratch folders (fuzz_util.h) go under WORK, and are
  # removed afterwards even when a crash or a -fork job left them behind.
  local scratch="$work/fuzz-tmp/$name"
  mkdir -p "$found" "$work/fuzz-artifacts" "$work/fuzz-logs" "$scratch"
  local limit=(-max_total_time="$seconds")
  [ "$seconds" -eq 0 ] && limit=(-runs=0)
  # -close_fd_mask=3: the parsers' own messages (usage text, help
  # listings) would drown the fuzzer's report.
  # shellcheck disable=SC2086 # FUZZ_FLAGS is a list of flags
  TMPDIR=$scratch "$bin" "${limit[@]}" ${FUZZ_FLAGS:-} -max_len="$(max_len "$name")" -timeout=30 -rss_limit_mb=2048 \
    -close_fd_mask=3 -print_final_stats=1 -artifact_prefix="$work/fuzz-artifacts/$name-" \
    "$found" "$seeds" >"$work/fuzz-logs/$name.log" 2>&1
  local rc=$?
  rm -rf "$scratch"
  return $rc
}

report() { # name status
  local name=$1 rc=$2 log="$work/fuzz-logs/$1.log"
  local runs; runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -1)
  local secs; secs=$(sed -n 's/^Done [0-9]* runs in \([0-9]*\) second.*/\1/p' "$log" | tail -1)
  # -fork mode prints neither line: its last "#N:" status and "fuzzed for".
  [ -n "$runs" ] || runs=$(sed -n 's/^#\([0-9]*\): cov.*/\1/p' "$log" | tail -1)
  [ -n "$secs" ] || secs=$(sed -n 's/^INFO: fuzzed for \([0-9]*\) seconds.*/\1/p' "$log" | tail -1)
  # -fork mode goes on past crashes and exits 0; it still fails here.
  local forked; forked=$(sed -n 's|^#[0-9]*: .* oom/timeout/crash: \([0-9]*/[0-9]*/[0-9]*\) .*|\1|p' "$log" | tail -1)
  if [ -n "$forked" ] && [ "$forked" != 0/0/0 ]; then
    printf 'fuzz %-12s FAILED: oom/timeout/crash %s in %s executions (%s s); inputs in %s\n' "$name" "$forked" \
      "${runs:-?}" "${secs:-?}" "$work/fuzz-artifacts"
    return 1
  fi
  # A harness's own closing count (fuzz_h5: inputs its oracle skipped).
  local note; note=$(sed -n "s/^fuzz_$name: inputs /; inputs /p" "$log" | tail -1)
  if [ "$rc" -eq 0 ]; then
    printf 'fuzz %-12s ok     %10s executions in %s s%s\n' "$name" "${runs:-?}" "${secs:-?}" "$note"
  else
    local art; art=$(sed -n "s/.*Test unit written to \(.*\)/\1/p" "$log" | tail -1)
    printf 'fuzz %-12s FAILED after %s executions: %s (log %s)\n' "$name" "${runs:-?}" "${art:-no crash file}" "$log"
    grep -E 'ERROR|runtime error|SUMMARY' "$log" | head -5 | sed 's/^/    /'
  fi
}

failed=0
parallel=${FUZZ_PARALLEL:-1}
i=0
while [ $i -lt ${#names[@]} ]; do
  pids=() batch=()
  for ((k = 0; k < parallel && i < ${#names[@]}; k++, i++)); do
    run_one "${names[$i]}" & pids+=($!); batch+=("${names[$i]}")
  done
  for k in "${!pids[@]}"; do
    wait "${pids[$k]}"; rc=$?
    report "${batch[$k]}" $rc || rc=1
    [ $rc -eq 0 ] || failed=1
  done
done
exit $failed
