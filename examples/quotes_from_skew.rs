//! Tranche quotes implied by a chosen base-correlation curve: the inverse
//! of `skewbook implied`, and how the bundled market samples were made.
//!
//! ```text
//! cargo run --example quotes_from_skew -- hgx       > market-samples/hgx-2026-06-18.csv
//! cargo run --example quotes_from_skew -- lhy       > market-samples/lhy-2026-06-18.csv
//! cargo run --example quotes_from_skew -- history   > market-samples/hgx-history-2026-06.csv
//! cargo run --example quotes_from_skew -- kcx       > market-samples/kcx-2026-06-18.csv
//! cargo run --example quotes_from_skew -- ptx       > market-samples/ptx-2026-06-18.csv
//! cargo run --release --example quotes_from_skew -- long-history 2500 > /tmp/hgx-long.csv
//! ```
//!
//! `long-history N` writes N business days of the HGX pool from 2 January
//! 2017 on: the index rolls to a new series every 20 March and 20 September
//! (maturities 3, 5, 7 and 10 years from the June or December after the
//! roll), the zero curve moves with the date, and spreads and correlations
//! wander smoothly (a sum of sines, so the file is the same every time).
//! It is for measuring speed and memory on long runs; it is not committed.
//!
//! Each scenario is invented: an index curve (par spreads, or upfronts with
//! a fixed coupon), a base-correlation curve per detachment, and the coupon
//! convention of each tranche. The example bootstraps the hazard curve,
//! prices every tranche off the base curve, rounds the quotes as a desk would
//! show them, and prints a snapshot file.

use chrono::{Datelike, Days, NaiveDate, Weekday};
use skewbook::curve::{MarketOptions, Pool};
use skewbook::market::{IndexQuote, MarketDate, Quote, ZeroPillar};
use skewbook::tranche::{Tranche, TrancheSchedule, TrancheValuer};

/// A tranche of a scenario: bounds, coupon (None: quoted as a par spread)
/// and the base correlation at the detachment.
struct Layer {
    attach: f64,
    detach: f64,
    coupon: Option<f64>,
    base_rho: f64,
}

struct Scenario {
    trade: NaiveDate,
    recovery: f64,
    index: Vec<(NaiveDate, Quote)>,
    zeros: Vec<(NaiveDate, f64)>,
    /// Tranche maturities, each with its layers.
    tranches: Vec<(NaiveDate, Vec<Layer>)>,
}

fn d(y: i32, m: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, day).expect("valid date")
}

fn layers(spec: &[(f64, f64, Option<f64>, f64)]) -> Vec<Layer> {
    spec.iter()
        .map(|&(attach, detach, coupon, base_rho)| Layer {
            attach,
            detach,
            coupon,
            base_rho,
        })
        .collect()
}

/// Harbour Grade (HGX): an investment-grade-like pool, par spreads, a zero curve.
fn hgx(trade: NaiveDate, shift_bp: f64, rho_shift: f64) -> Scenario {
    let s = |bp: f64| Quote::Spread((bp + shift_bp) / 1e4);
    Scenario {
        trade,
        recovery: 0.40,
        index: vec![
            (d(2029, 6, 20), s(38.0)),
            (d(2031, 6, 20), s(58.0)),
            (d(2033, 6, 20), s(74.0)),
            (d(2036, 6, 20), s(88.0)),
        ],
        zeros: vec![
            (d(2027, 6, 18), 0.0215),
            (d(2028, 6, 19), 0.0232),
            (d(2031, 6, 18), 0.0268),
            (d(2036, 6, 18), 0.0305),
        ],
        tranches: vec![(
            d(2031, 6, 20),
            layers(&[
                (0.00, 0.03, Some(0.05), 0.18 + rho_shift),
                (0.03, 0.07, None, 0.28 + rho_shift),
                (0.07, 0.15, None, 0.41 + rho_shift),
                (0.15, 1.00, None, f64::NAN),
            ]),
        )],
    }
}

