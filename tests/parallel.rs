//! Dates in parallel: the reports are the same bytes whatever the number of
//! threads, and every date reports its progress once.

use rayon::ThreadPoolBuilder;
use skewbook::curve::MarketOptions;
use skewbook::input::snapshot::{parse_snapshot, read_snapshot};
use skewbook::output::{write_report, Format};
use skewbook::report::implied::{build, build_with_progress};
use std::sync::atomic::{AtomicUsize, Ordering};

fn on_threads<T: Send>(n: usize, job: impl FnOnce() -> T + Send) -> T {
    ThreadPoolBuilder::new()
        .num_threads(n)
        .build()
        .expect("thread pool")
        .install(job)
}

/// Every format of `report` as bytes.
fn printed(report: &impl skewbook::output::Report) -> Vec<Vec<u8>> {
    [Format::Table, Format::Csv, Format::Json]
        .into_iter()
        .map(|f| {
            let mut out = Vec::new();
            write_report(&mut out, report, f).expect("print");
            out
        })
        .collect()
}

/// The bundled 22-date history on one thread and on four: the same bytes
/// in every format, dates in file order.
#[test]
fn implied_is_the_same_on_one_and_four_threads() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/market-samples/hgx-history-2026-06.csv"
    );
    let snap = read_snapshot(path).expect("bundled history");
    let opts = MarketOptions::default();
    let one = on_threads(1, || build(&snap, &opts)).expect("implied");
    let four = on_threads(4, || build(&snap, &opts)).expect("implied");
    assert_eq!(one.dates.len(), 22);
    let dates: Vec<String> = snap.dates.iter().map(|d| d.date.to_string()).collect();
    let got: Vec<String> = four.dates.iter().map(|d| d.date.clone()).collect();
    assert_eq!(got, dates);
    assert_eq!(printed(&one), printed(&four));
}

/// The curve report (its pools are built in parallel too): the same bytes
/// on one thread and on four.
#[test]
fn curve_is_the_same_on_one_and_four_threads() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/market-samples/hgx-history-2026-06.csv"
    );
    let snap = read_snapshot(path).expect("bundled history");
    let opts = MarketOptions::default();
    let run = |n| on_threads(n, || skewbook::report::curve::build(&snap, &opts)).expect("curve");
    assert_eq!(printed(&run(1)), printed(&run(4)));
}

/// The progress callback runs once per date, on any number of threads.
#[test]
fn progress_counts_every_date_once() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/market-samples/hgx-history-2026-06.csv"
    );
    let snap = read_snapshot(path).expect("bundled history");
    for n in [1, 4] {
        let count = AtomicUsize::new(0);
        let done = || {
            count.fetch_add(1, Ordering::Relaxed);
        };
        on_threads(n, || {
            build_with_progress(&snap, &MarketOptions::default(), &Default::default(), &done)
        })
        .expect("implied");
        assert_eq!(count.load(Ordering::Relaxed), snap.dates.len());
    }
}

/// Two unfittable dates among good ones: one error naming both, in date
/// order, whatever the number of threads (as the date-by-date run gave).
#[test]
fn every_bad_date_is_reported_in_order_on_any_number_of_threads() {
    let mut text =
        String::from("date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n");
    for (day, second_bp) in [(1, 60.0), (2, 1.0), (3, 60.0), (4, 1.0), (5, 60.0)] {
        // A 5-year spread of 1 bp under a 3-year one of 40 bp cannot be fitted.
        text.push_str(&format!(
            "2026-06-0{day},index,2029-06-20,,,spread_bp,40,\n"
        ));
        text.push_str(&format!(
            "2026-06-0{day},index,2031-06-20,,,spread_bp,{second_bp},\n"
        ));
    }
    let snap = parse_snapshot(&text, "two-bad.csv").expect("snapshot");
    let messages = |n| {
        let e = on_threads(n, || build(&snap, &MarketOptions::default())).expect_err("unfittable");
        e.problems.iter().map(|p| p.to_string()).collect::<Vec<_>>()
    };
    let one = messages(1);
    assert_eq!(one.len(), 2, "{one:?}");
    assert!(
        one[0].contains("2026-06-02") && one[1].contains("2026-06-04"),
        "{one:?}"
    );
    assert_eq!(one, messages(4));
}
