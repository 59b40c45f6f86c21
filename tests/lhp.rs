//! Large homogeneous pool: closed form vs quadrature, published and [hp]
//! values, laws of the model, the finite pool and a Monte Carlo.

use gauss_quad::legendre::GaussLegendre;
use proptest::prelude::*;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use skewbook::loss::{
    closed, expected_min, quadrature, BaseTranche, Cap, Horizon, Method, TrancheBounds,
};
use skewbook::math::normal::cdf as norm_cdf;
use skewbook::math::normal::{inv_cdf, pdf};
use std::num::NonZeroUsize;

/// Closed form and quadrature must agree to this (conventions.md).
const METHODS_AGREE: f64 = 1e-10;
/// Against the 15-decimal [hp] table of reference-values.md.
const HP_TOL: f64 = 1e-12;

const PD: f64 = 0.05;
const R: f64 = 0.4;
const BOUNDS: [(f64, f64); 4] = [(0.0, 0.03), (0.03, 0.07), (0.07, 0.15), (0.15, 1.0)];
const BOTH: [Method; 2] = [Method::ClosedForm, Method::Quadrature];

fn horizon(pd: f64) -> Horizon {
    Horizon::new(pd).expect("pd in [0, 1]")
}

fn bounds(a: f64, d: f64) -> TrancheBounds {
    TrancheBounds::new(R, a, d).expect("valid tranche")
}

/// reference-values.md, "Large-pool expected tranche loss, one horizon,
/// PD 5%, R 40%, as a fraction of tranche width" [hp: 30-digit quadrature,
/// confirmed by the closed form].
#[test]
fn hp_table_of_tranche_losses() {
    let table: [(f64, [f64; 4]); 3] = [
        (
            0.1,
            [
                0.738319667699398,
                0.171575130252728,
                0.012174480478085,
                0.000015819200779,
            ],
        ),
        (
            0.3,
            [
                0.541057502482776,
                0.195846527818642,
                0.058325058675267,
                0.001492246022058,
            ],
        ),
        (
            0.6,
            [
                0.335055997825930,
                0.163656450148538,
                0.085598367065615,
                0.007710814934155,
            ],
        ),
    ];
    let h = horizon(PD);
    for (rho, row) in table {
        for ((a, d), want) in BOUNDS.into_iter().zip(row) {
            for m in BOTH {
                let got = bounds(a, d).expectation(&h, rho, m).loss;
                assert!(
                    (got - want).abs() < HP_TOL,
                    "[{a}, {d}] rho {rho} {m:?}: {got} vs {want}"
                );
            }
        }
    }
}

/// reference-values.md "Two compound roots" [hp]: [3,7%] reaches 0.130954
/// at rho = 0.047066 and 0.782690 (peak 0.196752 at rho = 0.2565); [7,15%]
/// reaches 0.072946 at 0.406126 and 0.930131 (peak 0.086659 at 0.678).
/// The rhos are given to 6 decimals, so the check allows the slope times
/// half a unit in the last digit on top of half a unit in the target.
#[test]
fn two_compound_roots() {
    let h = horizon(PD);
    let cases = [
        (
            (0.03, 0.07),
            0.130954,
            [0.047066, 0.782690],
            (0.2565, 0.196752),
        ),
        (
            (0.07, 0.15),
            0.072946,
            [0.406126, 0.930131],
            (0.678, 0.086659),
        ),
    ];
    for ((a, d), target, roots, (peak_rho, peak)) in cases {
        let t = bounds(a, d);
        for rho in roots {
            let e = t.expectation(&h, rho, Method::ClosedForm);
            let tol = 5e-7 + e.dloss_drho.abs() * 5e-7;
            assert!(
                (e.loss - target).abs() < tol,
                "[{a}, {d}] at {rho}: {} vs {target}",
                e.loss
            );
        }
        // the peak: value to the digits given, and a local maximum
        let at = |rho: f64| t.expectation(&h, rho, Method::ClosedForm).loss;
        assert!((at(peak_rho) - peak).abs() < 1e-6, "peak {}", at(peak_rho));
        assert!(at(peak_rho) > at(peak_rho - 0.01) && at(peak_rho) > at(peak_rho + 0.01));
        // any target above the peak has no root: the scan never reaches it
        let max_scan = (1..1000)
            .map(|i| at(i as f64 / 1000.0))
            .fold(f64::MIN, f64::max);
        assert!(max_scan < peak + 1e-6);
    }
}

