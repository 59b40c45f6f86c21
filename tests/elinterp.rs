//! `--interp expected-loss`: a surface that interpolates base expected
//! loss. Each check against something outside the code under test: the
//! laws of a loss distribution, the quotes the surface was built from, the
//! large-pool closed form evaluated directly, a brute-force search, and the
//! command line.

use crate::common::skewbook;
use chrono::NaiveDate;
use proptest::prelude::*;
use skewbook::book::market::INDEX_POOL;
use skewbook::book::{value_trade, Mapping, Market, Priced, TradeTerms};
use skewbook::curve::{MarketOptions, Pool};
use skewbook::dates::Schedule;
use skewbook::input::snapshot::read_snapshot;
use skewbook::loss::{BaseTranche, Correlation, Horizon};
use skewbook::math::interp::{isotonic_non_increasing, Interp};
use skewbook::math::monotone_convex::MonotoneConvex;
use skewbook::solve::chain::{implied_date, DateImplied};
use skewbook::solve::compound::{RHO_MAX, RHO_MIN};
use skewbook::surface::diagnostics::diagnose;
use skewbook::surface::expected_loss::{correlation_for_loss, Inadmissible, Reach};
use skewbook::surface::reprice::reprice_quotes;
use skewbook::surface::Surface;
use skewbook::tranche::Tranche;
use std::path::Path;

/// Grid of the arbitrage checks: 0.1%.
const GRID: usize = 1000;
/// Repricing of a quote, in its unit (common practice: 1e-8).
const REPRICE: f64 = 1e-8;

fn d(y: i32, m: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, day).unwrap()
}

/// Every snapshot under market-samples/ (files whose header is the
/// snapshot header), by name.
fn snapshots() -> Vec<String> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("market-samples");
    let mut v: Vec<String> = std::fs::read_dir(&dir)
        .expect("market-samples")
        .map(|e| e.expect("entry").path())
        .filter(|p| {
            std::fs::read_to_string(p)
                .ok()
                .and_then(|s| s.lines().next().map(|l| l.starts_with("date,instrument,")))
                .unwrap_or(false)
        })
        .map(|p| p.to_string_lossy().into_owned())
        .collect();
    v.sort();
    assert!(v.len() >= 5, "{v:?}");
    v
}

/// Every date of a snapshot: its implied data.
fn dates_of(path: &str) -> Vec<DateImplied> {
    let snap = read_snapshot(path).unwrap();
    snap.dates
        .iter()
        .map(|md| {
            let pool = Pool::build(md, &MarketOptions::default(), path).unwrap();
            implied_date(md, pool).unwrap()
        })
        .collect()
}

fn sample(name: &str) -> String {
    format!("{}/market-samples/{name}", env!("CARGO_MANIFEST_DIR"))
}

/// The index PD at a maturity's protection end, from the hazard curve
/// directly.
fn pd_at(pool: &Pool, maturity: NaiveDate) -> f64 {
    let t = Schedule::new(pool.date, maturity).protection_end_time();
    1.0 - pool.hazard.survival(t)
}

/// E[min(L, K)] at rho by the closed form (Vasicek 2002).
fn base_loss(pool: &Pool, maturity: NaiveDate, k: f64, rho: f64) -> f64 {
    let h = Horizon::new(pd_at(pool, maturity)).unwrap();
    BaseTranche::new(pool.recovery, k)
        .unwrap()
        .closed_form(&h, &Correlation::new(rho))
        .loss
}

// -------------------------------------------------------- no arbitrage