/// HGX on the series on the run at `trade`: index maturities 3, 5, 7 and
/// 10 years from the June or December after the last 20 March or 20
/// September roll, tranches on the 5-year, a zero curve at fixed tenors.
/// `x` drives the drift of spreads and correlations.
fn hgx_rolling(trade: NaiveDate, x: f64) -> Scenario {
    let y = trade.year();
    let after_roll = |mm: u32| trade >= d(y, mm, 20);
    // The June (March series) or December (September series) maturity month.
    let (series_year, month) = if after_roll(9) {
        (y, 12)
    } else if after_roll(3) {
        (y, 6)
    } else {
        (y - 1, 12)
    };
    let maturity = |years: i32| d(series_year + years, month, 20);
    let level = 1.0 + 0.35 * (x / 97.0).sin() + 0.15 * (x / 23.0).sin();
    let s = |bp: f64| Quote::Spread(bp * level / 1e4);
    let rho = 0.04 * (x / 61.0).sin() + 0.01 * (x / 9.0).cos();
    let r = 0.02 + 0.01 * (x / 400.0).sin();
    let tenor = |days: u64| trade + Days::new(days);
    Scenario {
        trade,
        recovery: 0.40,
        index: vec![
            (maturity(3), s(38.0)),
            (maturity(5), s(58.0)),
            (maturity(7), s(74.0)),
            (maturity(10), s(88.0)),
        ],
        zeros: vec![
            (tenor(365), r),
            (tenor(730), r + 0.0017),
            (tenor(1826), r + 0.0053),
            (tenor(3652), r + 0.0090),
        ],
        tranches: vec![(
            maturity(5),
            layers(&[
                (0.00, 0.03, Some(0.05), 0.18 + rho),
                (0.03, 0.07, None, 0.28 + rho),
                (0.07, 0.15, None, 0.41 + rho),
                (0.15, 1.00, None, f64::NAN),
            ]),
        )],
    }
}

/// Lantern High Yield (LHY): a high-yield-like pool quoted upfront with a
/// 500 bp coupon, recovery 30%, flat rates.
fn lhy() -> Scenario {
    let u = |pct: f64| Quote::Upfront {
        upfront: pct / 100.0,
        coupon: 0.05,
    };
    Scenario {
        trade: d(2026, 6, 18),
        recovery: 0.30,
        index: vec![
            (d(2029, 6, 20), u(-2.35)),
            (d(2031, 6, 20), u(-0.60)),
            (d(2033, 6, 20), u(1.45)),
        ],
        zeros: vec![],
        tranches: vec![(
            d(2031, 6, 20),
            layers(&[
                (0.00, 0.10, Some(0.05), 0.17),
                (0.10, 0.15, Some(0.05), 0.25),
                (0.15, 0.25, Some(0.05), 0.36),
                (0.25, 0.35, Some(0.05), 0.46),
                (0.35, 1.00, Some(0.05), f64::NAN),
            ]),
        )],
    }
}

/// Kestrel Credit (KCX): an investment-grade-like pool with tranches at
/// 3, 5, 7 and 10 years, a skew that steepens with maturity (the 10-year
/// one steep enough to break the no-arbitrage laws when interpolated).
fn kcx() -> Scenario {
    let s = |bp: f64| Quote::Spread(bp / 1e4);
    let curve = |m: NaiveDate, rho: [f64; 5]| {
        (
            m,
            layers(&[
                (0.00, 0.03, Some(0.05), rho[0]),
                (0.03, 0.07, Some(0.01), rho[1]),
                (0.07, 0.10, None, rho[2]),
                (0.10, 0.15, None, rho[3]),
                (0.15, 0.30, None, rho[4]),
                (0.30, 1.00, None, f64::NAN),
            ]),
        )
    };
    Scenario {
        trade: d(2026, 6, 18),
        recovery: 0.40,
        index: vec![
            (d(2029, 6, 20), s(52.0)),
            (d(2031, 6, 20), s(71.0)),
            (d(2033, 6, 20), s(86.0)),
            (d(2036, 6, 20), s(99.0)),
        ],
        zeros: vec![
            (d(2027, 6, 18), 0.0221),
            (d(2029, 6, 18), 0.0240),
            (d(2031, 6, 18), 0.0262),
            (d(2036, 6, 18), 0.0297),
        ],
        tranches: vec![
            curve(d(2029, 6, 20), [0.12, 0.20, 0.26, 0.34, 0.52]),
            curve(d(2031, 6, 20), [0.15, 0.24, 0.30, 0.39, 0.58]),
            curve(d(2033, 6, 20), [0.16, 0.27, 0.35, 0.46, 0.70]),
            curve(d(2036, 6, 20), [0.10, 0.30, 0.42, 0.58, 0.90]),
        ],
    }
}

