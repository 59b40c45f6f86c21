//! The finite homogeneous pool of n names against outside references:
//! mpmath integrals, its own rule with twice the nodes, the single name in
//! closed form, the large pool as n grows (with the 1/n term theory gives),
//! a seeded Monte Carlo of the copula itself, and Hull and White (2004),
//! Table 7.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use skewbook::curve::{DiscountCurve, HazardCurve};
use skewbook::loss::{BaseExpectation, BaseTranche, Correlation, FinitePool, Horizon, PoolModel};
use skewbook::market::Quote;
use skewbook::math::normal::{inv_cdf, pdf};
use skewbook::solve::compound::compound_roots;
use skewbook::tranche::{Tranche, TrancheSchedule, TrancheValuer};

fn finite(n: usize, pd: f64, rho: f64, recovery: f64, k: f64) -> BaseExpectation {
    let pool = FinitePool::new(n).expect("pool");
    BaseTranche::new(recovery, k).expect("base").finite(
        &Horizon::new(pd).expect("pd"),
        &Correlation::new(rho),
        &pool,
    )
}

fn text_num(v: &serde_json::Value, key: &str) -> f64 {
    v[key]
        .as_str()
        .unwrap_or_else(|| panic!("{key} as text"))
        .parse()
        .expect("number")
}

/// mpmath at 30 digits (`tests/reference/finite_fixtures.py`): tanh-sinh
/// integrals of the binomial sums over the factor; derivatives by
/// five-point differences of those integrals, not the analytic formula.
#[test]
fn mpmath_fixture() {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/finite.json"
    ))
    .expect("fixture");
    let json: serde_json::Value = serde_json::from_str(&text).expect("json");
    let cases = json["cases"].as_array().expect("cases");
    assert!(cases.len() >= 10);
    for c in cases {
        let n = c["names"].as_u64().expect("names") as usize;
        let (pd, rho) = (
            c["pd"].as_f64().expect("pd"),
            c["rho"].as_f64().expect("rho"),
        );
        let (r, k) = (
            c["recovery"].as_f64().expect("r"),
            c["detach"].as_f64().expect("k"),
        );
        let e = finite(n, pd, rho, r, k);
        let what = format!("n {n} PD {pd} rho {rho} R {r} K {k}");
        assert!(
            (e.loss - text_num(c, "loss")).abs() < 1e-11,
            "{what}: loss {e:?}"
        );
        assert!(
            (e.outstanding - text_num(c, "outstanding")).abs() < 1e-11,
            "{what}: outstanding {e:?}"
        );
        assert!(
            (e.dloss_drho - text_num(c, "dloss_drho")).abs() < 1e-9,
            "{what}: dloss {e:?}"
        );
        assert!(
            (e.doutstanding_drho - text_num(c, "doutstanding_drho")).abs() < 1e-9,
            "{what}: doutstanding {e:?}"
        );
    }
}

/// The default rules (the tabulated trapezoid sums from rho = 0.01, the
/// direct Gauss-Legendre panels below) against the direct rule with 28
/// points a panel, on a grid of pool sizes, PDs, correlations and
/// detachments: within 1e-11 in value, 1e-9 + 1e-6 relative in the
/// rho-derivative. (The name is from when the default rule was the direct
/// one with 14 points a panel.)
#[test]
fn fourteen_points_a_panel_agree_with_twenty_eight() {
    let mut worst: (f64, String) = (0.0, String::new());
    for n in [2, 10, 125, 250] {
        let rule = FinitePool::new(n).expect("pool");
        let twice = FinitePool::with_nodes(n, 28).expect("pool");
        for pd in [1e-4, 0.01, 0.05, 0.3, 0.8] {
            let h = Horizon::new(pd).expect("pd");
            for rho in [1e-4, 0.01, 0.1, 0.3, 0.6, 0.9, 0.99, 0.9999] {
                let corr = Correlation::new(rho);
                for k in [0.005, 0.01, 0.03, 0.07, 0.15, 0.3, 0.59, 0.7, 0.9] {
                    let base = BaseTranche::new(0.4, k).expect("base");
                    let (a, b) = (
                        base.finite(&h, &corr, &rule),
                        base.finite(&h, &corr, &twice),
                    );
                    let err = (a.loss - b.loss)
                        .abs()
                        .max((a.outstanding - b.outstanding).abs());
                    if err > worst.0 {
                        worst = (err, format!("n {n} PD {pd} rho {rho} K {k}"));
                    }
                    // the derivative's integrand reaches further into the tails
                    // (phi(v) (c - z / sqrt(rho)) grows as rho -> 1): 1e-6 relative
                    assert!(
                        (a.dloss_drho - b.dloss_drho).abs() < 1e-9 + 1e-6 * b.dloss_drho.abs(),
                        "n {n} PD {pd} rho {rho} K {k}: {a:?} {b:?}"
                    );
                }
            }
        }
    }
    assert!(worst.0 < 1e-11, "worst {:e} at {}", worst.0, worst.1);
}