/// The laws of a loss distribution (the project's arbitrage diagnostics,
/// grid 0.1%): on every sample date and maturity the expected-loss surface
/// has tranchelet losses in [0, 1], a non-rising exceedance curve and base
/// expected loss rising with maturity. Where `linear` or `pchip` break
/// them (the steep KCX and PTX skews), this option does not.
#[test]
fn no_arbitrage_on_every_sample() {
    let mut broken_elsewhere = 0;
    let mut maturities = 0;
    for path in snapshots() {
        for implied in dates_of(&path) {
            let surface = Surface::from_implied(&implied, Interp::ExpectedLoss).unwrap();
            let diags = diagnose(&surface, &implied.pool, GRID).unwrap();
            for m in &diags {
                let c = m.counts;
                assert_eq!(
                    (c.outside_unit, c.increasing, c.maturity_order),
                    (0, 0, 0),
                    "{path} {} {}: {:?} {:?} {:?}",
                    implied.pool.date,
                    m.maturity,
                    m.worst_outside_unit,
                    m.worst_increasing,
                    m.worst_maturity_order
                );
                maturities += 1;
            }
            for interp in [Interp::Linear, Interp::Pchip] {
                let s = Surface::from_implied(&implied, interp).unwrap();
                for m in diagnose(&s, &implied.pool, GRID).unwrap() {
                    if m.counts.outside_unit + m.counts.increasing + m.counts.maturity_order > 0 {
                        broken_elsewhere += 1;
                    }
                }
            }
        }
    }
    assert!(maturities >= 30, "{maturities}");
    assert!(broken_elsewhere >= 10, "{broken_elsewhere}");
    // the steep ones: linear puts tranchelet losses outside [0, 1] on the
    // 10-year KCX skew
    let kcx = &dates_of(&sample("kcx-2026-06-18.csv"))[0];
    let linear = Surface::from_implied(kcx, Interp::Linear).unwrap();
    let worst = diagnose(&linear, &kcx.pool, GRID).unwrap();
    assert!(worst[3].counts.outside_unit > 0);
}

// ------------------------------------------------------------ repricing

/// Common practice: a surface built from quotes gives them back. Where a
/// maturity's knots are admissible, every quoted tranche reprices to 1e-8
/// of its quote's unit, both through `reprice_quotes` and as a trade
/// through `value`'s path. The top tranche [A, 100%] has no correlation of
/// its own: it reprices to 1e-8 of what the calibrated base curve gives it
/// (its quote's rounding, as `implied` reports).
#[test]
fn admissible_quotes_reprice_to_1e_8() {
    let mut checked = 0;
    for path in snapshots() {
        for implied in dates_of(&path) {
            let surface = Surface::from_implied(&implied, Interp::ExpectedLoss).unwrap();
            let market = Market {
                index: implied.pool.clone(),
                surface: surface.clone(),
                bespoke: Vec::new(),
            };
            for r in reprice_quotes(&implied, &surface).unwrap() {
                let m = surface
                    .maturities
                    .iter()
                    .find(|m| m.maturity == r.maturity)
                    .unwrap();
                if !m.loss_curve().unwrap().is_admissible() {
                    continue;
                }
                let chain = r.chain_error.unwrap();
                if r.tranche.detach() < 1.0 {
                    assert!(chain.abs() < REPRICE, "{path} {:?}: {chain}", r.tranche);
                }
                let err = r.error.unwrap() - chain;
                assert!(err.abs() < REPRICE, "{path} {:?}: {err}", r.tranche);
                let t = TradeTerms {
                    pool: INDEX_POOL.to_string(),
                    maturity: r.maturity,
                    tranche: r.tranche,
                    coupon: r.quote.coupon(),
                    notional: 1e7,
                    sign: 1.0,
                };
                let Priced::Valued(v) = value_trade(&t, &market, Mapping::None).unwrap() else {
                    panic!("not priced");
                };
                let model = match r.quote {
                    skewbook::market::Quote::Spread(_) => v.par_spread.unwrap() * 1e4,
                    skewbook::market::Quote::Upfront { .. } => v.upfront * 100.0,
                };
                let err = model - r.quote.exact_in_file_unit() - chain;
                assert!(
                    err.abs() < REPRICE,
                    "{path} {:?} via value: {err}",
                    r.tranche
                );
                checked += 1;
            }
        }
    }
    assert!(checked >= 120, "{checked}");
}

// ------------------------------------------- the implied loss distribution