/// Petrel Credit (PTX): a crossover-like pool with two steep skews. The
/// 5-year one is steep enough that `linear` and `pchip` break the
/// no-arbitrage laws between and beyond its knots; the 7-year one is so
/// steep at the top that its knots admit no arbitrage-free base
/// expected-loss curve: [22%, 60%] carries more expected loss per unit of
/// width than [12%, 22%] below it.
fn ptx() -> Scenario {
    let s = |bp: f64| Quote::Spread(bp / 1e4);
    let curve = |m: NaiveDate, rho: [f64; 5]| {
        (
            m,
            layers(&[
                (0.00, 0.03, Some(0.05), rho[0]),
                (0.03, 0.06, Some(0.05), rho[1]),
                (0.06, 0.09, Some(0.01), rho[2]),
                (0.09, 0.12, None, rho[3]),
                (0.12, 0.22, None, rho[4]),
                (0.22, 1.00, None, f64::NAN),
            ]),
        )
    };
    Scenario {
        trade: d(2026, 6, 18),
        recovery: 0.40,
        index: vec![
            (d(2029, 6, 20), s(118.0)),
            (d(2031, 6, 20), s(146.0)),
            (d(2033, 6, 20), s(163.0)),
        ],
        zeros: vec![
            (d(2027, 6, 18), 0.0221),
            (d(2029, 6, 18), 0.0240),
            (d(2031, 6, 18), 0.0262),
            (d(2033, 6, 18), 0.0281),
        ],
        tranches: vec![
            curve(d(2031, 6, 20), [0.12, 0.25, 0.34, 0.42, 0.62]),
            curve(d(2033, 6, 20), [0.11, 0.26, 0.36, 0.45, 0.72]),
        ],
    }
}

fn round_to(x: f64, decimals: i32) -> f64 {
    let f = 10f64.powi(decimals);
    (x * f).round() / f
}

fn print_scenario(sc: &Scenario, header: bool) -> Result<(), skewbook::Error> {
    let md = MarketDate {
        date: sc.trade,
        recovery: Some(sc.recovery),
        index: sc
            .index
            .iter()
            .map(|&(maturity, quote)| IndexQuote {
                maturity,
                quote,
                line: 0,
            })
            .collect(),
        tranches: vec![],
        zeros: sc
            .zeros
            .iter()
            .map(|&(date, rate)| ZeroPillar {
                date,
                rate,
                line: 0,
            })
            .collect(),
    };
    let pool = Pool::build(&md, &MarketOptions::default(), "scenario")?;
    if header {
        println!("date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp,recovery_pct");
    }
    let rec = sc.recovery * 100.0;
    for &(m, q) in &sc.index {
        match q {
            Quote::Spread(s) => println!(
                "{},index,{m},,,spread_bp,{},,{rec}",
                sc.trade,
                round_to(s * 1e4, 3)
            ),
            Quote::Upfront { upfront, coupon } => println!(
                "{},index,{m},,,upfront_pct,{},{},{rec}",
                sc.trade,
                round_to(upfront * 100.0, 4),
                coupon * 1e4
            ),
        }
    }
    for &(date, r) in &sc.zeros {
        println!(
            "{},zero,{date},,,zero_rate_pct,{},,",
            sc.trade,
            round_to(r * 100.0, 4)
        );
    }
    for (m, layers) in &sc.tranches {
        print_layers(sc, &pool, *m, layers)?;
    }
    Ok(())
}