/// The tabulated rule (trapezoid sums over a table of `f(N(v)) - cap N(v)`)
/// against the binomial sums evaluated afresh at every node of the direct
/// rule ([`FinitePool::expected_min_direct`]), on the same grid: within
/// 2e-12 in value, 1e-9 + 1e-6 relative in the derivative.
#[test]
fn tabulated_against_direct_binomial_sums() {
    let mut worst: (f64, String) = (0.0, String::new());
    for n in [2, 10, 125, 250] {
        let pool = FinitePool::new(n).expect("pool");
        let nf = n as f64;
        for pd in [1e-4, 0.01, 0.05, 0.3, 0.8] {
            let h = Horizon::new(pd).expect("pd");
            for rho in [1e-4, 0.01, 0.1, 0.3, 0.6, 0.9, 0.99, 0.9999] {
                let corr = Correlation::new(rho);
                for k in [0.005, 0.01, 0.03, 0.07, 0.15, 0.3, 0.59] {
                    let cap = skewbook::loss::Cap::new(k / 0.6);
                    let a = pool.expected_min(&h, &corr, 0.6 / nf, k, &cap);
                    let b = pool.expected_min_direct(&h, &corr, 0.6 / nf, k, &cap);
                    let what = format!("n {n} PD {pd} rho {rho} K {k}");
                    if (a.value - b.value).abs() > worst.0 {
                        worst = ((a.value - b.value).abs(), what.clone());
                    }
                    assert!(
                        (a.drho - b.drho).abs() < 1e-9 + 1e-6 * b.drho.abs(),
                        "{what}: {a:?} {b:?}"
                    );
                }
            }
        }
    }
    assert!(worst.0 < 2e-12, "worst {:e} at {}", worst.0, worst.1);
}

/// The tabulated rule beyond that grid, against the direct rule with 28
/// points a panel: pools of 3, 40 and 1,000 names, PD from 1e-9 to
/// 1 - 1e-6, correlations just above the tabulated rule's threshold (0.01)
/// and at 0.999999, detachments a hundredth of a name's loss and just
/// below the pool's: within 1e-12 in value, 1e-9 + 1e-6 relative in the
/// derivative.
#[test]
fn tabulated_rule_at_the_edges_of_its_domain() {
    for n in [3, 40, 1000] {
        let pool = FinitePool::new(n).expect("pool");
        let direct = FinitePool::with_nodes(n, 28).expect("pool");
        for pd in [1e-9, 1e-6, 0.99, 0.999999] {
            let h = Horizon::new(pd).expect("pd");
            for rho in [0.0101, 0.05, 0.99, 0.999999] {
                let corr = Correlation::new(rho);
                for k in [0.006 / n as f64, 0.2, 0.5999] {
                    let base = BaseTranche::new(0.4, k).expect("base");
                    let (a, b) = (
                        base.finite(&h, &corr, &pool),
                        base.finite(&h, &corr, &direct),
                    );
                    let what = format!("n {n} PD {pd} rho {rho} K {k}: {a:?} {b:?}");
                    assert!((a.loss - b.loss).abs() < 1e-12, "{what}");
                    assert!((a.outstanding - b.outstanding).abs() < 1e-12, "{what}");
                    assert!(
                        (a.dloss_drho - b.dloss_drho).abs() < 1e-9 + 1e-6 * b.dloss_drho.abs(),
                        "{what}"
                    );
                }
            }
        }
    }
}