/// The loss distribution the surface implies at each maturity is a
/// probability distribution (no negative density or mass; total mass 1
/// with the masses at zero and at the top counted), its mean is the
/// pool's expected loss (1 - R) PD from the hazard curve, to 1e-10, and its
/// E[min(L, K)] at every knot is the knot's base expected loss at its
/// calibrated correlation (the closed form, evaluated here), to 1e-10.
/// Integrals are exact: the density is linear on each piece, so
/// Simpson's rule is exact for x·density.
#[test]
fn implied_density_is_a_distribution_with_the_pool_mean() {
    for path in snapshots() {
        for implied in dates_of(&path) {
            let surface = Surface::from_implied(&implied, Interp::ExpectedLoss).unwrap();
            let pool = &implied.pool;
            for m in &surface.maturities {
                let c = m.loss_curve().unwrap();
                let dist = c.distribution();
                let lgd = 1.0 - pool.recovery;
                assert!(dist.at_zero >= -1e-15, "{}", dist.at_zero);
                let mut mass = dist.at_zero;
                let mut mean = 0.0;
                for &(x, p) in &dist.atoms {
                    assert!(p > 0.0 && x > 0.0 && x <= lgd + 1e-15, "{x} {p}");
                    mass += p;
                    mean += x * p;
                }
                for &[a, b, fa, fb] in &dist.density {
                    assert!(
                        fa >= -1e-9 && fb >= -1e-9,
                        "{path} {}: {fa} {fb}",
                        m.maturity
                    );
                    mass += 0.5 * (fa + fb) * (b - a);
                    let fm = 0.5 * (fa + fb);
                    mean += (b - a) / 6.0 * (a * fa + 4.0 * 0.5 * (a + b) * fm + b * fb);
                }
                let el = lgd * pd_at(pool, m.maturity);
                assert!((mass - 1.0).abs() < 1e-10, "{path} {}: {mass}", m.maturity);
                assert!(
                    (mean - el).abs() < 1e-10,
                    "{path} {}: {mean} vs {el}",
                    m.maturity
                );
                if !c.is_admissible() {
                    continue;
                }
                for k in &m.knots {
                    let want = base_loss(pool, m.maturity, k.detach, k.rho);
                    let got = expected_min(&dist, k.detach);
                    assert!((got - want).abs() < 1e-10, "{} {}", m.maturity, k.detach);
                }
            }
        }
    }
}

/// E[min(L, K)] of a distribution given as masses and linear density
/// pieces: ∫ min(x, K) dF(x).
fn expected_min(d: &skewbook::surface::expected_loss::LossDistribution, k: f64) -> f64 {
    let mut e = 0.0;
    for &(x, p) in &d.atoms {
        e += x.min(k) * p;
    }
    for &[a, b, fa, fb] in &d.density {
        let f = |x: f64| fa + (fb - fa) * (x - a) / (b - a);
        // ∫_a^b min(x, K) f(x) dx, split at K; each part exact by Simpson
        let part = |lo: f64, hi: f64, capped: bool| {
            if hi <= lo {
                return 0.0;
            }
            let g = |x: f64| if capped { k * f(x) } else { x * f(x) };
            (hi - lo) / 6.0 * (g(lo) + 4.0 * g(0.5 * (lo + hi)) + g(hi))
        };
        e += part(a, b.min(k), false) + part(a.max(k), b, true);
    }
    e
}

// --------------------------------------------- knots that are not admissible

