//! Criterion benches of a book priced off the skew: 1,000 trades off the
//! four-maturity KCX surface, values only, with every parallel risk figure,
//! and with buckets. Each asserts its result so a broken build cannot bench
//! a shortcut.

use chrono::NaiveDate;
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use skewbook::book::{value_book, BookOptions, Market, TradeTerms};
use skewbook::curve::{MarketOptions, Pool};
use skewbook::input::snapshot::read_snapshot;
use skewbook::math::interp::Interp;
use skewbook::solve::implied_date;
use skewbook::surface::Surface;
use skewbook::tranche::Tranche;

const KCX: &str = "market-samples/kcx-2026-06-18.csv";

/// 1,000 invented trades: standard and odd bounds, maturities from 2 to 12
/// years, both sides, on the index.
fn book() -> Vec<TradeTerms> {
    let bounds = [
        (0.0, 0.03),
        (0.03, 0.07),
        (0.07, 0.10),
        (0.10, 0.15),
        (0.15, 0.30),
        (0.05, 0.10),
        (0.12, 0.13),
        (0.04, 0.08),
        (0.30, 1.0),
        (0.0, 0.05),
    ];
    let years = [2028, 2029, 2030, 2031, 2032, 2033, 2034, 2036, 2037, 2038];
    (0..1000)
        .map(|i| {
            let (a, d) = bounds[i % bounds.len()];
            let y = years[(i / bounds.len()) % years.len()];
            TradeTerms {
                pool: "index".to_string(),
                maturity: NaiveDate::from_ymd_opt(y, if i % 2 == 0 { 6 } else { 12 }, 20).unwrap(),
                tranche: Tranche::new(a, d).unwrap(),
                coupon: if a == 0.0 { 0.05 } else { 0.01 },
                notional: 1e6 * (1 + i % 7) as f64,
                sign: if i % 3 == 0 { -1.0 } else { 1.0 },
            }
        })
        .collect()
}

fn bench(c: &mut Criterion) {
    let snap = read_snapshot(KCX).expect("bundled sample");
    let md = &snap.dates[0];
    let pool = Pool::build(md, &MarketOptions::default(), KCX).expect("curve");
    let implied = implied_date(md, pool).expect("implied");
    let surface = Surface::from_implied(&implied, Interp::Pchip).expect("surface");
    let market = Market {
        index: implied.pool.clone(),
        surface,
        bespoke: Vec::new(),
    };
    let trades = book();
    let mut group = c.benchmark_group("book/1000_trades");
    group.sample_size(10);
    for (name, opts) in [
        (
            "values",
            BookOptions {
                risk: false,
                ..BookOptions::default()
            },
        ),
        ("values_and_risk", BookOptions::default()),
        (
            "values_risk_and_buckets",
            BookOptions {
                buckets: true,
                ..BookOptions::default()
            },
        ),
    ] {
        group.bench_function(name, |b| {
            b.iter(|| {
                let r = value_book(black_box(&trades), &market, &opts).expect("book");
                assert_eq!(r.len(), 1000);
                r
            })
        });
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
