#!/usr/bin/env bash
# test_species_ame2020.sh - every entry of the engine's species table against
# the committed excerpts of the published source files (tests/data/README.md
# has their provenance):
#   - atoms: AME2020 mass_1.mas20 (Huang et al. and Wang et al., Chinese
#     Phys. C 45, 030002 and 030003 (2021)); the micro-u value and its
#     uncertainty must equal the file's digits exactly, as strings;
#   - kg values: micro-u * 1e-6 * u with u and its uncertainty from CODATA 2018
#     (NIST allascii.txt excerpt), to the rounding of the double conversion;
#   - particles: the CODATA 2018 rows "X mass" and "X mass in u".
# The excerpt is read with the fixed-width layout that its own header states
# (tests/ref/excerpts.py), and each excerpt line is checked for internal
# consistency (mass excess against atomic mass) so that a mistyped mass digit
# in the transcription shows up even before the engine is compared with it.
set -euo pipefail
runner=${PSIFLIGHT_RUNNER:-build/psiflight}
here=$(cd "$(dirname "$0")" && pwd)
data=${PSIFLIGHT_SPECIES_DATA:-$here/../data}
out=$(mktemp)
example=$(mktemp -d)
trap 'rm -rf "$out" "$example"' EXIT
"$runner" run "$here/print_species.lua" >"$out"
# The example that shows the table's fields (examples/species_recoil.lua),
# run as users run it; its CSV is checked in section 5 below.
"$runner" run "$here/../../examples/species_recoil.lua" --out "$example/run" --quiet >/dev/null
/usr/bin/python3 - "$out" "$here" "$data" "$example/run/recoil.csv" <<'PY'
import decimal
import sys

sys.path.insert(0, sys.argv[2])
import excerpts

decimal.getcontext().prec = 50
D = decimal.Decimal
data = sys.argv[3]
ame_path = f"{data}/ame2020_mass_1.mas20.excerpt"
codata_path = f"{data}/codata2018_allascii.excerpt"
ame = excerpts.read_ame(ame_path)
codata = excerpts.read_codata(codata_path)
with open(sys.argv[1]) as f:
    header = f.readline().rstrip("\n").split("\t")
    engine = [dict(zip(header, line.rstrip("\n").split("\t"))) for line in f]
failed = 0
checks = 0


def check(ok, what, detail, source):
    global failed, checks
    checks += 1
    print(("ok " if ok else "FAILED ") + f"{what:46s} {detail} [{source}]")
    if not ok:
        failed += 1


def relative(got, want):
    return abs(D(got) - want) / abs(want) if want else abs(D(got))


AME = "AME2020 mass_1.mas20 excerpt"
CODATA = "CODATA 2018 allascii.txt excerpt"
u = D(codata["atomic mass constant"]["value"])
u_unc = D(codata["atomic mass constant"]["uncertainty"])
u_keV = D(codata["atomic mass constant energy equivalent in MeV"]["value"]) * 1000

# 1. The transcription itself: the ATOMIC MASS column against the MASS
#    EXCESS column of the same line, ME = (M - A u) c^2.  The two columns are
#    rounded separately, so they agree to one unit in the last place of each;
#    this catches a wrong digit anywhere but in the last one or two places.
for row in ame:
    mass_u = D(row["mass_micro_u"]) / 10**6
    predicted = (mass_u - row["a"]) * u_keV
    tol = excerpts.ulp_of(row["mass_excess_keV"]) + excerpts.ulp_of(row["mass_micro_u"]) / 10**6 * u_keV
    diff = abs(D(row["mass_excess_keV"]) - predicted)
    check(diff <= tol, f"excerpt line {row['line']} {row['a']}{row['element']} mass vs mass excess",
          f"|diff| {diff:.3e} keV <= {tol:.1e}", f"{AME}, u c^2 from {CODATA}")