/// The PTX sample's 7-year knots are not admissible: [22%, 60%] carries
/// more expected loss per unit of width than [12%, 22%]. The surface says
/// so naming the knots, and moves the 22% knot to the weighted-least-squares
/// fit of the slopes, computed here by hand from the closed form (the two
/// intervals pool: slope (0.10 δ1 + 0.38 δ2) / 0.48) and confirmed by a
/// brute-force search over admissible values. Quotes away from the moved
/// knot still reprice; the two that touch it do not.
#[test]
fn inadmissible_knots_are_repaired_by_isotonic_slopes() {
    let implied = &dates_of(&sample("ptx-2026-06-18.csv"))[0];
    let pool = &implied.pool;
    let surface = Surface::from_implied(implied, Interp::ExpectedLoss).unwrap();
    let m7 = &surface.maturities[1];
    assert_eq!(m7.maturity, d(2033, 6, 20));
    assert!(surface.maturities[0].loss_curve().unwrap().is_admissible());
    let c = m7.loss_curve().unwrap();
    assert!(!c.is_admissible());
    match c.inadmissible.as_slice() {
        [Inadmissible::SlopeRises { from, mid, to, .. }] => {
            assert_eq!((*from, *mid), (0.12, 0.22));
            assert!((to - 0.6).abs() < 1e-15);
        }
        other => panic!("{other:?}"),
    }
    let text = c.inadmissible[0].to_string();
    assert!(
        text.contains("12%") && text.contains("22%") && text.contains("60%"),
        "{text}"
    );

    // by hand, from the closed form at the calibrated correlations
    let knot = |k: f64| {
        m7.knots
            .iter()
            .find(|x| (x.detach - k).abs() < 1e-12)
            .unwrap()
    };
    let g12 = base_loss(pool, m7.maturity, 0.12, knot(0.12).rho);
    let g22 = base_loss(pool, m7.maturity, 0.22, knot(0.22).rho);
    let top = 0.6 * pd_at(pool, m7.maturity);
    let (d1, d2) = ((g22 - g12) / 0.10, (top - g22) / 0.38);
    assert!(d2 > d1);
    let pooled = (0.10 * d1 + 0.38 * d2) / 0.48;
    let want = g12 + 0.10 * pooled;
    assert_eq!(c.adjusted.len(), 1);
    let a = c.adjusted[0];
    assert_eq!(a.detach, 0.22);
    assert!(
        (a.adjusted_loss - want).abs() < 1e-15,
        "{} vs {want}",
        a.adjusted_loss
    );
    assert_eq!(a.adjusted_rho.reach, Reach::Inside);
    // the new correlation gives the new loss
    let back = base_loss(pool, m7.maturity, 0.22, a.adjusted_rho.rho);
    assert!((back - want).abs() < 1e-15);

    // brute force: among values of g(22%) that make every slope in [0, 1]
    // and non-increasing, none is closer to the data in width-weighted
    // squared slope error (the other knots fixed: only 22% is in the block)
    let gs: Vec<f64> = [0.03, 0.06, 0.09, 0.12]
        .iter()
        .map(|&k| base_loss(pool, m7.maturity, k, knot(k).rho))
        .collect();
    let x = [0.0, 0.03, 0.06, 0.09, 0.12, 0.22, 0.6];
    let cost = |g22: f64| {
        let y = [0.0, gs[0], gs[1], gs[2], gs[3], g22, top];
        let s: Vec<f64> = (0..6)
            .map(|i| (y[i + 1] - y[i]) / (x[i + 1] - x[i]))
            .collect();
        let ok = s.iter().all(|v| (0.0..=1.0).contains(v)) && s.windows(2).all(|w| w[1] <= w[0]);
        let data = [d1, d2];
        let err = 0.10 * (s[4] - data[0]).powi(2) + 0.38 * (s[5] - data[1]).powi(2);
        (ok, err)
    };
    let (ok, best) = cost(a.adjusted_loss);
    assert!(ok);
    for i in 0..=20000 {
        let g = g12 + (top - g12) * i as f64 / 20000.0;
        let (ok, err) = cost(g);
        if ok {
            assert!(
                err >= best - 1e-18,
                "g(22%) = {g} beats the fit: {err} < {best}"
            );
        }
    }
    // and the library's PAV agrees on all six slopes
    let y = [0.0, gs[0], gs[1], gs[2], gs[3], g22, top];
    let s: Vec<f64> = (0..6)
        .map(|i| (y[i + 1] - y[i]) / (x[i + 1] - x[i]))
        .collect();
    let w: Vec<f64> = (0..6).map(|i| x[i + 1] - x[i]).collect();
    let fit = isotonic_non_increasing(&s, &w);
    assert!((fit[4] - pooled).abs() < 1e-15 && (fit[5] - pooled).abs() < 1e-15);

    // what the repair costs each quote
    for r in reprice_quotes(implied, &surface).unwrap() {
        let e = r.error.unwrap() - r.chain_error.unwrap();
        let touches = r.maturity == m7.maturity
            && ((r.tranche.detach() - 0.22).abs() < 1e-12
                || (r.tranche.attach() - 0.22).abs() < 1e-12);
        if touches {
            assert!(e.abs() > 0.1, "{:?}: {e}", r.tranche);
        } else {
            assert!(e.abs() < REPRICE, "{:?}: {e}", r.tranche);
        }
    }
}

// -------------------------------------------------------- across maturity

