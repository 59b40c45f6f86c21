//! Index legs and the hazard bootstrap against outside checks: a fine-grid
//! numerical integration of both legs, the credit triangle, and random
//! curves priced to quotes and bootstrapped back.

use chrono::{Days, NaiveDate};
use proptest::prelude::*;
use skewbook::curve::legs::index_legs;
use skewbook::curve::{bootstrap, DiscountCurve, HazardCurve};
use skewbook::dates::Schedule;
use skewbook::market::{IndexQuote, Quote, ZeroPillar};

fn d(y: i32, m: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, day).unwrap()
}

/// Legs by composite Simpson on a grid of 1/16 day: every knot of both
/// curves sits on a whole day, so each Simpson panel sees smooth integrands.
/// Independent of the closed forms: it uses only S(t), DF(t) and h(t).
fn legs_by_quadrature(
    s: &Schedule,
    disc: &DiscountCurve,
    haz: &HazardCurve,
    recovery: f64,
) -> (f64, f64) {
    let m = 16;
    let (mut prot, mut ann) = (0.0, 0.0);
    for p in &s.periods {
        let days = ((p.t_end - p.t_start) * 365.0).round() as usize;
        let n = days * m;
        let dt = (p.t_end - p.t_start) / n as f64;
        let f = |t: f64| {
            let h = haz.rate().value_at(t);
            h * haz.survival(t) * disc.df(t)
        };
        let (mut i0, mut i1) = (0.0, 0.0);
        for k in 0..days {
            // Simpson on each day separately (the hazard may jump at day ends).
            let a = p.t_start + (k * m) as f64 * dt;
            let g = |j: usize| {
                let t = a + j as f64 * dt;
                // Evaluate just inside the day so a knot at its end does not leak in.
                let te = if j == m { t - 1e-13 } else { t };
                (f(te), f(te) * (te - p.t_start) * 365.0 / 360.0)
            };
            let (mut s0, mut s1) = (0.0, 0.0);
            for j in 0..=m {
                let w = if j == 0 || j == m {
                    1.0
                } else if j % 2 == 1 {
                    4.0
                } else {
                    2.0
                };
                let (v0, v1) = g(j);
                s0 += w * v0;
                s1 += w * v1;
            }
            i0 += s0 * dt / 3.0;
            i1 += s1 * dt / 3.0;
        }
        prot += (1.0 - recovery) * i0;
        ann += p.accrual * disc.df(p.t_pay) * haz.survival(p.t_end) + i1;
    }
    (prot, ann)
}

fn sample_curves(trade: NaiveDate) -> (DiscountCurve, HazardCurve) {
    let zeros = [
        ZeroPillar {
            date: d(2027, 6, 19),
            rate: 0.021,
            line: 2,
        },
        ZeroPillar {
            date: d(2029, 6, 19),
            rate: 0.026,
            line: 3,
        },
        ZeroPillar {
            date: d(2033, 6, 19),
            rate: 0.031,
            line: 4,
        },
    ];
    let disc = DiscountCurve::from_zero_pillars(trade, &zeros, "test").unwrap();
    let t = |y, m, dd| skewbook::dates::curve_time(trade, d(y, m, dd));
    let haz = HazardCurve::from_knots(
        &[t(2029, 6, 21), t(2031, 6, 21), t(2033, 6, 21)],
        &[0.008, 0.013, 0.02],
    );
    (disc, haz)
}

#[test]
fn closed_form_legs_match_fine_grid_integration() {
    let trade = d(2026, 6, 18);
    let (disc, haz) = sample_curves(trade);
    for maturity in [
        d(2029, 6, 20),
        d(2031, 6, 20),
        d(2033, 6, 20),
        d(2034, 3, 20),
    ] {
        let s = Schedule::new(trade, maturity);
        let legs = index_legs(&s, &disc, haz.rate(), 0.4);
        let (p, a) = legs_by_quadrature(&s, &disc, &haz, 0.4);
        // Simpson with 1/16-day panels: error far below 1e-12 on these smooth pieces.
        assert!(
            (legs.protection - p).abs() < 1e-12,
            "{maturity}: {} vs {p}",
            legs.protection
        );
        assert!(
            (legs.annuity - a).abs() < 1e-12,
            "{maturity}: {} vs {a}",
            legs.annuity
        );
    }
}