/// Closed form and quadrature agree to 1e-10 (in fact ~1e-16) on a grid of
/// rho in [1e-4, 0.9999], PD in [1e-6, 0.9], k in (0, 1]; so do their rho
/// derivatives, relative to the derivative's size.
#[test]
fn closed_form_matches_quadrature() {
    let rhos = [
        1e-4, 1e-3, 0.01, 0.05, 0.1, 0.2, 0.3, 0.5, 0.7, 0.85, 0.9, 0.95, 0.99, 0.999, 0.9999,
    ];
    let pds = [1e-6, 1e-4, 0.01, 0.05, 0.2, 0.5, 0.9];
    let ks = [1e-4, 1e-3, 0.01, 0.03, 0.05, 0.1, 0.3, 0.6, 0.9, 0.999, 1.0];
    let (mut worst, mut worst_d) = (0.0f64, 0.0f64);
    for pd in pds {
        let h = horizon(pd);
        for k in ks {
            let cap = Cap::new(k);
            for rho in rhos {
                let c = closed::value(&h, &cap, rho);
                let q = quadrature::value(&h, &cap, rho);
                let err = (c - q).abs();
                assert!(
                    err < METHODS_AGREE,
                    "pd {pd} k {k} rho {rho}: closed {c:e} quadrature {q:e}"
                );
                worst = worst.max(err);
                let dc = closed::drho(&h, &cap, rho);
                let dq = quadrature::drho(&h, &cap, rho);
                let derr = (dc - dq).abs() / dc.abs().max(1.0);
                assert!(
                    derr < METHODS_AGREE,
                    "pd {pd} k {k} rho {rho}: drho closed {dc:e} quadrature {dq:e}"
                );
                worst_d = worst_d.max(derr);
            }
        }
    }
    eprintln!("closed vs quadrature: value {worst:e}, drho (relative) {worst_d:e}");
}

fn text_num(v: &serde_json::Value, key: &str) -> f64 {
    let s = v[key]
        .as_str()
        .unwrap_or_else(|| panic!("fixture field {key} is not a string"));
    s.parse()
        .unwrap_or_else(|e| panic!("fixture field {key} = {s:?}: {e}"))
}

/// E[min(p, k)] and its rho derivative against tests/fixtures/lhp.json
/// (tests/reference/lhp_fixtures.py: mpmath at 30 digits, the factor
/// integral confirmed by integrating Vasicek's distribution; derivative by
/// mpmath.diff). Both methods, PD 1e-6..0.9, rho 1e-4..0.9999.
#[test]
fn mpmath_large_pool_fixture() {
    let doc: serde_json::Value =
        serde_json::from_str(include_str!("fixtures/lhp.json")).expect("lhp.json parses");
    assert!(doc["library"]
        .as_str()
        .is_some_and(|s| s.starts_with("mpmath")));
    let cases = doc["cases"].as_array().expect("cases");
    assert_eq!(cases.len(), 200);
    let (mut worst_abs, mut worst_rel, mut worst_d) = (0.0f64, 0.0f64, 0.0f64);
    for case in cases {
        let (pd, rho, k) = (
            text_num(case, "pd"),
            text_num(case, "rho"),
            text_num(case, "k"),
        );
        let (want, want_d) = (text_num(case, "value"), text_num(case, "drho"));
        let (h, cap) = (horizon(pd), Cap::new(k));
        for m in BOTH {
            let e = expected_min(&h, &cap, rho, m);
            let err = (e.value - want).abs();
            assert!(
                err < 1e-15 && err < 1e-9 * want,
                "pd {pd} rho {rho} k {k} {m:?}: {:e} vs mpmath {want:e}",
                e.value
            );
            // relative where the derivative is material, absolute where it
            // is below 1e-8 (there mpmath.diff itself is only good to ~1e-20)
            let dabs = (e.drho - want_d).abs();
            if want_d.abs() > 1e-8 {
                let derr = dabs / want_d.abs();
                assert!(
                    derr < 1e-9,
                    "pd {pd} rho {rho} k {k} {m:?}: drho {:e} vs mpmath {want_d:e}",
                    e.drho
                );
                if m == Method::ClosedForm {
                    worst_d = worst_d.max(derr);
                }
            } else {
                assert!(
                    dabs < 1e-15,
                    "pd {pd} rho {rho} k {k} {m:?}: drho {:e}",
                    e.drho
                );
            }
            worst_abs = worst_abs.max(err);
            worst_rel = worst_rel.max(err / want);
        }
    }
    eprintln!(
        "lhp vs mpmath: abs {worst_abs:e}, rel {worst_rel:e}, closed-form drho rel (|drho| > 1e-8) {worst_d:e}"
    );
}