/// Between two knot maturities the surface interpolates base expected loss
/// linearly in curve time at fixed K, and the correlation is the one that
/// gives it at the trade's own protection end: checked with the closed form
/// at the correlations the surface returns, for the KCX 6-year maturity
/// between the 5- and 7-year knots.
#[test]
fn between_maturities_expected_loss_is_linear_in_time() {
    let implied = &dates_of(&sample("kcx-2026-06-18.csv"))[0];
    let pool = &implied.pool;
    let surface = Surface::from_implied(implied, Interp::ExpectedLoss).unwrap();
    let (ma, t, mb) = (d(2031, 6, 20), d(2032, 6, 20), d(2033, 6, 20));
    let time = |m: NaiveDate| (m - pool.date).num_days() as f64 / 365.0;
    let w = (time(t) - time(ma)) / (time(mb) - time(ma));
    for k in [0.01, 0.03, 0.045, 0.08, 0.12, 0.2, 0.35, 0.5] {
        let at = |m| surface.rho(k, m).unwrap();
        let (la, lt, lb) = (at(ma), at(t), at(mb));
        assert!(!lt.extrapolated_maturity && !lt.unattainable_loss);
        let ga = base_loss(pool, ma, k, la.rho);
        let gb = base_loss(pool, mb, k, lb.rho);
        let gt = base_loss(pool, t, k, lt.rho);
        let want = (1.0 - w) * ga + w * gb;
        assert!((gt - want).abs() < 1e-14, "K {k}: {gt} vs {want}");
        // rising in maturity where the knots are
        assert!(ga <= gt && gt <= gb, "K {k}");
    }
    // before the first and after the last maturity: the nearest curve's rho
    for k in [0.02, 0.1] {
        let early = surface.rho(k, d(2028, 6, 20)).unwrap();
        assert!(early.extrapolated_maturity);
        assert_eq!(early.rho, surface.rho(k, d(2029, 6, 20)).unwrap().rho);
    }
}

/// Above 1 - R no correlation moves the expected loss; the correlation
/// there is the knots' linear rule, so a knot at or above 1 - R (recovery
/// 80%: 1 - R = 20%) keeps its quote's correlation.
#[test]
fn above_the_largest_loss_the_knots_rule() {
    let snap = read_snapshot(&sample("hgx-2026-06-18.csv")).unwrap();
    let opts = MarketOptions {
        recovery: Some(0.7),
        ..MarketOptions::default()
    };
    let pool = Pool::build(&snap.dates[0], &opts, "hgx").unwrap();
    let knots = vec![
        skewbook::solve::chain::Knot {
            detach: 0.03,
            rho: 0.2,
        },
        skewbook::solve::chain::Knot {
            detach: 0.15,
            rho: 0.3,
        },
        skewbook::solve::chain::Knot {
            detach: 0.4,
            rho: 0.5,
        },
    ];
    let m = d(2031, 6, 20);
    let s = Surface::from_knots_on(&pool, Interp::ExpectedLoss, vec![(m, knots)]).unwrap();
    assert_eq!(s.rho(0.4, m).unwrap().rho, 0.5);
    assert!((s.rho(0.35, m).unwrap().rho - 0.46).abs() < 1e-15);
    // below 1 - R = 30% the 15% knot comes back from its loss
    assert!((s.rho(0.15, m).unwrap().rho - 0.3).abs() < 1e-12);
    // and a surface of knots alone cannot interpolate expected loss
    let e = Surface::from_knots(pool.date, Interp::ExpectedLoss, vec![]).unwrap_err();
    assert_eq!(e.kind, skewbook::ErrorKind::Usage);
}

// ---------------------------------------------- correlation from a loss