/// One name: it defaults with probability PD whatever rho, so `[0, K]`
/// loses `min(1 - R, K)` and is amortised by `(R - min(R, 1 - K))` with
/// probability PD (closed form).
#[test]
fn one_name_is_the_single_name_closed_form() {
    for (pd, r) in [(0.05, 0.4), (0.3, 0.25), (0.9, 0.6)] {
        for k in [0.01, 0.3, 0.5, 0.8, 1.0] {
            for rho in [0.0, 0.01, 0.3, 0.9, 0.9999] {
                let e = finite(1, pd, rho, r, k);
                let loss = pd * (1.0 - r).min(k);
                let amortised = pd * (r - r.min(1.0 - k));
                assert!(
                    (e.loss - loss).abs() < 1e-13,
                    "PD {pd} K {k} rho {rho}: {e:?}"
                );
                assert!((e.outstanding - (k - loss - amortised)).abs() < 1e-13);
                assert!(e.dloss_drho.abs() < 1e-12 && e.doutstanding_drho.abs() < 1e-12);
            }
        }
    }
}

/// Vasicek's density of the default fraction p at x (Vasicek 2002).
fn vasicek_density(pd: f64, rho: f64, x: f64) -> f64 {
    let (sr, s1) = (rho.sqrt(), (1.0 - rho).sqrt());
    let g = inv_cdf(x);
    (s1 / sr) * pdf((s1 * g - inv_cdf(pd)) / sr) / pdf(g)
}

/// 10,000 names against the large pool. Given p, the binomial rounds the
/// large pool's kink of `(1 - R) min(p, k)` at `k = K / (1 - R)` with
/// variance `k (1 - k) / n`; integrated against the density `psi` of p the
/// rounding lowers the expected loss by
/// `(1 - R) psi(k) k (1 - k) / (2 n) + O(n^-2)` (with psi uniform the sum
/// is exact: `[k (1 - k) + θ (1 - θ) / n] / (2 (n + 1))`, θ the lattice
/// offset of n k). The test asserts the difference to within 2% of that
/// term, and the term itself is below `(1 - R) psi(k) / (8 n)`, about 1e-5.
#[test]
fn ten_thousand_names_approach_the_large_pool_at_rate_one_over_n() {
    let n = 10_000;
    for (pd, rho, k) in [
        (0.05, 0.3, 0.03),
        (0.05, 0.3, 0.07),
        (0.02, 0.1, 0.03),
        (0.1, 0.6, 0.15),
    ] {
        let r = 0.4;
        let big = finite(n, pd, rho, r, k);
        let base = BaseTranche::new(r, k).expect("base");
        let large = base.closed_form(&Horizon::new(pd).expect("pd"), &Correlation::new(rho));
        let x = k / (1.0 - r);
        let term = (1.0 - r) * vasicek_density(pd, rho, x) * x * (1.0 - x) / (2.0 * n as f64);
        let gap = large.loss - big.loss;
        assert!(
            (gap - term).abs() < 0.02 * term,
            "PD {pd} rho {rho} K {k}: gap {gap:e}, theory {term:e}"
        );
        // below the recovery cap the outstanding notional moves with the loss
        assert!(((big.outstanding - large.outstanding) - gap).abs() < 1e-12);
        assert!(term < (1.0 - r) * vasicek_density(pd, rho, x) / (8.0 * n as f64));
    }
}

