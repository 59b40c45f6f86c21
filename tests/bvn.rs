//! Bivariate normal CDF against 40-digit mpmath values and the identities of
//! the reference sheet.

use skewbook::math::bvn::{bvn_cdf, bvn_pdf};
use skewbook::math::normal::cdf;

/// Absolute tolerance against mpmath: Genz (2004) reports about 5e-16.
const ABS_TOL: f64 = 1e-15;

struct Case {
    h: f64,
    k: f64,
    r: f64,
    value: f64,
    source: String,
}

fn num(v: &serde_json::Value, key: &str) -> f64 {
    let s = v[key]
        .as_str()
        .unwrap_or_else(|| panic!("fixture field {key} is not a string"));
    s.parse()
        .unwrap_or_else(|e| panic!("fixture field {key} = {s:?}: {e}"))
}

/// tests/fixtures/bvn.json, written by tests/reference/bvn_fixtures.py
/// (mpmath, 40 digits, two independent integral forms).
fn fixture() -> Vec<Case> {
    let text = include_str!("fixtures/bvn.json");
    let doc: serde_json::Value = serde_json::from_str(text).expect("bvn.json parses");
    assert!(doc["library"]
        .as_str()
        .is_some_and(|s| s.starts_with("mpmath")));
    doc["cases"]
        .as_array()
        .expect("cases array")
        .iter()
        .map(|c| Case {
            h: num(c, "h"),
            k: num(c, "k"),
            r: num(c, "r"),
            value: num(c, "phi2"),
            source: c["source"].as_str().unwrap_or("").to_string(),
        })
        .collect()
}

/// The reference-values.md table [hp, 40 digits], reproduced by the fixture
/// script (to 1e-15 relative; three rows there differ in the 17th digit).
#[test]
fn reference_table() {
    let cases: Vec<Case> = fixture()
        .into_iter()
        .filter(|c| c.source == "table")
        .collect();
    assert_eq!(cases.len(), 9);
    for c in cases {
        let got = bvn_cdf(c.h, c.k, c.r);
        let err = (got - c.value).abs();
        assert!(
            err <= ABS_TOL && err <= 1e-14 * c.value,
            "Phi2({}, {}; {}) = {got:e}, mpmath {:e}",
            c.h,
            c.k,
            c.r,
            c.value
        );
    }
}

/// Grid with tails to -8 and r to +/-0.9999, against mpmath: absolute error
/// <= 1e-15 everywhere (Genz's method is an absolute-accuracy method).
#[test]
fn mpmath_grid() {
    let cases = fixture();
    assert!(cases.len() > 1500);
    let mut max_abs = 0.0f64;
    for c in &cases {
        let got = bvn_cdf(c.h, c.k, c.r);
        let err = (got - c.value).abs();
        assert!(
            err <= ABS_TOL,
            "Phi2({}, {}; {}) = {got:e}, mpmath {:e}, error {err:e}",
            c.h,
            c.k,
            c.r,
            c.value
        );
        max_abs = max_abs.max(err);
    }
    eprintln!("bvn vs mpmath: max abs error {max_abs:e}");
}

/// Relative accuracy in the tails as measured on the fixture grid (each bound
/// about 3x the worst case seen): `(floor, bound for r >= 0, bound for
/// r < 0)`, holding for every value at or above the floor. The 6- and
/// 12-point rules lose relative accuracy far below 1e-12; for r < 0 the
/// value is a difference and keeps only the absolute bound.
const REL_BOUNDS: [(f64, f64, f64); 5] = [
    (1e-3, 1e-13, 2e-13),
    (1e-6, 3e-13, 2e-12),
    (1e-9, 4e-11, 2e-10),
    (1e-12, 1.5e-10, 6e-9),
    (1e-15, 1.5e-10, 3e-5),
];