/// Law of the model: tranches spanning [0, 100%] add up, width-weighted, to
/// the pool loss (1 - R) PD and the pool recovery R PD, at every rho;
/// [0, 100%] itself loses (1 - R) PD and amortises R PD (reference-values.md).
#[test]
fn capital_structure_adds_up() {
    let h = horizon(PD);
    for m in BOTH {
        for rho in [1e-4, 0.05, 0.2, 0.45, 0.7, 0.9, 0.99, 0.9999] {
            let (mut loss, mut amort) = (0.0, 0.0);
            for (a, d) in BOUNDS {
                let e = bounds(a, d).expectation(&h, rho, m);
                loss += (d - a) * e.loss;
                amort += (d - a) * (1.0 - e.loss - e.outstanding);
            }
            assert!((loss - (1.0 - R) * PD).abs() < 1e-15, "{m:?} {rho}: {loss}");
            assert!((amort - R * PD).abs() < 1e-15, "{m:?} {rho}: {amort}");
            let whole = bounds(0.0, 1.0).expectation(&h, rho, m);
            assert!((whole.loss - 0.03).abs() < 1e-16);
            assert!((1.0 - whole.loss - whole.outstanding - 0.02).abs() < 1e-15);
            // [15, 100%] amortisation is 0.02 / 0.85 (reference-values.md)
            let senior = bounds(0.15, 1.0).expectation(&h, rho, m);
            let senior_amort = 1.0 - senior.loss - senior.outstanding;
            assert!((senior_amort - 0.02 / 0.85).abs() < 1e-15, "{senior_amort}");
        }
    }
}

/// Analytic rho derivatives against central differences (step 1e-6).
#[test]
fn derivatives_match_central_differences() {
    let step = 1e-6;
    for pd in [0.001, 0.05, 0.3] {
        let h = horizon(pd);
        for rho in [0.02, 0.1, 0.3, 0.6, 0.9, 0.99] {
            for (a, d) in BOUNDS {
                let t = bounds(a, d);
                let e = t.expectation(&h, rho, Method::ClosedForm);
                let up = t.expectation(&h, rho + step, Method::ClosedForm);
                let dn = t.expectation(&h, rho - step, Method::ClosedForm);
                let fd_loss = (up.loss - dn.loss) / (2.0 * step);
                let fd_out = (up.outstanding - dn.outstanding) / (2.0 * step);
                let tol = 1e-7 * (1.0 + fd_loss.abs());
                assert!(
                    (e.dloss_drho - fd_loss).abs() < tol,
                    "pd {pd} rho {rho} [{a}, {d}]: {} vs {fd_loss}",
                    e.dloss_drho
                );
                assert!(
                    (e.doutstanding_drho - fd_out).abs() < 1e-7 * (1.0 + fd_out.abs()),
                    "pd {pd} rho {rho} [{a}, {d}]: {} vs {fd_out}",
                    e.doutstanding_drho
                );
            }
        }
    }
}