/// A seeded Monte Carlo of the copula itself: every name's latent variable
/// `sqrt(rho) Z + sqrt(1 - rho) e_i` drawn, defaults counted, and the base
/// tranche payoffs averaged; the model lies within 3 standard errors.
#[test]
fn one_hundred_twenty_five_names_against_a_monte_carlo_of_the_copula() {
    let (n, pd, rho, r) = (125usize, 0.05, 0.3, 0.4);
    let c = inv_cdf(pd);
    let (sr, s1) = (f64::sqrt(rho), f64::sqrt(1.0 - rho));
    let mut rng = ChaCha8Rng::seed_from_u64(20_040_125);
    let mut normal = move || {
        // Box-Muller, one of the pair
        let u1: f64 = 1.0 - rng.random::<f64>();
        let u2: f64 = rng.random::<f64>();
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    };
    let detachments = [0.03, 0.07, 0.15, 0.7];
    let paths = 60_000;
    let mut sum = [0.0; 4];
    let mut sum2 = [0.0; 4];
    for _ in 0..paths {
        let z = normal();
        let defaults = (0..n).filter(|_| sr * z + s1 * normal() <= c).count() as f64;
        let (loss, rec) = (defaults * (1.0 - r) / n as f64, defaults * r / n as f64);
        for (i, &k) in detachments.iter().enumerate() {
            // outstanding of [0, K]: K - min(L, K) - (Rec - min(Rec, 1 - K))
            let x = k - loss.min(k) - (rec - rec.min(1.0 - k));
            sum[i] += x;
            sum2[i] += x * x;
        }
    }
    for (i, &k) in detachments.iter().enumerate() {
        let mean = sum[i] / paths as f64;
        let se = ((sum2[i] / paths as f64 - mean * mean) / paths as f64).sqrt();
        let model = finite(n, pd, rho, r, k).outstanding;
        assert!(
            (model - mean).abs() < 3.0 * se,
            "K {k}: model {model}, simulation {mean} ± {se}"
        );
    }
}

/// Hull and White (2004), "Valuation of a CDO and an n-th to default CDS
/// without Monte Carlo simulation", J. Derivatives 12(2), Table 7, the
/// one-factor Gaussian rows, as quoted in issue 15: 100 names, hazard 1% a
/// year, recovery 40%, 5 years, rate 5% continuously compounded, quarterly
/// premiums; spreads in bp.
/// (attachment, detachment, spread in bp) of one row.
type Row = (f64, f64, f64);

const HULL_WHITE: [(f64, [Row; 4]); 2] = [
    (
        0.1,
        [
            (0.0, 0.03, 2279.0),
            (0.03, 0.06, 450.0),
            (0.06, 0.10, 89.0),
            (0.10, 1.0, 1.0),
        ],
    ),
    (
        0.3,
        [
            (0.0, 0.03, 1487.0),
            (0.03, 0.06, 472.0),
            (0.06, 0.10, 203.0),
            (0.10, 1.0, 7.0),
        ],
    ),
];

/// Par spread of [A, D] in Hull and White's conventions: payment dates
/// t_j = j/4, premiums `s/4` on the tranche notional outstanding at t_j
/// plus accrual on default `s/8 (N_(j-1) - N_j)` and protection both paid
/// at the period's middle; the notional reduced by losses alone (with
/// `amortise`, also by recoveries from the top, as skewbook does).
fn hull_white_spread(model: PoolModel, rho: f64, a: f64, d: f64, amortise: bool) -> f64 {
    let (hazard, rate, r) = (0.01, 0.05, 0.4);
    let corr = Correlation::new(rho);
    let bases = [
        BaseTranche::new(r, a).expect("a"),
        BaseTranche::new(r, d).expect("d"),
    ];
    let pool = match model {
        PoolModel::Names(n) => Some(FinitePool::new(n).expect("pool")),
        PoolModel::LargePool => None,
    };
    let at = |t: f64| -> (f64, f64) {
        let h = Horizon::new(1.0 - (-hazard * t).exp()).expect("pd");
        let [lo, hi] = bases.map(|b| match &pool {
            Some(pool) => b.finite(&h, &corr, pool),
            None => b.closed_form(&h, &corr),
        });
        let loss = hi.loss - lo.loss;
        let notional = if amortise {
            hi.outstanding - lo.outstanding
        } else {
            (d - a) - loss
        };
        (loss, notional)
    };
    let df = |t: f64| (-rate * t).exp();
    let (mut protection, mut annuity) = (0.0, 0.0);
    let mut prev = at(0.0);
    for j in 1..=20 {
        let (t0, t1) = ((j - 1) as f64 * 0.25, j as f64 * 0.25);
        let cur = at(t1);
        let mid = 0.5 * (t0 + t1);
        protection += (cur.0 - prev.0) * df(mid);
        annuity += 0.25 * cur.1 * df(t1) + 0.125 * (prev.1 - cur.1) * df(mid);
        prev = cur;
    }
    protection / annuity * 1e4
}

