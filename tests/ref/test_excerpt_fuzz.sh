#!/usr/bin/env bash
# test_excerpt_fuzz.sh - fuzz harness for the readers of outside data files
# (tests/ref/excerpts.py): mutated copies of the committed AME2020 and CODATA
# 2018 excerpts must either read cleanly or fail with ExcerptError naming the
# file and line - never with any other exception - and a reader must never
# swallow a changed digit of a mass or constant silently.  Mutations are
# seeded, so every run tries the same cases.  Also checks the readers' size
# caps and the AME rules for '#' (estimated value) and '*' (not calculable),
# on a line copied from mass_1.mas20 (the 3Li line, an estimated mass).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
/usr/bin/python3 - "$here" <<'PY'
import os
import random
import shutil
import sys
import tempfile

sys.path.insert(0, sys.argv[1])
import excerpts

data = os.path.join(sys.argv[1], "..", "data")
sources = {
    "ame": (os.path.join(data, "ame2020_mass_1.mas20.excerpt"), excerpts.read_ame),
    "codata": (os.path.join(data, "codata2018_allascii.excerpt"), excerpts.read_codata),
}
failed = 0
workdir = tempfile.mkdtemp()


def check(ok, what):
    global failed
    print(("ok " if ok else "FAILED ") + what)
    if not ok:
        failed += 1


def values(kind, parsed):
    """What the engine takes from a file: masses and constants, with digits."""
    if kind == "ame":
        return {(r["z"], r["a"]): (r["mass_micro_u"], r["uncertainty_micro_u"], r["estimated"]) for r in parsed}
    return {k: (v["value"], v["uncertainty"], v["truncated"]) for k, v in parsed.items()}


def attempt(kind, text):
    path = os.path.join(workdir, kind)
    with open(path, "wb") as f:
        f.write(text)
    try:
        return "parsed", sources[kind][1](path)
    except excerpts.ExcerptError as err:
        message = str(err)
        return ("error", message) if message.startswith(path) or "format item" in message else ("bad-message", message)
    except Exception as err:  # anything else is a defect of the reader
        return "crash", f"{type(err).__name__}: {err}"


rng = random.Random(20260412)
alphabet = b"0123456789 .#*-+eExABZz\t\x00\xff/"
for kind, (path, reader) in sources.items():
    original = open(path, "rb").read()
    base = values(kind, reader(path))
    lines = original.split(b"\n")
    counts = {"parsed": 0, "error": 0, "crash": 0, "bad-message": 0, "silent": 0}
    for trial in range(4000):
        mutated = list(lines)
        i = rng.randrange(len(mutated))
        line = bytearray(mutated[i])
        op = rng.randrange(6)
        if op == 0 and line:                       # replace one byte
            pos = rng.randrange(len(line))
            line[pos] = rng.choice(alphabet)
        elif op == 1 and line:                     # delete one byte
            del line[rng.randrange(len(line))]
        elif op == 2:                              # insert one byte
            line.insert(rng.randrange(len(line) + 1), rng.choice(alphabet))
        elif op == 3:                              # cut the line short
            del line[rng.randrange(len(line) + 1):]
        elif op == 4:                              # duplicate a line
            mutated.insert(i, bytes(line))
        else:                                      # replace a digit by another digit
            digits = [p for p, c in enumerate(line) if 48 <= c <= 57]
            if digits:
                pos = rng.choice(digits)
                line[pos] = 48 + (line[pos] - 48 + rng.randrange(1, 10)) % 10
        mutated[i] = bytes(line)
        text = b"\n".join(mutated)
        outcome, result = attempt(kind, text)
        counts[outcome] += 1
        if outcome in ("crash", "bad-message") and counts[outcome] <= 3:
            print(f"   {kind} trial {trial}: {outcome}: {result}")
        if outcome == "parsed" and text != original and op in (0, 5):
            # A changed byte that still reads must not vanish: if it sits in a
            # value column the engine uses, the values read must differ.
            changed_pos = next(p for p, (a, b) in enumerate(zip(lines[i], mutated[i])) if a != b)
            if kind == "ame":     # data lines from 37 on; micro-u columns 107-135
                used = i >= 36 and 106 <= changed_pos < 135
            else:                 # rows after the rule (line 11); value and uncertainty columns 61-110
                used = i >= 11 and 60 <= changed_pos < 110
            if used and values(kind, result) == base:
                counts["silent"] += 1
                if counts["silent"] <= 3:
                    print(f"   {kind} trial {trial}: change at line {i + 1} column {changed_pos + 1} read silently")
    check(counts["crash"] == 0, f"{kind}: 4000 mutations, no exception other than ExcerptError {counts}")
    check(counts["bad-message"] == 0, f"{kind}: every ExcerptError names the file (and line)")
    check(counts["silent"] == 0, f"{kind}: no changed value digit is read silently")
    check(counts["error"] > 100 and counts["parsed"] > 100, f"{kind}: the mutations exercise both outcomes")

# Size caps: a file over MAX_BYTES and an over-long line are refused.
big = os.path.join(workdir, "big")
with open(big, "wb") as f:
    f.write(b" " * (excerpts.MAX_BYTES + 1))
for kind, (_, reader) in sources.items():
    try:
        reader(big)
        check(False, f"{kind}: a file over the size cap is refused")
    except excerpts.ExcerptError as err:
        check("larger than" in str(err), f"{kind}: a file over the size cap is refused ({err})")

# '#' and '*': the 3Li line of mass_1.mas20 (AME2020), copied unchanged.
ame_path = sources["ame"][0]
head = open(ame_path).read().split("\n")[:36]
li3 = ("  -3    0    3    3 Li  -pp   28667#       2000#        -2267#       667#      B-      *"
       "                    3 030775#       2147#")
sample = os.path.join(workdir, "li3")
with open(sample, "w") as f:
    f.write("\n".join(head + [li3]) + "\n")
row = excerpts.read_ame(sample)[0]
check(row["estimated"] and row["mass_micro_u"] == "3030775" and row["uncertainty_micro_u"] == "2147",
      f"'#' marks an estimated mass and reads as the point: {row['mass_micro_u']} +- {row['uncertainty_micro_u']}")
check(row["beta_keV"] is None, "'*' (not calculable) reads as no value")
shutil.rmtree(workdir)
print(f"{'ok' if failed == 0 else 'FAILED'} excerpt readers fuzzed, {failed} failures")
sys.exit(1 if failed else 0)
PY