/// Gauss-Legendre on the given panels, each split into `per` equal parts.
fn panels(points: &[f64], per: usize, rule: &GaussLegendre, f: &dyn Fn(f64) -> f64) -> f64 {
    let mut total = 0.0;
    for w in points.windows(2) {
        let step = (w[1] - w[0]) / per as f64;
        for i in 0..per {
            let a = w[0] + i as f64 * step;
            total += rule.integrate(a, a + step, f);
        }
    }
    total
}

fn gl(n: usize) -> GaussLegendre {
    GaussLegendre::new(NonZeroUsize::new(n).expect("n > 0"))
}

/// Vasicek (2002), "Loan portfolio value", Risk 15(12): the large-pool
/// default rate has P(p <= y) = N((sqrt(1-rho) G(y) - c) / sqrt(rho)), so
/// E[min(p, k)] = int_0^k (1 - F(y)) dy. Integrated numerically (in
/// y = N(u), which removes the endpoint singularity at y = 0), against the
/// closed form.
#[test]
fn vasicek_distribution_integrates_to_closed_form() {
    let rule = gl(30);
    for pd in [0.005, 0.05, 0.25] {
        let h = horizon(pd);
        let c = inv_cdf(pd);
        for rho in [0.01f64, 0.12, 0.3, 0.6, 0.9] {
            let vasicek_cdf = |y: f64| norm_cdf(((1.0 - rho).sqrt() * inv_cdf(y) - c) / rho.sqrt());
            for k in [0.001, 0.02, 0.05, 0.2, 0.7] {
                let top = inv_cdf(k);
                // the survival 1 - F(N(u)) steps at u = c / sqrt(1 - rho),
                // width sqrt(rho / (1 - rho))
                let mid = c / (1.0 - rho).sqrt();
                let width = (rho / (1.0 - rho)).sqrt();
                let mut pts: Vec<f64> = vec![-12.0, top];
                for t in [-6.0, -3.0, -1.0, 0.0, 1.0, 3.0, 6.0] {
                    pts.push(mid + t * width);
                }
                pts.retain(|&u| (-12.0..=top).contains(&u));
                pts.sort_by(f64::total_cmp);
                let integral = panels(&pts, 8, &rule, &|u: f64| {
                    (1.0 - vasicek_cdf(norm_cdf(u))) * pdf(u)
                });
                let closed_form = closed::value(&h, &Cap::new(k), rho);
                assert!(
                    (integral - closed_form).abs() < 1e-12,
                    "pd {pd} rho {rho} k {k}: {integral:e} vs {closed_form:e}"
                );
            }
        }
    }
}

/// Exact expected loss of the base tranche [0, K] of a homogeneous pool of
/// `n` names: conditional binomial given the factor, mixed over the factor
/// by Gauss-Legendre on fine panels.
fn finite_pool_base_loss(n: u32, pd: f64, rho: f64, recovery: f64, detach: f64) -> f64 {
    let c = inv_cdf(pd);
    let lgd = 1.0 - recovery;
    let nf = n as f64;
    // defaults j with lgd j / n < K contribute (K - lgd j / n) to K - min(L, K)
    let below: Vec<u32> = (0..=n).filter(|&j| lgd * j as f64 / nf < detach).collect();
    let conditional = |z: f64| -> f64 {
        let p = norm_cdf((c - rho.sqrt() * z) / (1.0 - rho).sqrt());
        if p <= 0.0 {
            return 0.0;
        }
        if p >= 1.0 {
            return (lgd).min(detach);
        }
        let (lp, lq) = (p.ln(), (-p).ln_1p());
        let mut ln_choose = 0.0;
        let mut shortfall = 0.0;
        for &j in &below {
            if j > 0 {
                ln_choose += ((n - j + 1) as f64).ln() - (j as f64).ln();
            }
            let pmf = (ln_choose + j as f64 * lp + (n - j) as f64 * lq).exp();
            shortfall += (detach - lgd * j as f64 / nf) * pmf;
        }
        detach - shortfall
    };
    let rule = gl(20);
    let pts: Vec<f64> = (-40..=40).map(|i| i as f64 * 0.25).collect();
    panels(&pts, 4, &rule, &|z| conditional(z) * pdf(z))
}