/// Common practice (the credit triangle): for a flat hazard h and recovery
/// R, the par spread is close to h (1 - R). The premium accrues Act/360
/// (365/360 of a year's accrual per year) against hazard time in Act/365,
/// which makes it h (1 - R) 360/365, up to accrual-timing effects.
#[test]
fn credit_triangle() {
    let trade = d(2026, 6, 18);
    let disc = DiscountCurve::flat(0.0);
    for &(h, r) in &[(0.01, 0.4), (0.03, 0.25), (0.002, 0.6)] {
        let s = Schedule::new(trade, d(2031, 6, 20));
        let legs = index_legs(
            &s,
            &disc,
            &skewbook::curve::piecewise::PiecewiseConstant::flat(h),
            r,
        );
        let spread = legs.protection / legs.annuity;
        let triangle = h * (1.0 - r) * 360.0 / 365.0;
        assert!(
            (spread / triangle - 1.0).abs() < 2e-3,
            "h {h}: {spread} vs {triangle}"
        );
    }
}

fn quotes_from_curve(
    trade: NaiveDate,
    maturities: &[NaiveDate],
    hazards: &[f64],
    disc: &DiscountCurve,
    recovery: f64,
    upfront_coupon: Option<f64>,
) -> Vec<IndexQuote> {
    let knots: Vec<f64> = maturities
        .iter()
        .map(|&m| skewbook::dates::curve_time(trade, m + Days::new(1)))
        .collect();
    let haz = HazardCurve::from_knots(&knots, hazards);
    maturities
        .iter()
        .enumerate()
        .map(|(i, &m)| {
            let s = Schedule::new(trade, m);
            let legs = index_legs(&s, disc, haz.rate(), recovery);
            let quote = match upfront_coupon {
                None => Quote::Spread(legs.protection / legs.annuity),
                Some(c) => Quote::Upfront {
                    upfront: (legs.protection - c * legs.annuity) / disc.df(s.settlement_time()),
                    coupon: c,
                },
            };
            IndexQuote {
                maturity: m,
                quote,
                line: i as u64 + 2,
            }
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, failure_persistence: None, ..ProptestConfig::default() })]
    /// Random valid hazard curves, priced to quotes and bootstrapped back,
    /// return the same hazards.
    #[test]
    fn bootstrap_returns_the_hazards_that_made_the_quotes(
        h in proptest::collection::vec(0.0005f64..0.3, 1..5),
        rate in -0.01f64..0.06,
        recovery in 0.0f64..0.8,
        upfront in proptest::bool::ANY,
        day in 0u64..365,
    ) {
        let trade = d(2026, 1, 5) + Days::new(day);
        let mats: Vec<NaiveDate> = (0..h.len()).map(|i| d(2028 + 2 * i as i32, 12, 20)).collect();
        let mats: Vec<NaiveDate> = mats.into_iter().filter(|m| *m > trade).collect();
        let h = &h[..mats.len()];
        let disc = DiscountCurve::flat(rate);
        let coupon = upfront.then_some(0.05);
        let quotes = quotes_from_curve(trade, &mats, h, &disc, recovery, coupon);
        let (_, pillars) = bootstrap(trade, &quotes, &disc, recovery, "prop").unwrap();
        for (p, &want) in pillars.iter().zip(h) {
            // The solve stops at a 1e-11 residual in the quote's unit, which
            // moves a small hazard by up to ~1e-12 absolute.
            prop_assert!((p.hazard - want).abs() < 1e-9 * want + 1e-12, "{} vs {}", p.hazard, want);
            prop_assert!((p.repriced - p.quote.exact_in_file_unit()).abs() < 1e-8);
        }
    }
}

