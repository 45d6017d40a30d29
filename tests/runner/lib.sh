# lib.sh - helpers for the runner tests (sourced).  Each check prints one
# "ok ..." line; the first failing one prints why and exits non-zero.
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "${BASH_SOURCE[0]}")/../.." && pwd)}
runner=${PSIFLIGHT_RUNNER:-$root/build/psiflight}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
checks=0

fail() { echo "FAIL: $*" >&2; exit 1; }
ok() { checks=$((checks + 1)); echo "ok $*"; }

# expect CODE LABEL -- command...: runs it, keeps stdout/stderr in $out/$err,
# checks the exit status.
expect() {
  local code=$1 label=$2; shift 3
  set +e
  "$@" >"$work/.stdout" 2>"$work/.stderr"
  local rc=$?
  set -e
  out=$(cat "$work/.stdout"); err=$(cat "$work/.stderr")
  [ "$rc" -eq "$code" ] || fail "$label: exit $rc, want $code; stderr: $(head -c 600 "$work/.stderr")"
  ok "$label (exit $rc)"
}

# has TEXT LABEL: the last command's stdout+stderr contains TEXT.
has() {
  case "$out$err" in *"$1"*) ok "$2";; *) fail "$2: output lacks '$1': $(printf '%s\n%s' "$out" "$err" | head -c 600)";; esac
}

done_checks() { echo "ok $checks checks"; }

# ---- runs under mpirun (test_distributed*.sh) ----

# mpi_ready WHAT: true when the runner has FFTW-MPI and mpirun is found;
# then Open MPI may run as root without its fork warning, ASan leaves Open
# MPI's own allocations at exit alone, the test works in $work, and
# $work/compare.py is there (below).  Otherwise prints a note that WHAT is
# not tested and returns 1 (the caller skips).
mpi_ready() {
  printf 'local pf = require "psiflight"; print(pf.mpi_info().built)\n' >"$work/built.lua"
  if [ "$("$runner" run "$work/built.lua")" != "true" ] || ! command -v mpirun >/dev/null; then
    echo "note: runner built without FFTW-MPI (or no mpirun): $1 not tested (make deps-mpi)"
    return 1
  fi
  export OMPI_ALLOW_RUN_AS_ROOT=1 OMPI_ALLOW_RUN_AS_ROOT_CONFIRM=1 OMPI_MCA_mpi_warn_on_fork=0
  export ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0"
  cd "$work"
  # compare.py A B TAGS TOL: the lines of A and B whose first word is in
  # TAGS (comma-separated) pair up, tag and name alike; each pair is the same
  # text (TOL 0) or agrees within TOL relative to the line's largest value
  # (a line holds one quantity, a table or one figure per axis: a component
  # that is zero up to rounding is judged on the scale of its line).  Prints
  # the worst relative difference.
  cat >"$work/compare.py" <<'PY'
import sys
a, b, tags, tol = sys.argv[1], sys.argv[2], sys.argv[3].split(','), float(sys.argv[4])
def lines(p):
    return [l.split() for l in open(p) if l.split() and l.split()[0] in tags]
la, lb = lines(a), lines(b)
assert len(la) == len(lb) and la, "no lines to compare"
worst = 0.0
for x, y in zip(la, lb):
    assert x[:2] == y[:2] and len(x) == len(y), (x[:2], y[:2])
    if tol == 0:
        assert x == y, ("differ", x[:2])
        continue
    u, v = [float(t) for t in x[2:]], [float(t) for t in y[2:]]
    scale = max(abs(t) for t in u + v) or 1.0
    for p, q in zip(u, v):
        worst = max(worst, abs(p - q) / scale)
assert worst <= tol, ("worst relative difference", worst, "over", tol)
print("%.2g" % worst)
PY
}

# one_run LABEL FILE ARGS...: "$runner" run ARGS as one process, exit 0
# expected; its stdout kept in FILE.
one_run() {
  local label=$1 file=$2; shift 2
  expect 0 "$label: one process" -- "$runner" run "$@"
  printf '%s\n' "$out" >"$file"
}

# mpi_run N LABEL FILE ARGS...: the same under mpirun -n N (oversubscribed,
# MPI_TIMEOUT seconds, 120 by default); the probe must say that its grid is
# distributed over N ranks ("ranks N distribute true").
mpi_run() {
  local n=$1 label=$2 file=$3; shift 3
  expect 0 "$label: mpirun -n $n" -- timeout "${MPI_TIMEOUT:-120}" mpirun -n "$n" --oversubscribe "$runner" run "$@"
  printf '%s\n' "$out" >"$file"
  has "ranks $n distribute true" "$label: mpirun -n $n distributed over $n ranks"
}

# agree A B TAGS TOL WHAT: compare.py's check as one "ok WHAT" line (with
# the worst difference when TOL > 0), or a failure saying what differed.
agree() {
  local worst
  if worst=$(/usr/bin/python3 "$work/compare.py" "$1" "$2" "$3" "$4" 2>&1); then
    if [ "$4" = 0 ]; then ok "$5"; else ok "$5 (worst $worst)"; fi
  else
    fail "$5: not so, $(printf '%s' "$worst" | tail -1)"
  fi
}

# law_within FILE REGEX TOL WHAT: the probe's "law NAME got want" lines in
# FILE whose NAME matches REGEX (awk) follow their closed form: the worst
# |got - want| / |want| (|got - want| where want is 0), over at least one
# line, is under TOL.  One "ok WHAT to WORST" line, or a failure.
law_within() {
  local worst
  worst=$(awk -v name="$2" '$1 == "law" && $2 ~ name { c++; d = $3 - $4; if (d < 0) d = -d; s = $4 < 0 ? -$4 : $4;
    d = s > 0 ? d / s : d; if (d > m) m = d } END { if (c) printf "%.2g", m; else print "none" }' "$1")
  awk -v m="$worst" -v t="$3" 'BEGIN { exit !(m != "none" && m + 0 < t) }' && ok "$4 to $worst" ||
    fail "$4: off by $worst"
}