/// The exact finite pool converges to the large pool (Vasicek's limit) as
/// the number of names grows, with error shrinking roughly like 1/n.
#[test]
fn finite_pool_converges_to_large_pool() {
    let h = horizon(PD);
    for (rho, detach) in [(0.3, 0.03), (0.1, 0.07), (0.6, 0.15)] {
        let lhp = BaseTranche::new(R, detach)
            .expect("valid")
            .expectation(&h, rho, Method::ClosedForm)
            .loss;
        let errs: Vec<f64> = [100, 1000, 10000]
            .iter()
            .map(|&n| (finite_pool_base_loss(n, PD, rho, R, detach) - lhp).abs())
            .collect();
        eprintln!("rho {rho} K {detach}: errors {errs:?}");
        assert!(
            errs[0] < 2e-3 && errs[1] < 2e-4 && errs[2] < 2e-5,
            "{errs:?}"
        );
        for w in errs.windows(2) {
            let ratio = w[0] / w[1];
            assert!((3.0..=30.0).contains(&ratio), "ratio {ratio}: {errs:?}");
        }
    }
}

/// Seeded Monte Carlo of the one-factor Gaussian copula (latent variables
/// sqrt(rho) Z + sqrt(1 - rho) e_i < c, normals by Box-Muller) for a pool of
/// 125 names, 200 000 scenarios: the tranche losses agree with the exact
/// finite-pool values within 4 standard errors.
#[test]
fn monte_carlo_matches_finite_pool() {
    const NAMES: usize = 125;
    const SCENARIOS: usize = 200_000;
    let rho: f64 = 0.3;
    let c = inv_cdf(PD);
    let (sr, s1) = (rho.sqrt(), (1.0f64 - rho).sqrt());
    let mut rng = ChaCha8Rng::seed_from_u64(20_260_619);
    let normals = |rng: &mut ChaCha8Rng| -> (f64, f64) {
        let u1: f64 = 1.0 - rng.random::<f64>();
        let u2: f64 = rng.random::<f64>();
        let radius = (-2.0 * u1.ln()).sqrt();
        let (s, c) = (2.0 * std::f64::consts::PI * u2).sin_cos();
        (radius * c, radius * s)
    };
    let tranches = [(0.0, 0.03), (0.03, 0.07)];
    let mut sum = [0.0f64; 2];
    let mut sum_sq = [0.0f64; 2];
    for _ in 0..SCENARIOS {
        let (z, _) = normals(&mut rng);
        let mut defaults = 0usize;
        let mut i = 0;
        while i < NAMES {
            let (e1, e2) = normals(&mut rng);
            defaults += usize::from(sr * z + s1 * e1 < c);
            if i + 1 < NAMES {
                defaults += usize::from(sr * z + s1 * e2 < c);
            }
            i += 2;
        }
        let loss = (1.0 - R) * defaults as f64 / NAMES as f64;
        for (t, (a, d)) in tranches.iter().enumerate() {
            let x = (loss.min(*d) - loss.min(*a)) / (d - a);
            sum[t] += x;
            sum_sq[t] += x * x;
        }
    }
    for (t, (a, d)) in tranches.iter().enumerate() {
        let n = SCENARIOS as f64;
        let mean = sum[t] / n;
        let se = ((sum_sq[t] / n - mean * mean) / (n - 1.0)).sqrt();
        let exact = (finite_pool_base_loss(NAMES as u32, PD, rho, R, *d)
            - finite_pool_base_loss(NAMES as u32, PD, rho, R, *a))
            / (d - a);
        assert!(
            (mean - exact).abs() < 4.0 * se,
            "[{a}, {d}]: MC {mean} +/- {se}, exact {exact}"
        );
        assert!(se < 2e-3, "standard error {se}");
    }
}