#[test]
fn upfront_above_what_recovery_allows_is_unfittable() {
    let trade = d(2026, 6, 18);
    let q = [IndexQuote {
        maturity: d(2031, 6, 20),
        quote: Quote::Upfront {
            upfront: 0.65,
            coupon: 0.05,
        },
        line: 7,
    }];
    let err = bootstrap(trade, &q, &DiscountCurve::flat(0.0), 0.4, "hy.csv").unwrap_err();
    assert_eq!(err.kind, skewbook::ErrorKind::Unfittable);
    let msg = err.to_string();
    assert!(
        msg.contains("hy.csv:7") && msg.contains("2026-06-18") && msg.contains("2031-06-20"),
        "{msg}"
    );
}

#[test]
fn spread_below_earlier_pillars_is_unfittable() {
    let trade = d(2026, 6, 18);
    let q = [
        IndexQuote {
            maturity: d(2029, 6, 20),
            quote: Quote::Spread(0.0200),
            line: 2,
        },
        IndexQuote {
            maturity: d(2031, 6, 20),
            quote: Quote::Spread(0.0050),
            line: 3,
        },
    ];
    let err = bootstrap(trade, &q, &DiscountCurve::flat(0.0), 0.4, "ig.csv").unwrap_err();
    assert_eq!(err.kind, skewbook::ErrorKind::Unfittable);
    assert!(err.to_string().contains("ig.csv:3"), "{err}");
}

/// At very large hazards most defaults fall before step-in, so an index
/// upfront rises with the hazard and then falls. A quote just below the
/// peak is fitted on the rising branch; one above it is unfittable, and
/// the message gives the peak, which a dense brute-force scan of hazards
/// confirms.
#[test]
fn upfront_near_the_recovery_limit_is_fitted_on_the_rising_branch() {
    let trade = d(2026, 6, 18);
    let maturity = d(2031, 6, 20);
    let disc = DiscountCurve::flat(0.0);
    let s = Schedule::new(trade, maturity);
    let upfront_at = |h: f64| {
        let legs = index_legs(
            &s,
            &disc,
            &skewbook::curve::piecewise::PiecewiseConstant::flat(h),
            0.75,
        );
        (legs.protection - 0.05 * legs.annuity) * 100.0
    };
    let (peak_h, peak) = (1..20000)
        .map(|i| {
            let h = i as f64 * 0.002;
            (h, upfront_at(h))
        })
        .fold(
            (0.0, f64::NEG_INFINITY),
            |a, b| if b.1 > a.1 { b } else { a },
        );
    assert!(peak_h > 1.0 && peak_h < 39.0, "interior peak: {peak_h}");
    let quote = |pct: f64| IndexQuote {
        maturity,
        quote: Quote::Upfront {
            upfront: pct / 100.0,
            coupon: 0.05,
        },
        line: 2,
    };
    let below = peak - 0.01;
    let (_, pillars) = bootstrap(trade, &[quote(below)], &disc, 0.75, "hy.csv").unwrap();
    assert!(pillars[0].hazard < peak_h);
    assert!((pillars[0].repriced - below).abs() < 1e-8);
    let err = bootstrap(trade, &[quote(peak + 0.01)], &disc, 0.75, "hy.csv").unwrap_err();
    let msg = err.to_string();
    let stated: f64 = msg
        .split("largest attainable value is ")
        .nth(1)
        .and_then(|r| r.split(',').next())
        .and_then(|x| x.parse().ok())
        .unwrap_or_else(|| panic!("{msg}"));
    // The message gives 6 significant digits: 5e-5 percentage points here.
    assert!((stated - peak).abs() < 1e-4, "{stated} vs {peak}");
}

