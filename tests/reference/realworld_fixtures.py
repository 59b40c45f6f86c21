"""Independent estimates of (PD, rho) for invented default histories.

Writes tests/fixtures/realworld_estimators.json, read by tests/realworld.rs.
Run: python3 tests/reference/realworld_fixtures.py
Needs numpy, scipy, mpmath (versions are written into the fixture).

Each estimator is implemented here from its definition, without the Rust
code: probit moments in closed form; the moment equations solved with
mpmath (Phi2(c, c; rho) as a 30-digit quadrature over the factor, root by
mpmath.findroot); the binomial mixture likelihood with scipy.integrate.quad
(split at the integrand's mode) maximised by scipy.optimize (Nelder-Mead,
then polished by BFGS).
"""
import json
import math

import mpmath as mp
import numpy as np
import scipy
from scipy import integrate, optimize, special, stats

mp.mp.dps = 30

HISTORIES = {
    # Invented pools, not in market-samples/.
    "counts_with_zero_years": {
        "counts": [[4, 310], [0, 305], [11, 322], [2, 298], [0, 301], [7, 330],
                   [19, 340], [3, 333], [1, 329], [5, 345], [0, 350], [9, 352],
                   [2, 360], [6, 371], [14, 365]],
    },
    "small_cohorts": {
        "counts": [[1, 40], [0, 38], [3, 41], [0, 45], [2, 44], [5, 43], [0, 47],
                   [1, 50], [4, 52], [0, 49], [2, 48], [1, 51]],
    },
    "rates": {
        "rates_pct": [0.82, 1.95, 0.41, 1.12, 3.40, 2.05, 0.66, 0.93, 1.71, 0.58,
                      2.60, 1.24, 0.77, 1.48],
    },
}


def phi2_same(c, rho):
    """Phi2(c, c; rho) = E[N((c - sqrt(rho) Z) / sqrt(1 - rho))^2]."""
    c = mp.mpf(c)
    rho = mp.mpf(rho)
    f = lambda z: mp.ncdf((c - mp.sqrt(rho) * z) / mp.sqrt(1 - rho)) ** 2 * mp.npdf(z)
    return mp.quad(f, [-mp.inf, -4, 0, 4, mp.inf])


def solve_moment(pd, target):
    c = mp.sqrt(2) * mp.erfinv(2 * mp.mpf(pd) - 1)
    return float(mp.findroot(lambda r: phi2_same(c, r) - target, (mp.mpf("0.001"), mp.mpf("0.9")),
                             solver="anderson", tol=1e-25))


def probit(rates):
    x = stats.norm.ppf(np.array(rates))
    m = x.mean()
    v = ((x - m) ** 2).mean()
    rho = v / (1 + v)
    return float(stats.norm.cdf(m * math.sqrt(1 - rho))), float(rho), float(rho * (1 - rho) * math.sqrt(2 / len(x)))


def moment_matching(rates):
    r = [mp.mpf(x) for x in rates]
    t = len(r)
    pd = sum(r) / t
    var = sum((x - pd) ** 2 for x in r) / t
    return float(pd), solve_moment(pd, var + pd ** 2)


def joint_default(counts):
    t = len(counts)
    pd = sum(mp.mpf(d) / n for d, n in counts) / t
    pi2 = sum(mp.mpf(d * (d - 1)) / (n * (n - 1)) for d, n in counts) / t
    return float(pd), solve_moment(pd, pi2)


def ln_mix(d, n, c, rho):
    sr, s1 = math.sqrt(rho), math.sqrt(1 - rho)

    def g(z):
        a = (c - sr * z) / s1
        return d * special.log_ndtr(a) + (n - d) * special.log_ndtr(-a) - 0.5 * z * z

    zm = optimize.minimize_scalar(lambda z: -g(z), bounds=(-30, 30), method="bounded",
                                  options={"xatol": 1e-12}).x
    gm = g(zm)
    f = lambda z: math.exp(g(z) - gm)
    lo = integrate.quad(f, -40, zm, epsabs=0, epsrel=1e-13, limit=500)[0]
    hi = integrate.quad(f, zm, 40, epsabs=0, epsrel=1e-13, limit=500)[0]
    lnc = special.gammaln(n + 1) - special.gammaln(d + 1) - special.gammaln(n - d + 1)
    return lnc + gm + math.log(lo + hi) - 0.5 * math.log(2 * math.pi)


def binomial_ml(counts):
    def nll(th):
        c, eta = th
        rho = 1 / (1 + math.exp(-eta))
        return -sum(ln_mix(d, n, c, rho) for d, n in counts)

    pd0 = sum(d for d, _ in counts) / sum(n for _, n in counts)
    x0 = [stats.norm.ppf(pd0), math.log(0.1 / 0.9)]
    r = optimize.minimize(nll, x0, method="Nelder-Mead",
                          options={"xatol": 1e-10, "fatol": 1e-12, "maxiter": 4000})
    r = optimize.minimize(nll, r.x, method="BFGS", options={"gtol": 1e-9})
    c, eta = r.x
    return float(stats.norm.cdf(c)), float(1 / (1 + math.exp(-eta))), float(-r.fun)


out = {
    "generator": "tests/reference/realworld_fixtures.py",
    "libraries": {"numpy": np.__version__, "scipy": scipy.__version__, "mpmath": mp.__version__},
    "histories": {},
}
for name, h in HISTORIES.items():
    rec = dict(h)
    if "counts" in h:
        rates = [d / n for d, n in h["counts"]]
    else:
        rates = [x / 100 for x in h["rates_pct"]]
    est = {}
    if all(0 < x < 1 for x in rates):
        pd, rho, se = probit(rates)
        est["probit_moments"] = {"pd": pd, "rho": rho, "rho_se": se}
    pd, rho = moment_matching(rates)
    est["moment_matching"] = {"pd": pd, "rho": rho}
    if "counts" in h:
        pd, rho = joint_default(h["counts"])
        est["joint_default_moments"] = {"pd": pd, "rho": rho}
        pd, rho, ll = binomial_ml(h["counts"])
        est["binomial_ml"] = {"pd": pd, "rho": rho, "log_likelihood": ll}
    rec["estimates"] = est
    out["histories"][name] = rec

with open("tests/fixtures/realworld_estimators.json", "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print(json.dumps(out["histories"], indent=1))
