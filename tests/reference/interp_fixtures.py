#!/usr/bin/env python3
"""Reference values for src/math/interp.rs, from scipy.

Writes tests/fixtures/interp.json with two sections:

1. "curves": knot sets (x strictly increasing, y) evaluated at many points
   inside [x_first, x_last] by
   - scipy.interpolate.PchipInterpolator: the monotone piecewise-cubic
     Hermite interpolant of Fritsch and Carlson (1980) with the weighted
     harmonic-mean interior slopes and the three-point shape-preserving end
     slopes of Moler, "Numerical Computing with MATLAB" (2004), section 3.4;
   - numpy.interp: the piecewise-linear interpolant.
   The knot sets cover monotone rising and falling data, non-monotone data,
   a flat segment, a zero first secant, two and three knots (including the
   two clipping rules of the end slope), and base-correlation-shaped skews
   (the five-knot one is the arbitrage example of reference-values.md).
2. "isotonic": weighted least-squares non-increasing fits by
   scipy.optimize.isotonic_regression(y, weights=w, increasing=False)
   (scipy >= 1.12), on hand-picked and seeded random cases (with ties and
   widely spread weights).

Floats are written with Python's repr (shortest round-trip decimal).

Run: python3 tests/reference/interp_fixtures.py  (from anywhere)
"""

import json
import os
import sys

import numpy as np
import scipy
from scipy.interpolate import PchipInterpolator
from scipy.optimize import isotonic_regression

CURVES = [
    # name, x, y
    ("skew_five_knots",
     [0.03, 0.07, 0.10, 0.15, 0.30],
     [0.10, 0.30, 0.42, 0.58, 0.90]),
    ("skew_six_knots",
     [0.03, 0.06, 0.09, 0.12, 0.22, 0.60],
     [0.12, 0.21, 0.29, 0.36, 0.55, 0.88]),
    ("skew_uneven_rise",
     [0.025, 0.05, 0.08, 0.12, 0.20, 0.35],
     [0.05, 0.30, 0.33, 0.40, 0.70, 0.71]),
    ("falling_uneven",
     [0.0, 1.0, 1.5, 3.0, 4.0],
     [5.0, 4.0, 2.0, 1.5, 0.2]),
    ("non_monotone",
     [0.0, 0.5, 1.7, 2.0, 3.5, 4.0],
     [1.0, 3.0, 2.0, 5.0, -1.0, 0.0]),
    ("flat_segment",
     [0.0, 1.0, 2.0, 3.0, 4.0, 5.0],
     [0.0, 1.0, 1.0, 1.0, 2.0, 4.0]),
    ("zero_first_secant",
     [0.0, 1.0, 2.0, 3.0],
     [1.0, 1.0, 2.0, 3.0]),
    ("three_knots",
     [0.03, 0.07, 0.15],
     [0.20, 0.35, 0.60]),
    # end slope (2 h0 + h1) m0 - h0 m1) / (h0 + h1) has the sign opposite to
    # m0: set to 0
    ("three_knots_end_slope_zeroed",
     [0.0, 1.0, 2.0],
     [0.0, 0.1, 3.0]),
    # secants change sign and the three-point end slope exceeds 3 m0: set to 3 m0
    ("three_knots_end_slope_capped",
     [0.0, 2.0, 2.1],
     [0.0, 1.0, 0.0]),
    ("two_knots",
     [0.05, 0.25],
     [0.30, 0.70]),
]

ISOTONIC_HAND = [
    # name, values, weights
    ("already_non_increasing", [5.0, 4.0, 4.0, 1.0, -2.0], [1.0, 1.0, 1.0, 1.0, 1.0]),
    ("increasing", [1.0, 2.0, 3.0, 4.0], [1.0, 1.0, 1.0, 1.0]),
    ("one_violation_weighted", [3.0, 1.0, 2.0, 0.0], [1.0, 1.0, 3.0, 1.0]),
    ("mixed", [1.0, 3.0, 2.0, 4.0, 3.0, 5.0], [1.0, 2.0, 3.0, 1.0, 1.0, 1.0]),
    ("single", [0.7], [2.5]),
    ("tranchelet_slopes", [0.95, 0.80, 0.82, 0.60, 0.61, 0.62, 0.30, 0.05],
     [0.03, 0.04, 0.03, 0.05, 0.05, 0.05, 0.45, 0.30]),
]


def curves():
    rng = np.random.default_rng(20240611)
    out = []
    for name, x, y in CURVES:
        xa, ya = np.array(x), np.array(y)
        grid = np.linspace(xa[0], xa[-1], 101)
        rand = rng.uniform(xa[0], xa[-1], 30)
        pts = np.concatenate([grid, rand, xa])
        pts = pts[(pts >= xa[0]) & (pts <= xa[-1])]
        pchip = PchipInterpolator(xa, ya)(pts)
        linear = np.interp(pts, xa, ya)
        out.append({
            "name": name,
            "x": x,
            "y": y,
            "points": [float(p) for p in pts],
            "pchip": [float(v) for v in pchip],
            "linear": [float(v) for v in linear],
        })
    return out


def isotonic():
    rng = np.random.default_rng(19720101)
    cases = list(ISOTONIC_HAND)
    for i in range(12):
        n = int(rng.integers(2, 31))
        values = rng.normal(0.0, 1.0, n) - np.linspace(0.0, 1.5 * (i % 3), n)
        if i % 4 == 0:
            # ties: round to one decimal
            values = np.round(values, 1)
        weights = np.exp(rng.uniform(-3.0, 3.0, n)) if i % 2 else rng.uniform(0.1, 2.0, n)
        cases.append((f"random_{i}", [float(v) for v in values], [float(w) for w in weights]))
    out = []
    for name, values, weights in cases:
        fit = isotonic_regression(np.array(values), weights=np.array(weights),
                                  increasing=False).x
        out.append({"name": name, "values": values, "weights": weights,
                    "fit": [float(v) for v in fit]})
    return out


def main():
    major, minor = (int(p) for p in scipy.__version__.split(".")[:2])
    if (major, minor) < (1, 12):
        sys.exit(f"scipy >= 1.12 needed for isotonic_regression, found {scipy.__version__}")
    doc = {
        "description": "PCHIP (Fritsch-Carlson, Moler end slopes) and linear "
        "interpolation at points inside the knot range; weighted non-increasing "
        "isotonic regression",
        "generator": "tests/reference/interp_fixtures.py",
        "library": f"scipy {scipy.__version__}, numpy {np.__version__}",
        "curves": curves(),
        "isotonic": isotonic(),
    }
    root = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "fixtures")
    with open(os.path.join(root, "interp.json"), "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")
    print(f"wrote {len(doc['curves'])} curves, {len(doc['isotonic'])} isotonic cases")


if __name__ == "__main__":
    main()