/// Edge cases give finite values with the stated limits.
#[test]
fn edges_without_nan() {
    for pd in [0.0, 1e-300, 0.05, 1.0] {
        let h = horizon(pd);
        for rho in [-0.5, 0.0, 1e-300, 1e-12, 0.5, 1.0 - 1e-12, 1.0, 3.0] {
            for (r, a, d) in [
                (0.0, 0.0, 0.03),
                (1.0, 0.0, 0.03),
                (0.4, 0.0, 1.0),
                (0.4, 0.5, 1.0),
            ] {
                let t = TrancheBounds::new(r, a, d).expect("valid");
                for m in BOTH {
                    let e = t.expectation(&h, rho, m);
                    for v in [e.loss, e.outstanding, e.dloss_drho, e.doutstanding_drho] {
                        assert!(!v.is_nan(), "pd {pd} rho {rho} r {r} [{a},{d}] {m:?}");
                    }
                    // Nothing is clamped: the bounds hold up to rounding only.
                    for v in [e.loss, e.outstanding] {
                        assert!(
                            (-1e-12..=1.0 + 1e-12).contains(&v),
                            "pd {pd} rho {rho} r {r} [{a},{d}] {m:?}: {v}"
                        );
                    }
                }
            }
        }
    }
    // the limits themselves
    let h = horizon(PD);
    let eq = bounds(0.0, 0.03);
    assert_eq!(eq.expectation(&h, 0.0, Method::ClosedForm).loss, 1.0);
    let e = expected_min(&h, &Cap::new(0.5), 1.0, Method::ClosedForm);
    assert!((e.value - 0.025).abs() < 1e-17);
    // continuity into the limits
    let near0 = closed::value(&h, &Cap::new(0.02), 1e-12);
    assert!((near0 - 0.02).abs() < 1e-12);
    let near1 = closed::value(&h, &Cap::new(0.5), 1.0 - 1e-12);
    assert!((near1 - 0.025).abs() < 1e-5);
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 64,
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    /// 0 <= tranche EL <= 1 and outstanding in [0, 1], both methods.
    #[test]
    fn tranche_values_in_unit_interval(
        pd in 1e-6f64..0.9,
        rho in 1e-4f64..0.9999,
        recovery in 0.0f64..0.9,
        a in 0.0f64..0.99,
        w in 1e-4f64..1.0,
    ) {
        let d = (a + w).min(1.0);
        prop_assume!(d > a);
        let t = TrancheBounds::new(recovery, a, d).expect("valid");
        let h = horizon(pd);
        for m in BOTH {
            let e = t.expectation(&h, rho, m);
            // Not clamped: within [0, 1] up to rounding of a difference of two bases.
            prop_assert!((-1e-12..=1.0 + 1e-12).contains(&e.loss), "{}", e.loss);
            prop_assert!((-1e-12..=1.0 + 1e-12).contains(&e.outstanding), "{}", e.outstanding);
            prop_assert!(e.loss + e.outstanding <= 1.0 + 1e-12);
        }
    }

    /// Base expected loss rises and is concave in the detachment: its slope
    /// P(L > K) lies in [0, 1] and falls with K.
    #[test]
    fn base_loss_rises_and_is_concave(
        pd in 1e-6f64..0.9,
        rho in 1e-4f64..0.9999,
        recovery in 0.0f64..0.9,
        k1 in 0.0f64..0.98,
        g1 in 1e-3f64..0.3,
        g2 in 1e-3f64..0.3,
    ) {
        let h = horizon(pd);
        let k2 = (k1 + g1).min(0.99);
        let k3 = (k2 + g2).min(1.0);
        prop_assume!(k2 - k1 > 1e-3 && k3 - k2 > 1e-3);
        let el = |k: f64| {
            BaseTranche::new(recovery, k).expect("valid")
                .expectation(&h, rho, Method::ClosedForm).loss
        };
        let (e1, e2, e3) = (el(k1), el(k2), el(k3));
        let s12 = (e2 - e1) / (k2 - k1);
        let s23 = (e3 - e2) / (k3 - k2);
        let tol = 1e-12;
        prop_assert!(s12 >= -tol && s12 <= 1.0 + tol, "slope {s12}");
        prop_assert!(s23 >= -tol && s23 <= 1.0 + tol, "slope {s23}");
        prop_assert!(s23 <= s12 + tol, "not concave: {s12} then {s23}");
    }
}