/// A spread of 1e100 bp: no hazard rate on the search grid (to about 3300)
/// reaches it. The message gives the largest par spread found, evaluated as
/// a model quote (the flat-hazard credit triangle: near (1 - R) h, about
/// 2e7 bp at h = 3277), not as the quote plus a gap that rounds to 0, and
/// every number in at most 6 significant digits (it printed 101 digits).
#[test]
fn unreachable_huge_spread_names_a_plausible_largest_value() {
    let trade = d(2026, 6, 18);
    let q = [IndexQuote {
        maturity: d(2031, 6, 20),
        quote: Quote::Spread(1e96),
        line: 2,
    }];
    let err = bootstrap(trade, &q, &DiscountCurve::flat(0.0), 0.4, "huge.csv").unwrap_err();
    let msg = err.to_string();
    assert!(msg.contains("spread_bp 1e100 cannot be fitted"), "{msg}");
    let tail = msg
        .split("largest attainable value is ")
        .nth(1)
        .unwrap_or_else(|| panic!("{msg}"));
    let (value_text, hazard_text) = tail.split_once(", at a hazard rate near ").expect("hazard");
    let (value, hazard): (f64, f64) = (value_text.parse().unwrap(), hazard_text.parse().unwrap());
    let triangle = 0.6 * hazard * 1e4;
    assert!(
        (value / triangle - 1.0).abs() < 0.05,
        "{value} vs {triangle}: {msg}"
    );
    for number in [value_text, hazard_text] {
        let digits = number
            .split('e')
            .next()
            .unwrap()
            .chars()
            .filter(char::is_ascii_digit)
            .count();
        assert!(digits <= 6, "{number}: {msg}");
    }
}

/// A pool's bumps are bootstrapped again: a par-spread bump moves every
/// pillar's par spread by exactly the bump (the bootstrap reprices to 1e-8
/// bp, the contract's tolerance), a zero bump gives back the same hazards,
/// and a recovery bump reaches both the curve (the same quotes reprice) and
/// the tranche schedule built on the bumped pool.
#[test]
fn pool_bumps_are_bootstrapped_again() {
    use skewbook::curve::{MarketOptions, Pool, PoolBump};
    let snap = skewbook::input::snapshot::read_snapshot(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/market-samples/lhy-2026-06-18.csv"
    ))
    .unwrap();
    let pool = Pool::build(&snap.dates[0], &MarketOptions::default(), "lhy").unwrap();
    let same = pool.bumped(PoolBump::ParSpread(0.0)).unwrap();
    for (a, b) in pool.pillars.iter().zip(&same.pillars) {
        assert!(
            (a.hazard - b.hazard).abs() < 1e-10,
            "{} vs {}",
            a.hazard,
            b.hazard
        );
    }
    let up = pool.bumped(PoolBump::ParSpread(1e-4)).unwrap();
    for (s0, s1) in pool.par_spreads().iter().zip(up.par_spreads()) {
        assert!(((s1 - s0) * 1e4 - 1.0).abs() < 1e-8, "{s0} -> {s1}");
    }
    assert!(up.hazard.default_probability(5.0) > pool.hazard.default_probability(5.0));
    let one = pool
        .bumped(PoolBump::PillarParSpread {
            pillar: 0,
            by: 1e-4,
        })
        .unwrap();
    let (s0, s1) = (pool.par_spreads(), one.par_spreads());
    assert!(((s1[0] - s0[0]) * 1e4 - 1.0).abs() < 1e-8);
    assert!(((s1[1] - s0[1]) * 1e4).abs() < 1e-8);
    assert!(pool
        .bumped(PoolBump::PillarParSpread {
            pillar: 9,
            by: 1e-4
        })
        .is_err());
    let rec = pool.bumped(PoolBump::Recovery(0.01)).unwrap();
    assert!((rec.recovery - pool.recovery - 0.01).abs() < 1e-15);
    for p in &rec.pillars {
        assert!((p.repriced - p.quote.exact_in_file_unit()).abs() < 1e-8);
    }
    let m = snap.dates[0].tranches[0].maturity;
    let s = skewbook::tranche::TrancheSchedule::for_pool(&rec, m).unwrap();
    assert_eq!(s.recovery(), rec.recovery);
    assert!(pool.bumped(PoolBump::Recovery(0.7)).is_err());
}
