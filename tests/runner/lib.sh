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