/// Price -> solve -> the same correlation: the closed form's base expected
/// loss at a known rho solves back to it, over PD 0.5%..60%, K across the
/// loss range, rho 0.01..0.99.
#[test]
fn correlation_for_loss_round_trips() {
    for pd in [0.005, 0.05, 0.2, 0.6] {
        let h = Horizon::new(pd).unwrap();
        for r in [0.0, 0.4, 0.75] {
            for k in [0.001, 0.03, 0.1, 0.2] {
                if k >= 1.0 - r {
                    continue;
                }
                for rho in [0.01, 0.1, 0.3, 0.6, 0.9, 0.99] {
                    let g = BaseTranche::new(r, k)
                        .unwrap()
                        .closed_form(&h, &Correlation::new(rho))
                        .loss;
                    let back = correlation_for_loss(r, k, &h, g);
                    let again = BaseTranche::new(r, k)
                        .unwrap()
                        .closed_form(&h, &Correlation::new(back.rho))
                        .loss;
                    assert_eq!(back.reach, Reach::Inside);
                    assert!((again - g).abs() < 1e-16, "PD {pd} R {r} K {k} rho {rho}");
                    // where the loss moves with rho, rho itself comes back
                    let slope = (BaseTranche::new(r, k)
                        .unwrap()
                        .closed_form(&h, &Correlation::new(rho))
                        .dloss_drho)
                        .abs();
                    if slope > 1e-6 {
                        assert!((back.rho - rho).abs() < 1e-9, "PD {pd} K {k} rho {rho}");
                    }
                }
            }
        }
        // out of reach on either side: the nearer end, flagged
        let k = 0.1;
        let hi = BaseTranche::new(0.4, k)
            .unwrap()
            .closed_form(&h, &Correlation::new(RHO_MIN))
            .loss;
        let lo = BaseTranche::new(0.4, k)
            .unwrap()
            .closed_form(&h, &Correlation::new(RHO_MAX))
            .loss;
        let above = correlation_for_loss(0.4, k, &h, hi * 1.001 + 1e-9);
        let below = correlation_for_loss(0.4, k, &h, lo * 0.999 - 1e-9);
        if hi * 1.001 + 1e-9 < k.min(0.6 * pd) {
            assert_eq!((above.reach, above.rho), (Reach::AboveRange, RHO_MIN));
        }
        assert_eq!((below.reach, below.rho), (Reach::BelowRange, RHO_MAX));
    }
}

// --------------------------------------------------- the monotone convex curve

/// Rising concave data with slope in [0, 1]: (0, 0), knots with falling
/// secants in (0, 1), optionally a flat last interval.
fn concave_knots() -> impl Strategy<Value = (Vec<f64>, Vec<f64>)> {
    (2usize..8)
        .prop_flat_map(|n| {
            (
                prop::collection::vec(0.01f64..1.0, n),
                prop::collection::vec(0.0f64..1.0, n),
                any::<bool>(),
            )
        })
        .prop_map(|(widths, mut slopes, flat)| {
            slopes.sort_by(|a, b| b.partial_cmp(a).unwrap());
            let mut x = vec![0.0];
            let mut y = vec![0.0];
            for (w, s) in widths.iter().zip(&slopes) {
                x.push(x.last().unwrap() + w);
                y.push(y.last().unwrap() + w * s);
            }
            if flat {
                x.push(x.last().unwrap() + 0.5);
                y.push(*y.last().unwrap());
            }
            (x, y)
        })
}