#[test]
fn mpmath_grid_relative_tails() {
    for c in fixture() {
        let rel = (bvn_cdf(c.h, c.k, c.r) - c.value).abs() / c.value;
        for (floor, pos, neg) in REL_BOUNDS {
            let bound = if c.r >= 0.0 { pos } else { neg };
            if c.value >= floor {
                assert!(
                    rel <= bound,
                    "Phi2({}, {}; {}) = mpmath {:e}: relative error {rel:e} > {bound:e}",
                    c.h,
                    c.k,
                    c.r,
                    c.value
                );
            }
        }
    }
}

const HS: [f64; 9] = [-6.0, -3.0, -1.2, -0.3, 0.0, 0.4, 1.1, 2.5, 5.0];
const RS: [f64; 13] = [
    -0.9999, -0.95, -0.926, -0.924, -0.76, -0.74, -0.31, -0.29, 0.05, 0.3, 0.75, 0.925, 0.995,
];

/// Phi2(h, k; 0) = N(h) N(k), approached through the 6-point branch: near
/// r = 0, Phi2 = N(h) N(k) + r phi(h) phi(k) + O(r^2) (Plackett).
#[test]
fn independence_limit() {
    let phi = |x: f64| (-0.5 * x * x).exp() / (2.0 * std::f64::consts::PI).sqrt();
    for h in HS {
        for k in HS {
            let want = cdf(h) * cdf(k);
            for r in [1e-9, -1e-9] {
                let first_order = want + r * phi(h) * phi(k);
                assert!(
                    (bvn_cdf(h, k, r) - first_order).abs() < 3e-16,
                    "{h} {k} {r}"
                );
            }
            assert_eq!(bvn_cdf(h, k, 0.0), want);
        }
    }
}

/// Phi2(h, k; 1) = N(min(h, k)); Phi2(h, k; -1) = max(0, N(h) + N(k) - 1);
/// both limits are also reached continuously (|r| = 1 - 1e-12).
#[test]
fn degenerate_correlation() {
    for h in HS {
        for k in HS {
            let plus = cdf(h.min(k));
            let minus = (cdf(h) + cdf(k) - 1.0).max(0.0);
            assert!((bvn_cdf(h, k, 1.0) - plus).abs() < 2e-16);
            assert!((bvn_cdf(h, k, -1.0) - minus).abs() < 2e-16);
            assert!((bvn_cdf(h, k, 1.0 - 1e-12) - plus).abs() < 1e-6);
            assert!((bvn_cdf(h, k, -1.0 + 1e-12) - minus).abs() < 1e-6);
        }
    }
}

/// Reflection: Phi2(h, k; r) + Phi2(h, -k; -r) = N(h); symmetry in (h, k).
#[test]
fn reflection_and_symmetry() {
    for h in HS {
        for k in HS {
            for r in RS {
                let sum = bvn_cdf(h, k, r) + bvn_cdf(h, -k, -r);
                assert!((sum - cdf(h)).abs() < 1e-15, "{h} {k} {r}");
                assert!((bvn_cdf(h, k, r) - bvn_cdf(k, h, r)).abs() < 4e-16);
            }
        }
    }
}

/// Marginals: an infinite bound leaves the other normal CDF.
#[test]
fn infinite_bounds() {
    for h in HS {
        for r in RS {
            assert!((bvn_cdf(h, f64::INFINITY, r) - cdf(h)).abs() < 1e-16);
            assert!((bvn_cdf(f64::INFINITY, h, r) - cdf(h)).abs() < 1e-16);
            assert_eq!(bvn_cdf(h, f64::NEG_INFINITY, r), 0.0);
        }
    }
}

/// Plackett (1954): d Phi2 / dr = phi2, by central difference (step 1e-5:
/// truncation step^2 f'''/6 plus rounding 1e-16/step, below 3e-9 here).
#[test]
fn plackett_derivative() {
    let step = 1e-5;
    for h in HS {
        for k in HS {
            for r in RS {
                if r.abs() > 0.99 {
                    continue;
                }
                let fd = (bvn_cdf(h, k, r + step) - bvn_cdf(h, k, r - step)) / (2.0 * step);
                let pdf = bvn_pdf(h, k, r);
                assert!((fd - pdf).abs() < 3e-9, "{h} {k} {r}: {fd} vs {pdf}");
            }
        }
    }
}
