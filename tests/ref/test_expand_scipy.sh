#!/usr/bin/env bash
# test_expand_scipy.sh - Thomas-Fermi clouds released with w:expand against
# the Castin-Dum scaling equations (Y. Castin and R. Dum, Phys. Rev. Lett.
# 77, 5315 (1996); Kagan, Surkov and Shlyapnikov, Phys. Rev. A 54, R1753
# (1996)),
#   lambda_j'' = omega_j^2 / (lambda_j prod_k lambda_k),  lambda_j(0) = 1, lambda_j'(0) = 0,
# integrated independently with Debian's scipy (solve_ivp, DOP853, rtol 1e-12).
# Checks, 2D at mu = 8, 16, 32 hbar omega_x and 3D (cigar 160/160/40 Hz) at
# mu = 10 hbar omega_perp:
#   * the engine's lambda_j equals scipy's to 1e-8 (the frame it used);
#   * the rms radius ratios sigma_j(t) / sigma_j(0) and the aspect ratio equal
#     lambda_j (the Thomas-Fermi shape only rescales) within 0.08 / (mu / hbar
#     omega_x), twice that for the aspect ratio (two radii): the quantum
#     pressure the Thomas-Fermi limit neglects; measured 7e-3, 2.2e-3, 6.7e-4
#     at 15 ms on x for the three 2D clouds;
#   * that gap shrinks as mu grows (the Thomas-Fermi limit is approached).
set -u
root=${PSIFLIGHT_ROOT:-$(cd "$(dirname "$0")/../.." && pwd)}
build=${PSIFLIGHT_BUILD:-$root/build}
runner=${PSIFLIGHT_RUNNER:-$build/psiflight}
py=/usr/bin/python3
if ! "$py" -c 'import scipy.integrate' 2>/dev/null; then
  echo "note scipy from Debian is not installed: check skipped"
  exit 0
fi
tmp=$(mktemp -d); trap 'rm -rf "$tmp"' EXIT
"$runner" run "$root/tests/ref/expand_release.lua" --out "$tmp/out" > "$tmp/values.txt" || { echo "FAIL runner"; exit 1; }
"$py" - "$tmp/values.txt" <<'PY'
import sys
import numpy as np
from scipy.integrate import solve_ivp

bad = 0
def check(ok, label, detail):
    global bad
    if ok:
        print(f"ok {label:62s} {detail}  [Castin & Dum PRL 77, 5315; scipy solve_ivp]")
    else:
        print(f"FAIL {label}: {detail}")
        bad += 1

def castin_dum(omega, t):
    d = len(omega)
    w2 = np.asarray(omega) ** 2
    def rhs(_, y):
        lam, v = y[:d], y[d:]
        return np.concatenate([v, w2 / (lam * np.prod(lam))])
    sol = solve_ivp(rhs, (0, t), np.concatenate([np.ones(d), np.zeros(d)]), method="DOP853", rtol=1e-12, atol=1e-14)
    return sol.y[:d, -1]

gap_2d = {}
rows = 0
for line in open(sys.argv[1]):
    f = line.split()
    label, d, mu, t = f[0], int(f[1]), float(f[2]), float(f[3])
    omega = [float(x) for x in f[4:4 + d]]
    ratio = [float(x) for x in f[4 + d:4 + 2 * d]]
    lam_engine = [float(x) for x in f[4 + 2 * d:4 + 3 * d]]
    lam = castin_dum(omega, t)
    rows += 1
    tol = 0.08 / mu
    for a in range(d):
        err = abs(lam_engine[a] / lam[a] - 1)
        check(err <= 1e-8, f"{label} mu={mu:g} t={t*1e3:g} ms: engine lambda_{a+1} = scipy", f"rel {err:.1e}")
        gap = abs(ratio[a] / lam[a] - 1)
        check(gap <= tol, f"{label} mu={mu:g} t={t*1e3:g} ms: sigma_{a+1}(t)/sigma_{a+1}(0) = lambda_{a+1}",
              f"rel {gap:.1e} (tol {tol:.1e})")
        if label == "2d" and a == 0 and t > 0.01:
            gap_2d[mu] = gap
    aspect = ratio[0] / ratio[d - 1]
    err = abs(aspect / (lam[0] / lam[d - 1]) - 1)
    check(err <= 2 * tol, f"{label} mu={mu:g} t={t*1e3:g} ms: aspect ratio = lambda_1 / lambda_{d}",
          f"rel {err:.1e} (tol {2 * tol:.1e})")
mus = sorted(gap_2d)
check(len(mus) == 3 and all(gap_2d[a] > gap_2d[b] for a, b in zip(mus, mus[1:])),
      "2D: the gap to the scaling law shrinks as mu grows", " > ".join(f"{gap_2d[m]:.1e}" for m in mus))
check(rows == 8, "all eight release rows were printed", f"{rows}")
sys.exit(1 if bad else 0)
PY