proptest! {
    /// The laws the option rests on (Hagan and West 2006 for monotone
    /// data): the curve passes through every knot, its slope stays in
    /// [0, 1] and never rises, and (away from a run of equal secants, where
    /// the data force a kink) the slope is continuous at the knots.
    #[test]
    fn monotone_convex_keeps_the_shape((x, y) in concave_knots(), first in prop::option::of(0.0f64..1.0)) {
        let n = x.len() - 1;
        let d0 = (y[1] - y[0]) / (x[1] - x[0]);
        // a given first slope above the first secant (equal to it, the data
        // would force a flat start and a kink)
        let first = first.map(|f| d0 + (0.001 + 0.999 * f) * (1.0 - d0));
        let g = MonotoneConvex::new(&x, &y, first, None).unwrap();
        for i in 0..=n {
            prop_assert!((g.eval(x[i]) - y[i]).abs() < 1e-14);
        }
        let mut prev = f64::INFINITY;
        let steps = 2000;
        for j in 0..steps {
            let t = x[0] + (x[n] - x[0]) * j as f64 / steps as f64;
            let s = g.slope(t);
            prop_assert!((-1e-14..=1.0 + 1e-14).contains(&s), "slope {} at {}", s, t);
            prop_assert!(s <= prev + 1e-12, "slope rises to {} at {}", s, t);
            prev = s;
        }
        let secants: Vec<f64> = (0..n).map(|i| (y[i + 1] - y[i]) / (x[i + 1] - x[i])).collect();
        for i in 1..n {
            let equal_run = (secants[i - 1] - secants[i]).abs() < 1e-9
                || (i >= 2 && (secants[i - 2] - secants[i - 1]).abs() < 1e-9)
                || (i + 1 < n && (secants[i] - secants[i + 1]).abs() < 1e-9);
            if equal_run {
                continue;
            }
            // The left limit from the piece's own formula: nearly collinear
            // knots make the slope bend over a tiny width, so probing just
            // left of the knot would read the bend, not a jump.
            let pieces = g.slope_pieces();
            let left = pieces.iter().find(|p| p.to == x[i]).map(|p| p.slope_to).unwrap();
            let right = g.slope(x[i]);
            prop_assert!((left - right).abs() < 1e-8, "jump at knot {}: {} vs {}", i, left, right);
        }
        // the slope's pieces integrate back to the curve
        let mut total = 0.0;
        for p in g.slope_pieces() {
            prop_assert!(p.density_from >= -1e-9 && p.density_to >= -1e-9);
            let mid = g.slope(0.5 * (p.from + p.to));
            total += (p.to - p.from) / 6.0 * (p.slope_from + 4.0 * mid + p.slope_to);
        }
        prop_assert!((total - (y[n] - y[0])).abs() < 1e-12);
    }
}

/// With slope 1 given at the start and a first secant near 1 (an equity
/// tranche nearly wiped out), the monotone convex sector would hold the
/// slope at 1 over most of the first interval, a loss no correlation in
/// (0, 1) gives; the slope falls from the start instead, and the
/// correlation read off stays inside its range.
#[test]
fn slope_does_not_rest_at_one() {
    let (x, y) = ([0.0, 0.03, 0.07, 0.6], [0.0, 0.0297, 0.052, 0.096]);
    let g = MonotoneConvex::new(&x, &y, Some(1.0), None).unwrap();
    assert_eq!(g.slope(0.0), 1.0);
    assert!(g.slope(0.001) < 1.0);
    assert!(g.slope(0.01) < g.slope(0.001));
    // the PTX 7-year equity is such a case: rho stays off the search end
    let implied = &dates_of(&sample("kcx-2026-06-18.csv"))[0];
    let s = Surface::from_implied(implied, Interp::ExpectedLoss).unwrap();
    for j in 1..30 {
        let k = j as f64 * 0.001;
        let l = s.rho(k, d(2036, 6, 20)).unwrap();
        assert!(!l.unattainable_loss && l.rho > 0.01, "K {k}: {l:?}");
    }
}

// ------------------------------------------------------------ command line

