//! Criterion benches of the pricing path: one tranche price, one compound
//! solve, one base solve, the index bootstrap, and `implied` on one bundled
//! snapshot and on the bundled history (on all cores, and on one). Each asserts its result inside the
//! timed loop so a broken build cannot bench a shortcut.

use criterion::{black_box, criterion_group, criterion_main, Criterion};
use skewbook::curve::{MarketOptions, Pool};
use skewbook::input::snapshot::read_snapshot;
use skewbook::market::TrancheQuote;
use skewbook::solve::base::{base_correlation, BaseSolve};
use skewbook::solve::compound::compound_roots;
use skewbook::tranche::{Tranche, TrancheSchedule, TrancheValuer};

const SNAPSHOT: &str = "market-samples/hgx-2026-06-18.csv";
const HISTORY: &str = "market-samples/hgx-history-2026-06.csv";

fn pricing(c: &mut Criterion) {
    let snap = read_snapshot(SNAPSHOT).expect("bundled snapshot");
    let opts = MarketOptions::default();
    let md = &snap.dates[0];
    let curves = Pool::build(md, &opts, SNAPSHOT).expect("curves");
    let mezz: &TrancheQuote = &md.tranches[1];
    let equity: &TrancheQuote = &md.tranches[0];
    let schedule = TrancheSchedule::for_pool(&curves, mezz.maturity).expect("schedule");
    let v = |t: &TrancheQuote| {
        let tranche = Tranche::new(t.attach, t.detach).expect("bounds");
        TrancheValuer::new(&schedule, tranche, t.quote).expect("valuer")
    };

    c.bench_function("curve/bootstrap/4_pillars", |b| {
        b.iter(|| {
            let pc = Pool::build(black_box(md), &opts, SNAPSHOT).expect("curves");
            assert_eq!(pc.pillars.len(), md.index.len());
        })
    });
    c.bench_function("tranche/schedule/5y", |b| {
        b.iter(|| TrancheSchedule::for_pool(&curves, black_box(mezz.maturity)).expect("schedule"))
    });
    c.bench_function("tranche/price/mezzanine_5y", |b| {
        let val = v(mezz);
        b.iter(|| {
            let legs = val.legs_flat(black_box(0.3));
            assert!(legs.annuity > 0.0);
            legs
        })
    });
    // The same tranche in a pool of 125 names (binomial given the factor,
    // composite Gauss-Legendre over it): the goal is within 5x of the
    // large pool's `tranche/price/mezzanine_5y`.
    let names = schedule
        .clone()
        .with_model(skewbook::loss::PoolModel::Names(125))
        .expect("model");
    c.bench_function("tranche/price/mezzanine_5y_125_names", |b| {
        let tranche = Tranche::new(mezz.attach, mezz.detach).expect("bounds");
        let val = TrancheValuer::new(&names, tranche, mezz.quote).expect("valuer");
        b.iter(|| {
            let legs = val.legs_flat(black_box(0.3));
            assert!(legs.annuity > 0.0);
            legs
        })
    });
    c.bench_function("solve/compound/mezzanine_5y", |b| {
        let val = v(mezz);
        b.iter(|| {
            let s = compound_roots(black_box(&val));
            assert!(!s.roots.is_empty());
            s
        })
    });
    c.bench_function("solve/base/equity_5y", |b| {
        let val = v(equity);
        b.iter(|| {
            let s = base_correlation(black_box(&val), 0.0);
            assert!(matches!(s, BaseSolve::Solved(_)));
            s
        })
    });
    c.bench_function("implied/snapshot/hgx", |b| {
        b.iter(|| {
            let r = skewbook::report::implied::build(black_box(&snap), &opts).expect("implied");
            assert!(!r.any_unsolved());
            r
        })
    });
    let lhy = read_snapshot("market-samples/lhy-2026-06-18.csv").expect("bundled snapshot");
    c.bench_function("implied/snapshot/lhy_5_tranches", |b| {
        b.iter(|| {
            let r = skewbook::report::implied::build(black_box(&lhy), &opts).expect("implied");
            assert!(!r.any_unsolved());
            r
        })
    });
    // The independent Python implementation's `ig_pool` scenario (eight
    // tranches over two maturities), for the speed comparison with it.
    let ig = read_snapshot("tests/fixtures/scenarios/ig_pool.csv").expect("scenario");
    c.bench_function("implied/snapshot/ig_pool_scenario", |b| {
        b.iter(|| {
            let r = skewbook::report::implied::build(black_box(&ig), &opts).expect("implied");
            assert_eq!(r.dates[0].tranches.len(), 8);
            r
        })
    });
    let history = read_snapshot(HISTORY).expect("bundled history");
    let mut group = c.benchmark_group("implied/history");
    group.sample_size(20);
    group.bench_function("hgx_22_dates", |b| {
        b.iter(|| {
            let r = skewbook::report::implied::build(black_box(&history), &opts).expect("implied");
            assert_eq!(r.dates.len(), history.dates.len());
            r
        })
    });
    // The same on one thread: the per-core speed, whatever the machine.
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("thread pool");
    group.bench_function("hgx_22_dates_one_thread", |b| {
        b.iter(|| {
            let r = one
                .install(|| skewbook::report::implied::build(black_box(&history), &opts))
                .expect("implied");
            assert_eq!(r.dates.len(), history.dates.len());
            r
        })
    });
    group.finish();
}

criterion_group!(benches, pricing);
criterion_main!(benches);