/// Prints the tranche rows of one maturity off its base curve.
fn print_layers(
    sc: &Scenario,
    pool: &Pool,
    m: NaiveDate,
    layers: &[Layer],
) -> Result<(), skewbook::Error> {
    let schedule = TrancheSchedule::for_pool(pool, m)?;
    let mut rho_below = 0.0;
    for l in layers {
        let rho_d = if l.detach >= 1.0 {
            rho_below
        } else {
            l.base_rho
        };
        let quote = match l.coupon {
            Some(coupon) => Quote::Upfront {
                upfront: 0.0,
                coupon,
            },
            None => Quote::Spread(0.0),
        };
        let v = TrancheValuer::new(&schedule, Tranche::new(l.attach, l.detach)?, quote)?;
        let legs = v.legs(rho_below, rho_d);
        let (a, dd) = (round_to(l.attach * 100.0, 6), round_to(l.detach * 100.0, 6));
        match l.coupon {
            Some(c) => println!(
                "{},tranche,{m},{a},{dd},upfront_pct,{},{},",
                sc.trade,
                round_to(v.model_upfront(&legs) * 100.0, 4),
                c * 1e4
            ),
            None => {
                let s = v.model_spread(&legs).unwrap_or(0.0);
                println!(
                    "{},tranche,{m},{a},{dd},spread_bp,{},,",
                    sc.trade,
                    round_to(s * 1e4, 2)
                )
            }
        }
        rho_below = rho_d;
    }
    Ok(())
}

fn main() -> Result<(), skewbook::Error> {
    let which = std::env::args().nth(1).unwrap_or_else(|| "hgx".to_string());
    match which.as_str() {
        "hgx" => print_scenario(&hgx(d(2026, 6, 18), 0.0, 0.0), true)?,
        "lhy" => print_scenario(&lhy(), true)?,
        "kcx" => print_scenario(&kcx(), true)?,
        "ptx" => print_scenario(&ptx(), true)?,
        "history" => {
            // 22 business days of June 2026: spreads and correlations drift.
            let mut date = d(2026, 6, 1);
            let mut k = 0;
            while date <= d(2026, 6, 30) {
                if !matches!(date.weekday(), Weekday::Sat | Weekday::Sun) {
                    let x = k as f64;
                    let shift_bp = 3.0 * (x / 3.0).sin() + 0.15 * x;
                    let rho_shift = 0.015 * (x / 4.0).cos() - 0.0008 * x;
                    print_scenario(&hgx(date, shift_bp, rho_shift), k == 0)?;
                    k += 1;
                }
                date = date + Days::new(1);
            }
        }
        "long-history" => {
            let n: usize = std::env::args()
                .nth(2)
                .and_then(|n| n.parse().ok())
                .ok_or_else(|| {
                    skewbook::Error::msg(
                        skewbook::ErrorKind::Usage,
                        "long-history: expected a number of dates, e.g. long-history 2500",
                    )
                })?;
            let mut date = d(2017, 1, 2);
            let mut k = 0;
            while k < n {
                if !matches!(date.weekday(), Weekday::Sat | Weekday::Sun) {
                    print_scenario(&hgx_rolling(date, k as f64), k == 0)?;
                    k += 1;
                }
                date = date + Days::new(1);
            }
        }
        other => {
            return Err(skewbook::Error::msg(
                skewbook::ErrorKind::Usage,
                format!(
                    "unknown scenario {other:?}: expected hgx, lhy, kcx, ptx, history or long-history N"
                ),
            ))
        }
    }
    Ok(())
}
