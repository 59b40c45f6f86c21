#!/usr/bin/env python3
"""Finite homogeneous pool (one-factor Gaussian copula) base-tranche values
at 30 digits with mpmath, for tests/finite.rs.

For n names, recovery R, default probability PD and correlation rho:
given the factor z the default count D is binomial(n, p(z)),
p(z) = N((G(PD) - sqrt(rho) z) / sqrt(1 - rho)). For the base tranche
[0, K]:

    loss        = E[min(D (1 - R)/n, K)]
    outstanding = K - loss - (R PD - E[min(D R/n, 1 - K)])

each expectation an mpmath tanh-sinh integral over z of the binomial sum
times the normal density, split at the points where p(z) crosses K/(1-R)
and (1-K)/R and around the steep part of p. The derivatives in rho are
five-point central differences of those integrals (step 1e-6) (not the analytic
formula the Rust code uses).

Writes tests/fixtures/finite.json. Run: python3 tests/reference/finite_fixtures.py
"""
import json
import os

import mpmath as mp

mp.mp.dps = 30


def expected_min(n, pd, rho, unit, cap):
    """E[min(D unit, cap)] for D ~ binomial(n, p(Z))."""
    c = mp.sqrt(2) * mp.erfinv(2 * mp.mpf(pd) - 1)
    sr, s1 = mp.sqrt(rho), mp.sqrt(1 - rho)
    g = [min(k * unit, cap) for k in range(n + 1)]
    ratios = [mp.mpf(n - k) / (k + 1) for k in range(n)]

    def f(z):
        v = (c - sr * z) / s1
        p, q = mp.ncdf(v), mp.ncdf(-v)
        if q == 0:
            return g[n] * mp.npdf(z)
        term, total, ratio = q**n, mp.mpf(0), p / q
        for k in range(n + 1):
            total += term * g[k]
            if k < n:
                term *= ratios[k] * ratio
        return total * mp.npdf(z)

    pts = [mp.mpf(0)]
    x = cap / (n * unit)
    if 0 < x < 1:
        pts.append((c - s1 * mp.sqrt(2) * mp.erfinv(2 * x - 1)) / sr)
    s = s1 / sr
    for t in (-8, -4, -2, -1, 0, 1, 2, 4, 8):
        pts.append(c / sr + s * t)
    pts = sorted(set(p for p in pts if -12 < p < 12))
    return mp.quad(f, [-mp.inf] + pts + [mp.inf])


def derivative(f, x, h=mp.mpf("1e-6")):
    """Five-point central difference (error ~ h^4 f^(5) / 30, far below 1e-15)."""
    return (f(x - 2 * h) - 8 * f(x - h) + 8 * f(x + h) - f(x + 2 * h)) / (12 * h)


def base(n, pd, rho, recovery, k):
    lgd = 1 - mp.mpf(recovery)
    r = mp.mpf(recovery)
    loss = expected_min(n, pd, rho, lgd / n, mp.mpf(k)) if k > 0 else mp.mpf(0)
    capped = expected_min(n, pd, rho, r / n, 1 - mp.mpf(k)) if (r > 0 and k < 1) else mp.mpf(0)
    return loss, mp.mpf(k) - loss - (r * mp.mpf(pd) - capped)


CASES = [
    # n, PD, rho, recovery, K
    (2, 0.05, 0.3, 0.4, 0.2),
    (10, 0.05, 0.3, 0.4, 0.03),
    (10, 0.3, 0.9, 0.4, 0.59),
    (125, 0.05, 0.3, 0.4, 0.03),
    (125, 0.05, 0.3, 0.4, 0.07),
    (125, 0.01, 0.1, 0.4, 0.005),
    (125, 0.3, 0.6, 0.4, 0.3),
    (125, 0.05, 0.99, 0.4, 0.07),
    (125, 0.0001, 0.01, 0.4, 0.03),
    (125, 0.2, 0.3, 0.4, 0.7),
    (100, 0.048771, 0.1, 0.4, 0.06),
    (250, 0.05, 0.5, 0.3, 0.15),
]


def main():
    out = []
    for n, pd, rho, recovery, k in CASES:
        loss, outstanding = base(n, pd, mp.mpf(rho), recovery, k)
        dloss, dout = (
            derivative(lambda r: base(n, pd, r, recovery, k)[i], mp.mpf(rho)) for i in (0, 1)
        )
        out.append(
            {
                "names": n,
                "pd": pd,
                "rho": rho,
                "recovery": recovery,
                "detach": k,
                "loss": mp.nstr(loss, 20),
                "outstanding": mp.nstr(outstanding, 20),
                "dloss_drho": mp.nstr(dloss, 15),
                "doutstanding_drho": mp.nstr(dout, 15),
            }
        )
        print(out[-1], flush=True)
    path = os.path.join(os.path.dirname(__file__), "..", "fixtures", "finite.json")
    with open(path, "w") as fh:
        json.dump(
            {
                "source": "tests/reference/finite_fixtures.py, mpmath %s at 30 digits" % mp.__version__,
                "cases": out,
            },
            fh,
            indent=1,
        )
        fh.write("\n")


if __name__ == "__main__":
    main()