/// `--interp expected-loss` on `surface` and `value`: the interp field, the
/// added fields only under this option, the repair reported.
#[test]
fn command_line_expected_loss() {
    let (code, out, err) = skewbook(&[
        "surface",
        "market-samples/ptx-2026-06-18.csv",
        "--interp",
        "expected-loss",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v[0]["interp"], "expected-loss");
    let m5 = &v[0]["maturities"][0];
    let m7 = &v[0]["maturities"][1];
    assert_eq!(m5["admissible"], true);
    assert!(m5["adjusted_knots"].is_null());
    assert_eq!(m7["admissible"], false);
    assert_eq!(m7["adjusted_knots"][0]["detach_pct"], 22.0);
    assert_eq!(m7["inadmissible"][0]["kind"], "slope_rises");
    assert_eq!(m7["knots"][4]["quote_kind"], "spread_bp");
    assert!(m7["knots"][4]["reprice_error"].as_f64().unwrap().abs() > 0.1);
    assert_eq!(m7["repricing"].as_array().unwrap().len(), 6);
    assert_eq!(m7["violations"]["outside_unit"], 0);
    assert_eq!(m7["violations"]["increasing"], 0);
    // linear keeps the contract's fields only
    let (_, out, _) = skewbook(&[
        "surface",
        "market-samples/ptx-2026-06-18.csv",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let keys: Vec<&str> = v[0]["maturities"][0]
        .as_object()
        .unwrap()
        .keys()
        .map(|k| k.as_str())
        .collect();
    assert_eq!(
        keys,
        [
            "grid",
            "knots",
            "maturity",
            "protection_end_pd",
            "violations",
            "worst"
        ]
    );
    assert_eq!(
        v[0]["maturities"][0]["knots"][0].as_object().unwrap().len(),
        2
    );

    let (code, out, err) = skewbook(&[
        "value",
        "market-samples/kcx-trades.csv",
        "--skew",
        "market-samples/kcx-2026-06-18.csv",
        "--pools",
        "market-samples/kcx-pools.csv",
        "--interp",
        "expected-loss",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["interp"], "expected-loss");
    let notes = v["surface_notes"].as_array().unwrap();
    assert_eq!(notes.len(), 1);
    assert!(notes[0].as_str().unwrap().starts_with("2036-06-20"));
    assert_eq!(v["book"]["priced"], 22);
    let (code, _, err) = skewbook(&[
        "surface",
        "market-samples/kcx-2026-06-18.csv",
        "--interp",
        "cubic",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("expected-loss"), "{err}");
}

/// The tranche off the surface between knots is priced (not just the
/// quotes): a thin tranchelet anywhere on the 5-year KCX curve has an
/// expected loss in [0, 1] of its width at the protection end.
#[test]
fn tranchelets_off_the_surface_lose_between_nothing_and_everything() {
    let implied = &dates_of(&sample("kcx-2026-06-18.csv"))[0];
    let surface = Surface::from_implied(implied, Interp::ExpectedLoss).unwrap();
    let market = Market {
        index: implied.pool.clone(),
        surface,
        bespoke: Vec::new(),
    };
    let mut last = f64::INFINITY;
    for j in 0..60 {
        let a = j as f64 * 0.01;
        let t = TradeTerms {
            pool: INDEX_POOL.to_string(),
            maturity: d(2031, 6, 20),
            tranche: Tranche::new(a, a + 0.01).unwrap(),
            coupon: 0.01,
            notional: 1e6,
            sign: 1.0,
        };
        let Priced::Valued(v) = value_trade(&t, &market, Mapping::None).unwrap() else {
            panic!()
        };
        assert!(
            (0.0..=1.0).contains(&v.expected_loss),
            "{a}: {}",
            v.expected_loss
        );
        assert!(v.expected_loss <= last + 1e-12, "{a}");
        last = v.expected_loss;
    }
}

/// The steep 10-year KCX skew: `linear` gives the [29.5%, 30%] tranchelet a
/// negative expected loss at the protection end (tests/skew.rs); off the
/// expected-loss surface it loses between nothing and its width, though the
/// knots there had to be repaired.
#[test]
fn steep_tranchelet_is_no_longer_negative() {
    let implied = &dates_of(&sample("kcx-2026-06-18.csv"))[0];
    for (interp, negative) in [(Interp::Linear, true), (Interp::ExpectedLoss, false)] {
        let market = Market {
            index: implied.pool.clone(),
            surface: Surface::from_implied(implied, interp).unwrap(),
            bespoke: Vec::new(),
        };
        let t = TradeTerms {
            pool: INDEX_POOL.to_string(),
            maturity: d(2036, 6, 20),
            tranche: Tranche::new(0.295, 0.30).unwrap(),
            coupon: 0.0,
            notional: 1e6,
            sign: 1.0,
        };
        let Priced::Valued(v) = value_trade(&t, &market, Mapping::None).unwrap() else {
            panic!()
        };
        assert_eq!(
            v.expected_loss < 0.0,
            negative,
            "{interp}: {}",
            v.expected_loss
        );
        if !negative {
            assert!(v.expected_loss <= 1.0);
        }
    }
}

/// The option's name on the command line and in JSON; a correlation curve
/// cannot be built with it.
#[test]
fn expected_loss_is_named_and_needs_the_pool() {
    assert_eq!(
        "expected-loss".parse::<Interp>().unwrap(),
        Interp::ExpectedLoss
    );
    assert_eq!(Interp::ExpectedLoss.to_string(), "expected-loss");
    let e =
        skewbook::math::interp::Curve1d::new(&[0.03], &[0.2], Interp::ExpectedLoss).unwrap_err();
    assert_eq!(e.kind, skewbook::ErrorKind::Usage);
}