/// A 5-year schedule from a roll date in skewbook's conventions (Act/360
/// accruals, payments on business days, protection to maturity + 1 day,
/// legs read at period ends), hazard 1%, rate 5%, recovery 40%.
fn schedule(model: PoolModel) -> TrancheSchedule {
    let trade = chrono::NaiveDate::from_ymd_opt(2026, 3, 20).expect("date");
    let maturity = chrono::NaiveDate::from_ymd_opt(2031, 3, 20).expect("date");
    TrancheSchedule::new(
        trade,
        maturity,
        &DiscountCurve::flat(0.05),
        &HazardCurve::flat(0.01),
        0.4,
    )
    .and_then(|s| s.with_model(model))
    .expect("schedule")
}

fn skewbook_spread(model: PoolModel, rho: f64, a: f64, d: f64) -> f64 {
    let s = schedule(model);
    let v =
        TrancheValuer::new(&s, Tranche::new(a, d).expect("t"), Quote::Spread(0.0)).expect("valuer");
    v.model_spread(&v.legs_flat(rho)).expect("annuity") * 1e4
}

/// Hull and White's Table 7, Gaussian rows.
///
/// The tolerance, derived:
/// - **conventions**: skewbook's spreads sit 1.7-2.0% below the same
///   model in Hull and White's conventions on the three lower tranches
///   (Act/360 accrual adds 365/360 - 1 = 1.4% to the annuity; protection
///   paid at period end rather than mid-period discounts it by about
///   exp(-5% / 8) = -0.6%); the test asserts that difference lies in
///   [1.5%, 2.5%];
/// - **their numbers**: in their own conventions the 100-name model gives
///   the published figures to within 0.5% at rho 0.3 and within 2.3% at
///   rho 0.1 (the 6-10% tranche: 91.1 against 89; their figures come from
///   their own recursion and quadrature and are rounded to whole bp);
///   asserted to 2.5%;
/// - so in skewbook's conventions the published spreads are asserted to 3%
///   (observed at most 2.2%), and the 10-100% spreads to 0.5 bp in both
///   (their rounding to whole bp; observed 0.3 and 0.4 bp);
/// - recovery amortisation from the top (skewbook) against notional
///   reduced by losses alone changes only the senior spread, by 0.1 bp.
///
/// The large pool misses the 0-3% spread by +8%, 3-6% by -13% and 6-10%
/// by -29% at rho 0.1 in skewbook's conventions (issue 15 quotes +11%,
/// -13%, -30%): far outside these tolerances, which is the point.
#[test]
fn hull_white_table_seven() {
    for (rho, rows) in HULL_WHITE {
        for (a, d, published) in rows {
            let theirs = hull_white_spread(PoolModel::Names(100), rho, a, d, false);
            let amortised = hull_white_spread(PoolModel::Names(100), rho, a, d, true);
            let ours = skewbook_spread(PoolModel::Names(100), rho, a, d);
            let large = skewbook_spread(PoolModel::LargePool, rho, a, d);
            let what = format!("rho {rho} [{a}, {d}]: published {published}, theirs {theirs}, ours {ours}, large pool {large}");
            if d < 1.0 {
                let shift = (theirs - ours) / theirs;
                assert!(
                    (0.015..0.025).contains(&shift),
                    "{what}: conventions {shift}"
                );
                assert!((theirs - published).abs() < 0.025 * published, "{what}");
                assert!((ours - published).abs() < 0.03 * published, "{what}");
                assert!((large - published).abs() > 0.03 * published, "{what}");
            } else {
                assert!((theirs - published).abs() < 0.5, "{what}");
                assert!((ours - published).abs() < 0.5, "{what}");
                assert!((amortised - theirs).abs() < 0.15, "{what}");
            }
        }
    }
}