# 2. Every atom of the engine against its line, to all digits.
by_key = {(row["z"], row["a"]): row for row in ame}
used = set()
atoms = [e for e in engine if e["source"] == "AME2020"]
for e in atoms:
    label, z, a = e["label"], int(e["atomic_number"]), int(e["mass_number"])
    row = by_key.get((z, a))
    check(row is not None, f"{label} has a line in the excerpt", f"Z={z} A={a}", AME)
    if row is None:
        continue
    used.add((z, a))
    check(row["element"] == e["symbol"] and label == f"{a}{row['element']}", f"{label} element and label",
          f"file {row['a']}{row['element']}", AME)
    check(not row["estimated"], f"{label} is a measured value", "no '#' in the mass", AME)
    check(e["mass_micro_u"] == row["mass_micro_u"], f"{label} mass in micro-u, all digits",
          f"engine {e['mass_micro_u']} file {row['mass_micro_u']}", f"{AME} line {row['line']}")
    check(e["uncertainty_micro_u"] == row["uncertainty_micro_u"], f"{label} uncertainty in micro-u, all digits",
          f"engine {e['uncertainty_micro_u']} file {row['uncertainty_micro_u']}", f"{AME} line {row['line']}")
    m_u = D(row["mass_micro_u"]) / 10**6
    du = D(row["uncertainty_micro_u"]) / 10**6
    # The doubles: nearest double to the decimal, give or take the one
    # rounding of the division by 1e6 (2.3e-16 relative) and, for kg, of the
    # product with u (common practice: bound by a few units of 2^-53).
    check(relative(e["mass_u"], m_u) <= D("2.3e-16"), f"{label} mass_u = micro-u / 1e6",
          f"rel {relative(e['mass_u'], m_u):.1e}", AME)
    check(relative(e["uncertainty_u"], du) <= D("2.3e-16"), f"{label} uncertainty_u",
          f"rel {relative(e['uncertainty_u'], du):.1e}", AME)
    check(relative(e["mass"], m_u * u) <= D("4.5e-16"), f"{label} mass (kg) = micro-u * 1e-6 * u",
          f"rel {relative(e['mass'], m_u * u):.1e}", f"{AME}; u from {CODATA}")
    # Independent uncertainties add in quadrature (GUM, JCGM 100:2008, 5.1.2).
    want = ((du * u) ** 2 + (m_u * u_unc) ** 2).sqrt()
    check(relative(e["uncertainty"], want) <= D("1e-15"), f"{label} uncertainty (kg), AME and u combined",
          f"rel {relative(e['uncertainty'], want):.1e}", f"{AME}; {CODATA}; GUM 5.1.2")
    check(e["reference"].find("030003") >= 0 and e["reference"].find("mass_1.mas20") >= 0,
          f"{label} reference names the publication and file", e["reference"][:40] + "...", AME)
unused = sorted(set(by_key) - used)
check(not unused, "every excerpt line is used by the engine", f"unused (Z, A): {unused}", AME)
check(len(atoms) == len(ame), "one engine atom per excerpt line", f"{len(atoms)} atoms, {len(ame)} lines", AME)

# 3. Particles: CODATA 2018 "X mass in u" and "X mass", all digits.
for label in ("electron", "proton", "neutron"):
    e = next((x for x in engine if x["label"] == label), None)
    check(e is not None and e["source"] == "CODATA 2018", f"{label} present, source CODATA 2018", "", CODATA)
    if e is None:
        continue
    in_u = codata[f"{label} mass in u"]
    in_kg = codata[f"{label} mass"]
    want_micro = D(in_u["value"]) * 10**6
    want_unc_micro = D(in_u["uncertainty"]) * 10**6
    check(D(e["mass_micro_u"]) == want_micro and D(e["uncertainty_micro_u"]) == want_unc_micro,
          f"{label} mass and uncertainty in micro-u, all digits",
          f"engine {e['mass_micro_u']}({e['uncertainty_micro_u']}) file {want_micro.normalize()}"
          f"({want_unc_micro.normalize()})", f"{CODATA} line {in_u['line']}")
    check(float(e["mass"]) == float(in_kg["value"]), f"{label} mass (kg) as published",
          f"engine {e['mass']} file {in_kg['value']}", f"{CODATA} line {in_kg['line']}")
    check(float(e["uncertainty"]) == float(in_kg["uncertainty"]), f"{label} uncertainty (kg) as published",
          f"engine {e['uncertainty']} file {in_kg['uncertainty']}", f"{CODATA} line {in_kg['line']}")

# 4. The isotopes the docs promise (docs/states.md).
required = ["1H", "2H", "3He", "4He", "6Li", "7Li", "23Na", "39K", "40K", "41K", "40Ca", "52Cr", "53Cr",
            "84Sr", "86Sr", "87Sr", "88Sr", "85Rb", "87Rb", "133Cs", "161Dy", "162Dy", "163Dy", "164Dy",
            "166Er", "167Er", "168Er", "170Yb", "171Yb", "172Yb", "173Yb", "174Yb", "176Yb", "electron", "proton", "neutron"]
have = {e["label"] for e in engine}
missing = [r for r in required if r not in have]
check(not missing, f"all {len(required)} documented species present", f"missing {missing}", "docs/states.md")
# 5. The example's CSV: recoil velocity h / (m lambda) at its default 1064 nm
#    (de Broglie relation; h exact, CODATA 2018) with m from the excerpt, and
#    the mass digits it reports.
import csv
with open(sys.argv[4], newline="") as f:
    table = list(csv.DictReader(f))
h = D(codata["Planck constant"]["value"])
lam = D("1064e-9")
for r in table:
    row = next(x for x in ame if f"{x['a']}{x['element']}" == r["species"])
    m = D(row["mass_micro_u"]) / 10**6 * u
    want = h / (m * lam)
    got = D(r["recoil_velocity [m/s]"])
    check(abs(got - want) / want <= D("1e-15"), f"example recoil velocity {r['species']}",
          f"{got:.6e} m/s", f"h / (m lambda); {AME}; {CODATA}")
    check(r["mass_micro_u [micro-u]"] == f"{row['mass_micro_u']}({row['uncertainty_micro_u']})",
          f"example reports {r['species']} mass digits", r["mass_micro_u [micro-u]"], AME)
print(f"{'ok' if failed == 0 else 'FAILED'} {checks} checks, {failed} failures")
sys.exit(1 if failed else 0)
PY
