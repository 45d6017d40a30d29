#!/usr/bin/env bash
# test_policy_fuzz.sh - fuzzes the sandbox's path resolution: 3000 random
# paths (fixed seed) through a tree of symbolic links in the output folder -
# links out, links in, relative links with "..", dangling links inside and
# out, chains, a link from outside back in - are opened for writing by a
# sandboxed script.  Each decision must match the outside reference: Python's
# os.path.realpath (Debian python3), which follows links, dangling ones too,
# the way the kernel does; a path is writable exactly when its real path lies
# in the output folder.  Files outside must not change.
source "$(dirname "$0")/lib.sh"
set -e
od="$work/out"; outside="$work/outside"
mkdir -p "$od/a/b" "$outside"
echo keep >"$outside/existing.txt"
: >"$od/f.txt"
ln -s "$outside" "$od/lnk_out"
ln -s a "$od/lnk_in"
ln -s .. "$od/a/up"
ln -s ../.. "$od/a/upup"
ln -s "$outside/missing_file" "$od/dangle_out"
ln -s a/missing "$od/dangle_in"
ln -s lnk_in "$od/chain"
ln -s lnk_out "$od/chain_out"
ln -s "$od/a/b" "$od/abs_in"
ln -s "$od/a" "$outside/back"
ln -s existing.txt "$outside/to_existing"
ln -s loop2 "$od/loop1"; ln -s loop1 "$od/loop2"
( cd "$outside" && find . -printf '%p %y %s\n' | sort && cat existing.txt ) >"$work/outside.before"

/usr/bin/python3 - "$od" >"$work/paths.txt" <<'PY'
import random, sys
out = sys.argv[1]
names = ["a", "b", "f.txt", ".", "new", "lnk_out", "lnk_in", "up", "upup", "dangle_out", "dangle_in",
         "chain", "chain_out", "abs_in", "back", "existing.txt", "to_existing", "missing_file"]
rng = random.Random(20261204)
for _ in range(3000):
    depth = rng.randint(1, 4)
    print(out + "/" + "/".join(rng.choice(names) for _ in range(depth)))
PY
expect 0 "the probe ran" -- "$runner" run "$root/tests/runner/policy_probe.lua" --out "$od" --overwrite \
  --data "$work/paths.txt" --set list="$work/paths.txt"
/usr/bin/python3 - "$od" "$work/.stdout" <<'PY' || fail "decisions differ from os.path.realpath (listed above)"
import os, sys
out, results = os.path.realpath(sys.argv[1]), sys.argv[2]
bad = counts = 0
seen = {"refused": 0, "opened": 0, "failed": 0}
for line in open(results):
    verdict, path = line.rstrip("\n").split("\t", 1)
    real = os.path.realpath(path)
    inside = real == out or real.startswith(out + "/")
    seen[verdict] += 1
    counts += 1
    if (verdict == "refused") == inside:
        bad += 1
        if bad <= 10: print("mismatch: %s %s (realpath %s)" % (verdict, path, real))
print("%d paths: %d refused, %d opened, %d failed by the system; %d mismatches"
      % (counts, seen["refused"], seen["opened"], seen["failed"], bad))
sys.exit(1 if bad or counts != 3000 or min(seen["refused"], seen["opened"]) < 100 else 0)
PY
ok "every sandbox decision matches os.path.realpath [Python os.path, Debian python3]"
( cd "$outside" && find . -printf '%p %y %s\n' | sort && cat existing.txt ) >"$work/outside.after"
if cmp -s "$work/outside.before" "$work/outside.after"; then ok "nothing outside changed"; else fail "the outside folder changed"; fi

# A loop of links is refused (os.path.realpath gives up on it silently).
printf '%s\n' "$od/loop1/x" >"$work/loop.txt"
expect 0 "the probe ran on a link loop" -- "$runner" run "$root/tests/runner/policy_probe.lua" --out "$od" --overwrite \
  --data "$work/loop.txt" --set list="$work/loop.txt"
has "refused	$od/loop1/x" "a loop of links is refused"
done_checks