/// The 3-6% quote of 472 bp at rho 0.3 (Hull and White 2004, Table 7):
/// - in their conventions the 100-name pool reaches it near 0.3 (a root
///   found here by bisection), while no large-pool spread on a grid of
///   rho in [0.01, 0.99] comes near it;
/// - in skewbook's conventions the large pool's attainable maximum is
///   about 450 bp, so the compound solver finds no root at all, while in
///   the 100-name pool it finds two (472 bp there lies 2% further up the
///   curve, on both sides of its peak near rho 0.21).
#[test]
fn the_472_bp_quote_has_a_finite_pool_root_and_no_large_pool_root() {
    let f = |rho: f64| hull_white_spread(PoolModel::Names(100), rho, 0.03, 0.06, false) - 472.0;
    let (mut lo, mut hi) = (0.25, 0.45);
    assert!(f(lo) > 0.0 && f(hi) < 0.0);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    assert!((lo - 0.3).abs() < 0.02, "root {lo}");
    let best = (1..100)
        .map(|i| hull_white_spread(PoolModel::LargePool, i as f64 / 100.0, 0.03, 0.06, false))
        .fold(f64::MIN, f64::max);
    assert!(best < 472.0 - 10.0, "large-pool maximum {best}");

    let tranche = Tranche::new(0.03, 0.06).expect("t");
    let quote = Quote::Spread(0.0472);
    let large_schedule = schedule(PoolModel::LargePool);
    let large = TrancheValuer::new(&large_schedule, tranche, quote).expect("v");
    let solve = compound_roots(&large);
    assert!(solve.roots.is_empty(), "{solve:?}");
    let (_, top) = solve.attainable.expect("range");
    assert!(top < 460.0 && top > 440.0, "large-pool maximum {top}");
    let names = schedule(PoolModel::Names(100));
    let finite = TrancheValuer::new(&names, tranche, quote).expect("v");
    let roots: Vec<f64> = compound_roots(&finite)
        .roots
        .iter()
        .map(|r| r.value)
        .collect();
    assert_eq!(roots.len(), 2, "roots {roots:?}");
    assert!(roots[0] > 0.1 && roots[1] < 0.3, "roots {roots:?}");
}

/// The command line with `--names`: the model named in the output, every
/// base correlation solved in the 125-name pool repricing its quote in that
/// pool, `--compare-pool` giving the large pool's own `implied` figures,
/// and usage errors (exit 2) for 0 names or `--compare-pool` alone.
mod command_line {
    use crate::common::skewbook;

    const HGX: &str = "market-samples/hgx-2026-06-18.csv";

    fn json(args: &[&str]) -> (i32, serde_json::Value) {
        let (code, out, err) = skewbook(args);
        assert!(code == 0 || code == 1, "{args:?}: {err}");
        (code, serde_json::from_str(&out).expect("json"))
    }

