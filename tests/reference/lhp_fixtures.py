#!/usr/bin/env python3
"""Reference values of the large-pool expectation E[min(p(Z), k)].

p(Z) = N((c - sqrt(rho) Z) / sqrt(1 - rho)), c = G(PD), Z ~ N(0, 1)
(Vasicek, "Loan portfolio value", Risk 2002). Writes tests/fixtures/lhp.json.

Each value is computed with mpmath at 30 significant digits as
    k N(z_k) + integral_{z_k}^{inf} p(z) phi(z) dz,
    z_k = (c - sqrt(1 - rho) G(k)) / sqrt(rho),
by tanh-sinh quadrature split at the kink z_k and around the steep part of
p (z* = c / sqrt(rho), width sqrt((1 - rho) / rho)); and confirmed a second
way from Vasicek's distribution, E[min(p, k)] = integral_0^k (1 - F(y)) dy,
F(y) = N((sqrt(1 - rho) G(y) - c) / sqrt(rho)), integrated in u = G(y). The
two must agree to 1e-25. The derivative in rho is mpmath.diff of the first
form (at 30 digits), stored alongside.

Run: python3 tests/reference/lhp_fixtures.py  (from the repository root)
"""

import json
import os
import sys

import mpmath
from mpmath import mp, mpf

mp.dps = 30


def G(p):
    return -mpmath.sqrt(2) * mpmath.erfinv(1 - 2 * mpf(p))


def by_factor(pd, rho, k):
    pd, rho, k = mpf(pd), mpf(rho), mpf(k)
    c = G(pd)
    sr, s1 = mpmath.sqrt(rho), mpmath.sqrt(1 - rho)
    zk = (c - s1 * G(k)) / sr
    zs, w = c / sr, s1 / sr
    pts = [zk]
    for p in sorted({zs + t * w for t in (-8, -2, 0, 2, 8)} | {mpf(0), mpf(12)}):
        if zk < p < 40:
            pts.append(p)
    pts.append(mpmath.inf)

    def f(z):
        return mpmath.ncdf((c - sr * z) / s1) * mpmath.npdf(z)

    return k * mpmath.ncdf(zk) + mpmath.quad(f, pts)


def by_distribution(pd, rho, k):
    pd, rho, k = mpf(pd), mpf(rho), mpf(k)
    c = G(pd)
    sr, s1 = mpmath.sqrt(rho), mpmath.sqrt(1 - rho)
    top = G(k)
    mid, w = c / s1, sr / s1

    def survival(u):  # 1 - F(N(u)), written as the upper tail directly
        return mpmath.ncdf((c - s1 * u) / sr) * mpmath.npdf(u)

    pts = [-mpmath.inf]
    for p in sorted({mid + t * w for t in (-8, -2, 0, 2, 8)} | {mpf(-12), mpf(0)}):
        if -40 < p < top:
            pts.append(p)
    pts.append(top)
    return mpmath.quad(survival, pts)


PDS = ["1e-6", "0.001", "0.05", "0.3", "0.9"]
RHOS = ["1e-4", "0.01", "0.1", "0.3", "0.6", "0.9", "0.99", "0.9999"]
KS = ["0.001", "0.03", "0.1", "0.5", "0.95"]


def main():
    cases = []
    for pd in PDS:
        for rho in RHOS:
            for k in KS:
                a = by_factor(pd, rho, k)
                b = by_distribution(pd, rho, k)
                if abs(a - b) > mpf("1e-25"):
                    sys.exit(f"methods disagree at pd={pd} rho={rho} k={k}: {a} vs {b}")
                d = mpmath.diff(lambda r: by_factor(pd, r, k), mpf(rho))
                cases.append({
                    "pd": pd, "rho": rho, "k": k,
                    "value": mpmath.nstr(a, 22, min_fixed=0, max_fixed=0),
                    "drho": mpmath.nstr(d, 15, min_fixed=0, max_fixed=0),
                })
    out = {
        "description": "E[min(p(Z), k)] in the Vasicek large pool and its rho "
        "derivative; decimal strings. Value from the factor integral, confirmed "
        "by integrating Vasicek's distribution to 1e-25; derivative by mpmath.diff",
        "generator": "tests/reference/lhp_fixtures.py",
        "library": f"mpmath {mpmath.__version__}, mp.dps = {mp.dps}",
        "cases": cases,
    }
    root = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "fixtures")
    with open(os.path.join(root, "lhp.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print(f"wrote {len(cases)} cases")


if __name__ == "__main__":
    main()