    #[test]
    fn implied_in_125_names_reprices_and_compares_with_the_large_pool() {
        let (_, large) = json(&["implied", HGX, "--format", "json"]);
        let (_, names) = json(&[
            "implied",
            HGX,
            "--names",
            "125",
            "--compare-pool",
            "--format",
            "json",
        ]);
        assert!(large[0].get("model").is_none());
        assert_eq!(names[0]["model"], "names_125");
        let (l, n) = (
            large[0]["tranches"].as_array().expect("tranches"),
            names[0]["tranches"].as_array().expect("tranches"),
        );
        assert_eq!(l.len(), n.len());
        let mut solved = 0;
        for (l, n) in l.iter().zip(n) {
            // the large-pool side is the plain large-pool run
            assert_eq!(n["large_pool"]["base_correlation"], l["base_correlation"]);
            assert_eq!(
                n["large_pool"]["compound_correlation"],
                l["compound_correlation"]
            );
            if let (Some(rho), Some(err)) = (
                n["base_correlation"].as_f64(),
                n["base_reprice_error"].as_f64(),
            ) {
                solved += 1;
                assert!(err.abs() < 1e-8, "{n}");
                let lp = l["base_correlation"].as_f64().expect("large-pool base");
                assert!(
                    (rho - lp).abs() > 1e-4,
                    "the pools should differ: {rho} {lp}"
                );
            }
        }
        assert!(solved >= 3);
        let (code, table, _) = skewbook(&["implied", HGX, "--names", "125", "--compare-pool"]);
        assert!(code == 0 || code == 1);
        assert!(table.contains("pool of 125 names") && table.contains("large-pool base%"));
    }

    #[test]
    fn price_surface_and_value_say_which_pool() {
        let (_, p) = json(&[
            "price",
            HGX,
            "--correlation",
            "30",
            "--names",
            "125",
            "--format",
            "json",
        ]);
        assert_eq!(p[0]["model"], "names_125");
        let (_, p0) = json(&["price", HGX, "--correlation", "30", "--format", "json"]);
        assert!(p0[0].get("model").is_none());
        // the whole pool [0, 100%] does not depend on the model
        let spread =
            |v: &serde_json::Value, i: usize| v[0]["tranches"][i]["model_spread_bp"].as_f64();
        assert_ne!(spread(&p, 0), spread(&p0, 0));
        let (_, s) = json(&[
            "surface",
            "market-samples/kcx-2026-06-18.csv",
            "--names",
            "125",
            "--format",
            "json",
        ]);
        assert_eq!(s[0]["model"], "names_125");
        let (csv_code, csv, _) = skewbook(&[
            "surface",
            "market-samples/kcx-2026-06-18.csv",
            "--names",
            "125",
            "--format",
            "csv",
        ]);
        assert_eq!(csv_code, 0);
        assert!(csv.lines().next().expect("header").ends_with(",model"));
        let value = |extra: &[&str]| {
            let mut args = vec![
                "value",
                "market-samples/kcx-trades.csv",
                "--skew",
                "market-samples/kcx-2026-06-18.csv",
                "--pools",
                "market-samples/kcx-pools.csv",
                "--format",
                "json",
            ];
            args.extend(extra);
            json(&args).1
        };
        let (large, names_only, finite) = (
            value(&[]),
            value(&["--names", "100"]),
            value(&["--names", "100", "--pool-model", "names"]),
        );
        assert!(large.get("model").is_none() && names_only.get("model").is_none());
        assert_eq!(finite["model"], "names_100");
        // --names alone moves only jump-to-default; --pool-model names moves the values
        let pv = |v: &serde_json::Value| v["trades"][0]["pv"].as_f64();
        assert_eq!(pv(&large), pv(&names_only));
        assert_ne!(pv(&large), pv(&finite));
        // jump-to-default in the 100-name pool: the tranche left is valued
        // in the 99 names that survive
        let jtd = |v: &serde_json::Value| v["trades"][0]["jump_to_default"].as_f64();
        assert!(jtd(&finite).is_some_and(f64::is_finite));
        assert_ne!(jtd(&finite), jtd(&names_only));
    }

    #[test]
    fn usage_errors() {
        for args in [
            vec!["implied", HGX, "--compare-pool"],
            vec!["price", HGX, "--correlation", "30", "--names", "0"],
            vec!["implied", HGX, "--names", "-3"],
            // expected-loss reads correlations back through the large pool
            vec![
                "surface",
                HGX,
                "--names",
                "125",
                "--interp",
                "expected-loss",
            ],
        ] {
            let (code, out, err) = skewbook(&args);
            assert_eq!(code, 2, "{args:?}: {err}");
            assert!(out.is_empty() && err.contains("--names"), "{err}");
        }
    }
}
